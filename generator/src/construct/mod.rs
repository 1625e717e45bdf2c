//! Algebraic constructions: exact designs for the parameter sets where mathematics gives
//! the optimum (or near it), tried before any search.
//!
//! [`best`] gathers every construction that fits the level counts — after dropping
//! columns and collapsing levels where a construction has more of either — together with
//! the index each gives, stacks copies to reach λ as cheaply as possible
//! (a knapsack over the index), and removes rows that the result covers more than needed.

mod binary;
mod cyclotomy;
mod difference;
pub(crate) mod gf;
mod hadamard;
mod hash_family;
mod offers;
mod orthogonal;
mod product;
mod stack;
#[cfg(test)]
mod tests;
mod transform;

use hadamard::Recipe;
pub(crate) use offers::doubled;
use offers::{Candidate, candidates};
pub(crate) use product::{constant_rows, product, split};
use stack::Offer;
pub(crate) use transform::collapse;

use crate::bounds;
use crate::factor::Row;
use crate::limits::{MAX_LEVELS, MAX_ROWS};
use crate::rng::{Rng, stream};

/// A design produced by a construction.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Construction {
    /// The rows, one entry per factor, levels below each factor's count.
    pub rows: Vec<Row>,
    /// Which construction, with its parameters, for reports: e.g. `bose(q=5)`,
    /// `3×rao-hamming(q=3,m=3)` for stacked copies, `a+b` for a stack of two kinds, and a
    /// final `-n` when n redundant rows were removed afterwards.
    pub method: String,
    /// Whether the size is a proven minimum: the counting bound λ·(product of the t
    /// largest level counts), Kleitman–Spencer/Katona (binary, t = 2, λ = 1) or
    /// Johnson–Entringer (binary, k = t + 2, λ = 1).
    pub optimal: bool,
}

/// Most cells (rows × factors) of a construction that is built; larger ones would never
/// beat the greedy anyway.
const MAX_CELLS: usize = 1 << 26;

/// Most columns for the Johnson–Entringer weight class (it lists 2^k vectors).
const MAX_WEIGHT_CLASS_COLUMNS: usize = 24;

/// Most single constructions tried besides the cheapest stack when rows can be removed.
const MAX_ALTERNATIVES: usize = 4;

/// The constructions, each fitted to the spec by dropping columns and collapsing levels.
#[derive(Clone, Debug)]
enum Source {
    /// t = 1: row i shows i mod v in every column.
    Strength1,
    /// All combinations of all factors.
    FullFactorial,
    /// k = t + 1, any levels: see [`orthogonal::zero_sum`].
    ZeroSum,
    /// The zero-sum array of strength s over q symbols, s + 1 columns.
    ZeroSumUniform { q: usize, s: usize },
    /// Bush (Bose for t = 2) over GF(q), with the hyperoval column if `nucleus`, fused
    /// (two rows fewer) if `fuse`.
    Bush {
        q: usize,
        t: usize,
        nucleus: bool,
        fuse: bool,
    },
    /// Rao–Hamming over GF(q) of dimension m.
    RaoHamming { q: usize, m: u32 },
    /// The ovoid of PG(3, q): strength 3, index q.
    Ovoid { q: usize },
    /// Kleitman–Spencer / Katona.
    KleitmanSpencer,
    /// The strength-2 array of a Hadamard matrix.
    Hadamard(Recipe),
    /// The fold-over of a Hadamard matrix.
    FoldOver(Recipe),
    /// Johnson–Entringer weight class.
    WeightMod3,
    /// Rows already built (and counted), with a name.
    Rows(String, Vec<Row>),
}

impl Source {
    fn name(&self) -> String {
        match self {
            Source::Strength1 => "strength-1".into(),
            Source::FullFactorial => "full-factorial".into(),
            Source::ZeroSum => "zero-sum".into(),
            Source::ZeroSumUniform { q, s } => format!("zero-sum(q={q},strength={s})"),
            Source::Bush { q, t, nucleus, fuse } => {
                let base = if *t == 2 {
                    format!("bose(q={q}")
                } else {
                    format!("bush(q={q},t={t}")
                };
                format!(
                    "{base}{}{})",
                    if *nucleus { ",hyperoval" } else { "" },
                    if *fuse { ",fused" } else { "" }
                )
            }
            Source::RaoHamming { q, m } => format!("rao-hamming(q={q},m={m})"),
            Source::Ovoid { q } => format!("ovoid(q={q})"),
            Source::KleitmanSpencer => "kleitman-spencer".into(),
            Source::Hadamard(r) => format!("hadamard(n={},{})", r.order(), r.name()),
            Source::FoldOver(r) => format!("fold-over(n={},{})", r.order(), r.name()),
            Source::WeightMod3 => "weight-mod-3".into(),
            Source::Rows(name, _) => name.clone(),
        }
    }

    /// The rows for these level counts (in the spec's column order).
    fn build(&self, levels: &[usize], t: usize) -> Vec<Row> {
        let k = levels.len();
        match self {
            Source::Strength1 => {
                let vmax = levels.iter().copied().max().unwrap_or(1);
                (0..vmax)
                    .map(|i| levels.iter().map(|&v| (i % v) as u8).collect())
                    .collect()
            }
            Source::FullFactorial => orthogonal::full_factorial(levels),
            Source::ZeroSum => orthogonal::zero_sum(levels),
            Source::ZeroSumUniform { q, s } => {
                transform::collapse(&orthogonal::zero_sum(&vec![*q; s + 1]), levels)
            }
            Source::Bush { q, t, nucleus, fuse } => {
                // only offered for prime powers within the field limit
                let field = gf::Field::new(*q).expect("bush over a supported prime power");
                let cols = orthogonal::bush_columns(&field, *t, *nucleus);
                let rows = orthogonal::linear(&field, &cols[..k]);
                if *fuse {
                    transform::fuse(&rows, *q, levels)
                } else {
                    transform::collapse(&rows, levels)
                }
            }
            Source::RaoHamming { q, m } => {
                let field = gf::Field::new(*q).expect("rao-hamming over a supported prime power");
                let cols = orthogonal::rao_hamming_columns(&field, *m as usize);
                transform::collapse(&orthogonal::linear(&field, &cols[..k]), levels)
            }
            Source::Ovoid { q } => {
                let field = gf::Field::new(*q).expect("ovoid over a supported prime power");
                let cols = orthogonal::ovoid_columns(&field);
                transform::collapse(&orthogonal::linear(&field, &cols[..k]), levels)
            }
            Source::KleitmanSpencer => transform::collapse(&binary::kleitman_spencer(k), levels),
            Source::Hadamard(r) => transform::collapse(&r.build().strength_two(), levels),
            Source::FoldOver(r) => transform::collapse(&r.build().fold_over(), levels),
            Source::WeightMod3 => {
                debug_assert_eq!(k, t + 2);
                transform::collapse(&binary::weight_mod_3(k).1, levels)
            }
            Source::Rows(_, rows) => transform::collapse(rows, levels),
        }
    }
}

/// The smallest construction that applies to these level counts at strength `t` and
/// index `lambda`, if any (e.g. Bose 1938's OA(25; 2, 6, 5) for 5^6, see the tests).
pub(crate) fn best(levels: &[usize], t: usize, lambda: u32) -> Option<Construction> {
    best_within(levels, t, lambda, row_limit(levels, t, lambda))
}

/// [`best`] with at most `limit` rows (a composite construction lets its parts be larger
/// than their own spec would allow).
fn best_within(levels: &[usize], t: usize, lambda: u32, limit: usize) -> Option<Construction> {
    let k = levels.len();
    if t == 0 || t > k || lambda == 0 || levels.iter().any(|&v| v == 0 || v > MAX_LEVELS) {
        return None;
    }
    let candidates = candidates(levels, t, lambda, limit);
    let offers: Vec<Offer> = candidates.iter().map(|c| c.offer).collect();
    let (total, counts) = stack::cheapest(&offers, lambda)?;
    if total > limit {
        return None;
    }
    let plans = plans(&candidates, counts, levels, t, lambda, limit.min(2 * total));
    let (rows, method) = plans
        .iter()
        .map(|plan| assemble(&candidates, plan, levels, t, lambda))
        .min_by_key(|(rows, _)| rows.len())?;
    let optimal = is_proven_optimal(levels, t, lambda, rows.len());
    Some(Construction {
        rows,
        method,
        optimal,
    })
}

/// The stacks worth building: the cheapest one, and — because removing redundant rows
/// after collapsing can reorder the sizes — copies of each of a few constructions with
/// slack (collapsed levels, or more index than needed) alone, those of at most `limit` rows whose redundancy can be searched.
fn plans(
    candidates: &[Candidate],
    cheapest: Vec<usize>,
    levels: &[usize],
    t: usize,
    lambda: u32,
    limit: usize,
) -> Vec<Vec<usize>> {
    let mut alternatives: Vec<(usize, usize, usize)> = candidates
        .iter()
        .enumerate()
        .filter_map(|(i, c)| {
            let copies = lambda.div_ceil(c.offer.index) as usize;
            let surplus = copies as u64 * c.offer.index as u64 > lambda as u64;
            (c.slack || surplus).then_some((copies * c.offer.rows, i, copies))
        })
        .filter(|&(rows, _, _)| rows <= limit && transform::prunable(levels, t, rows))
        .collect();
    alternatives.sort_unstable();
    let mut plans = vec![cheapest];
    for (_, i, copies) in alternatives.into_iter().take(MAX_ALTERNATIVES) {
        let mut plan = vec![0; candidates.len()];
        plan[i] = copies;
        if !plans.contains(&plan) {
            plans.push(plan);
        }
    }
    plans
}

/// The rows of a stack (`counts[i]` copies of candidate i), with redundant rows removed
/// where collapsing or surplus index left some, and its method name.
fn assemble(
    candidates: &[Candidate],
    counts: &[usize],
    levels: &[usize],
    t: usize,
    lambda: u32,
) -> (Vec<Row>, String) {
    let mut rows = Vec::new();
    let mut parts = Vec::new();
    let mut index = 0u64;
    let mut slack = false;
    let mut copies = 0u64;
    for (cand, &n) in candidates.iter().zip(counts) {
        if n == 0 {
            continue;
        }
        let block = cand.source.build(levels, t);
        debug_assert_eq!(block.len(), cand.offer.rows);
        for _ in 0..n {
            rows.extend(relabelled(&block, levels, &vec![true; levels.len()], copies));
            copies += 1;
        }
        index += n as u64 * cand.offer.index as u64;
        slack |= cand.slack;
        let name = cand.source.name();
        parts.push(if n == 1 { name } else { format!("{n}×{name}") });
    }
    let mut method = parts.join("+");
    if slack || index > lambda as u64 {
        let dropped = transform::drop_redundant(&mut rows, levels, t, lambda);
        if dropped > 0 {
            method.push_str(&format!("-{dropped}"));
        }
    }
    (rows, method)
}

/// Copy number `copy` of a block in a stack: the first as built, every further one with
/// the levels of each `free` column permuted (a different permutation per column and
/// copy; a column an exclude mentions is not free, so that allowed rows stay allowed).
///
/// A permutation of a column's levels maps a covering array to a covering array, so the
/// stack covers just the same; but identical copies would make every pair of levels
/// that shares a row in the block share all its λ rows, and then a failure could never
/// be pinned on one of them — the reason λ ≥ 2 is asked for. Relabelled copies put
/// each interaction beside different company in each copy.
pub(crate) fn relabelled(block: &[Row], levels: &[usize], free: &[bool], copy: u64) -> Vec<Row> {
    if copy == 0 {
        return block.to_vec();
    }
    let mut rng = Rng::new(copy, stream::CONSTRUCT);
    let perms: Vec<Vec<u8>> = levels
        .iter()
        .zip(free)
        .map(|(&v, &free)| {
            let mut p: Vec<u8> = (0..v as u8).collect();
            // drawn for every column, so a column's permutation does not depend on others
            rng.shuffle(&mut p);
            if !free {
                p.sort_unstable();
            }
            p
        })
        .collect();
    block
        .iter()
        .map(|row| row.iter().zip(&perms).map(|(&l, p)| p[l as usize]).collect())
        .collect()
}

/// Whether `rows` rows is a proven minimum for these parameters.
fn is_proven_optimal(levels: &[usize], t: usize, lambda: u32, rows: usize) -> bool {
    let k = levels.len();
    let binary = levels.iter().all(|&v| v == 2);
    rows as u128 == bounds::lower_bound(levels, t, lambda)
        || (binary && lambda == 1 && t == 2 && rows == binary::ks_rows(k))
        || (binary
            && lambda == 1
            && k == t + 2
            && 1usize.checked_shl(k as u32).is_some_and(|n| rows == n / 3))
}

/// The most rows worth building: the expected-value bound, and a memory cap. A greedy
/// that always takes a row covering at least the average share of what is left reaches
/// the expected-value bound for λ = 1 (the same first-moment count), and greedy results
/// are well below it in practice, so a larger construction would never be kept.
fn row_limit(levels: &[usize], t: usize, lambda: u32) -> usize {
    let expected = bounds::expected_bound(levels, t, lambda);
    let cells = MAX_CELLS / levels.len().max(1);
    (expected.min(MAX_ROWS) as usize).min(cells)
}
