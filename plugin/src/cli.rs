//! Command-line grammar. Cargo runs `cargo-heddle heddle <args>`, so the first word after
//! the binary is always `heddle`.

use std::ffi::OsString;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

use crate::failure::Failure;

#[derive(Parser)]
#[command(name = "cargo", bin_name = "cargo", styles = clap::builder::Styles::plain())]
enum CargoCli {
    /// Combinatorial interaction testing with covering arrays of index λ.
    #[command(version, about, long_about = None)]
    Heddle(HeddleCli),
}

#[derive(clap::Args)]
struct HeddleCli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Generate a covering array for factors given on the command line.
    Design(crate::design::DesignArgs),
    /// Pin the rows of every `#[cover]` function in the crate's pins file.
    Pin(crate::pin::PinArgs),
    /// Fail when a pin is missing, stale or does not cover its spec (for CI).
    Check(crate::check::CheckArgs),
    /// Print the rows of one `#[cover]` function with coverage figures.
    Show(crate::show::ShowArgs),
    /// Run the tests under one run id and report on that run.
    Test(crate::test_cmd::TestArgs),
    /// Report on recorded runs: pass counts per interaction, suspects, flaky ones.
    Report(crate::report::ReportArgs),
    /// List the runs in the store, or prune old ones.
    Runs(crate::runs::RunsArgs),
    /// Propose follow-up rows that tell apart the suspects of the last run's failures.
    Probe(crate::probe::ProbeArgs),
}

/// Parses the arguments and runs the chosen subcommand.
pub fn run(args: impl IntoIterator<Item = OsString>) -> Result<ExitCode, Failure> {
    let cli = match CargoCli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => {
            // help and version go to stdout with success; real errors exit with 2
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return Ok(ExitCode::from(code));
        }
    };
    let CargoCli::Heddle(h) = cli;
    match h.command {
        Command::Design(a) => crate::design::run(a),
        Command::Pin(a) => crate::pin::run(a),
        Command::Check(a) => crate::check::run(a),
        Command::Show(a) => crate::show::run(a),
        Command::Test(a) => crate::test_cmd::run(a),
        Command::Report(a) => crate::report::run(a),
        Command::Runs(a) => crate::runs::run(a),
        Command::Probe(a) => crate::probe::run(a),
    }
}
