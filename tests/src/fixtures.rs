//! Sources of the temporary crates and what each suite in them is expected to do.
//!
//! Every defect is planted in a test body as a plain condition on its parameters; the
//! tests judge outcomes with the same condition written again here over level labels,
//! so "the failing rows are exactly those holding the interaction" is checked against
//! an expectation stated independently of heddle.

/// Labels of one row, in parameter order.
pub type Labels<'a> = [&'a str];

/// What one suite is expected to do.
#[derive(Clone, Copy)]
pub struct Expect {
    /// The annotated function.
    pub function: &'static str,
    /// Whether the row with these labels fails (the planted defect).
    pub fails: fn(&Labels<'_>) -> bool,
    /// Whether the constraints allow a complete row with these labels (its excludes,
    /// written again as a predicate).
    pub allowed: fn(&Labels<'_>) -> bool,
}

/// No defect, no constraint.
pub fn never(_: &Labels<'_>) -> bool {
    false
}

/// Every row allowed.
pub fn always(_: &Labels<'_>) -> bool {
    true
}

/// The integration-test file of the main temporary crate, `tests/suites.rs`.
pub const SUITES: &str = r#"//! Suites of heddle's end-to-end tests; each body plants a known defect.

use heddle_test::cover;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Codec {
    Plain,
    Rle,
    Delta,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mode {
    Fast,
    Safe,
}

/// Fails when `batch == 8 && checksum`, whatever the rest.
#[cover(strength = 2, lambda = 2, seed = 11, exclude(codec == Codec::Delta && batch == 1))]
fn planted(
    #[levels(1, 8, 64)] batch: usize,
    #[levels(Codec::Plain, Codec::Rle, Codec::Delta)] codec: Codec,
    #[levels(true, false)] checksum: bool,
    #[levels(Mode::Fast, Mode::Safe)] mode: Mode,
) {
    let _ = (codec, mode);
    assert!(!(batch == 8 && checksum), "planted defect: batch 8 with checksum");
}

/// Strength 3; fails on one three-way interaction only.
#[cover(strength = 3, seed = 5)]
fn triple(
    #[levels(0, 1, 2)] a: u8,
    #[levels(true, false)] b: bool,
    #[levels(Mode::Fast, Mode::Safe)] c: Mode,
    #[levels(-1, 1)] d: i32,
) {
    let _ = d;
    assert!(!(a == 2 && !b && c == Mode::Safe), "planted three-way defect");
}

/// Excludes, two of which together make `x == 0` with `z == 2` impossible; fails when
/// `z == 3` and `w == Mode::Safe`.
#[cover(
    exclude(x == 0 && y == true),
    exclude(y == false && z == 2),
    exclude(w == Mode::Safe && x == 2),
    exclude(!(x != 1) && (z == 1 || z == 3) && w == Mode::Fast),
)]
fn constrained(
    #[levels(0, 1, 2)] x: u8,
    #[levels(true, false)] y: bool,
    #[levels(1, 2, 3)] z: u8,
    #[levels(Mode::Fast, Mode::Safe)] w: Mode,
) {
    let _ = (x, y);
    assert!(!(z == 3 && w == Mode::Safe), "planted defect: z 3 in safe mode");
}

/// Returns `Err` (never panics) when `level == "b"` and `n == 3`.
#[cover(seed = 3)]
fn fallible(
    #[levels("a", "b", "c")] level: &str,
    #[levels(1, 2, 3)] n: u32,
    #[levels(true, false)] flag: bool,
) -> Result<(), String> {
    let _ = flag;
    if level == "b" && n == 3 {
        return Err(format!("planted error for {level} {n}"));
    }
    Ok(())
}

/// Every row must panic; the rows with `a == 3 && b` do not.
#[cover(seed = 9)]
#[should_panic]
fn must_panic(#[levels(1, 2, 3)] a: u8, #[levels(true, false)] b: bool) {
    if !(a == 3 && b) {
        panic!("the expected panic");
    }
}

/// Never runs unless asked for.
#[cover(seed = 4)]
#[ignore = "run only with --ignored"]
fn skipped(#[levels(1, 2)] a: u8, #[levels(1, 2, 3)] b: u8) {
    assert!(a + b >= 2);
}

/// The built-in defaults: strength 2, λ 1, a seed from the function's name.
#[cover]
fn twin_one(#[levels(1, 2, 3)] a: u8, #[levels(1, 2, 3)] b: u8, #[levels(1, 2, 3)] c: u8) {
    let _ = (a, b, c);
}

/// Same levels as `twin_one`, another name.
#[cover]
fn twin_two(#[levels(1, 2, 3)] a: u8, #[levels(1, 2, 3)] b: u8, #[levels(1, 2, 3)] c: u8) {
    let _ = (a, b, c);
}

/// One parameter: the default strength is capped at 1.
#[cover]
fn single(#[levels(1, 2, 3)] a: u8) {
    let _ = a;
}

const LIMIT: usize = 7;

fn boom() -> u8 {
    panic!("a level expression panicked")
}

/// Levels that are constants, arithmetic, calls and method calls, evaluated in the
/// row (a panicking one fails its row); fails when `n == LIMIT + 1` and `s == "y"`.
#[cover(seed = 8)]
fn exprs(
    #[levels(LIMIT, LIMIT + 1, usize::MAX)] n: usize,
    #[levels(String::from("x"), "y".to_string())] s: String,
    #[levels(0, boom())] z: u8,
) {
    let _ = z;
    assert!(!(n == LIMIT + 1 && s == "y"), "planted defect: {n} with {s}");
}

/// `Result` behind an alias (`io::Result<()>`): `Err` when `a == 2 && !b`.
#[cover(seed = 6)]
fn io_fallible(#[levels(1, 2, 3)] a: u8, #[levels(true, false)] b: bool) -> std::io::Result<()> {
    if a == 2 && !b {
        return Err(std::io::Error::other("planted io error"));
    }
    Ok(())
}

/// Compiled out by a `cfg` below the attribute: neither the function nor its rows exist.
#[cover]
#[cfg(any())]
fn gone(#[levels(1, 2)] a: u8, #[levels(1, 2)] b: u8) {
    let _ = (a, b);
}

/// Labels that JSON and messages must escape, one exclude over string and char
/// levels; fails when `s == "ünï" && c == '\n'`.
#[cover(seed = 3, exclude(s == "q\"uote" && c == 'é'))]
fn escapes(
    #[levels("q\"uote", "back\\slash", "ünï", r"raw")] s: &str,
    #[levels('é', '\n', '"')] c: char,
) {
    assert!(!(s == "ünï" && c == '\n'), "planted defect: {s:?} with {c:?}");
}

/// More than 100 rows (strength 3 over four 5-level parameters): three-digit row
/// names; fails when `a == b == c == 4`.
#[cover(strength = 3, seed = 4)]
fn wide(
    #[levels(0, 1, 2, 3, 4)] a: u8,
    #[levels(0, 1, 2, 3, 4)] b: u8,
    #[levels(0, 1, 2, 3, 4)] c: u8,
    #[levels(0, 1, 2, 3, 4)] d: u8,
) {
    let _ = d;
    assert!(!(a == 4 && b == 4 && c == 4), "planted three-way defect");
}

mod nested {
    use super::*;

    /// A suite inside a module: its rows are `nested::deep::row_NN`; fails when
    /// `mode == Mode::Safe && flag`.
    #[cover(seed = 2)]
    fn deep(#[levels(Mode::Fast, Mode::Safe)] mode: Mode, #[levels(true, false)] flag: bool) {
        assert!(!(mode == Mode::Safe && flag), "planted nested defect");
    }
}
"#;

/// The path of [`SUITES`] in its crate, and the test target it makes.
pub const SUITES_FILE: &str = "tests/suites.rs";
/// The test target of [`SUITES`].
pub const SUITES_TARGET: &str = "suites";

/// What each suite of [`SUITES`] does.
pub const SUITES_EXPECT: &[Expect] = &[
    Expect {
        function: "planted",
        fails: |l| l[0] == "8" && l[2] == "true",
        allowed: |l| !(l[1] == "Codec::Delta" && l[0] == "1"),
    },
    Expect {
        function: "triple",
        fails: |l| l[0] == "2" && l[1] == "false" && l[2] == "Mode::Safe",
        allowed: always,
    },
    Expect {
        function: "constrained",
        fails: |l| l[2] == "3" && l[3] == "Mode::Safe",
        allowed: |l| {
            !((l[0] == "0" && l[1] == "true")
                || (l[1] == "false" && l[2] == "2")
                || (l[3] == "Mode::Safe" && l[0] == "2")
                || (l[0] == "1" && (l[2] == "1" || l[2] == "3") && l[3] == "Mode::Fast"))
        },
    },
    Expect {
        function: "fallible",
        fails: |l| l[0] == "\"b\"" && l[1] == "3",
        allowed: always,
    },
    Expect {
        // failing here means "did not panic"
        function: "must_panic",
        fails: |l| l[0] == "3" && l[1] == "true",
        allowed: always,
    },
    Expect {
        function: "skipped",
        fails: never,
        allowed: always,
    },
    Expect {
        function: "twin_one",
        fails: never,
        allowed: always,
    },
    Expect {
        function: "twin_two",
        fails: never,
        allowed: always,
    },
    Expect {
        function: "single",
        fails: never,
        allowed: always,
    },
    Expect {
        function: "exprs",
        fails: |l| l[2] == "boom()" || (l[0] == "LIMIT + 1" && l[1] == "\"y\".to_string()"),
        allowed: always,
    },
    Expect {
        function: "io_fallible",
        fails: |l| l[0] == "2" && l[1] == "false",
        allowed: always,
    },
    Expect {
        function: "gone",
        fails: never,
        allowed: always,
    },
    Expect {
        function: "escapes",
        fails: |l| l[0] == r#""ünï""# && l[1] == r"'\n'",
        allowed: |l| !(l[0] == r#""q\"uote""# && l[1] == "'é'"),
    },
    Expect {
        function: "wide",
        fails: |l| l[0] == "4" && l[1] == "4" && l[2] == "4",
        allowed: always,
    },
    Expect {
        function: "deep",
        fails: |l| l[0] == "Mode::Safe" && l[1] == "true",
        allowed: always,
    },
];

/// Functions of [`SUITES`] that record nothing in a plain `cargo test`: ignored, or
/// compiled out.
pub const SUITES_SILENT: &[&str] = &["skipped", "gone"];

/// The expectation for one function of [`SUITES`].
pub fn expect(function: &str) -> &'static Expect {
    expect_in(SUITES_EXPECT, function)
}

/// The expectation for one function in a list of them.
pub fn expect_in(list: &'static [Expect], function: &str) -> &'static Expect {
    list.iter()
        .find(|e| e.function == function)
        .unwrap_or_else(|| panic!("no expectation for `{function}`"))
}

/// `[package.metadata.heddle]` of the defaults crate.
pub const KNOBS_METADATA: &str = "strength = 3\nlambda = 2\nseed = 4242";

/// The integration-test file of the defaults-and-pins crate, `tests/knobs.rs`.
pub const KNOBS: &str = r#"//! Crate defaults (strength 3, lambda 2, seed 4242) and what overrides them.

use heddle_test::cover;

/// Everything from the crate's defaults.
#[cover]
fn defaulted(
    #[levels(1, 2)] a: u8,
    #[levels(1, 2)] b: u8,
    #[levels(1, 2, 3)] c: u8,
    #[levels(true, false)] d: bool,
) {
    let _ = (a, b, c, d);
}

/// Every default overridden.
#[cover(strength = 2, lambda = 1, seed = 5)]
fn overridden(
    #[levels(1, 2)] a: u8,
    #[levels(1, 2)] b: u8,
    #[levels(1, 2, 3)] c: u8,
    #[levels(true, false)] d: bool,
) {
    let _ = (a, b, c, d);
}

/// Only λ overridden.
#[cover(lambda = 1)]
fn partly(
    #[levels(1, 2)] a: u8,
    #[levels(1, 2)] b: u8,
    #[levels(1, 2, 3)] c: u8,
    #[levels(true, false)] d: bool,
) {
    let _ = (a, b, c, d);
}

/// Two parameters: the crate's default strength 3 is capped at 2.
#[cover]
fn capped(#[levels(1, 2)] a: u8, #[levels(1, 2, 3)] b: u8) {
    let _ = (a, b);
}
"#;

/// The path of [`KNOBS`] in its crate.
pub const KNOBS_FILE: &str = "tests/knobs.rs";

/// The integration-test file of the async crate, `tests/asy.rs` (tokio's test
/// attribute below `#[cover]`).
pub const ASYNC: &str = r#"//! Async rows under tokio's test attribute.

use heddle_test::cover;

/// Panics after a yield when `a == 2 && b`.
#[cover(seed = 1)]
#[tokio::test]
async fn yielding(#[levels(1, 2, 3)] a: u8, #[levels(true, false)] b: bool) {
    tokio::task::yield_now().await;
    assert!(!(a == 2 && b), "planted async defect");
}

/// Returns `Err` after a yield when `a == 1 && !b`.
#[cover(seed = 2)]
#[tokio::test]
async fn erring(#[levels(1, 2, 3)] a: u8, #[levels(true, false)] b: bool) -> Result<(), String> {
    tokio::task::yield_now().await;
    if a == 1 && !b {
        return Err("planted async error".to_string());
    }
    Ok(())
}
"#;

/// What each suite of [`ASYNC`] does.
pub const ASYNC_EXPECT: &[Expect] = &[
    Expect {
        function: "yielding",
        fails: |l| l[0] == "2" && l[1] == "true",
        allowed: always,
    },
    Expect {
        function: "erring",
        fails: |l| l[0] == "1" && l[1] == "false",
        allowed: always,
    },
];

/// The integration-test file of the design-controls crate, `tests/controls.rs`: a
/// required row, a row budget, and a defect for follow-up rows to name.
pub const CONTROLS: &str = r#"//! Design controls: rows required by label, a row budget.

use heddle_test::cover;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Codec {
    Plain,
    Rle,
    Delta,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Unit {
    Celsius,
    Fahrenheit,
    Kelvin,
}

/// Two required rows, one partial; fails on `Codec::Delta` with `Unit::Fahrenheit`, the
/// configuration the first required row names.
#[cover(
    seed = 21,
    exclude(codec == Codec::Rle && flush == true),
    require(codec = Codec::Delta, unit = Unit::Fahrenheit),
    require(batch = 1, codec = Codec::Plain, unit = Unit::Kelvin, flush = true),
)]
fn required(
    #[levels(1, 8, 64)] batch: usize,
    #[levels(Codec::Plain, Codec::Rle, Codec::Delta)] codec: Codec,
    #[levels(Unit::Celsius, Unit::Fahrenheit, Unit::Kelvin)] unit: Unit,
    #[levels(true, false)] flush: bool,
) {
    let _ = (batch, flush);
    assert!(
        !(codec == Codec::Delta && unit == Unit::Fahrenheit),
        "planted defect: delta with fahrenheit"
    );
}

/// The first three rows run; the rest are ignored unless `HEDDLE_BUDGET` says otherwise.
#[cover(seed = 22, budget(3))]
fn budgeted(
    #[levels(1, 2, 3)] a: u8,
    #[levels(1, 2, 3)] b: u8,
    #[levels(true, false)] c: bool,
    #[levels(true, false)] d: bool,
) {
    let _ = (a, b, c, d);
}
"#;

/// The path of [`CONTROLS`] in its crate, and its test target.
pub const CONTROLS_FILE: &str = "tests/controls.rs";
/// The test target of [`CONTROLS`].
pub const CONTROLS_TARGET: &str = "controls";

/// What each suite of [`CONTROLS`] does.
pub const CONTROLS_EXPECT: &[Expect] = &[
    Expect {
        function: "required",
        fails: |l| l[1] == "Codec::Delta" && l[2] == "Unit::Fahrenheit",
        allowed: |l| !(l[1] == "Codec::Rle" && l[3] == "true"),
    },
    Expect {
        function: "budgeted",
        fails: never,
        allowed: always,
    },
];
