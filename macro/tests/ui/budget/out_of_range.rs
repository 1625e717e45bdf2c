#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(budget(120%))]
fn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {}

#[cover(budget(0))]
fn g(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {}

fn main() {}
