//! Focus sets (variable strength) against brute force: on random small specs — mixed
//! levels, base strength 1–2, one to three focus sets of a higher strength, indices 1–2,
//! sometimes an exclude and a required row — every design must cover every base t-set of
//! all factors λ times and every s-subset of each focus set at its own index, counted here
//! by exhaustive enumeration of column sets and level combinations, independent of the
//! engine's numbering. An interaction no allowed row contains is exempt. The definition
//! is the variable-strength covering array of Cohen, Colbourn, Collofello, Gibbons and
//! Mugridge (2003, "Variable strength interaction testing of components"), with index λ.

use heddle_generator::{Effort, Error, Expr, Focus, Spec, UNSET, complete, generate, verify};

mod common;

use common::{Mix, all_rows};

/// Every `size`-subset of `items`.
fn subsets(items: &[usize], size: usize) -> Vec<Vec<usize>> {
    if size == 0 {
        return vec![vec![]];
    }
    let mut out = Vec::new();
    for (i, &c) in items.iter().enumerate() {
        for mut rest in subsets(&items[i + 1..], size - 1) {
            rest.insert(0, c);
            out.push(rest);
        }
    }
    out
}

/// The first column set and levels on it that `rows` show fewer than `lambda` times
/// although some allowed row shows them, if any.
fn shortfall(rows: &[Vec<u8>], allowed: &[Vec<u8>], set: &[usize], lambda: usize) -> Option<Vec<u8>> {
    let mut seen: Vec<Vec<u8>> = allowed
        .iter()
        .map(|r| set.iter().map(|&c| r[c]).collect())
        .collect();
    seen.sort();
    seen.dedup();
    seen.into_iter().find(|combo| {
        rows.iter()
            .filter(|r| set.iter().zip(combo).all(|(&c, &l)| r[c] == l))
            .count()
            < lambda
    })
}

/// Whether `rows` cover the spec as variable strength asks, by brute force.
fn brute_force_ok(spec: &Spec, rows: &[Vec<u8>]) -> Result<(), String> {
    let levels = spec.levels();
    let allowed: Vec<Vec<u8>> = all_rows(&levels)
        .into_iter()
        .filter(|r| !spec.excludes.iter().any(|e| e.eval(r)))
        .collect();
    let all: Vec<usize> = (0..levels.len()).collect();
    let mut demands: Vec<(Vec<usize>, usize)> = subsets(&all, spec.strength)
        .into_iter()
        .map(|s| (s, spec.lambda as usize))
        .collect();
    for f in &spec.focus {
        let mut fs = f.factors.clone();
        fs.sort();
        for s in subsets(&fs, f.strength) {
            demands.push((s, f.lambda as usize));
        }
    }
    for (set, lambda) in demands {
        if let Some(combo) = shortfall(rows, &allowed, &set, lambda) {
            return Err(format!("{set:?} = {combo:?} short of {lambda}"));
        }
    }
    Ok(())
}

/// A random small spec with focus sets.
fn random_spec(m: &mut Mix) -> Spec {
    let k = 3 + m.below(4);
    let levels: Vec<usize> = (0..k).map(|_| 2 + m.below(3)).collect();
    let t = 1 + m.below(2);
    let lambda = 1 + m.below(2) as u32;
    let mut spec = Spec::numbered(&levels).strength(t).lambda(lambda).seed(m.next());
    for _ in 0..1 + m.below(3) {
        let size = (t + 1 + m.below(k - t)).min(k);
        let mut cols: Vec<usize> = (0..k).collect();
        for i in (1..k).rev() {
            cols.swap(i, m.below(i + 1));
        }
        cols.truncate(size);
        let s = t + 1 + m.below(size - t);
        spec = spec.focus(Focus::new(cols, s).lambda(1 + m.below(2) as u32));
    }
    if m.below(3) == 0 {
        spec = spec.exclude(Expr::is(0, 0).and(Expr::is(1, 1)));
    }
    if m.below(4) == 0 {
        spec = spec.require(vec![1; k]);
    }
    if m.below(4) == 0 {
        // a required row with cells left to the engine
        let mut row = vec![UNSET; k];
        row[k - 1] = 0;
        spec = spec.require(row);
    }
    spec
}

#[test]
fn random_focus_specs_cover_every_set_at_its_strength() {
    let mut m = Mix(2003);
    for case in 0..60 {
        let spec = random_spec(&mut m);
        let effort = if case % 3 == 0 {
            Effort::Tight { budget: 5_000 }
        } else {
            Effort::Fast
        };
        let d = generate(&spec, effort).unwrap_or_else(|e| panic!("case {case}: {spec:?}: {e}"));
        if let Err(why) = brute_force_ok(&spec, &d.rows) {
            panic!("case {case}: {spec:?}: {why}");
        }
        assert!(
            d.stats.method.contains("+focus"),
            "case {case}: {}",
            d.stats.method
        );
        let bound = heddle_generator::bounds::lower_bound(&spec.levels(), spec.strength, spec.lambda);
        assert!(d.rows.len() as u128 >= bound, "case {case}");
        let fills = |r: &Vec<u8>, d: &Vec<u8>| r.iter().zip(d).all(|(&a, &b)| a == UNSET || a == b);
        assert!(
            spec.required.iter().zip(&d.rows).all(|(r, d)| fills(r, d)),
            "case {case}"
        );
        // the same spec gives the same rows
        assert_eq!(generate(&spec, effort).unwrap().rows, d.rows, "case {case}");
    }
}

#[test]
fn the_checker_agrees_with_brute_force_on_random_rows() {
    // random row sets, some valid, most not: the checker and the enumeration above must
    // give the same verdict on every focus set
    let mut m = Mix(7);
    let (mut valid, mut invalid) = (0, 0);
    for _ in 0..300 {
        let spec = random_spec(&mut m);
        let levels = spec.levels();
        let allowed: Vec<Vec<u8>> = all_rows(&levels)
            .into_iter()
            .filter(|r| !spec.excludes.iter().any(|e| e.eval(r)))
            .collect();
        let n = spec.required.len() + m.below(allowed.len() * 2 + 1);
        // the required rows first, an open cell filled as some allowed row has it
        let fits = |r: &Vec<u8>, a: &Vec<u8>| r.iter().zip(a).all(|(&x, &y)| x == UNSET || x == y);
        let mut rows: Vec<Vec<u8>> = spec
            .required
            .iter()
            .map(|r| {
                allowed
                    .iter()
                    .find(|a| fits(r, a))
                    .expect("validated as completable")
                    .clone()
            })
            .collect();
        while rows.len() < n {
            rows.push(allowed[m.below(allowed.len())].clone());
        }
        let brute = brute_force_ok(&spec, &rows).is_ok();
        assert_eq!(
            verify(&spec, &rows).is_ok(),
            brute,
            "{spec:?}, {} rows",
            rows.len()
        );
        if brute { valid += 1 } else { invalid += 1 }
    }
    assert!(valid > 10 && invalid > 10, "valid {valid}, invalid {invalid}");
}

#[test]
fn a_focus_triple_is_covered_at_strength_three() {
    // 3^6 at t = 2 with every triple of the first three factors: those three alone need
    // all 27 combinations (the counting bound λ·3³ of a strength-3 array, e.g. Colbourn
    // 2004, "Combinatorial aspects of covering arrays")
    let spec = Spec::numbered(&[3; 6]).focus(Focus::new(vec![2, 0, 1], 3));
    let d = generate(&spec, Effort::Fast).unwrap();
    brute_force_ok(&spec, &d.rows).unwrap();
    // and 27 is reached: the linear OA(27; 2, 13, 3) (Rao 1947; its first three columns
    // can be taken independent, so they show all 27 triples; from memory) covers every
    // pair of 13 ternary factors, so no more rows are ever needed for 3^6
    assert_eq!(d.rows.len(), 27, "{}", d.stats.method);
    let mut triples: Vec<[u8; 3]> = d.rows.iter().map(|r| [r[0], r[1], r[2]]).collect();
    triples.sort();
    triples.dedup();
    assert_eq!(triples.len(), 27);
    // and the plain t = 2 design does not cover them all (9 rows, Bose 1938)
    let plain = generate(&Spec::numbered(&[3; 6]), Effort::Fast).unwrap();
    assert!(brute_force_ok(&spec, &plain.rows).is_err());
}

#[test]
fn completing_rows_counts_the_focus_demand() {
    // the 27 combinations of the first three of 3^4, the fourth left open: at strength 2
    // most of them are redundant (9 rows cover every pair of 3^4, Bose 1938), but with
    // the first three as a focus set at 3 each is the only row of its triple
    let partial: Vec<Vec<u8>> = (0..27u8).map(|x| vec![x / 9, x / 3 % 3, x % 3, UNSET]).collect();
    let plain = Spec::numbered(&[3; 4]);
    let c = complete(&plain, &partial).unwrap();
    assert!(!c.redundant.is_empty());
    let focused = plain.clone().focus(Focus::new(vec![0, 1, 2], 3));
    let c = complete(&focused, &partial).unwrap();
    assert!(c.redundant.is_empty() && c.excluded.is_empty(), "{c:?}");
    assert_eq!(c.rows.len(), 27);
    // the open column is filled for the pairs: the rows are a design of the whole spec
    brute_force_ok(&focused, &c.rows).unwrap();
}

#[test]
fn bad_focus_sets_are_refused_by_name() {
    let base = Spec::numbered(&[2, 2, 2, 2]);
    // each bad focus set and the refusal it must get
    type Expect = fn(&Error) -> bool;
    let cases: Vec<(Focus, Expect)> = vec![
        (Focus::new(vec![0, 9], 2), |e| {
            matches!(e, Error::FocusUnknownFactor { factor: 9, .. })
        }),
        (Focus::new(vec![0, 1, 0], 3), |e| {
            matches!(e, Error::FocusRepeatedFactor { .. })
        }),
        (Focus::new(vec![0, 1, 2], 2), |e| {
            matches!(e, Error::FocusStrengthNotAbove { base: 2, .. })
        }),
        (Focus::new(vec![0, 1], 3), |e| {
            matches!(e, Error::FocusStrengthAboveSize { size: 2, .. })
        }),
        (Focus::new(vec![0, 1, 2], 3).lambda(0), |e| {
            matches!(e, Error::LambdaZero)
        }),
        (Focus::new(vec![0, 1, 2], 9), |e| {
            matches!(e, Error::StrengthTooHigh { .. })
        }),
    ];
    // the count in words agrees with its noun
    let one = base.clone().focus(Focus::new(vec![0], 3)).validate().unwrap_err();
    assert!(one.to_string().ends_with("over only 1 factor"), "{one}");
    let two = base
        .clone()
        .focus(Focus::new(vec![0, 1], 3))
        .validate()
        .unwrap_err();
    assert!(two.to_string().ends_with("over only 2 factors"), "{two}");
    for (f, want) in cases {
        let err = base.clone().focus(f.clone()).validate().unwrap_err();
        assert!(want(&err), "{f:?}: {err:?}");
        assert!(!err.hint().is_empty());
    }
    let many =
        (0..heddle_generator::MAX_FOCUS_SETS + 1).fold(base, |s, _| s.focus(Focus::new(vec![0, 1, 2], 3)));
    assert!(matches!(many.validate(), Err(Error::TooManyFocusSets { .. })));
}
