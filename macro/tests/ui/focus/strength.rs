#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

// not above the base strength; above the set's size; the default (base + 1) above the
// set's size; out of the engine's range
#[cover(
    focus(a, b, c, strength = 2),
    focus(a, b, c, strength = 4),
    focus(a, b),
    focus(a, b, c, d, strength = 0),
    focus(a, b, c, lambda = 0)
)]
fn f(
    #[levels(1, 2)] a: u8,
    #[levels(true, false)] b: bool,
    #[levels(1, 2)] c: u8,
    #[levels(1, 2)] d: u8,
) {
}

fn main() {}
