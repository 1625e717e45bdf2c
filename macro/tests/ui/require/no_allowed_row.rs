#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(exclude(a == 2 && c == 1), exclude(a == 2 && c == 2), require(a = 2))]
fn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool, #[levels(1, 2)] c: u8) {}

fn main() {}
