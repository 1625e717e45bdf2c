#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[cover]
fn f() {}

fn main() {}
