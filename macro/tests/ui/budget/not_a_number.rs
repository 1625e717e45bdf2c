#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(budget(half))]
fn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {}

#[cover(budget(2.5))]
fn g(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {}

fn main() {}
