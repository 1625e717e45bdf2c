//! A crate that renames its `heddle-test` dependency (`rt = { package = "heddle-test" }`)
//! still compiles `#[cover]` tests: the expansion finds the runtime under the name the
//! manifest gives it, whether the attribute is imported (`use rt::cover`) or written as
//! a path (`#[rt::cover]`), and the rows record as usual.

use heddle_e2e::coverage::verify_recorded;
use heddle_e2e::ensure;
use heddle_e2e::output;
use heddle_e2e::records::check_suite;
use heddle_e2e::scratch::{CrateDef, Scratch};
use heddle_e2e::steps::{Steps, read_store, suite};

const RENAMED: &str = r#"
use rt::cover;

#[derive(Clone, Copy, Debug, PartialEq)]
enum Mode { Fast, Safe }

#[cover(lambda = 2)]
fn imported(#[levels(1, 2, 3)] n: u8, #[levels(Mode::Fast, Mode::Safe)] mode: Mode) {
    assert!(n > 0 && (mode == Mode::Fast || mode == Mode::Safe));
}

#[rt::cover(strength = 1)]
fn by_path(#[levels("a", "b")] s: &str, #[levels(true, false)] flag: bool) {
    assert!(!s.is_empty() || flag);
}
"#;

#[test]
fn a_renamed_runtime_dependency_still_compiles_and_records() {
    let krate = Scratch::create(&CrateDef {
        name: "e2e_renamed",
        runtime_as: Some("rt"),
        files: &[("tests/renamed.rs", RENAMED)],
        ..CrateDef::default()
    })
    .unwrap_or_else(|e| panic!("the temporary crate resolves from the workspace alone: {e}"));
    let store = krate.store_dir("renamed");
    let run = krate.cargo(&["test", "--test", "renamed"], Some(&store), &[]);
    let mut steps = Steps::new();
    steps.run("the suites build and pass", || {
        ensure!(
            run.succeeded(),
            "`{}` failed:\n{}\n{}",
            run.command,
            run.stderr,
            run.stdout
        );
        Ok(())
    });
    steps.run("both suites are recorded, row by row", || {
        let records = read_store(&store)?;
        let tests = output::libtest_results(&run.stdout);
        for function in ["imported", "by_path"] {
            let s = suite(&records, function)?;
            verify_recorded(&s.spec)?;
            let counted = check_suite(s, &tests, &|_| false)?;
            ensure!(
                counted.failed == 0 && counted.passed == s.spec.rows.len(),
                "`{function}`: {counted:?}"
            );
        }
        Ok(())
    });
    steps.finish();
}
