//! The design controls through the built `cargo-heddle` binary on a real temporary crate
//! (heddle's end-to-end harness): follow-up rows that name an aliased pair (`test`,
//! `probe`, `test` again), then a row budget from the command line. One crate, built
//! incrementally.

use heddle_e2e::scratch::{CrateDef, Run, Scratch};

/// Four knobs of three levels at λ = 1: the engine builds the orthogonal array OA(9;
/// 2, 4, 3), in which no two rows share a pair, so the one failing row's six pairs are
/// aliases the design cannot tell apart.
const SUITE: &str = r#"//! A sensor hub's frame encoder with a planted defect: delta coding of Fahrenheit
//! readings.

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Codec { Plain, Rle, Delta }

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Unit { Celsius, Fahrenheit, Kelvin }

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Flush { Never, OnClose, Always }

fn encode(codec: Codec, unit: Unit, batch: usize) -> usize {
    // the defect: deltas of Fahrenheit readings lose their sign bit
    if codec == Codec::Delta && unit == Unit::Fahrenheit { batch + 1 } else { batch }
}

#[heddle_test::cover(seed = 7)]
fn frame(
    #[levels(Codec::Plain, Codec::Rle, Codec::Delta)] codec: Codec,
    #[levels(Unit::Celsius, Unit::Fahrenheit, Unit::Kelvin)] unit: Unit,
    #[levels(1, 8, 64)] batch: usize,
    #[levels(Flush::Never, Flush::OnClose, Flush::Always)] flush: Flush,
) {
    let _ = flush;
    assert_eq!(encode(codec, unit, batch), batch, "frame length is off");
}
"#;

fn heddle(krate: &Scratch, args: &[&str]) -> Run {
    krate.heddle(env!("CARGO_BIN_EXE_cargo-heddle"), args)
}

fn json(run: &Run) -> serde_json::Value {
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}\n{}", run.stdout, run.stderr))
}

/// The suspects that explain failures.
fn named(v: &serde_json::Value) -> Vec<serde_json::Value> {
    v["suites"][0]["suspects"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|s| s["explains"].as_u64() > Some(0))
        .map(|s| s["levels"].clone())
        .collect()
}

#[test]
fn follow_up_rows_and_a_budget_from_the_command_line() {
    let krate = Scratch::create(&CrateDef {
        name: "controls_hub",
        files: &[("tests/hub.rs", SUITE)],
        ..CrateDef::default()
    })
    .expect("the temporary crate resolves");
    let planted = serde_json::json!({"codec": "Codec::Delta", "unit": "Unit::Fahrenheit"});

    // 1. one failing row, six aliased pairs: the report cannot single one out
    let run = heddle(&krate, &["test", "--quiet", "--format", "json"]);
    assert_eq!(run.code, Some(101), "{}", run.stderr);
    let v = json(&run);
    assert_eq!(v["suites"][0]["failed"], 1, "{}", run.stdout);
    let before = named(&v);
    assert!(before.len() > 1 && before.contains(&planted), "{before:?}");

    // 2. `probe` writes follow-up rows for the function into the pins file
    let probe = heddle(&krate, &["probe"]);
    assert_eq!(probe.code, Some(0), "{}", probe.stderr);
    assert!(
        probe.stdout.starts_with("tests/hub.rs:") && probe.stdout.contains(" frame: "),
        "{}",
        probe.stdout
    );
    assert!(probe.stdout.contains("follow-up row"), "{}", probe.stdout);
    let pins = heddle_syntax::PinsFile::parse(&krate.read("heddle-pins.toml")).expect("the pins file parses");
    let followups = &pins
        .followup(&heddle_syntax::PinKey::new("tests/hub.rs", "frame"))
        .expect("follow-up rows for `frame`")
        .rows;
    let rows = followups.len();
    let distinct: std::collections::BTreeSet<&Vec<u8>> = followups.iter().collect();
    assert!(
        (1..=4).contains(&distinct.len()),
        "at most one distinct row per factor: {followups:?}"
    );

    // 3. the next run holds them as ordinary rows, and the report names the planted pair
    let run = heddle(&krate, &["test", "--quiet", "--format", "json"]);
    assert_eq!(run.code, Some(101), "{}", run.stderr);
    let v = json(&run);
    let suite = &v["suites"][0];
    assert_eq!(suite["followups"].as_u64(), Some(rows as u64));
    assert_eq!(suite["rows"].as_u64(), Some(9 + rows as u64));
    assert_eq!(named(&v), vec![planted.clone()], "{}", run.stdout);
    assert_eq!(suite["suspects"][0]["always"], true);
    let probe = heddle(&krate, &["probe"]);
    assert_eq!(probe.code, Some(0), "{}", probe.stderr);
    assert!(
        probe.stdout.contains(
            "no follow-up rows needed, the report names `codec = Codec::Delta, unit = Unit::Fahrenheit`"
        ),
        "{}",
        probe.stdout
    );
    // a failing follow-up row reruns like any other row
    let failing = suite["failing_rows"].as_array().unwrap();
    let followed = failing
        .iter()
        .find(|r| r["test"].as_str().is_some_and(|t| t.contains("::row_followup_")))
        .expect("a follow-up row holding the planted pair failed");
    let rerun: Vec<&str> = followed["rerun"].as_str().unwrap().split_whitespace().collect();
    assert_eq!(&rerun[..2], ["cargo", "test"], "{rerun:?}");
    let again = krate.cargo(&rerun[1..], None, &[]);
    assert!(again.stdout.contains("1 failed"), "{}", again.stdout);
    assert!(again.stdout.contains("follow-up row"), "{}", again.stdout);

    // 4. a budget from the command line: rows past it are ignored, the run is partial
    let run = heddle(&krate, &["test", "--budget", "3", "--format", "json"]);
    assert!(run.stdout.contains("\"budget\""), "{}", run.stdout);
    let v: serde_json::Value =
        { serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout)) };
    let suite = &v["suites"][0];
    assert_eq!(suite["budget"]["rows"], 3);
    assert_eq!(suite["budget"]["of"], 9);
    assert_eq!(suite["not_run"].as_u64(), Some(6));
    assert!(run.stderr.contains(", row budget 3"), "{}", run.stderr);
    // the test run's own output is on stderr (stdout is the report's alone)
    assert!(
        run.stderr
            .contains("ignored, heddle: past the row budget, `HEDDLE_BUDGET=3` runs 3 of 9 rows"),
        "{}",
        run.stderr
    );
    assert!(run.stderr.contains("6 ignored"), "{}", run.stderr);
}
