//! The two sizes reported beside every design: the counting lower bound and the
//! expected-value (first-moment) upper bound of a uniformly random array.

use std::collections::BTreeMap;

use crate::constraints::Constraints;
use crate::interactions::Layout;
use crate::model::Spec;

/// λ · (product of the t largest level counts): every combination of the t largest
/// factors needs λ rows of its own, so no design is smaller. Saturates.
///
/// ```
/// // 2^3 x 3^2 at t = 2, λ = 2: two 3-level factors give 9 pairs, twice each
/// assert_eq!(heddle_generator::bounds::lower_bound(&[2, 2, 2, 3, 3], 2, 2), 18);
/// ```
pub fn lower_bound(levels: &[usize], t: usize, lambda: u32) -> u128 {
    let mut v: Vec<usize> = levels.to_vec();
    v.sort_unstable_by(|a, b| b.cmp(a));
    v.iter()
        .take(t)
        .fold(lambda as u128, |acc, &x| acc.saturating_mul(x as u128))
}

/// The counting bound for what the excludes leave possible: λ times the most t-way
/// interactions of one t-set that some allowed row contains (each needs λ rows of its
/// own, and a row shows one interaction per t-set). Without excludes it is
/// [`lower_bound`]; with them it can be far lower, since an interaction no allowed row
/// contains needs no row. The spec must be valid ([`Spec::validate`]).
///
/// ```
/// use heddle_generator::{Expr, Factor, Spec, bounds};
/// let f = vec![Factor::numbered("a", 3), Factor::numbered("b", 3), Factor::numbered("c", 2)];
/// // a = 2 never happens: the pairs of (a, b) fall from 9 to 6
/// let spec = Spec::new(f).exclude(Expr::is(0, 2));
/// assert_eq!(bounds::lower_bound(&spec.levels(), 2, 1), 9);
/// assert_eq!(bounds::possible_lower_bound(&spec), 6);
/// ```
pub fn possible_lower_bound(spec: &Spec) -> u128 {
    let levels = spec.levels();
    let t = spec.strength.min(levels.len());
    if spec.excludes.is_empty() || t == 0 {
        return spec_lower_bound(spec);
    }
    let layout = Layout::new(&levels, t);
    let (possible, _) = Constraints::new(&spec.excludes, &levels).possible(&layout);
    let widest = (0..layout.sets())
        .map(|rank| {
            let from = layout.offset(rank);
            possible[from..from + layout.width(rank)]
                .iter()
                .filter(|&&p| p)
                .count()
        })
        .max()
        .unwrap_or(0);
    (widest as u128).saturating_mul(u128::from(spec.lambda))
}

/// The counting bound of a whole spec, excludes aside: [`lower_bound`] at its strength,
/// or a focus set's own (λ times the product of its `strength` largest level counts)
/// where larger.
///
/// ```
/// use heddle_generator::{Focus, Spec, bounds};
/// let spec = Spec::numbered(&[3; 6]).focus(Focus::new(vec![0, 1, 2], 3).lambda(2));
/// assert_eq!(bounds::spec_lower_bound(&spec), 54);
/// ```
pub fn spec_lower_bound(spec: &Spec) -> u128 {
    let levels = spec.levels();
    let t = spec.strength.min(levels.len());
    lower_bound(&levels, t, spec.lambda).max(crate::focus::lower_bound(&spec.focus, &levels))
}

/// Number of t-sets of columns grouped by the product of their level counts.
pub fn tsets_by_product(levels: &[usize], t: usize) -> BTreeMap<u128, f64> {
    // by[j] maps a product to the number of j-subsets (so far) with that product
    let mut by: Vec<BTreeMap<u128, f64>> = vec![BTreeMap::new(); t + 1];
    by[0].insert(1, 1.0);
    for &v in levels {
        for j in (1..=t).rev() {
            let prev: Vec<(u128, f64)> = by[j - 1].iter().map(|(&p, &c)| (p, c)).collect();
            for (p, c) in prev {
                *by[j].entry(p.saturating_mul(v as u128)).or_insert(0.0) += c;
            }
        }
    }
    std::mem::take(&mut by[t])
}

/// P[Binomial(n, p) < lambda], summed in log space so that large n does not underflow.
pub fn binomial_below(n: u64, p: f64, lambda: u32) -> f64 {
    if lambda == 0 {
        return 0.0;
    }
    if n < lambda as u64 {
        return 1.0;
    }
    if p >= 1.0 {
        return 0.0;
    }
    if p <= 0.0 {
        return 1.0;
    }
    let nf = n as f64;
    let ln_q = (-p).ln_1p();
    let ln_ratio = p.ln() - ln_q;
    let mut ln_term = nf * ln_q; // i = 0
    let mut terms = Vec::with_capacity(lambda as usize);
    for i in 0..lambda as u64 {
        terms.push(ln_term);
        ln_term += ((nf - i as f64) / (i as f64 + 1.0)).ln() + ln_ratio;
    }
    let max = terms.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    if max == f64::NEG_INFINITY {
        return 0.0;
    }
    (max + terms.iter().map(|&x| (x - max).exp()).sum::<f64>().ln())
        .exp()
        .min(1.0)
}

/// Expected number of t-way interactions covered fewer than λ times in a uniformly random
/// array of `n` rows.
pub fn expected_deficient(groups: &BTreeMap<u128, f64>, n: u64, lambda: u32) -> f64 {
    groups
        .iter()
        .map(|(&prod, &sets)| {
            let pf = prod as f64;
            sets * pf * binomial_below(n, 1.0 / pf, lambda)
        })
        .sum()
}

/// The least N for which a uniformly random N-row array has, in expectation, fewer than
/// one t-way interaction covered fewer than λ times — so some array of that size is a
/// covering array (the probabilistic method; the first-moment argument as in
/// Godbole, Skipper and Sunley 1996 for λ = 1).
///
/// ```
/// // 2^3 at t = 2, λ = 1: 3 pairs × 4 combinations × (3/4)^N < 1 first at N = 9
/// assert_eq!(heddle_generator::bounds::expected_bound(&[2, 2, 2], 2, 1), 9);
/// ```
pub fn expected_bound(levels: &[usize], t: usize, lambda: u32) -> u64 {
    least_rows(&[(tsets_by_product(levels, t), lambda)])
}

/// [`expected_bound`] for a whole spec: the t-way interactions at λ and every focus set's
/// at its own strength and index, all in one sum, so that with focus sets it is never
/// below what they alone need (the first-moment argument holds for any set of demands).
///
/// ```
/// use heddle_generator::{Focus, Spec, bounds};
/// let plain = Spec::numbered(&[3; 6]);
/// assert_eq!(bounds::spec_expected_bound(&plain), bounds::expected_bound(&[3; 6], 2, 1));
/// let focused = plain.focus(Focus::new(vec![0, 1, 2], 3).lambda(2));
/// assert!(bounds::spec_expected_bound(&focused) >= bounds::expected_bound(&[3; 3], 3, 2));
/// ```
pub fn spec_expected_bound(spec: &Spec) -> u64 {
    let levels = spec.levels();
    let t = spec.strength.min(levels.len());
    let mut demands = vec![(tsets_by_product(&levels, t), spec.lambda)];
    for f in &spec.focus {
        let sub: Vec<usize> = f.factors.iter().filter_map(|&c| levels.get(c).copied()).collect();
        demands.push((tsets_by_product(&sub, f.strength.min(sub.len())), f.lambda));
    }
    least_rows(&demands)
}

/// The least N at which a uniformly random N-row array leaves, in expectation, fewer
/// than one interaction of all `demands` (t-sets by product, and their λ) short.
fn least_rows(demands: &[(BTreeMap<u128, f64>, u32)]) -> u64 {
    let below = |n: u64| {
        demands
            .iter()
            .map(|(groups, lambda)| expected_deficient(groups, n, *lambda))
            .sum::<f64>()
            < 1.0
    };
    let lambda = demands.iter().map(|(_, l)| *l).max().unwrap_or(1);
    let mut hi: u64 = lambda as u64;
    while !below(hi) {
        if hi >= 1 << 62 {
            return u64::MAX;
        }
        hi *= 2;
    }
    let mut lo: u64 = hi / 2; // below(lo) is false unless lo == 0 or hi == lambda
    if below(lo) {
        lo = 0;
    }
    // invariant: !below(lo) or lo == 0, below(hi)
    while hi - lo > 1 {
        let mid = lo + (hi - lo) / 2;
        if below(mid) { hi = mid } else { lo = mid }
    }
    if lo == 0 && below(0) { 0 } else { hi }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binomial_tail_by_direct_summation() {
        // direct summation with exact binomial coefficients, small n
        fn direct(n: u64, p: f64, lambda: u32) -> f64 {
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
        for n in [0u64, 1, 5, 17, 40] {
            for lambda in 1..5 {
                for p in [0.5, 0.25, 1.0 / 9.0, 1.0 / 64.0] {
                    let a = binomial_below(n, p, lambda);
                    let b = if n < lambda as u64 {
                        1.0
                    } else {
                        direct(n, p, lambda)
                    };
                    assert!((a - b).abs() < 1e-12, "n={n} p={p} l={lambda}: {a} vs {b}");
                }
            }
        }
    }

    #[test]
    fn a_design_with_focus_sets_states_an_expected_bound_for_them_too() {
        use crate::{Effort, Focus, generate};
        // the README's `frame`: pairs of 3·3·3·3·2, every triple of the first three and
        // every 4-set of four at λ = 2 (the counting bound 2·3·3·3·2 = 108)
        let spec = Spec::numbered(&[3, 3, 3, 3, 2])
            .focus(Focus::new(vec![0, 1, 2], 3))
            .focus(Focus::new(vec![3, 4, 0, 1], 4).lambda(2));
        let stats = generate(&spec, Effort::Fast).unwrap().stats;
        // a random array of fewer rows than the counting bound cannot be a design
        assert!(
            stats.expected_bound >= stats.lower_bound,
            "{} < {}",
            stats.expected_bound,
            stats.lower_bound
        );
        // and the sum over all demands needs at least what each needs alone
        let alone = expected_bound(&[3, 3, 2, 3], 4, 2);
        assert!(
            stats.expected_bound >= alone,
            "{} < {alone}",
            stats.expected_bound
        );
        assert!(stats.expected_bound >= expected_bound(&[3, 3, 3, 3, 2], 2, 1));
        assert_eq!(stats.expected_bound, spec_expected_bound(&spec));
    }

    #[test]
    fn tset_groups_count_all_tsets() {
        let g = tsets_by_product(&[2, 2, 3, 4], 2);
        // pairs: (2,2)=4 once, (2,3)=6 twice, (2,4)=8 twice, (3,4)=12 once
        assert_eq!(g.get(&4), Some(&1.0));
        assert_eq!(g.get(&6), Some(&2.0));
        assert_eq!(g.get(&8), Some(&2.0));
        assert_eq!(g.get(&12), Some(&1.0));
    }

    #[test]
    fn expected_bound_is_least() {
        for (levels, t, lambda) in [
            (vec![3; 13], 2, 1),
            (vec![2; 10], 3, 2),
            (vec![4, 3, 2, 2, 5], 2, 3),
        ] {
            let n = expected_bound(&levels, t, lambda);
            let g = tsets_by_product(&levels, t);
            assert!(expected_deficient(&g, n, lambda) < 1.0);
            assert!(expected_deficient(&g, n - 1, lambda) >= 1.0);
            assert!(n as u128 >= lower_bound(&levels, t, lambda));
        }
    }
}
