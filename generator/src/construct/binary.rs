//! Two-level constructions: Kleitman–Spencer / Katona for strength 2, Johnson–Entringer
//! for k = t + 2, and strength 3 from Hadamard arrays and Roux's doubling.

use std::sync::OnceLock;

use super::hadamard;
use crate::factor::Row;

/// C(n, r), saturating at `u128::MAX`.
fn binomial(n: usize, r: usize) -> u128 {
    if r > n {
        return 0;
    }
    let r = r.min(n - r);
    let mut c: u128 = 1;
    for i in 0..r {
        // c · (n − i) / (i + 1) is exact at every step (it is C(n, i + 1))
        c = match c.checked_mul((n - i) as u128) {
            Some(x) => x / (i as u128 + 1),
            None => return u128::MAX,
        };
    }
    c
}

/// The least N with C(N − 1, ⌈N/2⌉) ≥ k: the size of the smallest binary covering array
/// of strength 2 on k ≥ 2 factors (Kleitman & Spencer 1973; Katona 1973).
pub fn ks_rows(k: usize) -> usize {
    (2..)
        .find(|&n: &usize| binomial(n - 1, n.div_ceil(2)) >= k as u128)
        .unwrap_or(usize::MAX)
}

/// The Kleitman–Spencer array: N = [`ks_rows`] rows; row 0 all zeros; column j is 1 in
/// rows 1 + i for i in the j-th ⌈N/2⌉-subset of {0 … N − 2} (lexicographic order).
///
/// Why it covers: two distinct columns are distinct subsets A, B of one size w, so A \ B
/// and B \ A are nonempty (levels 1,0 and 0,1); 2w ≥ N > N − 1 forces A ∩ B ≠ ∅ (1,1);
/// row 0 gives 0,0.
pub fn kleitman_spencer(k: usize) -> Vec<Row> {
    let n = ks_rows(k);
    let w = n.div_ceil(2);
    let mut columns: Vec<Vec<usize>> = Vec::with_capacity(k);
    let mut subset: Vec<usize> = (0..w).collect();
    while columns.len() < k {
        columns.push(subset.clone());
        // next w-subset of {0 … n − 2} in lexicographic order (there are enough: n is
        // chosen so that C(n − 1, w) ≥ k)
        crate::interactions::next_lex(&mut subset, n - 1);
    }
    let mut rows = vec![vec![0u8; k]; n];
    for (col, set) in columns.iter().enumerate() {
        for &i in set {
            rows[1 + i][col] = 1;
        }
    }
    rows
}

/// All binary vectors of length n = t + 2 whose weight is ≡ j (mod 3), for the j with
/// fewest: ⌊2^n / 3⌋ rows, the optimum CAN(t, t + 2, 2) (Johnson & Entringer 1989).
///
/// Why it covers at strength t = n − 2: a t-set leaves two columns free, and their
/// weight can be 0, 1 or 2, so whatever weight s the t-set shows, one completion makes
/// the total ≡ j.
pub fn weight_mod_3(n: usize) -> (usize, Vec<Row>) {
    let class = |j: usize| (0..1usize << n).filter(move |x| x.count_ones() as usize % 3 == j);
    let j = (0..3).min_by_key(|&j| class(j).count()).unwrap_or(0);
    let rows = class(j)
        .map(|x| (0..n).map(|c| ((x >> c) & 1) as u8).collect())
        .collect();
    (j, rows)
}

/// Largest Hadamard order whose arrays serve as strength-3 bases (their coverage is
/// counted, 64 rows fit a bit mask).
pub const MAX_BASE_ORDER: usize = 64;

/// For a binary array of at most 64 rows: the fewest times any level combination shows
/// on any three of its first `cols` columns, and the longest prefix of columns on which
/// every triple is covered at all. Columns are bit masks over the rows.
pub fn triple_coverage(rows: &[Row], cols: usize) -> (u32, usize) {
    let n = rows.len();
    let k = rows.first().map_or(0, Vec::len).min(cols);
    if n > 64 || k < 3 {
        return (0, k);
    }
    let all: u64 = if n == 64 { u64::MAX } else { (1u64 << n) - 1 };
    let masks: Vec<u64> = (0..k)
        .map(|c| {
            rows.iter()
                .enumerate()
                .fold(0u64, |m, (i, r)| m | (u64::from(r[c] & 1) << i))
        })
        .collect();
    let mut min = u32::MAX;
    // triples ordered by their last column, so the first gap ends the covered prefix
    for c in 2..k {
        for b in 1..c {
            for a in 0..b {
                for pattern in 0..8u32 {
                    let pick = |m: u64, bit: u32| if pattern >> bit & 1 == 1 { m } else { !m & all };
                    let cnt = (pick(masks[a], 0) & pick(masks[b], 1) & pick(masks[c], 2)).count_ones();
                    if cnt == 0 {
                        return (0, c);
                    }
                    min = min.min(cnt);
                }
            }
        }
    }
    (min, k)
}

/// A base array of strength 3: a name, its rows, and how many of its leading columns it
/// covers at strength 3 (index ≥ 1).
struct Base {
    name: String,
    rows: Vec<Row>,
    columns: usize,
}

/// Base arrays: the zero-sum OA(8; 3, 4, 2), the weight class for 5 columns, fold-overs
/// and the strength-2 arrays of Hadamard matrices of order ≤ [`MAX_BASE_ORDER`] with
/// their counted strength-3 prefix (the 12-run Paley array covers all triples of its 11
/// columns; the code finds this rather than assuming it). Built once per process: they do
/// not depend on the spec.
fn bases() -> &'static [Base] {
    static BASES: OnceLock<Vec<Base>> = OnceLock::new();
    BASES.get_or_init(build_bases)
}

fn build_bases() -> Vec<Base> {
    let mut out = vec![
        Base {
            name: "zero-sum".into(),
            rows: super::orthogonal::zero_sum(&[2; 4]),
            columns: 4,
        },
        Base {
            name: "weight-mod-3".into(),
            rows: weight_mod_3(5).1,
            columns: 5,
        },
    ];
    for (&n, known) in &hadamard::known_orders(MAX_BASE_ORDER) {
        if n < 8 {
            continue;
        }
        let mut recipes = hadamard::direct_recipes(n);
        if !recipes.contains(known) {
            recipes.push(known.clone());
        }
        for r in recipes {
            let h = r.build();
            let rows = h.strength_two();
            let (_, columns) = triple_coverage(&rows, n - 1);
            if columns >= 6 {
                out.push(Base {
                    name: format!("hadamard(n={n},{},strength 3 by count)", r.name()),
                    rows,
                    columns,
                });
            }
            if r == *known {
                out.push(Base {
                    name: format!("fold-over(n={n},{})", r.name()),
                    rows: h.fold_over(),
                    columns: n,
                });
            }
        }
    }
    out
}

/// The smallest binary array of strength 3 on k ≥ 3 columns found among the bases and
/// Roux's doubling (Roux 1987, as presented by Chateauneuf & Kreher 2002): from
/// A = CA(N; 3, h, 2) and B = CA(M; 2, h, 2), the array [A A; B B̄] (B̄ the complement) is
/// a CA(N + M; 3, 2h, 2).
///
/// Why it covers: a triple within one half, or with its two halves' columns from
/// different originals, lies on three distinct columns of A. A triple (i, j, i′) with i′
/// the right copy of i shows, in A, only patterns with equal levels on i and i′; the rows
/// [B B̄] show i′ as the complement of i, and B covers every pair on (i, j).
pub fn strength_three(k: usize) -> Option<(String, Vec<Row>)> {
    if k < 3 {
        return None;
    }
    let bases = bases();
    let (size, plan) = plan_three(k, bases);
    let (base, doublings, rows) = build_three(k, &plan, bases);
    debug_assert_eq!(rows.len(), size);
    let name = match doublings {
        0 => base,
        d => format!("roux×{d}({base})"),
    };
    Some((name, rows))
}

/// How to make the strength-3 array for k columns: a base, or doubling of a smaller one.
enum Plan {
    Base(usize),
    Double(Box<Plan>, usize),
}

fn plan_three(k: usize, bases: &[Base]) -> (usize, Plan) {
    let base = bases
        .iter()
        .enumerate()
        .filter(|(_, b)| b.columns >= k)
        .min_by_key(|(_, b)| b.rows.len())
        .map(|(i, b)| (b.rows.len(), Plan::Base(i)));
    let double = (k >= 6).then(|| {
        let h = k.div_ceil(2);
        let (inner, plan) = plan_three(h, bases);
        (inner + ks_rows(h), Plan::Double(Box::new(plan), h))
    });
    match (base, double) {
        (Some(b), Some(d)) => {
            if d.0 < b.0 {
                d
            } else {
                b
            }
        }
        (Some(b), None) => b,
        (None, Some(d)) => d,
        // k ≥ 3 and k ≤ 5 always has the zero-sum or weight-class base below 6 columns
        (None, None) => (usize::MAX, Plan::Base(0)),
    }
}

/// The rows of a plan, the name of its base and how many doublings it took.
fn build_three(k: usize, plan: &Plan, bases: &[Base]) -> (String, u32, Vec<Row>) {
    match plan {
        Plan::Base(i) => {
            let b = &bases[*i];
            let rows = b.rows.iter().map(|r| r[..k].to_vec()).collect();
            (b.name.clone(), 0, rows)
        }
        Plan::Double(inner, h) => {
            let (name, doublings, a) = build_three(*h, inner, bases);
            let b = kleitman_spencer(*h);
            let mut rows: Vec<Row> = a.iter().map(|r| [r.as_slice(), r.as_slice()].concat()).collect();
            rows.extend(b.iter().map(|r| {
                let comp: Vec<u8> = r.iter().map(|&x| 1 - x).collect();
                [r.as_slice(), comp.as_slice()].concat()
            }));
            for r in &mut rows {
                r.truncate(k);
            }
            (name, doublings + 1, rows)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binomials() {
        assert_eq!(binomial(5, 2), 10);
        assert_eq!(binomial(13, 7), 1716);
        assert_eq!(binomial(3, 5), 0);
        assert_eq!(binomial(200, 100), u128::MAX);
    }

    #[test]
    fn ks_sizes_at_small_k() {
        // CAN(2, k, 2): 4 for k = 2, 3; 5 for k = 4; 6 for k = 5 … 10; 7 for 11 … 15;
        // 8 for 16 … 35 (Kleitman & Spencer 1973, from the formula; the small values
        // also in Colbourn's covering array tables, from memory)
        let expect = [
            (2, 4),
            (3, 4),
            (4, 5),
            (5, 6),
            (10, 6),
            (11, 7),
            (15, 7),
            (16, 8),
            (35, 8),
            (36, 9),
        ];
        for (k, n) in expect {
            assert_eq!(ks_rows(k), n, "k = {k}");
        }
    }

    #[test]
    fn weight_classes_have_floor_two_to_n_over_three() {
        // Johnson & Entringer 1989
        for n in 3..=12 {
            let (_, rows) = weight_mod_3(n);
            assert_eq!(rows.len(), (1 << n) / 3, "n = {n}");
        }
    }

    #[test]
    fn paley_twelve_covers_every_triple_and_sylvester_eight_does_not() {
        // the 12-run Paley (Plackett–Burman) array covers all 8 patterns on every three of
        // its 11 columns (from memory; Box & Tyssedal 1996 call this projectivity 3)
        let rows = hadamard::Recipe::PaleyI(11).build().strength_two();
        assert_eq!(triple_coverage(&rows, 11), (1, 11));
        // in Sylvester's array of order 8 column 3 is the sum of columns 1 and 2 (the
        // simplex code), so that triple misses half the patterns
        let rows = hadamard::Recipe::Sylvester(3).build().strength_two();
        assert_eq!(triple_coverage(&rows, 7).0, 0);
        assert!(triple_coverage(&rows, 7).1 < 7);
    }

    #[test]
    fn strength_three_arrays_cover_triples() {
        for k in [3, 4, 5, 6, 11, 12, 17, 22, 23, 40] {
            let (name, rows) = strength_three(k).unwrap();
            assert!(rows.iter().all(|r| r.len() == k));
            // brute force over every triple
            for a in 0..k {
                for b in a + 1..k {
                    for c in b + 1..k {
                        let mut seen = [false; 8];
                        for r in &rows {
                            seen[(r[a] * 4 + r[b] * 2 + r[c]) as usize] = true;
                        }
                        assert!(seen.iter().all(|&s| s), "{name} k={k} ({a},{b},{c})");
                    }
                }
            }
        }
        assert!(strength_three(2).is_none());
    }
}
