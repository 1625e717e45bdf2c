#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(lambda = 2)]
fn misfit_pin(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {}

fn main() {}
