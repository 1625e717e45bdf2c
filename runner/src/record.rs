//! The record format: what a test process writes to the store and what the report reads.
//!
//! This crate owns the format; the plugin reads it through these types and never parses
//! the lines itself. A store file holds JSON lines of two kinds, each line one object
//! whose first two fields are the format version `v` and the `kind`:
//!
//! - `"kind":"spec"`: the spec of one annotated function (factors, labels, strength,
//!   index, seed, excludes, rows, fingerprint), written once per process per function,
//!   before that function's first row line, so the report needs nothing but the store;
//! - `"kind":"row"`: the outcome of one row run.
//!
//! ```text
//! {"v":1,"kind":"spec","run":"r1","crate":"demo","target":"codec","file":"tests/codec.rs","function":"roundtrip","module":"codec::roundtrip","suite":"roundtrip","factors":[{"name":"batch","labels":["1","8"]},{"name":"checksum","labels":["true","false"]}],"strength":2,"lambda":1,"seed":11,"excludes":[],"rows":[[0,0],[0,1],[1,0],[1,1]],"fingerprint":"f00d","pinned":false,"should_panic":false,"time":"2025-01-02T03:04:05.000006Z"}
//! {"v":1,"kind":"row","run":"r1","crate":"demo","target":"codec","test":"roundtrip::row_02","fingerprint":"f00d","row":2,"labels":["8","true"],"outcome":"failed","message":"assertion failed: ok","duration_ns":41250,"time":"2025-01-02T03:04:05.000042Z"}
//! ```
//!
//! A reader of version [`FORMAT_VERSION`] ignores fields it does not know, so adding an
//! optional field does not bump the version; renaming, removing or changing the meaning
//! of a field does. Lines of another version are recognised ([`LineError::OtherVersion`])
//! so a report can say that old records were skipped instead of calling them corrupt.

use serde::{Deserialize, Serialize};

/// Version of the line format written by this crate.
pub const FORMAT_VERSION: u32 = 1;

/// How one row run ended, as libtest judged it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Outcome {
    /// The body returned normally (or `Ok`).
    Passed,
    /// The body panicked or returned `Err`, or a `#[should_panic]` row did not panic.
    Failed,
    /// The body panicked and the function carries `#[should_panic]`. Counted as a pass:
    /// libtest passes it (unless the panic message misses an `expected = "…"` string,
    /// which the runtime cannot see).
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
    /// Seed the rows were generated with.
    pub seed: u64,
    /// Source text of every exclude, normalised.
    pub excludes: Vec<String>,
    /// Level index of every factor, per row.
    pub rows: Vec<Vec<u8>>,
    /// Spec fingerprint, as the pins file stores it.
    pub fingerprint: String,
    /// Whether the rows came from the pins file.
    pub pinned: bool,
    /// Whether the function carries `#[should_panic]`.
    pub should_panic: bool,
    /// When the line was written (UTC, RFC 3339).
    pub time: String,
}

/// The outcome of one row run.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RowRecord {
    /// Run id (see [`crate::store`] for how it is chosen).
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
}

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

    /// Checks the spec is self-consistent, so tallies can index it without bounds checks
    /// failing: a spec line from a buggy or foreign writer is refused instead.
    pub fn validate(&self) -> Result<(), SpecError> {
        if self.factors.is_empty() {
            return Err(SpecError::NoFactors);
        }
        for (i, f) in self.factors.iter().enumerate() {
            if f.labels.is_empty() || f.labels.len() > 255 {
                return Err(SpecError::LevelCount {
                    factor: i,
                    count: f.labels.len(),
                });
            }
        }
        let t = self.strength as usize;
        if t == 0 || t > self.factors.len() || t > MAX_TALLY_STRENGTH {
            return Err(SpecError::Strength {
                strength: self.strength,
                factors: self.factors.len(),
            });
        }
        for (r, row) in self.rows.iter().enumerate() {
            if row.len() != self.factors.len() {
                return Err(SpecError::RowWidth {
                    row: r,
                    width: row.len(),
                });
            }
            for (c, &lv) in row.iter().enumerate() {
                if lv as usize >= self.factors[c].labels.len() {
                    return Err(SpecError::LevelOutOfRange { row: r, factor: c });
                }
            }
        }
        Ok(())
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

    /// The libtest name of a row (`roundtrip::row_03`).
    pub fn row_test_name(&self, row: usize) -> String {
        crate::message::test_name_in(&self.module, self.rows.len(), row)
    }

    /// The command that reruns just this row, as the failing row printed it.
    pub fn rerun_command(&self, row: usize) -> String {
        crate::message::rerun_command_in(&self.krate, &self.file, &self.module, self.rows.len(), row)
    }

    /// Whether two spec lines describe the same spec (they differ only in run and time).
    pub fn same_spec(&self, other: &SpecRecord) -> bool {
        SpecRecord {
            run: String::new(),
            time: String::new(),
            ..self.clone()
        } == SpecRecord {
            run: String::new(),
            time: String::new(),
            ..other.clone()
        }
    }
}

impl RowRecord {
    /// The key of the spec this row belongs to: its suite is the test name without the
    /// final `::row_NN` segment.
    pub fn key(&self) -> SuiteKey {
        let suite = match self.test.rfind("::") {
            Some(i) => &self.test[..i],
            None => "",
        };
        SuiteKey {
            krate: self.krate.clone(),
            target: self.target.clone(),
            suite: suite.to_string(),
            fingerprint: self.fingerprint.clone(),
        }
    }
}

/// Largest strength tallies accept (matches the engine's cap; interaction keys pack
/// one byte per factor into a `u64`).
pub const MAX_TALLY_STRENGTH: usize = 8;

/// Why a spec line cannot be used.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SpecError {
    /// The spec has no factors.
    NoFactors,
    /// A factor has no levels or more than 255.
    LevelCount {
        /// Factor index.
        factor: usize,
        /// Its number of labels.
        count: usize,
    },
    /// Strength is 0, above the factor count or above [`MAX_TALLY_STRENGTH`].
    Strength {
        /// The strength given.
        strength: u32,
        /// Number of factors.
        factors: usize,
    },
    /// A row does not have one level per factor.
    RowWidth {
        /// Row index.
        row: usize,
        /// Its length.
        width: usize,
    },
    /// A row names a level the factor does not have.
    LevelOutOfRange {
        /// Row index.
        row: usize,
        /// Factor index.
        factor: usize,
    },
}

impl std::fmt::Display for SpecError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SpecError::NoFactors => write!(f, "spec has no factors; hint: the spec line is damaged"),
            SpecError::LevelCount { factor, count } => write!(
                f,
                "factor {factor} has {count} levels, expected 1 to 255; hint: the spec line is damaged"
            ),
            SpecError::Strength { strength, factors } => write!(
                f,
                "strength {strength} does not fit {factors} factors (at most {MAX_TALLY_STRENGTH}); hint: the spec line is damaged"
            ),
            SpecError::RowWidth { row, width } => write!(
                f,
                "row {row} has {width} levels, not one per factor; hint: the spec line is damaged"
            ),
            SpecError::LevelOutOfRange { row, factor } => write!(
                f,
                "row {row} names a level factor {factor} does not have; hint: the spec line is damaged"
            ),
        }
    }
}

impl std::error::Error for SpecError {}

/// One parsed line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Line {
    /// A spec line.
    Spec(SpecRecord),
    /// A row line.
    Row(RowRecord),
}

/// Why a line was skipped.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum LineError {
    /// Not a line of any version this crate recognises: truncated, damaged or foreign.
    Corrupt(String),
    /// A well-formed line of another format version.
    OtherVersion(u32),
}

impl std::fmt::Display for LineError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LineError::Corrupt(why) => write!(f, "corrupt record line ({why})"),
            LineError::OtherVersion(v) => write!(
                f,
                "record line of format version {v}, this build reads version {FORMAT_VERSION}; \
                 hint: use a heddle of the same version as the tests"
            ),
        }
    }
}

impl std::error::Error for LineError {}

/// The fields every line starts with; read first to classify the line.
#[derive(Deserialize)]
struct Probe<'a> {
    v: Option<u32>,
    #[serde(borrow)]
    kind: Option<&'a str>,
}

/// Serialises a line with `v` and `kind` first, followed by the record's fields.
#[derive(Serialize)]
struct Tagged<'a, T> {
    v: u32,
    kind: &'static str,
    #[serde(flatten)]
    body: &'a T,
}

/// The kind of a line of the current format version.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LineKind {
    /// A spec line.
    Spec,
    /// A row line.
    Row,
}

/// How the lines this crate writes begin; recognising them from their first bytes saves
/// a second pass over every line when reading large stores.
const SPEC_PREFIX: &str = "{\"v\":1,\"kind\":\"spec\",";
const ROW_PREFIX: &str = "{\"v\":1,\"kind\":\"row\",";

impl LineKind {
    /// Classifies a line: the kind it is of the current version, or why it is not one.
    /// A line only claims its kind; [`Line::parse`] still checks the rest.
    pub fn of(text: &str) -> Result<LineKind, LineError> {
        if text.starts_with(ROW_PREFIX) {
            return Ok(LineKind::Row);
        }
        if text.starts_with(SPEC_PREFIX) {
            return Ok(LineKind::Spec);
        }
        let probe: Probe = serde_json::from_str(text).map_err(|e| LineError::Corrupt(e.to_string()))?;
        match probe.v {
            Some(FORMAT_VERSION) => {}
            Some(v) => return Err(LineError::OtherVersion(v)),
            None => return Err(LineError::Corrupt("no `v` field".into())),
        }
        match probe.kind {
            Some("row") => Ok(LineKind::Row),
            Some("spec") => Ok(LineKind::Spec),
            Some(other) => Err(LineError::Corrupt(format!("unknown kind `{other}`"))),
            None => Err(LineError::Corrupt("no `kind` field".into())),
        }
    }
}

/// The part of a spec line, as this crate writes it, that identifies its content: all
/// but the `run` and `time` values (which differ between processes writing the same
/// spec). `None` for a line of another shape, or whose run or time value holds a quote,
/// backslash or control character (so a line with an equal identity and such values is
/// as valid as the one it equals).
pub(crate) fn spec_identity(text: &str) -> Option<&str> {
    fn plain(s: &str) -> bool {
        s.bytes().all(|b| b >= 0x20 && b != b'"' && b != b'\\')
    }
    let rest = text.strip_prefix(SPEC_PREFIX)?.strip_prefix("\"run\":\"")?;
    let run_end = rest.find('"')?;
    if !plain(&rest[..run_end]) {
        return None;
    }
    let rest = &rest[run_end..];
    let time_at = rest.rfind(",\"time\":\"")?;
    let time = rest[time_at + 9..].strip_suffix("\"}")?;
    if !plain(time) {
        return None;
    }
    Some(&rest[..time_at])
}

impl Line {
    /// Parses one line (without its newline).
    pub fn parse(text: &str) -> Result<Line, LineError> {
        let corrupt = |e: serde_json::Error| LineError::Corrupt(e.to_string());
        match LineKind::of(text)? {
            LineKind::Row => serde_json::from_str(text).map(Line::Row).map_err(corrupt),
            LineKind::Spec => serde_json::from_str(text).map(Line::Spec).map_err(corrupt),
        }
    }

    /// The line as written to the store, newline included.
    pub fn to_json_line(&self) -> String {
        let text = match self {
            Line::Spec(s) => serde_json::to_string(&Tagged {
                v: FORMAT_VERSION,
                kind: "spec",
                body: s,
            }),
            Line::Row(r) => serde_json::to_string(&Tagged {
                v: FORMAT_VERSION,
                kind: "row",
                body: r,
            }),
        };
        // Serialising plain structs of strings, integers and bools into a String cannot
        // fail (serde_json only fails on non-string map keys or failing Serialize impls).
        let mut text = text.unwrap_or_default();
        text.push('\n');
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec() -> SpecRecord {
        SpecRecord {
            run: "r1".into(),
            krate: "demo".into(),
            target: "codec".into(),
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
            excludes: vec![],
            rows: vec![vec![0, 0], vec![0, 1], vec![1, 0], vec![1, 1]],
            fingerprint: "f00d".into(),
            pinned: false,
            should_panic: false,
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
        }
    }

    #[test]
    fn lines_round_trip_and_start_with_version_and_kind() {
        for line in [Line::Spec(spec()), Line::Row(row())] {
            let text = line.to_json_line();
            assert!(text.ends_with('\n') && !text[..text.len() - 1].contains('\n'));
            assert!(text.starts_with("{\"v\":1,\"kind\":\""), "{text}");
            assert_eq!(Line::parse(text.trim_end()).unwrap(), line);
        }
    }

    #[test]
    fn module_docs_show_the_lines_this_crate_writes() {
        // the example lines in the module documentation are the serialisation of these
        // two records; a format change must update the documentation too
        let doc = include_str!("record.rs");
        assert!(doc.contains(&format!("//! {}", Line::Spec(spec()).to_json_line().trim_end())));
        assert!(doc.contains(&format!("//! {}", Line::Row(row()).to_json_line().trim_end())));
    }

    #[test]
    fn written_lines_take_the_fast_path() {
        assert!(Line::Row(row()).to_json_line().starts_with(ROW_PREFIX));
        assert!(Line::Spec(spec()).to_json_line().starts_with(SPEC_PREFIX));
        assert!(ROW_PREFIX.starts_with(&format!("{{\"v\":{FORMAT_VERSION},")));
        // the same line with its fields reordered is still read (slow path)
        let reordered = r#"{"kind":"row","v":1,"run":"r1","crate":"demo","target":"codec","test":"roundtrip::row_02","fingerprint":"f00d","row":2,"labels":["8","true"],"outcome":"failed","message":"assertion failed: ok","duration_ns":41250,"time":"2025-01-02T03:04:05.000042Z"}"#;
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
            Line::parse(r#"{"v":2,"kind":"row","whatever":true}"#),
            Err(LineError::OtherVersion(2))
        );
        assert_eq!(Line::parse(r#"{"v":0}"#), Err(LineError::OtherVersion(0)));
        let full = Line::Row(row()).to_json_line();
        for bad in [
            &full[..full.len() / 2],
            "",
            "not json",
            r#"{"kind":"row"}"#,
            r#"{"v":1,"kind":"nope"}"#,
            r#"{"v":1,"kind":"row","run":"x"}"#,
            r#"{"v":1}"#,
        ] {
            assert!(matches!(Line::parse(bad), Err(LineError::Corrupt(_))), "{bad:?}");
        }
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
    fn validate_refuses_inconsistent_specs() {
        assert_eq!(spec().validate(), Ok(()));
        let mut s = spec();
        s.rows.push(vec![0, 2]);
        assert_eq!(
            s.validate(),
            Err(SpecError::LevelOutOfRange { row: 4, factor: 1 })
        );
        let mut s = spec();
        s.rows.push(vec![0]);
        assert_eq!(s.validate(), Err(SpecError::RowWidth { row: 4, width: 1 }));
        let mut s = spec();
        s.strength = 3;
        assert!(matches!(s.validate(), Err(SpecError::Strength { .. })));
        let mut s = spec();
        s.strength = 0;
        assert!(matches!(s.validate(), Err(SpecError::Strength { .. })));
        let mut s = spec();
        s.factors[0].labels.clear();
        assert!(matches!(s.validate(), Err(SpecError::LevelCount { .. })));
    }

    #[test]
    fn row_keys_match_their_spec() {
        assert_eq!(row().key(), spec().key());
        assert_eq!(spec().row_labels(2), Some(vec!["8", "true"]));
        assert_eq!(spec().row_labels(4), None);
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
}
