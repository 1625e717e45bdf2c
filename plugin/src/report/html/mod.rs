//! The HTML report: one self-contained page (no script, no font, no image, nothing
//! fetched; a Content-Security-Policy that forbids all of it says so to the browser) that
//! works opened from a CI artifact. Per suite it shows the verdict, a heat map of pass
//! rates for every pair of factors ([`pairs`]), the flaky interactions with their 95%
//! Wilson intervals and, over several runs, their history ([`flaky`]), each focus set's
//! interactions at its own strength ([`focus`]), the coverage
//! curve of the design and of what ran ([`coverage`]), and the failing rows with their
//! rerun commands. Every picture has a table beneath it holding the same figures, for
//! keyboards and screen readers; pictures never tell anything by colour alone
//! ([`colour`]).
//!
//! Markup is written with `maud`: templates are Rust, so tags are checked when the crate
//! compiles and every value is escaped unless marked otherwise (only the style sheet is).
//! The charts are SVG written through the same templates over a small typed layer of our
//! own ([`chart`]: coordinates, scales, ticks). A chart crate would bring a drawing model
//! (canvases, backends, fonts) to produce what is here a few dozen elements, and would
//! not give the per-cell `<title>`s, marks and ARIA labels the page needs.
//!
//! The page carries `<meta name="generator">` with [`HTML_FORMAT`]; it changes when the
//! page's structure (ids, classes, `data-` attributes scripts might read) does.

mod chart;
mod colour;
mod coverage;
mod flaky;
mod focus;
mod pairs;

use maud::{DOCTYPE, Markup, PreEscaped, html};

use super::{Report, SuiteReport, described, levels_text};
use chart::percent;
use colour::{EXCLUDED, SUSPECT};
use heddle_store::words::plural;

/// Version of the page's structure.
pub const HTML_FORMAT: u32 = 2;

/// No fetch of any kind, inline style only: the page must be whole on its own.
const POLICY: &str = "default-src 'none'; style-src 'unsafe-inline'";

const STYLE: &str = include_str!("style.css");

/// Renders the whole report as one page.
pub fn render(report: &Report<'_>) -> String {
    let title = match report.suites.as_slice() {
        [one] => format!("heddle report: {}", one.spec.suite),
        _ => format!("heddle report: {} suites", report.suites.len()),
    };
    let page = html! {
        (DOCTYPE)
        html lang="en" {
            head {
                meta charset="utf-8";
                meta name="viewport" content="width=device-width, initial-scale=1";
                meta http-equiv="Content-Security-Policy" content=(POLICY);
                meta name="generator" content={ "cargo-heddle " (env!("CARGO_PKG_VERSION")) ", html report format " (HTML_FORMAT) };
                title { (title) }
                style { (PreEscaped(STYLE)) }
            }
            body {
                (patterns())
                header {
                    h1 { "heddle report" }
                    p class="runs" { (runs_text(&report.runs)) }
                }
                main {
                    @if report.suites.is_empty() {
                        p { "No " code { "#[cover]" } " suite was recorded in the selected runs." }
                    } @else {
                        (overview(report))
                    }
                    @for (i, s) in report.suites.iter().enumerate() {
                        (suite(report, i, s))
                    }
                    @if !report.notes.is_empty() {
                        section aria-labelledby="notes" {
                            h2 id="notes" { "What reading left out" }
                            ul { @for n in &report.notes { li { (n) } } }
                        }
                    }
                }
            }
        }
    };
    let mut out = page.into_string();
    out.push('\n');
    out
}

fn runs_text(runs: &[String]) -> String {
    match runs {
        [] => "no runs".to_string(),
        [one] => format!("run {one}"),
        many => format!("{} runs, {} to {}", many.len(), many[0], many[many.len() - 1]),
    }
}

/// Patterns the grids and legends share (ids are page-wide in HTML).
fn patterns() -> Markup {
    html! {
        svg class="defs" width="0" height="0" aria-hidden="true" focusable="false" {
            defs {
                pattern id="heddle-not-run" width="6" height="6" patternUnits="userSpaceOnUse"
                    patternTransform="rotate(45)" {
                    rect width="6" height="6" fill="#ffffff" {}
                    line x1="0" y1="0" x2="0" y2="6" stroke=(colour::NOT_RUN) stroke-width="2" {}
                }
            }
        }
    }
}

/// The anchor of a suite's section.
fn anchor(i: usize) -> String {
    format!("suite-{}", i + 1)
}

/// One line per suite, linking to its section.
fn overview(report: &Report<'_>) -> Markup {
    // the column is there only when a row did not finish, which a crash alone causes
    let unfinished = report.suites.iter().any(|s| s.did_not_finish > 0);
    html! {
        section aria-labelledby="overview" {
            h2 id="overview" { "Suites" }
            div class="scroll" role="region" aria-label="suites" tabindex="0" {
                table {
                    thead { tr {
                        th scope="col" { "suite" } th scope="col" { "file" } th scope="col" { "t" }
                        th scope="col" { "λ" } th scope="col" { "rows" } th scope="col" { "passed" }
                        th scope="col" { "failed" }
                        @if unfinished { th scope="col" { "did not finish" } }
                        th scope="col" { "not run" } th scope="col" { "top suspect" }
                    } }
                    tbody {
                        @for (i, s) in report.suites.iter().enumerate() {
                            tr {
                                th scope="row" { a href={ "#" (anchor(i)) } { (s.spec.suite) } }
                                td { (s.spec.file) }
                                td class="num" { (s.spec.strength) }
                                td class="num" { (s.spec.lambda) }
                                td class="num" { (s.spec.rows.len()) }
                                td class="num" { (s.passed) }
                                td class="num" { (s.failed) }
                                @if unfinished { td class="num" { (s.did_not_finish) } }
                                td class="num" { (s.not_run) }
                                td { @match s.analysis.suspects.first() {
                                    Some(x) => { code { (levels_text(&described(s.spec, &s.tallies.item(x.interaction).interaction))) } " " (verdict(x)) }
                                    None => { "none" }
                                } }
                            }
                        }
                    }
                }
            }
        }
    }
}

/// A suspect's verdict in the analysis' words, and whether a higher-ranked suspect
/// already explains its failures.
fn verdict(x: &crate::analysis::Suspect) -> String {
    let words = x.verdict.words();
    if x.explains == 0 {
        format!("{words} (already explained)")
    } else {
        words.to_string()
    }
}

fn suite(report: &Report<'_>, i: usize, s: &SuiteReport<'_>) -> Markup {
    let spec = s.spec;
    let id = anchor(i);
    let executions = s.tallies.total().runs;
    let grids = pairs::grids(s);
    let curve = coverage::curve(s);
    html! {
        section class="suite" aria-labelledby=(id) {
            h2 id=(id) { code { (spec.suite) } }
            p class="facts" {
                "crate " code { (spec.krate) } " · " code { (spec.file) } " · strength " (spec.strength)
                " · λ " (spec.lambda) " · seed " (spec.seed) " · " (spec.rows.len()) " rows: "
                strong { (s.passed) " passed, " (s.failed) " failed" }
                @if s.did_not_finish > 0 { ", " strong { (s.did_not_finish) " did not finish" } }
                @if s.not_run > 0 { ", " strong { (s.not_run) " not run" } }
                " · " (executions) " executions"
            }
            (suspects(s))
            section aria-labelledby={ (id) "-pairs" } {
                h3 id={ (id) "-pairs" } { @if s.tallies.strength >= 2 { "Pass rate by pair of levels" } @else { "Pass rate by level" } }
                @if s.tallies.strength < 2 {
                    p { "Strength 1 covers every level but no pair of levels, so the pass rate is shown per level." }
                }
                (legend(spec.strength))
                div class="grids" {
                    @for g in &grids {
                        figure class="small" {
                            (pairs::svg(s, g))
                            figcaption {
                                @match g.down {
                                    Some(d) => { code { (spec.factors[d].name) } " × " code { (spec.factors[g.across].name) } }
                                    None => { code { (spec.factors[g.across].name) } }
                                }
                            }
                        }
                    }
                }
                (cells_table(&grids))
            }
            @if !s.analysis.flaky.is_empty() {
                (flaky_section(report, s, &id))
            }
            (focus::section(s, &id))
            section aria-labelledby={ (id) "-coverage" } {
                h3 id={ (id) "-coverage" } { "Coverage of the design" }
                p {
                    "The fraction of the demand — " (spec.lambda) " run" @if spec.lambda != 1 { "s" }
                    " of each of the " (s.tallies.interactions().len()) " allowed " (spec.strength)
                    "-way interactions — met after each row"
                    @if !curve.not_run.is_empty() {
                        "; dashed: counting only the " (spec.rows.len() - curve.not_run.len())
                        " rows that ran, which meet " strong { (percent(curve.ran.last().copied().unwrap_or(0.0))) } " of it"
                    }
                    "."
                }
                figure { (coverage::svg(&curve)) }
                (curve_table(s, &curve))
            }
            (failing_rows(s))
            (advice(s))
        }
    }
}

fn suspects(s: &SuiteReport<'_>) -> Markup {
    let a = &s.analysis;
    html! {
        @if a.suspects.is_empty() && s.did_not_finish > 0 {
            // a crash is no failure of a row, but the page must not read as a clean one
            p class="clear" {
                "No failures recorded, but " (plural(s.did_not_finish, "row", "rows"))
                " did not finish: the test process ended while they ran (see the note)."
            }
        } @else if a.suspects.is_empty() {
            p class="clear" { "No failures: every interaction that ran passed." }
        } @else {
            div class="scroll" role="region" aria-label="suspects" tabindex="0" {
                table class="suspects" {
                    caption { "Suspects, best first: the interactions that explain the failing rows" }
                    thead { tr {
                        th scope="col" { "#" } th scope="col" { "levels" } th scope="col" { "verdict" }
                        th scope="col" { "passed" } th scope="col" { "score" } th scope="col" { "why" }
                    } }
                    tbody {
                        @for (n, x) in a.suspects.iter().enumerate() {
                            @let e = s.tallies.item(x.interaction);
                            tr data-suspect=(n + 1) {
                                td class="num" { (n + 1) }
                                th scope="row" { code { (levels_text(&described(s.spec, &e.interaction))) } }
                                td { (verdict(x)) }
                                td class="num" { (e.count.passes) "/" (e.count.runs) }
                                td class="num" { (format!("{:.2}", x.score)) }
                                td { (x.reason) }
                            }
                        }
                    }
                }
            }
        }
    }
}

/// What the marks and colours of the grids mean.
fn legend(strength: u32) -> Markup {
    let steps = 20;
    let (sw, bar_w) = (16.0, 200.0);
    html! {
        div class="legend" {
            svg role="img" width="260" height="40" viewBox="0 0 260 40"
                aria-label="colour scale: pass rate from 0% (dark blue) to 100% (yellow)" {
                @for k in 0..steps {
                    rect x=(chart::Px(8.0 + k as f64 * bar_w / steps as f64)) y="4"
                        width=(chart::Px(bar_w / steps as f64 + 0.5)) height="14"
                        fill=(colour::pass_rate(k as f64 / (steps - 1) as f64)) {}
                }
                @for (q, anchor) in [(0.0, "start"), (0.5, "middle"), (1.0, "end")] {
                    text class="label" x=(chart::Px(8.0 + q * bar_w)) y="32" text-anchor=(anchor) { (percent(q)) }
                }
                text class="label" x=(chart::Px(bar_w + 16.0)) y="15" { "passed" }
            }
            span class="key" {
                svg width=(chart::Px(sw + 4.0)) height=(chart::Px(sw + 4.0)) aria-hidden="true" {
                    rect x="2" y="2" width=(chart::Px(sw)) height=(chart::Px(sw)) fill="url(#heddle-not-run)" stroke="#888" {}
                }
                " – not run"
            }
            span class="key" {
                svg width=(chart::Px(sw + 4.0)) height=(chart::Px(sw + 4.0)) aria-hidden="true" {
                    rect x="2" y="2" width=(chart::Px(sw)) height=(chart::Px(sw)) fill=(EXCLUDED) stroke="#888" {}
                }
                " × excluded (no allowed row)"
            }
            span class="key" {
                svg width="30" height="20" aria-hidden="true" {
                    rect x="2" y="2" width="26" height="16" fill="none" stroke=(SUSPECT) stroke-width="3" {}
                    (pairs::diamond(23.0, 7.0))
                }
                " suspect"
            }
            @if strength != 2 {
                span class="key" {
                    svg width="30" height="20" aria-hidden="true" {
                        rect x="2" y="2" width="26" height="16" fill="none" stroke=(SUSPECT) stroke-width="3" stroke-dasharray="5 3" {}
                        (pairs::diamond(23.0, 7.0))
                    }
                    " shares its levels with a suspect"
                }
            }
        }
    }
}

/// Every cell of every grid as a table row.
fn cells_table(grids: &[pairs::Grid]) -> Markup {
    let cells = grids.iter().flat_map(|g| g.cells.iter().flatten());
    html! {
        details {
            summary { "The same figures as a table" }
            div class="scroll" role="region" aria-label="pass rate of each pair of levels" tabindex="0" {
                table {
                    thead { tr { th scope="col" { "levels" } th scope="col" { "runs" } th scope="col" { "pass rate" } th scope="col" { "status" } } }
                    tbody {
                        @for c in cells {
                            @let pairs: Vec<(&str, &str)> = c.levels.iter().map(|(n, l)| (n.as_str(), l.as_str())).collect();
                            tr {
                                th scope="row" { code { (levels_text(&pairs)) } }
                                td class="num" { @match c.count { Some(n) => { (n.passes) "/" (n.runs) } None => { "–" } } }
                                td class="num" { @match c.count.and_then(|n| n.pass_rate()) { Some(r) => { (percent(r)) } None => { "–" } } }
                                td { (c.state()) @if !c.marks.is_empty() { "; " strong { (c.marks_text()) } } }
                            }
                        }
                    }
                }
            }
        }
    }
}

fn flaky_section(report: &Report<'_>, s: &SuiteReport<'_>, id: &str) -> Markup {
    let counts = flaky::per_run(s);
    html! {
        section aria-labelledby={ (id) "-flaky" } {
            h3 id={ (id) "-flaky" } { "Flaky interactions" }
            p { "Interactions that both passed and failed, with the pass rate and its 95% Wilson score interval: the wider the bar, the less the runs tell." }
            figure { (flaky::intervals(s)) }
            div class="scroll" role="region" aria-label="flaky interactions" tabindex="0" {
                table {
                    thead { tr { th scope="col" { "levels" } th scope="col" { "passed" } th scope="col" { "pass rate" } th scope="col" { "95% interval" } } }
                    tbody {
                        @for f in &s.analysis.flaky {
                            tr {
                                th scope="row" { code { (levels_text(&described(s.spec, &s.tallies.item(f.interaction).interaction))) } }
                                td class="num" { (f.passes) "/" (f.runs) }
                                td class="num" { (percent(f.passes as f64 / f.runs.max(1) as f64)) }
                                td class="num" { (percent(f.low)) "–" (percent(f.high)) }
                            }
                        }
                    }
                }
            }
            @if report.runs.len() > 1 {
                h4 { "History over " (report.runs.len()) " runs" }
                (flaky::history(s, &report.runs, &counts))
                div class="scroll" role="region" aria-label="pass rate per run" tabindex="0" {
                    table {
                        thead { tr {
                            th scope="col" { "levels" }
                            @for r in &report.runs { th scope="col" { (r) } }
                        } }
                        tbody {
                            @for (i, f) in s.analysis.flaky.iter().enumerate() {
                                tr {
                                    th scope="row" { code { (levels_text(&described(s.spec, &s.tallies.item(f.interaction).interaction))) } }
                                    @for c in &counts[i] { td { (flaky::run_text(c)) } }
                                }
                            }
                        }
                    }
                }
            }
        }
    }
}

fn curve_table(s: &SuiteReport<'_>, c: &coverage::Curve) -> Markup {
    let partial = !c.not_run.is_empty();
    html! {
        details {
            summary { "The same figures as a table" }
            div class="scroll" role="region" aria-label="coverage after each row" tabindex="0" {
                table {
                    thead { tr {
                        th scope="col" { "row" } th scope="col" { "design" }
                        @if partial { th scope="col" { "ran" } th scope="col" { "what ran" } }
                    } }
                    tbody {
                        @for (r, f) in c.design.iter().enumerate() {
                            tr {
                                th scope="row" { code { (s.spec.row_test_name(r).unwrap_or_default()) } }
                                td class="num" { (format!("{:.1}%", f * 100.0)) }
                                @if partial {
                                    td { @if c.not_run.binary_search(&r).is_ok() { "no" } @else { "yes" } }
                                    td class="num" { (format!("{:.1}%", c.ran[r] * 100.0)) }
                                }
                            }
                        }
                    }
                }
            }
        }
    }
}

fn failing_rows(s: &SuiteReport<'_>) -> Markup {
    let spec = s.spec;
    let failing: Vec<_> = s.rows.iter().filter(|r| r.count.failures > 0).collect();
    html! {
        @if !failing.is_empty() {
            section {
                h3 { "Failing rows" }
                div class="scroll" role="region" aria-label="failing rows" tabindex="0" {
                    table class="rows" {
                        thead { tr {
                            th scope="col" { "row" }
                            @for f in &spec.factors { th scope="col" { (f.name) } }
                            th scope="col" { "failed" }
                        } }
                        tbody {
                            @for r in &failing {
                                tr {
                                    th scope="row" { code { (spec.row_test_name(r.row).unwrap_or_default()) } }
                                    @for l in spec.row_labels(r.row).unwrap_or_default() { td { code { (l) } } }
                                    td class="num" { (r.count.failures) "/" (r.count.runs) }
                                }
                                // message and command span the table below their row,
                                // so neither is squeezed into a column
                                tr class="detail" {
                                    td colspan=(spec.factors.len() + 2) {
                                        @if let Some(m) = r.message.as_deref().filter(|m| !m.is_empty()) {
                                            @let (first, rest) = m.split_once('\n').unwrap_or((m, ""));
                                            pre class="message" { (first) }
                                            @if !rest.trim().is_empty() {
                                                details { summary { "the whole message" } pre class="message" { (rest) } }
                                            }
                                        }
                                        pre class="rerun" { "rerun: " code { (spec.rerun_command(r.row).unwrap_or_default()) } }
                                    }
                                }
                            }
                        }
                    }
                }
            }
        }
    }
}

fn advice(s: &SuiteReport<'_>) -> Markup {
    let a = &s.advice;
    let lambda = s.spec.lambda;
    html! {
        section {
            h3 { "λ advice" }
            p {
                "At λ = " (lambda)
                @if a.rounds > 1 { " over " (a.rounds) " rounds (" (a.runs) " runs per interaction)" }
                @if s.ran.min_runs == 0 { " (in a complete run)" }
                ", an interaction failing at least " (percent(a.detectable))
                " of the time is seen failing with " (percent(a.confidence)) " confidence."
                @if let Some((rate, needed, rows)) = a.flake {
                    " The top flaky interaction fails " (percent(rate)) " of the time; "
                    @if u64::from(needed) <= a.runs {
                        (needed) " runs per interaction see it, and the runs read have " (a.runs) "."
                    } @else {
                        "catching it takes " (needed) " runs per interaction: λ = " (needed) " ("
                        @if rows.at_least == rows.at_most { (rows.at_most) } @else { (rows.at_least) " to " (rows.at_most) }
                        " rows for this spec, now " (s.spec.rows.len()) "), or " code { "--repeat " (u64::from(needed).div_ceil(u64::from(lambda.max(1)))) } " at λ = " (lambda) "."
                    }
                }
            }
        }
    }
}
