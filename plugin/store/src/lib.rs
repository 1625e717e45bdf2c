//! The reading side of heddle's record store: finding stores, reading runs, joining row
//! lines to the spec of their suite, and counting passes per interaction.
//!
//! The test processes write the store through the runtime crate (`heddle-test`, which
//! owns the line format and the layout); this crate is what reports read it with, kept
//! apart so users' test builds never compile it.
//!
//! Layout (see `heddle_test::record::layout`):
//! ```text
//! <target or build dir>/heddle/                 store root
//!     runs/<run id>/                            one directory per run
//!         <unix ms>-<pid>-<nonce>.jsonl         one file per test process
//! ```
//! A run is every process that recorded under one run id; its start is the earliest
//! stamp among its file names, which orders runs without reading them. Shards (stores
//! copied from several CI jobs) are merged by opening them together: a run present in
//! several shards is the union of its files, and a file present twice (the same shard
//! copied twice) is read once. When runs are merged, a row run again in a later run by
//! another build of the test executable (`RowRecord::build`) in the same store keeps
//! only the executions from that build on (another store's build, a CI matrix job's,
//! is no later version and stays): the code changed in between, so the earlier outcome
//! is no evidence about it (counted in [`ReadStats::superseded_rows`]); rows the latest
//! run's build did not run again keep their earlier outcomes
//! ([`ReadStats::earlier_build_rows`]). Of a function recorded under several spec
//! fingerprints, only the spec of the latest run is kept
//! ([`ReadStats::superseded_specs`]). A row recorded at nextest's attempt N shows that
//! its attempts before N failed: those that left no record (the process crashed or was
//! killed) are counted as failed records (`attempts`,
//! [`ReadStats::unfinished_attempts`]). A row's start line with no row line after it in
//! the same file is an execution that did not finish (`unfinished`): under nextest,
//! where the process ran that row alone, a failed record
//! ([`ReadStats::unfinished_attempts`] again, and `attempts` then finds that attempt
//! recorded); with several rows in one process, an entry of [`SuiteRecords::unfinished`]
//! ([`ReadStats::did_not_finish`]), not an outcome.
//!
//! Reading never fails on content: corrupt or truncated lines, lines of another format
//! version, rows whose spec is missing or does not match are skipped and counted in
//! [`ReadStats`], so a report can say what it left out.
//!
//! ```no_run
//! use heddle_store::Store;
//! let store = Store::open("target")?;            // a target dir or a store root
//! let records = store.read_last(1)?;             // the latest run
//! for suite in &records.suites {
//!     let tallies = heddle_store::tally(&suite.spec, suite.outcomes())?;
//!     println!("{}: {} interactions", suite.spec.suite, tallies.interactions().len());
//! }
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```
//!
//! Modules: `attempts` (nextest attempts that left no record), `unfinished` (starts
//! with no finish), [`discover`] (stores and their runs on disk), `read` (a run's files,
//! in parallel), `join` (rows to their suite), [`notes`] (what was skipped, in words),
//! [`spec`] (a spec line checked, and turned back into the engine's spec),
//! [`tally`](mod@tally) (counts per interaction), [`reach`](mod@reach) (what a prefix of
//! the rows covers), [`words`] (counts in words), [`fixture`] (records made by hand, for
//! tests of readers).

#![warn(missing_docs)]
#![forbid(unsafe_code)]

mod attempts;
pub mod discover;
pub mod fixture;
mod join;
pub mod notes;
pub mod reach;
mod read;
pub mod spec;
pub mod tally;
mod unfinished;
pub mod words;

pub use discover::{DISCOVER_DEPTH, RunInfo, Store, StoreError, find_root};
pub use join::{Records, SuiteRecords};
pub use notes::{LineRef, ReadStats};
pub use reach::{Reach, reach};
pub use spec::{SpecError, engine_spec};
pub use tally::{Count, FocusTally, Interaction, LeftOut, Tallies, Tally, tally};
