//! Row counts split by run, for the history `--runs N` shows: how an interaction fared in
//! each run read, not only in all of them together.

use heddle_store::Count;
use heddle_test::record::RowRecord;

/// For each run id (in the given order), the count of each of `rows` design rows among
/// `records`. Records of other runs or of rows outside the design are left out (the
/// tallies count the latter as unknown rows already).
pub fn row_counts(run_ids: &[&str], records: &[RowRecord], rows: usize) -> Vec<Vec<Count>> {
    let mut out = vec![vec![Count::default(); rows]; run_ids.len()];
    // records come run by run, so the previous answer is almost always the right one
    let mut last: Option<usize> = None;
    for r in records {
        let run = match last.filter(|&i| run_ids[i] == r.run) {
            Some(i) => Some(i),
            None => run_ids.iter().position(|id| *id == r.run),
        };
        let Some(i) = run else { continue };
        last = Some(i);
        if let Some(c) = out[i].get_mut(r.row as usize) {
            c.add(r.outcome);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use heddle_store::fixture::{SpecBuilder, row};
    use heddle_test::record::Outcome;

    #[test]
    fn counts_fall_to_their_run_and_row() {
        let spec = SpecBuilder::new("f")
            .factor("a", &["x", "y"])
            .rows(vec![vec![0], vec![1]])
            .build();
        let mut records = Vec::new();
        for (run, r, o) in [
            ("r1", 0, Outcome::Passed),
            ("r1", 1, Outcome::Failed),
            ("r2", 1, Outcome::Passed),
            ("r2", 1, Outcome::Failed),
            ("r9", 0, Outcome::Failed),
        ] {
            let mut rec = row(&spec, r, o);
            rec.run = run.into();
            records.push(rec);
        }
        let mut stray = row(&spec, 0, Outcome::Passed);
        stray.row = 7;
        records.push(stray);
        let by_run = row_counts(&["r1", "r2"], &records, 2);
        let c = |runs, passes| Count {
            runs,
            passes,
            failures: runs - passes,
        };
        assert_eq!(by_run, vec![vec![c(1, 1), c(1, 0)], vec![c(0, 0), c(2, 1)]]);
    }
}
