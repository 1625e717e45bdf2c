//! `cargo heddle report` end to end, on stores written here record by record (the
//! runner's own record types), so every outcome is known in advance.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use heddle_store::fixture::{self, SpecBuilder};
use heddle_test::record::layout::{RUNS_DIR, STORE_DIR, process_file_name};
use heddle_test::record::{Line, Outcome, RowRecord, SpecRecord};

/// OA(9; 2, 4, 3): every pair of levels of any two of the four factors appears exactly
/// once (the orthogonal array of Bose 1938 over GF(3); Hedayat, Sloane & Stufken 1999).
const OA9: [[u8; 4]; 9] = [
    [0, 0, 0, 0],
    [0, 1, 1, 2],
    [0, 2, 2, 1],
    [1, 0, 1, 1],
    [1, 1, 2, 0],
    [1, 2, 0, 2],
    [2, 0, 2, 2],
    [2, 1, 0, 1],
    [2, 2, 1, 0],
];

fn spec(rows: Vec<Vec<u8>>, lambda: u32, run: &str) -> SpecRecord {
    let mut b = SpecBuilder::new("totals")
        .krate("shop")
        .test_target("checkout")
        .run(run)
        .strength(2)
        .lambda(lambda)
        .seed(4)
        .fingerprint("00000000000000aa")
        .rows(rows);
    for n in ["currency", "tax", "coupon", "cart"] {
        let labels: Vec<String> = (0..3).map(|l| format!("{n}{l}")).collect();
        let labels: Vec<&str> = labels.iter().map(String::as_str).collect();
        b = b.factor(n, &labels);
    }
    b.build()
}

/// λ = 2: OA9 twice over.
fn rows_l2() -> Vec<Vec<u8>> {
    OA9.iter().chain(OA9.iter()).map(|r| r.to_vec()).collect()
}

fn row(spec: &SpecRecord, r: usize, outcome: Outcome, run: &str) -> RowRecord {
    let mut rec = fixture::row(spec, r, outcome);
    rec.run = run.into();
    rec.message = (!outcome.is_pass()).then(|| format!("row {r} broke"));
    rec
}

/// Writes one process file of a run under `dir/heddle/runs/<run>/`.
fn write_process(dir: &Path, run: &str, ms: u64, lines: &[String]) -> PathBuf {
    let d = dir.join(STORE_DIR).join(RUNS_DIR).join(run);
    std::fs::create_dir_all(&d).unwrap();
    let path = d.join(process_file_name(ms, 7, ms));
    std::fs::write(&path, lines.join("")).unwrap();
    path
}

/// A run of the λ = 2 suite in which the rows for `fails` fail.
fn write_run(dir: &Path, run: &str, ms: u64, fails: impl Fn(usize, &[u8]) -> bool) -> SpecRecord {
    let s = spec(rows_l2(), 2, run);
    let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
    for r in 0..s.rows.len() {
        let o = if fails(r, &s.rows[r]) {
            Outcome::Failed
        } else {
            Outcome::Passed
        };
        lines.push(Line::Row(row(&s, r, o, run)).to_json_line());
    }
    write_process(dir, run, ms, &lines);
    s
}

fn report(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
        .args(["heddle", "report"])
        .args(args)
        .env("NO_COLOR", "1")
        .output()
        .unwrap()
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

fn json(dir: &Path, extra: &[&str]) -> serde_json::Value {
    let mut args = vec!["--store", dir.to_str().unwrap(), "--format", "json"];
    args.extend_from_slice(extra);
    let o = report(&args);
    assert!(o.status.success(), "{}", text(&o.stderr));
    serde_json::from_slice(&o.stdout).expect("the JSON report parses")
}

/// currency = currency2 together with tax = tax1: a 2-way fault.
fn planted(row: &[u8]) -> bool {
    row[0] == 2 && row[1] == 1
}

#[test]
fn json_names_the_planted_pair_first_and_follows_the_schema() {
    let tmp = tempfile::tempdir().unwrap();
    write_run(tmp.path(), "run-a", 1_700_000_000_000, |_, r| planted(r));
    let v = json(tmp.path(), &[]);
    assert_eq!(v["format"], 2);
    assert_eq!(v["suites"][0]["seed"], "4", "seeds are decimal strings");
    assert_eq!(v["runs"], serde_json::json!(["run-a"]));
    let s = &v["suites"][0];
    for key in [
        "test",
        "strength",
        "lambda",
        "seed",
        "rows",
        "passed",
        "failed",
        "interactions",
        "suspects",
        "flaky",
    ] {
        assert!(!s[key].is_null(), "suite lacks `{key}`");
    }
    assert_eq!(s["test"], "totals");
    assert_eq!(
        (s["rows"].as_u64(), s["failed"].as_u64(), s["passed"].as_u64()),
        (Some(18), Some(2), Some(16))
    );
    // OA9 at λ = 2: the pair appears in exactly 2 rows, both failing
    let top = &s["suspects"][0];
    assert_eq!(
        top["levels"],
        serde_json::json!({"currency": "currency2", "tax": "tax1"})
    );
    assert_eq!(top["always"], true);
    assert_eq!(top["score"].as_f64(), Some(1.0));
    assert!(
        top["reason"]
            .as_str()
            .unwrap()
            .contains("failed in all 2 of its rows")
    );
    assert_eq!(
        s["flaky"].as_array().unwrap().len(),
        0,
        "a deterministic fault is not flaky"
    );
    // every single level (4 × 3) and every pair (6 × 9) is tallied
    let inter = s["interactions"].as_array().unwrap();
    assert_eq!(inter.len(), 12 + 54);
    for i in inter {
        let (runs, passes, failures) = (
            i["runs"].as_u64().unwrap(),
            i["passes"].as_u64().unwrap(),
            i["failures"].as_u64().unwrap(),
        );
        assert_eq!(runs, passes + failures);
        // each pair appears twice (λ = 2), each level six times
        let arity = i["levels"].as_object().unwrap().len();
        assert_eq!(runs, if arity == 2 { 2 } else { 6 });
    }
    let failing = s["failing_rows"].as_array().unwrap();
    assert_eq!(failing.len(), 2);
    assert!(
        failing[0]["rerun"]
            .as_str()
            .unwrap()
            .starts_with("cargo test -p shop --test checkout totals::row_")
    );
}

#[test]
fn flaky_rows_across_runs_get_a_wilson_interval() {
    let tmp = tempfile::tempdir().unwrap();
    // the pair's two rows fail in the first run and pass in the second
    write_run(tmp.path(), "run-1", 1_700_000_000_000, |_, r| planted(r));
    write_run(tmp.path(), "run-2", 1_700_000_100_000, |_, _| false);
    let latest = json(tmp.path(), &[]);
    assert_eq!(latest["runs"], serde_json::json!(["run-2"]));
    assert_eq!(latest["suites"][0]["failed"], 0);
    let both = json(tmp.path(), &["--runs", "2"]);
    let s = &both["suites"][0];
    assert_eq!(s["executions"], 36);
    let flaky = s["flaky"].as_array().unwrap();
    let f = flaky
        .iter()
        .find(|f| f["levels"] == serde_json::json!({"currency": "currency2", "tax": "tax1"}))
        .expect("the pair is flagged flaky");
    assert_eq!((f["runs"].as_u64(), f["passes"].as_u64()), (Some(4), Some(2)));
    // Wilson (1927) 95% interval of 2/4: centre (0.5 + z²/8)/(1 + z²/4) = 0.5, half-width
    // z·sqrt(1/16 + z²/64)/(1 + z²/4) with z = 1.95996: 0.15004 … 0.84996
    assert!((f["low"].as_f64().unwrap() - 0.15004).abs() < 1e-4, "{f}");
    assert!((f["high"].as_f64().unwrap() - 0.84996).abs() < 1e-4, "{f}");
    let sus = &s["suspects"][0];
    assert_eq!(sus["always"], false);
    // a flake failing half the time needs λ' = 5 for 95% (1 − 0.5^5 ≥ 0.95 > 1 − 0.5^4);
    // the λ = 2 design repeated ⌈5/2⌉ = 3 times has 54 rows, and each of the 9 pairs of
    // two factors needs 5 rows of its own: 45
    let advice = &s["advice"];
    assert_eq!(advice["lambda_needed"], 5, "{advice}");
    assert_eq!(advice["rows_needed"], 54, "{advice}");
    assert_eq!(advice["rows_needed_at_least"], 45, "{advice}");
    // one run id by name
    let one = json(tmp.path(), &["--run", "run-1"]);
    assert_eq!(one["suites"][0]["failed"], 2);
}

#[test]
fn shards_merge_and_a_file_copied_twice_counts_once() {
    let tmp = tempfile::tempdir().unwrap();
    let s = spec(rows_l2(), 2, "ci-7");
    // job 1 ran rows 0..9, job 2 rows 9..18, of the same run
    let job = |name: &str, range: std::ops::Range<usize>, ms: u64| {
        let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
        for r in range {
            let o = if planted(&s.rows[r]) {
                Outcome::Failed
            } else {
                Outcome::Passed
            };
            lines.push(Line::Row(row(&s, r, o, "ci-7")).to_json_line());
        }
        write_process(
            &tmp.path().join("shards").join(name).join("target"),
            "ci-7",
            ms,
            &lines,
        )
    };
    job("job-1", 0..9, 1_700_000_000_000);
    let second = job("job-2", 9..18, 1_700_000_000_500);
    // the same shard downloaded twice
    let copy = tmp.path().join("shards").join("job-2-again").join("target");
    let dest = copy.join(STORE_DIR).join(RUNS_DIR).join("ci-7");
    std::fs::create_dir_all(&dest).unwrap();
    std::fs::copy(&second, dest.join(second.file_name().unwrap())).unwrap();
    let v = json(&tmp.path().join("shards"), &[]);
    let suite = &v["suites"][0];
    assert_eq!(
        suite["executions"], 18,
        "each row once, the copied file not twice"
    );
    assert_eq!(suite["not_run"], 0);
    assert_eq!(suite["failed"], 2);
}

#[test]
fn junit_parses_and_lists_every_row() {
    let tmp = tempfile::tempdir().unwrap();
    write_run(tmp.path(), "run-j", 1_700_000_000_000, |_, r| planted(r));
    let o = report(&["--store", tmp.path().to_str().unwrap(), "--format", "junit"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let xml = text(&o.stdout);
    let parsed = quick_junit::Report::deserialize_from_str(&xml).expect("the JUnit report parses");
    assert_eq!(parsed.test_suites.len(), 1);
    let suite = &parsed.test_suites[0];
    assert_eq!(suite.test_cases.len(), 18);
    assert_eq!(suite.failures, 2);
    let names: Vec<String> = suite.test_cases.iter().map(|c| c.name.to_string()).collect();
    assert_eq!(names[0], "totals::row_00");
    assert_eq!(names[17], "totals::row_17");
    // labels travel as the testcase's output and as a suite property per row (the
    // schema has no testcase properties)
    let first = &suite.test_cases[0];
    let out = first
        .system_out
        .as_ref()
        .map(|s| s.to_string())
        .unwrap_or_default();
    assert!(out.contains("currency = currency0"), "{out}");
    assert!(
        suite
            .properties
            .iter()
            .any(|p| p.name.as_str() == "heddle.row.row_00"
                && p.value.as_str().contains("currency = currency0")),
        "{:?}",
        suite.properties
    );
    assert!(
        common::validate_junit(&xml).unwrap_or_else(|e| panic!("{e}")) || std::env::var_os("CI").is_none()
    );
}

#[test]
fn table_and_markdown_say_the_same_thing() {
    let tmp = tempfile::tempdir().unwrap();
    write_run(tmp.path(), "run-t", 1_700_000_000_000, |_, r| planted(r));
    let table = text(&report(&["--store", tmp.path().to_str().unwrap()]).stdout);
    assert!(table.contains("suspects, best first"), "{table}");
    assert!(table.contains("1. currency = currency2, tax = tax1"), "{table}");
    assert!(table.contains("fails always"), "{table}");
    assert!(
        table.contains("rerun: cargo test -p shop --test checkout totals::row_"),
        "{table}"
    );
    assert!(!table.contains('\x1b'), "no colours when not on a terminal");
    let md = text(&report(&["--store", tmp.path().to_str().unwrap(), "--format", "markdown"]).stdout);
    assert!(
        md.contains("| suite | t | λ | rows | passed | failed | did not finish | not run | top suspect |"),
        "{md}"
    );
    assert!(
        md.contains("`currency = currency2, tax = tax1` (fails always, 1.00)"),
        "{md}"
    );
}

#[test]
fn all_clear_reports_coverage() {
    let tmp = tempfile::tempdir().unwrap();
    write_run(tmp.path(), "run-ok", 1_700_000_000_000, |_, _| false);
    let table = text(&report(&["--store", tmp.path().to_str().unwrap()]).stdout);
    assert!(
        table.contains(
            "all clear: every one of the 54 2-way interactions passed in at least 2 rows, each run at least 2 times"
        ),
        "{table}"
    );
    let all = text(&report(&["--store", tmp.path().to_str().unwrap(), "--all"]).stdout);
    assert!(all.contains("pass counts, every interaction"), "{all}");
    assert!(
        all.contains("   2/2    passed  currency = currency0, tax = tax0"),
        "{all}"
    );
}

#[test]
fn damaged_and_foreign_lines_are_skipped_and_counted() {
    let tmp = tempfile::tempdir().unwrap();
    let s = write_run(tmp.path(), "run-d", 1_700_000_000_000, |_, r| planted(r));
    let mut lines = vec![Line::Row(row(&s, 0, Outcome::Passed, "run-d")).to_json_line()];
    let whole = Line::Row(row(&s, 1, Outcome::Passed, "run-d")).to_json_line();
    lines.push(whole[..whole.len() / 2].to_string()); // truncated mid-line
    lines.push("\n".into());
    let current = format!("\"v\":{}", heddle_test::record::FORMAT_VERSION);
    lines.push(whole.replacen(&current, "\"v\":1", 1)); // an older format version
    write_process(tmp.path(), "run-d", 1_700_000_000_001, &lines);
    let o = report(&["--store", tmp.path().to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success());
    let err = text(&o.stderr);
    assert!(
        err.contains("skipped 1 corrupt or truncated record line"),
        "{err}"
    );
    assert!(err.contains("older format version 1"), "{err}");
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["suites"][0]["executions"], 19, "the whole lines still count");
    assert_eq!(v["notes"].as_array().unwrap().len(), 2);
}

#[test]
fn bad_input_exits_with_2() {
    let tmp = tempfile::tempdir().unwrap();
    let empty = report(&["--store", tmp.path().to_str().unwrap()]);
    assert_eq!(empty.status.code(), Some(2));
    assert!(
        text(&empty.stderr).contains("no heddle records found under"),
        "{}",
        text(&empty.stderr)
    );
    write_run(tmp.path(), "run-x", 1_700_000_000_000, |_, _| false);
    let unknown = report(&["--store", tmp.path().to_str().unwrap(), "--run", "nope"]);
    assert_eq!(unknown.status.code(), Some(2));
    assert!(
        text(&unknown.stderr).contains("nope"),
        "{}",
        text(&unknown.stderr)
    );
    let zero = report(&["--store", tmp.path().to_str().unwrap(), "--runs", "0"]);
    assert_eq!(zero.status.code(), Some(2));
    let conf = report(&["--store", tmp.path().to_str().unwrap(), "--confidence", "1.5"]);
    assert_eq!(conf.status.code(), Some(2));
    assert!(text(&conf.stderr).contains("`--confidence 1.5` is not between 0 and 1"));
    let fmt = report(&["--format", "yaml"]);
    assert_eq!(fmt.status.code(), Some(2));
}

/// A crate with no build at all (the package the records name): `report` finds the store where cargo says the target
/// (or build) directory is, however that was configured.
fn bare_crate(dir: &Path) -> PathBuf {
    std::fs::create_dir_all(dir.join("src")).unwrap();
    std::fs::write(
        dir.join("Cargo.toml"),
        "[package]\nname = \"shop\"\nversion = \"0.0.0\"\nedition = \"2024\"\n\n[workspace]\n",
    )
    .unwrap();
    std::fs::write(dir.join("src/lib.rs"), "").unwrap();
    dir.join("Cargo.toml")
}

fn report_in(manifest: &Path, env: &[(&str, &Path)]) -> Output {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_cargo-heddle"));
    cmd.args(["heddle", "report", "--format", "json", "--manifest-path"])
        .arg(manifest);
    for key in [
        "CARGO_TARGET_DIR",
        "CARGO_BUILD_TARGET_DIR",
        "CARGO_BUILD_BUILD_DIR",
    ] {
        cmd.env_remove(key);
    }
    for (k, v) in env {
        cmd.env(k, v);
    }
    cmd.output().unwrap()
}

#[test]
fn the_store_is_found_in_a_custom_target_dir_and_build_dir() {
    let tmp = tempfile::tempdir().unwrap();
    let manifest = bare_crate(&tmp.path().join("bare"));
    // CARGO_TARGET_DIR moves the target directory
    let target = tmp.path().join("elsewhere");
    write_run(&target, "run-t", 1_700_000_000_000, |_, r| planted(r));
    let o = report_in(&manifest, &[("CARGO_TARGET_DIR", &target)]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["runs"], serde_json::json!(["run-t"]));
    // without it, the default target directory has no store: a usage error naming it
    let none = report_in(&manifest, &[]);
    assert_eq!(none.status.code(), Some(2));
    assert!(
        text(&none.stderr).contains("no heddle records found in"),
        "{}",
        text(&none.stderr)
    );
    // a build directory apart from the target directory is where test binaries run
    // from, so records land there
    let build = tmp.path().join("build-here");
    write_run(&build, "run-b", 1_700_000_000_000, |_, _| false);
    let o = report_in(&manifest, &[("CARGO_BUILD_BUILD_DIR", &build)]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["runs"], serde_json::json!(["run-b"]));
}

#[test]
fn html_goes_whole_to_the_output_file_and_shows_a_run_cut_short() {
    // rows 8 to 17 never ran: the six pairs of row 8 appear nowhere else in the rows that
    // ran (OA9 has index 1, and its second copy is among the rows left out), so exactly
    // those cells are hatched, and the run stopped after row 7
    let tmp = tempfile::tempdir().unwrap();
    let s = spec(rows_l2(), 2, "run-a");
    let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
    for r in 0..8 {
        let o = if planted(&s.rows[r]) {
            Outcome::Failed
        } else {
            Outcome::Passed
        };
        lines.push(Line::Row(row(&s, r, o, "run-a")).to_json_line());
    }
    write_process(tmp.path(), "run-a", 1_700_000_000_000, &lines);
    let store = tmp.path().to_str().unwrap();
    let page = tmp.path().join("out").join("report.html");
    let page_arg = page.to_str().unwrap();
    let args = ["--store", store, "--format", "html", "--output", page_arg];
    // a directory that does not exist: a located error, and nothing written
    let o = report(&args);
    assert_eq!(o.status.code(), Some(1), "{}", text(&o.stderr));
    assert!(
        text(&o.stderr).contains("cannot write the report to `") && text(&o.stderr).contains("hint:"),
        "{}",
        text(&o.stderr)
    );
    assert!(!page.exists());
    std::fs::create_dir(tmp.path().join("out")).unwrap();
    let o = report(&args);
    assert!(o.status.success(), "{}", text(&o.stderr));
    // the page goes to the file; the terminal shows the table
    assert!(
        text(&o.stdout).starts_with("heddle report"),
        "{}",
        text(&o.stdout)
    );
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(html.contains("<meta name=\"generator\" content=\"cargo-heddle "));
    assert_eq!(
        html.matches("fill=\"url(#heddle-not-run)\"").count(),
        1 + 6,
        "legend and six cells"
    );
    assert!(html.contains("the run stopped after row 7"));
    assert!(html.contains("10 not run"));
    // rows that did not run are no crash: no column for rows that did not finish
    assert!(!html.contains("did not finish"));
    // the six pairs of row 8 (currency2, tax2, coupon1, cart0) are the ones not run
    assert!(html.contains("<title>currency = currency2, tax = tax2: not run (rows 8, "));
    // the same records give the same bytes
    let first = std::fs::read(&page).unwrap();
    assert!(report(&args).status.success());
    assert_eq!(std::fs::read(&page).unwrap(), first);
    // no temporary file left beside it
    let names: Vec<_> = std::fs::read_dir(tmp.path().join("out"))
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names.len(), 1, "{names:?}");
}

#[test]
fn html_of_a_strength_one_suite_shows_levels_not_pairs() {
    // strength 1 promises no pair of levels, so the page draws one strip per factor
    let tmp = tempfile::tempdir().unwrap();
    let s = SpecBuilder::new("single")
        .krate("shop")
        .test_target("checkout")
        .run("run-a")
        .factor("currency", &["eur", "usd", "gbp"])
        .factor("tax", &["on", "off"])
        .rows(vec![vec![0, 0], vec![1, 1], vec![2, 0]])
        .build();
    let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
    for (r, o) in [(0, Outcome::Passed), (1, Outcome::Failed), (2, Outcome::Passed)] {
        lines.push(Line::Row(row(&s, r, o, "run-a")).to_json_line());
    }
    write_process(tmp.path(), "run-a", 1_700_000_000_000, &lines);
    let o = report(&["--store", tmp.path().to_str().unwrap(), "--format", "html"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let html = text(&o.stdout);
    assert!(html.contains("Pass rate by level</h3>"), "{html}");
    assert_eq!(html.matches("<svg class=\"grid\"").count(), 2);
    assert!(
        html.contains("<title>currency = usd: passed 0 of 1 runs (0%) in rows 1; suspect 1</title>"),
        "{html}"
    );
}

/// A run of the λ = 1 suite (OA9) in which only the first `budget` rows ran, all passing.
fn write_budgeted_run(dir: &Path, run: &str, ms: u64, budget: Option<u32>) {
    let mut s = spec(OA9.iter().map(|r| r.to_vec()).collect(), 1, run);
    s.budget = budget;
    let ran = budget.map_or(s.rows.len(), |b| b as usize);
    let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
    for r in 0..ran {
        lines.push(Line::Row(row(&s, r, Outcome::Passed, run)).to_json_line());
    }
    write_process(dir, run, ms, &lines);
}

#[test]
fn a_budgeted_run_states_its_reach_and_is_never_complete() {
    let tmp = tempfile::tempdir().unwrap();
    write_budgeted_run(tmp.path(), "quick", 1_700_000_000_000, Some(3));
    let v = json(tmp.path(), &[]);
    let s = &v["suites"][0];
    assert_eq!((s["rows"].as_u64(), s["not_run"].as_u64()), (Some(9), Some(6)));
    let b = &s["budget"];
    assert_eq!((b["rows"].as_u64(), b["of"].as_u64()), (Some(3), Some(9)));
    // OA9 has index 1, so no pair is in two rows: 3 rows cover 3 · 6 = 18 of the 54
    // pairs; rows 0000, 0112, 0221 show 1 + 3 + 3 + 3 = 10 of the 12 single levels
    assert_eq!(
        b["reach"],
        serde_json::json!([
            {"strength": 1, "interactions": 12, "once": 10, "lambda": 10},
            {"strength": 2, "interactions": 54, "once": 18, "lambda": 18},
        ])
    );
    let o = report(&["--store", tmp.path().to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let table = text(&o.stdout);
    assert!(
        table.contains("not a complete run: budget: 3 of 9 rows run, the rest are ignored; they cover strength 2: 33% of 54 interactions covered; strength 1: 83% of 12 interactions covered"),
        "{table}"
    );
    assert!(
        table.contains("budget clear: no failures in the 3 rows the budget ran; the other 6 did not run"),
        "{table}"
    );
    assert!(!table.contains("all clear"), "{table}");
    let o = report(&["--store", tmp.path().to_str().unwrap(), "--format", "markdown"]);
    assert!(
        text(&o.stdout).contains("`totals`: not a complete run; budget: 3 of 9 rows run"),
        "{}",
        text(&o.stdout)
    );

    // merged with a run of the whole design, the rows all ran: no budget is reported
    write_budgeted_run(tmp.path(), "nightly", 1_700_000_100_000, None);
    let v = json(tmp.path(), &["--runs", "2"]);
    let s = &v["suites"][0];
    assert!(s["budget"].is_null(), "{s}");
    assert_eq!(s["not_run"], 0);
    assert!(v["notes"].as_array().unwrap().is_empty(), "{}", v["notes"]);
}

#[test]
fn runs_with_and_without_follow_up_rows_merge() {
    let tmp = tempfile::tempdir().unwrap();
    let design: Vec<Vec<u8>> = OA9.iter().map(|r| r.to_vec()).collect();
    let write = |run: &str, ms: u64, followups: Vec<Vec<u8>>| {
        let mut s = spec(design.clone(), 1, run);
        let extra = SpecBuilder::new("totals").followup_rows(followups).build();
        s.rows.extend(extra.rows);
        s.row_names.extend(extra.row_names);
        s.followups = extra.followups;
        let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
        for r in 0..s.rows.len() {
            let o = if planted(&s.rows[r]) {
                Outcome::Failed
            } else {
                Outcome::Passed
            };
            lines.push(Line::Row(row(&s, r, o, run)).to_json_line());
        }
        write_process(tmp.path(), run, ms, &lines);
    };
    write("design", 1_700_000_000_000, Vec::new());
    write(
        "round-1",
        1_700_000_100_000,
        vec![vec![2, 1, 0, 0], vec![2, 0, 0, 0]],
    );
    let v = json(tmp.path(), &["--runs", "2"]);
    assert!(v["notes"].as_array().unwrap().is_empty(), "{}", v["notes"]);
    let s = &v["suites"][0];
    assert_eq!((s["rows"].as_u64(), s["followups"].as_u64()), (Some(11), Some(2)));
    assert_eq!(s["executions"], 9 + 11);
    let o = report(&["--store", tmp.path().to_str().unwrap()]);
    assert!(
        text(&o.stdout).contains("· 9 rows + 2 follow-up: "),
        "{}",
        text(&o.stdout)
    );
    // the follow-up row holding the planted pair failed, and reruns by its own name
    let failing: Vec<&str> = s["failing_rows"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["test"].as_str().unwrap())
        .collect();
    assert!(failing.contains(&"totals::row_followup_00"), "{failing:?}");
    assert!(!failing.contains(&"totals::row_followup_01"), "{failing:?}");
}

/// Two runs of a suite (`spec` of the run id) in which row 0 failed in the first and
/// passed in the second, and every other row passed.
fn write_flaky_row_0(dir: &Path, spec: impl Fn(&str) -> SpecRecord) {
    for (run, ms, row0) in [
        ("run-1", 1_700_000_000_000, Outcome::Failed),
        ("run-2", 1_700_000_100_000, Outcome::Passed),
    ] {
        let s = spec(run);
        let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
        for r in 0..s.rows.len() {
            let o = if r == 0 { row0 } else { Outcome::Passed };
            lines.push(Line::Row(row(&s, r, o, run)).to_json_line());
        }
        write_process(dir, run, ms, &lines);
    }
}

/// A suite far too costly to generate again in a report (17 factors of 3 levels at
/// strength 4; the engine took over a minute on it at a higher λ): the report prices the
/// advice from the recorded design and finishes at once.
#[test]
fn the_advice_on_a_large_suite_is_priced_without_generating() {
    let tmp = tempfile::tempdir().unwrap();
    // 250 rows from a fixed linear congruential sequence (Knuth's MMIX constants): any
    // rows serve, the report does not need a covering array to price one
    let mut x: u64 = 1;
    let rows: Vec<Vec<u8>> = (0..250)
        .map(|_| {
            (0..17)
                .map(|_| {
                    x = x
                        .wrapping_mul(6364136223846793005)
                        .wrapping_add(1442695040888963407);
                    ((x >> 33) % 3) as u8
                })
                .collect()
        })
        .collect();
    let mut b = SpecBuilder::new("wide")
        .krate("shop")
        .strength(4)
        .fingerprint("00000000000000bb")
        .rows(rows);
    for f in 0..17 {
        b = b.factor(&format!("k{f}"), &["a", "b", "c"]);
    }
    write_flaky_row_0(tmp.path(), |run| b.clone().run(run).build());
    // the report lists all 192 780 interactions: read only the advice, skipping the rest
    #[derive(serde::Deserialize)]
    struct Suite {
        advice: serde_json::Value,
    }
    #[derive(serde::Deserialize)]
    struct Advised {
        suites: Vec<Suite>,
    }
    let o = report(&[
        "--store",
        tmp.path().to_str().unwrap(),
        "--format",
        "json",
        "--runs",
        "2",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let v: Advised = serde_json::from_slice(&o.stdout).expect("the JSON report parses");
    let advice = &v.suites[0].advice;
    // row 0 failed once in two runs: rate 0.5, λ' = 5, the design repeated 5 times
    assert_eq!(advice["lambda_needed"], 5, "{advice}");
    assert_eq!(advice["rows_needed"], 5 * 250, "{advice}");
    // at least 5 rows per interaction of the widest set of 4 factors (at most 81 of them)
    let at_least = advice["rows_needed_at_least"].as_u64().unwrap();
    assert!(
        at_least.is_multiple_of(5) && at_least <= 5 * 81 && at_least > 0,
        "{advice}"
    );
}

/// 3^4 with the first three factors as a focus set at strength 3: all 27 triples of the
/// first three, the fourth their sum mod 3 (so every pair with it shows too: for a fixed
/// level of one factor the sum takes every value as another varies).
fn focus_spec(run: &str) -> SpecRecord {
    let rows: Vec<Vec<u8>> = (0..27u8)
        .map(|x| {
            let (a, b, c) = (x / 9, x / 3 % 3, x % 3);
            vec![a, b, c, (a + b + c) % 3]
        })
        .collect();
    SpecBuilder::new("frames")
        .krate("hub")
        .test_target("hub")
        .run(run)
        .strength(2)
        .numbered(&[3, 3, 3, 3])
        .focus(&[0, 1, 2], 3, 1)
        .rows(rows)
        .build()
}

/// A store in which run `run` of the focus suite ran its first `rows` rows, all passing.
fn focus_run(run: &str, rows: usize) -> tempfile::TempDir {
    let tmp = tempfile::tempdir().unwrap();
    let s = focus_spec(run);
    let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
    for r in 0..rows {
        lines.push(Line::Row(row(&s, r, Outcome::Passed, run)).to_json_line());
    }
    write_process(tmp.path(), run, 1_700_000_000_000, &lines);
    tmp
}

#[test]
fn focus_interactions_count_toward_all_clear() {
    // variable strength (Cohen, Colbourn, Collofello, Gibbons and Mugridge 2003): "all
    // clear" needs every focus triple as well as every pair
    let tmp = focus_run("run-all", 27);
    let v = json(tmp.path(), &[]);
    let suite = &v["suites"][0];
    assert_eq!(suite["coverage"]["focus_interactions"], 27, "{suite}");
    assert_eq!(suite["coverage"]["focus_at_lambda"], 27, "{suite}");
    assert_eq!(suite["coverage"]["complete"], true);
    assert_eq!(suite["focus"].as_array().unwrap().len(), 27);
    let table = text(&report(&["--store", tmp.path().to_str().unwrap()]).stdout);
    assert!(
        table.contains("focus (f0, f1, f2): strength 3, lambda 1"),
        "{table}"
    );
    assert!(table.contains("all clear:"), "{table}");

    // a run of only the rows whose first factor is 0 or 1 (the first 18): the 9 triples
    // with f0 = 2 did not run, so it is not all clear
    let tmp = focus_run("run-part", 18);
    let v = json(tmp.path(), &[]);
    let suite = &v["suites"][0];
    assert_eq!(suite["coverage"]["focus_at_lambda"], 18, "{suite}");
    assert_eq!(suite["coverage"]["complete"], false);
    let ran: Vec<u64> = suite["focus"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["runs"].as_u64().unwrap())
        .collect();
    assert_eq!(ran.iter().filter(|&&r| r == 0).count(), 9, "{ran:?}");
    let table = text(&report(&["--store", tmp.path().to_str().unwrap()]).stdout);
    assert!(
        table.contains("18 of the 27 focus interactions ran in at least their lambda rows"),
        "{table}"
    );
    assert!(table.contains("partial run, not all clear"), "{table}");
}

#[test]
fn a_budget_on_a_focus_suite_states_the_focus_sets_reach() {
    // the first 9 rows of the focus suite are f0 = 0 with every (f1, f2): 9 of its 27
    // triples, each once
    let tmp = tempfile::tempdir().unwrap();
    let mut s = focus_spec("quick");
    s.budget = Some(9);
    let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
    for r in 0..9 {
        lines.push(Line::Row(row(&s, r, Outcome::Passed, "quick")).to_json_line());
    }
    write_process(tmp.path(), "quick", 1_700_000_000_000, &lines);
    let v = json(tmp.path(), &[]);
    let reach = v["suites"][0]["budget"]["reach"].as_array().unwrap().clone();
    assert_eq!(reach.len(), 3, "{reach:?}");
    assert_eq!(
        reach[2],
        serde_json::json!({"strength": 3, "interactions": 27, "once": 9, "lambda": 9,
                           "focus": ["f0", "f1", "f2"], "focus_lambda": 1})
    );
    let table = text(&report(&["--store", tmp.path().to_str().unwrap()]).stdout);
    assert!(
        table.contains("; focus set `f0, f1, f2` at strength 3: 33% of 27 interactions covered"),
        "{table}"
    );
}

#[test]
fn the_advice_prices_the_focus_sets_at_the_index_asked() {
    // row 0 failed in one of two runs: the top flaky interaction asks for λ' runs. The
    // 27 triples of the focus set each need λ' rows of their own (the counting bound),
    // more than the 9 pairs of a column pair (9 λ'); the design shows each triple once,
    // so λ' copies of its 27 rows reach λ' (juxtaposed arrays add their indices, common
    // practice)
    let tmp = tempfile::tempdir().unwrap();
    write_flaky_row_0(tmp.path(), focus_spec);
    let v = json(tmp.path(), &["--runs", "2"]);
    let advice = &v["suites"][0]["advice"];
    let needed = advice["lambda_needed"].as_u64().unwrap();
    assert!(needed > 1, "{advice}");
    assert_eq!(
        advice["rows_needed_at_least"].as_u64(),
        Some(27 * needed),
        "{advice}"
    );
    assert_eq!(advice["rows_needed"].as_u64(), Some(27 * needed), "{advice}");
}

#[test]
fn focus_sets_too_large_to_count_are_named_in_the_notes() {
    // 20 two-level factors at strength 2 over 500 rows fit the tally's budget (2^21
    // cells); all 20 at strength 4 add 500 · C(20, 4) = 2 422 500 cells and do not
    let tmp = tempfile::tempdir().unwrap();
    let rows: Vec<Vec<u8>> = (0..500u32)
        .map(|r| (0..20).map(|c| ((r >> (c % 9)) & 1) as u8).collect())
        .collect();
    let all: Vec<u32> = (0..20).collect();
    let s = SpecBuilder::new("wide")
        .krate("hub")
        .run("wide")
        .strength(2)
        .numbered(&[2; 20])
        .focus(&all, 4, 1)
        .rows(rows)
        .build();
    let lines = vec![
        Line::Spec(s.clone()).to_json_line(),
        Line::Row(row(&s, 0, Outcome::Passed, "wide")).to_json_line(),
    ];
    write_process(tmp.path(), "wide", 1_700_000_000_000, &lines);
    let v = json(tmp.path(), &[]);
    let notes: Vec<&str> = v["notes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|n| n.as_str().unwrap())
        .collect();
    assert!(
        notes.iter().any(|n| n.starts_with(
            "suite `wide`: counted interactions of up to 2 factors, not the focus set `f0, f1, f2, \
             f3, f4, f5, f6, f7, f8, f9, f10, f11, f12, f13, f14, f15, f16, f17, f18, f19` at \
             strength 4: "
        ) && n.contains("; hint: ")),
        "{notes:?}"
    );
}

/// A workspace with no members selects no package, and to the store reader no package
/// means every package: `report` and `probe` there must refuse, not show the runs
/// another project left in a shared target directory.
#[test]
fn a_workspace_without_members_does_not_report_other_projects_runs() {
    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("shared-target");
    write_run(&target, "run-shop", 1, |_, _| false);
    let empty = dir.path().join("empty");
    std::fs::create_dir_all(&empty).unwrap();
    std::fs::write(empty.join("Cargo.toml"), "[workspace]\nmembers = []\n").unwrap();
    // the run is there to be found: `--store` reads every package in it
    let all = report(&["--store", target.to_str().unwrap()]);
    assert!(all.status.success(), "{}", String::from_utf8_lossy(&all.stderr));
    assert!(String::from_utf8_lossy(&all.stdout).contains("totals"));
    // (and merging no runs of it is refused with a hint)
    let none = report(&["--store", target.to_str().unwrap(), "--runs", "0"]);
    assert_eq!(none.status.code(), Some(2));
    let err = String::from_utf8_lossy(&none.stderr);
    assert!(err.contains("`--runs` must be at least 1\n  hint: "), "{err}");
    for cmd in ["report", "probe"] {
        let o = Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
            .args(["heddle", cmd])
            .current_dir(&empty)
            .env("CARGO_TARGET_DIR", &target)
            .env("NO_COLOR", "1")
            .output()
            .unwrap();
        let (out, err) = (
            String::from_utf8_lossy(&o.stdout),
            String::from_utf8_lossy(&o.stderr),
        );
        assert_eq!(o.status.code(), Some(2), "{cmd}: {out}{err}");
        assert!(err.contains("has no member packages\n  hint: "), "{cmd}: {err}");
        assert!(!out.contains("totals"), "{cmd}: {out}");
    }
}

/// With `HEDDLE_TARGET_DIR` set the report reads only there, so finding nothing names
/// that directory, not cargo's target directory it never looked in.
#[test]
fn no_records_names_the_directory_it_looked_in() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("Cargo.toml"),
        "[package]\nname = \"lone\"\nversion = \"0.1.0\"\nedition = \"2021\"\n\n[workspace]\n",
    )
    .unwrap();
    std::fs::create_dir_all(dir.path().join("src")).unwrap();
    std::fs::write(dir.path().join("src/lib.rs"), "").unwrap();
    let elsewhere = dir.path().join("elsewhere");
    let o = Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
        .args(["heddle", "report"])
        .current_dir(dir.path())
        .env("HEDDLE_TARGET_DIR", &elsewhere)
        .env_remove("CARGO_TARGET_DIR")
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    let says = format!("error: no heddle records found in `{}`\n", elsewhere.display());
    assert!(err.starts_with(&says), "{err}");
}

/// Nothing recorded at all is incomplete: with `--fail-on incomplete` the report exits
/// 5, as when a shard is missing; without it, 2.
#[test]
fn nothing_recorded_is_incomplete_when_asked() {
    let dir = tempfile::tempdir().unwrap();
    let empty = dir.path().join("shards");
    std::fs::create_dir_all(empty.join("job1/heddle").join(RUNS_DIR)).unwrap();
    let missing = dir.path().join("never-downloaded");
    for store in [&empty, &missing] {
        let store = store.to_str().unwrap();
        let gate = report(&["--store", store, "--fail-on", "failures,incomplete"]);
        let err = String::from_utf8_lossy(&gate.stderr);
        assert_eq!(gate.status.code(), Some(5), "{store}: {err}");
        assert!(err.starts_with("error: no "), "{err}");
        assert!(err.contains("(`--fail-on incomplete`: exit code 5)"), "{err}");
        // a path that is not there says so, as a typo would need
        assert_eq!(
            err.contains("does not exist"),
            store.ends_with("never-downloaded"),
            "{err}"
        );
        for args in [
            &["--store", store][..],
            &["--store", store, "--fail-on", "failures"],
        ] {
            assert_eq!(report(args).status.code(), Some(2), "{args:?}");
        }
    }
}

/// A suite's rows in the JSON report: passed, failed, did not finish, not run.
fn row_counts(suite: &serde_json::Value) -> [u64; 4] {
    ["passed", "failed", "did_not_finish", "not_run"].map(|k| suite[k].as_u64().unwrap_or(u64::MAX))
}

/// The rows of a plain `cargo test` process that ended while two rows ran (a start line
/// each, no finish): every other row passed. Those two did not finish; they are no
/// failures, the run is not all clear, and every format says which rows.
#[test]
fn rows_in_flight_when_a_process_of_several_rows_ended_did_not_finish() {
    let tmp = tempfile::tempdir().unwrap();
    let run = "run-crash";
    let s = spec(rows_l2(), 2, run);
    let in_flight = [4usize, 11];
    let mut lines = vec![Line::Spec(s.clone()).to_json_line()];
    for r in 0..s.rows.len() {
        let mut start = fixture::start(&s, r);
        start.run = run.into();
        lines.push(Line::Start(start).to_json_line());
        if !in_flight.contains(&r) {
            lines.push(Line::Row(row(&s, r, Outcome::Passed, run)).to_json_line());
        }
    }
    write_process(tmp.path(), run, 1_700_000_000_000, &lines);
    let store = tmp.path().to_str().unwrap();

    let v = json(tmp.path(), &[]);
    let suite = &v["suites"][0];
    assert_eq!(row_counts(suite), [16, 0, 2, 0], "{suite:#}");
    assert_eq!(suite["coverage"]["complete"], false, "{suite:#}");
    assert_eq!(suite["coverage"]["unfinished"], 2, "{suite:#}");
    let unfinished: Vec<&str> = suite["unfinished_rows"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["test"].as_str().unwrap())
        .collect();
    assert_eq!(unfinished, ["totals::row_04", "totals::row_11"]);
    assert_eq!(suite["failing_rows"].as_array().map(Vec::len), Some(0));
    let note = v["notes"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|n| n.as_str())
        .find(|n| n.contains("did not finish"))
        .unwrap_or_else(|| panic!("a note on the rows: {v:#}"));
    assert!(
        note.starts_with("`totals`: 2 rows did not finish (`row_04`, `row_11`)")
            && note.contains("one of them likely caused it")
            && note.contains("not counted as failures")
            && note.contains("sees the rows in flight as not finished"),
        "{note}"
    );

    let table = report(&["--store", store]);
    let out = text(&table.stdout);
    assert!(out.contains("16 passed, 0 failed, 2 did not finish"), "{out}");
    assert!(out.contains("partial run, not all clear"), "{out}");
    assert!(out.contains("did not finish: row_04, row_11"), "{out}");
    assert!(!out.contains("  all clear:"), "{out}");

    let md = text(&report(&["--store", store, "--format", "markdown"]).stdout);
    assert!(md.contains("| 18 | 16 | 0 | 2 | 0 |"), "{md}");
    assert!(md.contains("> did not finish: `row_04`, `row_11`"), "{md}");

    // the page's overview has the column only where a row did not finish
    let page = text(&report(&["--store", store, "--format", "html"]).stdout);
    assert!(page.contains("<th scope=\"col\">did not finish</th>"), "{page}");
    assert!(page.contains("<td class=\"num\">2</td>"), "{page}");
    // and its headline says no clean pass: a crash ended two rows
    assert!(
        page.contains("No failures recorded, but 2 rows did not finish"),
        "{page}"
    );
    assert!(!page.contains("every interaction that ran passed"), "{page}");

    let xml = text(&report(&["--store", store, "--format", "junit"]).stdout);
    let parsed = quick_junit::Report::deserialize_from_str(&xml).expect("the JUnit report parses");
    let errors: Vec<&str> = parsed.test_suites[0]
        .test_cases
        .iter()
        .filter(|c| {
            matches!(
                &c.status,
                quick_junit::TestCaseStatus::NonSuccess {
                    kind: quick_junit::NonSuccessKind::Error,
                    ..
                }
            )
        })
        .map(|c| c.name.as_str())
        .collect();
    assert_eq!(errors, ["totals::row_04", "totals::row_11"], "{xml}");
    assert!(xml.contains("failures=\"0\" errors=\"2\" skipped=\"0\""), "{xml}");
    assert!(
        common::validate_junit(&xml).unwrap_or_else(|e| panic!("{e}")) || std::env::var_os("CI").is_none()
    );

    // no failure to fail on, but the run is incomplete
    let gate = report(&["--store", store, "--fail-on", "failures"]);
    assert_eq!(gate.status.code(), Some(0), "{}", text(&gate.stderr));
    let gate = report(&["--store", store, "--fail-on", "incomplete"]);
    assert_eq!(gate.status.code(), Some(5), "{}", text(&gate.stderr));
}

/// Under nextest (one row per process; the start carries the attempt) a start with no
/// finish is a failed execution of that row: a failure everywhere, with the nextest
/// rerun command.
#[test]
fn a_nextest_row_that_never_finished_is_a_failure() {
    let tmp = tempfile::tempdir().unwrap();
    let run = "run-nx";
    let s = spec(rows_l2(), 2, run);
    for r in 0..s.rows.len() {
        let mut start = fixture::start(&s, r);
        start.run = run.into();
        start.attempt = Some(1);
        let mut lines = vec![
            Line::Spec(s.clone()).to_json_line(),
            Line::Start(start.clone()).to_json_line(),
        ];
        if r != 7 {
            lines.push(Line::Row(start.finished(Outcome::Passed, None, 10)).to_json_line());
        }
        write_process(tmp.path(), run, 1_700_000_000_000 + r as u64, &lines);
    }
    let v = json(tmp.path(), &[]);
    let suite = &v["suites"][0];
    assert_eq!(row_counts(suite), [17, 1, 0, 0], "{suite:#}");
    let failing = &suite["failing_rows"][0];
    assert_eq!(failing["test"], "totals::row_07", "{suite:#}");
    assert!(
        failing["message"]
            .as_str()
            .unwrap()
            .starts_with("attempt 1 did not finish"),
        "{failing:#}"
    );
    assert!(
        failing["rerun"]
            .as_str()
            .unwrap()
            .starts_with("cargo nextest run"),
        "{failing:#}"
    );
    let store = tmp.path().to_str().unwrap();
    let gate = report(&["--store", store, "--fail-on", "failures"]);
    assert_eq!(gate.status.code(), Some(3), "{}", text(&gate.stderr));
    let xml = text(&report(&["--store", store, "--format", "junit"]).stdout);
    assert!(xml.contains("failures=\"1\" errors=\"0\" skipped=\"0\""), "{xml}");
}
