//! The two bounds reported beside every design, checked against outside references.
//!
//! The expected-value bound is the first-moment argument of the probabilistic method (as in
//! Godbole, Skipper & Sunley 1996 for λ = 1): the least N at which a uniformly random
//! N-row array has, in expectation, fewer than one t-way interaction covered fewer than λ
//! times; the expectation is Σ over t-sets of Πv · P[Binomial(N, 1/Πv) < λ]. Here the
//! binomial tail comes from `statrs` (a general-purpose statistics library) and from
//! direct summation, never from the engine's own routine.

use heddle_generator::bounds::{binomial_below, expected_bound, lower_bound, tsets_by_product};
use heddle_generator::{Effort, Spec, generate};
use statrs::distribution::{Binomial, DiscreteCDF};

/// P[Binomial(n, p) ≤ λ − 1] from statrs.
fn statrs_below(n: u64, p: f64, lambda: u32) -> f64 {
    if lambda == 0 {
        return 0.0;
    }
    Binomial::new(p, n).expect("0 ≤ p ≤ 1").cdf(lambda as u64 - 1)
}

/// P[Binomial(n, p) < λ] by summing C(n, i) p^i (1 − p)^(n − i) for i < λ, the
/// coefficients built up exactly in floating point (n small enough here).
fn direct_below(n: u64, p: f64, lambda: u32) -> f64 {
    let mut s = 0.0;
    for i in 0..(lambda as u64).min(n + 1) {
        let mut c = 1.0;
        for j in 0..i {
            c = c * (n - j) as f64 / (j + 1) as f64;
        }
        s += c * p.powi(i as i32) * (1.0 - p).powi((n - i) as i32);
    }
    s
}

/// Σ over t-sets of Πv · P[Bin(N, 1/Πv) < λ], with the t-sets enumerated directly.
fn expected_short(levels: &[usize], t: usize, lambda: u32, n: u64, below: fn(u64, f64, u32) -> f64) -> f64 {
    let k = levels.len();
    // t-sets as the bit masks of k bits with t ones (k ≤ 20 here)
    (0u32..1 << k)
        .filter(|m| m.count_ones() as usize == t)
        .map(|m| {
            let prod: f64 = (0..k)
                .filter(|&c| m >> c & 1 == 1)
                .map(|c| levels[c] as f64)
                .product();
            prod * below(n, 1.0 / prod, lambda)
        })
        .sum()
}

const CASES: &[(&[usize], usize, u32)] = &[
    (&[3; 13], 2, 1),
    (&[4; 15], 2, 1),
    (&[10; 20], 2, 1),
    (&[2; 10], 3, 1),
    (&[3; 6], 3, 1),
    (&[3; 13], 2, 2),
    (&[2; 11], 2, 5),
    (&[4; 10], 2, 10),
    (&[4, 3, 3, 2, 2, 2, 5, 3], 2, 2),
    (&[2, 3, 4, 5, 2, 3], 3, 3),
    (&[3; 8], 4, 1),
];

#[test]
fn binomial_tail_matches_statrs_and_direct_summation() {
    for n in [1u64, 2, 7, 15, 40, 120, 400] {
        for lambda in 1u32..=10 {
            for p in [0.5, 0.25, 1.0 / 9.0, 1.0 / 27.0, 0.01] {
                let ours = binomial_below(n, p, lambda);
                let theirs = statrs_below(n, p, lambda);
                assert!(
                    (ours - theirs).abs() <= 1e-9 * theirs.max(1e-300) + 1e-15,
                    "n={n} p={p} l={lambda}: {ours} vs statrs {theirs}"
                );
                if n <= 120 {
                    let direct = direct_below(n, p, lambda);
                    assert!((ours - direct).abs() <= 1e-9 * direct.max(1e-300) + 1e-15);
                }
            }
        }
    }
}

#[test]
fn expected_bound_is_the_least_n_by_statrs() {
    for &(levels, t, lambda) in CASES {
        let n = expected_bound(levels, t, lambda);
        let at = expected_short(levels, t, lambda, n, statrs_below);
        let before = expected_short(levels, t, lambda, n - 1, statrs_below);
        assert!(at < 1.0, "{levels:?} t={t} l={lambda}: E({n}) = {at}");
        assert!(
            before >= 1.0,
            "{levels:?} t={t} l={lambda}: E({}) = {before}",
            n - 1
        );
        // and by direct summation
        assert!(expected_short(levels, t, lambda, n, direct_below) < 1.0);
        assert!(expected_short(levels, t, lambda, n - 1, direct_below) >= 1.0);
    }
}

#[test]
fn equal_levels_closed_form() {
    // for v^k: C(k, t) · v^t · Σ_{i<λ} C(N, i) p^i (1 − p)^(N − i) < 1 with p = v^−t (the
    // first-moment bound of Godbole, Skipper & Sunley 1996, written out for index λ)
    for (v, k, t, lambda) in [
        (3u64, 13u64, 2u32, 1u32),
        (2, 11, 2, 5),
        (4, 10, 2, 10),
        (2, 10, 3, 2),
    ] {
        let levels = vec![v as usize; k as usize];
        let n = expected_bound(&levels, t as usize, lambda);
        let p = 1.0 / (v.pow(t) as f64);
        let tsets = (0..t as u64).fold(1.0, |acc, i| acc * (k - i) as f64 / (i + 1) as f64);
        let e = |n: u64| tsets * v.pow(t) as f64 * statrs_below(n, p, lambda);
        assert!(e(n) < 1.0 && e(n - 1) >= 1.0, "{v}^{k} t={t} l={lambda}: N={n}");
        // the grouping of t-sets by level product sees C(k, t) sets of one product
        let groups = tsets_by_product(&levels, t as usize);
        assert_eq!(groups.len(), 1);
        assert_eq!(groups.values().next().copied(), Some(tsets));
    }
}

#[test]
fn lower_bound_is_lambda_times_the_largest_products() {
    // every combination of the t largest factors needs λ rows of its own (the counting
    // bound; common practice, e.g. Colbourn 2004)
    assert_eq!(lower_bound(&[2, 5, 3, 4], 2, 1), 20);
    assert_eq!(lower_bound(&[2, 5, 3, 4], 3, 2), 120);
    assert_eq!(lower_bound(&[3; 13], 2, 3), 27);
    assert_eq!(lower_bound(&[7], 1, 4), 28);
}

#[test]
fn designs_respect_both_bounds_in_stats() {
    for &(levels, t, lambda) in &CASES[..6] {
        let spec = Spec::numbered(levels).strength(t).lambda(lambda);
        let d = generate(&spec, Effort::Fast).expect("valid spec");
        assert_eq!(d.stats.lower_bound as u128, lower_bound(levels, t, lambda));
        assert_eq!(d.stats.expected_bound, expected_bound(levels, t, lambda));
        assert!(d.rows.len() as u64 >= d.stats.lower_bound);
        // a greedy of the density kind never needs more rows than the first-moment size
        // (Bryce & Colbourn 2009, from memory); the search only removes rows
        assert!((d.rows.len() as u64) < d.stats.expected_bound);
    }
}
