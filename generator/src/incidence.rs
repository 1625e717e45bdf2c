//! The t-sets through every column, laid out flat, so a local search that changes one cell
//! can visit exactly the interactions that change (and nothing else) without recomputing
//! ranks: that is what makes its cost updates incremental.

use crate::interactions::{Layout, next_colex};

/// For every t-set (by rank): its columns and their mixed-radix weights; for every column:
/// the ranks of the t-sets through it.
#[derive(Clone, Debug)]
pub struct Incidence {
    t: usize,
    levels: Vec<usize>,
    cols: Vec<u16>,
    weights: Vec<u32>,
    offsets: Vec<u32>,
    through_start: Vec<u32>,
    through: Vec<u32>,
    /// Weight of the column itself in each t-set of `through`.
    through_weight: Vec<u32>,
}

impl Incidence {
    /// Builds the table for a layout (memory: about `t·(2+4+4)` bytes per t-set).
    pub fn new(layout: &Layout) -> Self {
        let t = layout.t;
        let k = layout.columns();
        let sets = layout.sets();
        let mut cols = Vec::with_capacity(sets * t);
        let mut weights = Vec::with_capacity(sets * t);
        let mut offsets = Vec::with_capacity(sets);
        let mut per_col = vec![0u32; k + 1];
        let mut cur: Vec<usize> = (0..t).collect();
        for rank in 0..sets {
            offsets.push(layout.offset(rank) as u32);
            let mut w = 1u32;
            for &c in &cur {
                // k ≤ MAX_FACTORS = 4096 fits u16; weights are below the interaction count
                cols.push(c as u16);
                weights.push(w);
                w *= layout.levels[c] as u32;
                per_col[c + 1] += 1;
            }
            next_colex(&mut cur);
        }
        for c in 0..k {
            per_col[c + 1] += per_col[c];
        }
        let mut fill = per_col.clone();
        let mut through = vec![0u32; sets * t];
        let mut through_weight = vec![0u32; sets * t];
        for rank in 0..sets {
            for j in rank * t..rank * t + t {
                let c = cols[j] as usize;
                through[fill[c] as usize] = rank as u32;
                through_weight[fill[c] as usize] = weights[j];
                fill[c] += 1;
            }
        }
        Incidence {
            t,
            levels: layout.levels.clone(),
            cols,
            weights,
            offsets,
            through_start: per_col,
            through,
            through_weight,
        }
    }

    /// Strength.
    pub fn t(&self) -> usize {
        self.t
    }

    /// Level count of column `c`.
    pub fn level_count(&self, c: usize) -> usize {
        self.levels[c]
    }

    /// Number of t-sets.
    pub fn sets(&self) -> usize {
        self.offsets.len()
    }

    /// Columns of the t-set with this rank, ascending.
    pub fn cols(&self, rank: usize) -> &[u16] {
        &self.cols[rank * self.t..rank * self.t + self.t]
    }

    /// Mixed-radix weight of each column of the t-set with this rank.
    pub fn weights(&self, rank: usize) -> &[u32] {
        &self.weights[rank * self.t..rank * self.t + self.t]
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
        let base = rank * self.t;
        let mut idx = self.offsets[rank] as usize;
        for j in 0..self.t {
            idx += row[self.cols[base + j] as usize] as usize * self.weights[base + j] as usize;
        }
        idx
    }

    /// Rank of the t-set holding interaction `index`.
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
