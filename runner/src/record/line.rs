//! A line's text both ways, and the cheap classification of lines this crate wrote, which
//! lets a reader of a large store skip a second parse of each line.

use serde::{Deserialize, Serialize};

use super::{FORMAT_VERSION, OLDEST_READ_VERSION, RowRecord, SpecRecord, StartRecord};

/// One parsed line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Line {
    /// A spec line.
    Spec(SpecRecord),
    /// A row line.
    Row(RowRecord),
    /// A start line.
    Start(StartRecord),
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
                "record line of format version {v}, this build reads versions {OLDEST_READ_VERSION} to {FORMAT_VERSION}; \
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

/// The kind of a line of a format version this crate reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LineKind {
    /// A spec line.
    Spec,
    /// A row line.
    Row,
    /// A start line.
    Start,
}

/// How the lines this crate writes begin; recognising them from their first bytes saves
/// a second pass over every line when reading large stores.
pub(super) const SPEC_PREFIX: &str = "{\"v\":3,\"kind\":\"spec\",";
pub(super) const ROW_PREFIX: &str = "{\"v\":3,\"kind\":\"row\",";
pub(super) const START_PREFIX: &str = "{\"v\":3,\"kind\":\"start\",";

impl LineKind {
    /// Classifies a line: the kind it is of a version this crate reads, or why it is
    /// not one. A line only claims its kind; [`Line::parse`] still checks the rest.
    pub fn of(text: &str) -> Result<LineKind, LineError> {
        if text.starts_with(ROW_PREFIX) {
            return Ok(LineKind::Row);
        }
        if text.starts_with(START_PREFIX) {
            return Ok(LineKind::Start);
        }
        if text.starts_with(SPEC_PREFIX) {
            return Ok(LineKind::Spec);
        }
        let probe: Probe = serde_json::from_str(text).map_err(|e| LineError::Corrupt(e.to_string()))?;
        match probe.v {
            Some(v) if (OLDEST_READ_VERSION..=FORMAT_VERSION).contains(&v) => {}
            Some(v) => return Err(LineError::OtherVersion(v)),
            None => return Err(LineError::Corrupt("no `v` field".into())),
        }
        match probe.kind {
            Some("row") => Ok(LineKind::Row),
            Some("spec") => Ok(LineKind::Spec),
            Some("start") => Ok(LineKind::Start),
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
pub fn spec_identity(text: &str) -> Option<&str> {
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
            LineKind::Start => serde_json::from_str(text).map(Line::Start).map_err(corrupt),
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
            Line::Start(r) => serde_json::to_string(&Tagged {
                v: FORMAT_VERSION,
                kind: "start",
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
