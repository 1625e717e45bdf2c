#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
fn f(#[levels = 1] a: u8, #[levels(1, 2)] b: u8) {}

fn main() {}
