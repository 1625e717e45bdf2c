//! `cargo heddle test`: one `cargo test` (or `cargo nextest run`) invocation under one
//! run id, then the report of exactly that run.

use std::path::PathBuf;
use std::process::{Command, ExitCode, Stdio};

use clap::Args;
use heddle_store::words::plural;
use heddle_store::{Records, Store, find_root};
use heddle_syntax::budget::{BUDGET_VAR, Budget};
use heddle_test::record::layout::{RUN_ID_VAR, TARGET_DIR_VAR, new_run_id, pipeline_run_id, validate_run_id};

use crate::failure::{Diagnostic, Failure, found, usage};
use crate::report::{self, FailOn, Format, ReportArgs};
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
    /// Exit with a failing code when the report finds this, if the test run itself
    /// passed (see `cargo heddle report --help`): `failures` (3), `flaky` (4),
    /// `incomplete` (5).
    #[arg(long, value_enum, value_name = "WHAT", value_delimiter = ',')]
    pub fail_on: Vec<FailOn>,
    /// Also write the report in `--format` to FILE; the terminal then shows the table.
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Colours of the report and of the test run's output: `auto` (default;
    /// `CARGO_TERM_COLOR`, `NO_COLOR`, `CLICOLOR`, `CLICOLOR_FORCE` and `TERM` decide),
    /// `always` or `never`.
    #[arg(long, value_enum, value_name = "WHEN")]
    pub color: Option<crate::style::ColorChoice>,
    /// Hide the test run's own output (build and test errors still show); print only
    /// the report.
    #[arg(long, short = 'q')]
    pub quiet: bool,
    /// Arguments for `cargo test` (or nextest), after `--`.
    #[arg(last = true, value_name = "ARGS")]
    pub cargo_args: Vec<String>,
}

/// The run id for this invocation: the user's `HEDDLE_RUN_ID` if set, else the CI
/// pipeline's (so the jobs of one pipeline merge), else a new one.
fn run_id() -> Result<String, Failure> {
    match std::env::var(RUN_ID_VAR) {
        Ok(id) if !id.is_empty() => {
            validate_run_id(&id).map_err(|e| {
                usage(Diagnostic::new(format!("`{RUN_ID_VAR}`: {}", e.message())).hint(e.hint()))
            })?;
            Ok(id)
        }
        _ => Ok(pipeline_run_id(&|n| std::env::var(n).ok()).unwrap_or_else(new_run_id)),
    }
}

/// Whether any record of run `id` is in the store under `store_dir`.
fn recorded_any(store_dir: &std::path::Path, id: &str) -> bool {
    find_root(store_dir)
        .and_then(|_| Store::open(store_dir).ok())
        .and_then(|store| store.read_run(id).ok())
        .is_some_and(|records| !records.suites.is_empty() || records.stats.row_lines > 0)
}

/// Under `--quiet`, the errors of a failed test run: a build that failed shows whole
/// (the compiler's errors are the point), a test run only its `error:` lines.
fn show_errors(stderr: &str) {
    let build_failed = stderr.contains("could not compile")
        || stderr.contains("error[")
        || stderr.contains("error: failed to");
    for line in stderr.lines() {
        if build_failed || line.starts_with("error") {
            eprintln!("{line}");
        }
    }
}

/// One test process's line saying that recording failed (the runtime's warning).
const RECORDING_WARNING: &str = "heddle: warning: outcomes are";

/// Runs the cargo command, its stdout and stderr both copied to this process's stderr
/// (stdout is the report's alone: `--format junit > file` stays XML) unless `quiet`,
/// collecting the runtime's warnings on the way. Under `quiet` a failed run still shows
/// its errors.
fn run_cargo(
    cmd: &mut Command,
    quiet: bool,
    warnings: &mut Vec<String>,
) -> std::io::Result<std::process::ExitStatus> {
    use std::io::{BufRead, BufReader, Write};
    cmd.stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    let mut child = cmd.spawn()?;
    let pipes: Vec<Box<dyn std::io::Read + Send>> = [
        child
            .stdout
            .take()
            .map(|p| Box::new(p) as Box<dyn std::io::Read + Send>),
        child
            .stderr
            .take()
            .map(|p| Box::new(p) as Box<dyn std::io::Read + Send>),
    ]
    .into_iter()
    .flatten()
    .collect();
    let (status, lines) = std::thread::scope(|scope| {
        let readers: Vec<_> = pipes
            .into_iter()
            .map(|pipe| {
                scope.spawn(move || {
                    let mut kept = Vec::new();
                    for line in BufReader::new(pipe).lines() {
                        let Ok(line) = line else { break };
                        if !quiet {
                            let _ = writeln!(std::io::stderr().lock(), "{line}");
                        }
                        kept.push(line);
                    }
                    kept
                })
            })
            .collect();
        let status = child.wait();
        let lines: Vec<String> = readers
            .into_iter()
            .flat_map(|r| r.join().unwrap_or_default())
            .collect();
        (status, lines)
    });
    let status = status?;
    for line in &lines {
        if line.contains(RECORDING_WARNING) && !warnings.contains(line) {
            warnings.push(line.trim().to_string());
        }
    }
    if quiet && !status.success() {
        show_errors(&lines.join("\n"));
        eprintln!("heddle: the test run exited with {status}");
    }
    Ok(status)
}

/// What the test rounds left behind.
pub struct Rounds {
    /// The run id they recorded under.
    pub id: String,
    /// The first failing round's exit status, 0 when every round passed.
    pub status: u8,
    /// The records of that run, `None` when nothing was recorded under it.
    pub records: Option<Records>,
    /// The packages tested.
    pub packages: Vec<String>,
    /// Other runs in the store that recorded one of those packages.
    pub other_runs: usize,
    /// The target directory of the packages tested.
    pub target_dir: PathBuf,
    /// The directory the store is under (the test processes were pointed at it).
    pub store_dir: PathBuf,
    /// The runtime's warnings that recording failed, one per distinct line.
    pub warnings: Vec<String>,
}

impl Rounds {
    /// Why nothing was recorded, as an error naming the cause.
    pub fn nothing_recorded(&self) -> Diagnostic {
        let why = if let Some(w) = self.warnings.first() {
            format!(
                "the test processes could not record ({})",
                w.trim_start_matches("heddle: warning: ")
            )
        } else if self.status != 0 {
            "the test run failed before any `#[cover]` row ran (did the build fail?)".to_string()
        } else {
            "no `#[cover]` test ran (does a filter exclude them, or has the package none?)".to_string()
        };
        Diagnostic::new(format!("run {} recorded nothing: {why}", self.id)).hint(format!(
            "records go to `{}`; the report needs at least one `#[cover]` row to have run",
            self.store_dir
                .join(heddle_test::record::layout::STORE_DIR)
                .display()
        ))
    }
}

/// Runs `test`: the rounds, then the report of their run. The exit status is the test
/// run's when it failed, else what `--fail-on` asks for.
pub fn run(args: TestArgs) -> Result<ExitCode, Failure> {
    let rounds = run_rounds(&args)?;
    let Some(records) = &rounds.records else {
        let d = rounds.nothing_recorded();
        if rounds.status != 0 {
            eprintln!("error: {d}");
            return Ok(ExitCode::from(rounds.status));
        }
        // nothing recorded is the most incomplete a run can be, as `report` says too
        if args.fail_on.contains(&FailOn::Incomplete) {
            eprintln!("error: {d}");
            return Ok(FailOn::Incomplete.exit(report::NO_SUITE));
        }
        return Err(found(d));
    };
    let rargs = ReportArgs {
        // the manifest path travels into the rerun commands
        selection: Selection {
            manifest_path: args.selection.manifest_path.clone(),
            ..Selection::default()
        },
        run: rounds.id.clone(),
        runs: None,
        all: args.all,
        format: args.format,
        store: Vec::new(),
        confidence: args.confidence,
        fail_on: args.fail_on.clone(),
        output: args.output.clone(),
        color: args.color,
    };
    let verdict = report::print(records, &rargs, &rounds.packages, rounds.other_runs, 1)?;
    // the test run's own failure comes first; `--fail-on` speaks when it passed
    if rounds.status != 0 {
        return Ok(ExitCode::from(rounds.status));
    }
    Ok(verdict)
}

/// Runs the tests `args.repeat` times under one run id and reads back what they
/// recorded, for callers that report in their own way (the demo runner prints a table
/// and writes a page from one run).
pub fn run_rounds(args: &TestArgs) -> Result<Rounds, Failure> {
    if args.repeat == 0 {
        return Err(usage(
            Diagnostic::new("`--repeat` must be at least 1").hint("leave it out to run the tests once"),
        ));
    }
    let mut project = workspace::load(&args.selection)?;
    if let Some(dir) = workspace::target_dir_arg(&args.cargo_args) {
        project.target_dir = dir;
        project.build_dir = None;
    }
    // the test processes write where this command reads, wherever cargo or nextest runs
    // the test binaries from (a nextest archive is extracted to a temporary directory)
    let store_dir = project.record_roots().remove(0);
    let store_dir = if store_dir.is_absolute() {
        store_dir
    } else {
        std::env::current_dir().map_or(store_dir.clone(), |cwd| cwd.join(&store_dir))
    };
    let id = run_id()?;
    // a bad retention is an error before the run, not after it
    crate::runs::keep_from_env()?;
    let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    let mut status_code: u8 = 0;
    let mut warnings = Vec::new();
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
        cmd.env(TARGET_DIR_VAR, &store_dir);
        // the run's output is piped through this process to stderr: cargo colours it
        // only when told to
        cmd.env(
            "CARGO_TERM_COLOR",
            if crate::style::color_stderr(args.color) {
                "always"
            } else {
                "never"
            },
        );
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
        let status = run_cargo(&mut cmd, args.quiet, &mut warnings).map_err(|e| {
            usage(
                Diagnostic::new(format!("could not start `{}`: {e}", cargo.to_string_lossy()))
                    .hint("check that cargo is installed and on `PATH` (or that `CARGO` names it)"),
            )
        })?;
        if !status.success() && status_code == 0 {
            status_code = status.code().map_or(1, |c| c.clamp(1, 255) as u8);
        }
        // a round that failed before any row ran (a build error, an argument cargo
        // refused) fails the same way each time: the rounds left would only repeat it
        if !status.success() && round < args.repeat && !recorded_any(&store_dir, &id) {
            eprintln!(
                "heddle: round {round} failed before any `#[cover]` row ran, so the {} left are skipped",
                plural((args.repeat - round) as usize, "round", "rounds")
            );
            break;
        }
    }
    let store = find_root(&store_dir).and_then(|_| Store::open(&store_dir).ok());
    if let Some(store) = &store {
        crate::runs::prune_after_test(store)?;
    }
    let records = store.as_ref().and_then(|s| s.read_run(&id).ok());
    let packages: Vec<String> = project.packages.iter().map(|p| p.name.clone()).collect();
    let other_runs = store.as_ref().map_or(0, |s| {
        s.runs().map_or(0, |runs| {
            runs.iter()
                .filter(|r| r.id != id && s.packages(r).iter().any(|p| packages.contains(p)))
                .count()
        })
    });
    Ok(Rounds {
        id,
        status: status_code,
        records,
        packages,
        other_runs,
        target_dir: project.target_dir,
        store_dir,
        warnings,
    })
}
