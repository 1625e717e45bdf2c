#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
fn f(#[levels(1, 8, 1)] a: u8, #[levels(true, false)] b: bool) {}

fn main() {}
