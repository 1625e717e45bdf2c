#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
const N: u8 = 1;

fn main() {}
