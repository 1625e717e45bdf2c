//! The t-sets through every column, laid out flat, so a local search that changes one cell
//! can visit exactly the interactions that change (and nothing else) without recomputing
//! ranks: that is what makes its cost updates incremental.
//!
//! The sets need not all have one size: a spec with focus sets (variable strength, see
//! `crate::focus`) lists every base t-set and then every focus set, each numbered by its
//! position ("rank") in that list.

use crate::interactions::{Layout, Numbering, next_colex};

/// For every column set (by rank): its columns and their mixed-radix weights; for every
/// column: the ranks of the sets through it.
#[derive(Clone, Debug)]
pub struct Incidence {
    /// Size of the largest set.
    t: usize,
    levels: Vec<usize>,
    cols: Vec<u16>,
    weights: Vec<u32>,
    /// Where each set's columns start in `cols` and `weights`; one extra entry at the end.
    starts: Vec<u32>,
    /// First interaction index of each set; one extra entry holds the total.
    offsets: Vec<u32>,
    through_start: Vec<u32>,
    through: Vec<u32>,
    /// Weight of the column itself in each t-set of `through`.
    through_weight: Vec<u32>,
}

impl Incidence {
    /// Builds the table for a layout (memory: about `t·(2+4+4)` bytes per t-set).
    pub fn new(layout: &Layout) -> Self {
        Self::with_extra(layout, &[])
    }

    /// Builds the table for every t-set of a layout (in rank order) followed by `extra`
    /// sorted column sets of any sizes (the focus sets of a variable-strength spec).
    pub fn with_extra(layout: &Layout, extra: &[Vec<usize>]) -> Self {
        let t = layout.t;
        let sets = layout.sets();
        let cells = sets * t + extra.iter().map(Vec::len).sum::<usize>();
        let mut b = Builder::new(&layout.levels, sets + extra.len(), cells);
        let mut cur: Vec<usize> = (0..t).collect();
        for _ in 0..sets {
            b.push(&cur);
            next_colex(&mut cur);
        }
        for set in extra {
            b.push(set);
        }
        b.finish()
    }

    /// Size of the largest set (the strength, when all have one size).
    pub fn t(&self) -> usize {
        self.t
    }

    /// Most sets through any one column.
    pub fn widest_through(&self) -> usize {
        self.through_start
            .windows(2)
            .map(|w| (w[1] - w[0]) as usize)
            .max()
            .unwrap_or(0)
    }

    /// Number of interactions.
    pub fn total(&self) -> usize {
        *self.offsets.last().unwrap_or(&0) as usize
    }

    /// Number of level combinations of the set with this rank.
    pub fn width(&self, rank: usize) -> usize {
        (self.offsets[rank + 1] - self.offsets[rank]) as usize
    }

    /// Number of columns.
    pub fn columns(&self) -> usize {
        self.levels.len()
    }

    /// Level count of column `c`.
    pub fn level_count(&self, c: usize) -> usize {
        self.levels[c]
    }

    /// Number of sets.
    pub fn sets(&self) -> usize {
        self.offsets.len() - 1
    }

    /// Where the set with this rank lies in `cols` and `weights`.
    fn span(&self, rank: usize) -> std::ops::Range<usize> {
        self.starts[rank] as usize..self.starts[rank + 1] as usize
    }

    /// Columns of the set with this rank, ascending.
    pub fn cols(&self, rank: usize) -> &[u16] {
        &self.cols[self.span(rank)]
    }

    /// Mixed-radix weight of each column of the set with this rank.
    pub fn weights(&self, rank: usize) -> &[u32] {
        &self.weights[self.span(rank)]
    }

    /// First interaction index of the t-set with this rank.
    pub fn offset(&self, rank: usize) -> usize {
        self.offsets[rank] as usize
    }

    /// Ranks of the t-sets containing column `c`.
    pub fn through(&self, c: usize) -> &[u32] {
        &self.through[self.through_start[c] as usize..self.through_start[c + 1] as usize]
    }

    /// Weight of column `c` in each t-set of [`Self::through`]`(c)`, in the same order.
    pub fn through_weights(&self, c: usize) -> &[u32] {
        &self.through_weight[self.through_start[c] as usize..self.through_start[c + 1] as usize]
    }

    /// Index of the interaction a full row shows on the t-set with this rank.
    pub fn index(&self, rank: usize, row: &[u8]) -> usize {
        let mut idx = self.offsets[rank] as usize;
        for j in self.span(rank) {
            idx += row[self.cols[j] as usize] as usize * self.weights[j] as usize;
        }
        idx
    }

    /// Rank of the set holding interaction `index`.
    pub fn rank_of(&self, index: usize) -> usize {
        self.offsets.partition_point(|&o| o as usize <= index) - 1
    }

    /// The columns and levels of interaction `index`, written into `cols` and `levels`.
    pub fn decode_into(&self, index: usize, cols: &mut Vec<usize>, levels: &mut Vec<u8>) {
        let lv = &self.levels;
        let rank = self.rank_of(index);
        let mut rest = index - self.offset(rank);
        cols.clear();
        levels.clear();
        for &c in self.cols(rank) {
            let c = c as usize;
            cols.push(c);
            levels.push((rest % lv[c]) as u8);
            rest /= lv[c];
        }
    }
}

impl Numbering for Incidence {
    fn total(&self) -> usize {
        Incidence::total(self)
    }

    fn sets(&self) -> usize {
        Incidence::sets(self)
    }

    fn for_each_in_row(&self, row: &[u8], mut f: impl FnMut(usize)) {
        for rank in 0..Incidence::sets(self) {
            f(self.index(rank, row));
        }
    }
}

/// Gathers the sets one by one, then lays out the per-column tables.
struct Builder<'a> {
    levels: &'a [usize],
    t: usize,
    cols: Vec<u16>,
    weights: Vec<u32>,
    starts: Vec<u32>,
    offsets: Vec<u32>,
    per_col: Vec<u32>,
}

impl<'a> Builder<'a> {
    fn new(levels: &'a [usize], sets: usize, cells: usize) -> Self {
        let mut starts = Vec::with_capacity(sets + 1);
        starts.push(0);
        let mut offsets = Vec::with_capacity(sets + 1);
        offsets.push(0);
        Builder {
            levels,
            t: 0,
            cols: Vec::with_capacity(cells),
            weights: Vec::with_capacity(cells),
            starts,
            offsets,
            per_col: vec![0u32; levels.len() + 1],
        }
    }

    /// Adds a sorted set of columns (its interactions follow the previous set's).
    fn push(&mut self, set: &[usize]) {
        let mut w = 1u32;
        for &c in set {
            // k ≤ MAX_FACTORS = 4096 fits u16; weights are below the interaction count
            self.cols.push(c as u16);
            self.weights.push(w);
            w *= self.levels[c] as u32;
            self.per_col[c + 1] += 1;
        }
        self.t = self.t.max(set.len());
        // the spec's interaction count was checked to fit u32
        self.starts.push(self.cols.len() as u32);
        let last = *self.offsets.last().unwrap_or(&0);
        self.offsets.push(last + w);
    }

    fn finish(self) -> Incidence {
        let Builder {
            levels,
            t,
            cols,
            weights,
            starts,
            offsets,
            mut per_col,
        } = self;
        let k = levels.len();
        for c in 0..k {
            per_col[c + 1] += per_col[c];
        }
        let mut fill = per_col.clone();
        let mut through = vec![0u32; cols.len()];
        let mut through_weight = vec![0u32; cols.len()];
        for rank in 0..starts.len() - 1 {
            for j in starts[rank] as usize..starts[rank + 1] as usize {
                let c = cols[j] as usize;
                through[fill[c] as usize] = rank as u32;
                through_weight[fill[c] as usize] = weights[j];
                fill[c] += 1;
            }
        }
        Incidence {
            t,
            levels: levels.to_vec(),
            cols,
            weights,
            starts,
            offsets,
            through_start: per_col,
            through,
            through_weight,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn agrees_with_layout() {
        let levels = [2, 3, 4, 2, 5, 3];
        for t in 1..=4 {
            let lay = Layout::new(&levels, t);
            let inc = Incidence::new(&lay);
            let row = [1u8, 2, 3, 0, 4, 1];
            for rank in 0..lay.sets() {
                let cols: Vec<usize> = inc.cols(rank).iter().map(|&c| c as usize).collect();
                assert_eq!(cols, lay.unrank(rank));
                assert_eq!(inc.index(rank, &row), lay.index(&cols, &row));
            }
            for c in 0..levels.len() {
                let th = inc.through(c);
                assert_eq!(th.len() as u64, lay.binom(levels.len() - 1, t - 1));
                for (&r, &w) in th.iter().zip(inc.through_weights(c)) {
                    let j = inc
                        .cols(r as usize)
                        .iter()
                        .position(|&x| x as usize == c)
                        .unwrap();
                    assert_eq!(inc.weights(r as usize)[j], w);
                }
            }
            let (mut cs, mut ls) = (Vec::new(), Vec::new());
            for i in 0..lay.total() {
                inc.decode_into(i, &mut cs, &mut ls);
                assert_eq!(lay.decode(i), (cs.clone(), ls.clone()));
            }
        }
    }
}
