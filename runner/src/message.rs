//! The text a failing row prints: enough to see which configuration broke and to rerun
//! exactly that row without reading the attribute.

use crate::__private::Suite;
use crate::record;
use std::fmt::Write as _;

/// Name of the crate root a module path starts in (`codec` in `codec::roundtrip`).
pub(crate) fn crate_root(module: &str) -> &str {
    module.split("::").next().unwrap_or(module)
}

/// The module path as libtest names tests: without the crate root.
pub(crate) fn suite_path(module: &str) -> &str {
    match module.find("::") {
        Some(i) => &module[i + 2..],
        None => "",
    }
}

/// The row's test function name, as the expansion chose it; a row outside the suite
/// (only a macro bug could produce one) shows as a placeholder instead of panicking.
pub(crate) fn row_name(suite: &Suite, row: usize) -> &'static str {
    suite.row_names.get(row).copied().unwrap_or("<unknown row>")
}

/// The row's libtest name: `roundtrip::row_03`.
pub(crate) fn test_name(suite: &Suite, row: usize) -> String {
    record::test_path(suite_path(suite.module), row_name(suite, row))
}

/// The command that reruns just this row, in the form of the runner running it now
/// (nextest sets `NEXTEST=1` for its test processes).
pub(crate) fn rerun_command(suite: &Suite, row: usize) -> String {
    rerun_command_in(suite, row, std::env::var_os("NEXTEST").is_some_and(|v| v == "1"))
}

/// [`rerun_command`] for a given runner.
pub(crate) fn rerun_command_in(suite: &Suite, row: usize, nextest: bool) -> String {
    let form = record::RerunForm {
        nextest,
        manifest_path: None,
    };
    record::rerun_command_as(suite.krate, suite.target, &test_name(suite, row), &form)
}

/// The label of every factor in this row; a row or level index outside the suite (only
/// a macro bug could produce one) shows as a placeholder instead of panicking.
pub(crate) fn row_labels(suite: &Suite, row: usize) -> Vec<&'static str> {
    let levels = suite.rows.get(row).copied().unwrap_or(&[]);
    suite
        .factors
        .iter()
        .enumerate()
        .map(|(i, f)| {
            levels
                .get(i)
                .and_then(|&lv| f.labels.get(lv as usize))
                .copied()
                .unwrap_or("<unknown level>")
        })
        .collect()
}

/// The multi-line report of one row: `headline`, then every parameter with its label,
/// the seed and the rerun command.
pub(crate) fn context(suite: &Suite, row: usize, headline: &str) -> String {
    let design = suite.rows.len().saturating_sub(suite.followups as usize);
    let which = if row < design {
        format!("row {row} of {design}")
    } else {
        format!("follow-up row {} of {}", row - design, suite.followups)
    };
    let mut out = format!(
        "heddle: `{}` {which} (`{}`) {headline}\n",
        suite.function,
        test_name(suite, row)
    );
    let width = suite.factors.iter().map(|f| f.name.len()).max().unwrap_or(0);
    for (f, label) in suite.factors.iter().zip(row_labels(suite, row)) {
        let _ = writeln!(out, "  {:width$} = {label}", f.name);
    }
    let source = if suite.pinned {
        "rows from the pins file"
    } else {
        "rows from the engine"
    };
    let _ = writeln!(
        out,
        "  seed {} (strength {}, lambda {}, {source})",
        suite.seed, suite.strength, suite.lambda
    );
    let _ = write!(out, "  rerun: {}", rerun_command(suite, row));
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::__private::Factor;

    static SUITE: Suite = Suite {
        krate: "demo-crate",
        file: "tests/codec-io.rs",
        target: "--test codec-io",
        function: "roundtrip",
        module: "codec_io::roundtrip",
        factors: &[
            Factor {
                name: "batch",
                labels: &["1", "8", "64"],
            },
            Factor {
                name: "codec",
                labels: &["Codec::Plain", "Codec::Rle"],
            },
        ],
        strength: 2,
        lambda: 1,
        seed: 11,
        excludes: &[],
        rows: &[&[0, 0], &[0, 1], &[1, 0], &[1, 1], &[2, 0], &[2, 1]],
        row_names: &["row_00", "row_01", "row_02", "row_03", "row_04", "row_05"],
        fingerprint: "abc",
        pinned: false,
        should_panic: false,
        should_panic_expected: None,
        budget: None,
        followups: 0,
        focus: &[],
    };

    #[test]
    fn rerun_command_names_package_target_and_exact_test() {
        assert_eq!(
            rerun_command_in(&SUITE, 3, false),
            "cargo test -p demo-crate --test codec-io roundtrip::row_03 -- --exact"
        );
        assert_eq!(
            rerun_command_in(&SUITE, 3, true),
            "cargo nextest run -p demo-crate --test codec-io -E 'test(=roundtrip::row_03)'"
        );
    }

    #[test]
    fn context_names_every_parameter_seed_and_rerun() {
        let text = context(&SUITE, 3, "panicked");
        // the rerun line is in the form of the runner running this test (checked above)
        assert_eq!(
            text,
            format!(
                "heddle: `roundtrip` row 3 of 6 (`roundtrip::row_03`) panicked\n  \
                 batch = 8\n  \
                 codec = Codec::Rle\n  \
                 seed 11 (strength 2, lambda 1, rows from the engine)\n  \
                 rerun: {}",
                rerun_command(&SUITE, 3)
            )
        );
    }

    #[test]
    fn follow_up_rows_say_so() {
        static WITH: Suite = Suite {
            rows: &[&[0, 0], &[1, 1], &[2, 1]],
            row_names: &["row_00", "row_01", "row_followup_00"],
            followups: 1,
            focus: &[],
            ..SUITE
        };
        let text = context(&WITH, 2, "panicked");
        assert!(
            text.starts_with(
                "heddle: `roundtrip` follow-up row 0 of 1 (`roundtrip::row_followup_00`) panicked\n"
            ),
            "{text}"
        );
        assert!(context(&WITH, 1, "panicked").starts_with("heddle: `roundtrip` row 1 of 2 ("));
    }

    #[test]
    fn out_of_range_rows_do_not_panic() {
        assert_eq!(row_labels(&SUITE, 99), vec!["<unknown level>"; 2]);
        assert!(context(&SUITE, 99, "failed").contains("<unknown row>"));
    }

    #[test]
    fn module_paths_split_into_root_and_suite() {
        assert_eq!(crate_root("a::b::c"), "a");
        assert_eq!(suite_path("a::b::c"), "b::c");
        assert_eq!(suite_path("a"), "");
    }
}
