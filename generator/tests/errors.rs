//! Every way the model refuses a spec, with the figures its message must carry. Messages
//! are lower case with no final period (project rule, common practice for error chains).

use heddle_generator::{
    Effort, Error, Expr, Factor, MAX_FACTORS, MAX_INTERACTIONS, MAX_LAMBDA, MAX_LEVELS, MAX_ROWS,
    MAX_STRENGTH, Spec, generate,
};

fn numbered(levels: &[usize]) -> Vec<Factor> {
    levels
        .iter()
        .enumerate()
        .map(|(i, &v)| Factor::numbered(format!("f{}", i + 1), v))
        .collect()
}

/// Runs `generate` (which validates first), expects `want`, and checks the message style
/// and that it mentions each of `parts`.
fn refused(spec: &Spec, want: Error, parts: &[&str]) {
    let got = generate(spec, Effort::Fast).expect_err("spec must be refused");
    assert_eq!(got, want);
    assert_eq!(
        spec.validate().err().is_some(),
        !matches!(want, Error::NothingAllowed)
    );
    let msg = got.to_string();
    assert!(!msg.ends_with('.'), "final period: {msg}");
    assert!(
        msg.chars().next().is_some_and(|c| !c.is_uppercase()),
        "capitalised: {msg}"
    );
    for p in parts {
        assert!(msg.contains(p), "`{msg}` lacks `{p}`");
    }
}

#[test]
fn shape_errors() {
    refused(&Spec::new(vec![]), Error::NoFactors, &["no factors"]);
    let many = numbered(&vec![2; MAX_FACTORS + 1]);
    refused(
        &Spec::new(many),
        Error::TooManyFactors {
            count: MAX_FACTORS + 1,
            limit: MAX_FACTORS,
        },
        &["4097", "4096"],
    );
    refused(
        &Spec::new(vec![Factor::numbered("", 2), Factor::numbered("b", 2)]),
        Error::EmptyName,
        &["empty name"],
    );
    refused(
        &Spec::new(vec![Factor::numbered("a", 2), Factor::numbered("a", 3)]),
        Error::DuplicateFactor { name: "a".into() },
        &["`a`"],
    );
    refused(
        &Spec::new(vec![
            Factor::new("a", Vec::<String>::new()),
            Factor::numbered("b", 2),
        ]),
        Error::NoLevels { factor: "a".into() },
        &["`a`", "no levels"],
    );
    refused(
        &Spec::new(vec![
            Factor::numbered("a", MAX_LEVELS + 1),
            Factor::numbered("b", 2),
        ]),
        Error::TooManyLevels {
            factor: "a".into(),
            count: MAX_LEVELS + 1,
            limit: MAX_LEVELS,
        },
        &["`a`", "256", "255"],
    );
    refused(
        &Spec::new(vec![Factor::new("a", ["x", "y", "x"]), Factor::numbered("b", 2)]),
        Error::DuplicateLevel {
            factor: "a".into(),
            label: "x".into(),
        },
        &["`a`", "`x`"],
    );
}

#[test]
fn parameter_errors() {
    let f = numbered(&[2; 10]);
    refused(
        &Spec::new(f.clone()).strength(0),
        Error::StrengthZero,
        &["at least 1"],
    );
    refused(
        &Spec::new(numbered(&[2; 3])).strength(4),
        Error::StrengthAboveFactors {
            strength: 4,
            factors: 3,
        },
        &["4", "(3)"],
    );
    refused(
        &Spec::new(f.clone()).strength(MAX_STRENGTH + 1),
        Error::StrengthTooHigh {
            strength: MAX_STRENGTH as u64 + 1,
            limit: MAX_STRENGTH,
        },
        &["9", "8"],
    );
    refused(
        &Spec::new(f.clone()).lambda(0),
        Error::LambdaZero,
        &["at least 1"],
    );
    refused(
        &Spec::new(f).lambda(MAX_LAMBDA + 1),
        Error::LambdaTooHigh {
            lambda: u64::from(MAX_LAMBDA) + 1,
            limit: MAX_LAMBDA,
        },
        &["1001", "1000"],
    );
}

#[test]
fn constraint_and_required_row_errors() {
    let f = numbered(&[2, 3]);
    refused(
        &Spec::new(f.clone()).exclude(Expr::is(5, 0)),
        Error::BadConstraintRef {
            constraint: 0,
            factor: 5,
            level: 0,
        },
        &["exclude #1", "#5"],
    );
    refused(
        &Spec::new(f.clone())
            .exclude(Expr::is(0, 1))
            .exclude(Expr::is(1, 3)),
        Error::BadConstraintRef {
            constraint: 1,
            factor: 1,
            level: 3,
        },
        &["exclude #2", "level #3"],
    );
    refused(
        &Spec::new(f.clone()).require(vec![0]),
        Error::RequiredRowWidth {
            row: 0,
            width: 1,
            factors: 2,
        },
        &["#1", "1 entries", "2 factors"],
    );
    refused(
        &Spec::new(f.clone()).require(vec![0, 0]).require(vec![1, 3]),
        Error::RequiredRowLevel {
            row: 1,
            factor: "f2".into(),
            level: 3,
        },
        &["#2", "`f2`", "#3"],
    );
    let ex = Expr::parse("f1 == 1 && f2 == 2", &f).expect("valid");
    refused(
        &Spec::new(f.clone()).exclude(ex).require(vec![1, 2]),
        Error::RequiredRowExcluded {
            row: 0,
            constraint: 0,
        },
        &["#1", "exclude #1"],
    );
    // f1 == 0 and f1 == 1 excluded: no row is left (found by search, not by validate)
    let none = Spec::new(f.clone())
        .exclude(Expr::parse("f1 == 0", &f).expect("valid"))
        .exclude(Expr::parse("f1 != 0", &f).expect("valid"));
    refused(&none, Error::NothingAllowed, &["every row"]);
    // a chain that only a search can see through: f1=0 → f2=0, f2=0 → f1=1, f1=1 excluded
    let chain = Spec::new(f.clone())
        .exclude(Expr::parse("f1 == 0 && f2 != 0", &f).expect("valid"))
        .exclude(Expr::parse("f2 == 0 && f1 == 0", &f).expect("valid"))
        .exclude(Expr::parse("f1 == 1", &f).expect("valid"));
    refused(&chain, Error::NothingAllowed, &["every row"]);
}

#[test]
fn size_errors_state_the_count_and_the_limit() {
    // 255^4 at t = 4: one t-set of 255^4 = 4228250625 interactions
    let big = Spec::new(numbered(&[255; 4])).strength(4);
    refused(
        &big,
        Error::TooLarge {
            interactions: 4_228_250_625,
            limit: MAX_INTERACTIONS,
        },
        &["4228250625", &MAX_INTERACTIONS.to_string()],
    );
    // the remedy is the hint's, not repeated in the message
    let e = heddle_generator::generate(&big, heddle_generator::Effort::Fast).unwrap_err();
    assert!(e.hint().contains("lower the strength"), "{}", e.hint());
    assert!(!e.to_string().contains("lower the strength"), "{e}");
    // 200 × 200 at t = 2, λ = 1000: 40000 interactions, but 4·10^7 rows at least
    let rows = Spec::new(numbered(&[200, 200])).lambda(1000);
    refused(
        &rows,
        Error::TooManyRows {
            lower_bound: 40_000_000,
            limit: MAX_ROWS,
        },
        &["40000000", &MAX_ROWS.to_string(), "lower lambda"],
    );
}

#[test]
fn parse_errors_point_at_the_text() {
    let f = numbered(&[2, 3]);
    let e = Expr::parse("f1 == 0 && f9 == 1", &f).expect_err("unknown factor");
    assert_eq!((e.offset, e.len), (11, 2));
    assert!(e.message.contains("unknown factor `f9`"));
    assert!(e.hint.contains("f1, f2"));
    let e = Expr::parse("f2 == 3", &f).expect_err("no such level");
    assert!(e.message.contains("`3` is not a level of factor `f2`"));
    assert!(e.hint.contains("0, 1, 2"));
}

#[test]
fn closed_form_specs_pass_the_interaction_limit() {
    // 128^80 at t = 2 has C(80, 2)·128² = 51 773 440 interactions, past the limit, but
    // Bose (1938) answers it in closed form: OA(16384; 2, 129, 128) over GF(128), the
    // counting bound 128²
    let spec = Spec::new(numbered(&[128; 80]));
    const { assert!(51_773_440 > MAX_INTERACTIONS) };
    assert!(spec.validate().is_ok());
    let d = generate(&spec, Effort::Fast).expect("closed form");
    assert_eq!(d.rows.len(), 128 * 128);
    assert_eq!(d.stats.interactions, 51_773_440);
    assert!(d.stats.method.starts_with("bose(q=128"), "{}", d.stats.method);
    assert_eq!(d.stats.coverage_curve.last().copied(), Some(1.0));
    // with an exclude the engine would have to count interactions: refused as before
    let f = numbered(&[128; 80]);
    let constrained = Spec::new(f.clone()).exclude(Expr::parse("f1 == 0 && f2 == 0", &f).expect("valid"));
    assert!(matches!(constrained.validate(), Err(Error::TooLarge { .. })));
    // and so is a wide spec no construction answers (3^4000 at t = 2: 71 982 000
    // interactions)
    assert!(matches!(
        Spec::new(numbered(&[3; 4000])).validate(),
        Err(Error::TooLarge { .. })
    ));
    // completing rows counts interactions too
    assert!(matches!(
        heddle_generator::complete(&spec, &[vec![0; 80]]),
        Err(Error::TooLarge { .. })
    ));
}

#[test]
fn the_widest_binary_spec_gets_kleitman_spencer() {
    // 2^4096 at t = 2 (the most factors a spec may have): the least N with
    // C(N − 1, ⌈N/2⌉) ≥ 4096 (Kleitman & Spencer 1973; Katona 1973) is 16, as
    // C(15, 8) = 6435 and C(14, 8) = 3003 (14 rows serve only up to k = C(13, 7) = 1716).
    let d = generate(&Spec::new(numbered(&[2; 4096])), Effort::Fast).expect("valid");
    assert_eq!(d.rows.len(), 16);
    assert_eq!(d.stats.interactions, 33_546_240);
    assert!(d.stats.method.contains("kleitman-spencer"), "{}", d.stats.method);
}
