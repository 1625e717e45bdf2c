//! How much of a design its first rows cover: what a row budget reaches, per strength.
//!
//! A design covers every interaction its excludes allow (the engine's checker has
//! verified it, or the pin check has), so the interactions present in the whole design
//! are exactly the possible ones: they are the denominator, and no constraint solving
//! is needed to tell how much of what is possible a prefix reaches.

use heddle_generator::{Focus, focus_sets};

use crate::tally::{Tallies, tally_rows};

/// The coverage a prefix of a design reaches at one strength, over all factors or over
/// one focus set.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Reach {
    /// The arity counted (1: single levels, up to the design's strength; a focus set's
    /// own strength).
    pub strength: usize,
    /// The focus set counted (its place among the spec's focus sets), `None` for every
    /// factor at the base strength or below.
    pub focus: Option<usize>,
    /// The index the `lambda` count is against: the spec's λ, or the focus set's.
    pub index: u32,
    /// Interactions of that arity the whole design covers (the possible ones).
    pub interactions: u64,
    /// Of those, the ones some row of the prefix contains.
    pub once: u64,
    /// Of those, the ones at least `index` rows of the prefix contain.
    pub lambda: u64,
}

impl Reach {
    /// Share covered at least once (1 when there is nothing to cover).
    pub fn share_once(&self) -> f64 {
        share(self.once, self.interactions)
    }

    /// Share covered at least λ times.
    pub fn share_lambda(&self) -> f64 {
        share(self.lambda, self.interactions)
    }
}

fn share(n: u64, of: u64) -> f64 {
    if of == 0 { 1.0 } else { n as f64 / of as f64 }
}

impl Tallies {
    /// What the first `prefix` rows reach, per strength 1 ..= t at index `lambda`, then
    /// per focus set at its own strength and index (`focus`: the spec's focus sets, whose
    /// interactions [`Tallies::focus`] holds; none are counted when it holds none),
    /// counting as possible the interactions of the first `design` rows (the rows past
    /// them, follow-up rows, are extra and not part of the design).
    pub fn reach(&self, prefix: usize, design: usize, lambda: u32, focus: &[Focus]) -> Vec<Reach> {
        let mut out: Vec<Reach> = (1..=self.strength)
            .map(|a| {
                let mut r = Reach {
                    strength: a,
                    focus: None,
                    index: lambda,
                    interactions: 0,
                    once: 0,
                    lambda: 0,
                };
                for e in self.of_arity(a) {
                    r.add(&e.rows, prefix, design);
                }
                r
            })
            .collect();
        if self.focus.is_empty() {
            return out;
        }
        for (i, f) in focus.iter().enumerate() {
            let mut r = Reach {
                strength: f.strength,
                focus: Some(i),
                index: f.lambda,
                interactions: 0,
                once: 0,
                lambda: 0,
            };
            for t in self.focus_of(f) {
                r.add(&t.tally.rows, prefix, design);
            }
            out.push(r);
        }
        out
    }
}

impl Reach {
    /// Counts one interaction found in `rows` (increasing design row indices).
    fn add(&mut self, rows: &[u32], prefix: usize, design: usize) {
        if rows.first().is_none_or(|&row| (row as usize) >= design) {
            return;
        }
        self.interactions += 1;
        let within = rows.iter().take_while(|&&row| (row as usize) < prefix).count();
        self.once += u64::from(within > 0);
        self.lambda += u64::from(within as u64 >= u64::from(self.index));
    }
}

/// What the first `prefix` of a design's `rows` (over `k` factors, strength `t`, index
/// `lambda`, with the focus sets `focus`) reach; empty when `t` is not between 1 and
/// `k` or a focus set does not fit the factors.
///
/// ```
/// // the full 2×2 factorial at strength 2: the first row covers one pair of four and
/// // two of the four single levels
/// let rows = vec![vec![0, 0], vec![1, 1], vec![0, 1], vec![1, 0]];
/// let r = heddle_store::reach(&rows, 2, 2, 1, &[], 1);
/// assert_eq!((r[0].interactions, r[0].once), (4, 2));
/// assert_eq!((r[1].interactions, r[1].once), (4, 1));
/// ```
pub fn reach(
    rows: &[Vec<u8>],
    k: usize,
    t: usize,
    lambda: u32,
    focus: &[Focus],
    prefix: usize,
) -> Vec<Reach> {
    if t == 0 || t > k || t > heddle_generator::MAX_STRENGTH || rows.iter().any(|r| r.len() != k) {
        return Vec::new();
    }
    let fits = |f: &Focus| {
        f.strength >= 1
            && f.strength <= f.factors.len()
            && f.strength <= heddle_generator::MAX_STRENGTH
            && f.factors.iter().all(|&c| c < k)
    };
    if !focus.iter().all(fits) {
        return Vec::new();
    }
    let mut tallies = tally_rows(rows, k, t, []);
    tallies.count_focus(rows, focus_sets(focus));
    tallies.reach(prefix, rows.len(), lambda, focus)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fixture::oa9;

    #[test]
    fn an_orthogonal_array_reaches_one_pair_per_row_and_column_pair() {
        // in an index-1 array no two rows share a pair, so n rows cover exactly 6n of the
        // 6 · 9 = 54 pairs, and all of them at n = 9
        let rows = oa9();
        for n in 0..=9 {
            let r = reach(&rows, 4, 2, 1, &[], n);
            assert_eq!(r.len(), 2);
            assert_eq!(r[1].interactions, 54);
            assert_eq!(r[1].once, 6 * n as u64, "{n} rows");
            assert_eq!(r[1].lambda, r[1].once);
            assert_eq!(r[0].interactions, 12);
        }
        assert_eq!(reach(&rows, 4, 2, 1, &[], 9)[1].share_once(), 1.0);
        // each level is in 3 rows: at λ = 2 a level needs two of them
        let r = reach(&rows, 4, 2, 2, &[], 9);
        assert_eq!((r[0].lambda, r[1].lambda), (12, 0));
    }

    #[test]
    fn a_focus_set_reaches_its_own_interactions_at_its_own_index() {
        // OA(9; 2, 4, 3) has index 1, so two rows never agree on two columns, let alone
        // three: on the columns {0, 1, 2} each of the 9 rows shows its own triple, and a
        // prefix of n rows reaches n of the 9 triples the design holds, none twice
        let rows = oa9();
        let focus = [
            Focus::new(vec![2, 0, 1], 3).lambda(2),
            Focus::new(vec![1, 2, 3], 3),
        ];
        for n in 0..=9 {
            let r = reach(&rows, 4, 2, 1, &focus, n);
            assert_eq!(r.len(), 4, "two strengths and two focus sets");
            assert_eq!(r[1], reach(&rows, 4, 2, 1, &[], n)[1]);
            let f = r[2];
            assert_eq!((f.focus, f.strength, f.index), (Some(0), 3, 2));
            assert_eq!((f.interactions, f.once, f.lambda), (9, n as u64, 0));
            assert_eq!(
                (r[3].focus, r[3].index, r[3].once, r[3].lambda),
                (Some(1), 1, n as u64, n as u64)
            );
        }
        // a focus set naming a factor the rows lack reaches nothing
        assert!(reach(&rows, 4, 2, 1, &[Focus::new(vec![0, 4, 1], 3)], 9).is_empty());
    }

    #[test]
    fn rows_past_the_design_are_not_counted_as_possible() {
        let rows = vec![vec![0, 0], vec![1, 1], vec![0, 1]];
        let t = tally_rows(&rows, 2, 2, []);
        // only the first two rows are the design: two pairs possible, row 2 adds none
        let r = t.reach(3, 2, 1, &[]);
        assert_eq!((r[1].interactions, r[1].once), (2, 2));
        assert!(reach(&rows, 2, 3, 1, &[], 1).is_empty());
        assert!(reach(&[vec![0]], 2, 1, 1, &[], 1).is_empty());
    }
}
