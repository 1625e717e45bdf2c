//! Running an end-to-end test as named steps that all get their say: one temporary
//! crate serves many checks, and a failing check should not hide the others.

use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::Path;

use heddle_store::{Records, Store, SuiteRecords};

use crate::scratch::note;

/// Returns `Err(format!(…))` from the enclosing step unless the condition holds.
#[macro_export]
macro_rules! ensure {
    ($cond:expr, $($fmt:tt)+) => {
        if !$cond {
            return ::core::result::Result::Err(format!($($fmt)+));
        }
    };
}

/// The steps of one test and the failures among them.
#[derive(Debug, Default)]
pub struct Steps {
    failures: Vec<String>,
}

impl Steps {
    /// No steps yet.
    pub fn new() -> Steps {
        Steps::default()
    }

    /// Runs one step; an `Err` or a panic is kept for [`Steps::finish`].
    pub fn run(&mut self, name: &str, step: impl FnOnce() -> Result<(), String>) {
        let result = catch_unwind(AssertUnwindSafe(step)).unwrap_or_else(|payload| {
            let text = payload
                .downcast_ref::<String>()
                .cloned()
                .or_else(|| payload.downcast_ref::<&str>().map(|s| s.to_string()))
                .unwrap_or_else(|| "panicked".to_string());
            Err(format!("panicked: {text}"))
        });
        match result {
            Ok(()) => note(&format!("step `{name}` passed")),
            Err(e) => {
                note(&format!("step `{name}` FAILED"));
                self.failures.push(format!("step `{name}`: {e}"));
            }
        }
    }

    /// Panics listing every failed step.
    pub fn finish(self) {
        assert!(
            self.failures.is_empty(),
            "{} step(s) failed:\n\n{}",
            self.failures.len(),
            self.failures.join("\n\n")
        );
    }
}

/// Every run in a store directory (a `HEDDLE_TARGET_DIR`).
pub fn read_store(dir: &Path) -> Result<Records, String> {
    Store::open(dir)
        .and_then(|s| s.read_all())
        .map_err(|e| format!("cannot read the store at `{}`: {e}", dir.display()))
}

/// The records of one annotated function.
pub fn suite<'a>(records: &'a Records, function: &str) -> Result<&'a SuiteRecords, String> {
    let mut found = records.suites.iter().filter(|s| s.spec.function == function);
    match (found.next(), found.next()) {
        (Some(s), None) => Ok(s),
        (None, _) => Err(format!("no records of `{function}`")),
        (Some(_), Some(_)) => Err(format!("several suites of `{function}` recorded")),
    }
}
