//! The design controls in one temporary crate: rows required by label come first and
//! run; a row budget leaves the rows past it to libtest as ignored (never as passed) and
//! records how many ran; `HEDDLE_BUDGET` overrides the attribute's budget, with cargo
//! rebuilding the tests when it changes, and an invalid value is a located error.

use heddle_e2e::coverage::{check_by_definition, labels, verify_recorded};
use heddle_e2e::ensure;
use heddle_e2e::fixtures::{CONTROLS, CONTROLS_EXPECT, CONTROLS_FILE, CONTROLS_TARGET, Expect, expect_in};
use heddle_e2e::output::{self, Status};
use heddle_e2e::records::check_suite;
use heddle_e2e::scratch::{CrateDef, Run, Scratch};
use heddle_e2e::steps::{Steps, read_store, suite};
use heddle_store::Records;

const KRATE: &str = "e2e_controls";

fn test_args() -> Vec<&'static str> {
    vec!["test", "--test", CONTROLS_TARGET]
}

fn expect(function: &str) -> &'static Expect {
    expect_in(CONTROLS_EXPECT, function)
}

/// Runs the tests into a fresh store with `HEDDLE_BUDGET` set to `budget` (empty:
/// unset); every suite's records must agree with the harness and the planted defects.
fn run(krate: &Scratch, label: &str, budget: &str) -> Result<(Run, Records), String> {
    let store = krate.store_dir(label);
    let run = krate.cargo(&test_args(), Some(&store), &[("HEDDLE_BUDGET", budget)]);
    ensure!(run.compiled(), "`{}` did not build:\n{}", run.command, run.stderr);
    let records = read_store(&store)?;
    let tests = output::libtest_results(&run.stdout);
    for e in CONTROLS_EXPECT {
        let s = suite(&records, e.function)?;
        check_suite(s, &tests, &e.fails)?;
        verify_recorded(&s.spec)?;
        check_by_definition(&s.spec, &e.allowed)?;
    }
    Ok((run, records))
}

#[test]
fn design_controls_end_to_end() {
    let krate = Scratch::create(&CrateDef {
        name: KRATE,
        files: &[(CONTROLS_FILE, CONTROLS)],
        ..CrateDef::default()
    })
    .unwrap_or_else(|e| panic!("{e}"));
    let mut steps = Steps::new();

    let mut first = None;
    steps.run("required rows come first, by label, and run", || {
        let (run, records) = run(&krate, "plain", "")?;
        ensure!(!run.succeeded(), "the planted defect must fail the run");
        let spec = &suite(&records, "required")?.spec;
        let row0 = labels(spec, &spec.rows[0]);
        ensure!(
            row0[1] == "Codec::Delta" && row0[2] == "Unit::Fahrenheit" && (expect("required").allowed)(&row0),
            "row 0 is {row0:?}, not the partial required row completed"
        );
        let row1 = labels(spec, &spec.rows[1]);
        ensure!(
            row1 == ["1", "Codec::Plain", "Unit::Kelvin", "true"],
            "row 1 is {row1:?}, not the second required row"
        );
        ensure!(
            spec.budget.is_none(),
            "`required` has no budget: {:?}",
            spec.budget
        );
        let tests = output::libtest_results(&run.stdout);
        let row_00 = spec.row_test_name(0).unwrap_or_default();
        ensure!(
            tests.get(&row_00).map(|l| l.status) == Some(Status::Failed),
            "`{row_00}` (the required configuration) did not fail"
        );
        first = Some(spec.rows.clone());
        Ok(())
    });

    let mut full_rows = None;
    steps.run("budget(3) runs three rows and libtest ignores the rest", || {
        let records = read_store(&krate.root().join("stores/plain"))?;
        let s = suite(&records, "budgeted")?;
        ensure!(s.spec.budget == Some(3), "budget recorded as {:?}", s.spec.budget);
        ensure!(s.rows.len() == 3, "{} rows recorded", s.rows.len());
        ensure!(s.spec.rows.len() > 3, "the design has {} rows", s.spec.rows.len());
        full_rows = Some(s.spec.rows.clone());
        Ok(())
    });

    steps.run("HEDDLE_BUDGET=all rebuilds and runs every row", || {
        let (run, records) = run(&krate, "all", "all")?;
        ensure!(
            run.stderr.contains(&format!("Compiling {KRATE}")),
            "a changed `HEDDLE_BUDGET` did not rebuild the tests:\n{}",
            run.stderr
        );
        let s = suite(&records, "budgeted")?;
        ensure!(s.spec.budget.is_none(), "budget recorded as {:?}", s.spec.budget);
        ensure!(
            Some(&s.spec.rows) == full_rows.as_ref(),
            "the rows changed with the budget"
        );
        ensure!(
            s.rows.len() == s.spec.rows.len(),
            "{} rows recorded",
            s.rows.len()
        );
        Ok(())
    });

    steps.run("HEDDLE_BUDGET=2 applies to every function", || {
        let (_, records) = run(&krate, "two", "2")?;
        for function in ["required", "budgeted"] {
            let s = suite(&records, function)?;
            ensure!(
                s.spec.budget == Some(2),
                "`{function}`: budget {:?}",
                s.spec.budget
            );
        }
        let s = suite(&records, "required")?;
        ensure!(
            Some(&s.spec.rows) == first.as_ref(),
            "`required`: the rows changed with the budget"
        );
        Ok(())
    });

    steps.run("an invalid HEDDLE_BUDGET is a compile error naming it", || {
        let store = krate.store_dir("bogus");
        let run = krate.cargo(&test_args(), Some(&store), &[("HEDDLE_BUDGET", "most")]);
        ensure!(!run.compiled(), "an invalid budget compiled");
        ensure!(
            run.stderr
                .contains("error: `HEDDLE_BUDGET` is invalid: `most` is not a row budget"),
            "{}",
            run.stderr
        );
        ensure!(
            run.stderr.contains(&format!("--> {CONTROLS_FILE}:")),
            "the error is not located:\n{}",
            run.stderr
        );
        Ok(())
    });
    steps.finish();
}
