//! The algebraic constructions against published sizes. Every array is checked by the
//! independent checker (`verify`) and its size compared with the value in the literature;
//! the source is named beside each check.

use super::{Construction, best};
use crate::{Effort, Spec, generate, verify};

fn spec(levels: &[usize], t: usize, lambda: u32) -> Spec {
    Spec::numbered(levels).strength(t).lambda(lambda)
}

/// The construction for these parameters, after the independent checker accepted it.
fn checked(levels: &[usize], t: usize, lambda: u32) -> Construction {
    let c = best(levels, t, lambda).unwrap_or_else(|| panic!("no construction for {levels:?} t={t}"));
    if let Err(v) = verify(&spec(levels, t, lambda), &c.rows) {
        panic!("{} for {levels:?} t={t} λ={lambda} is invalid: {v}", c.method);
    }
    c
}

/// The size the public engine gives in fast mode (it checks its result itself).
fn engine_rows(levels: &[usize], t: usize, lambda: u32) -> usize {
    generate(&spec(levels, t, lambda), Effort::Fast)
        .unwrap()
        .rows
        .len()
}

/// C(n, r) in u128 (test-local, exact for the sizes used).
fn binomial(n: u128, r: u128) -> u128 {
    if r > n {
        return 0;
    }
    (0..r).fold(1, |c, i| c * (n - i) / (i + 1))
}

/// The least N with C(N−1, ⌈N/2⌉) ≥ k (Kleitman & Spencer 1973; Katona 1973).
fn ks_reference(k: usize) -> usize {
    (2..)
        .find(|&n: &u128| binomial(n - 1, n.div_ceil(2)) >= k as u128)
        .unwrap() as usize
}

#[test]
fn kleitman_spencer_binary_strength_two_up_to_1000() {
    // Kleitman & Spencer 1973, Katona 1973: CAN(2, k, 2) is the least N with
    // C(N−1, ⌈N/2⌉) ≥ k. The thresholds, the values of C(N−1, ⌈N/2⌉) for N = 4 … 14:
    // 3, 4, 10, 15, 35, 56, 126, 210, 462, 792, 1716.
    let thresholds = [3usize, 4, 10, 15, 35, 56, 126, 210, 462, 792, 1716];
    for (i, &top) in thresholds.iter().enumerate() {
        assert_eq!(ks_reference(top), 4 + i);
        assert_eq!(ks_reference(top + 1), 5 + i);
    }
    let mut sample: Vec<usize> = (4..=120).collect();
    sample.extend((121..=1000).step_by(11));
    for &top in &thresholds[..10] {
        sample.extend([top, top + 1]);
    }
    sample.push(1000);
    sample.sort_unstable();
    sample.dedup();
    for &k in &sample {
        let n = best(&vec![2; k], 2, 1).unwrap().rows.len();
        assert_eq!(n, ks_reference(k), "CAN(2, {k}, 2)");
    }
    // the checker on a dense part of the sample and on the largest
    for k in (4..=120).chain([126, 127, 210, 211, 462, 463, 792, 793, 1000]) {
        let c = checked(&vec![2; k], 2, 1);
        assert_eq!(c.rows.len(), ks_reference(k), "CAN(2, {k}, 2)");
        assert!(c.optimal);
    }
    // and through the engine
    for k in [4, 10, 11, 35, 36, 60] {
        assert_eq!(
            engine_rows(&vec![2; k], 2, 1),
            ks_reference(k),
            "engine CAN(2, {k}, 2)"
        );
    }
}

#[test]
fn ks_size_is_a_minimum_for_small_n() {
    // An independent check of the lower half of the theorem for N ≤ 6: the largest set
    // of binary columns of length N, pairwise covering all four level pairs, has
    // C(N−1, ⌈N/2⌉) members (Kleitman & Spencer 1973). Exhaustive clique search; a
    // column and its complement cover the same pairs, so columns start with 0.
    fn max_clique(n: usize) -> usize {
        let full = (1u32 << n) - 1;
        let verts: Vec<u32> = (1..full).filter(|v| v & 1 == 0).collect();
        let ok = |a: u32, b: u32| a & b != 0 && a & !b != 0 && !a & b & full != 0 && !a & !b & full != 0;
        fn grow(
            verts: &[u32],
            cand: Vec<usize>,
            size: usize,
            best: &mut usize,
            ok: &dyn Fn(u32, u32) -> bool,
        ) {
            if size + cand.len() <= *best {
                return;
            }
            if cand.is_empty() {
                *best = size;
                return;
            }
            for (i, &v) in cand.iter().enumerate() {
                let next: Vec<usize> = cand[i + 1..]
                    .iter()
                    .copied()
                    .filter(|&w| ok(verts[v], verts[w]))
                    .collect();
                grow(verts, next, size + 1, best, ok);
            }
        }
        let mut best = 0;
        grow(&verts, (0..verts.len()).collect(), 0, &mut best, &ok);
        best
    }
    for n in 4..=6 {
        assert_eq!(
            max_clique(n) as u128,
            binomial(n as u128 - 1, (n as u128).div_ceil(2)),
            "N = {n}"
        );
    }
}

#[test]
fn bose_orthogonal_arrays() {
    // Bose 1938: OA(q²; 2, q+1, q) for prime powers q, the counting bound q²
    for q in [3, 4, 5, 7, 8, 9] {
        let c = checked(&vec![q; q + 1], 2, 1);
        assert_eq!(c.rows.len(), q * q, "OA({}; 2, {}, {q})", q * q, q + 1);
        assert!(c.method.starts_with("bose"), "{}", c.method);
        assert!(c.optimal);
        assert_eq!(engine_rows(&vec![q; q + 1], 2, 1), q * q);
        // fewer factors than the array has columns: columns dropped, same size
        assert_eq!(checked(&vec![q; q], 2, 1).rows.len(), q * q);
    }
    // larger fields, including GF(16), GF(25), GF(27) (extension fields)
    for q in [11, 16, 25, 27] {
        assert_eq!(checked(&vec![q; q + 1], 2, 1).rows.len(), q * q, "q = {q}");
    }
}

#[test]
fn bush_orthogonal_arrays() {
    // Bush 1952: OA(q³; 3, q+1, q) for prime powers q ≥ 3
    for q in [3, 4, 5] {
        let c = checked(&vec![q; q + 1], 3, 1);
        assert_eq!(c.rows.len(), q.pow(3), "OA({}; 3, {}, {q})", q.pow(3), q + 1);
        assert_eq!(engine_rows(&vec![q; q + 1], 3, 1), q.pow(3));
    }
    // Bush 1952: for q even, OA(q³; 3, q+2, q) (the hyperoval column)
    for q in [4, 8] {
        let c = checked(&vec![q; q + 2], 3, 1);
        assert_eq!(c.rows.len(), q.pow(3), "OA({}; 3, {}, {q})", q.pow(3), q + 2);
        assert!(c.method.contains("hyperoval"), "{}", c.method);
    }
    assert_eq!(engine_rows(&[4; 6], 3, 1), 64);
    // Bush 1952 at t = 4: OA(625; 4, 6, 5)
    assert_eq!(checked(&[5; 6], 4, 1).rows.len(), 625);
}

#[test]
fn hadamard_arrays_of_index_lambda() {
    // Hadamard arrays: CAN_λ(2, 4λ−1, 2) = 4λ, an OA(4λ; 2, 4λ−1, 2) from a Hadamard
    // matrix of order 4λ (Hedayat, Sloane & Stufken 1999, "Orthogonal Arrays", ch. 7)
    for lambda in 1..=6u32 {
        let k = 4 * lambda as usize - 1;
        let c = checked(&vec![2; k], 2, lambda);
        assert_eq!(c.rows.len(), 4 * lambda as usize, "λ = {lambda}");
        assert!(c.optimal);
        assert_eq!(engine_rows(&vec![2; k], 2, lambda), 4 * lambda as usize);
    }
    // beyond 24: orders 28 (Paley), 40 (2 × 20), 48 (Paley), 52 (Paley II over GF(25))
    for lambda in [7u32, 10, 12, 13] {
        let k = 4 * lambda as usize - 1;
        assert_eq!(checked(&vec![2; k], 2, lambda).rows.len(), 4 * lambda as usize);
    }
    // an index-3 array beats three copies of the index-1 optimum (3 × 7 = 21)
    assert_eq!(checked(&[2; 11], 2, 3).rows.len(), 12);
}

#[test]
fn fold_over_strength_three() {
    // the fold-over [H; −H] of a Hadamard matrix of order 4λ is OA(8λ; 3, 4λ, 2), the
    // counting bound λ·2³ (Hedayat, Sloane & Stufken 1999, ch. 7, from memory)
    for lambda in 1..=5u32 {
        let k = 4 * lambda as usize;
        let c = checked(&vec![2; k], 3, lambda);
        assert_eq!(c.rows.len(), 8 * lambda as usize, "λ = {lambda}");
    }
}

#[test]
fn strength_three_binary_from_paley_twelve() {
    // CAN(3, k, 2) = 12 for k = 6 … 11 (Colbourn's covering array tables; the 12-run
    // Paley array covers every triple, from memory — the construction counts it)
    for k in 6..=11 {
        let c = checked(&vec![2; k], 3, 1);
        assert_eq!(c.rows.len(), 12, "CAN(3, {k}, 2)");
        assert!(c.method.contains("paley"), "{}", c.method);
    }
    assert_eq!(engine_rows(&[2; 10], 3, 1), 12);
}

#[test]
fn roux_doubling_covers_triples() {
    // Roux 1987 (Chateauneuf & Kreher 2002): CAN(3, 2k, 2) ≤ CAN(3, k, 2) + CAN(2, k, 2);
    // from 12 rows on 11 columns and 7 on 11: at most 19 rows on 22 columns
    let c = checked(&[2; 22], 3, 1);
    assert!(c.rows.len() <= 19, "{} rows by {}", c.rows.len(), c.method);
    let c = checked(&[2; 20], 3, 1);
    assert!(c.rows.len() <= 18, "{} rows by {}", c.rows.len(), c.method);
    for k in [13, 30, 47, 64] {
        checked(&vec![2; k], 3, 1);
    }
}

#[test]
fn doubling_for_more_levels() {
    // v-ary doubling (Chateauneuf & Kreher 2002, from memory):
    // CAN(3, 2h, v) ≤ CAN(3, h, v) + (v − 1)·CAN(2, h, v); with the optima
    // CAN(3, 4, 3) = 27, CAN(2, 4, 3) = 9 (Bose 1938) and CAN(3, 5, 4) = 64 (Bush 1952),
    // CAN(2, 5, 4) = 16 (Bose 1938)
    let c = checked(&[3; 8], 3, 1);
    assert!(
        c.rows.len() <= 27 + 2 * 9,
        "{} rows by {}",
        c.rows.len(),
        c.method
    );
    let c = checked(&[4; 10], 3, 1);
    assert!(
        c.rows.len() <= 64 + 3 * 16,
        "{} rows by {}",
        c.rows.len(),
        c.method
    );
    checked(&[3; 16], 3, 1);
    checked(&[5, 4, 3, 5, 5, 2, 4, 5, 5, 3, 5, 1], 3, 1);
}

#[test]
fn zero_sum_and_copies_meet_lambda_v_to_the_t() {
    // CAN_λ(t, t+1, v) = λ·v^t: the zero-sum orthogonal array meets the counting bound
    // (common practice; Hedayat, Sloane & Stufken 1999, ch. 2), stacked λ times
    for t in 1..=4usize {
        for v in 2..=5usize {
            for lambda in 1..=3u32 {
                if v.pow(t as u32 + 1) > 1000 {
                    continue;
                }
                let c = checked(&vec![v; t + 1], t, lambda);
                assert_eq!(
                    c.rows.len(),
                    lambda as usize * v.pow(t as u32),
                    "t={t} v={v} λ={lambda}"
                );
                assert!(c.optimal);
            }
        }
    }
    assert_eq!(engine_rows(&[3; 4], 3, 2), 54);
    // λ copies of an orthogonal array: λ·v^t
    assert_eq!(checked(&[5; 6], 2, 3).rows.len(), 75);
    assert_eq!(engine_rows(&[5; 6], 2, 3), 75);
    // the full factorial for k = t
    assert_eq!(checked(&[3, 4, 2], 3, 2).rows.len(), 48);
}

#[test]
fn mixed_level_zero_sum() {
    // the t largest factors as a full factorial, the smallest as their sum mod its
    // levels: the counting bound λ·(product of the t largest level counts)
    for (levels, t) in [
        (vec![5, 3, 4], 2),
        (vec![2, 6, 3, 4], 3),
        (vec![7, 2, 7], 2),
        (vec![3, 3, 5, 4, 2], 4),
    ] {
        let mut sorted = levels.clone();
        sorted.sort_unstable_by(|a, b| b.cmp(a));
        let bound: usize = sorted[..t].iter().product();
        for lambda in 1..=2u32 {
            let c = checked(&levels, t, lambda);
            assert_eq!(c.rows.len(), lambda as usize * bound, "{levels:?} t={t}");
            assert_eq!(engine_rows(&levels, t, lambda), lambda as usize * bound);
        }
    }
}

#[test]
fn johnson_entringer_k_equals_t_plus_2() {
    // Johnson & Entringer 1989: CAN(t, t+2, 2) = ⌊2^(t+2)/3⌋
    for t in 1..=8usize {
        let k = t + 2;
        let c = checked(&vec![2; k], t, 1);
        assert_eq!(c.rows.len(), (1 << k) / 3, "CAN({t}, {k}, 2)");
        assert!(c.optimal);
        assert_eq!(engine_rows(&vec![2; k], t, 1), (1 << k) / 3);
    }
}

#[test]
fn rao_hamming_at_index_one_and_at_its_own_index() {
    // Rao 1947: OA(q³; 2, q²+q+1, q) of index q. At λ = 1 it is a source of rows for
    // many columns, its q³ = 27 rows thinned by redundant-row removal (and the engine's
    // search takes it on from there)
    let c = checked(&[3; 13], 2, 1);
    assert!(c.method.starts_with("rao-hamming(q=3,m=3)"), "{}", c.method);
    assert!(c.rows.len() < 27, "{}", c.method);
    // at λ = q it is the optimum λ·q² (the counting bound): OA(27; 2, 13, 3) and
    // OA(64; 2, 21, 4), and twice that at λ = 2q
    for (levels, lambda, n) in [
        (vec![3; 13], 3, 27),
        (vec![4; 20], 4, 64),
        (vec![4; 21], 4, 64),
        (vec![3; 13], 6, 54),
    ] {
        let c = checked(&levels, 2, lambda);
        assert_eq!(c.rows.len(), n, "{levels:?} λ={lambda}: {}", c.method);
        assert!(c.optimal);
        // the engine takes the optimum, or a design aliasing fewer interactions (pairs
        // of collinear columns share their rows in the linear array) at most an eighth
        // larger
        let d = generate(&spec(&levels, 2, lambda), Effort::Fast).unwrap();
        let optimum_aliased = crate::order::aliased(
            &crate::interactions::Layout::new(&levels, 2),
            &vec![true; crate::interactions::count(&levels, 2) as usize],
            &c.rows,
        )
        .unwrap();
        assert!(optimum_aliased > 0, "{levels:?} λ={lambda}");
        if d.rows.len() != n {
            assert!(
                d.rows.len() <= n + n / 8,
                "{levels:?} λ={lambda}: {}",
                d.rows.len()
            );
            assert!(
                d.stats.aliased.unwrap() < optimum_aliased,
                "{levels:?} λ={lambda}: {:?}",
                d.stats
            );
        }
    }
    // the choice on the spec where it matters most: 3^13 at λ = 3 has no design within
    // an eighth of 27 rows that the search finds, so the optimum stays, aliases and all
    assert_eq!(engine_rows(&[3; 13], 2, 3), 27);
}

#[test]
fn ovoid_at_its_own_index() {
    // an ovoid of PG(3, q) gives OA(q⁴; 3, q²+1, q) of index q (Bose 1947; Qvist 1952,
    // from memory; the array is checked independently): the counting bound λ·q³ at λ = q
    for (q, k) in [(3usize, 10usize), (3, 8), (4, 17), (5, 26)] {
        let lambda = q as u32;
        let c = checked(&vec![q; k], 3, lambda);
        assert_eq!(c.rows.len(), q.pow(4), "q={q} k={k}: {}", c.method);
        assert!(c.method.contains("ovoid"), "{}", c.method);
        assert!(c.optimal);
    }
    assert_eq!(engine_rows(&[3; 10], 3, 3), 81);
    // two relabelled copies at λ = 2q
    assert_eq!(checked(&[3; 10], 3, 6).rows.len(), 162);
}

#[test]
fn strength_one() {
    // t = 1: λ·(most levels) rows, the counting bound (common practice)
    assert_eq!(checked(&[3, 5, 2, 4], 1, 2).rows.len(), 10);
    assert_eq!(checked(&[2; 30], 1, 1).rows.len(), 2);
}

#[test]
fn collapsed_levels_use_the_next_field() {
    // v = 6 and v = 10 are not prime powers: Bose over GF(7) and GF(11) with levels
    // collapsed, two rows fused away: CAN(2, q+1, q−1) ≤ q² − 2 (Colbourn et al. 2006,
    // "Products of mixed covering arrays of strength two", from memory; the argument is
    // in `construct::transform::fuse`)
    for (v, q) in [(6usize, 7usize), (10, 11), (12, 13), (15, 16)] {
        let c = checked(&vec![v; q + 1], 2, 1);
        assert!(
            c.rows.len() <= q * q - 2,
            "v={v}: {} rows by {}",
            c.rows.len(),
            c.method
        );
        assert!(c.rows.len() >= v * v);
    }
    // strength 3: Bush over GF(5) for 4 levels
    let c = checked(&[4; 6], 3, 1);
    assert_eq!(c.rows.len(), 64); // GF(4) itself: the counting bound
    let c = checked(&[3; 5], 3, 1);
    assert!(c.rows.len() <= 62, "{}", c.rows.len());
    // mixed levels below q
    checked(&[7, 6, 5, 4, 3, 2, 7, 7], 2, 1);
    checked(&[9, 8, 2, 5, 9, 9, 7, 3, 9, 9], 2, 2);
    checked(&[4, 3, 3, 2, 4, 4], 3, 1);
    // 255 levels: GF(256) collapsed onto 255
    let c = checked(&[255; 5], 2, 1);
    assert!(c.rows.len() <= 256 * 256 - 2);
}

#[test]
fn binary_with_one_level_factors() {
    // a one-level factor collapses onto level 0; coverage of the rest is untouched
    checked(&[2, 1, 2, 2, 1, 2, 2], 2, 1);
    checked(&[2, 2, 1, 2, 2, 2, 2, 2], 3, 1);
}

#[test]
fn constructions_are_deterministic() {
    for (levels, t, lambda) in [(vec![6; 8], 2, 1), (vec![2; 40], 3, 1), (vec![3; 13], 2, 5)] {
        assert_eq!(best(&levels, t, lambda), best(&levels, t, lambda));
    }
}

#[test]
fn nothing_for_impossible_parameters() {
    assert_eq!(best(&[], 2, 1), None);
    assert_eq!(best(&[3, 3], 3, 1), None);
    assert_eq!(best(&[3, 3, 3], 0, 1), None);
    assert_eq!(best(&[3, 3, 3], 2, 0), None);
    assert_eq!(best(&[3, 0, 3], 2, 1), None);
    // extreme strengths and sizes: no panic, and anything returned has the right shape
    for (levels, t, lambda) in [
        (vec![2usize; 70], 68usize, 1u32),
        (vec![2; 64], 62, 3),
        (vec![255; 300], 2, 1),
    ] {
        if let Some(c) = best(&levels, t, lambda) {
            assert!(c.rows.iter().all(|r| r.len() == levels.len()));
        }
    }
}

mod random_specs {
    use super::*;
    use proptest::prelude::*;

    /// Whatever construction is returned, the independent checker accepts it, and it is
    /// never below the counting bound (common practice: a covering array needs λ rows per
    /// combination of the t largest factors), where it claims optimality it is at a bound.
    fn check_random(levels: &[usize], t: usize, lambda: u32) -> Result<(), TestCaseError> {
        if let Some(c) = best(levels, t, lambda) {
            let s = spec(levels, t, lambda);
            prop_assert!(
                verify(&s, &c.rows).is_ok(),
                "{} for {levels:?} t={t} λ={lambda}",
                c.method
            );
            let mut sorted = levels.to_vec();
            sorted.sort_unstable_by(|a, b| b.cmp(a));
            let bound = lambda as usize * sorted[..t].iter().product::<usize>();
            prop_assert!(c.rows.len() >= bound);
            let binary = levels.iter().all(|&v| v == 2);
            if c.optimal && c.rows.len() != bound {
                prop_assert!(binary && lambda == 1 && (t == 2 || levels.len() == t + 2));
            }
        }
        Ok(())
    }

    proptest! {
        #![proptest_config(ProptestConfig {
            cases: 150,
            // a failure prints its inputs; no regressions file beside the sources
            failure_persistence: None,
            ..ProptestConfig::default()
        })]

        /// Random level counts, strength and index.
        #[test]
        fn every_construction_is_valid(
            t in 1usize..=3,
            extra in 0usize..=9,
            lambda in 1u32..=3,
            raw in proptest::collection::vec(1usize..=9, 12),
        ) {
            check_random(&raw[..t + extra], t, lambda)?;
        }


        /// Binary specs, where the two-level constructions apply.
        #[test]
        fn every_binary_construction_is_valid(
            t in 2usize..=3,
            k in 4usize..=40,
            lambda in 1u32..=4,
            ones in proptest::collection::vec(any::<bool>(), 40),
        ) {
            prop_assume!(k > t);
            let levels: Vec<usize> = (0..k).map(|i| if ones[i] && i % 5 == 0 { 1 } else { 2 }).collect();
            check_random(&levels, t, lambda)?;
        }
    }

    proptest! {
        // a third of the cases above: the hash families' bounded search is the costly
        // part at t = 4, and each construction that applies at t = 4 still meets dozens
        // of specs
        #![proptest_config(ProptestConfig {
            cases: 50,
            failure_persistence: None,
            ..ProptestConfig::default()
        })]

        /// Strength 4 with fewer levels, so that the checker stays quick in debug builds.
        #[test]
        fn every_strength_four_construction_is_valid(
            extra in 0usize..=5,
            lambda in 1u32..=2,
            raw in proptest::collection::vec(1usize..=5, 9),
        ) {
            check_random(&raw[..4 + extra], 4, lambda)?;
        }
    }
}

#[test]
fn cyclotomy_reaches_the_tables_for_binary_strength_four() {
    // CA(67; 4, 50, 2) is the best known size for 2^50 at t = 4 (Colbourn covering array
    // tables, 2024 snapshot, value from memory); the quadratic-residue circulant mod
    // 67 (Colbourn 2010, "Covering arrays from cyclotomy") reaches it, the checker confirms
    let c = checked(&[2; 50], 4, 1);
    assert!(c.rows.len() <= 67, "{} rows by {}", c.rows.len(), c.method);
    assert!(c.method.contains("cyclotomy"), "{}", c.method);
}

#[test]
fn cyclotomy_on_chosen_columns_reaches_the_tables_for_binary_strength_five() {
    // CA(134; 5, 30, 2) is the best known size for 2^30 at t = 5 (Colbourn covering array
    // tables, 2024 snapshot, value from memory): twice 67, the fold-over [A; Ā] of the
    // quadratic-residue circulant mod 67 (Colbourn 2010, "Covering arrays from
    // cyclotomy") on 30 of its columns chosen to avoid its bad 5-sets; the checker
    // re-derives the coverage
    let c = checked(&[2; 30], 5, 1);
    assert!(c.rows.len() <= 134, "{} rows by {}", c.rows.len(), c.method);
    assert!(c.method.contains("chosen columns"), "{}", c.method);
}

#[test]
fn bose_product_is_offered_past_bose_columns() {
    // CAN(2, k·l, v) ≤ N + M − v for factors holding the v constant rows (Colbourn,
    // Martirosyan, Mullen, Shasha, Sherwood & Yucas 2006, from memory), with both factors
    // OA(q²; 2, q, q) (Bose 1938): 2q² − q rows for q² columns; 10 levels take GF(11),
    // 9 levels GF(9). The checker re-derives the coverage of what is offered
    for (v, k, q) in [(10usize, 50usize, 11usize), (9, 20, 9), (7, 40, 7)] {
        let c = checked(&vec![v; k], 2, 1);
        assert!(
            c.rows.len() <= 2 * q * q - q,
            "{v}^{k}: {} rows by {}",
            c.rows.len(),
            c.method
        );
        assert!(c.method.starts_with("bose-product"), "{v}^{k}: {}", c.method);
    }
}

#[test]
fn product_of_strength_two_arrays_shares_the_constant_rows() {
    use super::{gf, orthogonal, product};
    // CAN(2, k·l, v) ≤ N + M − v when CA(N; 2, k, v) and CA(M; 2, l, v) both hold the v
    // constant rows (Colbourn, Martirosyan, Mullen, Shasha, Sherwood & Yucas 2006, from
    // memory). OA(q²; 2, q, q) with columns (1, x), x ∈ GF(q), holds them (rows (a, 0)).
    for q in [3usize, 4, 5] {
        let field = gf::Field::new(q).unwrap();
        let cols: Vec<Vec<u8>> = (0..q as u8).map(|x| vec![1, x]).collect();
        let oa = orthogonal::linear(&field, &cols);
        let levels = vec![q; q * q];
        let rows = product::product(&oa, &oa, &levels);
        assert_eq!(rows.len(), 2 * q * q - q, "q = {q}");
        if let Err(v) = verify(&spec(&levels, 2, 1), &rows) {
            panic!("product for q = {q} is invalid: {v}");
        }
        // fewer columns and collapsed levels stay covered
        let mixed: Vec<usize> = (0..q * q - 2).map(|c| 2 + c % (q - 1)).collect();
        let rows = product::product(&oa, &oa, &mixed);
        assert!(verify(&spec(&mixed, 2, 1), &rows).is_ok(), "q = {q} collapsed");
    }
    // without shared constant rows nothing is left out: N + M
    let field = gf::Field::new(3).unwrap();
    let oa = orthogonal::linear(&field, &orthogonal::bush_columns(&field, 2, false)[..4]);
    assert_eq!(product::product(&oa, &oa, &[3; 16]).len(), 9 + 9 - 1);
}

#[test]
fn many_factors_at_strength_two_take_the_product() {
    // 3^400: two designs on 20 columns with the three constant rows; the engine's
    // checker validates the result, and its size is the two factors' less 3
    let d = generate(&spec(&[3; 400], 2, 1), Effort::Fast).unwrap();
    assert!(d.stats.method.starts_with("product("), "{}", d.stats.method);
    let factor = generate(
        &super::constant_rows(3, 20)
            .into_iter()
            .fold(spec(&[3; 20], 2, 1), Spec::require),
        Effort::Fast,
    )
    .unwrap();
    assert!(d.rows.len() <= 2 * factor.rows.len() - 3, "{} rows", d.rows.len());
}

#[test]
fn hash_families_of_permutation_vectors() {
    use super::{gf, hash_family};
    use hash_family::Kind::{Affine, Projective};
    // Sherwood, Martirosyan & Colbourn 2006 (from memory): a covering perfect hash family
    // CPHF(n; k, q^t, t) of permutation vectors (1, x) gives CA(n(q^t − q) + q; t, k, q),
    // e.g. two rows over GF(4) at t = 3: 2·(64 − 4) + 4 = 124 rows; with any vectors
    // (Colbourn, Lanus & Sarkar 2018, from memory) CA(n(q^t − 1) + 1; t, k, q)
    for (kind, q, t, n, k) in [
        (Affine, 3usize, 3usize, 2usize, 9usize),
        (Affine, 4, 3, 2, 12),
        (Affine, 5, 3, 2, 14),
        (Affine, 3, 4, 3, 10),
        (Projective, 4, 3, 2, 16),
        (Projective, 3, 3, 2, 11),
    ] {
        let field = gf::Field::new(q).unwrap();
        let family = hash_family::family(&field, kind, t, k, n)
            .unwrap_or_else(|| panic!("no {kind:?} family for q={q} t={t} n={n} k={k}"));
        let rows = hash_family::rows(&field, kind, t, &family);
        assert_eq!(
            Some(rows.len()),
            hash_family::size(kind, q, t, n),
            "{kind:?} q={q} t={t} n={n}"
        );
        if let Err(v) = verify(&spec(&vec![q; k], t, 1), &rows) {
            panic!("{kind:?} family for q={q} t={t} n={n} k={k} is invalid: {v}");
        }
    }
    // Raaphorst, Moura & Stevens 2014 (from memory): CA(2q³ − 1; 3, q² + q + 1, q), e.g.
    // CA(127; 3, 21, 4), at or below the tables' 127 rows for 4^20
    for q in [3usize, 4, 5, 7, 8] {
        let field = gf::Field::new(q).unwrap();
        let k = q * q + q + 1;
        let rows = hash_family::singer_pair(&field, k).unwrap();
        assert_eq!(rows.len(), 2 * q * q * q - 1, "q = {q}");
        if let Err(v) = verify(&spec(&vec![q; k], 3, 1), &rows) {
            panic!("singer pair for q = {q} is invalid: {v}");
        }
    }
    assert_eq!(hash_family::size(Affine, 4, 3, 2), Some(124));
    assert_eq!(hash_family::size(Projective, 4, 3, 2), Some(127));
    // past Bush's q + 1 columns the offers are taken where smaller: 4^14 at t = 3 (Bush
    // over GF(4) stops at 6 columns; the v-ary doubling of 4^7 needs more rows) gets a
    // searched family's 124 rows, 3^12 at t = 4 one's 3·(81 − 3) + 3 = 237
    let c = checked(&[4; 14], 3, 1);
    assert!(c.rows.len() <= 124, "{} rows by {}", c.rows.len(), c.method);
    let c = checked(&[3; 12], 4, 1);
    assert!(c.rows.len() <= 237, "{} rows by {}", c.rows.len(), c.method);
}

#[test]
fn index_two_arrays_from_difference_matrices() {
    use super::{difference, gf};
    // Masuyama 1957 (from memory): OA(18; 2, 2^1 3^7) of index 2, the classical 18-run
    // array, and OA(50; 2, 2^1 5^11) (N. J. A. Sloane's library of orthogonal arrays, from
    // memory): 2q² rows, the counting bound λ·q² at λ = 2; the family goes on for every
    // odd prime power (q = 7, 9 checked too)
    for q in [3usize, 5, 7, 9] {
        let field = gf::Field::new(q).unwrap();
        let d = difference::matrix(&field).unwrap_or_else(|| panic!("no D(2q, 2q; q) for q = {q}"));
        let rows = difference::array(&field, &d);
        assert_eq!(rows.len(), 2 * q * q);
        let levels: Vec<usize> = [2].into_iter().chain(std::iter::repeat_n(q, 2 * q + 1)).collect();
        if let Err(v) = verify(&spec(&levels, 2, 2), &rows) {
            panic!("q = {q}: {v}");
        }
        // through the offers, in the spec's column order and with a factor collapsed
        let mut mixed = levels.clone();
        mixed.rotate_left(3);
        mixed[1] = q - 1;
        let c = checked(&mixed, 2, 2);
        assert_eq!(c.rows.len(), 2 * q * q, "{}", c.method);
        assert!(c.optimal);
    }
}
