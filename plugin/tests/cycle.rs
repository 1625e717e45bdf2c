//! The whole loop on a real temporary crate, through the built `cargo-heddle` binary:
//! `test` with a planted 2-way fault (suspects, JSON, JUnit), then `pin`, `check`, a spec
//! change that `check` catches, `pin` again keeping the old rows, and a rebuild that
//! runs the pinned rows. One crate, built incrementally (heddle's end-to-end harness:
//! shared target directory, serialised builds).

mod common;

use common::csv_rows;
use heddle_e2e::scratch::{CrateDef, Run, Scratch};
use heddle_generator::{Factor, Spec, verify};

const SUITE: &str = r#"//! A cart with a planted defect: `currency = "JPY"` with `rounding = Rounding::Half`.

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Rounding { Down, Half, Up }

fn total(cents: u64, currency: &str, rounding: Rounding) -> u64 {
    // the defect: yen have no minor unit, and half-rounding forgets it
    if currency == "JPY" && rounding == Rounding::Half { cents + 1 } else { cents }
}

#[heddle_test::cover(strength = 2, lambda = 2, seed = 5)]
fn cart_total(
    #[levels("EUR", "USD", "JPY")] currency: &str,
    #[levels(Rounding::Down, Rounding::Half, Rounding::Up)] rounding: Rounding,
    #[levels(1, 10)] items: u64,
    #[levels(true, false)] gift: bool,
) {
    let _ = gift;
    assert_eq!(total(items * 100, currency, rounding), items * 100, "total is off");
}
"#;

fn heddle(krate: &Scratch, args: &[&str]) -> Run {
    krate.heddle(env!("CARGO_BIN_EXE_cargo-heddle"), args)
}

fn planted(labels: &[&str]) -> bool {
    labels[0] == "\"JPY\"" && labels[1] == "Rounding::Half"
}

#[test]
fn test_report_pin_check_cycle() {
    let krate = Scratch::create(&CrateDef {
        name: "cycle_cart",
        files: &[("tests/cart.rs", SUITE)],
        ..CrateDef::default()
    })
    .expect("the temporary crate resolves");

    // 1. `test` runs the suite under one run id and reports on it
    let run = heddle(&krate, &["test", "--quiet", "--format", "json"]);
    assert_eq!(
        run.code,
        Some(101),
        "cargo test's status comes back: {}",
        run.stderr
    );
    let v: serde_json::Value =
        serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout));
    let suite = &v["suites"][0];
    assert_eq!(suite["test"], "cart_total");
    let top = &suite["suspects"][0];
    assert_eq!(
        top["levels"],
        serde_json::json!({"currency": "\"JPY\"", "rounding": "Rounding::Half"})
    );
    assert_eq!(top["always"], true);
    // the failing rows are exactly those holding the pair
    let failing: Vec<u64> = suite["failing_rows"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["row"].as_u64().unwrap())
        .collect();
    let rows = suite["rows"].as_u64().unwrap() as usize;
    let report = heddle(&krate, &["report", "--format", "junit"]);
    assert_eq!(report.code, Some(0), "{}", report.stderr);
    let junit = quick_junit::Report::deserialize_from_str(&report.stdout).expect("JUnit parses");
    let cases = &junit.test_suites[0].test_cases;
    assert_eq!(cases.len(), rows, "one testcase per row");
    for (i, case) in cases.iter().enumerate() {
        // the testcase's output lists `name = label` per parameter
        let out = case
            .system_out
            .as_ref()
            .map(|s| s.to_string())
            .unwrap_or_default();
        let labels: Vec<&str> = out
            .lines()
            .map(|l| l.split_once(" = ").map_or(l, |(_, v)| v))
            .collect();
        let failed = !matches!(case.status, quick_junit::TestCaseStatus::Success { .. });
        assert_eq!(failed, planted(&labels), "row {i}: {labels:?}");
        assert_eq!(failed, failing.contains(&(i as u64)));
    }

    // 1b. the same under nextest (one process per row, one run id for all of them)
    let nextest = std::process::Command::new(heddle_e2e::scratch::cargo_program())
        .args(["nextest", "--version"])
        .output();
    if nextest.is_ok_and(|o| o.status.success()) {
        let run = heddle(&krate, &["test", "--nextest", "--quiet", "--format", "json"]);
        assert_ne!(
            run.code,
            Some(0),
            "the planted fault fails the run: {}",
            run.stderr
        );
        let v: serde_json::Value =
            serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout));
        assert_eq!(
            v["runs"].as_array().map(Vec::len),
            Some(1),
            "one run id across processes"
        );
        assert_eq!(v["suites"][0]["executions"].as_u64(), Some(rows as u64));
        assert_eq!(
            v["suites"][0]["suspects"][0]["levels"],
            serde_json::json!({"currency": "\"JPY\"", "rounding": "Rounding::Half"})
        );
    } else {
        heddle_e2e::steps::skip(
            "`cargo heddle test --nextest`",
            "`cargo nextest --version` failed: cargo-nextest is not installed",
        );
    }

    // 2. `pin` writes the pins file, `check` passes, the build now uses the pinned rows
    let pin = heddle(&krate, &["pin"]);
    assert_eq!(pin.code, Some(0), "{}", pin.stderr);
    assert!(pin.stdout.contains("cart_total: new"), "{}", pin.stdout);
    let check = heddle(&krate, &["check"]);
    assert_eq!(check.code, Some(0), "{}", check.stderr);

    // 3. a spec change (a fourth currency) is caught by `check`…
    krate.write(
        "tests/cart.rs",
        &SUITE.replace(r#""EUR", "USD", "JPY""#, r#""EUR", "USD", "JPY", "CHF""#),
    );
    let stale = heddle(&krate, &["check"]);
    assert_eq!(stale.code, Some(1), "{}", stale.stderr);
    assert!(
        stale.stderr.contains("the pin of `cart_total` is stale"),
        "{}",
        stale.stderr
    );
    // …and the build refuses the stale pin
    let build = heddle(&krate, &["test"]);
    assert_ne!(build.code, Some(0));
    assert!(
        build.stderr.contains("cargo heddle pin"),
        "the macro names the fix: {}",
        build.stderr
    );
    // 4. `pin` again keeps every old row (a level was only added) and adds the missing ones
    let old = krate.read("heddle-pins.toml");
    let again = heddle(&krate, &["pin"]);
    assert_eq!(again.code, Some(0), "{}", again.stderr);
    assert!(
        again.stdout.contains(&format!("kept {rows}, added")),
        "{}",
        again.stdout
    );
    assert!(heddle(&krate, &["check"]).code == Some(0));
    let new = krate.read("heddle-pins.toml");
    assert_ne!(old, new);
    // the new rows verify for the new spec (independent checker)
    let csv = heddle(&krate, &["show", "cart_total", "--format", "csv"]);
    assert_eq!(csv.code, Some(0), "{}", csv.stderr);
    let factors = vec![
        Factor::new("currency", ["\"EUR\"", "\"USD\"", "\"JPY\"", "\"CHF\""]),
        Factor::new("rounding", ["Rounding::Down", "Rounding::Half", "Rounding::Up"]),
        Factor::new("items", ["1", "10"]),
        Factor::new("gift", ["true", "false"]),
    ];
    let shown = csv_rows(&csv.stdout, &factors);
    verify(&Spec::new(factors).lambda(2), &shown).expect("the re-pinned rows cover the new spec twice");
    // 5. the rebuilt suite runs exactly the pinned rows
    let rerun = heddle(&krate, &["test", "--quiet", "--format", "json"]);
    let v: serde_json::Value =
        serde_json::from_str(&rerun.stdout).unwrap_or_else(|e| panic!("{e}: {}", rerun.stdout));
    assert_eq!(v["suites"][0]["rows"].as_u64(), Some(shown.len() as u64));
}
