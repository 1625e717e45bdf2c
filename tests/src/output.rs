//! Reading what libtest and nextest print, in their human formats (the machine formats
//! of both are unstable).

use std::collections::BTreeMap;

/// How a test ended, as the test harness printed it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Status {
    /// `ok` / `PASS`.
    Passed,
    /// `FAILED` / `FAIL`.
    Failed,
    /// `ignored` (libtest) / skipped (nextest, not listed).
    Ignored,
}

/// One `test NAME ... RESULT` line of libtest.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TestLine {
    /// How it ended.
    pub status: Status,
    /// libtest marked it ` - should panic`.
    pub should_panic: bool,
}

/// Every test libtest reported, by name. Lines look like
/// `test planted::row_03 ... FAILED`, `test p::row_00 - should panic ... ok` and
/// `test i::row_01 ... ignored, reason`.
pub fn libtest_results(stdout: &str) -> BTreeMap<String, TestLine> {
    let mut out = BTreeMap::new();
    for line in stdout.lines() {
        let Some(rest) = line.strip_prefix("test ") else {
            continue;
        };
        let Some((name, result)) = rest.split_once(" ... ") else {
            continue;
        };
        let (name, should_panic) = match name.strip_suffix(" - should panic") {
            Some(n) => (n, true),
            None => (name, false),
        };
        let status = match result.split([',', ' ']).next() {
            Some("ok") => Status::Passed,
            Some("FAILED") => Status::Failed,
            Some("ignored") => Status::Ignored,
            _ => continue,
        };
        out.insert(name.trim().to_string(), TestLine { status, should_panic });
    }
    out
}

/// The captured output libtest prints for a failing test: the lines between
/// `---- NAME stdout ----` and the next such header or the closing `failures:` list.
pub fn failure_section(stdout: &str, test: &str) -> Option<String> {
    let header = format!("---- {test} stdout ----");
    let start = stdout.find(&header)? + header.len();
    let rest = &stdout[start..];
    let end = [rest.find("\n---- "), rest.find("\nfailures:\n")]
        .into_iter()
        .flatten()
        .min()
        .unwrap_or(rest.len());
    Some(rest[..end].to_string())
}

/// libtest's summary counts: `test result: FAILED. 16 passed; 4 failed; 2 ignored; …`,
/// summed over every test binary that ran.
pub fn libtest_summary(stdout: &str) -> BTreeMap<String, u64> {
    let mut out = BTreeMap::new();
    for line in stdout.lines() {
        let Some(rest) = line.strip_prefix("test result: ") else {
            continue;
        };
        let counts = rest.split_once(". ").map_or(rest, |(_, c)| c);
        for part in counts.split(';') {
            let mut words = part.split_whitespace();
            if let (Some(n), Some(what)) = (words.next(), words.next())
                && let Ok(n) = n.parse::<u64>()
            {
                *out.entry(what.to_string()).or_insert(0) += n;
            }
        }
    }
    out
}

/// Every test nextest ran, by name, from its status lines:
/// `        PASS [   0.007s] ( 1/20) crate::binary planted::row_01`
/// (the test name is the last word; the binary id the one before).
pub fn nextest_results(output: &str) -> BTreeMap<String, Status> {
    let mut out = BTreeMap::new();
    for line in output.lines() {
        let line = line.trim_start();
        let status = if line.starts_with("PASS [") {
            Status::Passed
        } else if line.starts_with("FAIL [") {
            Status::Failed
        } else {
            continue;
        };
        if let Some(name) = line.split_whitespace().last() {
            out.insert(name.to_string(), status);
        }
    }
    out
}

/// The run id nextest announces: `Nextest run ID 1501c069-… with nextest profile: …`.
pub fn nextest_run_id(output: &str) -> Option<String> {
    output.lines().find_map(|line| {
        let rest = line.trim_start().strip_prefix("Nextest run ID ")?;
        rest.split_whitespace().next().map(str::to_string)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // Sample lines in the shape libtest 1.95 and nextest 0.9 print (common practice:
    // copied from a run of each by hand, so the parsers are checked on real shapes).
    const LIBTEST: &str = "\nrunning 4 tests\ntest a::row_00 ... ok\ntest a::row_01 ... FAILED\n\
        test b::row_00 - should panic ... ok\ntest c::row_00 ... ignored, not now\n\n\
        failures:\n\n---- a::row_01 stdout ----\nheddle: `a` row 1\n  x = 2\n\n\
        failures:\n    a::row_01\n\ntest result: FAILED. 2 passed; 1 failed; 1 ignored; 0 measured; \
        0 filtered out; finished in 0.18s\n";

    #[test]
    fn libtest_lines_are_read() {
        let r = libtest_results(LIBTEST);
        assert_eq!(r.len(), 4);
        assert_eq!(r["a::row_00"].status, Status::Passed);
        assert_eq!(r["a::row_01"].status, Status::Failed);
        assert!(r["b::row_00"].should_panic && r["b::row_00"].status == Status::Passed);
        assert_eq!(r["c::row_00"].status, Status::Ignored);
        assert_eq!(
            failure_section(LIBTEST, "a::row_01").as_deref(),
            Some("\nheddle: `a` row 1\n  x = 2\n")
        );
        assert_eq!(failure_section(LIBTEST, "a::row_00"), None);
        let s = libtest_summary(LIBTEST);
        assert_eq!((s["passed"], s["failed"], s["ignored"]), (2, 1, 1));
    }

    #[test]
    fn nextest_lines_are_read() {
        let text = "────────────\n Nextest run ID 1501c069-356d-49c6-b022-d84ff59d0f89 with nextest profile: default\n\
            \x20   Starting 2 tests across 1 binary\n\
            \x20       PASS [   0.007s] ( 1/2) e2e::suites planted::row_01\n\
            \x20       FAIL [   0.131s] ( 2/2) e2e::suites planted::row_03\n\
            \x20 stdout ───\n    test planted::row_03 ... FAILED\n";
        let r = nextest_results(text);
        assert_eq!(r.len(), 2);
        assert_eq!(r["planted::row_01"], Status::Passed);
        assert_eq!(r["planted::row_03"], Status::Failed);
        assert_eq!(
            nextest_run_id(text).as_deref(),
            Some("1501c069-356d-49c6-b022-d84ff59d0f89")
        );
    }
}
