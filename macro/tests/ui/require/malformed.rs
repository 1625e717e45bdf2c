#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(require(a == 1), require(b = true, b = false), require(), require)]
fn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {}

fn main() {}
