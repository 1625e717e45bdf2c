//! The text a failing row prints: enough to see which configuration broke and to rerun
//! exactly that row without reading the attribute.

use crate::__private::Suite;
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

/// `row_03`: zero-padded to the width of the largest index, at least two digits (the
/// macro names the row tests the same way; see the contract).
pub(crate) fn row_name(rows: usize, row: usize) -> String {
    let largest = rows.saturating_sub(1).max(row);
    let width = largest.to_string().len().max(2);
    format!("row_{row:0width$}")
}

/// The row's libtest name: `roundtrip::row_03`.
pub(crate) fn test_name(suite: &Suite, row: usize) -> String {
    test_name_in(suite.module, suite.rows.len(), row)
}

/// The libtest name of row `row` of `rows` in the rows module at `module`.
pub(crate) fn test_name_in(module: &str, rows: usize, row: usize) -> String {
    let path = suite_path(module);
    let name = row_name(rows, row);
    if path.is_empty() {
        name
    } else {
        format!("{path}::{name}")
    }
}

/// The cargo target selector for the file a suite lives in, when the file path tells.
///
/// Cargo's conventional layout decides (`tests/NAME.rs` or `tests/NAME/…` is the test
/// target NAME, likewise `examples/`, `benches/`, `src/bin/`; `src/main.rs` the default
/// bin; other `src/` files the library). The derived name is checked against the crate
/// root's name from the module path (cargo turns `-` into `_` for crate names); when a
/// `[[test]]` section renamed the target, the crate root's name is the better guess.
pub(crate) fn target_selector(file: &str, krate: &str, root: &str) -> Option<String> {
    let parts: Vec<&str> = file.split('/').filter(|p| !p.is_empty() && *p != ".").collect();
    let named = |flag: &str, name: &str| {
        let name = name.strip_suffix(".rs").unwrap_or(name);
        let pick = if name.replace('-', "_") == root || root.is_empty() {
            name
        } else {
            root
        };
        Some(format!("{flag} {pick}"))
    };
    match parts.as_slice() {
        ["tests", name, ..] => named("--test", name),
        ["examples", name, ..] => named("--example", name),
        ["benches", name, ..] => named("--bench", name),
        ["src", "bin", name, ..] => named("--bin", name),
        ["src", "main.rs"] => named("--bin", krate),
        ["src", ..] => Some("--lib".to_string()),
        _ => None,
    }
}

/// The command that reruns just this row.
pub(crate) fn rerun_command(suite: &Suite, row: usize) -> String {
    rerun_command_in(suite.krate, suite.file, suite.module, suite.rows.len(), row)
}

/// The command that reruns row `row` of `rows` of the suite at `module` in `file` of
/// package `krate` (the report prints the same command the failing row printed).
pub(crate) fn rerun_command_in(krate: &str, file: &str, module: &str, rows: usize, row: usize) -> String {
    let mut cmd = format!("cargo test -p {krate}");
    if let Some(sel) = target_selector(file, krate, crate_root(module)) {
        cmd.push(' ');
        cmd.push_str(&sel);
    }
    let _ = write!(cmd, " {} -- --exact", test_name_in(module, rows, row));
    cmd
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
    let mut out = format!(
        "heddle: `{}` row {row} of {} (`{}`) {headline}\n",
        suite.function,
        suite.rows.len(),
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
        fingerprint: "abc",
        pinned: false,
        should_panic: false,
        should_panic_expected: None,
    };

    #[test]
    fn row_names_follow_the_contract_padding() {
        assert_eq!(row_name(1, 0), "row_00");
        assert_eq!(row_name(10, 9), "row_09");
        assert_eq!(row_name(43, 42), "row_42");
        assert_eq!(row_name(101, 7), "row_007");
        assert_eq!(row_name(100, 99), "row_99");
    }

    #[test]
    fn target_selectors_follow_cargo_layout() {
        let sel = |file, root| target_selector(file, "my-pkg", root);
        assert_eq!(
            sel("tests/codec-io.rs", "codec_io").as_deref(),
            Some("--test codec-io")
        );
        assert_eq!(
            sel("tests/suite/main.rs", "suite").as_deref(),
            Some("--test suite")
        );
        assert_eq!(
            sel("tests/suite/parts/a.rs", "suite").as_deref(),
            Some("--test suite")
        );
        // a `[[test]] name = "other"` target whose file name differs
        assert_eq!(sel("tests/file.rs", "other").as_deref(), Some("--test other"));
        assert_eq!(sel("src/lib.rs", "my_pkg").as_deref(), Some("--lib"));
        assert_eq!(sel("src/deep/mod.rs", "my_pkg").as_deref(), Some("--lib"));
        assert_eq!(sel("src/main.rs", "my_pkg").as_deref(), Some("--bin my-pkg"));
        assert_eq!(sel("src/bin/tool.rs", "tool").as_deref(), Some("--bin tool"));
        assert_eq!(sel("examples/demo.rs", "demo").as_deref(), Some("--example demo"));
        assert_eq!(sel("benches/speed.rs", "speed").as_deref(), Some("--bench speed"));
        assert_eq!(sel("checks/odd.rs", "odd"), None);
    }

    #[test]
    fn rerun_command_names_package_target_and_exact_test() {
        assert_eq!(
            rerun_command(&SUITE, 3),
            "cargo test -p demo-crate --test codec-io roundtrip::row_03 -- --exact"
        );
    }

    #[test]
    fn context_names_every_parameter_seed_and_rerun() {
        let text = context(&SUITE, 3, "panicked");
        assert_eq!(
            text,
            "heddle: `roundtrip` row 3 of 6 (`roundtrip::row_03`) panicked\n  \
             batch = 8\n  \
             codec = Codec::Rle\n  \
             seed 11 (strength 2, lambda 1, rows from the engine)\n  \
             rerun: cargo test -p demo-crate --test codec-io roundtrip::row_03 -- --exact"
        );
    }

    #[test]
    fn out_of_range_rows_do_not_panic() {
        assert_eq!(row_labels(&SUITE, 99), vec!["<unknown level>"; 2]);
        assert!(context(&SUITE, 99, "failed").contains("row_99"));
    }

    #[test]
    fn module_paths_split_into_root_and_suite() {
        assert_eq!(crate_root("a::b::c"), "a");
        assert_eq!(suite_path("a::b::c"), "b::c");
        assert_eq!(suite_path("a"), "");
    }
}
