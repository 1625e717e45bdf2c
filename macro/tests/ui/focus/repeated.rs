#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(focus(a, b, a), focus(a, b, c, strength = 3, strength = 3))]
fn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool, #[levels(1, 2)] c: u8) {}

fn main() {}
