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
pub mod carry;
pub mod check;
pub mod cli;
pub mod design;
pub mod effort;
pub mod failure;
pub mod pin;
pub mod pinfile;
pub mod report;
pub mod say;
pub mod show;
pub mod sources;
pub mod spec_args;
pub mod status;
pub mod style;
pub mod test_cmd;
pub mod workspace;
