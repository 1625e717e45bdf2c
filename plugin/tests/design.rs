//! `cargo heddle design` end to end: the built binary, its stdout, stderr and exit code.

use std::process::{Command, Output};

mod common;

use common::csv_rows;
use heddle_generator::{Expr, Factor, Spec, verify};

fn design(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
        .arg("heddle")
        .arg("design")
        .args(args)
        .output()
        .expect("the binary runs")
}

fn stdout(o: &Output) -> String {
    String::from_utf8(o.stdout.clone()).expect("utf-8 stdout")
}

fn stderr(o: &Output) -> String {
    String::from_utf8(o.stderr.clone()).expect("utf-8 stderr")
}

#[test]
fn csv_is_a_valid_covering_array() {
    let o = design(&[
        "3^4",
        "os=linux,mac",
        "--lambda",
        "2",
        "--exclude",
        "f1 == 0 && os == mac",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let mut factors: Vec<Factor> = (1..=4).map(|i| Factor::numbered(format!("f{i}"), 3)).collect();
    factors.push(Factor::new("os", ["linux", "mac"]));
    let rows = csv_rows(&stdout(&o), &factors);
    let ex = Expr::parse("f1 == 0 && os == mac", &factors).unwrap();
    let spec = Spec::new(factors).lambda(2).exclude(ex);
    let cov = verify(&spec, &rows).expect("the printed rows cover every possible pair twice");
    assert_eq!(cov.impossible, 1, "only (f1=0, os=mac) is impossible");
    // the summary goes to stderr, and only one line of it
    let err = stderr(&o);
    assert!(err.contains(&format!("{} rows", rows.len())), "{err}");
    assert!(err.contains("lower bound 18"), "{err}");
    assert_eq!(err.lines().count(), 1);
}

#[test]
fn json_has_factors_parameters_rows_statistics() {
    let o = design(&["2^3", "--format", "json", "--seed", "9"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).expect("valid JSON");
    assert_eq!(v["format"], 2);
    assert_eq!(v["factors"].as_array().unwrap().len(), 3);
    assert_eq!(v["parameters"]["seed"], "9", "seeds are decimal strings");
    assert_eq!(v["parameters"]["strength"], 2);
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(v["statistics"]["rows"], rows.len());
    // Kleitman & Spencer 1973 / Katona 1973: CAN(2,3,2) = 4
    assert_eq!(rows.len(), 4);
    assert_eq!(v["statistics"]["lower_bound"], 4);
    let curve = v["statistics"]["coverage_curve"].as_array().unwrap();
    assert_eq!(curve.len(), rows.len());
    assert_eq!(curve.last().unwrap().as_f64(), Some(1.0));
}

#[test]
fn required_rows_come_first_and_count_toward_coverage() {
    // 2^3 at strength 2 needs 4 rows, and the odd-weight rows {111, 100, 010, 001} are
    // such an array (the complement of the parity-check OA(4; 2, 3, 2); Hedayat, Sloane
    // and Stufken 1999, ch. 4, from memory): with `111` required no fifth row is needed
    let o = design(&["2^3", "--require", "f1=1,f2=1,f3=1", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).expect("valid JSON");
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 4, "{rows:?}");
    assert_eq!(rows[0], serde_json::json!(["1", "1", "1"]));
    assert_eq!(v["parameters"]["required"], serde_json::json!([["1", "1", "1"]]));

    // a factor left out is filled by the engine; the rows still cover every pair
    let o = design(&[
        "3^3",
        "os=linux,mac",
        "--require",
        "os=mac,f2=2",
        "--exclude",
        "f1 == 0 && os == mac",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let mut factors: Vec<Factor> = (1..=3).map(|i| Factor::numbered(format!("f{i}"), 3)).collect();
    factors.push(Factor::new("os", ["linux", "mac"]));
    let rows = csv_rows(&stdout(&o), &factors);
    assert_eq!((rows[0][1], rows[0][3]), (2, 1), "{rows:?}");
    assert_ne!(rows[0][0], 0, "the exclude holds in the filled-in cell");
    let ex = Expr::parse("f1 == 0 && os == mac", &factors).unwrap();
    let spec = Spec::new(factors).exclude(ex);
    verify(&spec, &rows).expect("the rows cover every possible pair");
}

#[test]
fn a_focus_set_is_covered_at_its_own_strength() {
    // 3^6 at strength 2 with every triple of f1, f2, f3: those three need all 27
    // combinations (the counting bound of a strength-3 array on three ternary factors,
    // e.g. Colbourn 2004, "Combinatorial aspects of covering arrays"); the checker counts
    // the focus set at strength 3 (variable strength, Cohen, Colbourn, Collofello,
    // Gibbons and Mugridge 2003)
    let o = design(&["3^6", "--focus", "f1, f2, f3", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).expect("valid JSON");
    assert_eq!(
        v["parameters"]["focus"],
        serde_json::json!([{ "factors": ["f1", "f2", "f3"], "strength": 3, "lambda": 1 }])
    );
    assert_eq!(v["statistics"]["lower_bound"], 27);
    let o = design(&["3^6", "--focus", "f3,f1,f2,lambda=2"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let factors: Vec<Factor> = (1..=6).map(|i| Factor::numbered(format!("f{i}"), 3)).collect();
    let rows = csv_rows(&stdout(&o), &factors);
    let spec = Spec::new(factors).focus(heddle_generator::Focus::new(vec![2, 0, 1], 3).lambda(2));
    verify(&spec, &rows).expect("every triple of f1, f2, f3 twice, every pair once");
    assert!(stderr(&o).contains("lower bound 54"), "{}", stderr(&o));
    // the plain design at strength 2 is far smaller and misses triples
    let plain = csv_rows(&stdout(&design(&["3^6"])), &spec.factors);
    assert!(plain.len() < 27 && verify(&spec, &plain).is_err());
}

#[test]
fn same_seed_gives_same_rows() {
    let a = design(&["3^6", "--seed", "5"]);
    let b = design(&["3^6", "--seed", "5"]);
    assert_eq!(stdout(&a), stdout(&b));
}

#[test]
fn bad_input_exits_with_2_and_says_why() {
    let cases: &[(&[&str], &str)] = &[
        (&["3^x"], "malformed SPEC `3^x`"),
        (&["3"], "malformed SPEC `3`"),
        (
            &["3^2", "--strength", "3"],
            "strength 3 is larger than the number of factors (2)",
        ),
        // the hint names no attribute syntax: the command line has flags
        (
            &["3^2", "--strength", "0"],
            "strength must be at least 1\n  hint: use a strength of 1 or more",
        ),
        (
            &["3^2", "--lambda", "0"],
            "lambda must be at least 1\n  hint: use a lambda of 1 or more",
        ),
        (&["3^2", "--exclude", "f9 == 0"], "unknown factor `f9`"),
        (
            &["3^2", "--exclude", "f1 == 3"],
            "`3` is not a level of factor `f1`",
        ),
        (
            &["2^2", "--exclude", "f1 == 0", "--exclude", "f1 == 1"],
            "the excludes rule out every row",
        ),
        (
            &["2^2", "--budget", "10"],
            "`--budget` applies to `--effort tight` only",
        ),
        (&["2^2", "--format", "xml"], "invalid value 'xml'"),
        (
            &["2^2", "--require", "f3=0"],
            "`--require f3=0`: unknown factor `f3`",
        ),
        (&["2^2", "--require", "f1=2"], "`2` is not a level of `f1`"),
        (
            &["2^2", "--exclude", "f1 == 1 && f2 == 0", "--require", "f2=0,f1=1"],
            "`--require f2=0,f1=1` is ruled out by `--exclude f1 == 1 && f2 == 0`",
        ),
        (
            &[
                "2^2",
                "--exclude",
                "f1 == 1 && f2 == 0",
                "--exclude",
                "f1 == 1 && f2 == 1",
                "--require",
                "f1=1",
            ],
            "`--require f1=1` has no allowed row",
        ),
        (
            &["3^4", "--focus", "f1,f9"],
            "`--focus f1,f9`: unknown factor `f9`",
        ),
        (
            &["3^4", "--focus", "f1,f2,f1"],
            "`--focus f1,f2,f1`: `f1` is named twice",
        ),
        (
            &["3^4", "--focus", "f1,f2"],
            "`--focus f1,f2`: focus set #1 has strength 3 over only 2 factors",
        ),
        (
            &["3^4", "--focus", "f1,f2,f3,strength=2"],
            "not above the strength 2 of all factors",
        ),
        (&["3^4", "--focus", "f1,f2,f3,depth=3"], "unknown key `depth`"),
        (
            &["3^4", "--focus", "f1,f2,f3,lambda=x"],
            "`x` is not a whole number",
        ),
        (
            &["3^4", "--focus", "f1,f2,f3,strength=99"],
            "strength 99 is above",
        ),
        (&["a=x,x"], "lists level `x` twice"),
        (&["2^1", "f1=a,b"], "factor `f1` is declared twice"),
        (&["+3^2"], "malformed SPEC `+3^2`"),
        (&["a==b"], "malformed SPEC `a==b`: level `=b` contains `=`"),
        (
            &["2^2", "--effort", "tight", "--budget", "18446744073709551615"],
            "`--budget 18446744073709551615` is more moves than the search takes",
        ),
    ];
    for (args, want) in cases {
        let o = design(args);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", stderr(&o));
        assert!(stderr(&o).contains(want), "{args:?}: {}", stderr(&o));
        assert!(stdout(&o).is_empty(), "{args:?} printed to stdout");
    }
}

#[test]
fn limits_are_refused_with_the_count() {
    let o = design(&["255^300", "--strength", "4"]);
    assert_eq!(o.status.code(), Some(2));
    let err = stderr(&o);
    assert!(
        err.contains(&format!(
            "t-way interactions, more than the limit of {}",
            heddle_generator::MAX_INTERACTIONS
        )),
        "{err}"
    );
    assert!(err.contains("hint: lower the strength"), "{err}");
}

#[test]
fn deep_excludes_are_refused_not_a_crash() {
    let parens = format!("{}f1 == 0{}", "(".repeat(10_000), ")".repeat(10_000));
    let nots = format!("{}f1 == 0", "!".repeat(20_000));
    for exclude in [parens, nots] {
        let o = design(&["3^3", "--exclude", &exclude]);
        // a stack overflow ends the process by a signal, without an exit code
        assert_eq!(
            o.status.code(),
            Some(2),
            "{}",
            &stderr(&o)[..200.min(stderr(&o).len())]
        );
        let err = stderr(&o);
        assert!(
            err.contains("the formula nests deeper than 1024 levels"),
            "{err:.300}"
        );
        assert!(err.contains("`--exclude` column 1024"), "{err:.300}");
    }
}

#[test]
fn a_label_with_both_kinds_of_quote_can_be_excluded() {
    let o = design(&["q=plain,it's\"x\"", "2^2", "--exclude", "q == 'it''s\"x\"'"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let factors = vec![
        Factor::new("q", ["plain", "it's\"x\""]),
        Factor::numbered("f2", 2),
        Factor::numbered("f3", 2),
    ];
    let rows = csv_rows(&stdout(&o), &factors);
    assert!(
        rows.iter().all(|r| r[0] == 0),
        "the quoted level is excluded: {rows:?}"
    );
}

#[test]
fn the_lower_bound_counts_only_what_the_excludes_leave_possible() {
    // f1 = 2 never happens: 6 of the 9 pairs of (f1, f2) remain, so 6 rows suffice and
    // are needed (each remaining pair once); the plain counting bound would say 9
    let o = design(&["3^2", "--exclude", "f1 == 2", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).expect("valid JSON");
    assert_eq!(v["statistics"]["rows"], 6);
    assert_eq!(v["statistics"]["lower_bound"], 6);
    let err = stderr(&o);
    assert!(
        err.contains("lower bound 6 for the 6 interactions the excludes leave possible"),
        "{err}"
    );
}

#[test]
fn an_exclude_that_can_never_hold_is_warned_about() {
    let o = design(&["2^3", "--exclude", "f1 == 0 && f1 == 1", "--exclude", "f2 == 0"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains("warning: `--exclude 'f1 == 0 && f1 == 1'` can never hold, so it excludes nothing"),
        "{err}"
    );
    assert!(!err.contains("`--exclude 'f2 == 0'` can never hold"), "{err}");
    assert_eq!(err.matches("warning:").count(), 1, "{err}");
}
