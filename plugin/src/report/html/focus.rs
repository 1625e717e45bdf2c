//! Focus sets (variable strength): each focus set's interactions at its own strength,
//! one strip per column set of the set, a cell per interaction coloured by its pass rate
//! like the pair grids, with its levels, counts and verdict in the cell's `<title>` and
//! in the table beneath. Failing interactions are outlined and marked with a diamond and
//! interactions whose rows never ran are hatched, so no state is told by colour alone.
//! The verdict words are the analysis' ([`Verdict`]); whether a focus interaction met its
//! index counts distinct rows that ran, as "all clear" does ([`crate::report::ran`]).

use maud::{Markup, html};

use heddle_generator::Focus;
use heddle_store::FocusTally;

use super::chart::{CHAR_W, FONT, Px, clip, percent};
use super::colour::{self, SUSPECT};
use super::pairs::diamond;
use crate::analysis::{Verdict, split_of};
use crate::report::{SuiteReport, described, levels_text};

/// Widest cell, and the width the cells of one strip share before they narrow.
const CELL_W: f64 = 22.0;
const STRIP_W: f64 = 560.0;
const CELL_H: f64 = 24.0;
/// Longest column-set label drawn before it is clipped.
const LABEL_CHARS: usize = 40;

/// One focus interaction as the page shows it.
pub struct Item<'a> {
    /// Its levels in words.
    pub levels: String,
    /// Its tally and the index its column set asks for.
    pub tally: &'a FocusTally,
    /// Distinct design rows holding it that ran.
    pub rows_ran: u64,
    /// The analysis' verdict when it failed.
    pub verdict: Option<Verdict>,
}

impl Item<'_> {
    /// Its state in words: the `<title>` and the table's verdict.
    pub fn state(&self) -> String {
        let c = &self.tally.tally.count;
        if let Some(v) = self.verdict {
            return v.words().to_string();
        }
        if c.runs == 0 {
            return "not run".to_string();
        }
        if self.rows_ran < u64::from(self.tally.lambda.max(1)) {
            return format!(
                "passed, in {} of the {} rows asked",
                self.rows_ran,
                self.tally.lambda.max(1)
            );
        }
        "passed".to_string()
    }
}

/// One focus set: its factors, strength and index, and its interactions by column set.
pub struct Set<'a> {
    /// The factors' names, in the order the spec names them.
    pub names: Vec<String>,
    /// Its strength and λ.
    pub strength: usize,
    pub lambda: u32,
    /// Per column set (factor indices), its interactions in level order.
    pub strips: Vec<(Vec<usize>, Vec<Item<'a>>)>,
}

impl Set<'_> {
    /// Interactions, those that met the index, and those that failed.
    pub fn counts(&self) -> (usize, usize, usize) {
        let items = self.strips.iter().flat_map(|(_, i)| i);
        let (mut n, mut met, mut failed) = (0, 0, 0);
        for i in items {
            n += 1;
            met += usize::from(i.rows_ran >= u64::from(i.tally.lambda.max(1)));
            failed += usize::from(i.verdict.is_some());
        }
        (n, met, failed)
    }
}

/// The focus sets of a suite, in the spec's order (empty without focus sets or when
/// their interactions were not counted).
pub fn sets<'a>(s: &'a SuiteReport<'_>) -> Vec<Set<'a>> {
    let focus: Vec<Focus> = heddle_store::spec::focus(s.spec).unwrap_or_default();
    let names = crate::report::focus_names(s.spec);
    focus
        .iter()
        .zip(names)
        .map(|(f, names)| {
            let mut strips: Vec<(Vec<usize>, Vec<Item<'a>>)> = Vec::new();
            for t in s.tallies.focus_of(f) {
                let split = split_of(&s.tallies, &t.tally);
                let item = Item {
                    levels: levels_text(&described(s.spec, &t.tally.interaction)),
                    tally: t,
                    rows_ran: split.ran,
                    verdict: Verdict::of(&t.tally.count, &split),
                };
                match strips.last_mut() {
                    Some((cols, items)) if *cols == t.tally.interaction.factors => items.push(item),
                    _ => strips.push((t.tally.interaction.factors.clone(), vec![item])),
                }
            }
            Set {
                names,
                strength: f.strength,
                lambda: f.lambda,
                strips,
            }
        })
        .collect()
}

/// The strips of one focus set.
pub fn svg(s: &SuiteReport<'_>, set: &Set<'_>) -> Markup {
    let label = |cols: &[usize]| -> String {
        let names: Vec<&str> = cols
            .iter()
            .map(|&c| s.spec.factors.get(c).map_or("?", |f| f.name.as_str()))
            .collect();
        clip(&names.join(" × "), LABEL_CHARS)
    };
    let left = set
        .strips
        .iter()
        .map(|(cols, _)| label(cols).chars().count())
        .max()
        .unwrap_or(0) as f64
        * CHAR_W
        + 14.0;
    let widest = set.strips.iter().map(|(_, i)| i.len()).max().unwrap_or(1).max(1);
    let w = (STRIP_W / widest as f64).min(CELL_W);
    let line_h = CELL_H + 10.0;
    let (width, height) = (
        left + w * widest as f64 + 8.0,
        set.strips.len() as f64 * line_h + 6.0,
    );
    html! {
        svg class="focus" role="img" width=(Px(width)) height=(Px(height))
            viewBox={ "0 0 " (Px(width)) " " (Px(height)) }
            aria-label={ "pass rate of each interaction of " (set.names.join(", ")) " at strength " (set.strength) } {
            @for (j, (cols, items)) in set.strips.iter().enumerate() {
                @let y = 4.0 + j as f64 * line_h;
                text class="label" x=(Px(left - 8.0)) y=(Px(y + CELL_H / 2.0 + FONT * 0.35)) text-anchor="end" { (label(cols)) }
                @for (i, item) in items.iter().enumerate() {
                    @let x = left + i as f64 * w;
                    @let c = &item.tally.tally.count;
                    g class="focus-cell" data-verdict=(item.verdict.map_or("none", Verdict::key)) {
                        title {
                            (item.levels) ": " (item.state())
                            @if c.runs > 0 { "; passed " (c.passes) " of " (c.runs) " runs (" (percent(c.passes as f64 / c.runs as f64)) ")" }
                            " in " (item.rows_ran) " of its " (item.tally.tally.rows.len()) " rows"
                        }
                        @match c.pass_rate() {
                            Some(rate) => { rect x=(Px(x + 1.0)) y=(Px(y)) width=(Px(w - 2.0)) height=(Px(CELL_H)) fill=(colour::pass_rate(rate)) {} }
                            None => { rect x=(Px(x + 1.0)) y=(Px(y)) width=(Px(w - 2.0)) height=(Px(CELL_H)) fill="url(#heddle-not-run)" stroke="#888" {} }
                        }
                        @if item.verdict.is_some() {
                            rect class="suspect" x=(Px(x + 1.0)) y=(Px(y)) width=(Px(w - 2.0)) height=(Px(CELL_H)) fill="none" stroke=(SUSPECT) stroke-width="3" {}
                            (diamond(x + w / 2.0, y + CELL_H / 2.0))
                        }
                    }
                }
            }
        }
    }
}

/// The section of a suite's focus sets: per set, what met its index, the strips, and
/// the same figures as a table.
pub fn section(s: &SuiteReport<'_>, id: &str) -> Markup {
    let sets = sets(s);
    let counted = !s.tallies.focus.is_empty();
    html! {
        @if !sets.is_empty() {
            section aria-labelledby={ (id) "-focus" } {
                h3 id={ (id) "-focus" } { "Focus sets" }
                @if !counted {
                    p { "The focus sets' interactions were not counted: there were more than a suite may take (see the notes at the end)." }
                } @else {
                    p { "Factors the spec covers at a higher strength than its own, each interaction at that strength with its pass rate; failing ones are outlined and marked." }
                }
                @for (n, set) in sets.iter().enumerate() {
                    @let (total, met, failed) = set.counts();
                    section class="focus-set" data-focus=(n + 1) aria-labelledby={ (id) "-focus-" (n + 1) } {
                        h4 id={ (id) "-focus-" (n + 1) } {
                            code { (set.names.join(", ")) } " at strength " (set.strength) ", λ " (set.lambda)
                        }
                        @if counted {
                            p {
                                (met) " of " (total) " interactions ran in at least " (set.lambda) " row" @if set.lambda != 1 { "s" }
                                @if failed > 0 { "; " strong { (failed) " failed" } } @else if met == total { "; " strong { "all clear" } " at strength " (set.strength) }
                                "."
                            }
                            figure { (svg(s, set)) }
                            details {
                                summary { "The same figures as a table" }
                                div class="scroll" role="region" aria-label={ "interactions of " (set.names.join(", ")) } tabindex="0" {
                                    table {
                                        thead { tr {
                                            th scope="col" { "levels" } th scope="col" { "rows run" } th scope="col" { "passed" }
                                            th scope="col" { "pass rate" } th scope="col" { "verdict" }
                                        } }
                                        tbody {
                                            @for item in set.strips.iter().flat_map(|(_, i)| i) {
                                                @let c = &item.tally.tally.count;
                                                tr data-verdict=(item.verdict.map_or("none", Verdict::key)) {
                                                    th scope="row" { code { (item.levels) } }
                                                    td class="num" { (item.rows_ran) "/" (item.tally.tally.rows.len()) }
                                                    td class="num" { (c.passes) "/" (c.runs) }
                                                    td class="num" { @match c.pass_rate() { Some(r) => { (percent(r)) } None => { "–" } } }
                                                    td { (item.state()) }
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
        }
    }
}
