//! Flaky interactions drawn as intervals — the pass rate with its 95% Wilson score
//! interval on a 0–100% axis, so a wide interval reads as "little evidence" at a glance —
//! and, when several runs are read (`--runs N`), their history: the pass rate of each
//! flaky interaction in each run, oldest first, to see whether it is getting worse.

use maud::{Markup, html};

use heddle_store::Count;

use super::chart::{CHAR_W, FONT, Linear, Px, clip, percent};
use super::colour::SUSPECT;
use crate::report::{SuiteReport, described, levels_text};

/// Longest interaction label drawn before it is clipped.
const LABEL_CHARS: usize = 48;
/// Height of one interval's line, pixels.
const LINE_H: f64 = 28.0;
/// Width of the 0–100% axis, pixels.
const AXIS_W: f64 = 360.0;

/// The label of the suite's `i`th flaky interaction.
fn label(s: &SuiteReport<'_>, i: usize) -> String {
    let e = s.tallies.item(s.analysis.flaky[i].interaction);
    levels_text(&described(s.spec, &e.interaction))
}

/// The interval chart of a suite's flaky interactions.
pub fn intervals(s: &SuiteReport<'_>) -> Markup {
    let flaky = &s.analysis.flaky;
    let labels: Vec<String> = (0..flaky.len()).map(|i| label(s, i)).collect();
    let left = labels
        .iter()
        .map(|l| clip(l, LABEL_CHARS).chars().count())
        .max()
        .unwrap_or(0) as f64
        * CHAR_W
        + 14.0;
    let right = 150.0;
    let top = 8.0;
    let axis_y = top + flaky.len() as f64 * LINE_H;
    let (width, height) = (left + AXIS_W + right, axis_y + FONT + 14.0);
    let x = Linear::new((0.0, 1.0), (left, left + AXIS_W));
    html! {
        svg class="intervals" role="img" width=(Px(width)) height=(Px(height))
            viewBox={ "0 0 " (Px(width)) " " (Px(height)) }
            aria-label="pass rate of each flaky interaction with its 95% Wilson score interval" {
            @for q in [0.0, 0.25, 0.5, 0.75, 1.0] {
                line class="gridline" x1=(x.at(q)) x2=(x.at(q)) y1=(Px(top)) y2=(Px(axis_y)) {}
                text class="label" x=(x.at(q)) y=(Px(axis_y + FONT + 6.0)) text-anchor="middle" { (percent(q)) }
            }
            @for (i, f) in flaky.iter().enumerate() {
                @let y = top + (i as f64 + 0.5) * LINE_H;
                @let rate = f.passes as f64 / f.runs.max(1) as f64;
                g class="interval" {
                    title {
                        (labels[i]) ": passed " (f.passes) " of " (f.runs) " runs (" (percent(rate))
                        "); 95% Wilson score interval " (percent(f.low)) "–" (percent(f.high))
                    }
                    text class="label" x=(Px(left - 8.0)) y=(Px(y + FONT * 0.35)) text-anchor="end" {
                        (clip(&labels[i], LABEL_CHARS))
                    }
                    line class="whisker" x1=(x.at(f.low)) x2=(x.at(f.high)) y1=(Px(y)) y2=(Px(y)) {}
                    line class="whisker" x1=(x.at(f.low)) x2=(x.at(f.low)) y1=(Px(y - 6.0)) y2=(Px(y + 6.0)) {}
                    line class="whisker" x1=(x.at(f.high)) x2=(x.at(f.high)) y1=(Px(y - 6.0)) y2=(Px(y + 6.0)) {}
                    circle cx=(x.at(rate)) cy=(Px(y)) r="4.5" fill=(SUSPECT) stroke="#000" {}
                    text class="label" x=(Px(left + AXIS_W + 10.0)) y=(Px(y + FONT * 0.35)) {
                        (f.passes) "/" (f.runs) " · " (percent(f.low)) "–" (percent(f.high))
                    }
                }
            }
        }
    }
}

/// Each flaky interaction's count in each run read, oldest run first.
pub fn per_run(s: &SuiteReport<'_>) -> Vec<Vec<Count>> {
    s.analysis
        .flaky
        .iter()
        .map(|f| {
            let rows = &s.tallies.item(f.interaction).rows;
            s.by_run
                .iter()
                .map(|run| {
                    let mut c = Count::default();
                    for &r in rows {
                        if let Some(rc) = run.get(r as usize) {
                            c.merge(rc);
                        }
                    }
                    c
                })
                .collect()
        })
        .collect()
}

/// One small chart per flaky interaction: its pass rate in each run, runs that did not
/// contain it left as gaps.
pub fn history(s: &SuiteReport<'_>, runs: &[String], counts: &[Vec<Count>]) -> Markup {
    let (w, h, left, top, bottom) = (300.0, 130.0, 40.0, 8.0, 26.0);
    let x = Linear::new(
        (0.0, runs.len().saturating_sub(1).max(1) as f64),
        (left + 8.0, w - 12.0),
    );
    let y = Linear::new((0.0, 1.0), (h - bottom, top));
    html! {
        div class="history" {
            @for (i, per_run) in counts.iter().enumerate() {
                @let name = label(s, i);
                figure class="small" {
                    svg role="img" width=(Px(w)) height=(Px(h)) viewBox={ "0 0 " (Px(w)) " " (Px(h)) }
                        aria-label={ "pass rate of " (name) " in each of " (runs.len()) " runs, oldest first" } {
                        @for q in [0.0, 0.5, 1.0] {
                            line class="gridline" x1=(Px(left)) x2=(Px(w - 4.0)) y1=(y.at(q)) y2=(y.at(q)) {}
                            text class="label" x=(Px(left - 6.0)) y=(Px(y.at(q).0 + FONT * 0.35)) text-anchor="end" { (percent(q)) }
                        }
                        text class="label" x=(Px(left + 8.0)) y=(Px(h - 8.0)) { "oldest" }
                        text class="label" x=(Px(w - 12.0)) y=(Px(h - 8.0)) text-anchor="end" { "newest" }
                        polyline class="trend" fill="none" points=(points(per_run, &x, &y)) {}
                        @for (j, c) in per_run.iter().enumerate() {
                            g {
                                title { "run " (runs[j]) ": " (run_text(c)) }
                                @if let Some(rate) = c.pass_rate() {
                                    circle cx=(x.at(j as f64)) cy=(y.at(rate)) r="4" fill=(SUSPECT) stroke="#000" {}
                                } @else {
                                    text class="label" x=(x.at(j as f64)) y=(Px(h - bottom + FONT)) text-anchor="middle" { "–" }
                                }
                            }
                        }
                    }
                    figcaption { code { (name) } }
                }
            }
        }
    }
}

/// The points of the runs that contained the interaction, joined in run order.
fn points(counts: &[Count], x: &Linear, y: &Linear) -> String {
    counts
        .iter()
        .enumerate()
        .filter_map(|(j, c)| Some(format!("{},{}", x.at(j as f64), y.at(c.pass_rate()?))))
        .collect::<Vec<_>>()
        .join(" ")
}

/// A run's count in words.
pub fn run_text(c: &Count) -> String {
    match c.pass_rate() {
        Some(rate) => format!("passed {} of {} ({})", c.passes, c.runs, percent(rate)),
        None => "not run".to_string(),
    }
}
