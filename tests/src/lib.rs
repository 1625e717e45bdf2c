//! The harness of heddle's end-to-end tests (the tests themselves are in `tests/`).
//!
//! Each test writes a small crate that uses `#[cover]` into a directory of its own,
//! depending on this workspace's `heddle` by absolute path, runs `cargo test` (or
//! `cargo nextest run`) on it and judges the outcome from two sides: what libtest or
//! nextest printed, and what the runtime recorded in its store, read back through
//! `heddle_store`.
//!
//! - [`scratch`]: the temporary crates and the cargo invocations on them (one target
//!   directory shared by all, builds serialised, each timed and printed);
//! - [`output`]: reading libtest's and nextest's human output;
//! - [`coverage`]: checking recorded rows against the definition of a covering array,
//!   through the engine's independent checker and by brute force;
//! - [`records`]: checking the records of a run against the spec and the test output;
//! - [`fixtures`]: the sources of the temporary crates and the defects planted in them;
//! - [`steps`]: a test as named steps that all run, and reading the store.

#![warn(missing_docs)]
#![forbid(unsafe_code)]

pub mod coverage;
pub mod fixtures;
pub mod output;
pub mod records;
pub mod scratch;
pub mod steps;
