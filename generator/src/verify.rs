//! The independent checker. It shares nothing with the generation code but the formula
//! type: its own t-set enumeration, its own counting, its own (plain, unmemoised)
//! search for whether an uncovered interaction is possible at all. Every design passes
//! through it before it is returned, and pinned rows are verified with it too.

use std::collections::BTreeMap;
use std::fmt;

use crate::expr::Expr;
use crate::factor::UNSET;
use crate::model::Spec;

/// What the checker found on a valid design.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Coverage {
    /// Number of interactions of the spec: t-way over all factors, and those of each
    /// focus set at its own strength.
    pub interactions: u64,
    /// How many of them no allowed row contains.
    pub impossible: u64,
    /// Fewest times any possible interaction is covered.
    pub min_count: u64,
    /// For each row, in order, how many interactions it is among the first λ rows to
    /// show: the demand it meets given the rows before it (their running sum over λ times
    /// the possible interactions is the design's coverage curve).
    pub met: Vec<u64>,
    /// The whole demand: Σ over possible interactions of the index asked of them (λ, or a
    /// focus set's own); `met` sums to it.
    pub demand: u64,
}

/// Why a list of rows is not a valid design for a spec.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Violation {
    /// A row has the wrong number of entries.
    Width {
        /// Row position.
        row: usize,
        /// Entries.
        width: usize,
    },
    /// A row uses a level its factor does not have.
    Level {
        /// Row position.
        row: usize,
        /// Factor name.
        factor: String,
        /// Level index.
        level: u8,
    },
    /// A row is excluded by a constraint.
    Excluded {
        /// Row position.
        row: usize,
        /// Constraint position.
        constraint: usize,
    },
    /// A required row is not where it must be (the rows start with the required ones).
    MissingRequired {
        /// Position among the required rows.
        required: usize,
    },
    /// A possible interaction is covered fewer than λ times.
    Uncovered {
        /// `(factor name, level label)` of each factor in the interaction.
        levels: Vec<(String, String)>,
        /// Times covered.
        count: u64,
        /// λ.
        lambda: u32,
    },
}

impl fmt::Display for Violation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Violation::Width { row, width } => write!(f, "row {row} has {width} entries"),
            Violation::Level { row, factor, level } => {
                write!(
                    f,
                    "row {row} uses level #{level} of `{factor}`, which does not exist"
                )
            }
            Violation::Excluded { row, constraint } => {
                write!(f, "row {row} is excluded by exclude #{}", constraint + 1)
            }
            Violation::MissingRequired { required } => {
                write!(f, "required row #{} is not at position {required}", required + 1)
            }
            Violation::Uncovered {
                levels,
                count,
                lambda,
            } => {
                let parts: Vec<String> = levels.iter().map(|(n, l)| format!("{n} = {l}")).collect();
                write!(
                    f,
                    "interaction ({}) is covered {count} time{}, needs {lambda}",
                    parts.join(", "),
                    if *count == 1 { "" } else { "s" }
                )
            }
        }
    }
}

/// Checks that `rows` is a covering array of strength `spec.strength` and index
/// `spec.lambda` for every interaction some allowed row contains — and, for each focus
/// set, of its own strength and index over its factors (a variable-strength covering
/// array, Cohen, Colbourn, Collofello, Gibbons and Mugridge 2003) — that no row is
/// excluded, and that the rows begin with the spec's required rows (an [`UNSET`] cell of a
/// required row matches any level).
///
/// ```
/// use heddle_generator::{verify, Factor, Spec};
/// let spec = Spec::new(vec![Factor::numbered("a", 2), Factor::numbered("b", 2)]);
/// let full = vec![vec![0, 0], vec![0, 1], vec![1, 0], vec![1, 1]];
/// assert!(verify(&spec, &full).is_ok());
/// assert!(verify(&spec, &full[..3]).is_err());
/// ```
pub fn verify(spec: &Spec, rows: &[Vec<u8>]) -> Result<Coverage, Violation> {
    let k = spec.factors.len();
    let levels: Vec<usize> = spec.factors.iter().map(|f| f.levels.len()).collect();
    for (r, row) in rows.iter().enumerate() {
        if row.len() != k {
            return Err(Violation::Width {
                row: r,
                width: row.len(),
            });
        }
        for (c, &l) in row.iter().enumerate() {
            if l as usize >= levels[c] {
                return Err(Violation::Level {
                    row: r,
                    factor: spec.factors[c].name.clone(),
                    level: l,
                });
            }
        }
        if let Some(e) = spec.excludes.iter().position(|e| e.eval(row)) {
            return Err(Violation::Excluded {
                row: r,
                constraint: e,
            });
        }
    }
    for (i, req) in spec.required.iter().enumerate() {
        // an unset cell of a required row matches whatever level fills it
        let matches = rows.get(i).is_some_and(|row| {
            row.len() == req.len() && row.iter().zip(req).all(|(&a, &b)| b == UNSET || a == b)
        });
        if !matches {
            return Err(Violation::MissingRequired { required: i });
        }
    }
    let mut mentioned = Vec::new();
    for e in &spec.excludes {
        e.collect_factors(&mut mentioned);
    }
    let t = spec.strength;
    let mut out = Coverage {
        interactions: 0,
        impossible: 0,
        min_count: u64::MAX,
        met: vec![0; rows.len()],
        demand: 0,
    };
    let mut failure = None;
    let lambda = spec.lambda as u64;
    let mut check = |cols: &[usize], counts: &[u64], lambda: u64, out: &mut Coverage| {
        if failure.is_some() {
            return;
        }
        out.interactions += counts.len() as u64;
        out.demand += counts.len() as u64 * lambda;
        for (idx, &n) in counts.iter().enumerate() {
            if n >= lambda {
                out.min_count = out.min_count.min(n);
                continue;
            }
            let mut partial = vec![UNSET; k];
            let mut rest = idx;
            for &c in cols.iter() {
                partial[c] = (rest % levels[c]) as u8;
                rest /= levels[c];
            }
            if completable(&spec.excludes, &levels, &mentioned, &mut partial) {
                failure = Some(Violation::Uncovered {
                    levels: cols
                        .iter()
                        .map(|&c| {
                            let f = &spec.factors[c];
                            (f.name.clone(), f.levels[partial[c] as usize].clone())
                        })
                        .collect(),
                    count: n,
                    // at most MAX_LAMBDA
                    lambda: lambda as u32,
                });
                return;
            }
            out.impossible += 1;
            out.demand -= lambda;
        }
    };
    let mut base = |cols: &[usize], counts: &[u64], out: &mut Coverage| check(cols, counts, lambda, out);
    if Bits::pays(rows.len(), &levels, t) {
        Bits::new(rows, &levels, t, lambda).each(0, 0, 1, &mut out, &mut base);
    } else {
        Walk::new(rows, &levels, t, lambda).each(0, 0, 1, &mut out, &mut base);
    }
    for (set, lambda) in focus_sets(spec) {
        // the rows cut down to the set's columns, walked at the set's size: one leaf
        let sub_levels: Vec<usize> = set.iter().map(|&c| levels[c]).collect();
        let sub_rows: Vec<Vec<u8>> = rows.iter().map(|r| set.iter().map(|&c| r[c]).collect()).collect();
        let mut leaf = |_: &[usize], counts: &[u64], out: &mut Coverage| check(&set, counts, lambda, out);
        Walk::new(&sub_rows, &sub_levels, set.len(), lambda).each(0, 0, 1, &mut out, &mut leaf);
    }
    match failure {
        Some(v) => Err(v),
        None => {
            if out.min_count == u64::MAX {
                out.min_count = 0;
            }
            Ok(out)
        }
    }
}

/// Every column set the focus sets ask for, once, with the largest index asked of it: the
/// checker's own enumeration of each focus set's `strength`-subsets.
fn focus_sets(spec: &Spec) -> BTreeMap<Vec<usize>, u64> {
    fn subsets(items: &[usize], size: usize, pick: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if pick.len() == size {
            out.push(pick.clone());
            return;
        }
        for (i, &c) in items.iter().enumerate() {
            pick.push(c);
            subsets(&items[i + 1..], size, pick, out);
            pick.pop();
        }
    }
    let mut sets = BTreeMap::new();
    for f in &spec.focus {
        let mut items = f.factors.clone();
        items.sort_unstable();
        let mut out = Vec::new();
        subsets(&items, f.strength, &mut Vec::new(), &mut out);
        for set in out {
            let l = sets.entry(set).or_insert(0);
            *l = u64::from(f.lambda).max(*l);
        }
    }
    sets
}

/// What a counting strategy calls for every t-set: its columns, the count of each level
/// combination (mixed-radix index, first column least significant), and the coverage so
/// far (whose `met` the strategy has updated).
type Leaf<'a> = dyn FnMut(&[usize], &[u64], &mut Coverage) + 'a;

/// Counting by row: every t-set of columns in lexicographic order, with the index each
/// row shows on it. The rows are held by column, and the index of every prefix of the
/// t-set is kept per row, so one more column costs one pass over the rows rather than t.
struct Walk {
    t: usize,
    lambda: u64,
    levels: Vec<usize>,
    /// `columns[c][r]`: row r's level in column c.
    columns: Vec<Vec<u8>>,
    /// `prefix[d][r]`: row r's index on the first d columns of the current t-set.
    prefix: Vec<Vec<u32>>,
    cols: Vec<usize>,
    counts: Vec<u64>,
}

impl Walk {
    fn new(rows: &[Vec<u8>], levels: &[usize], t: usize, lambda: u64) -> Self {
        let columns = (0..levels.len())
            .map(|c| rows.iter().map(|r| r[c]).collect())
            .collect();
        Walk {
            t,
            lambda,
            levels: levels.to_vec(),
            columns,
            prefix: vec![vec![0; rows.len()]; t + 1],
            cols: Vec::with_capacity(t),
            counts: Vec::new(),
        }
    }

    /// Visits the t-sets whose first `depth` columns are chosen (the next one from
    /// `from` on; `weight` is the product of the chosen columns' level counts).
    #[allow(clippy::needless_range_loop)] // index loops on purpose, see below
    fn each(&mut self, depth: usize, from: usize, weight: usize, out: &mut Coverage, f: &mut Leaf<'_>) {
        // (plain index loops, as in `Bits::each`)
        if depth == self.t {
            self.counts.clear();
            self.counts.resize(weight, 0);
            let index = &self.prefix[depth];
            for r in 0..index.len() {
                let n = &mut self.counts[index[r] as usize];
                out.met[r] += u64::from(*n < self.lambda);
                *n += 1;
            }
            f(&self.cols, &self.counts, out);
            return;
        }
        let k = self.levels.len();
        for c in from..=k - (self.t - depth) {
            let (done, rest) = self.prefix.split_at_mut(depth + 1);
            let (prev, next, column) = (&done[depth], &mut rest[0], &self.columns[c]);
            let w = weight as u32;
            for r in 0..next.len() {
                next[r] = prev[r] + column[r] as u32 * w;
            }
            self.cols.push(c);
            self.each(depth + 1, c + 1, weight * self.levels[c], out, f);
            self.cols.pop();
        }
    }
}

/// Counting by level combination: for every column and level, the set of rows showing it
/// as a bit mask; a combination's rows are the AND of its levels' masks, its count their
/// number. Cheaper than [`Walk`] when a t-set has fewer combinations than there are rows
/// (per t-set: combinations × words instead of rows), e.g. a binary array of a few dozen
/// rows on thousands of columns.
struct Bits {
    t: usize,
    lambda: u64,
    levels: Vec<usize>,
    /// 64-bit words per row set.
    words: usize,
    /// `masks[c][l]`: the rows showing level l in column c, `words` words.
    masks: Vec<Vec<Vec<u64>>>,
    /// `sets[d]`: the row set of every combination on the first d columns of the current
    /// t-set, one after another.
    sets: Vec<Vec<u64>>,
    cols: Vec<usize>,
    counts: Vec<u64>,
}

impl Bits {
    /// Most bytes the masks may take.
    const MAX_BYTES: usize = 1 << 26;

    /// Whether counting by combination costs less than counting by row, in fitting memory.
    fn pays(rows: usize, levels: &[usize], t: usize) -> bool {
        let words = rows.div_ceil(64).max(1);
        let vmax = levels.iter().copied().max().unwrap_or(1);
        let combos = vmax.checked_pow(t as u32).unwrap_or(usize::MAX);
        let bytes = levels
            .len()
            .saturating_mul(vmax)
            .saturating_mul(words)
            .saturating_mul(8);
        combos.saturating_mul(words).saturating_mul(2) <= rows && bytes <= Self::MAX_BYTES
    }

    fn new(rows: &[Vec<u8>], levels: &[usize], t: usize, lambda: u64) -> Self {
        let words = rows.len().div_ceil(64).max(1);
        let masks = levels
            .iter()
            .enumerate()
            .map(|(c, &v)| {
                let mut m = vec![vec![0u64; words]; v];
                for (r, row) in rows.iter().enumerate() {
                    m[row[c] as usize][r / 64] |= 1 << (r % 64);
                }
                m
            })
            .collect();
        let mut sets = vec![Vec::new(); t + 1];
        sets[0] = vec![u64::MAX; words];
        if !rows.len().is_multiple_of(64) {
            sets[0][words - 1] = (1u64 << (rows.len() % 64)) - 1;
        }
        if rows.is_empty() {
            sets[0] = vec![0; words];
        }
        Bits {
            t,
            lambda,
            levels: levels.to_vec(),
            words,
            masks,
            sets,
            cols: Vec::with_capacity(t),
            counts: Vec::new(),
        }
    }

    /// As [`Walk::each`]. (Plain index loops: this runs in unoptimised builds too, where
    /// every iterator adapter is a call.)
    fn each(&mut self, depth: usize, from: usize, weight: usize, out: &mut Coverage, f: &mut Leaf<'_>) {
        let w = self.words;
        if depth == self.t {
            self.counts.clear();
            let set = &self.sets[depth];
            for combo in 0..weight {
                let mut n = 0u64;
                // the first λ rows of the combination meet its demand
                let mut left = self.lambda;
                for wi in 0..w {
                    let mut bits = set[combo * w + wi];
                    n += bits.count_ones() as u64;
                    while bits != 0 && left > 0 {
                        out.met[wi * 64 + bits.trailing_zeros() as usize] += 1;
                        bits &= bits - 1;
                        left -= 1;
                    }
                }
                self.counts.push(n);
            }
            f(&self.cols, &self.counts, out);
            return;
        }
        let k = self.levels.len();
        for c in from..=k - (self.t - depth) {
            let (done, rest) = self.sets.split_at_mut(depth + 1);
            let prev = &done[depth];
            let next = &mut rest[0];
            let v = self.levels[c];
            next.resize(weight * v * w, 0);
            // level l of column c is the most significant digit: combination old + l·weight
            for l in 0..v {
                let mask = &self.masks[c][l];
                for old in 0..weight {
                    for wi in 0..w {
                        next[(l * weight + old) * w + wi] = prev[old * w + wi] & mask[wi];
                    }
                }
            }
            self.cols.push(c);
            self.each(depth + 1, c + 1, weight * v, out, f);
            self.cols.pop();
        }
    }
}

/// Plain depth-first search: fill the unset factors that excludes mention, in column
/// order, pruning as soon as an exclude is already true.
fn completable(excludes: &[Expr], levels: &[usize], vars: &[usize], partial: &mut [u8]) -> bool {
    if excludes.iter().any(|e| e.eval_partial(partial) == Some(true)) {
        return false;
    }
    if excludes.iter().all(|e| e.eval_partial(partial) == Some(false)) {
        return true;
    }
    let Some(&f) = vars.iter().find(|&&f| partial[f] == UNSET) else {
        return false;
    };
    for l in 0..levels[f] {
        partial[f] = l as u8;
        if completable(excludes, levels, vars, partial) {
            partial[f] = UNSET;
            return true;
        }
    }
    partial[f] = UNSET;
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Each t-set's columns and counts, and the coverage's `met`.
    type Tally = (Vec<(Vec<usize>, Vec<u64>)>, Vec<u64>);

    fn tally(rows: &[Vec<u8>], levels: &[usize], t: usize, lambda: u64, bits: bool) -> Tally {
        let mut out = Coverage {
            interactions: 0,
            impossible: 0,
            min_count: 0,
            met: vec![0; rows.len()],
            demand: 0,
        };
        let mut seen = Vec::new();
        let mut leaf =
            |cols: &[usize], counts: &[u64], _: &mut Coverage| seen.push((cols.to_vec(), counts.to_vec()));
        if bits {
            Bits::new(rows, levels, t, lambda).each(0, 0, 1, &mut out, &mut leaf);
        } else {
            Walk::new(rows, levels, t, lambda).each(0, 0, 1, &mut out, &mut leaf);
        }
        (seen, out.met)
    }

    #[test]
    fn both_counting_strategies_agree() {
        // splitmix64 (Steele, Lea & Flood 2014) for the random arrays
        let mut state = 11u64;
        let mut next = move || {
            state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = state;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            z ^ (z >> 31)
        };
        for case in 0..60 {
            let k = 2 + (next() % 5) as usize;
            let levels: Vec<usize> = (0..k).map(|_| 1 + (next() % 4) as usize).collect();
            let t = 1 + (next() % k as u64) as usize;
            let n = [0usize, 1, 5, 63, 64, 65, 130][case % 7];
            let lambda = 1 + next() % 3;
            let rows: Vec<Vec<u8>> = (0..n)
                .map(|_| levels.iter().map(|&v| (next() % v as u64) as u8).collect())
                .collect();
            assert_eq!(
                tally(&rows, &levels, t, lambda, true),
                tally(&rows, &levels, t, lambda, false),
                "levels {levels:?} t={t} n={n} λ={lambda}"
            );
        }
    }

    #[test]
    fn met_counts_the_first_lambda_rows() {
        // two binary columns, t = 2, λ = 2: rows 00, 00, 00, 11: the third 00 meets
        // nothing, the 11 meets one
        let rows = vec![vec![0u8, 0], vec![0, 0], vec![0, 0], vec![1, 1]];
        for bits in [false, true] {
            let (_, met) = tally(&rows, &[2, 2], 2, 2, bits);
            assert_eq!(met, [1, 1, 0, 1], "bits: {bits}");
        }
    }
}
