//! The terminal report: per suite, its verdict first (suspects, flaky interactions,
//! advice), then the failing rows with their rerun commands, then pass counts.

use std::fmt::Write as _;

use super::{Report, SuiteReport, described, levels_text};
use crate::analysis::Verdict;
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
    if let Some(merged) = report.merged("") {
        let _ = writeln!(out, "merged: {merged}");
    }
    if report.suites.is_empty() {
        let _ = writeln!(out, "\nno `#[cover]` suite recorded in the selected runs");
    }
    for s in &report.suites {
        out.push('\n');
        suite(&mut out, s, report.all, report.other_runs, st);
    }
    out
}

fn suite(out: &mut String, s: &SuiteReport<'_>, all: bool, report_other_runs: usize, st: Style) {
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
    let rows = match spec.followups {
        0 => format!("{} rows", spec.rows.len()),
        f => format!("{} rows + {f} follow-up", spec.design_rows()),
    };
    let mut line = format!(
        "  strength {}, lambda {}, seed {} · {rows}: {} passed, {status}",
        spec.strength, spec.lambda, spec.seed, s.passed
    );
    if s.did_not_finish > 0 {
        let _ = write!(
            line,
            ", {}",
            st.yellow(&format!("{} did not finish", s.did_not_finish))
        );
    }
    if s.not_run > 0 {
        let _ = write!(line, ", {} not run", s.not_run);
    }
    let ran = &s.ran;
    let total = s.tallies.total();
    if total.runs > spec.rows.len() as u64 {
        let _ = write!(line, " ({} executions)", total.runs);
    }
    let _ = writeln!(out, "{line}");
    for f in &spec.focus {
        let names: Vec<&str> = f
            .factors
            .iter()
            .filter_map(|&c| spec.factors.get(c as usize).map(|x| x.name.as_str()))
            .collect();
        let _ = writeln!(
            out,
            "  focus ({}): strength {}, lambda {}",
            names.join(", "),
            f.strength,
            f.lambda
        );
    }
    if ran.focus_interactions > 0 {
        let _ = writeln!(
            out,
            "  {} of the {} focus interactions ran in at least their lambda rows",
            ran.focus_at_lambda, ran.focus_interactions
        );
    }
    if let Some(b) = &s.budget {
        let _ = writeln!(out, "  {} {}", st.yellow("not a complete run:"), b.line());
    }

    if s.analysis.failures == 0 {
        // a budgeted run that ran every row its budget allowed: clear as far as it went
        if let Some(b) = s
            .budget
            .as_ref()
            .filter(|b| s.not_run <= b.of - b.rows && ran.unfinished == 0)
        {
            let _ = writeln!(
                out,
                "  {} no failures in the {} rows the budget ran; the other {} did not run",
                st.green("budget clear:"),
                b.rows,
                b.of - b.rows
            );
            advice(out, s, st);
            if all {
                interactions(out, s, true, st);
            }
            return;
        }
    }
    if s.analysis.failures == 0 && ran.complete() && s.budget.is_none() {
        let _ = writeln!(
            out,
            "  {} every one of the {} {}-way interactions passed in at least {} row{}, each run at least {} time{}",
            st.green("all clear:"),
            ran.interactions,
            spec.strength,
            spec.lambda,
            if spec.lambda == 1 { "" } else { "s" },
            ran.min_runs,
            if ran.min_runs == 1 { "" } else { "s" }
        );
        advice(out, s, st);
        if all {
            interactions(out, s, true, st);
        }
        return;
    }
    if !ran.complete() {
        partial(out, s, report_other_runs, st);
    }
    if s.analysis.failures == 0 {
        advice(out, s, st);
        if all {
            interactions(out, s, true, st);
        }
        return;
    }

    let _ = writeln!(out, "\n  {}", st.bold("suspects, best first"));
    for (n, sus) in s.analysis.suspects.iter().take(SHOWN_SUSPECTS).enumerate() {
        let entry = s.tallies.item(sus.interaction);
        let kind = match sus.verdict {
            Verdict::Always => st.red(sus.verdict.words()),
            _ => st.yellow(sus.verdict.words()),
        };
        let _ = writeln!(
            out,
            "  {:>3}. {}",
            n + 1,
            levels_text(&described(spec, &entry.interaction))
        );
        let _ = writeln!(out, "       {kind} · score {:.2} · {}", sus.score, sus.reason);
    }
    more(
        out,
        st,
        "       ",
        s.analysis.suspects.len(),
        SHOWN_SUSPECTS,
        "all in `--format json`",
    );
    if !s.analysis.flaky.is_empty() {
        let _ = writeln!(
            out,
            "\n  {}",
            st.bold("flaky: a row of it both passed and failed")
        );
        for f in &s.analysis.flaky {
            let entry = s.tallies.item(f.interaction);
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
    let some_rows = s
        .analysis
        .suspects
        .iter()
        .filter(|x| x.verdict == Verdict::SomeRows && x.explains > 0)
        .count();
    if some_rows > 0 {
        let _ = writeln!(
            out,
            "\n  {} suspect{} {} in some of {} rows, but no row both passed and failed: a fault of more than {} factors and a flaky one look alike until each row runs more than once (`cargo heddle test --repeat 3`)",
            some_rows,
            if some_rows == 1 { "" } else { "s" },
            if some_rows == 1 { "fails" } else { "fail" },
            if some_rows == 1 { "its" } else { "their" },
            spec.strength
        );
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
        let _ = writeln!(out, "      rerun: {}", s.rerun(r.row));
    }
    more(
        out,
        st,
        "    ",
        failing.len(),
        SHOWN_ROWS,
        "all in `--format json`",
    );
    interactions(out, s, all, st);
}

/// What a partial run did not cover, and how to see the whole suite.
fn partial(out: &mut String, s: &SuiteReport<'_>, other_runs: usize, st: Style) {
    let ran = &s.ran;
    let t = s.spec.strength;
    let _ = writeln!(
        out,
        "  {} {} of {} rows ran; {} of the {} {t}-way interactions ran ({}), {} in at least {} row{} (lambda); {} did not run",
        st.yellow("partial run, not all clear:"),
        ran.rows_run,
        ran.rows,
        ran.interactions_run,
        ran.interactions,
        pct(ran.share_run()),
        ran.interactions_at_lambda,
        s.spec.lambda,
        if s.spec.lambda == 1 { "" } else { "s" },
        ran.interactions_not_run()
    );
    let unfinished = s.unfinished_rows();
    if !unfinished.is_empty() {
        let _ = writeln!(
            out,
            "  {} {}: their test process ended while they ran, and one of them likely caused it (not counted as failures; see the note)",
            st.yellow("did not finish:"),
            unfinished.join(", ")
        );
    }
    if other_runs > 0 {
        let _ = writeln!(
            out,
            "  {}",
            st.dim(&format!(
                "this report covers only the runs selected; the store holds {other_runs} other run{} (`--runs N` merges the last N)",
                if other_runs == 1 { "" } else { "s" }
            ))
        );
    }
}

fn advice(out: &mut String, s: &SuiteReport<'_>, st: Style) {
    let a = &s.advice;
    let c = pct(a.confidence);
    let lambda = s.spec.lambda;
    let _ = writeln!(out, "\n  {}", st.bold("lambda advice"));
    let over = if a.rounds > 1 {
        format!(" over {} rounds ({} runs per interaction)", a.rounds, a.runs)
    } else {
        String::new()
    };
    // when some interaction did not run, the figure is the design's, not this run's
    let whole = if s.ran.min_runs == 0 {
        " (in a complete run)"
    } else {
        ""
    };
    let _ = writeln!(
        out,
        "    at lambda {lambda}{over}{whole}, an interaction failing at least {} of the time is seen failing with {c} confidence",
        pct(a.detectable)
    );
    if let Some((rate, needed, rows)) = a.flake {
        if u64::from(needed) <= a.runs {
            let _ = writeln!(
                out,
                "    the top flaky interaction fails {} of the time: {needed} runs per interaction see it with {c} confidence, and the runs read have {}",
                pct(rate),
                a.runs
            );
        } else {
            // rounds of the whole suite at this lambda that reach `needed` runs
            let repeat = u64::from(needed).div_ceil(u64::from(lambda.max(1)));
            let done = if a.rounds > 1 {
                format!(", this report has {}", a.rounds)
            } else {
                String::new()
            };
            let price = if rows.at_least == rows.at_most {
                rows.at_most.to_string()
            } else {
                format!("{} to {}", rows.at_least, rows.at_most)
            };
            let cost = format!(
                "lambda {needed}: {price} rows for this spec, now {}; or `--repeat {repeat}` at lambda {lambda}{done}",
                s.spec.rows.len()
            );
            let _ = writeln!(
                out,
                "    the top flaky interaction fails {} of the time: {needed} runs per interaction see it with {c} confidence ({cost})",
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
    more(out, st, "    ", list.len(), shown, "`--all` lists every one");
}

/// The line under a list cut at `shown` of `total` entries, saying where the rest are.
fn more(out: &mut String, st: Style, indent: &str, total: usize, shown: usize, rest: &str) {
    if total > shown {
        let _ = writeln!(
            out,
            "{indent}{}",
            st.dim(&format!("and {} more ({rest})", total - shown))
        );
    }
}
