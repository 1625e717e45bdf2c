#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

struct S;

impl S {
    #[cover]
    fn f(&self, #[levels(1, 2)] a: u8) {}
}

fn main() {}
