//! heddle: combinatorial interaction testing for `cargo test`.
//!
//! An annotated test function (the `cover` attribute of `heddle-macros`) becomes one
//! ordinary test per row of a covering array of strength t and index λ. This crate is
//! what those tests run against, and what the `cargo heddle` report reads:
//!
//! - the runtime (hidden `__private`): runs a row, catches a panic or `Err`, records
//!   the outcome and hands it back to libtest unchanged;
//! - [`record`]: the versioned JSON-lines format of the records;
//! - [`store`]: reading the store (runs, shards, skipped lines);
//! - [`layout`]: where the store lives, how its files and run ids are named;
//! - [`tally`]: runs, passes and failures per single level and t-way interaction.
//!
//! Recording is best effort: when the store cannot be written, the test process prints
//! one warning and the tests run as they would without heddle.
//!
//! ```
//! use heddle::cover;
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
//! # Environment
//! Empty values count as unset; an invalid value turns recording off with a one-line
//! warning naming the variable (tests still run and pass or fail as usual).
//!
//! - `HEDDLE_TARGET_DIR`: the directory to put the store (`heddle/`) in, created if
//!   missing; relative paths are taken from the test's working directory (cargo runs
//!   tests in the package root). Unset: the nearest ancestor of the test executable
//!   holding cargo's `CACHEDIR.TAG`, that is the target directory, or the build
//!   directory when `build.build-dir` is set.
//! - `HEDDLE_RUN_ID` (set by `cargo heddle test` for a whole invocation), else
//!   `NEXTEST_RUN_ID` (set by nextest): the run id, ASCII letters, digits, `.`, `_`, `-`.
//!   Neither: each test process is a run of its own.

#![warn(missing_docs)]
#![forbid(unsafe_code)]

pub use heddle_macros::cover;

pub mod layout;
mod message;
pub mod record;
mod recorder;
mod setup;
pub mod store;
pub mod tally;
mod time;

#[doc(hidden)]
#[path = "private.rs"]
pub mod __private;
