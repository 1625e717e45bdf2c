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

/// The steps of one test and the failures among them. Dropping it without
/// [`Steps::finish`] is a failure of its own: the failed steps would otherwise pass
/// unseen.
#[derive(Debug, Default)]
pub struct Steps {
    failures: Vec<String>,
    finished: bool,
}

impl Drop for Steps {
    fn drop(&mut self) {
        // while unwinding, the test is failing already, and a second panic would abort
        if !self.finished && !std::thread::panicking() {
            panic!(
                "the steps were never judged: call `Steps::finish` ({} failed)",
                self.failures.len()
            );
        }
    }
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
    pub fn finish(mut self) {
        self.finished = true;
        assert!(
            self.failures.is_empty(),
            "{} step(s) failed:\n\n{}",
            self.failures.len(),
            self.failures.join("\n\n")
        );
    }
}

/// Whether the tests run in CI: the `CI` variable is set and not empty, as CI services
/// set it (common practice).
pub fn in_ci() -> bool {
    std::env::var_os("CI").is_some_and(|v| !v.is_empty())
}

/// Leaves out a test or a step that cannot run here, saying why. In CI a skip is a
/// failure (everything a test needs is installed there), so it panics instead.
pub fn skip(what: &str, why: &str) {
    skip_unless_ci(in_ci(), what, why);
}

fn skip_unless_ci(ci: bool, what: &str, why: &str) {
    assert!(!ci, "{what} cannot run in CI: {why}");
    note(&format!("SKIPPED {what}: {why}"));
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steps_gather_every_failure_for_finish() {
        let mut steps = Steps::new();
        steps.run("passes", || Ok(()));
        steps.run("fails", || Err("no".into()));
        steps.run("panics", || panic!("boom"));
        let err = catch_unwind(AssertUnwindSafe(|| steps.finish())).unwrap_err();
        let text = err.downcast_ref::<String>().cloned().unwrap_or_default();
        assert!(text.starts_with("2 step(s) failed"), "{text}");
        assert!(text.contains("step `panics`: panicked: boom"), "{text}");
    }

    #[test]
    fn a_skip_is_a_failure_in_ci_only() {
        skip_unless_ci(false, "a test", "nothing to run it with");
        let err = catch_unwind(|| skip_unless_ci(true, "a test", "nothing to run it with")).unwrap_err();
        let text = err.downcast_ref::<String>().cloned().unwrap_or_default();
        assert_eq!(text, "a test cannot run in CI: nothing to run it with");
    }

    #[test]
    #[should_panic(expected = "the steps were never judged: call `Steps::finish` (1 failed)")]
    fn steps_dropped_without_finish_fail_the_test() {
        let mut steps = Steps::new();
        steps.run("fails", || Err("unseen".into()));
    }
}
