//! The main temporary crate (`fixtures::SUITES`): built once, run under `cargo test`,
//! then the same build rerun by filter, by its own rerun command and under nextest,
//! and finally cleaned and rebuilt. Each check is a named step; all steps run and the
//! test fails listing every failed one.

use std::collections::BTreeMap;
use std::path::Path;

use heddle_e2e::coverage::{
    all_rows, check_by_definition, engine_spec, labels, same_constraints, verify_recorded,
};
use heddle_e2e::ensure;
use heddle_e2e::fixtures::{self, SUITES, SUITES_EXPECT, SUITES_FILE, SUITES_SILENT, SUITES_TARGET, expect};
use heddle_e2e::output::{self, Status, TestLine};
use heddle_e2e::records::check_suite;
use heddle_e2e::scratch::{self, CrateDef, Run, Scratch};
use heddle_e2e::steps::{Steps, read_store, skip, suite};
use heddle_generator::{Effort, generate};
use heddle_store::{Interaction, tally};
use heddle_store::{Records, Store};
use heddle_syntax::Defaults;
use heddle_test::record::{Line, Outcome, SpecRecord};

const KRATE: &str = "e2e_suites";

/// The first `cargo test` of the crate: what every later step compares against.
struct Main {
    run: Run,
    tests: BTreeMap<String, TestLine>,
    records: Records,
}

fn test_args() -> Vec<&'static str> {
    vec!["test", "--test", SUITES_TARGET]
}

/// Recorded outcome per test name.
fn outcomes(records: &Records) -> BTreeMap<String, Outcome> {
    records
        .suites
        .iter()
        .flat_map(|s| s.rows.iter().map(|r| (r.test.clone(), r.outcome)))
        .collect()
}

fn spec_of<'a>(records: &'a Records, function: &str) -> Result<&'a SpecRecord, String> {
    suite(records, function).map(|s| &s.spec)
}

#[test]
fn suites_crate_end_to_end() {
    let krate = Scratch::create(&CrateDef {
        name: KRATE,
        files: &[(SUITES_FILE, SUITES)],
        ..CrateDef::default()
    })
    .unwrap_or_else(|e| panic!("{e}"));
    let store = krate.store_dir("main");
    let run = krate.cargo(&test_args(), Some(&store), &[]);
    run.assert_compiled();
    assert!(
        !run.succeeded(),
        "the planted defects must fail the run:\n{}",
        run.stdout
    );
    let tests = output::libtest_results(&run.stdout);
    let records = read_store(&store).unwrap_or_else(|e| panic!("{e}"));
    let main = Main { run, tests, records };

    let mut steps = Steps::new();
    steps.run("one run, one process file, nothing skipped", || {
        store_shape(&main)
    });
    steps.run("spec lines match the source and the engine", || spec_lines(&main));
    steps.run("rows form covering arrays; excludes respected", || {
        covering(&main)
    });
    steps.run("failing rows are exactly the planted ones", || planted(&main));
    steps.run("failing rows explain themselves", || messages(&main));
    steps.run("#[ignore] rows run with --ignored", || ignored(&krate, &main));
    steps.run("`fn::row_03 -- --exact` runs one row", || exact(&krate, &main));
    steps.run("the printed rerun command reruns the row", || {
        rerun(&krate, &main)
    });
    steps.run("nextest: one run id, a file per process, same outcomes", || {
        nextest(&krate, &main)
    });
    steps.run("a clean rebuild gives identical rows", || rebuild(&krate, &main));
    steps.finish();
}

fn store_shape(main: &Main) -> Result<(), String> {
    let r = &main.records;
    ensure!(r.runs.len() == 1, "{} runs recorded", r.runs.len());
    // the test binary is one process; without HEDDLE_RUN_ID it is a run of its own
    ensure!(
        r.runs[0].files.len() == 1,
        "{} process files",
        r.runs[0].files.len()
    );
    ensure!(r.stats.skipped() == 0, "lines skipped: {:?}", r.stats.notes());
    ensure!(
        r.stats.spec_lines == r.suites.len(),
        "{} spec lines for {} suites",
        r.stats.spec_lines,
        r.suites.len()
    );
    let mut recorded: Vec<&str> = r.suites.iter().map(|s| s.spec.function.as_str()).collect();
    recorded.sort_unstable();
    let mut want: Vec<&str> = SUITES_EXPECT
        .iter()
        .map(|e| e.function)
        .filter(|f| !SUITES_SILENT.contains(f))
        .collect();
    want.sort_unstable();
    ensure!(
        recorded == want,
        "suites recorded {recorded:?}, expected {want:?}"
    );
    let summary = output::libtest_summary(&main.run.stdout);
    let listed = main.tests.len() as u64;
    let summed = summary.get("passed").copied().unwrap_or(0)
        + summary.get("failed").copied().unwrap_or(0)
        + summary.get("ignored").copied().unwrap_or(0);
    ensure!(listed == summed, "{listed} test lines, summary {summary:?}");
    Ok(())
}

/// Each spec line against the plugin's reading of the source (the same parser the
/// macro uses) and against the engine run here on the spec rebuilt from the line.
fn spec_lines(main: &Main) -> Result<(), String> {
    let found = heddle_syntax::find::analyse_source(SUITES, &Defaults::default())
        .map_err(|e| format!("the fixture does not parse: {e}"))?;
    ensure!(
        found.len() == SUITES_EXPECT.len(),
        "{} annotated fns found",
        found.len()
    );
    for f in &found {
        if f.function == "gone" {
            ensure!(
                !main.tests.keys().any(|t| t.starts_with("gone::")),
                "rows of the compiled-out `gone` ran"
            );
        }
        if SUITES_SILENT.contains(&f.function.as_str()) {
            continue;
        }
        let cover = f.spec.as_ref().map_err(|e| format!("`{}`: {e}", f.function))?;
        let rec = spec_of(&main.records, &f.function)?;
        let name = &f.function;
        ensure!(
            (rec.krate.as_str(), rec.target.as_str(), rec.file.as_str())
                == (KRATE, SUITES_TARGET, SUITES_FILE),
            "`{name}`: crate/target/file {} {} {}",
            rec.krate,
            rec.target,
            rec.file
        );
        let path: Vec<&str> = f
            .modules
            .iter()
            .map(String::as_str)
            .chain([name.as_str()])
            .collect();
        let path = path.join("::");
        ensure!(
            rec.module == format!("{SUITES_TARGET}::{path}") && rec.suite == path,
            "`{name}`: module `{}`, suite `{}`",
            rec.module,
            rec.suite
        );
        let spec = engine_spec(rec)?;
        let source = &cover.spec;
        ensure!(
            spec.factors == source.factors,
            "`{name}`: factors {:?}",
            spec.factors
        );
        ensure!(
            (spec.strength, spec.lambda, spec.seed) == (source.strength, source.lambda, source.seed),
            "`{name}`: t, λ, seed recorded {:?}, source says {:?}",
            (spec.strength, spec.lambda, spec.seed),
            (source.strength, source.lambda, source.seed)
        );
        ensure!(
            spec.excludes.len() == source.excludes.len()
                && same_constraints(&spec.levels(), &spec.excludes, &source.excludes),
            "`{name}`: the recorded excludes {:?} mean something else than the source's",
            rec.excludes
        );
        let fp = heddle_syntax::fingerprint(&spec).to_string();
        ensure!(
            rec.fingerprint == fp && fp == cover.fingerprint.to_string(),
            "`{name}`: fingerprint recorded {}, of the rebuilt spec {fp}, of the source {}",
            rec.fingerprint,
            cover.fingerprint
        );
        ensure!(!rec.pinned, "`{name}`: pinned without a pins file");
        ensure!(
            rec.should_panic == (name == "must_panic"),
            "`{name}`: should_panic {}",
            rec.should_panic
        );
        // the rows are a pure function of the spec: the engine gives them again here
        let again = generate(&spec, Effort::Fast).map_err(|e| format!("`{name}`: {e}"))?;
        ensure!(
            again.rows == rec.rows,
            "`{name}`: the engine gives other rows here"
        );
    }
    // built-in defaults: strength 2 capped at the parameters, λ 1, seed from the name
    for name in ["twin_one", "twin_two", "single"] {
        let rec = spec_of(&main.records, name)?;
        let t = if name == "single" { 1 } else { 2 };
        ensure!(
            (rec.strength, rec.lambda) == (t, 1),
            "`{name}`: strength {} lambda {}",
            rec.strength,
            rec.lambda
        );
        ensure!(
            rec.seed == heddle_syntax::hash::default_seed(name),
            "`{name}`: seed {} is not the one derived from its name",
            rec.seed
        );
    }
    let (one, two) = (
        spec_of(&main.records, "twin_one")?,
        spec_of(&main.records, "twin_two")?,
    );
    ensure!(one.seed != two.seed, "two functions share the seed {}", one.seed);
    Ok(())
}

fn covering(main: &Main) -> Result<(), String> {
    for s in &main.records.suites {
        let rec = &s.spec;
        let e = expect(&rec.function);
        // the recorded excludes, as the engine reads them, rule out exactly the rows
        // the fixture's own predicate does
        let spec = engine_spec(rec)?;
        let disagree = all_rows(&spec.levels())
            .into_iter()
            .find(|r| spec.excludes.iter().any(|x| x.eval(r)) == (e.allowed)(&labels(rec, r)));
        ensure!(
            disagree.is_none(),
            "`{}`: the recorded excludes {:?} and the fixture disagree on row {disagree:?}",
            rec.function,
            rec.excludes
        );
        let by_engine = verify_recorded(rec)?;
        let by_definition = check_by_definition(rec, &|l| (e.allowed)(l))?;
        ensure!(
            by_engine.interactions == by_definition.interactions
                && by_engine.impossible == by_definition.impossible.len() as u64
                && by_engine.min_count == by_definition.min_count,
            "`{}`: the checker says {by_engine:?}, the brute force {by_definition:?}",
            rec.function
        );
        ensure!(
            by_definition.min_count >= u64::from(rec.lambda),
            "`{}`: min count {}",
            rec.function,
            by_definition.min_count
        );
        let impossible: Vec<Vec<(&str, &str)>> = by_definition
            .impossible
            .iter()
            .map(|i| i.iter().map(|(n, l)| (n.as_str(), l.as_str())).collect())
            .collect();
        match rec.function.as_str() {
            "planted" => ensure!(
                impossible == vec![vec![("batch", "1"), ("codec", "Codec::Delta")]],
                "`planted`: impossible {impossible:?}"
            ),
            "constrained" => {
                // the three pairs excluded outright, and x = 0 with z = 2, which only the
                // first two excludes together rule out (x = 0 forces y = false)
                for pair in [
                    [("x", "0"), ("y", "true")],
                    [("y", "false"), ("z", "2")],
                    [("x", "2"), ("w", "Mode::Safe")],
                    [("x", "0"), ("z", "2")],
                ] {
                    ensure!(
                        impossible.contains(&pair.to_vec()),
                        "`constrained`: {pair:?} is not among the impossible {impossible:?}"
                    );
                }
                ensure!(impossible.len() == 4, "`constrained`: impossible {impossible:?}");
            }
            "escapes" => ensure!(
                impossible == vec![vec![("s", r#""q\"uote""#), ("c", "'é'")]],
                "`escapes`: impossible {impossible:?}"
            ),
            other => ensure!(impossible.is_empty(), "`{other}`: impossible {impossible:?}"),
        }
        if rec.function == "triple" || rec.function == "wide" {
            ensure!(rec.strength == 3, "`{}`: strength {}", rec.function, rec.strength);
        }
        if rec.function == "wide" {
            // 5^3 = 125 triples of (a, b, c) alone need 125 rows
            ensure!(rec.rows.len() >= 125, "`wide`: {} rows", rec.rows.len());
        }
    }
    Ok(())
}

fn planted(main: &Main) -> Result<(), String> {
    let mut failed = 0;
    for s in &main.records.suites {
        let e = expect(&s.spec.function);
        let counted = check_suite(s, &main.tests, &|l| (e.fails)(l))?;
        let levels: Vec<usize> = s.spec.factors.iter().map(|f| f.labels.len()).collect();
        let has_defect = all_rows(&levels)
            .iter()
            .any(|r| (e.fails)(&labels(&s.spec, r)) && (e.allowed)(&labels(&s.spec, r)));
        if has_defect {
            ensure!(
                counted.failed as u32 >= s.spec.lambda && counted.passed > 0,
                "`{}`: {counted:?}: the planted defect must fail some rows, not all",
                s.spec.function
            );
        }
        failed += counted.failed;
    }
    let summary = output::libtest_summary(&main.run.stdout);
    ensure!(
        summary.get("failed").copied() == Some(failed as u64),
        "libtest failed {summary:?}, records {failed}"
    );
    // the tallies name the planted interactions: every run holding them failed
    for (function, interaction) in [
        (
            "planted",
            Interaction {
                factors: vec![0, 2],
                levels: vec![1, 0],
            },
        ),
        (
            "triple",
            Interaction {
                factors: vec![0, 1, 2],
                levels: vec![2, 1, 1],
            },
        ),
        (
            "constrained",
            Interaction {
                factors: vec![2, 3],
                levels: vec![2, 1],
            },
        ),
    ] {
        let s = suite(&main.records, function)?;
        let t = tally(&s.spec, s.outcomes()).map_err(|e| e.to_string())?;
        let c = t
            .get(&interaction)
            .ok_or_else(|| format!("`{function}`: no tally of {interaction:?}"))?
            .count;
        ensure!(
            c.runs >= u64::from(s.spec.lambda) && c.passes == 0 && c.failures == c.runs,
            "`{function}`: the planted interaction tallies {c:?}"
        );
    }
    Ok(())
}

/// The lines a failing row prints name the function, the row, each parameter with its
/// label, the seed and the command to rerun it.
fn messages(main: &Main) -> Result<(), String> {
    let mut seen = 0;
    for s in &main.records.suites {
        let spec = &s.spec;
        for r in s.rows.iter().filter(|r| r.outcome == Outcome::Failed) {
            let i = r.row as usize;
            let n = spec.rows.len();
            let section = output::failure_section(&main.run.stdout, &r.test)
                .ok_or_else(|| format!("no output section for failing `{}`", r.test))?;
            let how = match spec.function.as_str() {
                "fallible" | "io_fallible" => "returned an error",
                "must_panic" => "did not panic as `#[should_panic]` expects",
                _ => "panicked",
            };
            let head = format!(
                "heddle: `{}` row {i} of {n} (`{}`) {how}",
                spec.function,
                spec.row_test_name(i).unwrap_or_default()
            );
            ensure!(section.contains(&head), "`{}`: no `{head}` in\n{section}", r.test);
            for (f, label) in spec.factors.iter().zip(&r.labels) {
                let shown = section.lines().any(|l| {
                    l.trim_start()
                        .strip_prefix(f.name.as_str())
                        .and_then(|rest| rest.trim_start().strip_prefix("= "))
                        == Some(label.as_str())
                });
                ensure!(
                    shown,
                    "`{}`: `{} = {label}` not shown in\n{section}",
                    r.test,
                    f.name
                );
            }
            let seed = format!(
                "seed {} (strength {}, lambda {}",
                spec.seed, spec.strength, spec.lambda
            );
            ensure!(section.contains(&seed), "`{}`: no `{seed}` in\n{section}", r.test);
            let rerun = format!(
                "rerun: cargo test -p {KRATE} --test {SUITES_TARGET} {} -- --exact",
                r.test
            );
            ensure!(
                section.contains(&rerun),
                "`{}`: no `{rerun}` in\n{section}",
                r.test
            );
            match spec.function.as_str() {
                "fallible" => {
                    let err = "\"planted error for b 3\"";
                    ensure!(
                        section.contains(&format!("Error: {head}: {err}")),
                        "`{}`: the `Err` is not shown in\n{section}",
                        r.test
                    );
                    ensure!(
                        r.message.as_deref() == Some(err),
                        "`{}`: message {:?}",
                        r.test,
                        r.message
                    );
                }
                "io_fallible" => ensure!(
                    r.message
                        .as_deref()
                        .is_some_and(|m| m.contains("planted io error"))
                        && section.contains(&format!("Error: {head}: "))
                        && section.contains("planted io error"),
                    "`{}`: message {:?}",
                    r.test,
                    r.message
                ),
                "exprs" if r.labels[2] == "boom()" => ensure!(
                    r.message.as_deref() == Some("a level expression panicked"),
                    "`{}`: message {:?}",
                    r.test,
                    r.message
                ),
                "must_panic" => ensure!(
                    r.message.as_deref() == Some("did not panic as `#[should_panic]` expects"),
                    "`{}`: message {:?}",
                    r.test,
                    r.message
                ),
                "planted" => ensure!(
                    r.message.as_deref() == Some("planted defect: batch 8 with checksum")
                        && section.contains("planted defect: batch 8 with checksum"),
                    "`{}`: message {:?}",
                    r.test,
                    r.message
                ),
                _ => {}
            }
            seen += 1;
        }
    }
    ensure!(seen > 0, "no failing row to look at");
    Ok(())
}

/// `#[ignore]` is on every row: the first run listed them all as ignored and recorded
/// none; `-- --ignored` runs them. This run leaves `HEDDLE_TARGET_DIR` unset, so the
/// runtime must find the (shared) target directory from the test executable.
fn ignored(krate: &Scratch, main: &Main) -> Result<(), String> {
    let listed: Vec<&String> = main.tests.keys().filter(|t| t.starts_with("skipped::")).collect();
    ensure!(!listed.is_empty(), "no `skipped` rows listed");
    ensure!(
        listed.iter().all(|t| main.tests[*t].status == Status::Ignored),
        "some `skipped` rows were not ignored"
    );
    let id = format!(
        "e2e-ignored-{}-{:x}",
        std::process::id(),
        std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.as_nanos())
    );
    let mut args = test_args();
    args.extend(["skipped", "--", "--ignored"]);
    let run = krate.cargo(&args, None, &[(heddle_test::record::layout::RUN_ID_VAR, &id)]);
    ensure!(run.succeeded(), "`{}` failed:\n{}", run.command, run.stdout);
    let target = scratch::shared_target_dir();
    let records = Store::open(&target)
        .and_then(|s| s.read_run(&id))
        .map_err(|e| format!("run `{id}` is not in the target dir's store: {e}"));
    // the shared target dir outlives this test: leave nothing there
    let _ = std::fs::remove_dir_all(
        heddle_test::record::layout::store_root(&target)
            .join(heddle_test::record::layout::RUNS_DIR)
            .join(&id),
    );
    let records = records?;
    let s = suite(&records, "skipped")?;
    let tests = output::libtest_results(&run.stdout);
    let counted = check_suite(s, &tests, &fixtures::never)?;
    ensure!(
        counted.passed == listed.len() && tests.len() == listed.len(),
        "{} rows ran with --ignored, {} were listed as ignored",
        counted.passed,
        listed.len()
    );
    verify_recorded(&s.spec)?;
    check_by_definition(&s.spec, &fixtures::always)?;
    Ok(())
}

/// The row filter the README shows: exactly one row runs and is recorded.
fn exact(krate: &Scratch, main: &Main) -> Result<(), String> {
    let store = krate.store_dir("exact");
    let mut args = test_args();
    args.extend(["planted::row_03", "--", "--exact"]);
    let run = krate.cargo(&args, Some(&store), &[]);
    ensure!(run.compiled(), "`{}` did not build:\n{}", run.command, run.stderr);
    let tests = output::libtest_results(&run.stdout);
    ensure!(
        tests.keys().collect::<Vec<_>>() == ["planted::row_03"],
        "ran {:?}",
        tests.keys()
    );
    let records = read_store(&store)?;
    let rows: Vec<_> = records.suites.iter().flat_map(|s| &s.rows).collect();
    ensure!(
        rows.len() == 1 && rows[0].test == "planted::row_03" && rows[0].row == 3,
        "recorded {rows:?}"
    );
    let before = outcomes(&main.records).get("planted::row_03").copied();
    ensure!(
        Some(rows[0].outcome) == before,
        "outcome {:?}, first run {before:?}",
        rows[0].outcome
    );
    Ok(())
}

/// The command a failing row prints, run as printed (with this cargo and `--offline`),
/// under an explicit run id: the one row runs, fails the same way, under that id.
fn rerun(krate: &Scratch, main: &Main) -> Result<(), String> {
    let s = suite(&main.records, "planted")?;
    let failed = s
        .rows
        .iter()
        .find(|r| r.outcome == Outcome::Failed)
        .ok_or("no failing `planted` row")?;
    let section = output::failure_section(&main.run.stdout, &failed.test).ok_or("no failure section")?;
    let command = section
        .lines()
        .find_map(|l| l.trim_start().strip_prefix("rerun: "))
        .ok_or("no rerun line")?;
    let words: Vec<&str> = command.split_whitespace().collect();
    ensure!(words.first() == Some(&"cargo"), "rerun command `{command}`");
    let store = krate.store_dir("rerun");
    let run = krate.cargo(
        &words[1..],
        Some(&store),
        &[(heddle_test::record::layout::RUN_ID_VAR, "e2e-rerun")],
    );
    ensure!(run.compiled(), "`{}` did not build:\n{}", run.command, run.stderr);
    let tests = output::libtest_results(&run.stdout);
    ensure!(
        tests.len() == 1 && tests.get(&failed.test).map(|t| t.status) == Some(Status::Failed),
        "`{command}` ran {tests:?}"
    );
    let records = read_store(&store)?;
    ensure!(
        records.runs.len() == 1 && records.runs[0].id == "e2e-rerun",
        "runs {:?}",
        records.runs
    );
    let rows: Vec<_> = records.suites.iter().flat_map(|s| &s.rows).collect();
    ensure!(
        rows.len() == 1
            && rows[0].test == failed.test
            && rows[0].labels == failed.labels
            && rows[0].outcome == Outcome::Failed
            && rows[0].run == "e2e-rerun",
        "recorded {rows:?}"
    );
    Ok(())
}

/// Every line of one store file.
fn file_lines(path: &Path) -> Result<Vec<Line>, String> {
    let text = std::fs::read_to_string(path).map_err(|e| format!("{}: {e}", path.display()))?;
    text.lines()
        .map(|l| Line::parse(l).map_err(|e| format!("{}: {e}", path.display())))
        .collect()
}

/// nextest runs every test in a process of its own under one run id: the store holds
/// one run with that id, one file per test run, each with its spec line and its one
/// row, and the outcomes are those of `cargo test`.
fn nextest(krate: &Scratch, main: &Main) -> Result<(), String> {
    let version = krate.cargo(&["nextest", "--version"], None, &[]);
    if !version.succeeded() {
        skip(
            "the nextest step",
            &format!(
                "`cargo nextest --version` failed ({})",
                version.stderr.lines().next().unwrap_or("no output")
            ),
        );
        return Ok(());
    }
    let store = krate.store_dir("nextest");
    let run = krate.cargo(
        &["nextest", "run", "--test", SUITES_TARGET, "--no-fail-fast"],
        Some(&store),
        &[],
    );
    ensure!(run.compiled(), "`{}` did not build:\n{}", run.command, run.stderr);
    let text = run.all_output();
    let id = output::nextest_run_id(&text).ok_or_else(|| format!("no run id in\n{text}"))?;
    let ran = output::nextest_results(&text);
    let want: BTreeMap<String, Status> = main
        .tests
        .iter()
        .filter(|(_, l)| l.status != Status::Ignored)
        .map(|(t, l)| (t.clone(), l.status))
        .collect();
    ensure!(
        ran == want,
        "nextest outcomes {ran:?}\ncargo test outcomes {want:?}"
    );
    let records = read_store(&store)?;
    ensure!(records.runs.len() == 1, "{} runs", records.runs.len());
    let info = &records.runs[0];
    ensure!(info.id == id, "run id `{}`, nextest's `{id}`", info.id);
    ensure!(
        info.files.len() == ran.len(),
        "{} files for {} test processes",
        info.files.len(),
        ran.len()
    );
    for path in &info.files {
        let lines = file_lines(path)?;
        let specs = lines.iter().filter(|l| matches!(l, Line::Spec(_))).count();
        let starts = lines.iter().filter(|l| matches!(l, Line::Start(_))).count();
        let rows: Vec<_> = lines
            .iter()
            .filter_map(|l| match l {
                Line::Row(r) => Some(r),
                Line::Spec(_) | Line::Start(_) => None,
            })
            .collect();
        ensure!(
            specs == 1 && starts == 1 && rows.len() == 1 && rows[0].run == id,
            "`{}`: {specs} spec lines, {starts} start lines, rows {rows:?}",
            path.display()
        );
    }
    ensure!(
        records.stats.skipped() == 0,
        "skipped: {:?}",
        records.stats.notes()
    );
    ensure!(
        outcomes(&records) == outcomes(&main.records),
        "recorded outcomes differ from cargo test's"
    );
    for s in &records.suites {
        let first = spec_of(&main.records, &s.spec.function)?;
        ensure!(
            s.spec.same_spec(first),
            "`{}`: another spec under nextest",
            s.spec.function
        );
    }
    Ok(())
}

/// `cargo clean -p` and a rebuild: the macro runs again in a fresh compiler and must
/// give the same specs (rows, seeds, fingerprints).
fn rebuild(krate: &Scratch, main: &Main) -> Result<(), String> {
    let store = krate.store_dir("rebuilt");
    let (clean, run) = scratch::in_cargo_slot(|| {
        let clean = krate.cargo(&["clean", "-p", KRATE], None, &[]);
        (clean, krate.cargo(&test_args(), Some(&store), &[]))
    });
    ensure!(clean.succeeded(), "`{}` failed:\n{}", clean.command, clean.stderr);
    ensure!(run.compiled(), "`{}` did not build:\n{}", run.command, run.stderr);
    ensure!(
        run.stderr.contains(&format!("Compiling {KRATE} ")),
        "the crate was not rebuilt:\n{}",
        run.stderr
    );
    let records = read_store(&store)?;
    ensure!(
        records.suites.len() == main.records.suites.len(),
        "{} suites after the rebuild",
        records.suites.len()
    );
    for s in &records.suites {
        let first = spec_of(&main.records, &s.spec.function)?;
        ensure!(
            s.spec.same_spec(first),
            "`{}`: the rebuild gives another spec:\n{:?}\n{:?}",
            s.spec.function,
            s.spec,
            first
        );
    }
    ensure!(
        outcomes(&records) == outcomes(&main.records),
        "the rebuild's outcomes differ"
    );
    Ok(())
}
