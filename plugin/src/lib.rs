//! The library behind `cargo heddle`: command-line grammar, subcommands and the analysis
//! that turns per-interaction tallies into suspects, flaky interactions and advice.
//! The binary (`main.rs`) only calls [`cli::run`].

pub mod analysis;
pub mod carry;
pub mod check;
pub mod cli;
pub mod design;
pub mod failure;
pub mod pin;
pub mod pinfile;
pub mod show;
pub mod sources;
pub mod spec_args;
pub mod status;
pub mod workspace;
