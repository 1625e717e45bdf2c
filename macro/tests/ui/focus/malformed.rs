#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(focus, focus(), focus(a, b, c, depth = 3), focus(a = 1, b, c), focus(a b c))]
fn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool, #[levels(1, 2)] c: u8) {}

fn main() {}
