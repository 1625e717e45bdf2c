//! The record format: what a test process writes to the store and what the report reads.
//!
//! This crate owns the format (the reading side, `heddle-store`, parses lines through
//! [`Line::parse`] and never on its own). A store file holds JSON lines of three kinds,
//! each line one object whose first two fields are the format version `v` and the `kind`:
//!
//! - `"kind":"spec"`: the spec of one annotated function (factors, labels, strength,
//!   index, seed, excludes, rows and their test names, fingerprint), written once per
//!   process per function, before that function's first start line, so the report needs
//!   nothing but the store;
//! - `"kind":"start"`: a row began to run ([`StartRecord`]), written before its body
//!   runs; the row's own fields, without an outcome;
//! - `"kind":"row"`: the outcome of one row run, written when it finished.
//!
//! A start line and the row line of the same row (crate, target, test, fingerprint, row)
//! in the same file pair up, as one process wrote both. A start with no row line after
//! it is an execution that did not finish: the process crashed, aborted, ran out of
//! memory or was killed (a timeout) while the row ran, or it is still running. What
//! that means is the reader's to decide (`heddle_store`): under nextest (one test per
//! process, the start carries `attempt`) the row is the certain culprit; with several
//! rows in one process it is not.
//!
//! ```text
//! {"v":3,"kind":"spec","run":"r1","crate":"demo","target":"codec","selector":"--test codec","file":"tests/codec.rs","function":"roundtrip","module":"codec::roundtrip","suite":"roundtrip","factors":[{"name":"batch","labels":["1","8"]},{"name":"checksum","labels":["true","false"]}],"strength":2,"lambda":1,"seed":"11","excludes":["0=1&1=1"],"rows":[[0,0],[0,1],[1,0]],"row_names":["row_00","row_01","row_02"],"fingerprint":"f00d","pinned":false,"should_panic":false,"time":"2025-01-02T03:04:05.000006Z"}
//! {"v":3,"kind":"start","run":"r1","crate":"demo","target":"codec","test":"roundtrip::row_02","fingerprint":"f00d","row":2,"labels":["8","true"],"time":"2025-01-02T03:04:05.000040Z"}
//! {"v":3,"kind":"row","run":"r1","crate":"demo","target":"codec","test":"roundtrip::row_02","fingerprint":"f00d","row":2,"labels":["8","true"],"outcome":"failed","message":"assertion failed: ok","duration_ns":41250,"time":"2025-01-02T03:04:05.000042Z"}
//! ```
//!
//! - Excludes are formulas over level indices in the engine's formula syntax
//!   (`heddle_generator::Expr::parse_formula`), so a reader rebuilds the engine's spec
//!   without a Rust parser.
//! - The seed is a decimal string: JSON readers that hold numbers as doubles would
//!   corrupt seeds above 2^53.
//! - Row test names are the expansion's: `suite::row_names[i]` is row i's libtest name
//!   ([`test_path`]), and [`rerun_command`] is the one command form that reruns it.
//!
//! A reader of version [`FORMAT_VERSION`] ignores fields it does not know, so adding an
//! optional field does not bump the version; renaming, removing or changing the meaning
//! of a field does. Lines of another version are recognised ([`LineError::OtherVersion`])
//! so a report can say that old records were skipped instead of calling them corrupt.
//! History: version 1 held excludes as Rust source text and the seed as a number, and
//! left row names to be recomputed. Version 2 gained the optional `focus` field (focus
//! sets as factor indices, strength and λ: `"focus":[{"factors":[0,2,3],"strength":3,
//! "lambda":1}]`), absent when there are none, so earlier version 2 lines read unchanged;
//! row lines later gained the optional `build` (which build of the test executable ran
//! the row, [`RowRecord::build`]), absent in earlier lines, which read as one build.
//! Version 3 added the start line (`"kind":"start"`), so that a row whose process
//! crashed, aborted or was killed leaves a trace. A new kind of line is not an optional
//! field: a version 2 reader classifies lines by kind and calls one of an unknown kind
//! corrupt, so a version 2 report of a version 3 store would say the store is damaged
//! (one "corrupt" line per row) and still show a crashed row as not run. Under the new
//! version it says instead that the lines are of a newer format and to report with the
//! heddle that wrote them. Nothing else changed: a version 2 line means the same in
//! version 3, so this build reads both ([`OLDEST_READ_VERSION`]); a version 2 file has
//! no start lines, and none of its rows reads as unfinished.
//!
//! Modules: [`layout`] (where the store lives, file and run id names); `line` (a line's
//! text both ways, and the cheap classification large stores are read with); `names`
//! (test names and rerun commands).

mod line;
mod names;

pub mod layout;

pub use line::{Line, LineError, LineKind, spec_identity};
pub use names::{RerunForm, rerun_command, rerun_command_as, test_path};

use serde::{Deserialize, Serialize};

/// Version of the line format written by this crate.
pub const FORMAT_VERSION: u32 = 3;

/// The oldest version this crate reads: version 2 lines are version 3 lines of the two
/// kinds that version had (see the history above).
pub const OLDEST_READ_VERSION: u32 = 2;

/// How one row run ended, as libtest judged it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Outcome {
    /// The body returned normally (or `Ok`).
    Passed,
    /// The body panicked or returned `Err`, or a `#[should_panic]` row did not panic.
    Failed,
    /// The body panicked as the function's `#[should_panic]` expects (a panic without
    /// its `expected = "…"` text is [`Outcome::Failed`]). Counted as a pass, as libtest
    /// counts it.
    PanickedExpected,
}

impl Outcome {
    /// Whether libtest counts the row as passing.
    pub fn is_pass(self) -> bool {
        !matches!(self, Outcome::Failed)
    }

    /// The name used in the JSON lines.
    pub fn as_str(self) -> &'static str {
        match self {
            Outcome::Passed => "passed",
            Outcome::Failed => "failed",
            Outcome::PanickedExpected => "panicked-expected",
        }
    }
}

/// One parameter of an annotated function with the labels of its levels.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct FactorSpec {
    /// Parameter name.
    pub name: String,
    /// Level labels (the level expressions' source text), in level order.
    pub labels: Vec<String>,
}

/// A focus set: factors covered at a higher strength than the spec's (variable strength).
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct FocusSpec {
    /// Factor indices, in the order the attribute names them.
    pub factors: Vec<u32>,
    /// Strength over these factors.
    pub strength: u32,
    /// Index over these factors.
    pub lambda: u32,
}

/// The spec of one annotated function as a test process saw it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct SpecRecord {
    /// Run id of the process that wrote the line.
    pub run: String,
    /// Package name (`CARGO_PKG_NAME`).
    #[serde(rename = "crate")]
    pub krate: String,
    /// Name of the crate root the rows were compiled into (first segment of the module
    /// path): the library, or the integration-test, bin, example or bench target.
    pub target: String,
    /// The cargo selector of that target (`--test codec`, `--lib`), as the expansion
    /// derived it from the file; empty when the layout does not tell.
    pub selector: String,
    /// Test file relative to the package root, `/`-separated.
    pub file: String,
    /// Name of the annotated function.
    pub function: String,
    /// Full module path of the generated rows module (`codec::roundtrip`).
    pub module: String,
    /// Path of the rows module as libtest names tests (`roundtrip`): a row's test name is
    /// `{suite}::row_NN`.
    pub suite: String,
    /// Parameters in declaration order.
    pub factors: Vec<FactorSpec>,
    /// Strength t.
    pub strength: u32,
    /// Index λ.
    pub lambda: u32,
    /// Seed the rows were generated with (a decimal string in the line).
    #[serde(with = "seed_text")]
    pub seed: u64,
    /// Every exclude as a formula over level indices (the engine's formula syntax).
    pub excludes: Vec<String>,
    /// Level index of every factor, per row.
    pub rows: Vec<Vec<u8>>,
    /// Each row's test function name, as the expansion named it (`row_03`).
    pub row_names: Vec<String>,
    /// Spec fingerprint, as the pins file stores it.
    pub fingerprint: String,
    /// Whether the rows came from the pins file.
    pub pinned: bool,
    /// Whether the function carries `#[should_panic]`.
    pub should_panic: bool,
    /// How many rows the row budget let run (the first ones); absent when every row
    /// runs. The rows past it were compiled as ignored: a run of this spec is never
    /// complete.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub budget: Option<u32>,
    /// How many of the last rows are follow-up rows (proposed by `cargo heddle probe` to
    /// tell suspects apart), not the design's; absent when none.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub followups: u32,
    /// Focus sets, covered at their own strength and index; absent when none (and in
    /// lines written before they existed, which read as none).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub focus: Vec<FocusSpec>,
    /// When the line was written (UTC, RFC 3339).
    pub time: String,
}

fn is_zero(n: &u32) -> bool {
    *n == 0
}

/// The outcome of one row run.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RowRecord {
    /// Run id (see the [crate docs](crate#environment) for how it is chosen).
    pub run: String,
    /// Package name.
    #[serde(rename = "crate")]
    pub krate: String,
    /// Crate root the row was compiled into (see [`SpecRecord::target`]).
    pub target: String,
    /// The row's libtest name, `{suite}::row_NN`.
    pub test: String,
    /// Fingerprint of the spec the row belongs to.
    pub fingerprint: String,
    /// Row index into [`SpecRecord::rows`].
    pub row: u32,
    /// The row's level labels, one per factor in order.
    pub labels: Vec<String>,
    /// How the run ended.
    pub outcome: Outcome,
    /// Panic message or the `Err` value's `Debug` text; absent when the row passed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub message: Option<String>,
    /// Wall time of the body in nanoseconds.
    pub duration_ns: u64,
    /// When the row finished (UTC, RFC 3339).
    pub time: String,
    /// nextest's attempt number of this execution (`NEXTEST_ATTEMPT`: 1 for the first
    /// try, 2 for the first retry under `--retries`); absent outside nextest. A row that
    /// failed and then passed on a retry is flaky evidence for that row.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub attempt: Option<u32>,
    /// Which build of the test executable ran it (its size and modification time, as
    /// the runtime names them); absent when unknown, and in lines written before the
    /// field existed. Two executions of a row agree on it when they ran the same
    /// compiled code: a row that failed in one build and passed in a later one was
    /// changed, not flaky, and readers let the later build's outcome stand.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub build: Option<String>,
}

/// A row began to run: written before the body runs, so an execution whose process
/// ended before the row finished is still seen (a start with no row line after it in
/// the same file). Its fields mean what [`RowRecord`]'s of the same names mean.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct StartRecord {
    /// Run id.
    pub run: String,
    /// Package name.
    #[serde(rename = "crate")]
    pub krate: String,
    /// Crate root the row was compiled into.
    pub target: String,
    /// The row's libtest name, `{suite}::row_NN`.
    pub test: String,
    /// Fingerprint of the spec the row belongs to.
    pub fingerprint: String,
    /// Row index into [`SpecRecord::rows`].
    pub row: u32,
    /// The row's level labels, one per factor in order.
    pub labels: Vec<String>,
    /// When the row started (UTC, RFC 3339).
    pub time: String,
    /// nextest's attempt number; present only under nextest, which runs one test per
    /// process: a start with it and no finish is certainly the row that ended its
    /// process.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub attempt: Option<u32>,
    /// Which build of the test executable ran it (see [`RowRecord::build`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub build: Option<String>,
}

impl StartRecord {
    /// The row line of this execution, once it ended this way (the time stays the
    /// start's; the writer stamps the finish).
    pub fn finished(&self, outcome: Outcome, message: Option<String>, duration_ns: u64) -> RowRecord {
        RowRecord {
            run: self.run.clone(),
            krate: self.krate.clone(),
            target: self.target.clone(),
            test: self.test.clone(),
            fingerprint: self.fingerprint.clone(),
            row: self.row,
            labels: self.labels.clone(),
            outcome,
            message,
            duration_ns,
            time: self.time.clone(),
            attempt: self.attempt,
            build: self.build.clone(),
        }
    }

    /// Whether `row` is the row line of this start (the same row of the same spec; the
    /// caller keeps both to one file, so one process).
    pub fn pairs_with(&self, row: &RowRecord) -> bool {
        self.execution() == row.execution()
    }

    /// What a start shares with the row line that finishes it ([`ExecutionKey`]).
    pub fn execution(&self) -> ExecutionKey<'_> {
        (self.row, &self.test, &self.fingerprint, &self.target, &self.krate)
    }
}

/// The fields a start line and the row line of the same execution share: the row, its
/// test name, the spec's fingerprint, the crate target and the crate. Within one file
/// (one process) a start pairs with a row line of the same key.
pub type ExecutionKey<'a> = (u32, &'a str, &'a str, &'a str, &'a str);

/// Identity of one annotated function's spec across processes, runs and shards.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct SuiteKey {
    /// Package name.
    pub krate: String,
    /// Crate root (library or test target).
    pub target: String,
    /// Rows module path as libtest names it.
    pub suite: String,
    /// Spec fingerprint: a changed spec is another suite.
    pub fingerprint: String,
}

impl SpecRecord {
    /// The key row records of this spec carry.
    pub fn key(&self) -> SuiteKey {
        SuiteKey {
            krate: self.krate.clone(),
            target: self.target.clone(),
            suite: self.suite.clone(),
            fingerprint: self.fingerprint.clone(),
        }
    }

    /// Orders this spec's key against a key without building its own.
    pub fn key_cmp(&self, key: &SuiteKey) -> std::cmp::Ordering {
        (
            self.krate.as_str(),
            self.target.as_str(),
            self.suite.as_str(),
            self.fingerprint.as_str(),
        )
            .cmp(&(
                key.krate.as_str(),
                key.target.as_str(),
                key.suite.as_str(),
                key.fingerprint.as_str(),
            ))
    }

    /// The labels of one row, or `None` when the index is out of range.
    pub fn row_labels(&self, row: usize) -> Option<Vec<&str>> {
        let levels = self.rows.get(row)?;
        levels
            .iter()
            .zip(&self.factors)
            .map(|(&lv, f)| f.labels.get(lv as usize).map(String::as_str))
            .collect()
    }

    /// The libtest name of a row (`roundtrip::row_03`), `None` when the index is out of
    /// range.
    pub fn row_test_name(&self, row: usize) -> Option<String> {
        let name = self.row_names.get(row)?;
        Some(test_path(&self.suite, name))
    }

    /// The command that reruns just this row with `cargo test`.
    pub fn rerun_command(&self, row: usize) -> Option<String> {
        self.rerun_command_as(row, &RerunForm::default())
    }

    /// The command that reruns just this row, in a given form (nextest, manifest path).
    pub fn rerun_command_as(&self, row: usize, form: &RerunForm) -> Option<String> {
        Some(rerun_command_as(
            &self.krate,
            &self.selector,
            &self.row_test_name(row)?,
            form,
        ))
    }

    /// How many rows the design has (the rows before the follow-up rows).
    pub fn design_rows(&self) -> usize {
        self.rows.len().saturating_sub(self.followups as usize)
    }

    /// Whether two spec lines describe the same spec and design: they differ only in
    /// run, time, the row budget (how much of the design a run was allowed) and the
    /// follow-up rows after the design (see [`SpecRecord::extends`]).
    pub fn same_spec(&self, other: &SpecRecord) -> bool {
        let design = |s: &SpecRecord| {
            let n = s.design_rows();
            SpecRecord {
                run: String::new(),
                time: String::new(),
                // the same rows from the pins file after `cargo heddle pin` are the
                // same design (a pin with other rows differs in `rows`)
                pinned: false,
                budget: None,
                followups: 0,
                focus: Vec::new(),
                rows: s.rows[..n].to_vec(),
                row_names: s.row_names.iter().take(n).cloned().collect(),
                ..s.clone()
            }
        };
        design(self) == design(other)
    }

    /// Whether this spec line's rows continue `other`'s: the same rows and names, then
    /// more follow-up rows (a later round of `cargo heddle probe`).
    pub fn extends(&self, other: &SpecRecord) -> bool {
        self.rows.starts_with(&other.rows) && self.row_names.starts_with(&other.row_names)
    }

    /// The larger of two budgets of one spec, `None` (every row) the largest: what runs
    /// merged from both were allowed.
    pub fn wider_budget(a: Option<u32>, b: Option<u32>) -> Option<u32> {
        a.zip(b).map(|(a, b)| a.max(b))
    }
}

impl RowRecord {
    /// The key of the spec this row belongs to: its suite is the test name without the
    /// final `::row_NN` segment.
    pub fn key(&self) -> SuiteKey {
        SuiteKey::of_row(&self.krate, &self.target, &self.test, &self.fingerprint)
    }

    /// What this row line shares with the start it finishes ([`ExecutionKey`]).
    pub fn execution(&self) -> ExecutionKey<'_> {
        (self.row, &self.test, &self.fingerprint, &self.target, &self.krate)
    }
}

impl StartRecord {
    /// The key of the spec this row belongs to (as [`RowRecord::key`]).
    pub fn key(&self) -> SuiteKey {
        SuiteKey::of_row(&self.krate, &self.target, &self.test, &self.fingerprint)
    }
}

impl SuiteKey {
    /// The key a row's line carries: its suite is the test name without the final
    /// `::row_NN` segment.
    fn of_row(krate: &str, target: &str, test: &str, fingerprint: &str) -> SuiteKey {
        let suite = match test.rfind("::") {
            Some(i) => &test[..i],
            None => "",
        };
        SuiteKey {
            krate: krate.to_string(),
            target: target.to_string(),
            suite: suite.to_string(),
            fingerprint: fingerprint.to_string(),
        }
    }
}

/// The seed as a decimal string, both ways.
mod seed_text {
    use serde::{Deserialize, Deserializer, Serializer};

    pub(super) fn serialize<S: Serializer>(seed: &u64, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(seed)
    }

    pub(super) fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<u64, D::Error> {
        let text = <std::borrow::Cow<'de, str>>::deserialize(d)?;
        text.parse()
            .map_err(|_| serde::de::Error::custom(format!("seed `{text}` is not a decimal u64")))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::line::{ROW_PREFIX, SPEC_PREFIX, START_PREFIX};

    fn spec() -> SpecRecord {
        SpecRecord {
            run: "r1".into(),
            krate: "demo".into(),
            target: "codec".into(),
            selector: "--test codec".into(),
            file: "tests/codec.rs".into(),
            function: "roundtrip".into(),
            module: "codec::roundtrip".into(),
            suite: "roundtrip".into(),
            factors: vec![
                FactorSpec {
                    name: "batch".into(),
                    labels: vec!["1".into(), "8".into()],
                },
                FactorSpec {
                    name: "checksum".into(),
                    labels: vec!["true".into(), "false".into()],
                },
            ],
            strength: 2,
            lambda: 1,
            seed: 11,
            excludes: vec!["0=1&1=1".into()],
            rows: vec![vec![0, 0], vec![0, 1], vec![1, 0]],
            row_names: vec!["row_00".into(), "row_01".into(), "row_02".into()],
            fingerprint: "f00d".into(),
            pinned: false,
            should_panic: false,
            budget: None,
            followups: 0,
            focus: Vec::new(),
            time: "2025-01-02T03:04:05.000006Z".into(),
        }
    }

    fn row() -> RowRecord {
        RowRecord {
            run: "r1".into(),
            krate: "demo".into(),
            target: "codec".into(),
            test: "roundtrip::row_02".into(),
            fingerprint: "f00d".into(),
            row: 2,
            labels: vec!["8".into(), "true".into()],
            outcome: Outcome::Failed,
            message: Some("assertion failed: ok".into()),
            duration_ns: 41250,
            time: "2025-01-02T03:04:05.000042Z".into(),
            attempt: None,
            build: None,
        }
    }

    fn start() -> StartRecord {
        StartRecord {
            run: "r1".into(),
            krate: "demo".into(),
            target: "codec".into(),
            test: "roundtrip::row_02".into(),
            fingerprint: "f00d".into(),
            row: 2,
            labels: vec!["8".into(), "true".into()],
            time: "2025-01-02T03:04:05.000040Z".into(),
            attempt: None,
            build: None,
        }
    }

    #[test]
    fn lines_round_trip_and_start_with_version_and_kind() {
        for line in [Line::Spec(spec()), Line::Start(start()), Line::Row(row())] {
            let text = line.to_json_line();
            assert!(text.ends_with('\n') && !text[..text.len() - 1].contains('\n'));
            assert!(
                text.starts_with(&format!("{{\"v\":{FORMAT_VERSION},\"kind\":\"")),
                "{text}"
            );
            assert_eq!(Line::parse(text.trim_end()).unwrap(), line);
        }
    }

    #[test]
    fn a_start_pairs_with_its_own_row_line_and_becomes_one() {
        let s = start();
        assert!(s.pairs_with(&row()));
        assert_eq!(s.key(), row().key());
        let mut other = row();
        other.row = 1;
        assert!(!s.pairs_with(&other));
        let mut other = row();
        other.fingerprint = "beef".into();
        assert!(!s.pairs_with(&other));
        let finished = s.finished(Outcome::Failed, Some("assertion failed: ok".into()), 41250);
        assert_eq!(
            finished,
            RowRecord {
                time: s.time.clone(),
                ..row()
            }
        );
    }

    #[test]
    fn version_2_lines_still_read() {
        // the lines version 2 wrote (before start lines) mean the same in version 3
        for line in [Line::Spec(spec()), Line::Row(row())] {
            let text = line.to_json_line().replacen(
                &format!("{{\"v\":{FORMAT_VERSION},"),
                &format!("{{\"v\":{OLDEST_READ_VERSION},"),
                1,
            );
            assert!(text.starts_with("{\"v\":2,"), "{text}");
            assert_eq!(Line::parse(text.trim_end()).unwrap(), line);
        }
        assert_eq!(
            Line::parse(r#"{"v":4,"kind":"start"}"#),
            Err(LineError::OtherVersion(4))
        );
    }

    #[test]
    fn module_docs_show_the_lines_this_crate_writes() {
        // the example lines in the module documentation are the serialisation of these
        // two records; a format change must update the documentation too
        let doc = include_str!("mod.rs");
        assert!(doc.contains(&format!("//! {}", Line::Spec(spec()).to_json_line().trim_end())));
        assert!(doc.contains(&format!("//! {}", Line::Row(row()).to_json_line().trim_end())));
        assert!(doc.contains(&format!("//! {}", Line::Start(start()).to_json_line().trim_end())));
    }

    #[test]
    fn written_lines_take_the_fast_path() {
        assert!(Line::Row(row()).to_json_line().starts_with(ROW_PREFIX));
        assert!(Line::Spec(spec()).to_json_line().starts_with(SPEC_PREFIX));
        assert!(Line::Start(start()).to_json_line().starts_with(START_PREFIX));
        assert!(ROW_PREFIX.starts_with(&format!("{{\"v\":{FORMAT_VERSION},")));
        // the same line with its fields reordered is still read (slow path)
        let reordered = r#"{"kind":"row","v":3,"run":"r1","crate":"demo","target":"codec","test":"roundtrip::row_02","fingerprint":"f00d","row":2,"labels":["8","true"],"outcome":"failed","message":"assertion failed: ok","duration_ns":41250,"time":"2025-01-02T03:04:05.000042Z"}"#;
        assert_eq!(Line::parse(reordered).unwrap(), Line::Row(row()));
        let text = Line::Spec(spec()).to_json_line();
        let mut other = spec();
        other.run = "r2-longer".into();
        other.time = "later".into();
        let other_text = Line::Spec(other.clone()).to_json_line();
        let id = spec_identity(text.trim_end()).unwrap();
        assert_eq!(spec_identity(other_text.trim_end()), Some(id));
        assert!(
            id.starts_with("\",\"crate\":\"demo\"") && id.ends_with("\"should_panic\":false"),
            "{id}"
        );
        other.seed = 12;
        assert_ne!(
            spec_identity(Line::Spec(other).to_json_line().trim_end()),
            Some(id)
        );
        let escaped = text.replacen("\"run\":\"r1\"", "\"run\":\"r\\\"1\"", 1);
        assert_eq!(spec_identity(escaped.trim_end()), None);
        assert_eq!(spec_identity(&text[..text.len() - 3]), None);
        // a damaged line with the right prefix is still corrupt
        assert!(matches!(Line::parse(&text[..40]), Err(LineError::Corrupt(_))));
    }

    #[test]
    fn passing_rows_omit_the_message() {
        let mut r = row();
        r.outcome = Outcome::Passed;
        r.message = None;
        let text = Line::Row(r.clone()).to_json_line();
        assert!(!text.contains("message"));
        assert_eq!(Line::parse(text.trim_end()).unwrap(), Line::Row(r));
    }

    #[test]
    fn outcome_names_match_the_issue() {
        for (o, name) in [
            (Outcome::Passed, "passed"),
            (Outcome::Failed, "failed"),
            (Outcome::PanickedExpected, "panicked-expected"),
        ] {
            assert_eq!(serde_json::to_string(&o).unwrap(), format!("\"{name}\""));
            assert_eq!(o.as_str(), name);
        }
        assert!(Outcome::PanickedExpected.is_pass() && !Outcome::Failed.is_pass());
    }

    #[test]
    fn other_versions_and_damage_are_told_apart() {
        assert_eq!(
            Line::parse(r#"{"v":4,"kind":"row","whatever":true}"#),
            Err(LineError::OtherVersion(4))
        );
        assert_eq!(
            Line::parse(r#"{"v":1,"kind":"spec","seed":11}"#),
            Err(LineError::OtherVersion(1))
        );
        assert_eq!(Line::parse(r#"{"v":0}"#), Err(LineError::OtherVersion(0)));
        let full = Line::Row(row()).to_json_line();
        for bad in [
            &full[..full.len() / 2],
            "",
            "not json",
            r#"{"kind":"row"}"#,
            r#"{"v":2,"kind":"nope"}"#,
            r#"{"v":2,"kind":"row","run":"x"}"#,
            r#"{"v":2}"#,
        ] {
            assert!(matches!(Line::parse(bad), Err(LineError::Corrupt(_))), "{bad:?}");
        }
    }

    #[test]
    fn the_attempt_is_written_only_under_nextest() {
        let mut r = row();
        assert!(!Line::Row(r.clone()).to_json_line().contains("attempt"));
        r.attempt = Some(2);
        let text = Line::Row(r.clone()).to_json_line();
        assert!(text.contains(",\"attempt\":2}"), "{text}");
        assert_eq!(Line::parse(text.trim_end()).unwrap(), Line::Row(r));
    }

    #[test]
    fn the_build_is_written_when_known_and_read_back() {
        let mut r = row();
        // a line without `build` (as written before the field existed) reads as unknown
        let plain = Line::Row(r.clone()).to_json_line();
        assert!(!plain.contains("build"), "{plain}");
        r.build = Some("a7-1f".into());
        let text = Line::Row(r.clone()).to_json_line();
        assert!(text.contains(",\"build\":\"a7-1f\"}"), "{text}");
        assert_eq!(Line::parse(text.trim_end()).unwrap(), Line::Row(r));
    }

    #[test]
    fn focus_sets_are_written_only_when_present_and_read_back() {
        // a line without `focus` (as written before focus sets existed) reads as none
        let plain = Line::Spec(spec()).to_json_line();
        assert!(!plain.contains("focus"), "{plain}");
        let Line::Spec(read) = Line::parse(plain.trim_end()).unwrap() else {
            panic!("a spec line")
        };
        assert!(read.focus.is_empty());
        let mut s = spec();
        s.focus = vec![FocusSpec {
            factors: vec![1, 0],
            strength: 2,
            lambda: 3,
        }];
        let text = Line::Spec(s.clone()).to_json_line();
        assert!(
            text.contains(r#","focus":[{"factors":[1,0],"strength":2,"lambda":3}],"#),
            "{text}"
        );
        assert_eq!(Line::parse(text.trim_end()).unwrap(), Line::Spec(s));
    }

    #[test]
    fn unknown_fields_are_ignored() {
        let text = Line::Row(row()).to_json_line();
        let extended = text
            .trim_end()
            .replacen("\"row\":2", "\"row\":2,\"future\":[1,2]", 1);
        assert_eq!(Line::parse(&extended).unwrap(), Line::Row(row()));
    }

    #[test]
    fn row_keys_match_their_spec() {
        assert_eq!(row().key(), spec().key());
        assert_eq!(spec().row_labels(2), Some(vec!["8", "true"]));
        assert_eq!(spec().row_labels(4), None);
        assert_eq!(spec().row_test_name(2).as_deref(), Some("roundtrip::row_02"));
        assert_eq!(
            spec().rerun_command(2).as_deref(),
            Some("cargo test -p demo --test codec roundtrip::row_02 -- --exact")
        );
        assert_eq!(spec().row_test_name(3), None);
    }

    #[test]
    fn the_budget_is_optional_and_read_back() {
        let mut s = spec();
        s.budget = Some(2);
        let text = Line::Spec(s.clone()).to_json_line();
        assert!(
            text.contains(",\"should_panic\":false,\"budget\":2,\"time\":"),
            "{text}"
        );
        assert_eq!(Line::parse(text.trim_end()).unwrap(), Line::Spec(s.clone()));
        // the line differs, the spec does not: runs with other budgets merge
        let plain = Line::Spec(spec()).to_json_line();
        assert_ne!(spec_identity(text.trim_end()), spec_identity(plain.trim_end()));
        assert!(spec().same_spec(&s));
        assert_eq!(SpecRecord::wider_budget(Some(2), Some(3)), Some(3));
        assert_eq!(SpecRecord::wider_budget(Some(2), None), None);
    }

    #[test]
    fn followup_rows_extend_a_design() {
        let mut more = spec();
        more.rows.push(vec![1, 1]);
        more.row_names.push("row_followup_00".into());
        more.followups = 1;
        assert_eq!((more.design_rows(), spec().design_rows()), (3, 3));
        let text = Line::Spec(more.clone()).to_json_line();
        assert!(text.contains(",\"followups\":1,\"time\":"), "{text}");
        assert_eq!(Line::parse(text.trim_end()).unwrap(), Line::Spec(more.clone()));
        assert!(more.same_spec(&spec()) && more.extends(&spec()) && !spec().extends(&more));
        // another design is another spec, follow-up rows or not
        let mut other = more.clone();
        other.rows[0] = vec![1, 0];
        assert!(!other.same_spec(&spec()));
    }

    #[test]
    fn same_spec_ignores_run_and_time() {
        let mut other = spec();
        other.run = "r2".into();
        other.time = "x".into();
        assert!(spec().same_spec(&other));
        other.seed = 12;
        assert!(!spec().same_spec(&other));
    }

    #[test]
    fn seeds_are_written_as_decimal_strings_and_survive_above_2_pow_53() {
        let mut s = spec();
        s.seed = u64::MAX;
        let text = Line::Spec(s.clone()).to_json_line();
        assert!(text.contains("\"seed\":\"18446744073709551615\""), "{text}");
        assert_eq!(Line::parse(text.trim_end()).unwrap(), Line::Spec(s));
        // a number where the string belongs is damage, not a seed
        let numeric = text.replace("\"seed\":\"18446744073709551615\"", "\"seed\":11");
        assert!(matches!(
            Line::parse(numeric.trim_end()),
            Err(LineError::Corrupt(_))
        ));
        let bad = text.replace("\"seed\":\"18446744073709551615\"", "\"seed\":\"0x11\"");
        assert!(matches!(Line::parse(bad.trim_end()), Err(LineError::Corrupt(_))));
    }
}
