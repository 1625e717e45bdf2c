//! Where a function's rows come from: its pin when one matches, else the engine.
//!
//! The macro and the plugin's checks decide this with the same function, so "stale"
//! means the same thing to both.

use std::fmt;

use heddle_generator::{Effort, generate};

use crate::diag::{self, Diagnostic};
use crate::fingerprint::Fingerprint;
use crate::pins::{PinKey, PinsFile};
use crate::validate::CoverSpec;

/// The rows of a function and where they came from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Rows {
    /// Level index per factor, per row: the design.
    pub rows: Vec<Vec<u8>>,
    /// They came from the pins file.
    pub pinned: bool,
    /// Follow-up rows from the pins file (`cargo heddle probe`), run after the design's.
    pub followups: Vec<Vec<u8>>,
    /// The engine made them and advised pinning them (`Stats::pin_advised`: the spec
    /// costs seconds per build, or the fast mode's work bound cut a method short); the
    /// expansion then warns at build time. Never set for pinned rows.
    pub pin_advised: bool,
}

/// Why no rows could be had.
#[derive(Clone, Debug, PartialEq)]
pub enum RowsError {
    /// The pin exists but was made for another spec.
    Stale {
        /// The pin's key.
        key: PinKey,
        /// Its line in the pins file.
        line: Option<usize>,
        /// The pin's fingerprint.
        pinned: Fingerprint,
        /// The spec's fingerprint.
        current: Fingerprint,
    },
    /// The pin matches but its rows do not fit the spec (a hand edit).
    Corrupt {
        /// The pin's key.
        key: PinKey,
        /// Its line in the pins file.
        line: Option<usize>,
        /// What is wrong.
        reason: String,
    },
    /// The engine refused the spec.
    Engine(heddle_generator::Error),
    /// The function's follow-up rows were proposed for another spec.
    StaleFollowUp {
        /// The function's key.
        key: PinKey,
        /// Their entry's line in the pins file.
        line: Option<usize>,
    },
}

fn line(l: Option<usize>) -> String {
    l.map(|l| format!(" (line {l})")).unwrap_or_default()
}

impl RowsError {
    /// What went wrong, in the shape every front end renders.
    pub fn diagnostic(&self) -> Diagnostic {
        match self {
            RowsError::Stale { key, line: l, .. } => diag::diagnostic(
                format!(
                    "the pin of `{}` in `{}`{} is stale: the spec changed since it was pinned",
                    key.function,
                    crate::pins::PINS_FILE,
                    line(*l)
                ),
                format!("run `{}` to pin rows for the new spec", crate::pins::PIN_COMMAND),
            ),
            RowsError::Corrupt { key, line: l, reason } => diag::diagnostic(
                format!(
                    "the pin of `{}` in `{}`{} does not fit the function: {reason}",
                    key.function,
                    crate::pins::PINS_FILE,
                    line(*l)
                ),
                format!("run `{}` to rewrite it", crate::pins::PIN_COMMAND),
            ),
            RowsError::Engine(e) => diag::diagnostic(format!("cannot generate rows: {e}"), e.hint()),
            RowsError::StaleFollowUp { key, line: l } => diag::diagnostic(
                format!(
                    "the follow-up rows of `{}` in `{}`{} are stale: the spec changed since they were proposed",
                    key.function,
                    crate::pins::PINS_FILE,
                    line(*l)
                ),
                format!(
                    "run `{} --clear {}` to drop them (or `{}`, which drops them too), then run the tests and `{}` again",
                    crate::pins::PROBE_COMMAND,
                    key.function,
                    crate::pins::PIN_COMMAND,
                    crate::pins::PROBE_COMMAND
                ),
            ),
        }
    }
}

impl fmt::Display for RowsError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.diagnostic().for_compiler())
    }
}

impl std::error::Error for RowsError {}

/// The rows of `spec`: its pin under `key` in `pins` when there is one (an error when
/// the pin is stale or does not fit), else freshly generated with [`Effort::Fast`]; and
/// its follow-up rows, when `pins` holds some for `key` (an error when they are stale or
/// do not fit).
pub fn rows_for(spec: &CoverSpec, key: Option<&PinKey>, pins: Option<&PinsFile>) -> Result<Rows, RowsError> {
    let mut rows = design_rows(spec, key, pins)?;
    if let Some((key, pins, f)) = key
        .zip(pins)
        .and_then(|(key, pins)| Some((key, pins, pins.followup(key)?)))
    {
        if f.fingerprint != spec.fingerprint {
            return Err(RowsError::StaleFollowUp {
                key: key.clone(),
                line: pins.followup_line(key),
            });
        }
        f.check(&spec.spec).map_err(|reason| RowsError::Corrupt {
            key: key.clone(),
            line: pins.followup_line(key),
            reason,
        })?;
        rows.followups = f.rows.clone();
    }
    Ok(rows)
}

/// The design's rows: the pin's, or the engine's.
fn design_rows(spec: &CoverSpec, key: Option<&PinKey>, pins: Option<&PinsFile>) -> Result<Rows, RowsError> {
    let found = key
        .zip(pins)
        .and_then(|(key, pins)| Some((key, pins, pins.get(key)?)));
    if let Some((key, pins, pin)) = found {
        if pin.fingerprint != spec.fingerprint {
            return Err(RowsError::Stale {
                key: key.clone(),
                line: pins.line_of(key),
                pinned: pin.fingerprint,
                current: spec.fingerprint,
            });
        }
        pin.check(&spec.spec).map_err(|reason| RowsError::Corrupt {
            key: key.clone(),
            line: pins.line_of(key),
            reason,
        })?;
        return Ok(Rows {
            rows: pin.rows.clone(),
            pinned: true,
            followups: Vec::new(),
            pin_advised: false,
        });
    }
    let design = generate(&spec.spec, Effort::Fast).map_err(RowsError::Engine)?;
    Ok(Rows {
        rows: design.rows,
        pinned: false,
        followups: Vec::new(),
        pin_advised: design.stats.pin_advised,
    })
}
