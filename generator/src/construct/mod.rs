//! Algebraic constructions: exact designs for the parameter sets where mathematics gives
//! the optimum (or near it), tried before any search.
//!
//! [`best`] gathers every construction that fits the level counts — after dropping
//! columns and collapsing levels where a construction has more of either — together with
//! the index each gives, stacks copies to reach λ as cheaply as possible
//! (a knapsack over the index), and removes rows that the result covers more than needed.

mod binary;
pub mod gf;
pub mod hadamard;
mod orthogonal;
mod stack;
mod transform;

use hadamard::Recipe;
use stack::Offer;

use crate::bounds;
use crate::model::{MAX_LEVELS, MAX_ROWS, Row};
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

/// An offered construction: what it is, its index at the wanted strength, its rows, and
/// whether some interactions may be covered more than that index (collapsed levels, or
/// a composite of smaller constructions), so that rows may be redundant.
struct Candidate {
    source: Source,
    offer: Offer,
    slack: bool,
}

/// The smallest construction that applies to these level counts at strength `t` and
/// index `lambda`, if any.
///
/// ```
/// use heddle_generator::construct::best;
/// // Bose (1938): OA(25; 2, 6, 5)
/// let c = best(&[5; 6], 2, 1).unwrap();
/// assert_eq!(c.rows.len(), 25);
/// assert!(c.optimal);
/// ```
pub fn best(levels: &[usize], t: usize, lambda: u32) -> Option<Construction> {
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
            rows.extend(relabelled(&block, levels, copies));
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
/// the levels of each column permuted (a different permutation per column and copy).
///
/// A permutation of a column's levels maps a covering array to a covering array, so the
/// stack covers just the same; but identical copies would make every pair of levels
/// that shares a row in the block share all its λ rows, and then a failure could never
/// be pinned on one of them — the reason λ ≥ 2 is asked for. Relabelled copies put
/// each interaction beside different company in each copy.
fn relabelled(block: &[Row], levels: &[usize], copy: u64) -> Vec<Row> {
    if copy == 0 {
        return block.to_vec();
    }
    let mut rng = Rng::new(copy, stream::CONSTRUCT);
    let perms: Vec<Vec<u8>> = levels
        .iter()
        .map(|&v| {
            let mut p: Vec<u8> = (0..v as u8).collect();
            rng.shuffle(&mut p);
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

/// Every construction that fits, with its index and size.
fn candidates(levels: &[usize], t: usize, lambda: u32, limit: usize) -> Vec<Candidate> {
    let k = levels.len();
    let vmax = levels.iter().copied().max().unwrap_or(1);
    let mut out = Vec::new();
    let mut offer = |source: Source, index: u32, rows: usize, slack: bool| {
        if index >= 1 && rows >= 1 && rows <= limit {
            out.push(Candidate {
                source,
                offer: Offer { index, rows },
                slack,
            });
        }
    };
    // a factor's levels collapse when it has fewer than the construction's q symbols
    let collapses = |q: usize| levels.iter().any(|&v| v < q);

    if t == 1 {
        offer(Source::Strength1, 1, vmax, false);
    }
    // all combinations: a t-set is covered (product of the other k − t counts) times
    if let Some(n) = checked_product(levels.iter().copied()) {
        let mut sorted = levels.to_vec();
        sorted.sort_unstable();
        let index = sorted[..k - t]
            .iter()
            .try_fold(1u32, |acc, &v| acc.checked_mul(v as u32))
            .unwrap_or(u32::MAX)
            .min(lambda.max(1));
        offer(Source::FullFactorial, index, n, false);
    }
    if k == t + 1 {
        let mut sorted = levels.to_vec();
        sorted.sort_unstable_by(|a, b| b.cmp(a));
        if let Some(n) = checked_product(sorted[..t].iter().copied()) {
            offer(Source::ZeroSum, 1, n, false);
        }
    }
    if let (true, Some(n)) = (k == t + 2 && vmax >= 2, vmax.checked_pow(t as u32 + 1)) {
        // strength t + 1 has index vmax at strength t
        offer(
            Source::ZeroSumUniform { q: vmax, s: t + 1 },
            vmax as u32,
            n,
            collapses(vmax),
        );
    }

    if t >= 2 && k > t + 1 {
        // Bush / Bose: the smallest field with enough columns
        let bush_q = (vmax.max(t + 1)..=gf::MAX_ORDER)
            .filter(|&q| gf::prime_power(q).is_some())
            .find(|&q| orthogonal::bush_capacity(q, t) >= k);
        if let Some((q, n)) = bush_q.and_then(|q| Some((q, q.checked_pow(t as u32)?))) {
            let nucleus = k > q + 1;
            let fuse = vmax < q;
            offer(
                Source::Bush { q, t, nucleus, fuse },
                1,
                n - if fuse { 2 } else { 0 },
                collapses(q),
            );
        }
        // Rao–Hamming: index q^(m−2), far more columns. The smallest field at every
        // dimension, and the smallest field with enough columns at dimension 3 (larger
        // fields only cost rows; q = 2 is Sylvester's Hadamard array, offered below).
        if t == 2 && vmax >= 3 {
            let fields = || (vmax..=gf::MAX_ORDER).filter(|&q| gf::prime_power(q).is_some());
            let mut tries: Vec<(usize, u32)> = Vec::new();
            if let Some(q0) = fields().next() {
                let mut m = 3;
                while q0.checked_pow(m).is_some_and(|n| n <= limit) {
                    tries.push((q0, m));
                    m += 1;
                }
            }
            if let Some(q3) = fields().find(|&q| orthogonal::rao_hamming_capacity(q, 3) >= k) {
                tries.push((q3, 3));
            }
            for (q, m) in tries {
                let n = q.pow(m);
                // A linear array of index q^(m-2) ≥ 3: the rows holding a pair of levels
                // form a coset that many other pairs share (measured on 3^13: every pair
                // shares all its rows with another), so the λ ≥ 2 a user asks for to tell
                // interactions apart would tell none apart. Other methods cost a few rows
                // more. (Sylvester's Hadamard arrays are linear too, but are the only
                // optimum for some orders, e.g. CAN_4(2, 15, 2) = 16, so they stay.)
                if lambda >= 2 {
                    continue;
                }
                if n <= limit && orthogonal::rao_hamming_capacity(q, m) >= k {
                    let index = q.pow(m - 2).min(u32::MAX as usize) as u32;
                    offer(Source::RaoHamming { q, m }, index, n, collapses(q));
                }
            }
        }
    }

    // strength 3 on twice the columns from strength 3 and 2 on half (v ≥ 3; the binary
    // case is Roux's, inside `binary::strength_three`)
    if t == 3
        && lambda == 1
        && vmax >= 3
        && k >= 6
        && let Some((name, rows)) = doubling(vmax, k, limit)
    {
        let n = rows.len();
        // its parts had their redundant rows removed already
        offer(Source::Rows(name, rows), 1, n, collapses(vmax));
    }

    if vmax <= 2 && t >= 2 && k > t + 1 {
        let slack = collapses(2);
        if t == 2 {
            offer(Source::KleitmanSpencer, 1, binary::ks_rows(k), slack);
            for (n, r) in hadamard_range(k + 1, 4 * lambda as usize, limit) {
                offer(Source::Hadamard(r), (n / 4) as u32, n, slack);
            }
        }
        if t == 3 {
            for (n, r) in hadamard_range(k, 4 * lambda as usize, limit / 2) {
                offer(Source::FoldOver(r), (n / 4) as u32, 2 * n, slack);
            }
            // the best index-1 array from bases and doubling
            if let Some((name, rows)) = binary::strength_three(k) {
                let n = rows.len();
                offer(Source::Rows(name, rows), 1, n, slack);
            }
            // strength-2 Hadamard arrays that happen to cover every triple several times
            if lambda >= 2 {
                let fold = hadamard_range(k, 0, limit / 2).first().map(|(n, _)| 2 * n);
                let top = binary::MAX_BASE_ORDER;
                for (n, r) in hadamard_range(k + 1, top, top) {
                    if fold.is_some_and(|f| n >= f) {
                        break;
                    }
                    let mut recipes = hadamard::direct_recipes(n);
                    if !recipes.contains(&r) {
                        recipes.push(r);
                    }
                    for r in recipes {
                        let rows: Vec<Row> = r.build().strength_two();
                        let (index, _) = binary::triple_coverage(&rows, k);
                        if index >= 2 {
                            let rows = rows.into_iter().map(|row| row[..k].to_vec()).collect();
                            let name = format!("hadamard(n={n},{},strength 3 by count)", r.name());
                            offer(Source::Rows(name, rows), index, n, slack);
                        }
                    }
                }
            }
        }
        if k == t + 2 && k <= MAX_WEIGHT_CLASS_COLUMNS {
            offer(Source::WeightMod3, 1, (1 << k) / 3, slack);
        }
    }
    prune_dominated(out)
}

/// CA(N + (v − 1)M; 3, 2h, v) from A = CA(N; 3, h, v) and B = CA(M; 2, h, v): the rows
/// [A A] and [B B+s] for s = 1 … v − 1 (levels added mod v), the v-ary form of Roux's
/// doubling (Chateauneuf & Kreher 2002, from memory), with h = ⌈k/2⌉ and A, B the best
/// constructions for v^h; the first k columns are kept.
///
/// Why it covers: a triple on three different original columns lies in A. A triple
/// (i, j, i′) with i′ the right copy of i shows level difference 0 between i and i′ in
/// [A A] and s in [B B+s]; B covers every pair on (i, j) (or (i, l) for (i, i′, l′)).
fn doubling(v: usize, k: usize, limit: usize) -> Option<(String, Vec<Row>)> {
    let h = k.div_ceil(2);
    let a = best_within(&vec![v; h], 3, 1, limit)?;
    let b = best_within(&vec![v; h], 2, 1, limit)?;
    let mut rows: Vec<Row> = a
        .rows
        .iter()
        .map(|r| [r.as_slice(), r.as_slice()].concat())
        .collect();
    for s in 1..v {
        rows.extend(b.rows.iter().map(|r| {
            let shifted: Vec<u8> = r.iter().map(|&x| ((x as usize + s) % v) as u8).collect();
            [r.as_slice(), shifted.as_slice()].concat()
        }));
    }
    for r in &mut rows {
        r.truncate(k);
    }
    Some((format!("doubling({}; {})", a.method, b.method), rows))
}

/// The known Hadamard orders n ≥ `from` (multiples of 4) up to the first one ≥ `enough`,
/// never beyond `limit`, each with its recipe.
fn hadamard_range(from: usize, enough: usize, limit: usize) -> Vec<(usize, Recipe)> {
    let from = from.max(4);
    let want = from.max(enough);
    let cap = limit.min(hadamard::MAX_ORDER);
    if from > cap {
        return Vec::new();
    }
    // known orders are dense among multiples of 4 in this range, so a margin suffices
    let known = hadamard::known_orders((want + 256).min(cap));
    let mut out = Vec::new();
    for (n, r) in known.into_iter().filter(|&(n, _)| n >= from) {
        let last = n >= want;
        out.push((n, r));
        if last {
            break;
        }
    }
    out
}

/// Drops offers that another offer matches or beats on both index and rows (the earlier
/// of two equal ones stays).
fn prune_dominated(cands: Vec<Candidate>) -> Vec<Candidate> {
    let keep: Vec<bool> = (0..cands.len())
        .map(|i| {
            let a = cands[i].offer;
            !cands.iter().enumerate().any(|(j, b)| {
                let b = b.offer;
                j != i
                    && b.index >= a.index
                    && b.rows <= a.rows
                    && ((b.index, b.rows) != (a.index, a.rows) || j < i)
            })
        })
        .collect();
    cands
        .into_iter()
        .zip(keep)
        .filter_map(|(c, k)| k.then_some(c))
        .collect()
}

fn checked_product(it: impl IntoIterator<Item = usize>) -> Option<usize> {
    it.into_iter().try_fold(1usize, |acc, v| acc.checked_mul(v))
}
