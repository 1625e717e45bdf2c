//! Checks that a suite's records are complete and agree with its spec and with what the
//! test harness printed.

use std::collections::{BTreeMap, BTreeSet};

use heddle_store::SuiteRecords;
use heddle_test::record::Outcome;

use crate::coverage::labels;
use crate::output::{Status, TestLine};

/// What [`check_suite`] counted.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Counted {
    /// Rows recorded as failed.
    pub failed: usize,
    /// Rows recorded as passed or panicked-expected.
    pub passed: usize,
}

/// Checks one suite's records, `fails` telling from a row's labels whether the planted
/// defect is in it:
/// - one row record per row of the spec (per row the budget lets run, the harness
///   reporting the others as ignored), named `{suite}::row_NN`, with the labels of
///   that row, the spec's run, crate, target and fingerprint, a time stamp, and a
///   message exactly when it did not simply pass;
/// - the harness ran exactly these tests, with the recorded outcomes, each marked
///   ` - should panic` exactly when the spec says so;
/// - a row failed exactly when it holds the planted defect.
pub fn check_suite(
    suite: &SuiteRecords,
    tests: &BTreeMap<String, TestLine>,
    fails: &dyn Fn(&[&str]) -> bool,
) -> Result<Counted, String> {
    let spec = &suite.spec;
    let n = spec.rows.len();
    let name = &spec.suite;
    let mut by_row: BTreeMap<u32, Vec<&heddle_test::record::RowRecord>> = BTreeMap::new();
    for r in &suite.rows {
        by_row.entry(r.row).or_default().push(r);
    }
    // the expansion names the rows; what the report relies on is that the names are
    // distinct and sort in row order (so `cargo test` lists them in order)
    let mut sorted = spec.row_names.clone();
    sorted.sort();
    sorted.dedup();
    if sorted != spec.row_names || spec.row_names.len() != n {
        return Err(format!(
            "`{name}`: row names {:?} are not {n} distinct names in row order",
            spec.row_names
        ));
    }
    // a row budget runs the first rows; libtest must report the others as ignored
    let ran = spec.budget.map_or(n, |b| b as usize);
    let want: BTreeSet<u32> = (0..ran as u32).collect();
    let have: BTreeSet<u32> = by_row.keys().copied().collect();
    if want != have {
        return Err(format!(
            "`{name}`: rows recorded {have:?}, the spec has {n} rows and lets {ran} run"
        ));
    }
    for i in ran..n {
        let test = spec.row_test_name(i).unwrap_or_default();
        let status = tests.get(&test).map(|l| l.status);
        if status != Some(Status::Ignored) {
            return Err(format!(
                "`{test}` is past the budget of {ran} rows, the harness printed {status:?}"
            ));
        }
    }
    let mut counted = Counted::default();
    let mut recorded_tests = BTreeSet::new();
    for (&row, records) in &by_row {
        let [r] = records.as_slice() else {
            return Err(format!("`{name}`: row {row} recorded {} times", records.len()));
        };
        let i = row as usize;
        let test = spec
            .row_test_name(i)
            .ok_or_else(|| format!("`{name}`: row {row} has no name"))?;
        let want_labels = labels(spec, &spec.rows[i]);
        let ctx = format!("`{test}`");
        if r.test != test {
            return Err(format!("{ctx}: recorded as `{}`", r.test));
        }
        if r.labels != want_labels {
            return Err(format!(
                "{ctx}: labels {:?}, the spec says {want_labels:?}",
                r.labels
            ));
        }
        if (&r.run, &r.krate, &r.target, &r.fingerprint)
            != (&spec.run, &spec.krate, &spec.target, &spec.fingerprint)
        {
            return Err(format!(
                "{ctx}: run, crate, target or fingerprint differ from the spec line"
            ));
        }
        if !r.time.ends_with('Z') || r.time.len() < 20 {
            return Err(format!("{ctx}: time stamp `{}`", r.time));
        }
        if r.message.is_some() != (r.outcome != Outcome::Passed) {
            return Err(format!(
                "{ctx}: outcome {:?} with message {:?}",
                r.outcome, r.message
            ));
        }
        let Some(line) = tests.get(&test) else {
            return Err(format!("{ctx}: recorded but not reported by the test harness"));
        };
        let printed = match r.outcome {
            Outcome::Failed => Status::Failed,
            Outcome::Passed | Outcome::PanickedExpected => Status::Passed,
        };
        if line.status != printed {
            return Err(format!(
                "{ctx}: recorded {:?}, the harness printed {:?}",
                r.outcome, line.status
            ));
        }
        if line.should_panic != spec.should_panic {
            return Err(format!("{ctx}: ` - should panic` is {}", line.should_panic));
        }
        if spec.should_panic && r.outcome == Outcome::Passed {
            return Err(format!("{ctx}: passed without panicking under `#[should_panic]`"));
        }
        if !spec.should_panic && r.outcome == Outcome::PanickedExpected {
            return Err(format!("{ctx}: panicked-expected without `#[should_panic]`"));
        }
        let planted = fails(&want_labels);
        if planted != (r.outcome == Outcome::Failed) {
            return Err(format!(
                "{ctx} ({want_labels:?}): recorded {:?}, the planted defect says it {}",
                r.outcome,
                if planted { "fails" } else { "passes" }
            ));
        }
        if planted {
            counted.failed += 1;
        } else {
            counted.passed += 1;
        }
        recorded_tests.insert(test);
    }
    let prefix = format!("{name}::");
    let reported: BTreeSet<String> = tests
        .iter()
        .filter(|(t, l)| t.starts_with(&prefix) && l.status != Status::Ignored)
        .map(|(t, _)| t.clone())
        .collect();
    if reported != recorded_tests {
        let missing: Vec<_> = reported.difference(&recorded_tests).collect();
        return Err(format!(
            "`{name}`: the harness ran {missing:?} but nothing was recorded for them"
        ));
    }
    Ok(counted)
}
