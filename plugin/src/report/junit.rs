//! JUnit XML (the Jenkins dialect), written with `quick-junit`: one testsuite per
//! annotated function, one testcase per row, its labels as properties.

use std::time::Duration;

use quick_junit::{NonSuccessKind, Property, Report as JReport, TestCase, TestCaseStatus, TestSuite};

use super::Report;

/// Renders the report as JUnit XML.
pub fn render(report: &Report<'_>) -> String {
    let mut out = JReport::new("heddle");
    for s in &report.suites {
        let spec = s.spec;
        let mut suite = TestSuite::new(format!("{}::{}", spec.krate, spec.suite));
        suite.add_property(Property::new("heddle.file", spec.file.as_str()));
        suite.add_property(Property::new("heddle.strength", spec.strength.to_string()));
        suite.add_property(Property::new("heddle.lambda", spec.lambda.to_string()));
        suite.add_property(Property::new("heddle.seed", spec.seed.to_string()));
        for r in &s.rows {
            let status = if r.count.failures > 0 {
                let mut st = TestCaseStatus::non_success(NonSuccessKind::Failure);
                let first = r
                    .message
                    .as_deref()
                    .and_then(|m| m.lines().next())
                    .unwrap_or("failed");
                st.set_message(format!(
                    "failed {} of {} runs: {first}",
                    r.count.failures, r.count.runs
                ));
                st.set_description(format!(
                    "{}\nrerun: {}",
                    r.message.as_deref().unwrap_or(""),
                    spec.rerun_command(r.row).unwrap_or_default()
                ));
                st
            } else if r.count.runs == 0 {
                let mut st = TestCaseStatus::skipped();
                st.set_message("no record of this row in the selected runs");
                st
            } else {
                TestCaseStatus::success()
            };
            let mut case = TestCase::new(spec.row_test_name(r.row).unwrap_or_default(), status);
            case.set_classname(format!("{}::{}", spec.krate, spec.target));
            case.set_time(Duration::from_nanos(r.duration_ns));
            let labels = spec.row_labels(r.row).unwrap_or_default();
            for (f, l) in spec.factors.iter().zip(labels) {
                case.add_property(Property::new(f.name.as_str(), l));
            }
            suite.add_test_case(case);
        }
        out.add_test_suite(suite);
    }
    out.to_string().unwrap_or_default()
}
