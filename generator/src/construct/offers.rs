//! What each family of constructions offers for a spec: its index at the wanted strength
//! and its size, before anything is built. One function per family; [`candidates`]
//! gathers them and drops the offers another matches or beats.

use super::hadamard::{self, Recipe};
use super::stack::Offer;
use super::{
    MAX_WEIGHT_CLASS_COLUMNS, Source, best_within, binary, cyclotomy, difference, gf, hash_family,
    orthogonal, product,
};
use crate::factor::Row;

/// An offered construction: what it is, its index at the wanted strength, its rows, and
/// whether some interactions may be covered more than that index (collapsed levels, or
/// a composite of smaller constructions), so that rows may be redundant.
pub(super) struct Candidate {
    pub(super) source: Source,
    pub(super) offer: Offer,
    pub(super) slack: bool,
}

/// The spec the offers are for, and the offers so far.
struct Offers<'a> {
    levels: &'a [usize],
    k: usize,
    t: usize,
    lambda: u32,
    /// Most rows an offer may have.
    limit: usize,
    /// Most levels of any factor.
    vmax: usize,
    out: Vec<Candidate>,
}

impl Offers<'_> {
    fn offer(&mut self, source: Source, index: u32, rows: usize, slack: bool) {
        if index >= 1 && rows >= 1 && rows <= self.limit {
            self.out.push(Candidate {
                source,
                offer: Offer { index, rows },
                slack,
            });
        }
    }

    /// Whether some factor has fewer levels than a construction's q symbols, so that its
    /// levels collapse (and rows may turn redundant).
    fn collapses(&self, q: usize) -> bool {
        self.levels.iter().any(|&v| v < q)
    }
}

/// Every construction that fits, with its index and size.
pub(super) fn candidates(levels: &[usize], t: usize, lambda: u32, limit: usize) -> Vec<Candidate> {
    let mut o = Offers {
        levels,
        k: levels.len(),
        t,
        lambda,
        limit,
        vmax: levels.iter().copied().max().unwrap_or(1),
        out: Vec::new(),
    };
    general(&mut o);
    fields(&mut o);
    difference_matrices(&mut o);
    recursive(&mut o);
    bose_products(&mut o);
    two_level(&mut o);
    hash_families(&mut o);
    prune_dominated(o.out)
}

/// Constructions for any level counts: strength 1, the full factorial, zero-sum arrays.
fn general(o: &mut Offers<'_>) {
    let (k, t, vmax) = (o.k, o.t, o.vmax);
    if t == 1 {
        o.offer(Source::Strength1, 1, vmax, false);
    }
    // all combinations: a t-set is covered (product of the other k − t counts) times
    if let Some(n) = checked_product(o.levels.iter().copied()) {
        let mut sorted = o.levels.to_vec();
        sorted.sort_unstable();
        let index = sorted[..k - t]
            .iter()
            .try_fold(1u32, |acc, &v| acc.checked_mul(v as u32))
            .unwrap_or(u32::MAX)
            .min(o.lambda.max(1));
        o.offer(Source::FullFactorial, index, n, false);
    }
    if k == t + 1 {
        let mut sorted = o.levels.to_vec();
        sorted.sort_unstable_by(|a, b| b.cmp(a));
        if let Some(n) = checked_product(sorted[..t].iter().copied()) {
            o.offer(Source::ZeroSum, 1, n, false);
        }
    }
    if let (true, Some(n)) = (k == t + 2 && vmax >= 2, vmax.checked_pow(t as u32 + 1)) {
        // strength t + 1 has index vmax at strength t
        let slack = o.collapses(vmax);
        o.offer(
            Source::ZeroSumUniform { q: vmax, s: t + 1 },
            vmax as u32,
            n,
            slack,
        );
    }
}

/// Linear arrays over finite fields: Bush (Bose at t = 2) and Rao–Hamming.
fn fields(o: &mut Offers<'_>) {
    let (k, t, vmax) = (o.k, o.t, o.vmax);
    if t < 2 || k <= t + 1 {
        return;
    }
    // Bush / Bose: the smallest field with enough columns
    let bush_q = (vmax.max(t + 1)..=gf::MAX_ORDER)
        .filter(|&q| gf::prime_power(q).is_some())
        .find(|&q| orthogonal::bush_capacity(q, t) >= k);
    if let Some((q, n)) = bush_q.and_then(|q| Some((q, q.checked_pow(t as u32)?))) {
        let nucleus = k > q + 1;
        let fuse = vmax < q;
        let slack = o.collapses(q);
        o.offer(
            Source::Bush { q, t, nucleus, fuse },
            1,
            n - if fuse { 2 } else { 0 },
            slack,
        );
    }
    // the ovoid of PG(3, q): strength 3 with index q on q² + 1 columns (for index 1 it
    // costs q copies' rows; it pays where λ is a multiple of q or where Bush's q + 1
    // columns are too few), the smallest field with enough columns
    if t == 3
        && let Some(q) = (vmax..=gf::MAX_ORDER)
            .filter(|&q| gf::prime_power(q).is_some())
            .find(|&q| orthogonal::ovoid_capacity(q) >= k)
        && let Some(n) = q.checked_pow(4)
    {
        let slack = o.collapses(q);
        o.offer(Source::Ovoid { q }, q as u32, n, slack);
    }
    // Rao–Hamming: index q^(m−2), far more columns. The smallest field at every
    // dimension, and the smallest field with enough columns at dimension 3 (larger fields
    // only cost rows; q = 2 is Sylvester's Hadamard array, offered with the two-level
    // constructions).
    if t != 2 || vmax < 3 {
        return;
    }
    // At λ ≥ 2 a linear array of index λ = q^(m−2) is the optimum (λ·q² rows), but the
    // rows holding a pair of levels form a coset that the pairs of collinear columns share
    // (measured on 3^13: every pair shares all its rows with another), so those
    // interactions cannot be told apart by the λ rows a user asks for to tell them apart.
    // It is offered as the optimum it is; the engine decides per spec whether a design
    // that aliases fewer interactions is worth its extra rows (`ALIAS_FREE_SHARE` in
    // engine.rs) and says what is left: `Stats::aliased` counts such interactions; a
    // stack of two or more relabelled copies (λ a multiple of twice an index on offer)
    // shares only a copy's rows (see `relabelled`).
    // What aliasing costs, measured by the localisation benchmark (plugin/benches/
    // localise.rs, 200 trials each, a planted deterministic pair): 3^5…13 at λ = 3, the
    // array's 27 rows rank the pair first in 42% of trials (alone 22%), the engine's
    // choice (28.0 rows on average) in 69.5% (59.5%), λ relabelled copies of the λ = 1
    // design (40 rows) in 94% (alone 91%); 4^6…20 at λ = 4, 64 rows 33%, the engine's
    // 65.6 rows 48%, the copies' 104 rows 100%.
    let fields = || (vmax..=gf::MAX_ORDER).filter(|&q| gf::prime_power(q).is_some());
    let mut tries: Vec<(usize, u32)> = Vec::new();
    if let Some(q0) = fields().next() {
        let mut m = 3;
        while q0.checked_pow(m).is_some_and(|n| n <= o.limit) {
            tries.push((q0, m));
            m += 1;
        }
    }
    if let Some(q3) = fields().find(|&q| orthogonal::rao_hamming_capacity(q, 3) >= k) {
        tries.push((q3, 3));
    }
    for (q, m) in tries {
        let n = q.pow(m);
        if n <= o.limit && orthogonal::rao_hamming_capacity(q, m) >= k {
            let index = q.pow(m - 2).min(u32::MAX as usize) as u32;
            let slack = o.collapses(q);
            o.offer(Source::RaoHamming { q, m }, index, n, slack);
        }
    }
}

/// Masuyama's index-2 arrays OA(2q²; 2, 2^1 q^(2q+1)) from a difference matrix
/// D(2q, 2q; q) (see `difference`), over the smallest odd field with the levels: a factor of
/// at most two levels, where the spec has one and needs every column, takes the array's
/// two-level column.
fn difference_matrices(o: &mut Offers<'_>) {
    let (k, levels) = (o.k, o.levels);
    if o.t != 2 || o.lambda < 2 || k < 3 {
        return;
    }
    let small = (0..k).filter(|&f| levels[f] <= 2).min_by_key(|&f| levels[f]);
    let vmax = (0..k)
        .filter(|&f| Some(f) != small)
        .map(|f| levels[f])
        .max()
        .unwrap_or(2);
    let odd = |q: &usize| !q.is_multiple_of(2) && gf::prime_power(*q).is_some();
    let Some(q) = (vmax.max(3)..=gf::MAX_ORDER).find(odd) else {
        return;
    };
    let two_level = small.filter(|_| k == 2 * q + 2);
    if k > 2 * q + 1 + usize::from(two_level.is_some()) {
        return;
    }
    let Some(field) = gf::Field::new(q) else {
        return;
    };
    let Some(d) = difference::matrix(&field) else {
        return;
    };
    let array = difference::array(&field, &d);
    // the array's column for each factor: the two-level one, or the next q-level one
    let mut next = 1;
    let columns: Vec<usize> = (0..k)
        .map(|f| {
            if Some(f) == two_level {
                0
            } else {
                next += 1;
                next - 1
            }
        })
        .collect();
    let rows: Vec<Row> = array
        .iter()
        .map(|r| columns.iter().map(|&c| r[c]).collect())
        .collect();
    let n = rows.len();
    let slack = (0..k).any(|f| levels[f] < if Some(f) == two_level { 2 } else { q });
    let name = format!("masuyama(q={q})");
    o.offer(Source::Rows(name, rows), 2, n, slack);
}

/// Arrays built from smaller arrays of the same spec family: strength 3 on twice the
/// columns (v ≥ 3; the binary case is Roux's, among the two-level constructions).
fn recursive(o: &mut Offers<'_>) {
    if o.t == 3
        && o.lambda == 1
        && o.vmax >= 3
        && o.k >= 6
        && let Some((name, rows)) = doubling(o.vmax, o.k, o.limit)
    {
        let n = rows.len();
        // its parts had their redundant rows removed already
        let slack = o.collapses(o.vmax);
        o.offer(Source::Rows(name, rows), 1, n, slack);
    }
}

/// The product (see `product`) of the Bose array OA(q²; 2, q, q) on the columns (1, x),
/// x ∈ GF(q), with itself: both hold the q constant rows (u = (a, 0)), so it has
/// 2q² − q rows for up to q² columns, over the smallest field with the levels and enough
/// columns — where Bose's q + 1 columns are too few and Rao–Hamming's q³ rows too many
/// (10^50 at t = 2: 231 rows over GF(11), where the tabu search stalls near 243).
fn bose_products(o: &mut Offers<'_>) {
    let (k, vmax) = (o.k, o.vmax);
    if o.t != 2 || o.lambda != 1 || vmax < 3 {
        return;
    }
    let Some(q) = (vmax..=gf::MAX_ORDER)
        .filter(|&q| gf::prime_power(q).is_some())
        .find(|&q| q * q >= k)
    else {
        return;
    };
    if k <= q + 1 || 2 * q * q - q > o.limit {
        return;
    }
    let Some(field) = gf::Field::new(q) else {
        return;
    };
    // q ≤ 256 (the field limit), so every x fits a level
    let columns: Vec<Vec<u8>> = (0..q).map(|x| vec![1, x as u8]).collect();
    let oa = orthogonal::linear(&field, &columns);
    let rows = product::product(&oa, &oa, o.levels);
    let n = rows.len();
    // collapsed levels, and the pairs of columns from one row of A that B covers again
    o.offer(Source::Rows(format!("bose-product(q={q})"), rows), 1, n, true);
}

/// Covering perfect hash families over the smallest field with the levels (Sherwood,
/// Martirosyan & Colbourn 2006; Colbourn, Lanus & Sarkar 2018): n·(q^t − q) + q rows with
/// Sherwood's vectors, n·(q^t − 1) + 1 with any, for the fewest family rows n the search
/// finds, tried only while that is below every other offer — past Bush's q + 1 columns,
/// where one linear array is not enough.
fn hash_families(o: &mut Offers<'_>) {
    let (k, t, vmax) = (o.k, o.t, o.vmax);
    if t < 3 || o.lambda != 1 || vmax < 3 {
        return;
    }
    let Some(q) = (vmax..=gf::MAX_ORDER).find(|&q| gf::prime_power(q).is_some()) else {
        return;
    };
    if k <= orthogonal::bush_capacity(q, t) {
        return;
    }
    let others = o.out.iter().map(|c| c.offer.rows).min().unwrap_or(usize::MAX);
    let Some(field) = gf::Field::new(q) else {
        return;
    };
    let mut others = others;
    if t == 3
        && let Some(rows) = hash_family::singer_pair(&field, k)
    {
        // Sherwood's two-row family still saves q − 1 rows where the search finds it
        // (3^10: 51 rows, which the strength-3 doubling of 3^20 builds on)
        let n = rows.len();
        let slack = o.collapses(q);
        o.offer(Source::Rows(format!("singer-pair(q={q})"), rows), 1, n, slack);
        others = others.min(n);
    }
    // Sherwood's vectors first at each n (fewer rows), then any vectors (more columns)
    for n in 2.. {
        for kind in [hash_family::Kind::Affine, hash_family::Kind::Projective] {
            let Some(size) = hash_family::size(kind, q, t, n).filter(|&s| s < others && s <= o.limit) else {
                return;
            };
            if let Some(family) = hash_family::family(&field, kind, t, k, n) {
                let rows: Vec<Row> = hash_family::rows(&field, kind, t, &family);
                debug_assert!(rows.len() <= size);
                let slack = o.collapses(q);
                let name = hash_family::name(kind, q, t, n);
                let n = rows.len();
                o.offer(Source::Rows(name, rows), 1, n, slack);
                return;
            }
        }
    }
}

/// Two-level constructions: Kleitman–Spencer, Hadamard arrays and their fold-overs, the
/// strength-3 bases and doublings, the Johnson–Entringer weight class.
fn two_level(o: &mut Offers<'_>) {
    let (k, t, lambda, limit) = (o.k, o.t, o.lambda, o.limit);
    if o.vmax > 2 || t < 2 || k <= t + 1 {
        return;
    }
    let slack = o.collapses(2);
    if t == 2 {
        o.offer(Source::KleitmanSpencer, 1, binary::ks_rows(k), slack);
        for (n, r) in hadamard_range(k + 1, 4 * lambda as usize, limit) {
            o.offer(Source::Hadamard(r), (n / 4) as u32, n, slack);
        }
    }
    if t == 3 {
        for (n, r) in hadamard_range(k, 4 * lambda as usize, limit / 2) {
            o.offer(Source::FoldOver(r), (n / 4) as u32, 2 * n, slack);
        }
        // the best index-1 array from bases and doubling
        if let Some((name, rows)) = binary::strength_three(k) {
            let n = rows.len();
            o.offer(Source::Rows(name, rows), 1, n, slack);
        }
        if lambda >= 2 {
            hadamard_by_count(o, slack);
        }
    }
    if k == t + 2 && k <= MAX_WEIGHT_CLASS_COLUMNS {
        o.offer(Source::WeightMod3, 1, (1 << k) / 3, slack);
    }
    if t >= 3 {
        for (name, rows, index) in cyclotomy::arrays(k, t, limit) {
            let n = rows.len();
            o.offer(Source::Rows(name, rows), index, n, slack);
        }
    }
}

/// Strength-2 Hadamard arrays that happen to cover every triple of the first k columns
/// several times (counted, not assumed), smaller than the first fold-over that fits.
fn hadamard_by_count(o: &mut Offers<'_>, slack: bool) {
    let (k, limit) = (o.k, o.limit);
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
                o.offer(Source::Rows(name, rows), index, n, slack);
            }
        }
    }
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
    let rows = doubled(&a.rows, &b.rows, v, k);
    Some((format!("doubling({}; {})", a.method, b.method), rows))
}

/// The rows of the v-ary doubling (see `doubling`) of a strength-3 array `a` and a
/// strength-2 array `b` on the same ⌈k/2⌉ columns of v levels, cut to k columns.
pub(crate) fn doubled(a: &[Row], b: &[Row], v: usize, k: usize) -> Vec<Row> {
    let mut rows: Vec<Row> = a.iter().map(|r| [r.as_slice(), r.as_slice()].concat()).collect();
    for s in 1..v {
        rows.extend(b.iter().map(|r| {
            let shifted: Vec<u8> = r.iter().map(|&x| ((x as usize + s) % v) as u8).collect();
            [r.as_slice(), shifted.as_slice()].concat()
        }));
    }
    for r in &mut rows {
        r.truncate(k);
    }
    rows
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
