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
