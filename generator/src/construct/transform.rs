//! Fitting a construction to a spec: keep the first k columns (a sub-array of a covering
//! array covers its own t-sets), map each column's symbols onto the factor's levels, and
//! drop rows that coverage no longer needs.
//!
//! Collapsing by a surjective map φ: {0 … q−1} → {0 … v−1} keeps coverage: each t-tuple
//! of target levels has a preimage tuple, which the source covers λ times, and those
//! rows map onto the target tuple. It usually covers more than needed, so some rows can
//! go; [`fuse`] chooses the map so that two rows provably can.

use crate::factor::Row;
use crate::interactions::{self, Layout};
use crate::order;

/// Most interactions for which redundant rows are looked for (counters cost 5 bytes each).
const MAX_PRUNE_INTERACTIONS: u128 = 1 << 22;

/// Most (row, t-set) visits spent looking for redundant rows: a few passes of this size
/// cost about what checking the result does.
const MAX_PRUNE_WORK: u128 = 1 << 23;

/// The first `levels.len()` columns, symbol l of a column shown as level l mod v.
pub fn collapse(rows: &[Row], levels: &[usize]) -> Vec<Row> {
    rows.iter()
        .map(|r| {
            levels
                .iter()
                .zip(r)
                .map(|(&v, &l)| (l as usize % v) as u8)
                .collect()
        })
        .collect()
}

/// For an orthogonal array of index 1 over q symbols whose columns all go to factors of
/// at most q − 1 levels: collapse so that rows 0 and 1 map to the same row, and leave
/// both out — q^t − 2 rows instead of q^t.
///
/// Two rows r, s of an index-1 array agree in at most t − 1 columns. In each column c
/// the map fuses r_c with s_c where they differ, or r_c with some other symbol x where
/// they agree (one fusion per column, so q − 1 levels suffice). Take a t-set T: the
/// collapsed row φ(r) = φ(s) on T needs a third row. If r and s differ on two columns
/// c, c' of T, the row with r on T \ {c} and s_c on c is neither r (it differs at c) nor
/// s (it differs at c'). If they differ on exactly one c ∈ T, they agree on some c' ∈ T,
/// and the row with x at c' and r elsewhere on T is neither. Both map onto φ(r) on T.
pub fn fuse(rows: &[Row], q: usize, levels: &[usize]) -> Vec<Row> {
    let (r, s) = (&rows[0], &rows[1]);
    let maps: Vec<Vec<u8>> = levels
        .iter()
        .enumerate()
        .map(|(c, &v)| {
            let a = r[c];
            let partner = if s[c] != a { s[c] } else { u8::from(a == 0) };
            let mut map = vec![0u8; q];
            let mut next = 0usize;
            for (sym, slot) in map.iter_mut().enumerate() {
                if sym != a as usize && sym != partner as usize {
                    *slot = if v > 1 { (1 + next % (v - 1)) as u8 } else { 0 };
                    next += 1;
                }
            }
            map
        })
        .collect();
    rows[2..]
        .iter()
        .map(|row| maps.iter().zip(row).map(|(m, &l)| m[l as usize]).collect())
        .collect()
}

/// Whether [`drop_redundant`] looks at `rows` rows of this spec: its interactions fit the
/// counters and the work stays bounded.
pub fn prunable(levels: &[usize], t: usize, rows: usize) -> bool {
    let tsets = interactions::count(&vec![1; levels.len()], t);
    interactions::count(levels, t) <= MAX_PRUNE_INTERACTIONS
        && tsets.saturating_mul(rows as u128) <= MAX_PRUNE_WORK
}

/// Removes rows whose every interaction the others cover λ times (later rows first),
/// when the spec is small enough to count; returns how many went.
pub fn drop_redundant(rows: &mut Vec<Row>, levels: &[usize], t: usize, lambda: u32) -> usize {
    if !prunable(levels, t, rows.len()) {
        return 0;
    }
    let layout = Layout::new(levels, t);
    // MAX_LAMBDA fits the 16-bit counters
    let need = vec![lambda as u16; layout.total()];
    let before = rows.len();
    order::drop_redundant(&layout, &need, rows, 0);
    before - rows.len()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::construct::gf::Field;
    use crate::construct::orthogonal::{bush_columns, linear};

    /// Least count of any t-way interaction (brute force over t-sets given as lists).
    fn min_count(rows: &[Row], levels: &[usize], sets: &[Vec<usize>]) -> usize {
        sets.iter()
            .map(|cols| {
                let size: usize = cols.iter().map(|&c| levels[c]).product();
                let mut cnt = vec![0usize; size];
                for r in rows {
                    cnt[cols.iter().fold(0, |a, &c| a * levels[c] + r[c] as usize)] += 1;
                }
                cnt.into_iter().min().unwrap_or(0)
            })
            .min()
            .unwrap_or(0)
    }

    fn tsets(k: usize, t: usize) -> Vec<Vec<usize>> {
        let mut out = Vec::new();
        interactions::for_each_subset(&(0..k).collect::<Vec<_>>(), t, |s| out.push(s.to_vec()));
        out
    }

    #[test]
    fn fuse_keeps_coverage_with_two_rows_fewer() {
        for (q, t, v, k) in [
            (3, 2, 2, 4),
            (4, 2, 3, 5),
            (5, 2, 4, 6),
            (7, 2, 6, 8),
            (4, 3, 3, 5),
            (5, 3, 4, 6),
        ] {
            let f = Field::new(q).unwrap();
            let cols = bush_columns(&f, t, false);
            let rows = linear(&f, &cols[..k]);
            let levels = vec![v; k];
            let fused = fuse(&rows, q, &levels);
            assert_eq!(fused.len(), q.pow(t as u32) - 2);
            assert!(min_count(&fused, &levels, &tsets(k, t)) >= 1, "q={q} t={t} v={v}");
            // mixed targets below q also work
            let mixed: Vec<usize> = (0..k).map(|c| 1 + c % (q - 1)).collect();
            let fused = fuse(&rows, q, &mixed);
            assert!(min_count(&fused, &mixed, &tsets(k, t)) >= 1, "q={q} t={t} mixed");
        }
    }

    #[test]
    fn collapse_keeps_coverage() {
        let f = Field::new(7).unwrap();
        let rows = linear(&f, &bush_columns(&f, 2, false));
        let levels = [6, 5, 4, 3, 2, 6, 7, 1];
        let c = collapse(&rows, &levels);
        assert!(
            c.iter()
                .all(|r| r.iter().zip(&levels).all(|(&l, &v)| (l as usize) < v))
        );
        assert!(min_count(&c, &levels, &tsets(8, 2)) >= 1);
    }
}
