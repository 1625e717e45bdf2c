//! Attempts nextest made that left no record. nextest retries a test only after it
//! failed, so a row recorded at attempt N shows that attempts 1 to N − 1 of it failed;
//! one with no record failed without finishing (its process crashed, aborted or was
//! killed at a timeout before the runtime could write). Counting them keeps a row that
//! crashed once and passed on the retry from reading as a clean pass, which nextest
//! itself calls flaky.
//!
//! An attempt that wrote its start line is already known (`unfinished` turned its start
//! with no finish into a failed record at that attempt, before this runs), so this only
//! fills in attempts that left nothing at all (killed before the start was written, or
//! records written before start lines existed): each failed attempt is counted once.

use std::collections::BTreeMap;

use heddle_test::record::{Outcome, RowRecord};

/// Attempt numbers above this are not filled in (no retry count a CI runs comes near
/// it; a damaged record must not make the reader loop).
pub const MAX_INFERRED_ATTEMPT: u32 = 64;

/// Per attempt number, the records of one row in one run: (executions, failures).
type ByAttempt = BTreeMap<u32, (usize, usize)>;

/// Adds a failed record for every attempt the later attempts of a row (in one run) show
/// failed but that left no record, just before that row's first record of the run.
/// Returns how many were added.
pub(crate) fn fill_unfinished(rows: &mut Vec<RowRecord>) -> usize {
    // each row in each run: the index of its first record, and its records by attempt
    let mut groups: BTreeMap<(&str, u32), (usize, ByAttempt)> = BTreeMap::new();
    for (i, r) in rows.iter().enumerate() {
        let Some(attempt) = r.attempt else { continue };
        let (first, by_attempt) = groups
            .entry((r.run.as_str(), r.row))
            .or_insert((i, BTreeMap::new()));
        *first = (*first).min(i);
        let counts = by_attempt.entry(attempt).or_default();
        counts.0 += 1;
        counts.1 += usize::from(!r.outcome.is_pass());
    }
    let mut added: Vec<(usize, RowRecord)> = Vec::new();
    for (first, by_attempt) in groups.into_values() {
        let Some((&top, _)) = by_attempt.last_key_value() else {
            continue;
        };
        if top > MAX_INFERRED_ATTEMPT {
            continue;
        }
        let count = |k: u32| by_attempt.get(&k).copied().unwrap_or((0, 0));
        // executions at attempt k + 1, recorded or inferred: each followed a failed k
        let mut next = count(top).0;
        for k in (1..top).rev() {
            let (runs, failures) = count(k);
            let missing = next.saturating_sub(failures);
            for _ in 0..missing {
                let mut rec = rows[first].clone();
                rec.outcome = Outcome::Failed;
                rec.attempt = Some(k);
                rec.duration_ns = 0;
                rec.message = Some(format!(
                    "attempt {k} left no record: its test process ended before the row finished (a crash, an abort or a timeout), and nextest ran attempt {}",
                    k + 1
                ));
                added.push((first, rec));
            }
            next = runs + missing;
        }
    }
    let n = added.len();
    if n > 0 {
        // insert from the back so earlier positions stay valid
        added.sort_by_key(|(at, rec)| (*at, rec.attempt));
        for (at, rec) in added.into_iter().rev() {
            rows.insert(at, rec);
        }
    }
    n
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fixture::{SpecBuilder, row};

    fn attempt(spec: &heddle_test::record::SpecRecord, r: usize, outcome: Outcome, a: u32) -> RowRecord {
        let mut rec = row(spec, r, outcome);
        rec.attempt = Some(a);
        rec
    }

    #[test]
    fn a_retry_shows_the_attempts_before_it_failed() {
        let spec = SpecBuilder::new("f")
            .factor("x", &["a", "b"])
            .rows(vec![vec![0], vec![1]])
            .build();
        // row 0: attempt 1 crashed, attempt 2 failed and recorded, attempt 3 passed;
        // row 1: passed at once; a row outside nextest is left alone
        let mut rows = vec![
            attempt(&spec, 0, Outcome::Failed, 2),
            attempt(&spec, 0, Outcome::Passed, 3),
            attempt(&spec, 1, Outcome::Passed, 1),
            row(&spec, 1, Outcome::Passed),
        ];
        assert_eq!(fill_unfinished(&mut rows), 1);
        let seen: Vec<(u32, Outcome, Option<u32>)> =
            rows.iter().map(|r| (r.row, r.outcome, r.attempt)).collect();
        assert_eq!(
            seen,
            [
                (0, Outcome::Failed, Some(1)),
                (0, Outcome::Failed, Some(2)),
                (0, Outcome::Passed, Some(3)),
                (1, Outcome::Passed, Some(1)),
                (1, Outcome::Passed, None),
            ]
        );
        assert!(
            rows[0]
                .message
                .as_deref()
                .unwrap()
                .starts_with("attempt 1 left no record")
        );
        // every attempt recorded: nothing to add
        assert_eq!(fill_unfinished(&mut rows), 0);
    }

    #[test]
    fn repeated_rounds_and_damaged_attempts_add_only_what_is_shown() {
        let spec = SpecBuilder::new("f")
            .factor("x", &["a"])
            .rows(vec![vec![0]])
            .build();
        // two rounds of one run: one passed at attempt 1, the other needed attempt 2
        // after a crash; the recorded pass at attempt 1 is no failure
        let mut rows = vec![
            attempt(&spec, 0, Outcome::Passed, 1),
            attempt(&spec, 0, Outcome::Passed, 2),
        ];
        assert_eq!(fill_unfinished(&mut rows), 1);
        assert_eq!(rows.iter().filter(|r| !r.outcome.is_pass()).count(), 1);
        let mut huge = vec![attempt(&spec, 0, Outcome::Passed, u32::MAX)];
        assert_eq!(fill_unfinished(&mut huge), 0);
    }
}
