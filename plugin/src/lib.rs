//! The library behind `cargo heddle`: command-line grammar, subcommands and the analysis
//! that turns per-interaction tallies into suspects, flaky interactions and advice.
//! The binary (`main.rs`) only calls [`cli::run`], which takes the arguments as cargo
//! passes them:
//!
//! ```no_run
//! use std::process::ExitCode;
//! let args = ["cargo-heddle", "heddle", "design", "3^4", "--lambda", "2"];
//! let code: ExitCode = cargo_heddle::cli::run(args.map(Into::into)).unwrap_or(ExitCode::FAILURE);
//! ```
//!
//! # Modules
//! - [`cli`]: the grammar and the dispatch to one module per subcommand: [`design`],
//!   [`pin`], [`check`], [`show`], [`test_cmd`] (`test`), [`report`], [`runs`] (listing
//!   and pruning the store), [`probe`] (follow-up rows);
//! - reading the project: [`workspace`] (cargo metadata, packages, target directories),
//!   [`sources`] (annotated functions found with the macro's own parser), [`pinfile`]
//!   (loading and writing pins files), [`status`] (a function's rows against its pin),
//!   [`carry`] (old pinned rows carried over to a changed spec);
//! - judging runs: [`analysis`] (suspects, flaky interactions, λ advice) and
//!   [`followup`] (extra rows that tell suspects apart) over the tallies of
//!   `heddle-store`, laid out by the formats under [`report`];
//! - shared by the subcommands: [`budget`] (what a row budget reaches, in words),
//!   [`spec_args`] (factors on the command line), [`effort`]
//!   (`--effort`, `--budget`), [`failure`] (the error type and exit codes), [`style`]
//!   (terminal colours), [`say`] (printing that survives a closed pipe).

#![warn(missing_docs)]

/// `println!` that ignores a closed stdout (see [`say`]).
macro_rules! say {
    ($($t:tt)*) => { $crate::say::out(format_args!($($t)*)) };
}

/// `eprintln!` that ignores a failing stderr (see [`say`]).
macro_rules! say_err {
    ($($t:tt)*) => { $crate::say::err(format_args!($($t)*)) };
}

pub mod analysis;
pub mod budget;
pub mod carry;
pub mod check;
pub mod cli;
pub mod design;
pub mod effort;
pub mod failure;
pub mod followup;
pub mod pin;
pub mod pinfile;
pub mod probe;
pub mod report;
pub mod runs;
pub mod say;
pub mod show;
pub mod sources;
pub mod spec_args;
pub mod status;
pub mod style;
pub mod test_cmd;
pub mod workspace;
