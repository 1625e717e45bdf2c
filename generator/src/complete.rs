//! Rows with unset cells, completed: what carrying a pinned design over to a changed spec
//! needs (the columns of added factors are unset in the old rows), and what [`crate::generate`]
//! does with required rows that leave cells open.
//!
//! Each row is completed in turn, given the rows kept before it, by horizontal growth as
//! in IPOG (Lei, Kacker, Kuhn, Okun & Lawrence 2007, "IPOG: a general strategy for t-way
//! software testing"): every unset cell, in column order, takes the level that covers the
//! most interactions still short of λ among the t-sets through its column whose other
//! columns are set, ties to the lowest level, among the levels that keep the row
//! completable to an allowed row (an exact question, see `constraints`). Taking the
//! lowest level on ties, rather than a random one, keeps the result a function of the
//! rows alone, whatever the seed.

use crate::constraints::Constraints;
use crate::demand::Demand;
use crate::error::Error;
use crate::factor::{Row, UNSET};
use crate::focused::Mixed;
use crate::interactions::{Layout, Numbering, for_each_subset};
use crate::model::Spec;

/// Completed rows, and what became of the others.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Completion {
    /// The rows kept, every cell set, in their input order.
    pub rows: Vec<Row>,
    /// Input positions of the rows no fill of their unset cells makes allowed (a complete
    /// row that an exclude rules out is one of them).
    pub excluded: Vec<usize>,
    /// Input positions of the rows that, completed, cover nothing the rows kept before
    /// them left short of λ.
    pub redundant: Vec<usize>,
}

/// Completes `partial` rows (one entry per factor of `spec`, [`UNSET`] where open) in
/// order, dropping the rows that no fill makes allowed and those that add no coverage.
/// The spec's own required rows play no part (pass them first in `partial` to count
/// them).
///
/// Errors: the spec is refused as [`Spec::validate`] would refuse it (its required rows
/// aside), or a row has the wrong width or a level its factor lacks
/// ([`Error::RequiredRowWidth`], [`Error::RequiredRowLevel`]: the rows are meant to
/// become required rows).
///
/// ```
/// use heddle_generator::{complete, Factor, Spec, UNSET, Expr};
/// // three binary factors; the third was added after the first two were pinned
/// let spec = Spec::new(vec![
///     Factor::numbered("a", 2),
///     Factor::numbered("b", 2),
///     Factor::numbered("c", 2),
/// ])
/// .exclude(Expr::is(0, 1).and(Expr::is(2, 1)));
/// let old = [[0, 0], [0, 1], [1, 0], [1, 1], [1, 1]];
/// let partial: Vec<Vec<u8>> = old.iter().map(|r| vec![r[0], r[1], UNSET]).collect();
/// let c = complete(&spec, &partial).unwrap();
/// // c = 1 is excluded beside a = 1, so those rows take c = 0
/// assert_eq!(c.rows, [[0, 0, 0], [0, 1, 1], [1, 0, 0], [1, 1, 0]]);
/// // the repeated last row adds nothing
/// assert_eq!(c.redundant, [4]);
/// assert!(c.excluded.is_empty());
/// ```
pub fn complete(spec: &Spec, partial: &[Row]) -> Result<Completion, Error> {
    spec.validate_problem()?;
    let interactions = crate::interactions::count(&spec.levels(), spec.strength);
    if interactions > crate::MAX_INTERACTIONS as u128 {
        // a closed-form spec passes validation, but completing rows counts interactions
        return Err(Error::TooLarge {
            interactions,
            limit: crate::MAX_INTERACTIONS,
        });
    }
    spec.validate_rows(partial, false)?;
    Ok(complete_valid(spec, partial, false))
}

/// [`complete`] on a validated spec and rows; with `keep_redundant`, rows that add no
/// coverage are kept (required rows stay required).
/// With focus sets, the demand is the whole one: every base t-set at λ and every focus
/// column set at its own index, so rows a focus set needs are neither filled against it
/// nor dropped as redundant.
pub(crate) fn complete_valid(spec: &Spec, partial: &[Row], keep_redundant: bool) -> Completion {
    let levels = spec.levels();
    let mut cons = Constraints::new(&spec.excludes, &levels);
    if spec.focus.is_empty() {
        let layout = Layout::new(&levels, spec.strength);
        let (possible, _) = cons.possible(&layout);
        let demand = Demand::new(&possible, spec.lambda);
        let gain =
            |row: &[u8], c: usize, others: &[usize], need: &[u16]| column_gain(&layout, row, c, others, need);
        fill(&layout, demand, &mut cons, &levels, partial, keep_redundant, gain)
    } else {
        let mixed = Mixed::new(spec, &mut cons);
        let demand = Demand::from_need(mixed.need.clone());
        let gain = |row: &[u8], c: usize, _: &[usize], need: &[u16]| mixed.gain_at(row, c, need, 0) as usize;
        fill(
            &mixed.inc,
            demand,
            &mut cons,
            &levels,
            partial,
            keep_redundant,
            gain,
        )
    }
}

/// The completion loop of [`complete_valid`] over a numbering, its demand and the gain of
/// a level in a column (`gain(row, column, other set columns, need)`).
fn fill(
    numbering: &impl Numbering,
    mut demand: Demand,
    cons: &mut Constraints,
    levels: &[usize],
    partial: &[Row],
    keep_redundant: bool,
    gain: impl Fn(&[u8], usize, &[usize], &[u16]) -> usize,
) -> Completion {
    let mut out = Completion::default();
    let mut others = Vec::with_capacity(levels.len());
    'rows: for (i, p) in partial.iter().enumerate() {
        let mut row = p.clone();
        if !cons.extendable(&row) {
            out.excluded.push(i);
            continue;
        }
        for c in 0..row.len() {
            if row[c] != UNSET {
                continue;
            }
            others.clear();
            others.extend((0..row.len()).filter(|&o| o != c && row[o] != UNSET));
            let mut best: Option<(usize, u8)> = None;
            for l in 0..levels[c] as u8 {
                row[c] = l;
                if !cons.extendable(&row) {
                    continue;
                }
                let g = gain(&row, c, &others, &demand.need);
                if best.is_none_or(|(bg, _)| g > bg) {
                    best = Some((g, l));
                }
            }
            match best {
                Some((_, l)) => row[c] = l,
                // the row was completable before this cell, so some level keeps it so
                None => {
                    out.excluded.push(i);
                    continue 'rows;
                }
            }
        }
        if !keep_redundant && demand.gain(numbering, &row) == 0 {
            out.redundant.push(i);
            continue;
        }
        demand.cover(numbering, &row);
        out.rows.push(row);
    }
    out
}

/// Interactions still short of λ on the t-sets through column `c` whose other columns are
/// among `others` (set in `row`).
fn column_gain(layout: &Layout, row: &[u8], c: usize, others: &[usize], need: &[u16]) -> usize {
    let mut gain = 0;
    let mut cols = Vec::with_capacity(layout.t);
    for_each_subset(others, layout.t - 1, |sub| {
        cols.clear();
        cols.extend_from_slice(sub);
        let at = cols.partition_point(|&o| o < c);
        cols.insert(at, c);
        gain += usize::from(need[layout.index(&cols, row)] > 0);
    });
    gain
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{Effort, Expr, generate, verify};

    fn spec(levels: &[usize]) -> Spec {
        Spec::numbered(levels)
    }

    /// The rule of the module doc, computed the slow way: every allowed complete row
    /// listed, every t-set enumerated as a bit mask, counts kept per interaction.
    fn naive(levels: &[usize], t: usize, lambda: u32, excludes: &[Expr], partial: &[Row]) -> Completion {
        let k = levels.len();
        let mut all: Vec<Row> = vec![vec![]];
        for &v in levels {
            all = all
                .into_iter()
                .flat_map(|r| (0..v as u8).map(move |l| [r.clone(), vec![l]].concat()))
                .collect();
        }
        let allowed: Vec<Row> = all
            .into_iter()
            .filter(|r| !excludes.iter().any(|e| e.eval(r)))
            .collect();
        let fits = |p: &[u8], r: &[u8]| p.iter().zip(r).all(|(&a, &b)| a == UNSET || a == b);
        let mut kept: Vec<Row> = Vec::new();
        let mut out = Completion::default();
        let short = |kept: &[Row], cols: &[usize], row: &[u8]| {
            let shows = |r: &[u8]| cols.iter().all(|&c| r[c] == row[c]);
            allowed.iter().any(|r| shows(r)) && (kept.iter().filter(|r| shows(r)).count() as u32) < lambda
        };
        let tsets: Vec<Vec<usize>> = (0u32..1 << k)
            .filter(|m| m.count_ones() as usize == t)
            .map(|m| (0..k).filter(|&c| m >> c & 1 == 1).collect())
            .collect();
        'rows: for (i, p) in partial.iter().enumerate() {
            let mut row = p.clone();
            if !allowed.iter().any(|r| fits(&row, r)) {
                out.excluded.push(i);
                continue;
            }
            for c in 0..k {
                if row[c] != UNSET {
                    continue;
                }
                let mut best: Option<(usize, u8)> = None;
                for l in 0..levels[c] as u8 {
                    let mut trial = row.clone();
                    trial[c] = l;
                    if !allowed.iter().any(|r| fits(&trial, r)) {
                        continue;
                    }
                    let g = tsets
                        .iter()
                        .filter(|s| s.contains(&c) && s.iter().all(|&o| trial[o] != UNSET))
                        .filter(|s| short(&kept, s, &trial))
                        .count();
                    if best.is_none_or(|(bg, _)| g > bg) {
                        best = Some((g, l));
                    }
                }
                match best {
                    Some((_, l)) => row[c] = l,
                    None => {
                        out.excluded.push(i);
                        continue 'rows;
                    }
                }
            }
            if !tsets.iter().any(|s| short(&kept, s, &row)) {
                out.redundant.push(i);
                continue;
            }
            kept.push(row.clone());
            out.rows.push(row);
        }
        out
    }

    #[test]
    fn agrees_with_the_rule_computed_naively() {
        use proptest::prelude::*;
        use proptest::test_runner::{Config, TestRunner};
        let mut runner = TestRunner::new(Config {
            cases: 96,
            failure_persistence: None,
            ..Config::default()
        });
        let strategy = (
            prop::collection::vec(1usize..=3, 2..=5),
            1usize..=3,
            1u32..=2,
            prop::collection::vec((0usize..5, 0u8..3, 0usize..5, 0u8..3), 0..=2),
            prop::collection::vec(prop::collection::vec(0u8..4, 5), 0..=8),
        );
        runner
            .run(&strategy, |(levels, t, lambda, pairs, raw)| {
                let k = levels.len();
                let t = t.min(k);
                // excludes: conjunctions of two atoms on existing factors and levels
                let excludes: Vec<Expr> = pairs
                    .iter()
                    .map(|&(f, l, g, m)| {
                        let (f, g) = (f % k, g % k);
                        Expr::is(f, l % levels[f] as u8).and(Expr::is(g, m % levels[g] as u8))
                    })
                    .collect();
                // cells: a level, or unset where the draw is past the level count
                let partial: Vec<Row> = raw
                    .iter()
                    .map(|r| {
                        (0..k)
                            .map(|c| if (r[c] as usize) < levels[c] { r[c] } else { UNSET })
                            .collect()
                    })
                    .collect();
                let mut s = spec(&levels).strength(t).lambda(lambda);
                s.excludes = excludes.clone();
                let got = complete(&s, &partial).map_err(|e| TestCaseError::fail(e.to_string()))?;
                prop_assert_eq!(got, naive(&levels, t, lambda, &excludes, &partial));
                Ok(())
            })
            .unwrap();
    }

    #[test]
    fn excluded_and_redundant_rows_are_reported() {
        let s = spec(&[2, 2, 2]).exclude(Expr::is(0, 0).and(Expr::is(1, 0)));
        let rows = vec![
            vec![0, 0, UNSET], // no fill helps: excluded
            vec![0, 1, UNSET],
            vec![0, 1, UNSET], // pairs (0,1) on f0 f1 already covered; the fill picks new ones
            vec![1, 1, 1],
            vec![1, 1, 1], // nothing new
        ];
        let c = complete(&s, &rows).unwrap();
        assert_eq!(c.excluded, [0]);
        assert_eq!(c.redundant, [4]);
        assert_eq!(c.rows.len(), 3);
        // the second copy of (0, 1, _) takes the level the first did not
        assert_ne!(c.rows[0][2], c.rows[1][2]);
        assert!(c.rows.iter().all(|r| !r.contains(&UNSET)));
    }

    #[test]
    fn ties_go_to_the_lowest_allowed_level() {
        let s = spec(&[3, 3]).exclude(Expr::is(1, 0));
        let c = complete(&s, &[vec![0, UNSET]]).unwrap();
        assert_eq!(c.rows, [[0, 1]]);
    }

    #[test]
    fn bad_rows_are_refused() {
        let s = spec(&[2, 2]);
        assert_eq!(
            complete(&s, &[vec![0]]),
            Err(Error::RequiredRowWidth {
                row: 0,
                width: 1,
                factors: 2
            })
        );
        assert!(matches!(
            complete(&s, &[vec![0, 2]]),
            Err(Error::RequiredRowLevel { row: 0, .. })
        ));
        assert_eq!(
            complete(&s.clone().strength(3), &[]),
            Err(Error::StrengthAboveFactors {
                strength: 3,
                factors: 2
            })
        );
    }

    #[test]
    fn generate_completes_required_rows() {
        let s = spec(&[3, 3, 3, 3])
            .exclude(Expr::is(0, 2).and(Expr::is(3, 2)))
            .require(vec![2, UNSET, UNSET, UNSET])
            .require(vec![UNSET, 1, UNSET, 0]);
        let d = generate(&s, Effort::Fast).unwrap();
        assert_eq!(d.rows[0][0], 2);
        assert_ne!(d.rows[0][3], 2);
        assert_eq!((d.rows[1][1], d.rows[1][3]), (1, 0));
        assert!(d.rows.iter().all(|r| !r.contains(&UNSET)));
        assert!(verify(&s, &d.rows).is_ok());
        // a required row with no allowed completion is refused before any work
        let bad = spec(&[2, 2])
            .exclude(Expr::is(0, 0).and(Expr::is(1, 0)))
            .exclude(Expr::is(0, 0).and(Expr::is(1, 1)))
            .require(vec![0, UNSET]);
        assert_eq!(
            generate(&bad, Effort::Fast),
            Err(Error::RequiredRowNotCompletable { row: 0 })
        );
    }
}
