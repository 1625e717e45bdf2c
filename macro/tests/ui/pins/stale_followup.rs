#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover(seed = 3)]
fn stale_followup(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {}

fn main() {}
