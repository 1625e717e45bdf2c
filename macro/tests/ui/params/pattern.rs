#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
fn f(#[levels((1, 2), (3, 4))] (a, b): (u8, u8)) {}

fn main() {}
