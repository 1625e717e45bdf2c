//! Parsing, validation and spec conversion of `#[cover]`, through the public passes.

mod common;

use common::{assert_one_error, check, check_with};
use heddle_generator::Expr;
use heddle_syntax::Defaults;
use heddle_syntax::hash::default_seed;

const ROUNDTRIP: &str = "fn roundtrip(
    #[levels(1, 8, 64)] batch: usize,
    #[levels(Codec::Plain, Codec :: Rle, Codec::Delta)] codec: Codec,
    #[levels(true, false)] checksum: bool,
) {}";

#[test]
fn the_readme_example() {
    let s = check(
        "strength = 2, lambda = 2, seed = 11, exclude(codec == Codec::Delta && batch == 1)",
        ROUNDTRIP,
    )
    .unwrap();
    assert_eq!(s.function, "roundtrip");
    let names: Vec<&str> = s.spec.factors.iter().map(|f| f.name.as_str()).collect();
    assert_eq!(names, ["batch", "codec", "checksum"]);
    assert_eq!(s.spec.factors[0].levels, ["1", "8", "64"]);
    // whitespace inside a level does not matter
    assert_eq!(
        s.spec.factors[1].levels,
        ["Codec::Plain", "Codec::Rle", "Codec::Delta"]
    );
    assert_eq!(s.spec.factors[2].levels, ["true", "false"]);
    assert_eq!((s.spec.strength, s.spec.lambda, s.spec.seed), (2, 2, 11));
    assert_eq!(s.spec.excludes, vec![Expr::is(1, 2).and(Expr::is(0, 0))]);
    assert_eq!(s.excludes, ["codec == Codec::Delta && batch == 1"]);
    assert!(s.strength_explicit);
    // the spec above is the codec example, so its fingerprint is known independently
    let documented = common::codec_example_fingerprint(heddle_generator::ENGINE_VERSION.into());
    assert_eq!(s.fingerprint, heddle_syntax::Fingerprint(documented));
}

#[test]
fn defaults_and_their_sources() {
    let s = check("", ROUNDTRIP).unwrap();
    assert_eq!((s.spec.strength, s.spec.lambda), (2, 1));
    assert_eq!(s.spec.seed, default_seed("roundtrip"));
    assert!(!s.strength_explicit);

    let d = Defaults {
        strength: Some(3),
        lambda: Some(4),
        seed: Some(99),
        ..Defaults::default()
    };
    let s = check_with("", ROUNDTRIP, &d).unwrap();
    assert_eq!((s.spec.strength, s.spec.lambda, s.spec.seed), (3, 4, 99));
    // the attribute overrides the crate
    let s = check_with("strength = 1, lambda = 2, seed = 5", ROUNDTRIP, &d).unwrap();
    assert_eq!((s.spec.strength, s.spec.lambda, s.spec.seed), (1, 2, 5));
}

#[test]
fn default_strength_is_capped_explicit_is_not() {
    let one = "fn f(#[levels(1, 2)] a: u8) {}";
    assert_eq!(check("", one).unwrap().spec.strength, 1);
    let d = Defaults {
        strength: Some(3),
        ..Defaults::default()
    };
    assert_eq!(check_with("", one, &d).unwrap().spec.strength, 1);
    assert_one_error(
        check("strength = 2", one),
        "`strength = 2` is larger than the number of parameters (1)",
    );
}

#[test]
fn seeds_differ_by_name() {
    let a = check("", "fn a(#[levels(1, 2)] x: u8) {}").unwrap();
    let b = check("", "fn b(#[levels(1, 2)] x: u8) {}").unwrap();
    assert_ne!(a.spec.seed, b.spec.seed);
    assert_ne!(a.fingerprint, b.fingerprint);
}

#[test]
fn bad_keys_and_values() {
    let f = "fn f(#[levels(1, 2)] a: u8, #[levels(1, 2)] b: u8) {}";
    assert_one_error(check("strenght = 2", f), "unknown key `strenght`");
    assert_one_error(check("type = 2", f), "unknown key `type`");
    assert_one_error(check("lambda = 1, lambda = 2", f), "duplicate key `lambda`");
    assert_one_error(
        check("strength = \"two\"", f),
        "`strength` takes an integer literal, found a string",
    );
    assert_one_error(
        check("seed = 1.5", f),
        "`seed` takes an integer literal, found a float",
    );
    assert_one_error(
        check("lambda = -1", f),
        "`lambda` takes an integer literal, found a negative",
    );
    assert_one_error(check("strength = 0", f), "`strength = 0` is not allowed");
    assert_one_error(check("lambda = 0", f), "`lambda = 0` is not allowed");
    assert_one_error(
        check("lambda = 1001", f),
        "`lambda = 1001` is above the supported maximum",
    );
    assert_one_error(
        check("strength = 9", f),
        "`strength = 9` is above the supported maximum",
    );
    assert_one_error(
        check("seed = 18446744073709551616", f),
        "`seed = 18446744073709551616` does not fit",
    );
    assert_one_error(check("strength", f), "`strength` needs a value");
    assert_one_error(check("strength(2)", f), "`strength` takes a value after `=`");
    assert_one_error(
        check("exclude = 1", f),
        "`exclude` takes a condition in parentheses",
    );
    assert!(check("seed = 18446744073709551615", f).is_ok());
}

#[test]
fn bad_parameters() {
    assert_one_error(
        check("", "fn f() {}"),
        "a `#[cover]` function needs at least one parameter",
    );
    assert_one_error(check("", "fn f(a: u8) {}"), "parameter `a` has no `#[levels(…)]`");
    assert_one_error(
        check("", "fn f(#[levels()] a: u8) {}"),
        "`#[levels()]` of `a` is empty",
    );
    assert_one_error(
        check("", "fn f(#[levels] a: u8) {}"),
        "`#[levels]` needs a list of levels",
    );
    assert_one_error(
        check("", "fn f(#[levels(1, 2, 1)] a: u8) {}"),
        "level `1` of `a` is listed twice",
    );
    assert_one_error(
        check("", "fn f(#[levels(1)] #[levels(2)] a: u8) {}"),
        "`#[levels]` is given twice on `a`",
    );
    assert_one_error(
        check("", "fn f(#[levels((1, 2))] (a, b): (u8, u8)) {}"),
        "the parameter pattern `(a, b)` is not supported",
    );
    assert_one_error(
        check("", "fn f(&self, #[levels(1)] a: u8) {}"),
        "a `#[cover]` function cannot take `self`",
    );
    assert_one_error(
        check("", "fn f<T>(#[levels(1)] a: u8) {}"),
        "a `#[cover]` function cannot be generic",
    );
    assert_one_error(
        check("", "fn f(#[levels(1 2)] a: u8) {}"),
        "cannot read the levels of `a`",
    );
    let many = (0..256).map(|i| i.to_string()).collect::<Vec<_>>().join(", ");
    assert_one_error(
        check("", &format!("fn f(#[levels({many})] a: u16) {{}}")),
        "`a` has 256 levels, at most 255",
    );
    // `mut` bindings are plain names
    assert!(check("", "fn f(#[levels(1)] mut a: u8) {}").is_ok());
}

#[test]
fn bad_signatures_and_attributes() {
    let p = "(#[levels(1, 2)] a: u8)";
    assert_one_error(
        check("", &format!("fn f{p} -> i32 {{ 0 }}")),
        "a `#[cover]` function returns `()` or",
    );
    assert_one_error(
        check("", &format!("unsafe fn f{p} {{}}")),
        "a `#[cover]` function cannot be `unsafe`",
    );
    assert_one_error(
        check("", &format!("#[test] fn f{p} {{}}")),
        "`#[test]` does not belong",
    );
    assert_one_error(
        check("", &format!("#[cover] fn f{p} {{}}")),
        "`#[cover]` is given twice",
    );
    assert_one_error(
        check("", &format!("async fn f{p} {{}}")),
        "an `async fn` needs a runtime's test attribute",
    );
    assert_one_error(
        check(
            "",
            &format!("#[should_panic] fn f{p} -> Result<(), String> {{ Ok(()) }}"),
        ),
        "`#[should_panic]` needs the function to return `()`",
    );
    assert_one_error(
        check(
            "",
            &format!("#[tokio::test] async fn f{p} -> io::Result<()> {{ Ok(()) }}"),
        ),
        "an `async` `#[cover]` function must name its error type",
    );
    for ok in [
        format!("fn f{p} -> () {{}}"),
        format!("fn f{p} -> Result<(), String> {{ Ok(()) }}"),
        format!("fn f{p} -> std::io::Result<()> {{ Ok(()) }}"),
        format!("#[tokio::test] async fn f{p} {{}}"),
        format!("#[ignore] #[should_panic(expected = \"x\")] fn f{p} {{}}"),
    ] {
        assert!(check("", &ok).is_ok(), "{ok}: {:?}", check("", &ok));
    }
}

#[test]
fn errors_accumulate() {
    let errs = check(
        "strenght = 2, lambda = 0, seed = \"x\"",
        "fn f(#[levels(1, 1)] a: u8, b: u8, #[levels()] c: u8) {}",
    )
    .unwrap_err();
    assert_eq!(errs.len(), 6, "{errs:#?}");
    for e in &errs {
        let msg = e.lines().next().unwrap();
        assert!(!msg.starts_with(|c: char| c.is_uppercase()), "{msg}");
        assert!(!msg.ends_with('.'), "{msg}");
        assert!(e.contains("\nhint: "), "{e}");
    }
}

#[test]
fn excludes() {
    let f = "fn f(#[levels(1, 2, 3)] a: u8, #[levels(X::A, X::B)] b: X, #[levels(true, false)] c: bool) {}";
    let s = check("exclude(!(a == 1 || b != X :: B)), exclude((c == false))", f).unwrap();
    assert_eq!(
        s.spec.excludes,
        vec![Expr::is(0, 0).or(Expr::is(1, 1).not()).not(), Expr::is(2, 1)]
    );
    assert_eq!(s.excludes, ["!(a == 1 || b != X::B)", "(c == false)"]);
    // rows honour them
    let d = heddle_generator::generate(&s.spec, heddle_generator::Effort::Fast).unwrap();
    assert!(d.rows.iter().all(|r| !s.spec.excludes.iter().any(|e| e.eval(r))));

    assert_one_error(
        check("exclude(d == 1)", f),
        "unknown parameter `d` in `exclude(…)`",
    );
    assert_one_error(check("exclude(a == 4)", f), "`4` is not a level of `a`");
    assert_one_error(check("exclude(b == X::C)", f), "`X::C` is not a level of `b`");
    assert_one_error(check("exclude(a < 2)", f), "`<` is not supported in `exclude(…)`");
    assert_one_error(check("exclude(c)", f), "expected a comparison `name == level`");
    assert_one_error(
        check("exclude(1 == a)", f),
        "expected a parameter name on the left of `==`",
    );
    assert_one_error(check("exclude(a == )", f), "cannot read `exclude(a ==)`");
    let errs = check("exclude(d == 1 && a == 9)", f).unwrap_err();
    assert_eq!(errs.len(), 2, "{errs:#?}");
}

#[test]
fn excluding_every_row() {
    let f = "fn f(#[levels(1, 2)] a: u8, #[levels(true, false)] c: bool) {}";
    assert_one_error(
        check("exclude(a == 1 || a == 2)", f),
        "`exclude(a == 1 || a == 2)` rules out every row",
    );
    assert_one_error(
        check("exclude(a == 1), exclude(a == 2)", f),
        "`exclude(a == 2)` rules out every row the other excludes left",
    );
    assert!(check("exclude(a == 1), exclude(a == 2 && c == true)", f).is_ok());
}

#[test]
fn rows_from_the_engine_cover_every_pair() {
    // 2^3 at strength 2, λ = 1: 4 rows suffice (an orthogonal array OA(4; 2, 3, 2);
    // Hedayat, Sloane and Stufken 1999, table 12.1, from memory) and the independent
    // checker must accept them
    let s = check(
        "",
        "fn f(#[levels(1, 2)] a: u8, #[levels(1, 2)] b: u8, #[levels(1, 2)] c: u8) {}",
    )
    .unwrap();
    let rows = heddle_syntax::rows_for(&s, None, None).unwrap();
    assert!(!rows.pinned);
    assert!(heddle_generator::verify(&s.spec, &rows.rows).is_ok());
    assert_eq!(rows.rows.len(), 4);
}

#[test]
fn required_rows_by_level_labels() {
    use heddle_generator::UNSET;
    let f = "fn f(#[levels(1, 2, 3)] a: u8, #[levels(X::A, X::B)] b: X, #[levels(true, false)] c: bool) {}";
    let s = check(
        "require(b = X :: B, a = 3), require(c = false, a = 1, b = X::A)",
        f,
    )
    .unwrap();
    assert_eq!(s.spec.required, vec![vec![2, 1, UNSET], vec![0, 0, 1]]);
    assert_eq!(s.required, ["b = X::B, a = 3", "c = false, a = 1, b = X::A"]);
    // the design starts with them, the open cell filled, and still covers every pair
    let rows = heddle_syntax::rows_for(&s, None, None).unwrap();
    assert_eq!(&rows.rows[0][..2], &[2, 1]);
    assert_eq!(rows.rows[1], vec![0, 0, 1]);
    assert!(heddle_generator::verify(&s.spec, &rows.rows).is_ok());
    // a required row is part of the spec: another one is another fingerprint
    let other = check("require(b = X::B, a = 2)", f).unwrap();
    assert_ne!(other.fingerprint, s.fingerprint);
    assert_ne!(check("", f).unwrap().fingerprint, other.fingerprint);
}

#[test]
fn required_rows_count_toward_coverage() {
    // 2^3 at strength 2 needs 4 rows, and both the even-weight rows {000, 011, 101, 110}
    // and their complements {111, 100, 010, 001} are such arrays (OA(4; 2, 3, 2), the
    // parity-check construction; Hedayat, Sloane and Stufken 1999, ch. 4, from memory):
    // a design around a required row that counts toward coverage needs no fifth row
    let f = "fn f(#[levels(0, 1)] a: u8, #[levels(0, 1)] b: u8, #[levels(0, 1)] c: u8) {}";
    for req in ["require(a = 1, b = 1, c = 1)", "require(a = 0, b = 1, c = 0)"] {
        let s = check(req, f).unwrap();
        let rows = heddle_syntax::rows_for(&s, None, None).unwrap();
        assert_eq!(rows.rows.len(), 4, "{req}: {:?}", rows.rows);
        assert_eq!(rows.rows[0], s.spec.required[0]);
        assert!(heddle_generator::verify(&s.spec, &rows.rows).is_ok());
    }
}

#[test]
fn bad_required_rows() {
    let f = "fn f(#[levels(1, 2, 3)] a: u8, #[levels(X::A, X::B)] b: X, #[levels(true, false)] c: bool) {}";
    assert_one_error(
        check("require(d = 1)", f),
        "unknown parameter `d` in `require(…)`",
    );
    assert_one_error(check("require(a = 4)", f), "`4` is not a level of `a`");
    assert_one_error(
        check("require(a = 1, a = 2)", f),
        "`a` is given twice in one `require(…)`",
    );
    assert_one_error(
        check("require(a == 1)", f),
        "expected `name = level` in `require(…)`",
    );
    assert_one_error(
        check("require(1 = a)", f),
        "expected a parameter name on the left of `=`",
    );
    assert_one_error(check("require()", f), "`require()` names no parameter");
    assert_one_error(
        check("require", f),
        "`require` takes parameters and their levels in parentheses",
    );
    assert_one_error(
        check("require = 1", f),
        "`require` takes parameters and their levels in parentheses",
    );
    assert_one_error(
        check("require(a = 1 b = 2)", f),
        "cannot read `require(a = 1 b = 2)`",
    );
    assert_one_error(
        check("exclude(a == 1 && c == true), require(c = true, a = 1)", f),
        "`require(c = true, a = 1)` is ruled out by `exclude(a == 1 && c == true)`",
    );
    assert_one_error(
        check(
            "exclude(a == 2 && c == true), exclude(a == 2 && c == false), require(a = 2)",
            f,
        ),
        "`require(a = 2)` has no allowed row",
    );
    // a partial row some fill of which is allowed is fine
    assert!(check("exclude(a == 2 && c == true), require(a = 2)", f).is_ok());
    // every mistake of every require at once
    let errs = check("require(d = 1, a = 9), require(b = X::C)", f).unwrap_err();
    assert_eq!(errs.len(), 3, "{errs:#?}");
}

#[test]
fn budgets_and_their_mistakes() {
    use heddle_syntax::budget::Budget;
    let f = "fn f(#[levels(1, 2)] a: u8, #[levels(1, 2)] b: u8) {}";
    assert_eq!(check("budget(3)", f).unwrap().budget, Some(Budget::Rows(3)));
    assert_eq!(check("budget(25%)", f).unwrap().budget, Some(Budget::Percent(25)));
    assert_eq!(check("", f).unwrap().budget, None);
    // a budget picks rows of the design, it is not part of the spec
    assert_eq!(
        check("budget(3)", f).unwrap().fingerprint,
        check("", f).unwrap().fingerprint
    );
    assert_one_error(
        check("budget = 3", f),
        "`budget` takes a row count or a share in parentheses",
    );
    assert_one_error(
        check("budget", f),
        "`budget` takes a row count or a share in parentheses",
    );
    assert_one_error(
        check("budget(0)", f),
        "`budget(0)`: a budget of `0` rows runs nothing",
    );
    assert_one_error(
        check("budget(0%)", f),
        "`budget(0%)`: `0%` is not a share between 1% and 100%",
    );
    assert_one_error(
        check("budget(101%)", f),
        "`budget(101%)`: `101%` is not a share between",
    );
    assert_one_error(
        check("budget(1.5)", f),
        "`budget(1.5)`: `1.5` is not a whole number",
    );
    assert_one_error(
        check("budget(3u8)", f),
        "`budget(3u8)`: `3u8` is not a whole number",
    );
    assert_one_error(
        check("budget(all)", f),
        "`budget(all)` is not a row count or a share",
    );
    assert_one_error(check("budget()", f), "`budget()` is not a row count or a share");
    assert_one_error(check("budget(3), budget(4)", f), "duplicate key `budget`");
}

#[test]
fn focus_sets_by_name() {
    use heddle_generator::Focus;
    let f = "fn f(#[levels(1, 2, 3)] a: u8, #[levels(X::A, X::B)] b: X, #[levels(true, false)] c: bool, #[levels(1, 2)] d: u8) {}";
    let s = check("focus(c, a, b), focus(a, b, c, d, strength = 3, lambda = 2)", f).unwrap();
    assert_eq!(
        s.spec.focus,
        vec![
            Focus::new(vec![2, 0, 1], 3),
            Focus::new(vec![0, 1, 2, 3], 3).lambda(2)
        ]
    );
    // λ defaults to the function's, the strength to one above it
    let s = check("strength = 1, lambda = 2, focus(a, b)", f).unwrap();
    assert_eq!(s.spec.focus, vec![Focus::new(vec![0, 1], 2).lambda(2)]);
    // `show` writes each one back as the attribute would, defaults left out
    let texts: Vec<String> = check("focus(c, a, b), focus(a, b, c, d, strength = 3, lambda = 2)", f)
        .unwrap()
        .spec
        .focus
        .iter()
        .map(|x| heddle_syntax::focus::text(x, &s.spec.factors, 2, 1))
        .collect();
    assert_eq!(texts, ["focus(c, a, b)", "focus(a, b, c, d, lambda = 2)"]);
    // the rows cover every triple of the focus set besides every pair of all
    let s = check("focus(c, a, b)", f).unwrap();
    let rows = heddle_syntax::rows_for(&s, None, None).unwrap();
    assert!(rows.rows.len() >= 12, "3·2·2 triples need 12 rows");
    heddle_generator::verify(&s.spec, &rows.rows).unwrap();
    // a focus set is part of the spec; the order of its names is not
    assert_ne!(check("", f).unwrap().fingerprint, s.fingerprint);
    assert_eq!(check("focus(a, b, c)", f).unwrap().fingerprint, s.fingerprint);
}

#[test]
fn bad_focus_sets() {
    let f = "fn f(#[levels(1, 2, 3)] a: u8, #[levels(X::A, X::B)] b: X, #[levels(true, false)] c: bool) {}";
    assert_one_error(check("focus(a, z)", f), "unknown parameter `z` in `focus(…)`");
    assert_one_error(check("focus(a, b, a)", f), "`a` is named twice in one `focus(…)`");
    assert_one_error(check("focus()", f), "`focus()` names no parameter");
    assert_one_error(check("focus", f), "`focus` takes parameter names in parentheses");
    assert_one_error(
        check("focus(a, b)", f),
        "`focus(a, b)` names 2 parameters, fewer than its strength 3",
    );
    assert_one_error(
        check("focus(a, b, c, strength = 2)", f),
        "`strength = 2` in `focus(…)` is not above the strength 2",
    );
    assert_one_error(
        check("focus(a, b, c, strength = 4)", f),
        "`strength = 4` in `focus(…)` is above its 3 parameters",
    );
    assert_one_error(
        check("focus(a, b, c, weight = 4)", f),
        "unknown key `weight` in `focus(…)`",
    );
    assert_one_error(
        check("focus(a, b, c, lambda = 0)", f),
        "`lambda = 0` is not allowed",
    );
}
