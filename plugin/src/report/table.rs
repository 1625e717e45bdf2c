//! The terminal report: per suite, its verdict first (suspects, flaky interactions,
//! advice), then the failing rows with their rerun commands, then pass counts.

use std::fmt::Write as _;

use super::{Report, SuiteReport, described, levels_text};
use crate::style::Style;

/// Suspects shown before "and N more".
const SHOWN_SUSPECTS: usize = 5;
/// Failing rows shown before "and N more".
const SHOWN_ROWS: usize = 8;
/// Interaction lines shown without `--all`.
const SHOWN_INTERACTIONS: usize = 12;

fn pct(x: f64) -> String {
    format!("{:.0}%", x * 100.0)
}

/// Renders the whole report.
pub fn render(report: &Report<'_>, color: bool) -> String {
    let st = Style { on: color };
    let mut out = String::new();
    let runs = match report.runs.as_slice() {
        [] => "no runs".to_string(),
        [one] => format!("run {one}"),
        many => format!("{} runs, {} … {}", many.len(), many[0], many[many.len() - 1]),
    };
    let _ = writeln!(
        out,
        "{} {runs} · {} suite{}",
        st.bold("heddle report:"),
        report.suites.len(),
        if report.suites.len() == 1 { "" } else { "s" }
    );
    if report.suites.is_empty() {
        let _ = writeln!(out, "\nno `#[cover]` suite recorded in the selected runs");
    }
    for s in &report.suites {
        out.push('\n');
        suite(&mut out, s, report.all, st);
    }
    out
}

fn suite(out: &mut String, s: &SuiteReport<'_>, all: bool, st: Style) {
    let spec = s.spec;
    let _ = writeln!(
        out,
        "{}",
        st.bold(&format!("{} · {} · {}", spec.krate, spec.file, spec.suite))
    );
    let status = if s.failed > 0 {
        st.red(&format!("{} failed", s.failed))
    } else {
        st.green("0 failed")
    };
    let mut line = format!(
        "  strength {}, lambda {}, seed {} · {} rows: {} passed, {status}",
        spec.strength,
        spec.lambda,
        spec.seed,
        spec.rows.len(),
        s.passed
    );
    if s.not_run > 0 {
        let _ = write!(line, ", {} not run", s.not_run);
    }
    let total = s.tallies.total();
    if total.runs > spec.rows.len() as u64 {
        let _ = write!(line, " ({} executions)", total.runs);
    }
    let _ = writeln!(out, "{line}");

    if s.analysis.failures == 0 {
        let t_way = s.tallies.interactions();
        let min_runs = t_way.iter().map(|t| t.count.runs).min().unwrap_or(0);
        let _ = writeln!(
            out,
            "  {} every one of the {} {}-way interactions passed, each run at least {} time{}",
            st.green("all clear:"),
            t_way.len(),
            spec.strength,
            min_runs,
            if min_runs == 1 { "" } else { "s" }
        );
        advice(out, s, st);
        if all {
            interactions(out, s, true, st);
        }
        return;
    }

    let _ = writeln!(out, "\n  {}", st.bold("suspects, best first"));
    for (n, sus) in s.analysis.suspects.iter().take(SHOWN_SUSPECTS).enumerate() {
        let entry = &s.tallies.entries[sus.interaction];
        let kind = if sus.always {
            st.red("fails always")
        } else {
            st.yellow("fails sometimes")
        };
        let _ = writeln!(
            out,
            "  {:>3}. {}",
            n + 1,
            levels_text(&described(spec, &entry.interaction))
        );
        let _ = writeln!(out, "       {kind} · score {:.2} · {}", sus.score, sus.reason);
    }
    if s.analysis.suspects.len() > SHOWN_SUSPECTS {
        let _ = writeln!(
            out,
            "       {}",
            st.dim(&format!(
                "and {} more (all in `--format json`)",
                s.analysis.suspects.len() - SHOWN_SUSPECTS
            ))
        );
    }
    if !s.analysis.flaky.is_empty() {
        let _ = writeln!(out, "\n  {}", st.bold("flaky: passed and failed"));
        for f in &s.analysis.flaky {
            let entry = &s.tallies.entries[f.interaction];
            let _ = writeln!(
                out,
                "    {}: passed {} of {} runs ({}), 95% interval {}–{}",
                st.yellow(&levels_text(&described(spec, &entry.interaction))),
                f.passes,
                f.runs,
                pct(f.passes as f64 / f.runs.max(1) as f64),
                pct(f.low),
                pct(f.high)
            );
        }
    }
    advice(out, s, st);

    let _ = writeln!(out, "\n  {}", st.bold("failing rows"));
    let failing: Vec<_> = s.rows.iter().filter(|r| r.count.failures > 0).collect();
    for r in failing.iter().take(SHOWN_ROWS) {
        let labels = spec.row_labels(r.row).unwrap_or_default();
        let pairs: Vec<(&str, &str)> = spec
            .factors
            .iter()
            .map(|f| f.name.as_str())
            .zip(labels.iter().copied())
            .collect();
        let times = if r.count.runs > 1 {
            format!(" (failed {} of {} runs)", r.count.failures, r.count.runs)
        } else {
            String::new()
        };
        let _ = writeln!(
            out,
            "    {}{times}: {}",
            spec.row_test_name(r.row).unwrap_or_default(),
            levels_text(&pairs)
        );
        if let Some(m) = r
            .message
            .as_deref()
            .and_then(|m| m.lines().next())
            .filter(|m| !m.is_empty())
        {
            let _ = writeln!(out, "      {}", st.dim(m));
        }
        let _ = writeln!(
            out,
            "      rerun: {}",
            spec.rerun_command(r.row).unwrap_or_default()
        );
    }
    if failing.len() > SHOWN_ROWS {
        let _ = writeln!(
            out,
            "    {}",
            st.dim(&format!(
                "and {} more (all in `--format json`)",
                failing.len() - SHOWN_ROWS
            ))
        );
    }
    interactions(out, s, all, st);
}

fn advice(out: &mut String, s: &SuiteReport<'_>, st: Style) {
    let a = &s.advice;
    let c = pct(a.confidence);
    let _ = writeln!(out, "\n  {}", st.bold("lambda advice"));
    let _ = writeln!(
        out,
        "    at lambda {}, an interaction failing at least {} of the time is seen failing with {c} confidence",
        s.spec.lambda,
        pct(a.detectable)
    );
    if let Some((rate, lambda, rows)) = a.flake {
        if lambda <= s.spec.lambda {
            let _ = writeln!(
                out,
                "    the top flaky interaction fails {} of the time: lambda {} already sees it with {c} confidence",
                pct(rate),
                s.spec.lambda
            );
        } else {
            let repeat = lambda.div_ceil(s.spec.lambda.max(1));
            let cost = format!(
                "{} to {} rows for this spec, now {}; or `--repeat {repeat}`",
                rows.at_least,
                rows.at_most,
                s.spec.rows.len()
            );
            let _ = writeln!(
                out,
                "    the top flaky interaction fails {} of the time: lambda {lambda} sees it with {c} confidence ({cost})",
                pct(rate)
            );
        }
    }
}

fn interactions(out: &mut String, s: &SuiteReport<'_>, all: bool, st: Style) {
    let mut list: Vec<_> = s
        .tallies
        .entries
        .iter()
        .filter(|e| all || e.count.failures > 0)
        .collect();
    // most failing first, then by arity and key (stable)
    list.sort_by(|a, b| {
        let ra = a.count.failures as f64 / a.count.runs.max(1) as f64;
        let rb = b.count.failures as f64 / b.count.runs.max(1) as f64;
        rb.total_cmp(&ra).then(a.interaction.cmp(&b.interaction))
    });
    let heading = if all {
        "pass counts, every interaction"
    } else {
        "pass counts of interactions with failures"
    };
    let _ = writeln!(out, "\n  {}", st.bold(heading));
    let shown = if all {
        list.len()
    } else {
        list.len().min(SHOWN_INTERACTIONS)
    };
    for e in &list[..shown] {
        let _ = writeln!(
            out,
            "    {:>4}/{:<4} passed  {}",
            e.count.passes,
            e.count.runs,
            levels_text(&described(s.spec, &e.interaction))
        );
    }
    if list.len() > shown {
        let _ = writeln!(
            out,
            "    {}",
            st.dim(&format!(
                "and {} more (`--all` lists every one)",
                list.len() - shown
            ))
        );
    }
}
