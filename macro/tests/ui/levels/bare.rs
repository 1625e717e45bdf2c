#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
fn f(#[levels] a: u8) {}

fn main() {}
