//! Executions that started and did not finish. The runtime writes a row's start line
//! before its body runs and its row line after; both go to the file of the one process
//! that ran it, so a start with no row line of the same row after it in that file is an
//! execution whose process ended while the row ran: a crash, an abort, a stack overflow,
//! an out-of-memory kill, a timeout's kill — or a process still running when the store
//! was read.
//!
//! What that says about the row depends on what else ran in the process:
//!
//! - Under nextest (the start carries nextest's `attempt`), the process ran this one
//!   test and nothing else: the row ended it, certainly. The execution counts as a
//!   failed execution of the row ([`failed`]), so verdicts, suspects, `--fail-on
//!   failures`, JUnit and the rerun command all show it. It is placed where its record
//!   would be, with its attempt number, so `attempts` (which infers failed attempts
//!   before a recorded retry) finds that attempt recorded and adds nothing for it: one
//!   failure per attempt whichever way it is known.
//! - Under plain `cargo test` (no attempt), libtest ran several rows on threads — and
//!   maybe tests that are not heddle's — and one crash ended them all. Blaming every row
//!   in flight would blame innocent rows, so these executions are not outcomes: they are
//!   kept apart ([`crate::SuiteRecords::unfinished`]) for the report to show as "did not
//!   finish", and a suite with one is never all clear.

use std::collections::BTreeMap;

use heddle_test::record::{ExecutionKey, Outcome, RowRecord, StartRecord};

/// The starts among `starts` with no row line of the same row in `rows` (both read from
/// one file, in file order): each row line finishes one start of its row.
pub(crate) fn unpaired(starts: Vec<StartRecord>, rows: &[RowRecord]) -> Vec<StartRecord> {
    if starts.is_empty() {
        return starts;
    }
    // finishes per execution key, the fields a start pairs on
    let mut finishes: BTreeMap<ExecutionKey<'_>, usize> = BTreeMap::new();
    for r in rows {
        *finishes.entry(r.execution()).or_default() += 1;
    }
    let unpaired: Vec<bool> = starts
        .iter()
        .map(|s| match finishes.get_mut(&s.execution()) {
            Some(n) if *n > 0 => {
                *n -= 1;
                false
            }
            _ => true,
        })
        .collect();
    starts
        .into_iter()
        .zip(unpaired)
        .filter_map(|(s, left)| left.then_some(s))
        .collect()
}

/// Whether an unfinished execution ran alone in its process, so that it certainly ended
/// the process: nextest runs one test per process and the runtime writes its attempt.
pub(crate) fn ran_alone(start: &StartRecord) -> bool {
    start.attempt.is_some()
}

/// The failed execution an unfinished start that ran alone stands for.
pub(crate) fn failed(start: &StartRecord) -> RowRecord {
    let attempt = start.attempt.map_or(String::new(), |a| format!("attempt {a} "));
    start.finished(
        Outcome::Failed,
        Some(format!(
            "{attempt}did not finish: its test process ended while the row ran (a crash, an abort, a kill or a timeout)"
        )),
        0,
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fixture::{SpecBuilder, row, start};

    #[test]
    fn each_row_line_finishes_one_start_of_its_row() {
        let spec = SpecBuilder::new("f")
            .factor("x", &["a", "b", "c"])
            .rows(vec![vec![0], vec![1], vec![2]])
            .build();
        // rows 0 and 2 finished, row 1 did not; row 0 started twice and finished once
        let starts = vec![start(&spec, 0), start(&spec, 1), start(&spec, 2), start(&spec, 0)];
        let rows = vec![row(&spec, 2, Outcome::Passed), row(&spec, 0, Outcome::Failed)];
        let left: Vec<u32> = unpaired(starts, &rows).iter().map(|s| s.row).collect();
        assert_eq!(left, [1, 0]);
        // a row line of another spec (fingerprint) finishes nothing here
        let other = SpecBuilder::new("f")
            .factor("x", &["a", "b", "c"])
            .rows(vec![vec![0], vec![1], vec![2]])
            .fingerprint("other")
            .build();
        let left = unpaired(vec![start(&spec, 1)], &[row(&other, 1, Outcome::Passed)]);
        assert_eq!(left.len(), 1);
        assert!(unpaired(vec![start(&spec, 1)], &[row(&spec, 1, Outcome::Passed)]).is_empty());
    }

    #[test]
    fn only_a_start_under_nextest_is_a_failure_of_its_row() {
        let spec = SpecBuilder::new("f")
            .factor("x", &["a", "b"])
            .rows(vec![vec![0], vec![1]])
            .build();
        let mut alone = start(&spec, 1);
        assert!(!ran_alone(&alone));
        alone.attempt = Some(2);
        assert!(ran_alone(&alone));
        let rec = failed(&alone);
        assert_eq!((rec.row, rec.outcome, rec.attempt), (1, Outcome::Failed, Some(2)));
        assert_eq!(rec.labels, ["b"]);
        assert_eq!(
            rec.message.as_deref(),
            Some(
                "attempt 2 did not finish: its test process ended while the row ran (a crash, an abort, a kill or a timeout)"
            )
        );
    }
}
