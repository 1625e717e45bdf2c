//! Strength-two designs for very many factors as products of smaller ones, nested: the
//! product (see `construct::product`) of designs on k₁ and k₂ columns that hold the v
//! constant rows has N₁ + N₂ − v rows on k₁·k₂ columns and holds them too, so a design on
//! k columns costs the sum of its factors' N − v. Which factors is the whole question:
//! N − v grows with ln k, and a small design below that line pays back at every level of
//! nesting — 3^16 holds the constant rows in 15 rows (12 / ln 16 = 4.3, where 3^32 takes
//! 20: 4.9), and 3^1000 as 3^16 × 3^63 takes 35 rows where two designs on 32 columns take
//! 37 (measured in the tight mode; the best known is 32). An orthogonal array is not
//! always such a design: two rows of OA(9; 2, 4, 3) always agree in one column, so it
//! holds no two disjoint rows, let alone three.
//!
//! So each k tries two splits: the small base with the least (N − v) / ln k, and k₁ near
//! √k (which wins where no small design stands out); below [`PRODUCT_COLUMNS`] the
//! engine's own design too. Designs are made once per column count. The fast mode, held
//! to its bound on work, chooses its base among the constructions alone and splits only
//! from [`PRODUCT_COLUMNS`] on (9^100: Bose's 9^9 times a design on 12 columns, 200
//! rows, where the Bose product of 11-level arrays with the tabu search gave 222).

use std::collections::BTreeMap;

use crate::construct::{self, constant_rows, product, split};
use crate::engine::generate_from;
use crate::factor::Row;
use crate::model::{Effort, Spec};
use crate::work::Work;

/// Factors from which a t = 2 spec also tries the product, and below which a factor is
/// made directly by the engine too: there the greedy over all pairs is quick and beats
/// it (measured on the benchmark's 3^k).
pub(crate) const PRODUCT_COLUMNS: usize = 100;

/// Most columns of the base (see `Maker::base`) in the tight mode: past about 20 a design
/// on k columns no longer gains on (N − v) / ln k (measured on 3^k: 3^16 holds the
/// constant rows in 15, 12 / ln 16 = 4.3; 3^32 in 20, 4.9).
const BASE_COLUMNS: usize = 20;

/// Relative difference below which two bases' costs count as equal (see `Maker::base`).
const COST_TIE: f64 = 1e-9;

/// Steps the search for v mutually disjoint rows may take in one design: a clique
/// search, quick on the designs met here but exponential at worst, so bounded.
const DISJOINT_STEPS: u64 = 200_000;

/// A design that holds the v constant rows, with its method.
#[derive(Clone, Debug)]
pub(crate) struct Made {
    pub method: String,
    pub rows: Vec<Row>,
}

/// How factors are made: the levels, the seed and effort of the spec asking, and the
/// steps each engine run may take in the fast mode.
pub(crate) struct Maker<'a> {
    v: usize,
    seed: u64,
    effort: Effort,
    table: bool,
    per_run: u64,
    work: &'a mut Work,
    made: BTreeMap<usize, Option<Made>>,
    /// The base once chosen (`Some(None)` while it is being chosen, so that the small
    /// designs it compares are made without it).
    base: Option<Option<usize>>,
}

impl<'a> Maker<'a> {
    pub fn new(v: usize, seed: u64, effort: Effort, table: bool, per_run: u64, work: &'a mut Work) -> Self {
        Maker {
            v,
            seed,
            effort,
            table,
            per_run,
            work,
            made: BTreeMap::new(),
            base: None,
        }
    }

    /// The smallest design on k columns (k ≥ 2) holding the constant rows that the
    /// splits and the engine give; None when the work ran out before any.
    pub fn design(&mut self, k: usize) -> Option<Made> {
        if let Some(made) = self.made.get(&k) {
            return made.clone();
        }
        let mut best: Option<Made> = None;
        let mut keep = |m: Option<Made>| {
            if let Some(m) = m.filter(|m| best.as_ref().is_none_or(|b| m.rows.len() < b.rows.len())) {
                best = Some(m);
            }
        };
        if k < PRODUCT_COLUMNS {
            keep(self.direct(k));
        }
        // the fast mode splits only what is too large to make directly, as the engine's
        // own designs are made at a fraction of a fast run's steps each: at √k first, so
        // that the base's engine runs cannot starve it, then at a base taken from the
        // constructions alone
        let nested = matches!(self.effort, Effort::Tight { .. });
        if nested || k >= PRODUCT_COLUMNS {
            let base = if k > 4 { self.base(k) } else { None };
            let root = split(k).0;
            let splits = if nested {
                [base, Some(root)]
            } else {
                [Some(root), base]
            };
            for k1 in splits.into_iter().flatten() {
                let k2 = k.div_ceil(k1);
                if k1 < 2 || k1 >= k || k2 < 2 || k2 >= k {
                    continue;
                }
                keep(self.product(k1, k2));
            }
        }
        self.made.insert(k, best.clone());
        best
    }

    /// The product of the designs on k1 and k2 columns.
    fn product(&mut self, k1: usize, k2: usize) -> Option<Made> {
        let a = self.design(k1)?;
        let b = self.design(k2)?;
        let rows = product(&a.rows, &b.rows, &vec![self.v; k1 * k2]);
        Some(Made {
            method: format!("product({}; {})", a.method, b.method),
            rows,
        })
    }

    /// The small column count (below k, from 2 to [`BASE_COLUMNS`]) whose design has the
    /// least (N − v) / ln k: the base every nesting level pays once. The fast mode
    /// compares the constructions' designs only, which cost no engine run. Costs within
    /// [`COST_TIE`] of each other count as equal and the fewer columns win, so that a
    /// last bit of `ln` (which may differ between platforms) cannot change the rows:
    /// 3^4 in 11 rows and 3^16 in 19 would tie exactly.
    fn base(&mut self, k: usize) -> Option<usize> {
        if self.base.is_none() {
            self.base = Some(None);
            let mut best: Option<(f64, usize)> = None;
            for b in 2..=BASE_COLUMNS {
                let d = match self.effort {
                    Effort::Tight { .. } => self.design(b),
                    Effort::Fast => self.constructed(b),
                };
                let Some(d) = d else { continue };
                let cost = d.rows.len().saturating_sub(self.v) as f64 / (b as f64).ln();
                if best.is_none_or(|(c, _)| cost < c * (1.0 - COST_TIE)) {
                    best = Some((cost, b));
                }
            }
            self.base = Some(best.map(|(_, b)| b));
        }
        self.base.flatten().filter(|&b| b < k)
    }

    /// The construction for v^k where it has v mutually disjoint rows, relabelled so
    /// that they are the constant rows (a Bose array on q of its q + 1 columns has them).
    fn constructed(&mut self, k: usize) -> Option<Made> {
        let c = construct::best(&vec![self.v; k], 2, 1)?;
        let mut steps = 0;
        let picks = disjoint_rows(&c.rows, self.v, &mut steps);
        self.work.spend(steps);
        Some(Made {
            method: c.method,
            rows: with_constant_rows(&c.rows, &picks?),
        })
    }

    /// The engine's design for v^k holding the constant rows: the construction (see
    /// `constructed`) or the engine's design with the constant rows required, whichever
    /// is smaller.
    fn direct(&mut self, k: usize) -> Option<Made> {
        let levels = vec![self.v; k];
        let mut best = self.constructed(k);
        if self.work.left() == 0 {
            self.work.cut = true;
            return best;
        }
        let spec = constant_rows(self.v, k)
            .into_iter()
            .fold(Spec::numbered(&levels).seed(self.seed), Spec::require);
        let within = self.per_run.min(self.work.left());
        if let Ok(d) = generate_from(&spec, self.effort, within, self.table) {
            self.work.spend(d.stats.work);
            self.work.cut |= d.stats.pin_advised && !self.work.unbounded();
            if best.as_ref().is_none_or(|b| d.rows.len() < b.rows.len()) {
                best = Some(Made {
                    method: d.stats.method,
                    rows: d.rows,
                });
            }
        }
        best
    }
}

/// v rows of `rows` that differ pairwise in every column (whose levels, relabelled per
/// column, become the constant rows), if the bounded search finds them.
pub(crate) fn disjoint_rows(rows: &[Row], v: usize, steps: &mut u64) -> Option<Vec<usize>> {
    fn apart(a: &Row, b: &Row) -> bool {
        a.iter().zip(b).all(|(x, y)| x != y)
    }
    fn extend(rows: &[Row], v: usize, picked: &mut Vec<usize>, from: &[usize], steps: &mut u64) -> bool {
        if picked.len() == v {
            return true;
        }
        for (i, &r) in from.iter().enumerate() {
            if *steps > DISJOINT_STEPS || from.len() - i < v - picked.len() {
                return false;
            }
            *steps += (from.len() - i) as u64;
            let next: Vec<usize> = from[i + 1..]
                .iter()
                .copied()
                .filter(|&s| apart(&rows[r], &rows[s]))
                .collect();
            picked.push(r);
            if extend(rows, v, picked, &next, steps) {
                return true;
            }
            picked.pop();
        }
        false
    }
    let all: Vec<usize> = (0..rows.len()).collect();
    let mut picked = Vec::with_capacity(v);
    extend(rows, v, &mut picked, &all, steps).then_some(picked)
}

/// `rows` with each column's levels renamed so that row `picks[x]` shows x everywhere:
/// a renaming per column keeps every coverage property.
pub(crate) fn with_constant_rows(rows: &[Row], picks: &[usize]) -> Vec<Row> {
    let columns = rows.first().map_or(0, |r| r.len());
    let names: Vec<Vec<u8>> = (0..columns)
        .map(|c| {
            let mut name = vec![0u8; picks.len()];
            for (x, &p) in picks.iter().enumerate() {
                name[rows[p][c] as usize] = x as u8;
            }
            name
        })
        .collect();
    rows.iter()
        .map(|r| r.iter().enumerate().map(|(c, &x)| names[c][x as usize]).collect())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::verify::verify;
    use crate::work::FAST_WORK;

    fn holds_constant_rows(rows: &[Row], v: usize) -> bool {
        let k = rows[0].len();
        constant_rows(v, k).iter().all(|c| rows.contains(c))
    }

    #[test]
    fn a_bose_array_on_q_columns_gets_its_constant_rows() {
        // OA(q²; 2, q, q): the rows that shared a level in the dropped (q+1)-th column of
        // Bose's array differ everywhere else (two rows of an index-1 array agree in at
        // most one column), so q of them are mutually disjoint (Bose 1938)
        for q in [3usize, 4, 5, 7] {
            let levels = vec![q; q];
            let c = construct::best(&levels, 2, 1).expect("a construction for q^q");
            assert_eq!(c.rows.len(), q * q);
            let mut steps = 0;
            let picks = disjoint_rows(&c.rows, q, &mut steps).expect("q disjoint rows");
            let rows = with_constant_rows(&c.rows, &picks);
            assert!(holds_constant_rows(&rows, q), "q = {q}");
            let spec = Spec::numbered(&levels);
            assert!(verify(&spec, &rows).is_ok(), "q = {q}: relabelling kept coverage");
        }
    }

    #[test]
    fn a_bose_array_on_all_its_columns_has_no_two_disjoint_rows() {
        // OA(9; 2, 4, 3): a row agrees with the 8 others 4 × 2 times, at most once each
        // (index 1), so exactly once each: no pair is disjoint
        let c = construct::best(&[3; 4], 2, 1).expect("OA(9; 2, 4, 3)");
        assert_eq!(c.rows.len(), 9);
        let mut steps = 0;
        assert!(disjoint_rows(&c.rows, 2, &mut steps).is_none());
        assert!(steps > 0);
    }

    #[test]
    fn a_tie_between_bases_goes_to_fewer_columns() {
        // 3^4 in 11 rows and 3^16 in 19: (11 − 3) / ln 4 = (19 − 3) / ln 16 exactly; every
        // other column count far worse
        let mut work = Work::new(u64::MAX);
        // (the tight mode compares the designs made, which the test puts in place)
        let effort = Effort::Tight { budget: 1 };
        let mut maker = Maker::new(3, 0, effort, false, 0, &mut work);
        for b in 2..=BASE_COLUMNS {
            let n = match b {
                4 => 11,
                16 => 19,
                _ => 100,
            };
            let made = Made {
                method: String::new(),
                rows: vec![vec![0; b]; n],
            };
            maker.made.insert(b, Some(made));
        }
        assert_eq!(maker.base(1000), Some(4));
        // and a base is never k itself or more
        assert_eq!(maker.base(4), None);
    }

    #[test]
    fn the_fast_mode_nests_at_a_base_from_the_constructions() {
        // Bose's OA(25; 2, 5, 5) holds 5 disjoint rows (Bose 1938; see above), so it is
        // a base at (25 − 5) / ln 5; the product of two of them (Colbourn et al. 2006)
        // makes 5^25 in 25 + 25 − 5 = 45 rows, and 5^100 is then 25 + 45 − 5 = 65 rows,
        // where the split at √100 alone gives 72 (measured)
        let mut work = Work::new(FAST_WORK / 2);
        let mut maker = Maker::new(5, 0, Effort::Fast, false, FAST_WORK / 4, &mut work);
        let made = maker.design(100).expect("a design");
        assert_eq!(maker.base(100), Some(5));
        assert_eq!(made.rows.len(), 65, "{}", made.method);
        let rows = construct::collapse(&made.rows, &[5; 100]);
        assert!(holds_constant_rows(&rows, 5));
        assert!(verify(&Spec::numbered(&[5; 100]), &rows).is_ok());
    }

    #[test]
    fn nested_products_cover_and_keep_the_constant_rows() {
        // a tight budget small enough for a debug build: the base is searched among the
        // designs on 2 … 20 columns and 3^150 is made as products of them
        let effort = Effort::Tight { budget: 2_000 };
        let mut work = Work::new(u64::MAX);
        let mut maker = Maker::new(3, 0, effort, false, 0, &mut work);
        let made = maker.design(150).expect("a design");
        assert!(made.method.matches("product(").count() >= 1, "{}", made.method);
        let rows = construct::collapse(&made.rows, &[3; 150]);
        assert!(holds_constant_rows(&rows, 3));
        assert!(verify(&Spec::numbered(&[3; 150]), &rows).is_ok());
        // the product's size: the factors' sizes less the constant rows they share
        let base = maker.base(150).expect("a base below 150");
        let (a, b) = (
            maker.design(base).unwrap(),
            maker.design(150usize.div_ceil(base)).unwrap(),
        );
        assert!(made.rows.len() <= a.rows.len() + b.rows.len() - 3);
    }
}
