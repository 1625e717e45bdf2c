#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(strenght = 2, lambda = 0, exclude(c == 1))]
fn f(#[levels(1, 1)] a: u8, b: bool, #[levels()] c: u8) {}

fn main() {}
