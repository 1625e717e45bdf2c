//! Per-interaction pass counts: the numbers the report ranks suspects and flakes by.
//!
//! Outcomes are first summed per design row (a row may have run many times: several
//! runs, retries, shards), then every interaction present in the design collects the
//! sums of the rows that contain it. So the cost is linear in the records plus
//! rows × Σ C(k, a) for a ≤ t "cells", independent of how many runs are merged. Each
//! cell can become an entry of its own, so the cells are held to [`MAX_TALLY_CELLS`]
//! before any work: interactions of the most factors that fit are counted and the rest
//! are left out, saying so ([`Tallies::left_out`]); a spec line whose single levels
//! alone exceed it is refused.

use heddle_generator::next_subset;
use heddle_test::record::{Outcome, SpecRecord};

use crate::spec::{self, SpecError};

/// Runs of something and how they ended.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Count {
    /// Row runs.
    pub runs: u64,
    /// Runs that passed (including `panicked-expected`).
    pub passes: u64,
    /// Runs that failed.
    pub failures: u64,
}

impl Count {
    /// Adds one outcome.
    pub fn add(&mut self, outcome: Outcome) {
        self.runs += 1;
        if outcome.is_pass() {
            self.passes += 1;
        } else {
            self.failures += 1;
        }
    }

    /// Adds another count.
    pub fn merge(&mut self, other: &Count) {
        self.runs += other.runs;
        self.passes += other.passes;
        self.failures += other.failures;
    }

    /// Passes over runs, `None` before any run.
    pub fn pass_rate(&self) -> Option<f64> {
        (self.runs > 0).then(|| self.passes as f64 / self.runs as f64)
    }

    /// Both passes and failures seen: flaky, or broken by something outside the row.
    pub fn is_mixed(&self) -> bool {
        self.passes > 0 && self.failures > 0
    }
}

/// A combination of levels on a set of factors: a single level (one factor) or a
/// t-way interaction.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Interaction {
    /// Factor indices, strictly increasing.
    pub factors: Vec<usize>,
    /// The level index on each of those factors.
    pub levels: Vec<u8>,
}

impl Interaction {
    /// Number of factors involved.
    pub fn arity(&self) -> usize {
        self.factors.len()
    }

    /// Whether a full row shows these levels.
    pub fn in_row(&self, row: &[u8]) -> bool {
        self.factors
            .iter()
            .zip(&self.levels)
            .all(|(&f, &lv)| row.get(f) == Some(&lv))
    }

    /// Whether every level of `other` is part of this interaction.
    pub fn contains(&self, other: &Interaction) -> bool {
        other
            .factors
            .iter()
            .zip(&other.levels)
            .all(|(f, lv)| self.factors.iter().position(|g| g == f).map(|i| self.levels[i]) == Some(*lv))
    }

    /// `(parameter name, level label)` pairs, for messages and reports; `None` when the
    /// interaction does not belong to this spec.
    pub fn describe<'s>(&self, spec: &'s SpecRecord) -> Option<Vec<(&'s str, &'s str)>> {
        self.factors
            .iter()
            .zip(&self.levels)
            .map(|(&f, &lv)| {
                let factor = spec.factors.get(f)?;
                Some((factor.name.as_str(), factor.labels.get(lv as usize)?.as_str()))
            })
            .collect()
    }
}

/// One interaction's tally.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Tally {
    /// The levels.
    pub interaction: Interaction,
    /// Indices of the design rows containing it, increasing.
    pub rows: Vec<u32>,
    /// Runs of those rows and how they ended.
    pub count: Count,
}

/// Tallies of one suite.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Tallies {
    /// Strength of the spec: entries go up to this arity.
    pub strength: usize,
    /// Count per design row.
    pub rows: Vec<Count>,
    /// Every interaction of arity 1 to `strength` that some design row contains, by
    /// arity, then factor indices, then level indices. Interactions no row contains
    /// (ruled out by excludes) are absent; those whose rows never ran have zero runs.
    pub entries: Vec<Tally>,
    /// Outcomes given for a row index outside the design (left out).
    pub unknown_rows: u64,
    /// Set when counting every arity up to the spec's strength would have taken more
    /// than [`MAX_TALLY_CELLS`]: `strength` is then below the spec's (and no focus set
    /// is counted).
    pub left_out: Option<LeftOut>,
    /// The interactions of the spec's focus sets, each column set at its own strength
    /// (variable strength), that some design row contains: by factor indices, then level
    /// indices; a column set of several focus sets once, at the largest index asked.
    /// Empty without focus sets or when they did not fit [`MAX_TALLY_CELLS`] (then
    /// `left_out` says so).
    pub focus: Vec<FocusTally>,
    /// `starts[a - 1]..starts[a]` are the entries of arity a.
    starts: Vec<usize>,
}

/// One focus interaction's tally and the index its column set asks for.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FocusTally {
    /// The tally.
    pub tally: Tally,
    /// λ of its focus set.
    pub lambda: u32,
}

/// Interactions a tally left out to stay within [`MAX_TALLY_CELLS`].
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LeftOut {
    /// The highest strength asked (the spec's or a focus set's): arities above the
    /// tallies' up to this one were not all counted.
    pub strength: usize,
    /// The cells counting every arity would have taken.
    pub cells: u128,
    /// The spec's own strength (below `strength` when a focus set asks more).
    pub base: usize,
    /// The focus sets not counted, in the spec's order: their factors' names and their
    /// strength (empty when the spec has none).
    pub focus: Vec<(Vec<String>, usize)>,
}

impl LeftOut {
    /// What was left out, for a report's notes: the base strength when its
    /// interactions did not all fit, and each focus set by its factors.
    pub fn note(&self, suite: &str, counted: usize) -> heddle_generator::Diagnostic {
        let mut missed = Vec::new();
        if counted < self.base {
            missed.push(self.base.to_string());
        }
        let sets: Vec<String> = self
            .focus
            .iter()
            .map(|(names, strength)| format!("`{}` at strength {strength}", names.join(", ")))
            .collect();
        match sets.len() {
            0 => {}
            1 => missed.push(format!("the focus set {}", sets[0])),
            _ => missed.push(format!("the focus sets {}", sets.join(" and "))),
        }
        heddle_generator::Diagnostic::new(format!(
            "suite `{suite}`: counted interactions of up to {counted} factors, not {}: all of \
             them take {} steps, more than the {MAX_TALLY_CELLS} a suite may take",
            missed.join(" nor "),
            self.cells
        ))
        .hint("lower the strength or split the factors into several suites to count them all")
    }
}

impl Tallies {
    /// Entries of one arity (empty outside 1..=strength).
    pub fn of_arity(&self, arity: usize) -> &[Tally] {
        if arity == 0 || arity > self.strength {
            return &[];
        }
        &self.entries[self.starts[arity - 1]..self.starts[arity]]
    }

    /// Single levels.
    pub fn levels(&self) -> &[Tally] {
        self.of_arity(1)
    }

    /// The t-way interactions.
    pub fn interactions(&self) -> &[Tally] {
        self.of_arity(self.strength)
    }

    /// The `i`th interaction of [`Tallies::items`]: an entry, or past them a focus
    /// interaction. The index suspects and follow-up candidates are named by.
    ///
    /// # Panics
    ///
    /// When `i` is not below the number of items, as indexing does.
    pub fn item(&self, i: usize) -> &Tally {
        match self.entries.get(i) {
            Some(t) => t,
            None => &self.focus[i - self.entries.len()].tally,
        }
    }

    /// Every interaction counted: the entries (arity 1 to t), then the focus
    /// interactions (each focus set's column sets at its own strength).
    pub fn items(&self) -> impl Iterator<Item = &Tally> {
        self.entries.iter().chain(self.focus.iter().map(|f| &f.tally))
    }

    /// The tally of one interaction, if the design contains it (a focus interaction
    /// above the strength among [`Tallies::focus`]).
    pub fn get(&self, interaction: &Interaction) -> Option<&Tally> {
        if interaction.arity() > self.strength {
            return self
                .focus
                .binary_search_by(|f| f.tally.interaction.cmp(interaction))
                .ok()
                .map(|i| &self.focus[i].tally);
        }
        let group = self.of_arity(interaction.arity());
        group
            .binary_search_by(|t| t.interaction.cmp(interaction))
            .ok()
            .map(|i| &group[i])
    }

    /// Sum over all rows.
    pub fn total(&self) -> Count {
        let mut c = Count::default();
        for r in &self.rows {
            c.merge(r);
        }
        c
    }
}

/// Most cells (design rows × column sets of arity 1 to t) one suite's tallies may
/// cost. Each cell is at most one entry of about 150 bytes, so a suite's tallies stay
/// within a few hundred megabytes and a second or two; a 3^17 suite at strength 4 stays
/// below it up to 650 rows.
pub const MAX_TALLY_CELLS: u64 = 1 << 21;

/// Design rows × column sets of arity 1 to `t` among `k` factors: the work of a tally,
/// computed without doing it (saturating).
pub fn tally_cells(rows: usize, k: usize, t: usize) -> (u128, u128) {
    let mut sets: u128 = 0;
    // C(k, a) from C(k, a - 1), exact at every step
    let mut choose: u128 = 1;
    for a in 1..=t.min(k) {
        choose = choose.saturating_mul((k - a + 1) as u128) / a as u128;
        sets = sets.saturating_add(choose);
    }
    (sets, sets.saturating_mul(rows as u128))
}

/// Tallies a spec's outcomes: every single level and every interaction up to the spec's
/// strength, with its runs, passes and failures. Several outcomes for one row (repeated
/// runs) all count.
pub fn tally(
    spec: &SpecRecord,
    outcomes: impl IntoIterator<Item = (usize, Outcome)>,
) -> Result<Tallies, SpecError> {
    spec::check(spec)?;
    let (rows, k, t) = (spec.rows.len(), spec.factors.len(), spec.strength as usize);
    let fits = |a: usize| tally_cells(rows, k, a).1 <= u128::from(MAX_TALLY_CELLS);
    let Some(counted) = (1..=t).rev().find(|&a| fits(a)) else {
        return Err(SpecError::TallyTooLarge {
            rows,
            sets: tally_cells(rows, k, 1).0,
        });
    };
    let mut tallies = tally_rows(&spec.rows, k, counted, outcomes);
    let focus = spec::focus(spec)?;
    let sets = heddle_generator::focus_sets(&focus);
    let focus_cells = (sets.len() as u128).saturating_mul(rows as u128);
    let base_cells = tally_cells(rows, k, t).1;
    if counted < t || base_cells.saturating_add(focus_cells) > u128::from(MAX_TALLY_CELLS) {
        if !sets.is_empty() || counted < t {
            let top = focus.iter().map(|f| f.strength).max().unwrap_or(t).max(t);
            let name = |c: usize| spec.factors.get(c).map_or_else(String::new, |f| f.name.clone());
            tallies.left_out = Some(LeftOut {
                strength: top,
                cells: base_cells.saturating_add(focus_cells),
                base: t,
                focus: focus
                    .iter()
                    .map(|f| (f.factors.iter().map(|&c| name(c)).collect(), f.strength))
                    .collect(),
            });
        }
    } else {
        tallies.count_focus(&spec.rows, sets);
    }
    Ok(tallies)
}

impl Tallies {
    /// The interactions of one focus set (of the spec these tallies count) among
    /// [`Tallies::focus`], by column set then levels: its own column sets, listed by the
    /// one function that lists them (the tallies hold each once, sorted by factors).
    pub fn focus_of(&self, f: &heddle_generator::Focus) -> Vec<&FocusTally> {
        let mut out = Vec::new();
        for (cols, _) in heddle_generator::focus_sets(std::slice::from_ref(f)) {
            let start = self.focus.partition_point(|t| t.tally.interaction.factors < cols);
            out.extend(
                self.focus[start..]
                    .iter()
                    .take_while(|t| t.tally.interaction.factors == cols),
            );
        }
        out
    }

    /// Counts the focus interactions of the column sets `sets` (as
    /// [`heddle_generator::focus_sets`] lists them) over `rows`, the rows these tallies
    /// count.
    pub(crate) fn count_focus(&mut self, rows: &[Vec<u8>], sets: Vec<(Vec<usize>, u32)>) {
        let mut keys = Vec::with_capacity(rows.len());
        for (cols, lambda) in sets {
            let mut entries = Vec::new();
            tally_set(rows, &cols, &self.rows, &mut keys, &mut entries);
            self.focus
                .extend(entries.into_iter().map(|tally| FocusTally { tally, lambda }));
        }
    }
}

/// [`tally`] over plain rows; the caller guarantees `rows` have `k` levels each and
/// `1 <= t <= k.min(8)` (as [`spec::check`] checks).
pub(crate) fn tally_rows(
    rows: &[Vec<u8>],
    k: usize,
    t: usize,
    outcomes: impl IntoIterator<Item = (usize, Outcome)>,
) -> Tallies {
    let mut per_row = vec![Count::default(); rows.len()];
    let mut unknown_rows = 0;
    for (r, outcome) in outcomes {
        match per_row.get_mut(r) {
            Some(c) => c.add(outcome),
            None => unknown_rows += 1,
        }
    }
    let mut entries = Vec::new();
    let mut starts = vec![0];
    let mut keys: Vec<(u64, u32)> = Vec::with_capacity(rows.len());
    for arity in 1..=t {
        let mut cols: Vec<usize> = (0..arity).collect();
        loop {
            tally_set(rows, &cols, &per_row, &mut keys, &mut entries);
            if !next_subset(&mut cols, k) {
                break;
            }
        }
        starts.push(entries.len());
    }
    Tallies {
        strength: t,
        rows: per_row,
        entries,
        unknown_rows,
        left_out: None,
        focus: Vec::new(),
        starts,
    }
}

/// Appends the tally of every combination of levels the rows show on the column set
/// `cols` (at most 8 columns), in level order; `keys` is scratch.
fn tally_set(
    rows: &[Vec<u8>],
    cols: &[usize],
    per_row: &[Count],
    keys: &mut Vec<(u64, u32)>,
    entries: &mut Vec<Tally>,
) {
    let arity = cols.len();
    keys.clear();
    keys.extend(rows.iter().enumerate().map(|(i, row)| {
        // one byte per factor, first factor most significant, so key order is the
        // lexicographic order of the levels
        let key = cols.iter().fold(0u64, |acc, &c| (acc << 8) | u64::from(row[c]));
        (key, i as u32)
    }));
    keys.sort_unstable();
    for group in keys.chunk_by(|a, b| a.0 == b.0) {
        let key = group[0].0;
        let levels = (0..arity).map(|j| (key >> (8 * (arity - 1 - j))) as u8).collect();
        let mut count = Count::default();
        for &(_, r) in group {
            count.merge(&per_row[r as usize]);
        }
        entries.push(Tally {
            interaction: Interaction {
                factors: cols.to_vec(),
                levels,
            },
            rows: group.iter().map(|&(_, r)| r).collect(),
            count,
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fixture::{SpecBuilder, oa9};
    use proptest::prelude::*;

    fn spec_of(levels: &[usize], t: u32, rows: Vec<Vec<u8>>) -> SpecRecord {
        SpecBuilder::new("f")
            .numbered(levels)
            .strength(t)
            .rows(rows)
            .build()
    }

    /// Every interaction of arity 1..=t over the full level space (present in the
    /// design or not), counted by scanning the outcome list directly.
    fn brute_force(spec: &SpecRecord, outcomes: &[(usize, Outcome)]) -> Vec<(Interaction, Vec<u32>, Count)> {
        let k = spec.factors.len();
        let mut out = Vec::new();
        for arity in 1..=spec.strength as usize {
            for mask in 0u32..(1 << k) {
                if mask.count_ones() as usize != arity {
                    continue;
                }
                let factors: Vec<usize> = (0..k).filter(|i| mask & (1 << i) != 0).collect();
                let space: usize = factors.iter().map(|&f| spec.factors[f].labels.len()).product();
                for mut code in 0..space {
                    let mut levels = vec![0u8; arity];
                    for j in (0..arity).rev() {
                        let v = spec.factors[factors[j]].labels.len();
                        levels[j] = (code % v) as u8;
                        code /= v;
                    }
                    let it = Interaction {
                        factors: factors.clone(),
                        levels: levels.clone(),
                    };
                    let rows: Vec<u32> = (0..spec.rows.len())
                        .filter(|&r| factors.iter().zip(&levels).all(|(&f, &l)| spec.rows[r][f] == l))
                        .map(|r| r as u32)
                        .collect();
                    let mut count = Count::default();
                    for &(r, o) in outcomes {
                        if rows.contains(&(r as u32)) {
                            count.add(o);
                        }
                    }
                    out.push((it, rows, count));
                }
            }
        }
        out
    }

    fn check_against_brute_force(spec: &SpecRecord, outcomes: &[(usize, Outcome)]) {
        let tallies = tally(spec, outcomes.iter().copied()).unwrap();
        let expected = brute_force(spec, outcomes);
        let present: Vec<_> = expected.iter().filter(|(_, rows, _)| !rows.is_empty()).collect();
        assert_eq!(tallies.entries.len(), present.len());
        for (it, rows, count) in &expected {
            match tallies.get(it) {
                Some(t) => {
                    assert_eq!(&t.rows, rows, "{it:?}");
                    assert_eq!(&t.count, count, "{it:?}");
                }
                None => assert!(rows.is_empty(), "{it:?} missing"),
            }
        }
        // deterministic order: sorted by arity, then (factors, levels)
        assert!(tallies.entries.windows(2).all(|w| {
            let (a, b) = (&w[0].interaction, &w[1].interaction);
            (a.arity(), a) < (b.arity(), b)
        }));
        for a in 1..=spec.strength as usize {
            assert!(tallies.of_arity(a).iter().all(|t| t.interaction.arity() == a));
        }
    }

    #[test]
    fn an_orthogonal_array_shows_every_pair_lambda_times() {
        // index 1 array run twice per row: each pair interaction has exactly 1 design row
        // and 2 runs, each single level 9 / 3 = 3 rows (Hedayat, Sloane & Stufken 1999,
        // Definition 1.1 and the remark that an OA of strength t is one of strength t-1)
        let spec = spec_of(&[3, 3, 3, 3], 2, oa9());
        let outcomes: Vec<(usize, Outcome)> = (0..9).chain(0..9).map(|r| (r, Outcome::Passed)).collect();
        let tallies = tally(&spec, outcomes).unwrap();
        assert_eq!(tallies.interactions().len(), 6 * 9);
        assert!(
            tallies
                .interactions()
                .iter()
                .all(|t| t.rows.len() == 1 && t.count.runs == 2)
        );
        assert_eq!(tallies.levels().len(), 12);
        assert!(
            tallies
                .levels()
                .iter()
                .all(|t| t.rows.len() == 3 && t.count.passes == 6)
        );
    }

    #[test]
    fn a_planted_pair_fault_fails_exactly_its_interaction() {
        // in an OA of index 1 a fault on (p0 = 1, p2 = 2) fails one row; that pair is the
        // only interaction of arity 2 whose every run failed
        let spec = spec_of(&[3, 3, 3, 3], 2, oa9());
        let outcomes: Vec<(usize, Outcome)> = oa9()
            .iter()
            .enumerate()
            .map(|(r, row)| {
                (
                    r,
                    if row[0] == 1 && row[2] == 2 {
                        Outcome::Failed
                    } else {
                        Outcome::Passed
                    },
                )
            })
            .collect();
        let tallies = tally(&spec, outcomes.clone()).unwrap();
        let all_failed: Vec<&Interaction> = tallies
            .interactions()
            .iter()
            .filter(|t| t.count.runs > 0 && t.count.passes == 0)
            .map(|t| &t.interaction)
            .collect();
        // the failing row (1, b, 2, ·) has a+b ≡ 2, so b = 1 and a+2b ≡ 0: row (1,1,2,0);
        // its 6 pairs all failed once; the report must then rank among them
        assert_eq!(all_failed.len(), 6);
        assert!(all_failed.contains(&&Interaction {
            factors: vec![0, 2],
            levels: vec![1, 2]
        }));
        check_against_brute_force(&spec, &outcomes);
    }

    #[test]
    fn excluded_interactions_are_absent_and_unrun_rows_count_zero() {
        let rows = vec![vec![0, 0], vec![0, 1], vec![1, 0]];
        let spec = spec_of(&[2, 2], 2, rows);
        let tallies = tally(&spec, [(0, Outcome::Failed), (7, Outcome::Passed)]).unwrap();
        assert_eq!(tallies.unknown_rows, 1);
        assert_eq!(tallies.interactions().len(), 3);
        let missing = Interaction {
            factors: vec![0, 1],
            levels: vec![1, 1],
        };
        assert!(tallies.get(&missing).is_none());
        let unrun = tallies
            .get(&Interaction {
                factors: vec![0, 1],
                levels: vec![1, 0],
            })
            .unwrap();
        assert_eq!(unrun.count, Count::default());
        assert_eq!(tallies.total().failures, 1);
        assert_eq!(
            unrun.interaction.describe(&spec),
            Some(vec![("f0", "1"), ("f1", "0")])
        );
    }

    #[test]
    fn cells_are_rows_times_column_sets() {
        // Σ_{a=1..8} C(24, a) = 24 + 276 + 2024 + 10626 + 42504 + 134596 + 346104 + 735471
        // (binomial coefficients, Pascal's triangle)
        assert_eq!(tally_cells(4, 24, 8), (1_271_625, 4 * 1_271_625));
        // Σ_{a=1..4} C(17, a) = 17 + 136 + 680 + 2380
        assert_eq!(tally_cells(650, 17, 4), (3213, 650 * 3213));
        assert_eq!(tally_cells(0, 3, 2), (6, 0));
        assert_eq!(
            tally_cells(5, 2, 8),
            (3, 15),
            "the strength is capped at the factors"
        );
    }

    #[test]
    fn a_hand_made_spec_too_large_to_count_is_counted_as_far_as_the_budget_goes() {
        // 40 one-level factors at strength 8: 1.0e8 column sets, each an entry of its
        // own; up to 5 factors, Σ_{a≤5} C(40, a) = 760 098 cells fit, 6 would not
        // (+ C(40, 6) = 3 838 380)
        let spec = spec_of(&[1; 40], 8, vec![vec![0; 40]]);
        let t = tally(&spec, [(0, Outcome::Passed)]).unwrap();
        assert_eq!(t.strength, 5);
        assert_eq!(t.entries.len(), 760_098);
        assert_eq!(
            t.left_out,
            Some(LeftOut {
                strength: 8,
                cells: 100_146_723,
                base: 8,
                focus: Vec::new(),
            })
        );
        let note = t.left_out.clone().unwrap().note("f", t.strength).one_line();
        assert_eq!(
            note,
            "suite `f`: counted interactions of up to 5 factors, not 8: all of them take \
             100146723 steps, more than the 2097152 a suite may take; hint: lower the strength \
             or split the factors into several suites to count them all"
        );
        // 24 two-level factors at strength 8 with 4 rows: 5.1 million cells; 4 times
        // Σ_{a≤6} C(24, a) = 4 · 190 050 = 760 200 fit, with 7 factors 2 144 616 would not
        let rows = (0..4u8)
            .map(|r| (0..24).map(|c| (r >> (c % 2)) & 1).collect())
            .collect();
        let spec = spec_of(&[2; 24], 8, rows);
        let t = tally(&spec, []).unwrap();
        assert_eq!(
            (t.strength, t.left_out.map(|l| l.cells)),
            (6, Some(4 * 1_271_625))
        );
        // a spec whose single levels alone are too many is refused
        let spec = spec_of(&[2; 3000], 1, vec![vec![0; 3000]; 700]);
        let err = tally(&spec, []).unwrap_err();
        assert!(
            matches!(
                err,
                SpecError::TallyTooLarge {
                    rows: 700,
                    sets: 3000
                }
            ),
            "{err:?}"
        );
        assert!(
            err.to_string().contains("700 rows over 3000 column sets"),
            "{err}"
        );
    }

    #[test]
    fn a_spec_at_the_budget_is_counted() {
        // 3^17 at strength 4: 3213 column sets, so 652 rows stay within 2^21 cells
        let rows: Vec<Vec<u8>> = (0..652u32)
            .map(|r| (0..17).map(|c| ((r / 3u32.pow(c % 6)) % 3) as u8).collect())
            .collect();
        let spec = spec_of(&[3; 17], 4, rows);
        let t = tally(&spec, [(0, Outcome::Failed)]).unwrap();
        assert_eq!((t.rows.len(), t.strength, t.left_out), (652, 4, None));
        let mut more = spec.clone();
        more.rows.push(vec![0; 17]);
        more.row_names.push("row_652".into());
        let t = tally(&more, []).unwrap();
        assert_eq!((t.strength, t.left_out.map(|l| l.strength)), (3, Some(4)));
    }

    #[test]
    fn invalid_specs_are_refused_not_indexed() {
        let spec = spec_of(&[2], 1, vec![vec![5]]);
        assert!(tally(&spec, []).is_err());
    }

    #[test]
    fn interaction_helpers() {
        let big = Interaction {
            factors: vec![0, 2],
            levels: vec![1, 0],
        };
        let small = Interaction {
            factors: vec![2],
            levels: vec![0],
        };
        assert!(big.contains(&small) && !small.contains(&big));
        assert!(big.in_row(&[1, 9, 0]) && !big.in_row(&[1, 9, 1]) && !big.in_row(&[1]));
        let mut c = Count::default();
        assert_eq!(c.pass_rate(), None);
        c.add(Outcome::Passed);
        c.add(Outcome::Failed);
        c.add(Outcome::PanickedExpected);
        assert_eq!((c.runs, c.passes, c.failures), (3, 2, 1));
        assert!(c.is_mixed());
    }

    fn arb_case() -> impl Strategy<Value = (SpecRecord, Vec<(usize, Outcome)>)> {
        (1usize..=5, 1u32..=3)
            .prop_flat_map(|(k, t)| (proptest::collection::vec(1usize..=4, k), Just(t.min(k as u32))))
            .prop_flat_map(|(levels, t)| {
                let row = levels.iter().map(|&v| 0..v as u8).collect::<Vec<_>>();
                (Just(levels), Just(t), proptest::collection::vec(row, 0..12))
            })
            .prop_flat_map(|(levels, t, rows)| {
                let n = rows.len();
                let outcome = prop_oneof![
                    Just(Outcome::Passed),
                    Just(Outcome::Failed),
                    Just(Outcome::PanickedExpected)
                ];
                let outcomes = proptest::collection::vec((0..n + 2, outcome), 0..30);
                (Just(spec_of(&levels, t, rows)), outcomes)
            })
    }

    proptest! {
        #[test]
        fn matches_brute_force_on_small_suites((spec, outcomes) in arb_case()) {
            check_against_brute_force(&spec, &outcomes);
        }
    }

    #[test]
    fn focus_sets_are_tallied_at_their_own_strength() {
        // 3^4 at strength 2 with focus sets {0, 1, 2} at 3 (λ = 2) and {1, 2, 3} at 3: the
        // full factorial 3^4 shows each triple of levels in exactly 3 rows (the fourth
        // factor free), so every focus interaction appears with 3 rows; the pairs of all
        // factors keep their arity-2 entries (variable strength, Cohen, Colbourn,
        // Collofello, Gibbons and Mugridge 2003)
        let rows: Vec<Vec<u8>> = (0..81u8)
            .map(|x| vec![x / 27, x / 9 % 3, x / 3 % 3, x % 3])
            .collect();
        let spec = SpecBuilder::new("f")
            .numbered(&[3, 3, 3, 3])
            .strength(2)
            .focus(&[2, 0, 1], 3, 2)
            .focus(&[1, 2, 3], 3, 1)
            .rows(rows.clone())
            .build();
        let outcomes: Vec<(usize, Outcome)> = (0..81)
            .map(|r| (r, if r == 5 { Outcome::Failed } else { Outcome::Passed }))
            .collect();
        let tallies = tally(&spec, outcomes).unwrap();
        assert_eq!(tallies.interactions().len(), 6 * 9);
        assert_eq!(tallies.focus.len(), 2 * 27);
        // sorted by factors then levels, so `get` finds every one by binary search
        assert!(
            tallies
                .focus
                .windows(2)
                .all(|w| w[0].tally.interaction < w[1].tally.interaction)
        );
        for f in &tallies.focus {
            let it = &f.tally.interaction;
            let brute: Vec<u32> = (0..81u32).filter(|&r| it.in_row(&rows[r as usize])).collect();
            assert_eq!(f.tally.rows, brute, "{it:?}");
            assert_eq!(f.tally.count.failures, u64::from(brute.contains(&5)), "{it:?}");
            let want = if it.factors == [0, 1, 2] { 2 } else { 1 };
            assert_eq!(f.lambda, want, "{it:?}");
            assert_eq!(tallies.get(it), Some(&f.tally));
        }
        // a spec line with a focus set the engine refuses is refused as damaged
        let bad = SpecBuilder::new("f")
            .numbered(&[3, 3, 3])
            .strength(2)
            .focus(&[0, 1], 3, 1)
            .rows(vec![vec![0, 0, 0]])
            .build();
        let err = tally(&bad, []).unwrap_err().to_string();
        assert!(
            err.contains("focus set #1 has strength 3 over only 2 factors"),
            "{err}"
        );
        let spec = crate::engine_spec(&spec).unwrap();
        assert_eq!(spec.focus.len(), 2);
        assert_eq!(
            (spec.focus[0].factors.clone(), spec.focus[0].lambda),
            (vec![2, 0, 1], 2)
        );
    }

    #[test]
    fn focus_sets_that_do_not_fit_are_named_in_the_note() {
        // 20 two-level factors at strength 2 over 500 rows: 500 · (20 + 190) = 105 000
        // cells fit; a focus set of all 20 at strength 4 adds 500 · C(20, 4) = 2 422 500
        // (C(20, 4) = 4845), more than 2^21, so it is left out and named
        let rows: Vec<Vec<u8>> = (0..500u32)
            .map(|r| (0..20).map(|c| ((r >> (c % 9)) & 1) as u8).collect())
            .collect();
        let all: Vec<u32> = (0..20).collect();
        let spec = SpecBuilder::new("f")
            .numbered(&[2; 20])
            .strength(2)
            .focus(&all, 4, 1)
            .focus(&[3, 1, 2], 3, 1)
            .rows(rows)
            .build();
        let t = tally(&spec, []).unwrap();
        assert!(t.focus.is_empty());
        let left = t.left_out.clone().unwrap();
        assert_eq!(
            (left.strength, left.base, left.cells),
            (4, 2, 105_000 + 2_422_500 + 500)
        );
        assert_eq!(
            left.focus[1],
            (vec!["f3".to_string(), "f1".into(), "f2".into()], 3)
        );
        let note = left.note("f", t.strength).one_line();
        assert!(
            note.starts_with(
                "suite `f`: counted interactions of up to 2 factors, not the focus sets `f0, f1, \
                 f2, f3, f4, f5, f6, f7, f8, f9, f10, f11, f12, f13, f14, f15, f16, f17, f18, f19` \
                 at strength 4 and `f3, f1, f2` at strength 3: all of them take 2528000 steps"
            ),
            "{note}"
        );
    }

    #[test]
    fn subsets_enumerate_in_lexicographic_order() {
        let mut cols = vec![0, 1];
        let mut seen = vec![cols.clone()];
        while next_subset(&mut cols, 4) {
            seen.push(cols.clone());
        }
        assert_eq!(seen, [[0, 1], [0, 2], [0, 3], [1, 2], [1, 3], [2, 3]]);
    }
}
