//! `cargo heddle report`: from the record store alone to per-interaction pass counts,
//! suspects, flaky interactions and λ advice, in five formats.
//!
//! Its work is bounded whatever the store holds: reading is linear in the records, a
//! suite's tallies cost at most [`heddle_store::tally::MAX_TALLY_CELLS`] cells
//! (interactions of more factors than fit are left out with a note), and the λ advice
//! is priced from the recorded design ([`Price`]) instead of generating one.

mod html;
mod json;
mod junit;
mod markdown;
mod per_run;
pub mod ran;
mod table;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Args, ValueEnum};
use heddle_store::{Count, Tallies, tally};
use heddle_store::{Records, Store, StoreError, find_root};
use heddle_test::record::{RowRecord, SpecRecord, StartRecord};

use crate::analysis::{self, Analysis};
use crate::budget::BudgetReach;
use crate::failure::{Diagnostic, Failure, unrecorded, usage};
use crate::workspace::{self, Selection};
use ran::Ran;

/// Arguments of `report`.
#[derive(Args, Debug, Clone)]
pub struct ReportArgs {
    /// Which packages (and so which target directory) to read.
    #[command(flatten)]
    pub selection: Selection,
    /// Run to report: `latest` or a run id.
    #[arg(long, value_name = "latest|ID", default_value = "latest")]
    pub run: String,
    /// Merge the last N runs (history across runs, for flakiness), or `all`: every run
    /// found in the stores read (shards of one pipeline recorded under different ids). A
    /// row run again by a later build in the same store counts only that build's
    /// executions: a fix is not a flake.
    #[arg(long, value_name = "N|all", conflicts_with = "run", value_parser = parse_runs)]
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
    /// Also write the report in `--format` to FILE; the terminal then shows the table.
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Colours: `auto` (default; `CARGO_TERM_COLOR`, `NO_COLOR`, `CLICOLOR`,
    /// `CLICOLOR_FORCE` and `TERM` decide), `always` or `never`.
    #[arg(long, value_enum, value_name = "WHEN")]
    pub color: Option<crate::style::ColorChoice>,
    /// Exit with a failing code when the report finds this (repeatable or
    /// comma-separated): `failures` (3), `flaky` (4), `incomplete` (5).
    #[arg(long, value_enum, value_name = "WHAT", value_delimiter = ',')]
    pub fail_on: Vec<FailOn>,
}

/// What `--fail-on` can fail a CI job on, each with its exit code. The first that holds,
/// in this order, is the exit code; 0 when none does. 2 stays a usage error and 1 a
/// problem found before any report.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, ValueEnum)]
pub enum FailOn {
    /// A row failed in every execution read (a row that also passed is flaky instead):
    /// exit code 3.
    Failures,
    /// A row both passed and failed (retries, repeats, runs merged): exit code 4.
    Flaky,
    /// A suite's t-way interactions did not all run in λ rows (a partial run, a filter,
    /// a missing shard), a row did not finish (its process, running several rows,
    /// crashed), or no suite was recorded at all: exit code 5.
    Incomplete,
}

impl FailOn {
    /// The exit code.
    pub fn code(self) -> u8 {
        match self {
            FailOn::Failures => 3,
            FailOn::Flaky => 4,
            FailOn::Incomplete => 5,
        }
    }

    /// Whether it holds for a report, in words.
    pub fn holds(self, report: &Report<'_>) -> Option<String> {
        let rows = |f: &dyn Fn(&RowView) -> bool| -> usize {
            report
                .suites
                .iter()
                .map(|s| s.rows.iter().filter(|r| f(r)).count())
                .sum()
        };
        let s = |n: usize| if n == 1 { "" } else { "s" };
        match self {
            FailOn::Failures => {
                let n = rows(&|r| r.count.failures > 0 && r.count.passes == 0);
                (n > 0).then(|| format!("{n} row{} failed in every run", s(n)))
            }
            FailOn::Flaky => {
                let n = rows(&|r| r.count.is_mixed());
                (n > 0).then(|| format!("{n} row{} both passed and failed", s(n)))
            }
            FailOn::Incomplete if report.suites.is_empty() => Some(NO_SUITE.into()),
            FailOn::Incomplete => {
                let n = report.suites.iter().filter(|x| !x.ran.complete()).count();
                let unfinished = report.suites.iter().filter(|x| x.ran.unfinished > 0).count();
                let or_unfinished = if unfinished > 0 {
                    " or had a row that did not finish"
                } else {
                    ""
                };
                (n > 0).then(|| {
                    format!(
                        "{n} suite{} did not run every interaction in lambda rows{or_unfinished}",
                        s(n)
                    )
                })
            }
        }
    }
}

/// Why `--fail-on incomplete` holds when there is nothing to report on.
pub(crate) const NO_SUITE: &str = "no suite was recorded";

/// The exit code `--fail-on` asks for, saying on stderr which condition held.
pub fn fail_code(report: &Report<'_>, fail_on: &[FailOn]) -> ExitCode {
    let mut asked = fail_on.to_vec();
    asked.sort();
    asked.dedup();
    for f in asked {
        if let Some(why) = f.holds(report) {
            return f.exit(&why);
        }
    }
    ExitCode::SUCCESS
}

impl FailOn {
    /// Says on stderr why this condition held, and gives its exit code.
    pub(crate) fn exit(self, why: &str) -> ExitCode {
        let name = self
            .to_possible_value()
            .map_or_else(String::new, |v| v.get_name().to_string());
        eprintln!("heddle: {why} (`--fail-on {name}`: exit code {})", self.code());
        ExitCode::from(self.code())
    }
}

/// `--runs`: a count, or `all` (every run).
fn parse_runs(text: &str) -> Result<usize, String> {
    if text == "all" {
        return Ok(usize::MAX);
    }
    text.parse()
        .map_err(|_| format!("`{text}` is not a count of runs; hint: a number such as `10`, or `all`"))
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
    /// One self-contained page with charts (heat maps, coverage, intervals), for a
    /// browser or a CI artifact (`report::html` module docs).
    Html,
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
    /// Every failed execution, in run and file order (retries and repeats included).
    pub failed_runs: Vec<FailedRun>,
    /// Highest nextest attempt number seen (retries), when run under nextest.
    pub max_attempt: Option<u32>,
    /// Executions that started and did not finish in a process that ran several rows
    /// (plain `cargo test`): not outcomes, as any row in flight may have ended the
    /// process (under nextest such an execution is a failure, in `count`).
    pub unfinished: usize,
}

impl RowView {
    /// Whether the row did not finish and has no outcome either: "did not finish", not
    /// "not run".
    pub fn did_not_finish(&self) -> bool {
        self.count.runs == 0 && self.unfinished > 0
    }
}

/// One failed execution of a row.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FailedRun {
    /// Its failure message.
    pub message: Option<String>,
    /// Body time, nanoseconds.
    pub duration_ns: u64,
    /// nextest's attempt number, when run under nextest.
    pub attempt: Option<u32>,
}

/// The λ advice for a suite.
#[derive(Clone, Debug, PartialEq)]
pub struct Advice {
    /// Confidence aimed for.
    pub confidence: f64,
    /// Smallest failure probability the runs read catch with that confidence.
    pub detectable: f64,
    /// Executions per t-way interaction that figure is for: the fewest any t-way
    /// interaction got in the runs read (λ × rounds), λ when some did not run.
    pub runs: u64,
    /// Rounds every row went through (`--repeat`, runs merged, retries): the fewest
    /// executions of any row that ran.
    pub rounds: u64,
    /// The observed failure rate of the top flaky interaction, with the λ needed to
    /// catch it and what a design at that λ costs for this spec.
    pub flake: Option<(f64, u32, Price)>,
}

/// The rows a design of another index λ' costs, bracketed from what the report already
/// holds; no design is generated, so pricing costs nothing whatever the spec. A focus
/// set is asked for λ' too, or for its own λ when that is higher (a design at λ' still
/// covers what the focus set asked of the old one).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Price {
    /// The most, over the sets of t factors and the column sets of the focus sets, of
    /// the interactions of one set that the recorded design shows times the index asked
    /// of it: each needs that many rows of its own, and impossible ones (ruled out by
    /// excludes) are not among them (the counting bound, common practice).
    pub at_least: u64,
    /// The recorded design repeated as often as the base or a focus set needs to reach
    /// its index (⌈λ'/λ⌉ copies for the base): the copies together cover every
    /// interaction that often or more (juxtaposed arrays add their indices, common
    /// practice).
    pub at_most: u64,
}

impl Price {
    /// The price of index `lambda` for a suite whose design is `spec.rows`.
    pub fn of(spec: &SpecRecord, tallies: &Tallies, lambda: u32) -> Price {
        let widest = |entries: &mut dyn Iterator<Item = (&[usize], u32)>| -> u64 {
            let mut best = 0u64;
            let mut run: Option<(&[usize], u64)> = None;
            for (factors, asked) in entries {
                run = match run {
                    Some((f, n)) if f == factors => Some((f, n + 1)),
                    _ => Some((factors, 1)),
                };
                if let Some((_, n)) = run {
                    best = best.max(n.saturating_mul(u64::from(asked)));
                }
            }
            best
        };
        // a focus set's λ' is λ' or its own λ when higher; its copies reach it in
        // ⌈λ'_F / λ_F⌉
        let asked = |own: u32| lambda.max(own);
        let mut copies = u64::from(lambda.div_ceil(spec.lambda.max(1)));
        for f in &tallies.focus {
            copies = copies.max(u64::from(asked(f.lambda).div_ceil(f.lambda.max(1))));
        }
        let at_most = copies.saturating_mul(spec.rows.len() as u64);
        let base = widest(
            &mut tallies
                .interactions()
                .iter()
                .map(|t| (t.interaction.factors.as_slice(), lambda)),
        );
        let focus = widest(
            &mut tallies
                .focus
                .iter()
                .map(|f| (f.tally.interaction.factors.as_slice(), asked(f.lambda))),
        );
        Price {
            // a hand-made design may not have the index it claims: never above the copies
            at_least: base.max(focus).min(at_most),
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
    /// Rows with no record and no execution that did not finish.
    pub not_run: usize,
    /// Rows with no outcome whose executions did not finish ([`RowView::did_not_finish`]).
    pub did_not_finish: usize,
    /// What the runs read covered.
    pub ran: Ran,
    /// λ advice.
    pub advice: Advice,
    /// The manifest path the report was asked for, carried into rerun commands.
    pub manifest_path: Option<String>,
    /// Per run read (in the order of [`Report::runs`]), the count of each row: the
    /// history behind `--runs N`.
    pub by_run: Vec<Vec<Count>>,
    /// The row budget the run had, when it left rows out (such a run is never
    /// complete), and the coverage its rows reach.
    pub budget: Option<BudgetReach>,
}

impl SuiteReport<'_> {
    /// The names (`row_03`) of the rows with executions that did not finish in a process
    /// of several rows, in row order.
    pub fn unfinished_rows(&self) -> Vec<&str> {
        self.rows
            .iter()
            .filter(|r| r.unfinished > 0)
            .map(|r| self.spec.row_names.get(r.row).map_or("?", String::as_str))
            .collect()
    }

    /// The command that reruns one row: the nextest form when the row ran under
    /// nextest, with `--manifest-path` when the report was asked for with one.
    pub fn rerun(&self, row: usize) -> String {
        let form = heddle_test::record::RerunForm {
            nextest: self.rows.get(row).is_some_and(|r| r.max_attempt.is_some()),
            manifest_path: self.manifest_path.clone(),
        };
        self.spec.rerun_command_as(row, &form).unwrap_or_default()
    }
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
    /// Runs in the store that were not read (older, or of other packages): a partial
    /// run's report says how to merge them.
    pub other_runs: usize,
    /// Store roots read (several: shards merged).
    pub stores: usize,
}

impl Report<'_> {
    /// What was merged, when more than one run or store was read: `2 runs (a, b) from 3
    /// stores`, each run id between `quote`s.
    pub fn merged(&self, quote: &str) -> Option<String> {
        if self.stores <= 1 && self.runs.len() <= 1 {
            return None;
        }
        let ids: Vec<String> = self.runs.iter().map(|r| format!("{quote}{r}{quote}")).collect();
        Some(format!(
            "{} ({}) from {}",
            heddle_store::words::plural(self.runs.len(), "run", "runs"),
            ids.join(", "),
            heddle_store::words::plural(self.stores, "store", "stores")
        ))
    }
}

/// Labels of an interaction as `(parameter, label)` pairs.
pub fn described<'s>(spec: &'s SpecRecord, i: &heddle_store::Interaction) -> Vec<(&'s str, &'s str)> {
    i.describe(spec).unwrap_or_default()
}

/// The factors of each focus set by name, in the spec's order.
pub fn focus_names(spec: &SpecRecord) -> Vec<Vec<String>> {
    spec.focus
        .iter()
        .map(|f| {
            f.factors
                .iter()
                .map(|&c| {
                    spec.factors
                        .get(c as usize)
                        .map_or_else(String::new, |x| x.name.clone())
                })
                .collect()
        })
        .collect()
}

/// `a = x, b = y`.
pub fn levels_text(pairs: &[(&str, &str)]) -> String {
    pairs
        .iter()
        .map(|(n, l)| format!("{n} = {l}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The store the arguments name, and the packages the report covers (empty: all). A
/// run belongs to the packages it ran: without `-p` the report covers the current
/// package as cargo chooses it (`--workspace`: every member); with `--store` (shards,
/// no project) it covers the `-p` given, else every package found.
pub fn open_store(args: &ReportArgs) -> Result<(Store, Vec<String>), Failure> {
    let not_found = |what: String| {
        unrecorded(Diagnostic::new(format!("no heddle records found {what}")).hint(format!(
            "run the tests first, e.g. `cargo heddle test`; tests that ran outside cargo's target directory (a nextest archive, `--archive-file`) record only where `{}` points",
            heddle_test::record::layout::TARGET_DIR_VAR
        )))
    };
    if !args.store.is_empty() {
        let mut roots = Vec::new();
        for dir in &args.store {
            // nothing recorded there either (a CI job's store never downloaded, so
            // `--fail-on incomplete` applies), but the message says which it is: a typo
            // looks the same
            if !dir.exists() {
                return Err(unrecorded(
                    Diagnostic::new(format!("no heddle records: `--store {}` does not exist", dir.display()))
                        .hint("check the path; it names a directory holding a `heddle` store, or a parent of several (stores copied from CI jobs)"),
                ));
            }
            match Store::discover(dir) {
                Ok(s) => roots.extend(s.roots().iter().cloned()),
                Err(StoreError::NotFound { .. }) => {
                    return Err(not_found(format!("under `{}`", dir.display())));
                }
                Err(e) => return Err(usage(e.diagnostic())),
            }
        }
        let store = Store::merge(roots).map_err(|e| usage(e.diagnostic()))?;
        return Ok((store, args.selection.package.clone()));
    }
    let project = workspace::load(&args.selection)?;
    let searched = project.record_roots();
    let roots: Vec<PathBuf> = searched
        .iter()
        .filter(|r| find_root(r).is_some())
        .cloned()
        .collect();
    if roots.is_empty() {
        // name where it looked: `HEDDLE_TARGET_DIR` replaces the target directory
        let places: Vec<String> = searched.iter().map(|r| format!("`{}`", r.display())).collect();
        return Err(not_found(format!("in {}", places.join(" or "))));
    }
    let store = Store::merge(roots).map_err(|e| usage(e.diagnostic()))?;
    let packages = project.packages.iter().map(|p| p.name.clone()).collect();
    Ok((store, packages))
}

/// Reads the records the arguments select among the runs of `packages` (all when
/// empty): "latest" and `--runs N` count only runs that recorded one of them. Returns
/// the records and how many other runs of those packages the store holds.
pub fn read(store: &Store, args: &ReportArgs, packages: &[String]) -> Result<(Records, usize), Failure> {
    let runs = store.runs().map_err(|e| usage(e.diagnostic()))?;
    let ours: Vec<_> = runs
        .into_iter()
        .filter(|r| packages.is_empty() || store.packages(r).iter().any(|p| packages.contains(p)))
        .collect();
    if args.runs.is_none() && args.run != "latest" {
        let records = store.read_run(&args.run).map_err(|e| usage(e.diagnostic()))?;
        return Ok((records, ours.len().saturating_sub(1)));
    }
    let n = match args.runs {
        Some(0) => {
            return Err(usage(
                Diagnostic::new("`--runs` must be at least 1")
                    .hint("write `--runs 10` for the last ten runs, or `--runs all`"),
            ));
        }
        Some(n) => n,
        None => 1,
    };
    if ours.is_empty() {
        let names: Vec<String> = packages.iter().map(|p| format!("`{p}`")).collect();
        return Err(unrecorded(
            Diagnostic::new(format!(
                "no run in the store recorded {}",
                if names.is_empty() {
                    "a suite".to_string()
                } else {
                    format!("a suite of {}", names.join(", "))
                }
            ))
            .hint(format!(
                "run its tests first (`cargo heddle test`), or choose packages with `-p` or `--workspace`; tests run from a nextest archive (`--archive-file`) record only where `{}` points",
                heddle_test::record::layout::TARGET_DIR_VAR
            )),
        ));
    }
    let keep = ours.len().saturating_sub(n);
    let other = keep;
    Ok((store.read_runs(ours.into_iter().skip(keep).collect()), other))
}

/// Builds the report of some records, keeping the suites of `packages` (all if empty).
pub fn build<'a>(records: &'a Records, packages: &[String], confidence: f64, all: bool) -> Report<'a> {
    let mut notes: Vec<String> = records.stats.notes().iter().map(Diagnostic::one_line).collect();
    let mut suites = Vec::new();
    let run_ids: Vec<&str> = records.runs.iter().map(|r| r.id.as_str()).collect();
    for s in &records.suites {
        if !packages.is_empty() && !packages.contains(&s.spec.krate) {
            continue;
        }
        match tally(&s.spec, s.outcomes()) {
            Ok(t) => {
                if let Some(left_out) = &t.left_out {
                    notes.push(left_out.note(&s.spec.suite, t.strength).one_line());
                }
                let suite = suite_report(&s.spec, &s.rows, &s.unfinished, t, confidence, &run_ids);
                notes.extend(unfinished_note(&suite));
                suites.push(suite)
            }
            Err(e) => notes.push(format!("skipped suite `{}`: {e}", s.spec.suite)),
        }
    }
    Report {
        runs: records.runs.iter().map(|r| r.id.clone()).collect(),
        suites,
        notes,
        all,
        other_runs: 0,
        stores: 1,
    }
}

/// The note on a suite's rows that did not finish in a process of several rows: which
/// rows, that one of them likely ended the process, and how to find which.
fn unfinished_note(s: &SuiteReport<'_>) -> Option<String> {
    let first = s.rows.iter().find(|r| r.unfinished > 0)?.row;
    let rows = s.unfinished_rows();
    const NAMED: usize = 8;
    let mut names: Vec<String> = rows.iter().take(NAMED).map(|r| format!("`{r}`")).collect();
    if rows.len() > NAMED {
        names.push(format!("and {} more", rows.len() - NAMED));
    }
    let (it, one_of_them) = if rows.len() == 1 {
        ("it", "it")
    } else {
        ("they", "one of them")
    };
    Some(
        Diagnostic::new(format!(
            "`{}`: {} not finish ({}): its test process ran several tests at once and ended while {it} ran, by a crash (an abort, a stack overflow, an out-of-memory kill) or a timeout's kill, and {one_of_them} likely caused it; not counted as failures, and the run is not all clear",
            s.spec.suite,
            heddle_store::words::plural(rows.len(), "row did", "rows did"),
            names.join(", "),
        ))
        .hint(format!(
            "rerun each alone to find which (`{}`), or run under nextest (`cargo heddle test --nextest`), which gives each row its own process; a report taken while the tests still run sees the rows in flight as not finished",
            s.rerun(first)
        ))
        .one_line(),
    )
}

fn suite_report<'a>(
    spec: &'a SpecRecord,
    records: &[RowRecord],
    unfinished: &[StartRecord],
    tallies: Tallies,
    confidence: f64,
    run_ids: &[&str],
) -> SuiteReport<'a> {
    let mut rows: Vec<RowView> = (0..spec.rows.len())
        .map(|row| RowView {
            row,
            count: tallies.rows[row],
            message: None,
            duration_ns: 0,
            failed_runs: Vec::new(),
            max_attempt: None,
            unfinished: 0,
        })
        .collect();
    for u in unfinished {
        if let Some(v) = rows.get_mut(u.row as usize) {
            v.unfinished += 1;
        }
    }
    for r in records {
        if let Some(v) = rows.get_mut(r.row as usize) {
            v.duration_ns += r.duration_ns;
            v.max_attempt = v.max_attempt.max(r.attempt);
            if !r.outcome.is_pass() {
                v.message = r.message.clone().or(Some(String::new()));
                v.failed_runs.push(FailedRun {
                    message: r.message.clone(),
                    duration_ns: r.duration_ns,
                    attempt: r.attempt,
                });
            }
        }
    }
    let passed = rows
        .iter()
        .filter(|r| r.count.runs > 0 && r.count.failures == 0)
        .count();
    let failed = rows.iter().filter(|r| r.count.failures > 0).count();
    let not_run = rows
        .iter()
        .filter(|r| r.count.runs == 0 && r.unfinished == 0)
        .count();
    let did_not_finish = rows.iter().filter(|r| r.did_not_finish()).count();
    let mut ran = Ran::measure(&tallies, spec.lambda);
    ran.unfinished = unfinished.len();
    let analysis = analysis::analyse(&tallies);
    let flake = analysis.flaky.first().map(|f| {
        let rate = 1.0 - f.passes as f64 / f.runs.max(1) as f64;
        let lambda = analysis::lambda_for(rate, confidence).unwrap_or(spec.lambda);
        (rate, lambda, Price::of(spec, &tallies, lambda))
    });
    let runs = if ran.min_runs == 0 {
        u64::from(spec.lambda.max(1))
    } else {
        ran.min_runs
    };
    let advice = Advice {
        confidence,
        detectable: analysis::detectable_rate(u32::try_from(runs).unwrap_or(u32::MAX), confidence),
        runs,
        rounds: ran.min_row_runs.max(1),
        flake,
    };
    let budget = budget_reach(spec, &tallies);
    SuiteReport {
        spec,
        tallies,
        analysis,
        rows,
        passed,
        failed,
        not_run,
        did_not_finish,
        ran,
        advice,
        manifest_path: None,
        by_run: per_run::row_counts(run_ids, records, spec.rows.len()),
        budget,
    }
}

/// What the rows a budgeted run let through cover, by the one function `show` uses too.
fn budget_reach(spec: &SpecRecord, tallies: &Tallies) -> Option<BudgetReach> {
    let design = spec.design_rows();
    let rows = (spec.budget? as usize).min(design);
    // the tallies have read the focus sets already, so they read back
    let focus = heddle_store::spec::focus(spec).unwrap_or_default();
    (rows < design).then(|| BudgetReach {
        rows,
        of: design,
        reach: tallies.reach(rows, design, spec.lambda, &focus),
        focus: focus_names(spec),
    })
}

/// Renders a report in a format.
pub fn render(report: &Report<'_>, format: Format, color: bool) -> String {
    match format {
        Format::Table => table::render(report, color),
        Format::Json => json::render(report),
        Format::Junit => junit::render(report),
        Format::Markdown => markdown::render(report),
        Format::Html => html::render(report),
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
    let opened = open_store(&args).and_then(|(store, packages)| {
        let (records, other) = read(&store, &args, &packages)?;
        Ok((store, packages, records, other))
    });
    let (store, packages, records, other) = match opened {
        // nothing recorded at all is the most incomplete a run can be
        Err(Failure::Unrecorded(d)) if args.fail_on.contains(&FailOn::Incomplete) => {
            eprintln!("error: {d}");
            return Ok(FailOn::Incomplete.exit(NO_SUITE));
        }
        opened => opened?,
    };
    print(&records, &args, &packages, other, store.roots().len())
}

/// Prints the report of some records, keeping the suites of `packages` (all when
/// empty), to stdout (notes about skipped lines to stderr), and with `--output` writes
/// it in its format to that file (stdout then shows the table); returns the exit code
/// `--fail-on` asks for.
pub fn print(
    records: &Records,
    args: &ReportArgs,
    packages: &[String],
    other_runs: usize,
    stores: usize,
) -> Result<ExitCode, Failure> {
    let mut report = build(records, packages, args.confidence, args.all);
    let manifest = args
        .selection
        .manifest_path
        .as_ref()
        .map(|p| p.display().to_string());
    for s in &mut report.suites {
        s.manifest_path = manifest.clone();
    }
    report.other_runs = other_runs;
    report.stores = stores;
    for n in &report.notes {
        eprintln!("note: {n}");
    }
    let shown = match &args.output {
        Some(path) => {
            write_to(path, &render(&report, args.format, false))?;
            eprintln!("heddle: wrote the report to {}", path.display());
            Format::Table
        }
        None => args.format,
    };
    let text = render(&report, shown, crate::style::color_stdout(args.color));
    let mut out = std::io::stdout().lock();
    let _ = out.write_all(text.as_bytes()).and_then(|_| out.flush());
    Ok(fail_code(&report, &args.fail_on))
}

/// Writes a rendered report to a file whole (a temporary file renamed over it), so a
/// reader such as a browser or a CI upload never sees half a page.
pub fn write_to(path: &Path, text: &str) -> Result<(), Failure> {
    crate::pinfile::write_atomically(path, text).map_err(|e| {
        crate::failure::found(
            Diagnostic::new(format!("cannot write the report to `{}`: {e}", path.display()))
                .hint("check that the directory exists and is writable"),
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use heddle_store::fixture::SpecBuilder;

    #[test]
    fn a_focus_set_prices_its_own_interactions() {
        // the full factorial 3^3 (27 rows) shows each pair of levels of two columns in 3
        // rows and each triple in 1 (common practice): an array of strength 2, index 3
        let rows: Vec<Vec<u8>> = (0..27u8).map(|x| vec![x / 9, x / 3 % 3, x % 3]).collect();
        let plain = SpecBuilder::new("f")
            .numbered(&[3, 3, 3])
            .strength(2)
            .lambda(3)
            .rows(rows.clone())
            .build();
        let tp = tally(&plain, []).unwrap();
        // λ' = 6: 9 pairs × 6 = 54 rows at least, 2 copies = 54 at most
        assert_eq!(
            Price::of(&plain, &tp, 6),
            Price {
                at_least: 54,
                at_most: 54
            }
        );
        // with the focus set {0, 1, 2} at strength 3 (λ = 1): its 27 triples each need 6
        // rows (162), and only 6 copies show each 6 times
        let focused = SpecBuilder::new("f")
            .numbered(&[3, 3, 3])
            .strength(2)
            .lambda(3)
            .focus(&[0, 1, 2], 3, 1)
            .rows(rows)
            .build();
        let t = tally(&focused, []).unwrap();
        assert_eq!(t.focus.len(), 27);
        assert_eq!(
            Price::of(&focused, &t, 6),
            Price {
                at_least: 162,
                at_most: 162
            }
        );
        // λ' = 2 is below the base's 3 (one copy), not the focus set's 1: 2 copies
        assert_eq!(
            Price::of(&focused, &t, 2),
            Price {
                at_least: 54,
                at_most: 54
            }
        );
        assert_eq!(
            Price::of(&plain, &tp, 2),
            Price {
                at_least: 18,
                at_most: 27
            }
        );
    }
}
