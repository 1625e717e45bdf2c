#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(exclude(a ==), exclude(), require(a =), focus(a, b, strength =))]
fn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool, #[levels(1, 2)] c: u8) {}

fn main() {}
