//! Verdicts in the settings CI runs tests in, end to end through the built
//! `cargo-heddle` binary on temporary crates (heddle's end-to-end harness: shared target
//! directory, serialised builds): partial runs, flakiness evidence, retries, shards, a
//! shared target directory, exit codes, output streams, the store's location, seeds,
//! colours, row info in the body and the store's upkeep. Each test names what it checks
//! and fails on the behaviour it replaced.

mod common;

use std::path::Path;

use heddle_e2e::scratch::{CrateDef, Run, Scratch, cargo_program, note};
use serde_json::Value;

/// A crate of two suites: `tally` passes in every row; `parity` fails where an odd
/// number of `a`, `b`, `c` are on, a fault of three factors that no pair explains (each
/// pair of levels shows in passing and failing rows alike).
const CLEAN_AND_PARITY: &str = r#"//! Two suites: one clean, one with a three-factor fault.

#[heddle_test::cover(strength = 2, lambda = 2, seed = 3)]
fn tally(
    #[levels(1, 2, 3)] shelves: u32,
    #[levels("fan", "vent")] airflow: &str,
    #[levels(true, false)] lights: bool,
) {
    let _ = (airflow, lights);
    assert!(shelves > 0);
}

#[heddle_test::cover(strength = 2, lambda = 3, seed = 9)]
fn parity(
    #[levels(false, true)] a: bool,
    #[levels(false, true)] b: bool,
    #[levels(false, true)] c: bool,
    #[levels(false, true)] d: bool,
) {
    let _ = d;
    assert!(!(a ^ b ^ c), "odd parity");
}
"#;

/// A suite whose rows with `mist = true` and `zone = 2` fail the first time they run and
/// pass after (a marker file per row in `$MARKERS`): a real flake, seen only when a row
/// runs twice.
const MISTING: &str = r#"
#[heddle_test::cover(strength = 2, lambda = 2, seed = 21)]
fn misting(
    #[levels(false, true)] mist: bool,
    #[levels(1, 2, 3)] zone: u32,
    #[levels("day", "night")] phase: &str,
) {
    if mist && zone == 2 {
        let dir = std::path::PathBuf::from(std::env::var("MARKERS").expect("MARKERS is set"));
        let marker = dir.join(format!("{mist}-{zone}-{phase}"));
        if !marker.exists() {
            std::fs::create_dir_all(&dir).unwrap();
            std::fs::write(&marker, "").unwrap();
            panic!("first try fails");
        }
    }
}
"#;

/// A suite with a deterministic pair fault: `valve = "shut"` with `zone = 3`.
const VALVES: &str = r#"
#[heddle_test::cover(strength = 2, lambda = 2, seed = 22)]
fn valves(
    #[levels("open", "shut")] valve: &str,
    #[levels(1, 2, 3)] zone: u32,
    #[levels(true, false)] timer: bool,
) {
    let _ = timer;
    assert!(!(valve == "shut" && zone == 3), "shut valve starves zone 3");
}
"#;

/// The flaky suite beside the broken one, in one test file.
fn flaky_once() -> String {
    format!("//! A flaky pair (fails once per row, then passes) and a broken one.\n{MISTING}{VALVES}")
}

/// Command-line words, written as one string.
fn words(line: &str) -> Vec<&str> {
    line.split_whitespace().collect()
}

/// Runs `cargo heddle ARGS` in the crate, recording into `store` when given.
fn heddle(krate: &Scratch, args: &[&str], store: Option<&Path>, env: &[(&str, &str)]) -> Run {
    let mut full = vec!["heddle"];
    full.extend_from_slice(args);
    let mut all_env = vec![("NO_COLOR", "1")];
    all_env.extend_from_slice(env);
    krate.run_program(
        env!("CARGO_BIN_EXE_cargo-heddle").as_ref(),
        &full,
        store,
        &all_env,
    )
}

fn parse_json(run: &Run) -> Value {
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| {
        panic!(
            "{e}: `{}`\nstdout:\n{}\nstderr:\n{}",
            run.command, run.stdout, run.stderr
        )
    })
}

fn suite<'a>(v: &'a Value, test: &str) -> &'a Value {
    v["suites"]
        .as_array()
        .and_then(|s| s.iter().find(|s| s["test"] == test))
        .unwrap_or_else(|| panic!("no suite `{test}` in {v:#}"))
}

/// Whether a tool the test needs is there: in CI (`CI` set) a missing tool fails the
/// test, elsewhere the test says why it skips.
fn have_tool(name: &str, program: &std::ffi::OsStr, args: &[&str]) -> bool {
    let ok = std::process::Command::new(program)
        .args(args)
        .output()
        .is_ok_and(|o| o.status.success());
    if !ok {
        let ci = std::env::var_os("CI").is_some_and(|v| !v.is_empty());
        assert!(!ci, "{name} is missing on CI: `.ci/run` installs it");
        note(&format!("SKIPPED: {name} is not installed here"));
    }
    ok
}

fn have_nextest() -> bool {
    have_tool("cargo-nextest", &cargo_program(), &["nextest", "--version"])
}

fn create(name: &str, file: &str, text: &str) -> Scratch {
    Scratch::create(&CrateDef {
        name,
        files: &[(file, text)],
        ..CrateDef::default()
    })
    .unwrap_or_else(|e| panic!("{e}"))
}

/// A single-row rerun and one nextest partition are partial runs: never "all clear",
/// the report counts what did not run and points at the runs that complete the picture.
#[test]
fn a_partial_run_is_never_all_clear() {
    let krate = create("ci_partial", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    let one = heddle(
        &krate,
        &words("test --quiet -- --test greenhouse tally::row_00 -- --exact"),
        None,
        &[],
    );
    assert_eq!(one.code, Some(0), "{}", one.stderr);
    assert!(!one.stdout.contains("all clear: every"), "{}", one.stdout);
    assert!(
        one.stdout.contains("partial run, not all clear: 1 of "),
        "{}",
        one.stdout
    );
    assert!(one.stdout.contains("did not run"), "{}", one.stdout);
    // the advice's figure is the design's, and says so
    assert!(
        one.stdout.contains("(in a complete run), an interaction failing"),
        "{}",
        one.stdout
    );

    // the whole suite, then a one-row rerun: the rerun says the store holds more
    let full = heddle(
        &krate,
        &words("test --quiet --format json -- --test greenhouse tally"),
        None,
        &[],
    );
    let v = parse_json(&full);
    let tally = suite(&v, "tally");
    assert_eq!(tally["coverage"]["complete"], true, "{tally:#}");
    let rows = tally["rows"].as_u64().unwrap();
    let rerun = heddle(
        &krate,
        &words("test --quiet -- --test greenhouse tally::row_01 -- --exact"),
        None,
        &[],
    );
    assert!(
        rerun
            .stdout
            .contains(&format!("partial run, not all clear: 1 of {rows} rows ran")),
        "{}",
        rerun.stdout
    );
    assert!(rerun.stdout.contains("`--runs N` merges"), "{}", rerun.stdout);
    let json = heddle(
        &krate,
        &words("test --quiet --format json -- --test greenhouse tally::row_02 -- --exact"),
        None,
        &[],
    );
    let part = parse_json(&json);
    let c = &suite(&part, "tally")["coverage"];
    assert_eq!(
        (c["rows_run"].as_u64(), c["complete"].as_bool()),
        (Some(1), Some(false)),
        "{c}"
    );
    assert!(c["interactions_run"].as_u64() < c["interactions"].as_u64(), "{c}");

    // one partition of two under nextest
    if have_nextest() {
        let half = heddle(
            &krate,
            &words("test --nextest --quiet --format json -- --test greenhouse tally --partition count:1/2"),
            None,
            &[],
        );
        let v = parse_json(&half);
        let c = &suite(&v, "tally")["coverage"];
        assert_eq!(c["complete"], false, "{c}");
        assert_eq!(c["rows_run"].as_u64(), Some(rows.div_ceil(2)), "{c}");
    }
}

/// One plain run of a three-factor fault: the pairs in its rows passed in some rows and
/// failed in others, which is no evidence of flakiness; only a row that both passed and
/// failed is.
#[test]
fn flaky_needs_a_row_that_both_passed_and_failed() {
    let krate = create("ci_flaky_word", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    let run = heddle(
        &krate,
        &words("test --quiet --format json -- --test greenhouse parity"),
        None,
        &[],
    );
    let v = parse_json(&run);
    let parity = suite(&v, "parity");
    assert!(parity["failed"].as_u64() > Some(0), "{parity:#}");
    assert_eq!(parity["flaky"], serde_json::json!([]), "{parity:#}");
    let suspects = parity["suspects"].as_array().unwrap();
    assert!(
        suspects.iter().any(|s| s["verdict"] == "some-rows"),
        "{suspects:#?}"
    );
    assert!(suspects.iter().all(|s| s["verdict"] != "flaky"), "{suspects:#?}");
    let table = heddle(
        &krate,
        &words("test --quiet -- --test greenhouse parity"),
        None,
        &[],
    );
    assert!(
        table.stdout.contains("fails in some of its rows"),
        "{}",
        table.stdout
    );
    assert!(table.stdout.contains("--repeat"), "{}", table.stdout);
    assert!(!table.stdout.contains("flaky:"), "{}", table.stdout);

    // a row that fails once and then passes (two rounds) is flaky evidence
    let flaky = create("ci_flaky_rows", "tests/misting.rs", &flaky_once());
    let markers = flaky.root().join("markers");
    let markers = markers.to_str().unwrap();
    let run = heddle(
        &flaky,
        &words("test --quiet --repeat 2 --format json -- --test misting"),
        None,
        &[("MARKERS", markers)],
    );
    let v = parse_json(&run);
    let misting = suite(&v, "misting");
    let flaky_list = misting["flaky"].as_array().unwrap();
    assert!(
        flaky_list
            .iter()
            .any(|f| f["levels"] == serde_json::json!({"mist": "true", "zone": "2"})),
        "{misting:#}"
    );
    assert_eq!(misting["suspects"][0]["verdict"], "flaky", "{misting:#}");
    // the deterministic fault next to it stays "fails always"
    assert_eq!(suite(&v, "valves")["suspects"][0]["verdict"], "always");
}

/// A crate of the broken `valves` suite, run once whole into a store of its own: the
/// crate, the store and the JSON report of that run.
fn broken_valves(name: &str) -> (Scratch, std::path::PathBuf, Value) {
    let krate = create(name, "tests/valves.rs", &format!("//! A broken pair.\n{VALVES}"));
    let store = krate.store_dir("history");
    let broken = heddle(
        &krate,
        &words("test --quiet --format json -- --test valves"),
        Some(&store),
        &[],
    );
    let v = parse_json(&broken);
    (krate, store, v)
}

/// A row that failed, was fixed in the code and passed when rerun is not flaky: the two
/// runs were two builds, and `--runs 2` lets the later build's outcome stand (saying what
/// it left out). Runs of one unchanged build still merge whole, so a flake seen across
/// them is still flaky.
#[test]
fn a_fix_between_runs_is_not_flakiness() {
    let (krate, store, v) = broken_valves("ci_fixed");
    krate.write("tests/misting.rs", &format!("//! A flaky pair.\n{MISTING}"));
    let valves = suite(&v, "valves");
    assert_eq!(valves["suspects"][0]["verdict"], "always", "{valves:#}");
    let failing: Vec<String> = valves["failing_rows"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["test"].as_str().unwrap().to_string())
        .collect();
    assert!(!failing.is_empty(), "{valves:#}");

    // the fix: the spec (and so the fingerprint) is unchanged, the body is not
    let fixed = VALVES.replace(
        "assert!(!(valve == \"shut\" && zone == 3), \"shut valve starves zone 3\");",
        "assert!(zone > 0, \"zone {zone} of valve {valve}\");",
    );
    assert_ne!(fixed, VALVES);
    krate.write("tests/valves.rs", &format!("//! The pair, fixed.\n{fixed}"));
    for test in &failing {
        let mut args = words("test --quiet -- --test valves");
        args.extend([test.as_str(), "--", "--exact"]);
        let rerun = heddle(&krate, &args, Some(&store), &[]);
        assert_eq!(rerun.code, Some(0), "{}", rerun.stderr);
    }
    let runs = (failing.len() + 1).to_string();
    let merged = heddle(
        &krate,
        &["report", "--runs", &runs, "--format", "json"],
        Some(&store),
        &[],
    );
    let v = parse_json(&merged);
    let valves = suite(&v, "valves");
    assert_eq!(valves["flaky"], serde_json::json!([]), "{valves:#}");
    assert_eq!(valves["suspects"], serde_json::json!([]), "{valves:#}");
    assert_eq!(valves["failed"], 0, "{valves:#}");
    let n = failing.len();
    let note = format!(
        "note: left out {n} row record{} of earlier runs of another build",
        if n == 1 { "" } else { "s" }
    );
    assert!(merged.stderr.contains(&note), "{}", merged.stderr);
    // only the failing rows ran again after the fix: the others' passes are the old
    // build's, and the report says so
    let rows = valves["rows"].as_u64().unwrap() as usize;
    let older = format!(
        "note: {} last ran under an earlier build than the latest run's",
        if rows - n == 1 {
            "1 row".to_string()
        } else {
            format!("{} rows", rows - n)
        }
    );
    assert!(merged.stderr.contains(&older), "{}", merged.stderr);

    // two runs of one build: the flake's rows failed in the first and passed in the
    // second, which is flakiness
    let markers = krate.root().join("markers");
    let markers = markers.to_str().unwrap();
    for _ in 0..2 {
        heddle(
            &krate,
            &words("test --quiet -- --test misting"),
            Some(&store),
            &[("MARKERS", markers)],
        );
    }
    let history = heddle(&krate, &words("report --runs 2 --format json"), Some(&store), &[]);
    let v = parse_json(&history);
    let misting = suite(&v, "misting");
    assert_eq!(misting["suspects"][0]["verdict"], "flaky", "{misting:#}");
    assert!(!history.stderr.contains("another build"), "{}", history.stderr);
}

/// Runs before and after a spec change (here a level added along with a fix): the old
/// spec's rows are another fingerprint, and merged with `--runs 2` its verdicts would
/// speak for a test the code no longer has. Only the latest spec of the function is
/// reported, with a note, and `--fail-on` judges that one.
#[test]
fn a_changed_spec_leaves_the_old_ones_verdicts_out() {
    let (krate, store, v) = broken_valves("ci_respec");
    let old = suite(&v, "valves")["fingerprint"].clone();
    let changed = VALVES
        .replace("#[levels(1, 2, 3)] zone", "#[levels(1, 2, 3, 4)] zone")
        .replace(
            "assert!(!(valve == \"shut\" && zone == 3)",
            "assert!(!(valve == \"shut\" && zone == 5)",
        );
    assert_ne!(changed, VALVES);
    krate.write(
        "tests/valves.rs",
        &format!("//! A fourth zone, and the pair fixed.\n{changed}"),
    );
    let after = heddle(&krate, &words("test --quiet -- --test valves"), Some(&store), &[]);
    assert_eq!(after.code, Some(0), "{}", after.stderr);
    let merged = heddle(
        &krate,
        &words("report --runs 2 --format json --fail-on failures"),
        Some(&store),
        &[],
    );
    assert_eq!(merged.code, Some(0), "{}", merged.stderr);
    let v = parse_json(&merged);
    let suites = v["suites"].as_array().unwrap();
    assert_eq!(suites.len(), 1, "{v:#}");
    assert_ne!(suites[0]["fingerprint"], old, "{v:#}");
    assert_eq!(suites[0]["coverage"]["complete"], true, "{v:#}");
    assert!(
        merged
            .stderr
            .contains("note: left out 1 earlier spec of `valves` ("),
        "{}",
        merged.stderr
    );
}

/// The run id `cargo heddle test` announced on stderr.
fn run_id(run: &Run) -> String {
    run.stderr
        .lines()
        .find_map(|l| l.strip_prefix("heddle: run "))
        .and_then(|r| r.split_whitespace().next())
        .unwrap_or_else(|| panic!("no run id in\n{}", run.stderr))
        .to_string()
}

fn junit_valid(xml: &str) {
    common::validate_junit(xml).unwrap_or_else(|e| panic!("{e}"));
}

/// Under `cargo nextest run --retries 2`, a row that failed and then passed on a retry is
/// flaky evidence for that row (and a `flakyFailure` in JUnit, as nextest writes it); a
/// row that failed every attempt is a `failure` with `rerunFailure`s, and its
/// interaction "failed in all N of its rows" counts rows, not attempts.
#[test]
fn retries_are_attempts_of_one_row() {
    if !have_nextest() {
        return;
    }
    let krate = create("ci_retries", "tests/misting.rs", &flaky_once());
    let markers = krate.root().join("markers");
    let markers = markers.to_str().unwrap();
    let run = heddle(
        &krate,
        &words("test --nextest --quiet --format json -- --retries 2"),
        None,
        &[("MARKERS", markers)],
    );
    let v = parse_json(&run);
    let misting = suite(&v, "misting");
    assert_eq!(misting["suspects"][0]["verdict"], "flaky", "{misting:#}");
    assert!(
        misting["flaky"]
            .as_array()
            .unwrap()
            .iter()
            .any(|f| f["levels"] == serde_json::json!({"mist": "true", "zone": "2"})),
        "{misting:#}"
    );
    let valves = suite(&v, "valves");
    let top = &valves["suspects"][0];
    assert_eq!(
        top["levels"],
        serde_json::json!({"valve": "\"shut\"", "zone": "3"}),
        "{valves:#}"
    );
    let rows = valves["failing_rows"].as_array().unwrap().len();
    assert!(rows >= 2, "{valves:#}");
    let reason = top["reason"].as_str().unwrap();
    assert!(
        reason.starts_with(&format!(
            "failed in all {rows} of its rows ({} of {} runs failed)",
            3 * rows,
            3 * rows
        )),
        "{reason}"
    );

    let id = run_id(&run);
    let junit = heddle(&krate, &["report", "--run", &id, "--format", "junit"], None, &[]);
    assert_eq!(junit.code, Some(0), "{}", junit.stderr);
    junit_valid(&junit.stdout);
    let parsed = quick_junit::Report::deserialize_from_str(&junit.stdout).expect("JUnit parses");
    let by_name = |suite: &str| {
        parsed
            .test_suites
            .iter()
            .find(|s| s.name.as_str().ends_with(suite))
            .unwrap_or_else(|| panic!("no testsuite {suite}"))
    };
    let mut flaky_cases = 0;
    for case in &by_name("::misting").test_cases {
        let labels = case
            .system_out
            .as_ref()
            .map(|s| s.to_string())
            .unwrap_or_default();
        let planted = labels.contains("mist = true") && labels.contains("zone = 2");
        match &case.status {
            quick_junit::TestCaseStatus::Success { flaky_runs } => {
                assert_eq!(
                    flaky_runs.len(),
                    usize::from(planted),
                    "{}: {labels}",
                    case.name.as_str()
                );
                flaky_cases += usize::from(planted);
            }
            other => panic!("{}: {other:?}", case.name.as_str()),
        }
    }
    assert!(flaky_cases >= 2, "{}", junit.stdout);
    let failed: Vec<_> = by_name("::valves")
        .test_cases
        .iter()
        .filter_map(|c| match &c.status {
            quick_junit::TestCaseStatus::NonSuccess { reruns, .. } => Some(reruns.runs.len()),
            _ => None,
        })
        .collect();
    assert_eq!(
        failed,
        vec![2; rows],
        "each failing row: a failure and two rerunFailures"
    );
}

/// A row whose process aborts on the first try and passes on nextest's retry is flaky,
/// as nextest calls it, not a clean pass: the aborted attempt's start line has no
/// finish (and the retry's record, attempt 2, shows the first attempt failed too: it is
/// counted once).
#[test]
fn a_crash_before_a_passing_retry_is_flaky() {
    if !have_nextest() {
        return;
    }
    let pumps = r#"//! A row that aborts its process once.
#[heddle_test::cover(strength = 2, seed = 3)]
fn pumps(
    #[levels("low", "high")] speed: &str,
    #[levels(1, 2, 3)] zone: u32,
    #[levels(true, false)] night: bool,
) {
    if speed == "high" && zone == 2 {
        let dir = std::path::PathBuf::from(std::env::var("MARKERS").expect("MARKERS is set"));
        let marker = dir.join(format!("{speed}-{zone}-{night}"));
        if !marker.exists() {
            std::fs::create_dir_all(&dir).unwrap();
            std::fs::write(&marker, "").unwrap();
            std::process::abort();
        }
    }
}
"#;
    let krate = create("ci_crash", "tests/pumps.rs", pumps);
    let markers = krate.root().join("markers");
    let run = heddle(
        &krate,
        &words("test --nextest --quiet --format json -- --retries 1"),
        None,
        &[("MARKERS", markers.to_str().unwrap())],
    );
    let v = parse_json(&run);
    let pumps = suite(&v, "pumps");
    assert_eq!(pumps["not_run"], 0, "{pumps:#}");
    assert_eq!(pumps["suspects"][0]["verdict"], "flaky", "{pumps:#}");
    assert_eq!(
        pumps["suspects"][0]["levels"],
        serde_json::json!({"speed": "\"high\"", "zone": "2"}),
        "{pumps:#}"
    );
    assert!(
        run.stderr
            .contains("note: counted 1 nextest attempt that did not finish as failed"),
        "{}",
        run.stderr
    );
    let junit = heddle(
        &krate,
        &["report", "--run", &run_id(&run), "--format", "junit"],
        None,
        &[],
    );
    junit_valid(&junit.stdout);
    assert!(
        junit.stdout.contains("attempt 1 did not finish"),
        "{}",
        junit.stdout
    );
}

/// Runs plain `cargo test ARGS` in the crate, recording into a store of its own
/// (labelled `plain`), and returns the store.
fn plain_cargo_test(krate: &Scratch, args: &str, env: &[(&str, &str)]) -> std::path::PathBuf {
    let store = krate.store_dir("plain");
    krate.cargo(&words(args), Some(&store), env).assert_compiled();
    store
}

/// The JSON report of a store with `--fail-on failures`: the run and the document.
fn report_failing_on_failures(krate: &Scratch, store: &Path) -> (Run, Value) {
    let report = heddle(
        krate,
        &words("report --format json --fail-on failures"),
        Some(store),
        &[],
    );
    let v = parse_json(&report);
    (report, v)
}

/// A suite whose rows with `speed = "high"` and `zone = 2` abort their test process
/// every time they run.
const ABORTING_PUMPS: &str = r#"//! A pair that aborts its process.
#[heddle_test::cover(strength = 2, seed = 3)]
fn pumps(
    #[levels("low", "high")] speed: &str,
    #[levels(1, 2, 3)] zone: u32,
    #[levels(true, false)] night: bool,
) {
    let _ = night;
    if speed == "high" && zone == 2 {
        std::process::abort();
    }
}
"#;

/// Under nextest a row whose process aborts on every attempt left no outcome, only its
/// start lines; nextest ran it alone, so it is a failure of its interaction (it was
/// "not run" and a JUnit `skipped`): `--fail-on failures` fails, JUnit has a failure
/// with the nextest rerun command.
#[test]
fn a_row_that_aborts_under_nextest_on_every_attempt_fails() {
    if !have_nextest() {
        return;
    }
    let krate = create("ci_abort_nextest", "tests/pumps.rs", ABORTING_PUMPS);
    let run = heddle(
        &krate,
        &words("test --nextest --quiet --format json -- --retries 1 --no-fail-fast"),
        None,
        &[],
    );
    let v = parse_json(&run);
    let pumps = suite(&v, "pumps");
    assert_eq!(pumps["not_run"], 0, "{pumps:#}");
    assert_eq!(pumps["did_not_finish"], 0, "{pumps:#}");
    assert!(pumps["failed"].as_u64().unwrap() >= 1, "{pumps:#}");
    assert_eq!(pumps["suspects"][0]["verdict"], "always", "{pumps:#}");
    assert_eq!(
        pumps["suspects"][0]["levels"],
        serde_json::json!({"speed": "\"high\"", "zone": "2"}),
        "{pumps:#}"
    );
    let failing = pumps["failing_rows"].as_array().unwrap();
    assert!(!failing.is_empty(), "{pumps:#}");
    for row in failing {
        assert_eq!(row["levels"]["speed"], "\"high\"", "{row:#}");
        assert_eq!(row["levels"]["zone"], "2", "{row:#}");
        assert_eq!(row["runs"], 2, "two attempts, both failed: {row:#}");
        assert_eq!(row["failures"], 2, "{row:#}");
        assert!(
            row["message"].as_str().unwrap().contains("did not finish"),
            "{row:#}"
        );
        assert!(
            row["rerun"].as_str().unwrap().starts_with("cargo nextest run"),
            "{row:#}"
        );
    }
    let id = run_id(&run);
    let gate = heddle(
        &krate,
        &["report", "--run", &id, "--fail-on", "failures"],
        None,
        &[],
    );
    assert_eq!(gate.code, Some(3), "{}", gate.stderr);
    let junit = heddle(&krate, &["report", "--run", &id, "--format", "junit"], None, &[]);
    junit_valid(&junit.stdout);
    let parsed = quick_junit::Report::deserialize_from_str(&junit.stdout).expect("JUnit parses");
    let mut failures = 0;
    for case in &parsed.test_suites[0].test_cases {
        let labels = case
            .system_out
            .as_ref()
            .map(|s| s.to_string())
            .unwrap_or_default();
        let planted = labels.contains("speed = \"high\"") && labels.contains("zone = 2");
        match &case.status {
            quick_junit::TestCaseStatus::NonSuccess {
                kind: quick_junit::NonSuccessKind::Failure,
                message,
                ..
            } => {
                assert!(planted, "{}: {labels}", case.name.as_str());
                let message = message.as_ref().map(|m| m.to_string()).unwrap_or_default();
                assert!(message.contains("did not finish"), "{message}");
                failures += 1;
            }
            quick_junit::TestCaseStatus::Success { .. } => assert!(!planted, "{}", case.name.as_str()),
            other => panic!("{}: {other:?}", case.name.as_str()),
        }
    }
    assert_eq!(failures, failing.len(), "{}", junit.stdout);
}

/// Under plain `cargo test` libtest runs several rows of a process on threads, and an
/// abort ends them all: the rows in flight did not finish, and which one aborted is not
/// known, so none is blamed. Here the first row to start claims a marker file, waits
/// until another row is running (it finds the claim taken and sleeps), and aborts: two
/// rows in flight, neither a failure, the run not all clear, the note naming them.
#[test]
fn rows_in_flight_when_plain_cargo_test_aborts_did_not_finish() {
    let pumps = r#"//! Two rows in flight when the process aborts.
#[heddle_test::cover(strength = 2, seed = 3)]
fn pumps(
    #[levels("low", "high")] speed: &str,
    #[levels(1, 2, 3)] zone: u32,
    #[levels(true, false)] night: bool,
) {
    let _ = (speed, zone, night);
    let dir = std::path::PathBuf::from(std::env::var("MARKERS").expect("MARKERS is set"));
    std::fs::create_dir_all(&dir).unwrap();
    let claimed = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(dir.join("culprit"))
        .is_ok();
    if claimed {
        for _ in 0..600 {
            if dir.join("waiting").exists() {
                break;
            }
            std::thread::sleep(std::time::Duration::from_millis(50));
        }
        std::process::abort();
    }
    std::fs::write(dir.join("waiting"), "").unwrap();
    std::thread::sleep(std::time::Duration::from_secs(60));
}
"#;
    let krate = create("ci_abort_plain", "tests/pumps.rs", pumps);
    let markers = krate.root().join("markers");
    let _ = std::fs::remove_dir_all(&markers);
    let store = plain_cargo_test(
        &krate,
        "test --test pumps -- --test-threads 2",
        &[("MARKERS", markers.to_str().unwrap())],
    );
    let (report, v) = report_failing_on_failures(&krate, &store);
    assert_eq!(report.code, Some(0), "no row failed: {}", report.stderr);
    let pumps = suite(&v, "pumps");
    assert_eq!(pumps["failed"], 0, "{pumps:#}");
    assert_eq!(pumps["did_not_finish"], 2, "{pumps:#}");
    assert_eq!(pumps["coverage"]["complete"], false, "{pumps:#}");
    assert_eq!(pumps["suspects"].as_array().map(Vec::len), Some(0), "{pumps:#}");
    let in_flight: Vec<String> = pumps["unfinished_rows"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| {
            r["test"]
                .as_str()
                .unwrap()
                .trim_start_matches("pumps::")
                .to_string()
        })
        .collect();
    assert_eq!(in_flight.len(), 2, "{pumps:#}");
    let note = format!(
        "note: `pumps`: 2 rows did not finish (`{}`, `{}`)",
        in_flight[0], in_flight[1]
    );
    assert!(report.stderr.contains(&note), "{note}\n{}", report.stderr);
    assert!(
        report.stderr.contains("one of them likely caused it"),
        "{}",
        report.stderr
    );
    let incomplete = heddle(&krate, &words("report --fail-on incomplete"), Some(&store), &[]);
    assert_eq!(incomplete.code, Some(5), "{}", incomplete.stderr);
    assert!(
        incomplete.stdout.contains("did not finish: "),
        "{}",
        incomplete.stdout
    );
    let junit = heddle(&krate, &words("report --format junit"), Some(&store), &[]);
    junit_valid(&junit.stdout);
    assert_eq!(
        junit.stdout.matches("<error type=\"did-not-finish\"").count(),
        2,
        "{}",
        junit.stdout
    );
    assert!(!junit.stdout.contains("<failure"), "{}", junit.stdout);
}

/// Plain `cargo test` runs one process per test binary: they record as one run (the
/// cargo invocation's, where the platform tells it), so the report of the latest run
/// shows the broken suite of the first binary beside the clean one of the last, and
/// `--fail-on failures` fails.
#[test]
fn one_cargo_test_is_one_run() {
    if !cfg!(target_os = "linux") {
        note("SKIPPED: test processes find their cargo invocation only on Linux");
        return;
    }
    let krate = create(
        "ci_binaries",
        "tests/a_valves.rs",
        &format!("//! A broken pair.\n{VALVES}"),
    );
    krate.write(
        "tests/b_clean.rs",
        CLEAN_AND_PARITY
            .split("#[heddle_test::cover(strength = 2, lambda = 3")
            .next()
            .unwrap(),
    );
    let store = plain_cargo_test(&krate, "test --no-fail-fast", &[]);
    let (report, v) = report_failing_on_failures(&krate, &store);
    assert_eq!(report.code, Some(3), "{}", report.stderr);
    assert_eq!(v["runs"].as_array().map(Vec::len), Some(1), "{v:#}");
    assert!(v["runs"][0].as_str().unwrap().starts_with("cargo-"), "{v:#}");
    assert_eq!(suite(&v, "valves")["suspects"][0]["verdict"], "always", "{v:#}");
    assert_eq!(suite(&v, "tally")["coverage"]["complete"], true, "{v:#}");
}

/// Runs one nextest partition of the crate as a CI job would, recording into its own
/// store directory (the job's target directory, later uploaded as an artifact).
fn shard(krate: &Scratch, label: &str, partition: &str, env: &[(&str, &str)]) -> std::path::PathBuf {
    let store = krate.store_dir(label);
    let run = krate.cargo(
        &["nextest", "run", "--no-fail-fast", "--partition", partition],
        Some(&store),
        env,
    );
    run.assert_compiled();
    store
}

/// Two nextest partitions of one CI pipeline, each with its own store: the pipeline's id
/// (GitHub Actions' run id and attempt) makes them one run, merged by default; without a
/// pipeline id, `--runs all` merges every run found, and the report says what it merged.
#[test]
fn shards_of_one_pipeline_merge_by_default() {
    if !have_nextest() {
        return;
    }
    let krate = create("ci_shards", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    let gha = [("GITHUB_RUN_ID", "4242"), ("GITHUB_RUN_ATTEMPT", "1")];
    let a = shard(&krate, "pipeline-a", "count:1/2", &gha);
    let b = shard(&krate, "pipeline-b", "count:2/2", &gha);
    let (a, b) = (a.to_str().unwrap(), b.to_str().unwrap());
    let merged = heddle(
        &krate,
        &["report", "--store", a, "--store", b, "--format", "json"],
        None,
        &[],
    );
    assert_eq!(merged.code, Some(0), "{}", merged.stderr);
    let v = parse_json(&merged);
    assert_eq!(v["runs"], serde_json::json!(["gha-4242-1"]), "{v:#}");
    assert_eq!(v["stores"], 2);
    for test in ["tally", "parity"] {
        let s = suite(&v, test);
        assert_eq!(s["coverage"]["complete"], true, "{s:#}");
        assert_eq!(s["not_run"], 0, "{s:#}");
    }
    let table = heddle(&krate, &["report", "--store", a, "--store", b], None, &[]);
    assert!(
        table.stdout.contains("merged: 1 run (gha-4242-1) from 2 stores"),
        "{}",
        table.stdout
    );

    // no pipeline id: each partition is a nextest run of its own
    let c = shard(&krate, "plain-a", "count:1/2", &[]);
    let d = shard(&krate, "plain-b", "count:2/2", &[]);
    let (c, d) = (c.to_str().unwrap(), d.to_str().unwrap());
    let latest = parse_json(&heddle(
        &krate,
        &["report", "--store", c, "--store", d, "--format", "json"],
        None,
        &[],
    ));
    assert_eq!(
        suite(&latest, "tally")["coverage"]["complete"],
        false,
        "{latest:#}"
    );
    let all = parse_json(&heddle(
        &krate,
        &[
            "report", "--store", c, "--store", d, "--runs", "all", "--format", "json",
        ],
        None,
        &[],
    ));
    assert_eq!(all["runs"].as_array().map(Vec::len), Some(2), "{all:#}");
    assert_eq!(suite(&all, "tally")["coverage"]["complete"], true, "{all:#}");
}

/// Two projects building into one target directory (`CARGO_TARGET_DIR`, as the
/// end-to-end harness shares one): `report` in one of them shows its own latest run, the
/// other's later run neither chosen as "latest" nor counted in the header.
#[test]
fn a_shared_target_dir_keeps_projects_apart() {
    let a = create("ci_scope_a", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    let b = create("ci_scope_b", "tests/misting.rs", &flaky_once());
    let markers = b.root().join("markers");
    // plain `cargo test`, each recording into the shared target directory's store
    a.cargo(&words("test --test greenhouse --no-fail-fast"), None, &[])
        .assert_compiled();
    b.cargo(
        &words("test --test misting --no-fail-fast"),
        None,
        &[("MARKERS", markers.to_str().unwrap())],
    )
    .assert_compiled();
    let v = parse_json(&heddle(&a, &["report", "--format", "json"], None, &[]));
    let suites: Vec<&str> = v["suites"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["crate"].as_str().unwrap())
        .collect();
    assert_eq!(suites, ["ci_scope_a", "ci_scope_a"], "{v:#}");
    assert_eq!(v["runs"].as_array().map(Vec::len), Some(1), "{v:#}");
    let table = heddle(&a, &["report"], None, &[]);
    assert!(
        table.stdout.starts_with("heddle report: run "),
        "{}",
        table.stdout
    );
    assert!(table.stdout.contains(" · 2 suites"), "{}", table.stdout);
    assert!(!table.stdout.contains("ci_scope_b"), "{}", table.stdout);
    // `-p` names the package explicitly: the same run
    let p = parse_json(&heddle(
        &a,
        &words("report -p ci_scope_a --format json"),
        None,
        &[],
    ));
    assert_eq!(p["runs"], v["runs"]);
    // and from the other project, its own
    let vb = parse_json(&heddle(&b, &["report", "--format", "json"], None, &[]));
    assert!(
        vb["suites"]
            .as_array()
            .unwrap()
            .iter()
            .all(|s| s["crate"] == "ci_scope_b"),
        "{vb:#}"
    );
    assert_ne!(vb["runs"], v["runs"]);
}

/// `--fail-on` turns what the report finds into documented exit codes (failures 3,
/// flaky 4, incomplete 5), and `check` fails a crate that declares it pins
/// (`pinned = true`) when its pins file is gone.
#[test]
fn exit_codes_fail_ci_on_request() {
    let krate = create("ci_exit", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    let run = heddle(&krate, &words("test --quiet -- --test greenhouse"), None, &[]);
    assert_eq!(run.code, Some(101), "{}", run.stderr);
    let code = |args: &[&str]| {
        let mut full = vec!["report"];
        full.extend_from_slice(args);
        let r = heddle(&krate, &full, None, &[]);
        (r.code, r.stderr)
    };
    assert_eq!(code(&[]).0, Some(0), "a report alone exits 0");
    let (c, err) = code(&["--fail-on", "failures"]);
    assert_eq!(c, Some(3), "{err}");
    assert!(
        err.contains("failed in every run (`--fail-on failures`: exit code 3)"),
        "{err}"
    );
    assert_eq!(
        code(&["--fail-on", "flaky"]).0,
        Some(0),
        "no row both passed and failed"
    );
    assert_eq!(code(&["--fail-on", "flaky,incomplete"]).0, Some(0));
    assert_eq!(code(&words("--fail-on incomplete --fail-on failures")).0, Some(3));
    let partial = heddle(
        &krate,
        &words("test --quiet --fail-on incomplete -- --test greenhouse tally::row_00 -- --exact"),
        None,
        &[],
    );
    assert_eq!(partial.code, Some(5), "{}", partial.stderr);

    let flaky = create("ci_exit_flaky", "tests/misting.rs", &flaky_once());
    let markers = flaky.root().join("markers");
    let env = [("MARKERS", markers.to_str().unwrap())];
    let rounds = heddle(
        &flaky,
        &words("test --quiet --repeat 2 --fail-on flaky -- --test misting"),
        None,
        &env,
    );
    assert_eq!(rounds.code, Some(101), "the test run's own failure comes first");
    let r = heddle(&flaky, &["report", "--fail-on", "flaky"], None, &env);
    assert_eq!(r.code, Some(4), "{}", r.stderr);

    // a crate that pins: no pins file fails `check`
    let pinned = Scratch::create(&CrateDef {
        name: "ci_exit_pinned",
        metadata: Some("pinned = true"),
        files: &[("tests/greenhouse.rs", CLEAN_AND_PARITY)],
        ..CrateDef::default()
    })
    .unwrap_or_else(|e| panic!("{e}"));
    let check = heddle(&pinned, &["check"], None, &[]);
    assert_eq!(check.code, Some(1), "{}", check.stderr);
    assert!(
        check
            .stderr
            .contains("`ci_exit_pinned` declares `pinned = true` but has no `heddle-pins.toml`"),
        "{}",
        check.stderr
    );
    assert_eq!(heddle(&pinned, &["pin"], None, &[]).code, Some(0));
    let ok = heddle(&pinned, &["check"], None, &[]);
    assert_eq!(ok.code, Some(0), "{}", ok.stderr);
    // the build accepts the key
    let build = heddle(
        &pinned,
        &words("test --quiet -- --test greenhouse tally"),
        None,
        &[],
    );
    assert_eq!(build.code, Some(0), "{}", build.stderr);
    std::fs::remove_file(pinned.root().join("heddle-pins.toml")).unwrap();
    assert_eq!(heddle(&pinned, &["check"], None, &[]).code, Some(1));
}

/// stdout belongs to the report: `test --format junit > file` is XML alone (the test
/// run's output goes to stderr); `--quiet` still shows a build's errors; `--output`
/// writes the report's format to a file while the terminal shows the table.
#[test]
fn streams_keep_the_report_apart() {
    let krate = create("ci_streams", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    let run = heddle(
        &krate,
        &words("test --format junit -- --test greenhouse"),
        None,
        &[],
    );
    assert_eq!(run.code, Some(101), "{}", run.stderr);
    assert!(
        run.stdout.starts_with("<?xml"),
        "stdout is the XML alone:\n{}",
        run.stdout
    );
    assert!(!run.stdout.contains("running "), "{}", run.stdout);
    assert!(
        run.stderr.contains("running "),
        "the test output is on stderr: {}",
        run.stderr
    );
    quick_junit::Report::deserialize_from_str(&run.stdout).expect("the XML parses");
    junit_valid(&run.stdout);

    let file = krate.root().join("report.json");
    let both = heddle(
        &krate,
        &[
            "test",
            "--quiet",
            "--format",
            "json",
            "--output",
            file.to_str().unwrap(),
            "--",
            "--test",
            "greenhouse",
        ],
        None,
        &[],
    );
    assert!(
        both.stdout.starts_with("heddle report: run "),
        "the terminal shows the table: {}",
        both.stdout
    );
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(&file).unwrap()).expect("the file holds the JSON");
    assert!(v["suites"].as_array().is_some_and(|s| s.len() == 2), "{v:#}");

    // a build error is never hidden by --quiet
    krate.write(
        "tests/broken.rs",
        "#[test]\nfn f() {\n    let x: u32 = \"text\";\n}\n",
    );
    let broken = heddle(&krate, &words("test --quiet -- --test broken"), None, &[]);
    assert_ne!(broken.code, Some(0));
    assert!(broken.stderr.contains("error[E0308]"), "{}", broken.stderr);
    assert!(broken.stderr.contains("mismatched types"), "{}", broken.stderr);
}

/// The plugin reads the store where the runtime writes it: `HEDDLE_TARGET_DIR`,
/// `-- --target-dir DIR`, and a nextest archive run through `cargo heddle test` (the
/// binaries run from an extracted copy); a run that recorded nothing is an error saying
/// why, and `report` names the archive case when it finds no run.
#[test]
fn the_store_is_where_the_runtime_wrote_it() {
    let krate = create("ci_store", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    // HEDDLE_TARGET_DIR, for the test processes and the plugin alike
    let own = krate.store_dir("own");
    let run = heddle(
        &krate,
        &words("test --quiet --format json -- --test greenhouse tally"),
        Some(&own),
        &[],
    );
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    assert_eq!(suite(&parse_json(&run), "tally")["coverage"]["complete"], true);
    assert!(own.join("heddle/runs").is_dir());
    let again = heddle(&krate, &["report", "--format", "json"], Some(&own), &[]);
    assert_eq!(parse_json(&again)["runs"], parse_json(&run)["runs"]);

    // --target-dir among cargo's arguments: cargo builds there (the harness's shared
    // directory, already built), not where its configuration says
    let configured = krate.root().join("configured-target");
    let shared = heddle_e2e::scratch::shared_target_dir();
    let run = heddle(
        &krate,
        &[
            "test",
            "--quiet",
            "--format",
            "json",
            "--",
            "--test",
            "greenhouse",
            "tally",
            "--target-dir",
            shared.to_str().unwrap(),
        ],
        None,
        &[("CARGO_TARGET_DIR", configured.to_str().unwrap())],
    );
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    assert_eq!(suite(&parse_json(&run), "tally")["coverage"]["complete"], true);
    assert!(!configured.join("heddle").exists());

    // nothing recorded: an error with the reason
    let none = heddle(
        &krate,
        &words("test --quiet -- --test greenhouse no_such_test"),
        None,
        &[],
    );
    assert_eq!(none.code, Some(1), "{}", none.stderr);
    assert!(
        none.stderr.contains("recorded nothing: no `#[cover]` test ran"),
        "{}",
        none.stderr
    );
    // with `--fail-on incomplete`, the gate's own code, as `report` gives
    let gated = heddle(
        &krate,
        &words("test --quiet --fail-on incomplete -- --test greenhouse no_such_test"),
        None,
        &[],
    );
    assert_eq!(gated.code, Some(5), "{}", gated.stderr);
    assert!(
        gated.stderr.contains("recorded nothing")
            && gated.stderr.contains("(`--fail-on incomplete`: exit code 5)"),
        "{}",
        gated.stderr
    );

    if have_nextest() {
        let archive = krate.root().join("tests.tar.zst");
        let archive = archive.to_str().unwrap();
        krate
            .cargo(&["nextest", "archive", "--archive-file", archive], None, &[])
            .assert_compiled();
        let from_archive = heddle(
            &krate,
            &[
                "test",
                "--nextest",
                "--quiet",
                "--format",
                "json",
                "--",
                "--archive-file",
                archive,
                "-E",
                "test(/^tally::/)",
            ],
            None,
            &[],
        );
        assert_eq!(from_archive.code, Some(0), "{}", from_archive.stderr);
        assert_eq!(
            suite(&parse_json(&from_archive), "tally")["coverage"]["complete"],
            true
        );
        // straight from nextest, the runtime cannot find cargo's target directory and
        // records nothing: a report that finds no store says where records go then
        let bare = krate.store_dir("bare");
        let report = heddle(&krate, &["report", "--store", bare.to_str().unwrap()], None, &[]);
        assert_eq!(report.code, Some(2));
        assert!(report.stderr.contains("nextest archive"), "{}", report.stderr);
    }
}

/// Runs a rerun command the report printed, as a person would paste it into a shell in
/// `dir` (the one quoted filter has no spaces).
fn paste(krate: &Scratch, command: &str, dir: &Path) -> std::process::Output {
    let words: Vec<String> = command.split_whitespace().map(|w| w.replace('\'', "")).collect();
    assert_eq!(words[0], "cargo", "{command}");
    std::process::Command::new(cargo_program())
        .args(&words[1..])
        .current_dir(dir)
        .env("CARGO_TARGET_DIR", heddle_e2e::scratch::shared_target_dir())
        .env("MARKERS", krate.root().join("markers"))
        .output()
        .expect("cargo starts")
}

/// The λ advice counts the rounds already run (`--repeat`), and a failing row's rerun
/// command is the runner's own (nextest's filterset under nextest) and carries
/// `--manifest-path` when the report was asked for with one, so it works pasted from
/// another directory.
#[test]
fn advice_and_rerun_commands_fit_the_run() {
    let krate = create("ci_rerun", "tests/misting.rs", &flaky_once());
    let markers = krate.root().join("markers");
    let env = [("MARKERS", markers.to_str().unwrap())];
    let run = heddle(
        &krate,
        &words("test --quiet --repeat 3 --format json -- --test misting"),
        None,
        &env,
    );
    let v = parse_json(&run);
    let misting = suite(&v, "misting");
    assert_eq!(misting["advice"]["rounds"], 3, "{misting:#}");
    assert_eq!(misting["advice"]["runs_per_interaction"], 6, "{misting:#}");
    let table = heddle(&krate, &["report"], None, &env);
    assert!(
        table
            .stdout
            .contains("at lambda 2 over 3 rounds (6 runs per interaction)"),
        "{}",
        table.stdout
    );

    // from another directory, with --manifest-path
    let manifest = krate.root().join("Cargo.toml");
    let manifest = manifest.to_str().unwrap();
    let elsewhere = tempfile::tempdir().unwrap();
    let v = parse_json(&heddle(
        &krate,
        &["report", "--manifest-path", manifest, "--format", "json"],
        None,
        &env,
    ));
    let rerun = suite(&v, "valves")["failing_rows"][0]["rerun"]
        .as_str()
        .unwrap()
        .to_string();
    assert!(
        rerun.starts_with(&format!(
            "cargo test --manifest-path {manifest} -p ci_rerun --test misting valves::row_"
        )),
        "{rerun}"
    );
    let pasted = paste(&krate, &rerun, elsewhere.path());
    let out = String::from_utf8_lossy(&pasted.stdout);
    assert!(out.contains("1 failed"), "the row reruns and fails: {out}");

    if have_nextest() {
        let run = heddle(
            &krate,
            &words("test --nextest --quiet --format json -- --test misting"),
            None,
            &env,
        );
        let v = parse_json(&run);
        let rerun = suite(&v, "valves")["failing_rows"][0]["rerun"]
            .as_str()
            .unwrap()
            .to_string();
        assert!(
            rerun.starts_with("cargo nextest run -p ci_rerun --test misting -E 'test(=valves::row_"),
            "{rerun}"
        );
        let pasted = paste(&krate, &rerun, krate.root());
        let text = format!(
            "{}{}",
            String::from_utf8_lossy(&pasted.stdout),
            String::from_utf8_lossy(&pasted.stderr)
        );
        assert!(
            text.contains("1 test run: 0 passed, 1 failed"),
            "exactly the row runs: {text}"
        );
    }
}

/// A seed above 2^53 (where JSON readers holding numbers as doubles lose digits) reads
/// the same, in decimal, in the JSON report (a string), the table, JUnit's properties,
/// the pins file (format 2) and `design`'s JSON; a pins file of format 1 (hex seeds) is
/// refused by the build with a message saying how to upgrade, and `pin` upgrades it.
#[test]
fn seeds_are_decimal_everywhere() {
    const SEED: &str = "18446744073709551557"; // 2^64 − 59, far above 2^53
    let source = format!(
        "#[heddle_test::cover(strength = 2, seed = {SEED})]\n\
         fn vents(#[levels(1, 2, 3)] a: u8, #[levels(true, false)] b: bool, #[levels(\"x\", \"y\")] c: &str) {{\n\
         \x20   let _ = (a, b, c);\n}}\n"
    );
    let krate = create("ci_seeds", "tests/vents.rs", &source);
    let run = heddle(&krate, &words("test --quiet --format json"), None, &[]);
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    let v = parse_json(&run);
    assert_eq!(v["format"], 2);
    assert_eq!(suite(&v, "vents")["seed"], SEED, "the seed is a decimal string");
    let table = heddle(&krate, &["report"], None, &[]);
    assert!(
        table.stdout.contains(&format!("seed {SEED} ")),
        "{}",
        table.stdout
    );
    let junit = heddle(&krate, &["report", "--format", "junit"], None, &[]);
    assert!(
        junit
            .stdout
            .contains(&format!("<property name=\"heddle.seed\" value=\"{SEED}\"/>")),
        "{}",
        junit.stdout
    );
    junit_valid(&junit.stdout);

    assert_eq!(heddle(&krate, &["pin"], None, &[]).code, Some(0));
    let pins = krate.read("heddle-pins.toml");
    assert!(pins.contains("\nformat = 2\n"), "{pins}");
    assert!(pins.contains(&format!("seed = \"{SEED}\"\n")), "{pins}");

    // the same file in format 1, as an older heddle wrote it
    let old = pins.replace("\nformat = 2\n", "\nformat = 1\n").replace(
        &format!("seed = \"{SEED}\""),
        &format!("seed = \"{:016x}\"", SEED.parse::<u64>().unwrap()),
    );
    krate.write("heddle-pins.toml", &old);
    let check = heddle(&krate, &["check"], None, &[]);
    assert_eq!(check.code, Some(2), "{}", check.stderr);
    assert!(
        check.stderr.contains("has `format = 1` (seeds in hex)"),
        "{}",
        check.stderr
    );
    let build = heddle(&krate, &["test", "--quiet"], None, &[]);
    assert_ne!(build.code, Some(0));
    assert!(
        build.stderr.contains("run `cargo heddle pin`"),
        "{}",
        build.stderr
    );
    let upgrade = heddle(&krate, &["pin"], None, &[]);
    assert_eq!(upgrade.code, Some(0), "{}", upgrade.stderr);
    assert_eq!(
        krate.read("heddle-pins.toml"),
        pins,
        "pin rewrites format 1 as format 2, rows kept"
    );
    assert_eq!(heddle(&krate, &["check"], None, &[]).code, Some(0));

    let design = heddle(
        &krate,
        &["design", "2^3", "--seed", SEED, "--format", "json"],
        None,
        &[],
    );
    let d: Value = serde_json::from_str(&design.stdout).expect("design JSON");
    assert_eq!(d["parameters"]["seed"], SEED);
}

/// `cargo heddle ARGS` with the colour environment given and nothing else: the harness's
/// `CARGO_TERM_COLOR=never` back to `auto` (cargo refuses an empty value), no
/// `NO_COLOR`.
fn heddle_colour(krate: &Scratch, args: &[&str], env: &[(&str, &str)]) -> Run {
    let mut full = vec!["heddle"];
    full.extend_from_slice(args);
    let mut all_env = vec![("CARGO_TERM_COLOR", "auto")];
    all_env.extend_from_slice(env);
    krate.run_program(env!("CARGO_BIN_EXE_cargo-heddle").as_ref(), &full, None, &all_env)
}

/// The same on a pseudo-terminal (`script` from util-linux), for the `auto` cases.
fn heddle_on_tty(krate: &Scratch, args: &str, env: &[(&str, &str)]) -> Option<Run> {
    if !have_tool("script (util-linux)", "script".as_ref(), &["--version"]) {
        return None;
    }
    let command = format!("{} heddle {args}", env!("CARGO_BIN_EXE_cargo-heddle"));
    let mut all_env = vec![("CARGO_TERM_COLOR", "auto")];
    all_env.extend_from_slice(env);
    Some(krate.run_program(
        "script".as_ref(),
        &["-qec", &command, "/dev/null"],
        None,
        &all_env,
    ))
}

/// Colours follow `--color`, `CARGO_TERM_COLOR`, `NO_COLOR`, `CLICOLOR`,
/// `CLICOLOR_FORCE` and `TERM=dumb`, written with anstyle's sequences.
#[test]
fn colour_follows_the_conventions() {
    let krate = create("ci_colour", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    heddle(&krate, &words("test --quiet -- --test greenhouse"), None, &[]);
    let coloured = |run: &Run| run.stdout.contains("\x1b[");
    let red = "\x1b[31m";
    let piped = heddle_colour(&krate, &["report"], &[]);
    assert!(!coloured(&piped), "no colours into a pipe: {}", piped.stdout);
    let always = heddle_colour(&krate, &["report", "--color", "always"], &[]);
    assert!(always.stdout.contains(red), "{}", always.stdout);
    for (env, want) in [
        (&[("CARGO_TERM_COLOR", "always")][..], true),
        (&[("CLICOLOR_FORCE", "1")][..], true),
        (&[("CLICOLOR_FORCE", "1"), ("NO_COLOR", "1")][..], false),
        (
            &[("CARGO_TERM_COLOR", "never"), ("CLICOLOR_FORCE", "1")][..],
            false,
        ),
    ] {
        let run = heddle_colour(&krate, &["report"], env);
        assert_eq!(coloured(&run), want, "{env:?}: {}", run.stdout);
    }
    let never = heddle_colour(
        &krate,
        &["report", "--color", "never"],
        &[("CARGO_TERM_COLOR", "always")],
    );
    assert!(!coloured(&never), "the flag wins: {}", never.stdout);

    // on a terminal, `auto` colours unless the terminal or the user says otherwise
    if let Some(tty) = heddle_on_tty(&krate, "report", &[("TERM", "xterm")]) {
        assert!(coloured(&tty), "a terminal gets colours: {}", tty.stdout);
        for env in [
            &[("TERM", "dumb")][..],
            &[("TERM", "xterm"), ("NO_COLOR", "1")][..],
            &[("TERM", "xterm"), ("CLICOLOR", "0")][..],
        ] {
            let run = heddle_on_tty(&krate, "report", env).unwrap();
            assert!(!coloured(&run), "{env:?}: {}", run.stdout);
            assert!(run.stdout.contains("heddle report:"), "{env:?}: {}", run.stdout);
        }
    }
}

/// A row body knows its row: one call gives per-row snapshot names and directories, in
/// sync rows and in async rows across awaits (tokio, current-thread and multi-thread).
#[test]
fn a_row_body_knows_its_row() {
    const SNAPSHOTS: &str = r#"//! Every row writes its own snapshot file, named by its row.

fn write(kind: &str) {
    let row = heddle_test::current_row().expect("inside a row body");
    let dir = std::path::PathBuf::from(std::env::var("SNAPSHOTS").unwrap()).join(kind);
    std::fs::create_dir_all(&dir).unwrap();
    let labels: Vec<String> = row.labels().iter().map(|(p, l)| format!("{p}={l}")).collect();
    let text = format!("{} {} {}\n", row.test_name(), row.index(), labels.join(","));
    let path = dir.join(format!("{}.snap", row.slug()));
    assert!(!path.exists(), "two rows wrote {}", path.display());
    std::fs::write(path, text).unwrap();
}

#[heddle_test::cover(strength = 2, seed = 8)]
fn sensors(#[levels(1, 2, 3)] count: u8, #[levels("probe", "array")] kind: &str, #[levels(true, false)] wired: bool) {
    let _ = (count, kind, wired);
    write("sync");
}

#[heddle_test::cover(strength = 2, seed = 8)]
#[tokio::test]
async fn sensors_async(#[levels(1, 2, 3)] count: u8, #[levels("probe", "array")] kind: &str) {
    let _ = (count, kind);
    tokio::task::yield_now().await;
    write("current-thread");
}

#[heddle_test::cover(strength = 2, seed = 8)]
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn sensors_threads(#[levels(1, 2, 3)] count: u8, #[levels("probe", "array")] kind: &str) {
    let _ = (count, kind);
    for _ in 0..3 {
        tokio::task::yield_now().await;
    }
    write("multi-thread");
    assert!(heddle_test::current_row().is_some());
}

#[test]
fn outside_a_row_there_is_none() {
    assert!(heddle_test::current_row().is_none());
}
"#;
    let krate = match Scratch::create(&CrateDef {
        name: "ci_row_info",
        dev_dependencies: &[
            r#"tokio = { version = "1", default-features = false, features = ["rt", "rt-multi-thread", "macros"] }"#,
        ],
        files: &[("tests/snap.rs", SNAPSHOTS)],
        ..CrateDef::default()
    }) {
        Ok(k) => k,
        Err(e) => {
            let ci = std::env::var_os("CI").is_some_and(|v| !v.is_empty());
            assert!(!ci, "tokio cannot be had on CI: {e}");
            note(&format!("SKIPPED a_row_body_knows_its_row: {e}"));
            return;
        }
    };
    let snapshots = krate.root().join("snapshots");
    let run = heddle(
        &krate,
        &words("test --quiet --format json -- --test snap"),
        None,
        &[("SNAPSHOTS", snapshots.to_str().unwrap())],
    );
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    let v = parse_json(&run);
    for (kind, function) in [
        ("sync", "sensors"),
        ("current-thread", "sensors_async"),
        ("multi-thread", "sensors_threads"),
    ] {
        let rows = suite(&v, function)["rows"].as_u64().unwrap() as usize;
        let mut names: Vec<String> = std::fs::read_dir(snapshots.join(kind))
            .unwrap_or_else(|e| panic!("{kind}: {e}"))
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        let want: Vec<String> = (0..rows).map(|r| format!("{function}-row_{r:02}.snap")).collect();
        assert_eq!(names, want, "{kind}: one snapshot per row, named by the row");
        let first = std::fs::read_to_string(snapshots.join(kind).join(&want[0])).unwrap();
        assert!(
            first.starts_with(&format!("{function}::row_00 0 count=")),
            "{first}"
        );
    }
}

/// The store keeps a bounded history: `cargo heddle test` prunes to `HEDDLE_KEEP_RUNS`
/// runs per package, `runs` lists what is there, `runs prune` removes more by hand (a
/// dry run first), and a retention that is not a number is a named error.
#[test]
fn runs_are_listed_and_pruned() {
    let krate = create("ci_runs", "tests/greenhouse.rs", CLEAN_AND_PARITY);
    let store = krate.store_dir("history");
    let mut ids = Vec::new();
    for _ in 0..4 {
        let run = heddle(
            &krate,
            &words("test --quiet -- --test greenhouse tally"),
            Some(&store),
            &[("HEDDLE_KEEP_RUNS", "3")],
        );
        assert_eq!(run.code, Some(0), "{}", run.stderr);
        ids.push(run_id(&run));
    }
    let list = heddle(&krate, &["runs"], Some(&store), &[]);
    assert_eq!(list.code, Some(0), "{}", list.stderr);
    assert!(list.stdout.starts_with("3 runs in "), "{}", list.stdout);
    let listed: Vec<&str> = list
        .stdout
        .lines()
        .skip(1)
        .filter_map(|l| l.split_whitespace().next())
        .collect();
    let newest: Vec<&str> = ids.iter().rev().take(3).map(String::as_str).collect();
    assert_eq!(listed, newest, "newest first, the oldest pruned");
    assert!(
        list.stdout.lines().nth(1).unwrap().ends_with("ci_runs"),
        "{}",
        list.stdout
    );

    let dry = heddle(&krate, &words("runs prune --keep 1 --dry-run"), Some(&store), &[]);
    assert!(
        dry.stdout.contains("would remove 2 of 3 runs, kept 1"),
        "{}",
        dry.stdout
    );
    assert!(
        heddle(&krate, &["runs"], Some(&store), &[])
            .stdout
            .starts_with("3 runs")
    );
    let pruned = heddle(&krate, &words("runs prune --keep 1"), Some(&store), &[]);
    assert!(
        pruned.stdout.contains("removed 2 of 3 runs, kept 1"),
        "{}",
        pruned.stdout
    );
    let left = std::fs::read_dir(store.join("heddle/runs")).unwrap().count();
    assert_eq!(left, 1);
    let report = parse_json(&heddle(
        &krate,
        &["report", "--format", "json"],
        Some(&store),
        &[],
    ));
    assert_eq!(report["runs"], serde_json::json!([ids[3]]));

    let bad = heddle(
        &krate,
        &["test", "--quiet"],
        Some(&store),
        &[("HEDDLE_KEEP_RUNS", "many")],
    );
    assert_eq!(bad.code, Some(2));
    assert!(
        bad.stderr
            .contains("`HEDDLE_KEEP_RUNS` is `many`, not a count of runs"),
        "{}",
        bad.stderr
    );

    // a bad run id is a usage error in the command line's shape: the hint on a line of its own
    let bad = heddle(
        &krate,
        &["test", "--quiet"],
        Some(&store),
        &[("HEDDLE_RUN_ID", "a b")],
    );
    assert_eq!(bad.code, Some(2));
    assert!(
        bad.stderr.contains(
            "error: `HEDDLE_RUN_ID`: invalid run id `a b`: it holds a character other than \
             a letter, digit, `.`, `_` or `-`\n  hint: use ASCII letters"
        ),
        "{}",
        bad.stderr
    );
}

/// The shell lines of one `# recipe:NAME` … `# recipe:end` block of a CI recipe file,
/// with `cargo heddle` pointed at the binary under test.
fn recipe_block(recipe: &str, name: &str) -> String {
    let start = format!("# recipe:{name}");
    let mut lines = recipe.lines().skip_while(|l| l.trim() != start).skip(1);
    let block: Vec<&str> = lines
        .by_ref()
        .take_while(|l| l.trim() != "# recipe:end")
        .collect();
    assert!(!block.is_empty(), "no `{start}` block");
    let bin = env!("CARGO_BIN_EXE_cargo-heddle");
    block
        .iter()
        .map(|l| l.trim().replace("cargo heddle ", &format!("{bin} heddle ")))
        .collect::<Vec<_>>()
        .join("\n")
}

/// Runs a recipe block with `sh -e` in the crate, as a CI job's shell would.
fn run_block(krate: &Scratch, block: &str, env: &[(&str, &str)]) -> Run {
    let mut all = vec![("CARGO_NET_OFFLINE", "true"), ("CI", "true")];
    all.extend_from_slice(env);
    krate.run_program("sh".as_ref(), &["-ec", block], None, &all)
}

/// The CI recipes of `docs/ci/`, run locally: two nextest partitions (jobs) whose
/// stores come back as artifacts, a row that passes on nextest's retry, the report job
/// merging the shards into the kept history (JUnit valid against the Jenkins schema with
/// a `flakyFailure`, the markdown summary, the history JSON) and its gate; then a second
/// pipeline missing a shard, which the gate fails as incomplete (exit 5).
#[test]
fn the_ci_recipes_work_with_two_shards_and_a_retry() {
    if !have_nextest() {
        return;
    }
    const SHELVES: &str = r#"
#[heddle_test::cover(strength = 2, seed = 3)]
fn shelves(#[levels(1, 2, 3)] count: u32, #[levels("fan", "vent")] air: &str, #[levels(true, false)] lit: bool) {
    let _ = (count, air, lit);
}
"#;
    let suite_text =
        format!("//! One row pair fails on its first try only; the rest is clean.\n{MISTING}{SHELVES}");
    let docs = Path::new(env!("CARGO_MANIFEST_DIR")).join("../docs/ci");
    for (recipe, pipeline, next) in [
        (
            "github-actions.yml",
            [("GITHUB_RUN_ID", "900"), ("GITHUB_RUN_ATTEMPT", "1")],
            [("GITHUB_RUN_ID", "901"), ("GITHUB_RUN_ATTEMPT", "1")],
        ),
        (
            "gitlab-ci.yml",
            [("CI_PIPELINE_ID", "900"), ("CI_JOB_ID", "1")],
            [("CI_PIPELINE_ID", "901"), ("CI_JOB_ID", "2")],
        ),
    ] {
        let text = std::fs::read_to_string(docs.join(recipe)).unwrap();
        let name = format!("ci_recipe_{}", recipe.split('-').next().unwrap());
        let krate = create(&name, "tests/misting.rs", &suite_text);
        let root = krate.root();
        let markers = root.join("markers");
        let summary = root.join("step-summary.md");
        let common = |pipeline: &[(&'static str, &'static str)]| {
            let mut env: Vec<(&str, String)> = pipeline.iter().map(|(k, v)| (*k, v.to_string())).collect();
            env.push(("MARKERS", markers.to_string_lossy().into_owned()));
            env.push(("GITHUB_STEP_SUMMARY", summary.to_string_lossy().into_owned()));
            env.push(("SHARDS", "2".into()));
            env.push(("CI_NODE_TOTAL", "2".into()));
            env
        };
        let with = |env: &Vec<(&str, String)>, extra: &[(&'static str, String)]| -> Vec<(String, String)> {
            env.iter()
                .map(|(k, v)| (k.to_string(), v.clone()))
                .chain(extra.iter().map(|(k, v)| (k.to_string(), v.clone())))
                .collect()
        };
        let run = |block: &str, env: &[(String, String)]| {
            let env: Vec<(&str, &str)> = env.iter().map(|(k, v)| (k.as_str(), v.as_str())).collect();
            run_block(&krate, block, &env)
        };
        // the artifact a shard job uploads, as the report job downloads it
        let collect = |label: &str| {
            let dest = root.join("shards").join(label);
            std::fs::create_dir_all(&dest).unwrap();
            std::fs::rename(root.join("heddle-store/heddle"), dest.join("heddle")).unwrap();
        };

        let check = run(&recipe_block(&text, "check"), &with(&common(&pipeline), &[]));
        assert_eq!(check.code, Some(0), "{recipe} check: {}", check.stderr);

        let env = common(&pipeline);
        for shard in ["1", "2"] {
            let job = run(
                &recipe_block(&text, "shard"),
                &with(&env, &[("SHARD", shard.into()), ("CI_NODE_INDEX", shard.into())]),
            );
            assert_eq!(
                job.code,
                Some(0),
                "{recipe} shard {shard}: the retry passes\n{}",
                job.stderr
            );
            collect(&format!("heddle-shard-{shard}"));
        }
        let report = run(&recipe_block(&text, "report"), &with(&env, &[]));
        assert_eq!(
            report.code,
            Some(0),
            "{recipe} report:\n{}\n{}",
            report.stdout,
            report.stderr
        );
        let junit = std::fs::read_to_string(root.join("heddle-junit.xml")).unwrap();
        junit_valid(&junit);
        assert!(junit.contains("<flakyFailure "), "the retried rows: {junit}");
        let md = std::fs::read_to_string(root.join("heddle-summary.md")).unwrap();
        assert!(md.starts_with("## heddle report"), "{md}");
        assert!(!md.contains("partial run"), "the shards merged: {md}");
        if recipe.starts_with("github") {
            let page = std::fs::read_to_string(&summary).unwrap();
            assert_eq!(page, md, "the summary is on the job page");
        }
        let history: Value =
            serde_json::from_str(&std::fs::read_to_string(root.join("heddle-history.json")).unwrap())
                .unwrap();
        let id = if recipe.starts_with("github") {
            "gha-900-1"
        } else {
            "gitlab-900"
        };
        assert_eq!(
            history["runs"],
            serde_json::json!([id]),
            "one run for the pipeline's two shards"
        );
        let misting = suite(&history, "misting");
        assert_eq!(misting["suspects"][0]["verdict"], "flaky", "{misting:#}");
        assert_eq!(misting["coverage"]["complete"], true);

        // the next pipeline: shard 2 never reports back
        std::fs::remove_dir_all(root.join("shards")).unwrap();
        let env = common(&next);
        let job = run(
            &recipe_block(&text, "shard"),
            &with(&env, &[("SHARD", "1".into()), ("CI_NODE_INDEX", "1".into())]),
        );
        assert_eq!(job.code, Some(0), "{}", job.stderr);
        collect("heddle-shard-1");
        let report = run(&recipe_block(&text, "report"), &with(&env, &[]));
        assert_eq!(
            report.code,
            Some(5),
            "{recipe}: a missing shard is incomplete\n{}\n{}",
            report.stdout,
            report.stderr
        );
        assert!(
            report.stdout.contains("partial run, not all clear"),
            "{}",
            report.stdout
        );
        let history: Value =
            serde_json::from_str(&std::fs::read_to_string(root.join("heddle-history.json")).unwrap())
                .unwrap();
        assert_eq!(
            history["runs"].as_array().map(Vec::len),
            Some(2),
            "the kept store is history: {history:#}"
        );
    }
}
