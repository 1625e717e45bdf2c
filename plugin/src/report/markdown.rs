//! A compact Markdown summary for CI job pages: one table row per suite, then the top
//! suspects and flaky interactions.

use std::fmt::Write as _;

use super::{Report, described, levels_text};

/// Escapes the characters that would break a table cell.
fn cell(s: &str) -> String {
    s.replace('|', "\\|").replace('\n', " ")
}

/// Renders the report as Markdown.
pub fn render(report: &Report<'_>) -> String {
    let mut out = String::from("## heddle report\n\n");
    if report.suites.is_empty() {
        out.push_str("No `#[cover]` suite recorded in the selected runs.\n");
        return out;
    }
    if let Some(merged) = report.merged("`") {
        let _ = writeln!(out, "Merged {merged}.\n");
    }
    out.push_str(
        "| suite | t | λ | rows | passed | failed | did not finish | not run | top suspect |\n|---|---|---|---|---|---|---|---|---|\n",
    );
    for s in &report.suites {
        let top = s.analysis.suspects.first().map_or("–".to_string(), |x| {
            let e = s.tallies.item(x.interaction);
            let kind = x.verdict.words();
            format!(
                "`{}` ({kind}, {:.2})",
                levels_text(&described(s.spec, &e.interaction)),
                x.score
            )
        });
        let _ = writeln!(
            out,
            "| `{}` {} | {} | {} | {} | {} | {} | {} | {} | {} |",
            cell(&s.spec.suite),
            cell(&s.spec.file),
            s.spec.strength,
            s.spec.lambda,
            s.spec.rows.len(),
            s.passed,
            s.failed,
            s.did_not_finish,
            s.not_run,
            cell(&top)
        );
    }
    for s in report.suites.iter().filter(|s| !s.ran.complete()) {
        let _ = writeln!(
            out,
            "\n> **partial run** `{}`: {} of {} rows ran; {} of {} {}-way interactions ran ({:.0}%), {} met lambda {}; not all clear",
            cell(&s.spec.suite),
            s.ran.rows_run,
            s.ran.rows,
            s.ran.interactions_run,
            s.ran.interactions,
            s.spec.strength,
            s.ran.share_run() * 100.0,
            s.ran.interactions_at_lambda,
            s.spec.lambda
        );
        if s.ran.focus_interactions > 0 {
            let _ = writeln!(
                out,
                "> focus sets: {} of {} focus interactions met their lambda",
                s.ran.focus_at_lambda, s.ran.focus_interactions
            );
        }
        if s.ran.unfinished > 0 {
            let _ = writeln!(
                out,
                "> did not finish: {} (its test process ended while they ran; see the note)",
                s.unfinished_rows()
                    .iter()
                    .map(|r| format!("`{}`", cell(r)))
                    .collect::<Vec<_>>()
                    .join(", ")
            );
        }
    }
    for s in report.suites.iter().filter(|s| !s.analysis.suspects.is_empty()) {
        let _ = writeln!(out, "\n### `{}`\n", cell(&s.spec.suite));
        for (n, x) in s.analysis.suspects.iter().take(3).enumerate() {
            let e = s.tallies.item(x.interaction);
            let _ = writeln!(
                out,
                "{}. `{}` — {}",
                n + 1,
                levels_text(&described(s.spec, &e.interaction)),
                x.reason
            );
        }
        for f in &s.analysis.flaky {
            let e = s.tallies.item(f.interaction);
            let _ = writeln!(
                out,
                "- flaky: `{}` passed {}/{} (95% interval {:.0}%–{:.0}%)",
                levels_text(&described(s.spec, &e.interaction)),
                f.passes,
                f.runs,
                f.low * 100.0,
                f.high * 100.0
            );
        }
    }
    for s in report.suites.iter() {
        if let Some(b) = &s.budget {
            let _ = writeln!(
                out,
                "\n> `{}`: not a complete run; {}",
                cell(&s.spec.suite),
                cell(&b.line())
            );
        }
    }
    for n in &report.notes {
        let _ = writeln!(out, "\n> note: {}", cell(n));
    }
    out
}
