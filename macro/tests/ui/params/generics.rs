#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
fn f<T: Default>(#[levels(1, 2)] a: u8) {}

fn main() {}
