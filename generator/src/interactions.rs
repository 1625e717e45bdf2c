//! Numbering of t-way interactions: every (t-set of columns, levels on them) pair gets a
//! dense index, so coverage can be kept in flat counter arrays.
//!
//! A t-set `c0 < c1 < … < c(t-1)` is ranked in the combinatorial number system
//! (rank = Σ C(c_i, i+1)), which makes rank computation O(t) with a binomial table; the
//! levels are then a mixed-radix number with the first column least significant.

/// Σ over t-sets of the product of their level counts: the number of t-way interactions.
/// Saturates instead of overflowing.
pub fn count(levels: &[usize], t: usize) -> u128 {
    // elementary symmetric polynomial e_t of the level counts
    let mut e = vec![0u128; t + 1];
    e[0] = 1;
    for &v in levels {
        for j in (1..=t).rev() {
            e[j] = e[j].saturating_add(e[j - 1].saturating_mul(v as u128));
        }
    }
    e[t]
}

/// What the finishing passes and the demand counters need of a numbering of interactions:
/// the uniform one of [`Layout`] (every t-set) or the explicit list of an
/// [`crate::incidence::Incidence`] (base t-sets and focus sets of other sizes).
pub trait Numbering {
    /// Number of interactions.
    fn total(&self) -> usize;
    /// Number of column sets.
    fn sets(&self) -> usize;
    /// Calls `f` with the index of every interaction a full row covers, one per set, in
    /// set order.
    fn for_each_in_row(&self, row: &[u8], f: impl FnMut(usize));
}

impl Numbering for Layout {
    fn total(&self) -> usize {
        Layout::total(self)
    }

    fn sets(&self) -> usize {
        Layout::sets(self)
    }

    fn for_each_in_row(&self, row: &[u8], f: impl FnMut(usize)) {
        Layout::for_each_in_row(self, row, f)
    }
}

/// Dense numbering of the t-way interactions of one set of level counts.
#[derive(Clone, Debug)]
pub struct Layout {
    /// Strength.
    pub t: usize,
    /// Level count of every column.
    pub levels: Vec<usize>,
    /// `binom[n][j]` = C(n, j) for n ≤ columns, j ≤ t.
    binom: Vec<Vec<u64>>,
    /// First interaction index of each t-set, by rank; one extra entry holds the total.
    offsets: Vec<u32>,
}

impl Layout {
    /// Builds the numbering; the caller has checked that the interaction count fits
    /// (see [`crate::MAX_INTERACTIONS`]).
    pub fn new(levels: &[usize], t: usize) -> Self {
        let k = levels.len();
        let mut binom = vec![vec![0u64; t + 1]; k + 1];
        for n in 0..=k {
            binom[n][0] = 1;
            for j in 1..=t.min(n) {
                binom[n][j] = binom[n - 1][j - 1] + if j < n { binom[n - 1][j] } else { 0 };
            }
        }
        let sets = binom[k][t] as usize;
        let mut offsets = Vec::with_capacity(sets + 1);
        let mut total: u64 = 0;
        let mut cols: Vec<usize> = (0..t).collect();
        // enumerate t-sets in colex order, which is rank order
        for _ in 0..sets {
            offsets.push(total as u32);
            let p: u64 = cols.iter().map(|&c| levels[c] as u64).product();
            total += p;
            next_colex(&mut cols);
        }
        offsets.push(total as u32);
        Layout {
            t,
            levels: levels.to_vec(),
            binom,
            offsets,
        }
    }

    /// Number of columns.
    pub fn columns(&self) -> usize {
        self.levels.len()
    }

    /// Number of t-sets.
    pub fn sets(&self) -> usize {
        self.offsets.len() - 1
    }

    /// Number of interactions.
    pub fn total(&self) -> usize {
        *self.offsets.last().unwrap_or(&0) as usize
    }

    /// C(n, j) for n ≤ columns and j ≤ t.
    pub fn binom(&self, n: usize, j: usize) -> u64 {
        if j > n { 0 } else { self.binom[n][j] }
    }

    /// Rank of a sorted t-set.
    pub fn rank(&self, cols: &[usize]) -> usize {
        cols.iter()
            .enumerate()
            .map(|(i, &c)| self.binom(c, i + 1) as usize)
            .sum()
    }

    /// First interaction index of the t-set with this rank.
    pub fn offset(&self, rank: usize) -> usize {
        self.offsets[rank] as usize
    }

    /// Number of level combinations of the t-set with this rank.
    pub fn width(&self, rank: usize) -> usize {
        (self.offsets[rank + 1] - self.offsets[rank]) as usize
    }

    /// Index of the interaction a full row shows on a sorted t-set.
    pub fn index(&self, cols: &[usize], row: &[u8]) -> usize {
        let mut idx = 0usize;
        let mut w = 1usize;
        for &c in cols {
            idx += row[c] as usize * w;
            w *= self.levels[c];
        }
        self.offset(self.rank(cols)) + idx
    }

    /// Decodes an interaction index into its t-set and levels.
    pub fn decode(&self, index: usize) -> (Vec<usize>, Vec<u8>) {
        let rank = self.offsets.partition_point(|&o| o as usize <= index) - 1;
        let cols = self.unrank(rank);
        let mut rest = index - self.offset(rank);
        let mut lv = Vec::with_capacity(self.t);
        for &c in &cols {
            lv.push((rest % self.levels[c]) as u8);
            rest /= self.levels[c];
        }
        (cols, lv)
    }

    /// The sorted t-set with this rank.
    pub fn unrank(&self, mut rank: usize) -> Vec<usize> {
        let mut cols = vec![0; self.t];
        for i in (0..self.t).rev() {
            // largest c with C(c, i+1) <= rank
            let mut c = i;
            while c < self.columns() && self.binom(c + 1, i + 1) as usize <= rank {
                c += 1;
            }
            cols[i] = c;
            rank -= self.binom(c, i + 1) as usize;
        }
        cols
    }

    /// Calls `f` with the index of every interaction a full row covers.
    pub fn for_each_in_row(&self, row: &[u8], mut f: impl FnMut(usize)) {
        let t = self.t;
        let k = self.columns();
        if t == 2 {
            // pairs {a < b} in colex order: b outer, a inner
            let mut rank = 0usize;
            for b in 1..k {
                let hi = row[b] as usize;
                for (&lo, &va) in row[..b].iter().zip(&self.levels[..b]) {
                    f(self.offsets[rank] as usize + lo as usize + hi * va);
                    rank += 1;
                }
            }
            return;
        }
        let mut rank = 0usize;
        self.each_below(row, t, k, 0, &mut rank, &mut f);
    }

    /// The t-sets of `depth` more columns below `hi`, in colex order (highest column in
    /// the outer loop, so ranks follow one another), with the mixed-radix index of the
    /// columns chosen so far in `acc` by Horner's rule from the highest column down
    /// (first column least significant).
    fn each_below(
        &self,
        row: &[u8],
        depth: usize,
        hi: usize,
        acc: usize,
        rank: &mut usize,
        f: &mut impl FnMut(usize),
    ) {
        if depth == 1 {
            let start = self.offsets[*rank..].iter();
            for ((&off, &l), &v) in start.zip(&row[..hi]).zip(&self.levels[..hi]) {
                f(off as usize + acc * v + l as usize);
            }
            *rank += hi;
            return;
        }
        for c in depth - 1..hi {
            self.each_below(row, depth - 1, c, acc * self.levels[c] + row[c] as usize, rank, f);
        }
    }
}

/// Advances a sorted t-set to the next one in colex order (unbounded above: the caller
/// stops when the last column passes the column count). Returns false for an empty set.
pub fn next_colex(cols: &mut [usize]) -> bool {
    let t = cols.len();
    if t == 0 {
        return false;
    }
    for i in 0..t {
        let limit = if i + 1 < t { cols[i + 1] } else { usize::MAX };
        if cols[i] + 1 < limit {
            cols[i] += 1;
            for (j, c) in cols.iter_mut().enumerate().take(i) {
                *c = j;
            }
            return true;
        }
    }
    false
}

/// Advances a sorted subset of `0..n` to the next one of the same size in lexicographic
/// order; false (and `pick` unchanged) after the last.
pub fn next_lex(pick: &mut [usize], n: usize) -> bool {
    let j = pick.len();
    let mut i = j;
    while i > 0 {
        i -= 1;
        if pick[i] < n - j + i {
            pick[i] += 1;
            for q in i + 1..j {
                pick[q] = pick[q - 1] + 1;
            }
            return true;
        }
    }
    false
}

/// Calls `f` with every sorted `j`-subset of `items` (given sorted), in lexicographic order.
pub fn for_each_subset(items: &[usize], j: usize, mut f: impl FnMut(&[usize])) {
    if j > items.len() {
        return;
    }
    let mut pick: Vec<usize> = (0..j).collect();
    let mut buf = vec![0usize; j];
    loop {
        for (b, &p) in buf.iter_mut().zip(&pick) {
            *b = items[p];
        }
        f(&buf);
        if !next_lex(&mut pick, items.len()) {
            return;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranks_are_dense_and_invertible() {
        let levels = [2, 3, 4, 2, 5];
        for t in 1..=5 {
            let lay = Layout::new(&levels, t);
            let mut seen = 0;
            for_each_subset(&[0, 1, 2, 3, 4], t, |s| {
                let r = lay.rank(s);
                assert_eq!(lay.unrank(r), s);
                seen += 1;
            });
            assert_eq!(seen, lay.sets());
            assert_eq!(lay.total() as u128, count(&levels, t));
            for i in 0..lay.total() {
                let (cols, lv) = lay.decode(i);
                let mut row = vec![0u8; 5];
                for (c, l) in cols.iter().zip(&lv) {
                    row[*c] = *l;
                }
                assert_eq!(lay.index(&cols, &row), i);
            }
        }
    }

    #[test]
    fn row_visits_every_tset_once() {
        let levels = [3, 3, 3, 3];
        let lay = Layout::new(&levels, 2);
        let mut hits = vec![0; lay.total()];
        lay.for_each_in_row(&[0, 1, 2, 0], |i| hits[i] += 1);
        assert_eq!(hits.iter().sum::<i32>(), 6);
    }

    #[test]
    fn row_interactions_come_in_rank_order() {
        let levels = [2, 3, 4, 2, 5, 3, 2];
        let row = [1u8, 2, 3, 0, 4, 1, 1];
        for t in 1..=levels.len() {
            let lay = Layout::new(&levels, t);
            let mut want = Vec::new();
            for rank in 0..lay.sets() {
                want.push(lay.index(&lay.unrank(rank), &row));
            }
            let mut got = Vec::new();
            lay.for_each_in_row(&row, |i| got.push(i));
            assert_eq!(got, want, "t = {t}");
        }
    }

    #[test]
    fn count_matches_brute_force() {
        // 3 factors of 2, 3, 4 levels at t=2: 2*3 + 2*4 + 3*4 = 26
        assert_eq!(count(&[2, 3, 4], 2), 26);
        assert_eq!(count(&[2, 3, 4], 3), 24);
        assert_eq!(count(&[255; 4096], 8), u128::MAX);
    }
}
