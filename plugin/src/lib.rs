//! The library behind `cargo heddle`: command-line grammar, subcommands and the analysis
//! that turns per-interaction tallies into suspects, flaky interactions and advice.
//! The binary (`main.rs`) only calls [`cli::run`].

pub mod analysis;
pub mod cli;
pub mod design;
pub mod failure;
pub mod report;
pub mod spec_args;
pub mod spec_of;
pub mod style;
pub mod test_cmd;
pub mod workspace;
