//! JUnit XML in the dialect of Jenkins' schema (the Apache Surefire shape, `junit-10.xsd`
//! of the Jenkins xUnit plugin, shipped in `plugin/tests/data/` and validated against in
//! the tests): one testsuite per annotated function, one testcase per row.
//!
//! - A row that never passed is a `failure`; its other failed executions (nextest's
//!   retries, `--repeat` rounds, merged runs) are `rerunFailure`s beside it.
//! - A row that both passed and failed passes with one `flakyFailure` per failed
//!   execution, as nextest reports a test that passed on a retry.
//! - A row whose executions all started and did not finish in a test process that ran
//!   several rows (plain `cargo test`) is an `error`, not a `failure`: the process
//!   ended while it ran, but any row in flight may have ended it. (Under nextest such an
//!   execution is a failure of the row, counted like any other.)
//! - A row with no record in the runs read is `skipped`.
//! - The suite's strength, lambda and seed (decimal, as everywhere) are suite properties;
//!   the schema has no properties per testcase, so a row's labels are a suite property
//!   named after the row (`heddle.row.row_03`) and the testcase's `system-out`.
//!
//! Written by hand rather than through a JUnit library, so every element and attribute
//! is one the schema allows.

use std::fmt::Write as _;

use super::{FailedRun, Report, RowView, SuiteReport};

/// Text with the five XML specials escaped and the characters XML 1.0 cannot hold
/// (control characters but tab, newline and carriage return) dropped.
fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 || c == '\u{fffe}' || c == '\u{ffff}' => {}
            c => out.push(c),
        }
    }
    out
}

/// Seconds with three decimals, the shape of the schema's `SUREFIRE_TIME`.
fn secs(ns: u64) -> String {
    format!("{}.{:03}", ns / 1_000_000_000, (ns / 1_000_000) % 1000)
}

fn first_line(m: Option<&str>) -> &str {
    m.and_then(|m| m.lines().next())
        .filter(|l| !l.is_empty())
        .unwrap_or("failed")
}

/// What the testcase of a row says.
enum Status<'r> {
    Passed,
    Failed(&'r [FailedRun]),
    Flaky(&'r [FailedRun]),
    DidNotFinish(usize),
    Skipped,
}

fn status(r: &RowView) -> Status<'_> {
    if r.did_not_finish() {
        Status::DidNotFinish(r.unfinished)
    } else if r.count.runs == 0 {
        Status::Skipped
    } else if r.count.failures == 0 {
        Status::Passed
    } else if r.count.passes == 0 {
        Status::Failed(&r.failed_runs)
    } else {
        Status::Flaky(&r.failed_runs)
    }
}

fn rerun(out: &mut String, tag: &str, f: &FailedRun) {
    let attempt = f.attempt.map_or(String::new(), |a| format!("attempt {a}: "));
    let _ = writeln!(
        out,
        "      <{tag} type=\"failure\" message=\"{}\"><stackTrace>{}</stackTrace></{tag}>",
        esc(&format!("{attempt}{}", first_line(f.message.as_deref()))),
        esc(f.message.as_deref().unwrap_or(""))
    );
}

fn suite(out: &mut String, s: &SuiteReport<'_>, runs: &[String]) {
    let spec = s.spec;
    let failures = s
        .rows
        .iter()
        .filter(|r| matches!(status(r), Status::Failed(_)))
        .count();
    let errors = s.did_not_finish;
    let skipped = s.not_run;
    let time: u64 = s.rows.iter().map(|r| r.duration_ns).sum();
    let _ = writeln!(
        out,
        "  <testsuite name=\"{}\" tests=\"{}\" failures=\"{failures}\" errors=\"{errors}\" skipped=\"{skipped}\" time=\"{}\">",
        esc(&format!("{}::{}", spec.krate, spec.suite)),
        s.rows.len(),
        secs(time)
    );
    let _ = writeln!(out, "    <properties>");
    let mut props: Vec<(String, String)> = vec![
        ("heddle.file".into(), spec.file.clone()),
        ("heddle.strength".into(), spec.strength.to_string()),
        ("heddle.lambda".into(), spec.lambda.to_string()),
        ("heddle.seed".into(), spec.seed.to_string()),
        ("heddle.runs".into(), runs.join(" ")),
    ];
    for r in &s.rows {
        let name = spec.row_names.get(r.row).cloned().unwrap_or_default();
        props.push((format!("heddle.row.{name}"), labels(s, r.row).join(", ")));
    }
    for (k, v) in props {
        let _ = writeln!(
            out,
            "      <property name=\"{}\" value=\"{}\"/>",
            esc(&k),
            esc(&v)
        );
    }
    let _ = writeln!(out, "    </properties>");
    for r in &s.rows {
        let _ = writeln!(
            out,
            "    <testcase name=\"{}\" classname=\"{}\" time=\"{}\">",
            esc(&spec.row_test_name(r.row).unwrap_or_default()),
            esc(&format!("{}::{}", spec.krate, spec.target)),
            secs(r.duration_ns)
        );
        let rerun_cmd = s.rerun(r.row);
        match status(r) {
            Status::Passed => {}
            Status::Skipped => {
                let _ = writeln!(
                    out,
                    "      <skipped message=\"no record of this row in the runs read\"/>"
                );
            }
            Status::DidNotFinish(n) => {
                let times = if n == 1 {
                    String::new()
                } else {
                    format!(" ({n} times)")
                };
                let _ = writeln!(
                    out,
                    "      <error type=\"did-not-finish\" message=\"{}\">{}</error>",
                    esc(&format!(
                        "did not finish{times}: the test process, running several rows, ended while it ran (a crash, an abort or a kill); one of the rows in flight likely caused it"
                    )),
                    esc(&format!("rerun alone: {rerun_cmd}"))
                );
            }
            Status::Failed(failed) => {
                let (last, earlier) = failed.split_last().map_or((None, &[][..]), |(l, e)| (Some(l), e));
                let message = last.and_then(|f| f.message.as_deref());
                let _ = writeln!(
                    out,
                    "      <failure type=\"failure\" message=\"{}\">{}</failure>",
                    esc(&format!(
                        "failed {} of {} runs: {}",
                        r.count.failures,
                        r.count.runs,
                        first_line(message)
                    )),
                    esc(&format!("{}\nrerun: {rerun_cmd}", message.unwrap_or("")))
                );
                for f in earlier {
                    rerun(out, "rerunFailure", f);
                }
            }
            Status::Flaky(failed) => {
                for f in failed {
                    rerun(out, "flakyFailure", f);
                }
            }
        }
        let _ = writeln!(
            out,
            "      <system-out>{}</system-out>",
            esc(&labels(s, r.row).join("\n"))
        );
        let _ = writeln!(out, "    </testcase>");
    }
    let _ = writeln!(out, "  </testsuite>");
}

fn labels(s: &SuiteReport<'_>, row: usize) -> Vec<String> {
    s.spec
        .factors
        .iter()
        .zip(s.spec.row_labels(row).unwrap_or_default())
        .map(|(f, l)| format!("{} = {l}", f.name))
        .collect()
}

/// Renders the report as JUnit XML.
pub fn render(report: &Report<'_>) -> String {
    let tests: usize = report.suites.iter().map(|s| s.rows.len()).sum();
    let failures: usize = report
        .suites
        .iter()
        .map(|s| {
            s.rows
                .iter()
                .filter(|r| matches!(status(r), Status::Failed(_)))
                .count()
        })
        .sum();
    let errors: usize = report.suites.iter().map(|s| s.did_not_finish).sum();
    let time: u64 = report
        .suites
        .iter()
        .flat_map(|s| s.rows.iter().map(|r| r.duration_ns))
        .sum();
    let mut out = String::from("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let _ = writeln!(
        out,
        "<testsuites name=\"heddle\" tests=\"{tests}\" failures=\"{failures}\" errors=\"{errors}\" time=\"{}\">",
        secs(time)
    );
    for s in &report.suites {
        suite(&mut out, s, &report.runs);
    }
    out.push_str("</testsuites>\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_is_escaped_and_cleaned() {
        assert_eq!(esc("a<b>&\"c'\u{1}\n"), "a&lt;b&gt;&amp;&quot;c&apos;\n");
        assert_eq!(secs(1_234_567_890), "1.234");
        assert_eq!(secs(999_999), "0.000");
    }
}
