#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
struct S {
    a: u8,
}

fn main() {}
