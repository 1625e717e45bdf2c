//! `cargo heddle test`: one `cargo test` (or `cargo nextest run`) invocation under one
//! run id, then the report of exactly that run.

use std::process::{Command, ExitCode, Stdio};

use clap::Args;
use heddle_store::{Store, find_root};
use heddle_syntax::budget::{BUDGET_VAR, Budget};
use heddle_test::record::layout::{RUN_ID_VAR, new_run_id, validate_run_id};

use crate::failure::{Diagnostic, Failure, usage};
use crate::report::{self, Format, ReportArgs};
use crate::workspace::{self, Selection};

/// Arguments of `test`.
#[derive(Args, Debug)]
pub struct TestArgs {
    /// Which packages (and so which target directory) to read.
    #[command(flatten)]
    pub selection: Selection,
    /// Run the tests with `cargo nextest run` instead of `cargo test`.
    #[arg(long)]
    pub nextest: bool,
    /// Run the tests N times under the one run id, so a row that fails only sometimes
    /// shows both outcomes.
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub repeat: u32,
    /// Report format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// List every interaction's pass counts in the report.
    #[arg(long)]
    pub all: bool,
    /// Confidence the λ advice aims for.
    #[arg(long, value_name = "C", default_value_t = 0.95)]
    pub confidence: f64,
    /// Run only the first rows of each design: a row count (`12`), a share (`25%`), or
    /// `all` to override the budgets the attributes set. Passed to the build as
    /// `HEDDLE_BUDGET`; rows past it are ignored, and changing it rebuilds the tests.
    #[arg(long, value_name = "N|P%|all", value_parser = Budget::parse)]
    pub budget: Option<Budget>,
    /// Hide the test run's own output; print only the report.
    #[arg(long, short = 'q')]
    pub quiet: bool,
    /// Arguments for `cargo test` (or nextest), after `--`.
    #[arg(last = true, value_name = "ARGS")]
    pub cargo_args: Vec<String>,
}

/// The run id for this invocation: the user's `HEDDLE_RUN_ID` if set, else a new one.
fn run_id() -> Result<String, Failure> {
    match std::env::var(RUN_ID_VAR) {
        Ok(id) if !id.is_empty() => {
            validate_run_id(&id).map_err(|e| usage(format!("`{RUN_ID_VAR}`: {e}")))?;
            Ok(id)
        }
        _ => Ok(new_run_id()),
    }
}

/// Runs `test`.
pub fn run(args: TestArgs) -> Result<ExitCode, Failure> {
    if args.repeat == 0 {
        return Err(usage("`--repeat` must be at least 1"));
    }
    let project = workspace::load(&args.selection)?;
    let id = run_id()?;
    let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    let mut status_code: u8 = 0;
    for round in 1..=args.repeat {
        let mut cmd = Command::new(&cargo);
        if args.nextest {
            cmd.args(["nextest", "run"]);
        } else {
            cmd.arg("test");
        }
        if let Some(p) = &args.selection.manifest_path {
            cmd.arg("--manifest-path").arg(p);
        }
        for p in &args.selection.package {
            cmd.args(["-p", p]);
        }
        if args.selection.workspace {
            cmd.arg("--workspace");
        }
        // a failing test target must not stop the others: the report needs them all
        if !args.cargo_args.iter().any(|a| a == "--no-fail-fast") {
            cmd.arg("--no-fail-fast");
        }
        cmd.args(&args.cargo_args);
        cmd.env(RUN_ID_VAR, &id);
        if let Some(b) = args.budget {
            cmd.env(BUDGET_VAR, b.to_string());
        }
        let round_note = if args.repeat > 1 {
            format!(" (round {round} of {})", args.repeat)
        } else {
            String::new()
        };
        let budget_note = match args.budget {
            Some(b) => format!(", row budget {b}"),
            None => String::new(),
        };
        eprintln!("heddle: run {id}{round_note}{budget_note}");
        if args.quiet {
            cmd.stdout(Stdio::null()).stderr(Stdio::null());
        }
        let status = cmd
            .status()
            .map_err(|e| usage(format!("could not start `{}`: {e}", cargo.to_string_lossy())))?;
        if args.quiet && !status.success() {
            eprintln!("heddle: the test run exited with {status}");
        }
        if !status.success() && status_code == 0 {
            status_code = status.code().map_or(1, |c| c.clamp(1, 255) as u8);
        }
    }
    let roots: Vec<_> = project
        .record_roots()
        .into_iter()
        .filter(|r| find_root(r).is_some())
        .collect();
    let records = Store::merge(roots).ok().and_then(|s| s.read_run(&id).ok());
    match records {
        Some(records) => {
            let rargs = ReportArgs {
                selection: Selection::default(),
                run: id.clone(),
                runs: None,
                all: args.all,
                format: args.format,
                store: Vec::new(),
                confidence: args.confidence,
            };
            report::print(&records, &rargs);
        }
        None => eprintln!(
            "heddle: {}",
            Diagnostic::new(format!("no records for run {id}"))
                .hint("no `#[cover]` test ran (did the build fail, or a filter exclude them?)")
        ),
    }
    Ok(ExitCode::from(status_code))
}
