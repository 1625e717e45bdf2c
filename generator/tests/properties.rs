//! Property tests of `generate` over randomised specs: mixed levels 1–5, t = 1..4,
//! λ = 1..4, random exclude formulas built from atoms, `&&`, `||` and `!`, and random
//! required rows drawn from the allowed rows. Every result must pass the independent
//! checker (`verify`), contain no excluded row, start with the required rows, and stay
//! under a trivial bound. The definition checked is that of a covering array of strength t
//! and index λ (e.g. Colbourn 2004, "Combinatorial aspects of covering arrays").

use heddle_generator::{Effort, Error, Expr, FAST_BUDGET, Factor, Spec, generate, verify};
use proptest::prelude::*;

mod common;

use common::{Mix, all_rows};

/// A random formula of depth at most `depth` over factors with these level counts.
fn formula(m: &mut Mix, levels: &[usize], depth: u32) -> Expr {
    let pick = if depth == 0 { 0 } else { m.below(5) };
    match pick {
        0 | 1 => {
            let f = m.below(levels.len());
            let l = m.below(levels[f]) as u8;
            if m.below(2) == 0 {
                Expr::is(f, l)
            } else {
                Expr::is_not(f, l)
            }
        }
        2 => formula(m, levels, depth - 1).and(formula(m, levels, depth - 1)),
        3 => formula(m, levels, depth - 1).or(formula(m, levels, depth - 1)),
        _ => formula(m, levels, depth - 1).not(),
    }
}

struct Case {
    spec: Spec,
    allowed: usize,
}

fn case(levels: Vec<usize>, t: usize, lambda: u32, ex_seeds: &[u64], req_seeds: &[u64], seed: u64) -> Case {
    let k = levels.len();
    let factors: Vec<Factor> = levels
        .iter()
        .enumerate()
        .map(|(i, &v)| Factor::numbered(format!("f{}", i + 1), v))
        .collect();
    let mut spec = Spec::new(factors).strength(t.min(k)).lambda(lambda).seed(seed);
    for &s in ex_seeds {
        spec = spec.exclude(formula(&mut Mix(s), &levels, 3));
    }
    let rows = all_rows(&levels);
    let allowed_rows: Vec<&Vec<u8>> = rows
        .iter()
        .filter(|r| !spec.excludes.iter().any(|e| e.eval(r)))
        .collect();
    if !allowed_rows.is_empty() {
        for &s in req_seeds {
            let r = allowed_rows[Mix(s).below(allowed_rows.len())].clone();
            spec = spec.require(r);
        }
    }
    Case {
        allowed: allowed_rows.len(),
        spec,
    }
}

/// Checks everything a design for `spec` must satisfy; returns its row count.
fn check(c: &Case, effort: Effort) -> Result<usize, TestCaseError> {
    let spec = &c.spec;
    let d = match generate(spec, effort) {
        Ok(d) => d,
        Err(Error::NothingAllowed) => {
            prop_assert_eq!(c.allowed, 0, "NothingAllowed although rows are allowed");
            return Ok(0);
        }
        Err(e) => return Err(TestCaseError::fail(format!("unexpected error: {e}"))),
    };
    prop_assert!(c.allowed > 0);
    let cov = verify(spec, &d.rows).map_err(|v| TestCaseError::fail(format!("invalid design: {v}")))?;
    prop_assert_eq!(cov.impossible, d.stats.impossible);
    prop_assert_eq!(cov.interactions, d.stats.interactions);
    for row in &d.rows {
        prop_assert!(
            !spec.excludes.iter().any(|e| e.eval(row)),
            "excluded row {:?}",
            row
        );
    }
    prop_assert_eq!(&d.rows[..spec.required.len()], &spec.required[..]);
    // trivial bounds: each greedy row meets some demand, and a distinct row can do so at
    // most λ times; the search and the finishing passes only remove rows
    let lambda = spec.lambda as usize;
    let possible = (cov.interactions - cov.impossible) as usize;
    prop_assert!(d.rows.len() <= spec.required.len() + lambda * possible.min(c.allowed));
    if spec.excludes.is_empty() {
        prop_assert!(d.rows.len() as u64 >= d.stats.lower_bound);
    }
    let curve = &d.stats.coverage_curve;
    prop_assert_eq!(curve.len(), d.rows.len());
    prop_assert!(curve.windows(2).all(|w| w[0] <= w[1]));
    if let Some(&last) = curve.last() {
        prop_assert!((last - 1.0).abs() < 1e-12, "coverage ends at {}", last);
    }
    // the same spec gives the same rows
    prop_assert_eq!(
        &generate(spec, effort)
            .map_err(|e| TestCaseError::fail(e.to_string()))?
            .rows,
        &d.rows
    );
    Ok(d.rows.len())
}

fn config(cases: u32) -> ProptestConfig {
    ProptestConfig {
        cases,
        // integration tests have no lib.rs to anchor a regressions file; a failure prints
        // its inputs instead
        failure_persistence: None,
        ..ProptestConfig::default()
    }
}

proptest! {
    #![proptest_config(config(128))]

    #[test]
    fn fast_designs_are_valid(
        levels in prop::collection::vec(1usize..=5, 1..=6),
        t in 1usize..=4,
        lambda in 1u32..=4,
        ex_seeds in prop::collection::vec(any::<u64>(), 0..=3),
        req_seeds in prop::collection::vec(any::<u64>(), 0..=3),
        seed in any::<u64>(),
    ) {
        let c = case(levels, t, lambda, &ex_seeds, &req_seeds, seed);
        check(&c, Effort::Fast)?;
    }
}

proptest! {
    #![proptest_config(config(48))]

    #[test]
    fn tight_designs_are_valid_and_never_larger(
        levels in prop::collection::vec(1usize..=5, 2..=6),
        t in 1usize..=3,
        lambda in 1u32..=3,
        ex_seeds in prop::collection::vec(any::<u64>(), 0..=2),
        req_seeds in prop::collection::vec(any::<u64>(), 0..=2),
        seed in any::<u64>(),
    ) {
        let c = case(levels, t, lambda, &ex_seeds, &req_seeds, seed);
        let fast = check(&c, Effort::Fast)?;
        // the tight search replays the fast one move for move before going further
        let tight = check(&c, Effort::Tight { budget: FAST_BUDGET + 20_000 })?;
        prop_assert!(tight <= fast, "tight {} rows, fast {}", tight, fast);
    }
}

proptest! {
    #![proptest_config(config(48))]

    /// λ copies of the λ = 1 design cover everything λ times, so the engine, which
    /// offers that stack beside its direct design, never returns more rows (juxtaposed
    /// arrays add their indices, common practice; 2^10 t=4 λ=2 once gave 51 rows, above
    /// 2 × 24).
    #[test]
    fn index_lambda_never_exceeds_lambda_copies(
        levels in prop::collection::vec(1usize..=4, 2..=6),
        t in 1usize..=3,
        lambda in 2u32..=4,
        ex_seeds in prop::collection::vec(any::<u64>(), 0..=2),
        req_seeds in prop::collection::vec(any::<u64>(), 0..=2),
        seed in any::<u64>(),
    ) {
        let c = case(levels.clone(), t, lambda, &ex_seeds, &req_seeds, seed);
        let one = case(levels, t, 1, &ex_seeds, &req_seeds, seed);
        let n = check(&c, Effort::Fast)?;
        let n1 = check(&one, Effort::Fast)?;
        prop_assert!(n <= lambda as usize * n1, "{} rows at λ = {}, {} at λ = 1", n, lambda, n1);
    }
}

#[test]
fn stacking_bounds_the_binary_strength_four_case_of_issue_13() {
    let spec = |lambda| Spec::numbered(&[2; 10]).strength(4).lambda(lambda);
    let one = generate(&spec(1), Effort::Fast).expect("valid").rows.len();
    for lambda in 2..=3 {
        let d = generate(&spec(lambda), Effort::Fast).expect("valid");
        assert!(verify(&spec(lambda), &d.rows).is_ok());
        assert!(
            d.rows.len() <= lambda as usize * one,
            "λ = {lambda}: {} rows, λ·{one} = {}",
            d.rows.len(),
            lambda as usize * one
        );
        assert!(
            d.stats.methods.iter().any(|m| m.starts_with("stack ")),
            "{:?}",
            d.stats.methods
        );
    }
}
