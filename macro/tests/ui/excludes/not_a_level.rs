#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[derive(Debug)]
enum Codec {
    Plain,
    Rle,
}

#[cover(exclude(codec == Codec::Delta && a == 1))]
fn f(#[levels(1, 2)] a: u8, #[levels(Codec::Plain, Codec::Rle)] codec: Codec) {}

fn main() {}
