#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
async fn f(#[levels(1, 2)] a: u8) {}

fn main() {}
