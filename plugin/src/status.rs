//! Where an annotated function's rows stand: what `check` gates on and what `pin`
//! calls up to date. The rows are chosen by `heddle_syntax::rows_for`, the function the
//! macro itself uses, so "stale" means the same here as in a build, and then checked by
//! the engine's independent checker (`heddle_generator::verify`).

use heddle_generator::{Coverage, Violation, verify};
use heddle_syntax::{PinsFile, RowsError, rows_for};

use crate::carry::describe_change;
use crate::sources::Function;

/// The standing of one function's rows.
#[derive(Clone, Debug, PartialEq)]
pub enum Status {
    /// Its pin matches the spec and covers it.
    Pinned(Coverage),
    /// The crate has no pins file; the build generates rows, and they cover.
    Generated(Coverage),
    /// The crate has a pins file without an entry for it.
    Missing,
    /// Its pin was made for another spec; what changed, as far as the pin tells.
    Stale(Vec<String>),
    /// Its pin matches the fingerprint but its rows do not fit the spec (a hand edit).
    Misfit(String),
    /// Its rows do not cover the spec (the first shortfall).
    Uncovered(Violation),
    /// The engine refuses the spec.
    Engine(String),
    /// Its follow-up rows were proposed for another spec.
    StaleFollowUp,
}

impl Status {
    /// Whether `check` passes it.
    pub fn is_ok(&self) -> bool {
        matches!(self, Status::Pinned(_) | Status::Generated(_))
    }
}

/// The standing of `f` given its crate's pins file.
pub fn status(f: &Function, pins: Option<&PinsFile>) -> Status {
    let key = f.key();
    // a file holding only follow-up rows does not make the crate one that pins
    if pins.is_some_and(|p| p.pins_functions() && p.get(&key).is_none()) {
        return Status::Missing;
    }
    match rows_for(&f.spec, Some(&key), pins) {
        Ok(rows) => match verify(&f.spec.spec, &rows.rows) {
            Ok(c) if rows.pinned => Status::Pinned(c),
            Ok(c) => Status::Generated(c),
            Err(v) => Status::Uncovered(v),
        },
        Err(RowsError::Stale { .. }) => {
            let changes = pins
                .and_then(|p| Some((p.get(&key)?, p.origin(&key))))
                .map(|(pin, origin)| describe_change(pin, origin, &f.spec.spec))
                .unwrap_or_default();
            Status::Stale(changes)
        }
        Err(RowsError::Corrupt { reason, .. }) => Status::Misfit(reason),
        Err(RowsError::Engine(e)) => Status::Engine(e.to_string()),
        Err(RowsError::StaleFollowUp { .. }) => Status::StaleFollowUp,
    }
}
