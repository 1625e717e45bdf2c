//! A focus set (variable strength) end to end through the built `cargo-heddle` binary on
//! a real temporary crate (heddle's end-to-end harness): `show` prints the focus set, the
//! rows that ran show every triple of the focused parameters, and the report tallies each
//! of those triples at strength 3 besides the pairs of all parameters; then the rows are
//! pinned, a second focus set makes the pin stale, and pinning again keeps the old rows.
//! A second crate plants a defect of three focused parameters: the budget's reach, the
//! HTML page and the follow-up rows all count the focus set at its own strength.

use std::collections::BTreeSet;

mod common;

use heddle_e2e::scratch::{CrateDef, Scratch};
use heddle_generator::{Factor, Focus, Spec, verify};

/// Five knobs of three levels at strength 2, with every triple of codec, unit and
/// workers asked for: 27 combinations that the 9 to 15 rows of a pairwise design cannot
/// hold (a strength-3 array on three ternary factors needs all 3³ = 27, its counting
/// bound; variable strength as in Cohen, Colbourn, Collofello, Gibbons and Mugridge 2003).
const SUITE: &str = r#"//! The sensor hub's frame encoder; every row passes.

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Codec { Plain, Rle, Delta }

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Unit { Celsius, Fahrenheit, Kelvin }

fn encode(codec: Codec, unit: Unit, workers: usize, batch: usize) -> usize {
    let _ = (codec, unit, workers);
    batch
}

#[heddle_test::cover(seed = 3, focus(codec, unit, workers))]
fn frame(
    #[levels(Codec::Plain, Codec::Rle, Codec::Delta)] codec: Codec,
    #[levels(Unit::Celsius, Unit::Fahrenheit, Unit::Kelvin)] unit: Unit,
    #[levels(1, 2, 4)] workers: usize,
    #[levels(1, 8, 64)] batch: usize,
    #[levels(false, true)] checksum: bool,
) {
    let _ = checksum;
    assert_eq!(encode(codec, unit, workers, batch), batch);
}
"#;

#[test]
fn a_focus_set_runs_every_triple_and_the_report_tallies_them() {
    let krate = Scratch::create(&CrateDef {
        name: "focus_hub",
        files: &[("tests/hub.rs", SUITE)],
        ..CrateDef::default()
    })
    .expect("the temporary crate resolves");
    let bin = env!("CARGO_BIN_EXE_cargo-heddle");

    let show = krate.heddle(bin, &["show", "frame"]);
    assert_eq!(show.code, Some(0), "{}", show.stderr);
    assert!(
        show.stdout.contains("focus(codec, unit, workers)\n"),
        "{}",
        show.stdout
    );
    // the focus set's own counting bound, 3·3·3, is the larger one
    assert!(show.stdout.contains("lower bound 27,"), "{}", show.stdout);
    assert!(
        show.stdout.contains("focus sets at their own strength"),
        "{}",
        show.stdout
    );

    let run = krate.heddle(bin, &["test", "--quiet", "--format", "json"]);
    assert_eq!(run.code, Some(0), "{}\n{}", run.stdout, run.stderr);
    let v: serde_json::Value =
        serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}\n{}", run.stdout, run.stderr));
    let suite = &v["suites"][0];
    let rows = suite["rows"].as_u64().unwrap();
    assert!(rows >= 27, "{rows} rows cannot hold 27 triples");
    assert_eq!(suite["passed"].as_u64(), Some(rows));

    // every triple of the focused parameters ran, each in at least one row
    let focus = suite["focus"].as_array().expect("focus tallies in the report");
    let mut triples = BTreeSet::new();
    for f in focus {
        let levels = f["levels"].as_object().unwrap();
        let names: Vec<&str> = levels.keys().map(String::as_str).collect();
        assert_eq!(names.len(), 3, "{f}");
        assert!(
            names.iter().all(|n| ["codec", "unit", "workers"].contains(n)),
            "{f}"
        );
        assert!(
            f["rows"].as_u64() >= Some(1) && f["runs"].as_u64() >= Some(1),
            "{f}"
        );
        assert_eq!(f["lambda"], 1);
        triples.insert(
            levels
                .values()
                .map(|l| l.as_str().unwrap().to_string())
                .collect::<Vec<_>>(),
        );
    }
    assert_eq!(triples.len(), 27, "{triples:?}");
    let coverage = &suite["coverage"];
    assert_eq!(coverage["focus_interactions"], 27, "{coverage}");
    assert_eq!(coverage["focus_at_lambda"], 27, "{coverage}");
    assert_eq!(coverage["complete"], true, "{coverage}");

    // the terminal report names the focus set and its tally
    let report = krate.heddle(bin, &["report"]);
    assert_eq!(report.code, Some(0), "{}", report.stderr);
    assert!(
        report
            .stdout
            .contains("focus (codec, unit, workers): strength 3, lambda 1"),
        "{}",
        report.stdout
    );
    assert!(
        report
            .stdout
            .contains("27 of the 27 focus interactions ran in at least their lambda rows"),
        "{}",
        report.stdout
    );

    // pinned rows: a second focus set makes them stale, pinning again keeps them all
    // (each is still needed by some pair or triple) and adds what the new set lacks
    let pin = krate.heddle(bin, &["pin"]);
    assert_eq!(pin.code, Some(0), "{}", pin.stderr);
    assert_eq!(krate.heddle(bin, &["check"]).code, Some(0));
    let second = "focus(codec, unit, workers), focus(unit, batch, checksum)";
    krate.write(
        "tests/hub.rs",
        &SUITE.replace("focus(codec, unit, workers)", second),
    );
    let stale = krate.heddle(bin, &["check"]);
    assert_eq!(stale.code, Some(1), "{}", stale.stderr);
    assert!(
        stale.stderr.contains("the pin of `frame` is stale"),
        "{}",
        stale.stderr
    );
    let again = krate.heddle(bin, &["pin"]);
    assert_eq!(again.code, Some(0), "{}", again.stderr);
    assert!(
        again.stdout.contains(&format!("kept {rows}, added")),
        "{}",
        again.stdout
    );
    let csv = krate.heddle(bin, &["show", "frame", "--format", "csv"]);
    assert_eq!(csv.code, Some(0), "{}", csv.stderr);
    let factors = vec![
        Factor::new("codec", ["Codec::Plain", "Codec::Rle", "Codec::Delta"]),
        Factor::new("unit", ["Unit::Celsius", "Unit::Fahrenheit", "Unit::Kelvin"]),
        Factor::new("workers", ["1", "2", "4"]),
        Factor::new("batch", ["1", "8", "64"]),
        Factor::new("checksum", ["false", "true"]),
    ];
    let pinned = common::csv_rows(&csv.stdout, &factors);
    let spec = Spec::new(factors)
        .focus(Focus::new(vec![0, 1, 2], 3))
        .focus(Focus::new(vec![1, 3, 4], 3));
    verify(&spec, &pinned).expect("the new pin covers both focus sets (independent checker)");
}

/// The same knobs with a planted defect of three of them — delta coding of Kelvin
/// readings with four workers — and a row budget of 9 rows in the attribute.
fn faulty() -> String {
    SUITE
        .replace(
            "let _ = (codec, unit, workers);\n    batch",
            "if codec == Codec::Delta && unit == Unit::Kelvin && workers == 4 { batch - 1 } else { batch }",
        )
        .replace(
            "focus(codec, unit, workers))",
            "focus(codec, unit, workers), budget(9))",
        )
}

#[test]
fn a_focus_set_is_reached_drawn_and_followed_up_at_its_own_strength() {
    let krate = Scratch::create(&CrateDef {
        name: "focus_defect",
        files: &[("tests/hub.rs", &faulty())],
        ..CrateDef::default()
    })
    .expect("the temporary crate resolves");
    let bin = env!("CARGO_BIN_EXE_cargo-heddle");
    let triple = "codec = Codec::Delta, unit = Unit::Kelvin, workers = 4";
    assert!(faulty().contains("batch - 1 }") && faulty().contains("budget(9)"));

    // the budget's reach names the focus set and counts its 27 triples (9 rows hold at
    // most 9 of them, one each)
    let show = krate.heddle(bin, &["show", "frame"]);
    assert_eq!(show.code, Some(0), "{}", show.stderr);
    let line = show
        .stdout
        .lines()
        .find(|l| l.starts_with("budget: 9 of "))
        .unwrap_or_else(|| panic!("{}", show.stdout));
    assert!(
        line.contains("; focus set `codec, unit, workers` at strength 3: ")
            && line.contains("% of 27 interactions covered"),
        "{line}"
    );
    let run = krate.heddle(bin, &["test", "--quiet", "--format", "json"]);
    let v: serde_json::Value =
        serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}\n{}", run.stdout, run.stderr));
    let reach = v["suites"][0]["budget"]["reach"].as_array().unwrap().clone();
    let focus = reach
        .iter()
        .find(|r| r["focus"].is_array())
        .unwrap_or_else(|| panic!("{reach:?}"));
    assert_eq!(focus["focus"], serde_json::json!(["codec", "unit", "workers"]));
    assert_eq!(
        (focus["strength"].as_u64(), focus["interactions"].as_u64()),
        (Some(3), Some(27))
    );
    let once = focus["once"].as_u64().unwrap();
    assert!((1..=9).contains(&once), "{focus}");

    // the whole design: the triple fails; the page draws it in its focus set
    let run = krate.heddle(bin, &["test", "--budget", "all", "--quiet"]);
    assert_eq!(run.code, Some(101), "{}\n{}", run.stdout, run.stderr);
    let html = krate.heddle(bin, &["report", "--format", "html", "--output", "report.html"]);
    assert_eq!(html.code, Some(0), "{}", html.stderr);
    let html = krate.read("report.html");
    assert!(
        html.contains("<code>codec, unit, workers</code> at strength 3, λ 1"),
        "{html}"
    );
    assert!(html.contains(&format!("<title>{triple}: fails always")), "{html}");

    // follow-up rows until they settle: the triple, an interaction of the focus set, is
    // what they single out, not one of its pairs
    let mut said = String::new();
    for _ in 0..4 {
        let probe = krate.heddle(bin, &["probe"]);
        assert_eq!(probe.code, Some(0), "{}", probe.stderr);
        said = probe.stdout;
        if said.contains("no follow-up rows needed") {
            break;
        }
        let run = krate.heddle(bin, &["test", "--budget", "all", "--quiet"]);
        assert_eq!(run.code, Some(101), "{}\n{}", run.stdout, run.stderr);
    }
    assert!(
        said.contains(&format!("no follow-up rows needed, the report names `{triple}`")),
        "{said}"
    );
    // and the report ranks it alone among the suspects that explain failures
    let report = krate.heddle(bin, &["report", "--format", "json"]);
    assert_eq!(report.code, Some(0), "{}", report.stderr);
    let v: serde_json::Value = serde_json::from_str(&report.stdout).unwrap();
    let named: Vec<&serde_json::Value> = v["suites"][0]["suspects"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|s| s["explains"].as_u64() > Some(0))
        .collect();
    assert_eq!(named.len(), 1, "{}", report.stdout);
    assert_eq!(
        named[0]["levels"],
        serde_json::json!({"codec": "Codec::Delta", "unit": "Unit::Kelvin", "workers": "4"})
    );
    assert_eq!(named[0]["verdict"], "always");
}
