//! The JSON report, for scripts and dashboards.
//!
//! Schema, version [`REPORT_FORMAT`] (fields are only ever added within a version;
//! version 2 writes the seed as a decimal string, since JSON readers that hold numbers as
//! doubles corrupt seeds above 2^53):
//!
//! ```text
//! { "format": 2,
//!   "runs": [run id, …],                      oldest first
//!   "stores": n,                              store roots read (shards merged)
//!   "notes": [text, …],                       what reading skipped
//!   "suites": [ {
//!       "crate", "target", "file", "function", "test",   test = rows module path
//!       "fingerprint", "strength", "lambda", "seed",         seed: a decimal string
//!       "rows", "followups", "passed", "failed", "did_not_finish", "not_run", "executions",
//!                                              did_not_finish: rows whose executions all
//!                                              started and did not finish in a process of
//!                                              several rows (no outcome; not in not_run)
//!       "coverage": { "rows_run", "interactions", "interactions_run",
//!                     "interactions_at_lambda", "unfinished", "complete" },  t-way
//!                                              interactions of the runs read; unfinished
//!                                              (only when some): executions that did not
//!                                              finish; complete: all at lambda and none
//!                                              unfinished
//!                                              rows counts the follow-up rows (`cargo heddle
//!                                              probe`), the last `followups` of them
//!       "interactions": [ { "levels": {parameter: label, …}, "runs", "passes", "failures" } ],
//!                                              every single level and every 2..t-way one
//!       "suspects": [ { "levels", "score", "reason", "always", "verdict", "explains",
//!                       "runs", "passes", "failures" } ],          best first; with focus
//!                                              sets, their interactions are suspects too
//!                                              verdict: always | flaky | some-rows
//!       "flaky": [ { "levels", "runs", "passes", "low", "high" } ],  95% Wilson interval;
//!                                              only interactions a row of which both
//!                                              passed and failed
//!       "failing_rows": [ { "row", "test", "levels", "runs", "failures", "message", "rerun" } ],
//!       "unfinished_rows": [ { "row", "test", "levels", "unfinished", "runs", "rerun" } ],
//!                                              rows with executions that did not finish in a
//!                                              process of several rows (not failures: one of
//!                                              the rows in flight likely ended the process);
//!                                              under nextest such an execution is a failure
//!       "advice": { "confidence", "detectable_rate", "runs_per_interaction", "rounds",
//!                   "flake_rate", "lambda_needed", "rows_needed", "rows_needed_at_least" },
//!                                              detectable_rate at runs_per_interaction
//!                                              (λ × rounds of --repeat, runs merged);
//!                                              rows_needed: at most (the design repeated)
//!       "focus": [ { "levels", "lambda", "rows", "runs", "passes", "failures" } ],
//!                                              only with focus sets: each focus interaction
//!                                              at its own strength; rows = design rows
//!                                              showing it (coverage gains "focus_interactions"
//!                                              and "focus_at_lambda", counted in "complete")
//!       "budget": { "rows", "of", "reach": [ { "strength", "interactions", "once", "lambda",
//!                                              "focus", "focus_lambda" } ] }
//!                                              only when a row budget left rows out: the run
//!                                              is then not complete; reach per strength 1..t,
//!                                              then per focus set ("focus": its parameters;
//!                                              "lambda" counts those in "focus_lambda" rows)
//!   } ] }
//! ```
//! `levels` objects list parameters in declaration order.

use serde::Serialize;
use serde::ser::SerializeMap;

use super::{Report, SuiteReport, described};

/// Version of the JSON report schema.
pub const REPORT_FORMAT: u32 = 2;

struct Levels<'a>(Vec<(&'a str, &'a str)>);

impl Serialize for Levels<'_> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

#[derive(Serialize)]
struct Doc<'a> {
    format: u32,
    runs: &'a [String],
    stores: usize,
    notes: &'a [String],
    suites: Vec<Suite<'a>>,
}

#[derive(Serialize)]
struct Suite<'a> {
    #[serde(rename = "crate")]
    krate: &'a str,
    target: &'a str,
    file: &'a str,
    function: &'a str,
    test: &'a str,
    fingerprint: &'a str,
    strength: u32,
    lambda: u32,
    seed: String,
    rows: usize,
    followups: u32,
    passed: usize,
    failed: usize,
    did_not_finish: usize,
    not_run: usize,
    executions: u64,
    coverage: Coverage,
    interactions: Vec<Interaction<'a>>,
    suspects: Vec<Suspect<'a>>,
    flaky: Vec<Flaky<'a>>,
    failing_rows: Vec<FailingRow<'a>>,
    unfinished_rows: Vec<UnfinishedRow<'a>>,
    advice: Advice,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    focus: Vec<FocusInteraction<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    budget: Option<Budget<'a>>,
}

#[derive(Serialize)]
struct FocusInteraction<'a> {
    levels: Levels<'a>,
    lambda: u32,
    rows: usize,
    runs: u64,
    passes: u64,
    failures: u64,
}

#[derive(Serialize)]
struct Budget<'a> {
    rows: usize,
    of: usize,
    reach: Vec<Reach<'a>>,
}

#[derive(Serialize)]
struct Reach<'a> {
    strength: usize,
    interactions: u64,
    once: u64,
    lambda: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    focus: Option<&'a [String]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    focus_lambda: Option<u32>,
}

#[derive(Serialize)]
struct Coverage {
    rows_run: usize,
    interactions: usize,
    interactions_run: usize,
    interactions_at_lambda: usize,
    #[serde(skip_serializing_if = "is_zero")]
    focus_interactions: usize,
    #[serde(skip_serializing_if = "is_zero")]
    focus_at_lambda: usize,
    #[serde(skip_serializing_if = "is_zero")]
    unfinished: usize,
    complete: bool,
}

fn is_zero(n: &usize) -> bool {
    *n == 0
}

#[derive(Serialize)]
struct Interaction<'a> {
    levels: Levels<'a>,
    runs: u64,
    passes: u64,
    failures: u64,
}

#[derive(Serialize)]
struct Suspect<'a> {
    levels: Levels<'a>,
    score: f64,
    reason: &'a str,
    always: bool,
    verdict: &'static str,
    explains: u64,
    runs: u64,
    passes: u64,
    failures: u64,
}

#[derive(Serialize)]
struct Flaky<'a> {
    levels: Levels<'a>,
    runs: u64,
    passes: u64,
    low: f64,
    high: f64,
}

#[derive(Serialize)]
struct FailingRow<'a> {
    row: usize,
    test: String,
    levels: Levels<'a>,
    runs: u64,
    failures: u64,
    message: Option<&'a str>,
    rerun: String,
}

#[derive(Serialize)]
struct UnfinishedRow<'a> {
    row: usize,
    test: String,
    levels: Levels<'a>,
    unfinished: usize,
    runs: u64,
    rerun: String,
}

#[derive(Serialize)]
struct Advice {
    confidence: f64,
    detectable_rate: f64,
    runs_per_interaction: u64,
    rounds: u64,
    flake_rate: Option<f64>,
    lambda_needed: Option<u32>,
    rows_needed: Option<u64>,
    rows_needed_at_least: Option<u64>,
}

/// A row's labels by parameter.
fn row_levels(spec: &heddle_test::record::SpecRecord, row: usize) -> Levels<'_> {
    Levels(
        spec.factors
            .iter()
            .map(|f| f.name.as_str())
            .zip(spec.row_labels(row).unwrap_or_default())
            .collect(),
    )
}

fn suite<'a>(s: &'a SuiteReport<'a>) -> Suite<'a> {
    let spec = s.spec;
    let entries = &s.tallies.entries;
    Suite {
        krate: &spec.krate,
        target: &spec.target,
        file: &spec.file,
        function: &spec.function,
        test: &spec.suite,
        fingerprint: &spec.fingerprint,
        strength: spec.strength,
        lambda: spec.lambda,
        seed: spec.seed.to_string(),
        rows: spec.rows.len(),
        followups: spec.followups,
        passed: s.passed,
        failed: s.failed,
        did_not_finish: s.did_not_finish,
        not_run: s.not_run,
        executions: s.tallies.total().runs,
        coverage: Coverage {
            rows_run: s.ran.rows_run,
            interactions: s.ran.interactions,
            interactions_run: s.ran.interactions_run,
            interactions_at_lambda: s.ran.interactions_at_lambda,
            focus_interactions: s.ran.focus_interactions,
            focus_at_lambda: s.ran.focus_at_lambda,
            unfinished: s.ran.unfinished,
            complete: s.ran.complete(),
        },
        focus: s
            .tallies
            .focus
            .iter()
            .map(|f| FocusInteraction {
                levels: Levels(described(spec, &f.tally.interaction)),
                lambda: f.lambda,
                rows: f.tally.rows.len(),
                runs: f.tally.count.runs,
                passes: f.tally.count.passes,
                failures: f.tally.count.failures,
            })
            .collect(),
        interactions: entries
            .iter()
            .map(|e| Interaction {
                levels: Levels(described(spec, &e.interaction)),
                runs: e.count.runs,
                passes: e.count.passes,
                failures: e.count.failures,
            })
            .collect(),
        suspects: s
            .analysis
            .suspects
            .iter()
            .map(|x| {
                let e = s.tallies.item(x.interaction);
                Suspect {
                    levels: Levels(described(spec, &e.interaction)),
                    score: x.score,
                    reason: &x.reason,
                    always: x.always,
                    verdict: x.verdict.key(),
                    explains: x.explains,
                    runs: e.count.runs,
                    passes: e.count.passes,
                    failures: e.count.failures,
                }
            })
            .collect(),
        flaky: s
            .analysis
            .flaky
            .iter()
            .map(|f| Flaky {
                levels: Levels(described(spec, &s.tallies.item(f.interaction).interaction)),
                runs: f.runs,
                passes: f.passes,
                low: f.low,
                high: f.high,
            })
            .collect(),
        unfinished_rows: s
            .rows
            .iter()
            .filter(|r| r.unfinished > 0)
            .map(|r| UnfinishedRow {
                row: r.row,
                test: spec.row_test_name(r.row).unwrap_or_default(),
                levels: row_levels(spec, r.row),
                unfinished: r.unfinished,
                runs: r.count.runs,
                rerun: s.rerun(r.row),
            })
            .collect(),
        failing_rows: s
            .rows
            .iter()
            .filter(|r| r.count.failures > 0)
            .map(|r| FailingRow {
                row: r.row,
                test: spec.row_test_name(r.row).unwrap_or_default(),
                levels: row_levels(spec, r.row),
                runs: r.count.runs,
                failures: r.count.failures,
                message: r.message.as_deref(),
                rerun: s.rerun(r.row),
            })
            .collect(),
        advice: Advice {
            confidence: s.advice.confidence,
            detectable_rate: s.advice.detectable,
            runs_per_interaction: s.advice.runs,
            rounds: s.advice.rounds,
            flake_rate: s.advice.flake.map(|f| f.0),
            lambda_needed: s.advice.flake.map(|f| f.1),
            rows_needed: s.advice.flake.map(|f| f.2.at_most),
            rows_needed_at_least: s.advice.flake.map(|f| f.2.at_least),
        },
        budget: s.budget.as_ref().map(|b| Budget {
            rows: b.rows,
            of: b.of,
            reach: b
                .reach
                .iter()
                .map(|r| Reach {
                    strength: r.strength,
                    interactions: r.interactions,
                    once: r.once,
                    lambda: r.lambda,
                    focus: r.focus.and_then(|i| b.focus.get(i)).map(Vec::as_slice),
                    focus_lambda: r.focus.map(|_| r.index),
                })
                .collect(),
        }),
    }
}

/// Renders the report as pretty JSON.
pub fn render(report: &Report<'_>) -> String {
    let doc = Doc {
        format: REPORT_FORMAT,
        runs: &report.runs,
        stores: report.stores,
        notes: &report.notes,
        suites: report.suites.iter().map(suite).collect(),
    };
    let mut s = serde_json::to_string_pretty(&doc).unwrap_or_default();
    s.push('\n');
    s
}
