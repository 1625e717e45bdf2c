//! `cargo heddle report`: from the record store alone to per-interaction pass counts,
//! suspects, flaky interactions and λ advice, in four formats.
//!
//! Its work is bounded whatever the store holds: reading is linear in the records, a
//! suite's tallies cost at most [`heddle_store::tally::MAX_TALLY_CELLS`] cells
//! (interactions of more factors than fit are left out with a note), and the λ advice
//! is priced from the recorded design ([`Price`]) instead of generating one.

mod json;
mod junit;
mod markdown;
mod table;

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Args, ValueEnum};
use heddle_store::{Count, Tallies, tally};
use heddle_store::{Records, Store, StoreError, find_root};
use heddle_test::record::{RowRecord, SpecRecord};

use crate::analysis::{self, Analysis};
use crate::failure::{Diagnostic, Failure, usage};
use crate::workspace::{self, Selection};

/// Arguments of `report`.
#[derive(Args, Debug, Clone)]
pub struct ReportArgs {
    /// Which packages (and so which target directory) to read.
    #[command(flatten)]
    pub selection: Selection,
    /// Run to report: `latest` or a run id.
    #[arg(long, value_name = "latest|ID", default_value = "latest")]
    pub run: String,
    /// Merge the last N runs (history across CI runs, for flakiness).
    #[arg(long, value_name = "N", conflicts_with = "run")]
    pub runs: Option<usize>,
    /// List every interaction's pass counts, not only those with failures.
    #[arg(long)]
    pub all: bool,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Read the stores found under DIR instead of the project's (repeatable): shards
    /// copied from several CI jobs.
    #[arg(long, value_name = "DIR")]
    pub store: Vec<PathBuf>,
    /// Confidence the λ advice aims for.
    #[arg(long, value_name = "C", default_value_t = 0.95)]
    pub confidence: f64,
}

/// Report formats.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// For the terminal (colours only on a terminal, never with NO_COLOR).
    Table,
    /// The versioned JSON document (schema in the `report::json` module docs).
    Json,
    /// JUnit XML, one testcase per row.
    Junit,
    /// A compact summary for CI job pages.
    Markdown,
}

/// What the report says about one row.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RowView {
    /// Row index.
    pub row: usize,
    /// Executions, passes and failures.
    pub count: Count,
    /// The last failure message, if any.
    pub message: Option<String>,
    /// Total body time over its executions, nanoseconds.
    pub duration_ns: u64,
}

/// The λ advice for a suite.
#[derive(Clone, Debug, PartialEq)]
pub struct Advice {
    /// Confidence aimed for.
    pub confidence: f64,
    /// Smallest failure probability the current λ catches with that confidence.
    pub detectable: f64,
    /// The observed failure rate of the top flaky interaction, with the λ needed to
    /// catch it and what a design at that λ costs for this spec.
    pub flake: Option<(f64, u32, Price)>,
}

/// The rows a design of another index λ' costs, bracketed from what the report already
/// holds; no design is generated, so pricing costs nothing whatever the spec.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Price {
    /// λ' times the most interactions of one set of t factors that the recorded design
    /// shows: each needs λ' rows of its own, and impossible ones (ruled out by excludes)
    /// are not among them (the counting bound, common practice).
    pub at_least: u64,
    /// The recorded design repeated ⌈λ'/λ⌉ times: the copies together cover every
    /// interaction λ' times or more (juxtaposed arrays add their indices, common practice).
    pub at_most: u64,
}

impl Price {
    /// The price of index `lambda` for a suite whose design is `spec.rows`.
    pub fn of(spec: &SpecRecord, tallies: &Tallies, lambda: u32) -> Price {
        let copies = u64::from(lambda.div_ceil(spec.lambda.max(1)));
        let at_most = copies.saturating_mul(spec.rows.len() as u64);
        let widest = tallies
            .interactions()
            .chunk_by(|a, b| a.interaction.factors == b.interaction.factors)
            .map(<[_]>::len)
            .max()
            .unwrap_or(0) as u64;
        Price {
            // a hand-made design may not have the index it claims: never above the copies
            at_least: widest.saturating_mul(u64::from(lambda)).min(at_most),
            at_most,
        }
    }
}

/// One suite's report.
pub struct SuiteReport<'a> {
    /// Its spec.
    pub spec: &'a SpecRecord,
    /// Per interaction and level.
    pub tallies: Tallies,
    /// Suspects and flaky interactions.
    pub analysis: Analysis,
    /// Per row.
    pub rows: Vec<RowView>,
    /// Rows that ran and never failed.
    pub passed: usize,
    /// Rows that failed at least once.
    pub failed: usize,
    /// Rows with no record.
    pub not_run: usize,
    /// λ advice.
    pub advice: Advice,
}

/// The whole report.
pub struct Report<'a> {
    /// Run ids read, oldest first.
    pub runs: Vec<String>,
    /// Suites, in key order.
    pub suites: Vec<SuiteReport<'a>>,
    /// What reading skipped, one line each.
    pub notes: Vec<String>,
    /// Whether `--all` was given.
    pub all: bool,
}

/// Labels of an interaction as `(parameter, label)` pairs.
pub fn described<'s>(spec: &'s SpecRecord, i: &heddle_store::Interaction) -> Vec<(&'s str, &'s str)> {
    i.describe(spec).unwrap_or_default()
}

/// `a = x, b = y`.
pub fn levels_text(pairs: &[(&str, &str)]) -> String {
    pairs
        .iter()
        .map(|(n, l)| format!("{n} = {l}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Reads the store the arguments name.
pub fn open_store(args: &ReportArgs) -> Result<Store, Failure> {
    let not_found = |what: String| {
        usage(
            Diagnostic::new(format!("no heddle records found {what}"))
                .hint("run the tests first, e.g. `cargo heddle test`"),
        )
    };
    if !args.store.is_empty() {
        let mut roots = Vec::new();
        for dir in &args.store {
            match Store::discover(dir) {
                Ok(s) => roots.extend(s.roots().iter().cloned()),
                Err(StoreError::NotFound { .. }) => {
                    return Err(not_found(format!("under `{}`", dir.display())));
                }
                Err(e) => return Err(usage(e.diagnostic())),
            }
        }
        return Store::merge(roots).map_err(|e| usage(e.diagnostic()));
    }
    let project = workspace::load(&args.selection)?;
    let roots: Vec<PathBuf> = project
        .record_roots()
        .into_iter()
        .filter(|r| find_root(r).is_some())
        .collect();
    if roots.is_empty() {
        return Err(not_found(format!("in `{}`", project.target_dir.display())));
    }
    Store::merge(roots).map_err(|e| usage(e.diagnostic()))
}

/// Reads the records the arguments select.
pub fn read(store: &Store, args: &ReportArgs) -> Result<Records, Failure> {
    let r = match (args.runs, args.run.as_str()) {
        (Some(0), _) => return Err(usage("`--runs` must be at least 1")),
        (Some(n), _) => store.read_last(n),
        (None, "latest") => store.read_last(1),
        (None, id) => store.read_run(id),
    };
    r.map_err(|e| usage(e.diagnostic()))
}

/// Builds the report of some records, keeping the suites of `packages` (all if empty).
pub fn build<'a>(records: &'a Records, packages: &[String], confidence: f64, all: bool) -> Report<'a> {
    let mut notes: Vec<String> = records.stats.notes().iter().map(Diagnostic::one_line).collect();
    let mut suites = Vec::new();
    for s in &records.suites {
        if !packages.is_empty() && !packages.contains(&s.spec.krate) {
            continue;
        }
        match tally(&s.spec, s.outcomes()) {
            Ok(t) => {
                if let Some(left_out) = t.left_out {
                    notes.push(left_out.note(&s.spec.suite, t.strength).one_line());
                }
                suites.push(suite_report(&s.spec, &s.rows, t, confidence))
            }
            Err(e) => notes.push(format!("skipped suite `{}`: {e}", s.spec.suite)),
        }
    }
    Report {
        runs: records.runs.iter().map(|r| r.id.clone()).collect(),
        suites,
        notes,
        all,
    }
}

fn suite_report<'a>(
    spec: &'a SpecRecord,
    records: &[RowRecord],
    tallies: Tallies,
    confidence: f64,
) -> SuiteReport<'a> {
    let mut rows: Vec<RowView> = (0..spec.rows.len())
        .map(|row| RowView {
            row,
            count: tallies.rows[row],
            message: None,
            duration_ns: 0,
        })
        .collect();
    for r in records {
        if let Some(v) = rows.get_mut(r.row as usize) {
            v.duration_ns += r.duration_ns;
            if !r.outcome.is_pass() {
                v.message = r.message.clone().or(Some(String::new()));
            }
        }
    }
    let passed = rows
        .iter()
        .filter(|r| r.count.runs > 0 && r.count.failures == 0)
        .count();
    let failed = rows.iter().filter(|r| r.count.failures > 0).count();
    let not_run = rows.iter().filter(|r| r.count.runs == 0).count();
    let analysis = analysis::analyse(&tallies);
    let flake = analysis.flaky.first().map(|f| {
        let rate = 1.0 - f.passes as f64 / f.runs.max(1) as f64;
        let lambda = analysis::lambda_for(rate, confidence).unwrap_or(spec.lambda);
        (rate, lambda, Price::of(spec, &tallies, lambda))
    });
    let advice = Advice {
        confidence,
        detectable: analysis::detectable_rate(spec.lambda.max(1), confidence),
        flake,
    };
    SuiteReport {
        spec,
        tallies,
        analysis,
        rows,
        passed,
        failed,
        not_run,
        advice,
    }
}

/// Renders a report in a format.
pub fn render(report: &Report<'_>, format: Format, color: bool) -> String {
    match format {
        Format::Table => table::render(report, color),
        Format::Json => json::render(report),
        Format::Junit => junit::render(report),
        Format::Markdown => markdown::render(report),
    }
}

/// Runs `report`.
pub fn run(args: ReportArgs) -> Result<ExitCode, Failure> {
    if !(args.confidence > 0.0 && args.confidence < 1.0) {
        return Err(usage(
            Diagnostic::new(format!(
                "`--confidence {}` is not between 0 and 1",
                args.confidence
            ))
            .hint("for example `--confidence 0.95`"),
        ));
    }
    let store = open_store(&args)?;
    let records = read(&store, &args)?;
    print(&records, &args);
    Ok(ExitCode::SUCCESS)
}

/// Prints the report of some records to stdout (notes about skipped lines to stderr).
pub fn print(records: &Records, args: &ReportArgs) {
    let report = build(records, &args.selection.package, args.confidence, args.all);
    for n in &report.notes {
        eprintln!("note: {n}");
    }
    let text = render(&report, args.format, crate::style::color_stdout());
    let mut out = std::io::stdout().lock();
    let _ = out.write_all(text.as_bytes()).and_then(|_| out.flush());
}
