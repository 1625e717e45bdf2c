#![allow(dead_code, unused_variables)]

use heddle_macros::cover;

#[derive(Debug)]
enum Unit {
    Celsius,
    Kelvin,
}

#[cover(require(unit = Unit::Fahrenheit))]
fn f(#[levels(1, 2)] a: u8, #[levels(Unit::Celsius, Unit::Kelvin)] unit: Unit) {}

fn main() {}
