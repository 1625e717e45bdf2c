#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
fn f(#[levels(1, 2)] a: u8) -> u8 {
    a
}

fn main() {}
