//! Async rows: `#[tokio::test]` below `#[cover]` goes on every row instead of
//! `#[test]`. tokio is not a dependency of this workspace; the temporary crate takes it
//! from the registry (the local cache when offline). Locally the test is skipped, saying
//! why, when tokio cannot be had; in CI that is a failure.

use heddle_e2e::coverage::{check_by_definition, verify_recorded};
use heddle_e2e::ensure;
use heddle_e2e::fixtures::{ASYNC, ASYNC_EXPECT};
use heddle_e2e::output;
use heddle_e2e::records::check_suite;
use heddle_e2e::scratch::{CrateDef, CreateError, Scratch};
use heddle_e2e::steps::{Steps, read_store, skip, suite};

#[test]
fn async_rows_under_tokio() {
    let krate = match Scratch::create(&CrateDef {
        name: "e2e_async",
        dev_dependencies: &[
            r#"tokio = { version = "1", default-features = false, features = ["rt", "macros"] }"#,
        ],
        files: &[("tests/asy.rs", ASYNC)],
        ..CrateDef::default()
    }) {
        Ok(k) => k,
        Err(CreateError::Unresolved(why)) => return skip("async_rows_under_tokio", &why),
        Err(e) => panic!("{e}"),
    };
    let store = krate.store_dir("async");
    let run = krate.cargo(&["test", "--test", "asy"], Some(&store), &[]);
    run.assert_compiled();
    let tests = output::libtest_results(&run.stdout);
    let mut steps = Steps::new();
    steps.run("async rows record like sync ones", || {
        ensure!(!run.succeeded(), "the planted defects must fail the run");
        let records = read_store(&store)?;
        ensure!(records.suites.len() == 2, "{} suites", records.suites.len());
        for e in ASYNC_EXPECT {
            let s = suite(&records, e.function)?;
            verify_recorded(&s.spec)?;
            check_by_definition(&s.spec, &|l| (e.allowed)(l))?;
            let counted = check_suite(s, &tests, &|l| (e.fails)(l))?;
            ensure!(
                counted.failed > 0 && counted.passed > 0,
                "`{}`: {counted:?}",
                e.function
            );
        }
        Ok(())
    });
    steps.run(
        "an async `Err` and a panic after a yield explain their row",
        || {
            let records = read_store(&store)?;
            for (function, how, what) in [
                ("yielding", "panicked", "planted async defect"),
                ("erring", "returned an error", "\"planted async error\""),
            ] {
                let s = suite(&records, function)?;
                let n = s.spec.rows.len();
                let failed: Vec<_> = s.rows.iter().filter(|r| r.message.is_some()).collect();
                ensure!(!failed.is_empty(), "`{function}`: nothing failed");
                for r in failed {
                    let section = output::failure_section(&run.stdout, &r.test)
                        .ok_or_else(|| format!("no output for `{}`", r.test))?;
                    let head = format!(
                        "heddle: `{function}` row {} of {n} (`{}`) {how}",
                        r.row,
                        s.spec.row_test_name(r.row as usize).unwrap_or_default()
                    );
                    ensure!(section.contains(&head), "no `{head}` in\n{section}");
                    ensure!(
                        r.message.as_deref() == Some(what) && section.contains(what),
                        "`{}`: message {:?}",
                        r.test,
                        r.message
                    );
                }
            }
            Ok(())
        },
    );
    steps.finish();
}
