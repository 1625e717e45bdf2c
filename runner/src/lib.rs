//! heddle: combinatorial interaction testing for `cargo test`.
//!
//! When a test has many knobs and not every combination can run, [`cover`] turns one
//! annotated test function into the rows of a covering array of strength t and index λ
//! (every t-way combination of levels in at least λ rows), one ordinary `#[test]` per
//! row, and records every row's outcome so `cargo heddle report` can name the
//! combination that fails, always or only sometimes.
//!
//! ```toml
//! [dev-dependencies]
//! heddle-test = "0.1"
//! ```
//!
//! The report, pins and the CI gate come with the cargo subcommand:
//! `cargo install cargo-heddle`, then `cargo heddle test` (runs `cargo test` under one
//! run id and prints the interaction report), `cargo heddle pin` and
//! `cargo heddle check`.
//!
//! ```
//! use heddle_test::cover;
//!
//! #[derive(Clone, Copy, Debug, PartialEq)]
//! enum Codec { Plain, Delta }
//!
//! // under `cargo test`: tests `roundtrip::row_00`, `roundtrip::row_01`, …, every pair
//! // of levels twice, never `Delta` with a batch of 1
//! #[cover(lambda = 2, exclude(codec == Codec::Delta && batch == 1))]
//! fn roundtrip(
//!     #[levels(1, 8, 64)] batch: usize,
//!     #[levels(Codec::Plain, Codec::Delta)] codec: Codec,
//!     #[levels(true, false)] checksum: bool,
//! ) {
//!     assert!(batch > 1 || codec == Codec::Plain || checksum);
//! }
//!
//! // and the function itself stays an ordinary function
//! roundtrip(8, Codec::Delta, true);
//! ```
//!
//! See [`cover`] for every key of the attribute. A covering array of strength t
//! promises nothing about combinations of more than t factors: a fault that needs three
//! particular levels together can be missed at strength 2.
//!
//! # What this crate holds
//! - [`cover`], re-exported from `heddle-macros`;
//! - [`current_row`]: inside a row's body, which row it is ([`RowInfo`]: name, index,
//!   labels), for per-row snapshot names and temporary directories;
//! - [`record`]: the versioned JSON-lines format of the records and the store's layout
//!   (read back by `heddle-store`);
//! - a hidden module for the generated code (runs a row, catches a panic or `Err`,
//!   records the outcome and hands it back to libtest unchanged).
//!
//! Recording is best effort: when the store cannot be written, the test process prints
//! one warning and the tests run as they would without heddle.
//!
//! # Environment
//! Empty values count as unset. An invalid value of a recording variable turns recording
//! off with a one-line warning naming the variable (tests still run and pass or fail as
//! usual).
//!
//! - `HEDDLE_TARGET_DIR`: the directory to put the store (`heddle/`) in, created if
//!   missing; relative paths are taken from the test's working directory (cargo runs
//!   tests in the package root). Unset: the nearest ancestor of the test executable
//!   holding cargo's `CACHEDIR.TAG`, that is the target directory, or the build
//!   directory when `build.build-dir` is set.
//! - `HEDDLE_BUDGET`, read when the tests compile (cargo rebuilds them when it
//!   changes): a row budget for every `#[cover]` function, overriding their `budget(…)`:
//!   a row count (`12`), a share (`25%`) or `all`; an invalid value is a compile error.
//! - `HEDDLE_RUN_ID` (set by `cargo heddle test` for a whole invocation), else a CI
//!   pipeline's id ([`record::layout::PIPELINE_VARS`]: the jobs of one pipeline are one
//!   run), else `NEXTEST_RUN_ID` (set by nextest): the run id, ASCII letters, digits,
//!   `.`, `_`, `-`. None of them: on Linux, the test processes one `cargo test` starts
//!   share a run named after that cargo process (`cargo-<pid>-<start>-<boot>`, read from
//!   `/proc`); elsewhere each test process is a run of its own.

#![warn(missing_docs)]
#![forbid(unsafe_code)]

// the expansion names this crate `::heddle_test`; inside its own tests and doc tests
// that path must resolve too
extern crate self as heddle_test;

/// Turns a test function whose parameters list their levels into one test per row of a
/// covering array.
///
/// ```
/// use heddle_test::cover;
///
/// #[cover(
///     strength = 2,
///     lambda = 2,
///     seed = 11,
///     exclude(codec == "delta" && batch == 1),
///     require(codec = "delta", batch = 64),
/// )]
/// fn roundtrip(
///     #[levels(1, 8, 64)] batch: usize,
///     #[levels("plain", "rle", "delta")] codec: &str,
///     #[levels(true, false)] checksum: bool,
/// ) {
///     let frame = format!("{codec}:{batch}:{}", u8::from(checksum));
///     assert_eq!(frame.split(':').count(), 3);
/// }
/// # roundtrip(1, "rle", false);
/// ```
///
/// | syntax | meaning | default |
/// |---|---|---|
/// | `#[levels(e1, e2, …)]` on every parameter | the parameter's levels: any Rust expressions of its type (literals, paths, enum variants, constants, calls); a level's label is its source text | required |
/// | `strength = T` | every T-way combination of levels is covered | 2, capped at the number of parameters |
/// | `lambda = L` | each combination is covered in at least L rows | 1 |
/// | `seed = S` | seed of the engine's choices (u64) | a hash of the function's name |
/// | `exclude(EXPR)` | rows where EXPR holds are never generated; EXPR uses `==`, `!=`, `&&`, `\|\|`, `!` and parentheses over parameter names and level expressions; repeatable | none |
/// | `require(NAME = LEVEL, …)` | a row the design must contain, by level labels (`require(codec = "delta", batch = 64)`); parameters left out are filled by the engine; required rows come first, in the order written, and count toward coverage; the excludes must allow the row; repeatable | none |
/// | `focus(NAME, …)` | every combination of the named parameters at a higher strength: one above `strength`, or `focus(NAME, …, strength = S, lambda = L)` (every S of the names; λ defaults to `lambda`); a variable-strength covering array (Cohen, Colbourn, Collofello, Gibbons and Mugridge 2003); repeatable | none |
/// | `budget(N)`, `budget(P%)` | run the first N rows, or the first P percent (rounded up); the rows past it are compiled with `#[ignore]`, so libtest counts them as ignored; `HEDDLE_BUDGET` overrides it | every row |
///
/// - The function stays an ordinary function; a module of the same name holds one
///   `#[test]` per row: `roundtrip::row_00`, `roundtrip::row_01`, … A failing row prints
///   every parameter with its label, the seed and the command that reruns just that row.
/// - Crate-wide defaults for `strength`, `lambda` and `seed` go in `Cargo.toml` under
///   `[package.metadata.heddle]`; the attribute overrides them.
/// - Functions returning `Result<(), E>` (E: Debug) fail a row on `Err`. `#[ignore]` and
///   `#[should_panic]` on the function apply to every row. An `async fn` with a runtime's
///   test attribute below `#[cover]` (e.g. `#[tokio::test]`) gets that attribute on
///   every row.
/// - Rows come from the pins file `heddle-pins.toml` when `cargo heddle pin` wrote one
///   for this function and its spec is unchanged, else from the engine at build time.
/// - Required rows are part of the spec: changing one makes a pin stale, like changing a
///   level.
/// - Follow-up rows that `cargo heddle probe` writes to the pins file, to tell apart the
///   suspects of a failure, run after the design's rows as `roundtrip::row_followup_00`,
///   …; a budget never holds them back, and a spec change makes them stale (an error
///   until `cargo heddle probe --clear` or `cargo heddle pin` drops them).
/// - Mistakes are compile errors at the offending tokens, all of them at once, with a
///   hint; the plain function is still emitted so no follow-on errors appear.
/// - The generated code reaches this crate by the name your `Cargo.toml` gives it, so a
///   renamed dependency (`ht = { package = "heddle-test", … }`) works.
pub use heddle_macros::cover;

pub use current::{RowInfo, current_row};

mod current;
mod message;
pub mod record;
mod recorder;
mod setup;
mod time;

#[doc(hidden)]
#[path = "private.rs"]
pub mod __private;
