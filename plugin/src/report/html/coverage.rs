//! The coverage curve of a recorded design: after each row, the fraction of the demand
//! (λ runs of every allowed t-way interaction) that the rows so far meet — the curve the
//! engine reports as `Stats::coverage_curve` when it generates a design — and the same
//! fraction counting only the rows that ran, which is where a partial run shows.
//!
//! It is counted from the suite's tallies, which already list every t-way interaction
//! with the design rows containing it in increasing order: an interaction meets one unit
//! of demand at each of its first λ rows. That is linear in the tallies, with no second
//! pass over the rows. The interactions the rows contain are exactly the allowed ones,
//! since every design is checked to cover them when it is generated or pinned.

use heddle_store::Tallies;
use maud::{Markup, html};

use super::chart::{FONT, Linear, Px, percent, ticks};
use crate::report::SuiteReport;

/// A suite's coverage curves.
#[derive(Clone, Debug, PartialEq)]
pub struct Curve {
    /// Fraction of the demand met after each design row.
    pub design: Vec<f64>,
    /// The same, counting only rows that ran.
    pub ran: Vec<f64>,
    /// Rows with no recorded run, increasing.
    pub not_run: Vec<usize>,
    /// λ times the number of allowed t-way interactions.
    pub demand: u64,
}

impl Curve {
    /// The row after which the run stopped, when the rows that did not run are exactly the
    /// last ones (a run cut short); `None` when every row ran or the gaps are scattered.
    pub fn stopped_after(&self) -> Option<usize> {
        let first = *self.not_run.first()?;
        let suffix = self.not_run.len() == self.design.len() - first;
        (suffix && first > 0).then(|| first - 1)
    }
}

/// The coverage curves of a suite.
pub fn curve(s: &SuiteReport<'_>) -> Curve {
    from_tallies(&s.tallies, s.spec.lambda)
}

/// The coverage curves of tallies at index `lambda`.
pub fn from_tallies(tallies: &Tallies, lambda: u32) -> Curve {
    let rows = tallies.rows.len();
    let ran = |r: usize| tallies.rows.get(r).is_some_and(|c| c.runs > 0);
    let lambda = lambda.max(1) as usize;
    let t_way = tallies.interactions();
    let met_after = |counts: &dyn Fn(usize) -> bool| {
        let mut gained = vec![0u64; rows];
        for e in t_way {
            for &r in e.rows.iter().filter(|&&r| counts(r as usize)).take(lambda) {
                gained[r as usize] += 1;
            }
        }
        gained
    };
    let demand = (t_way.len() * lambda) as u64;
    let fractions = |gained: Vec<u64>| -> Vec<f64> {
        let mut met = 0u64;
        gained
            .into_iter()
            .map(|g| {
                met += g;
                if demand == 0 {
                    1.0
                } else {
                    met as f64 / demand as f64
                }
            })
            .collect()
    };
    Curve {
        design: fractions(met_after(&|_| true)),
        ran: fractions(met_after(&ran)),
        not_run: (0..rows).filter(|&r| !ran(r)).collect(),
        demand,
    }
}

/// The chart: the design's curve, the curve of what ran when rows did not run (dashed),
/// each not-run row crossed on the axis, and where a run cut short stopped.
pub fn svg(c: &Curve) -> Markup {
    let n = c.design.len();
    let (w, h, left, right, top, bottom) = (560.0, 230.0, 46.0, 16.0, 12.0, 40.0);
    let x = Linear::new((0.0, n.max(1) as f64), (left, w - right));
    let y = Linear::new((0.0, 1.0), (h - bottom, top));
    let line = |fr: &[f64]| {
        std::iter::once(format!("{},{}", x.at(0.0), y.at(0.0)))
            .chain(
                fr.iter()
                    .enumerate()
                    .map(|(i, f)| format!("{},{}", x.at(i as f64 + 1.0), y.at(*f))),
            )
            .collect::<Vec<_>>()
            .join(" ")
    };
    let partial = !c.not_run.is_empty();
    let full_after = c.design.iter().position(|f| *f >= 1.0 - 1e-12);
    html! {
        svg class="curve" role="img" width=(Px(w)) height=(Px(h)) viewBox={ "0 0 " (Px(w)) " " (Px(h)) }
            aria-label="fraction of the demand met after each row" {
            @for q in [0.0, 0.25, 0.5, 0.75, 1.0] {
                line class="gridline" x1=(Px(left)) x2=(Px(w - right)) y1=(y.at(q)) y2=(y.at(q)) {}
                text class="label" x=(Px(left - 6.0)) y=(Px(y.at(q).0 + FONT * 0.35)) text-anchor="end" { (percent(q)) }
            }
            @for t in ticks(n as u64, 8) {
                line class="tick" x1=(x.at(t as f64)) x2=(x.at(t as f64)) y1=(Px(h - bottom)) y2=(Px(h - bottom + 4.0)) {}
                text class="label" x=(x.at(t as f64)) y=(Px(h - bottom + FONT + 6.0)) text-anchor="middle" { (t) }
            }
            text class="label" x=(Px((left + w - right) / 2.0)) y=(Px(h - 4.0)) text-anchor="middle" { "rows" }
            @if let Some(r) = full_after {
                g {
                    title { "every interaction met its demand after " (r + 1) " rows" }
                    line class="marker" x1=(x.at(r as f64 + 1.0)) x2=(x.at(r as f64 + 1.0)) y1=(Px(top)) y2=(Px(h - bottom)) {}
                }
            }
            polyline class="design" fill="none" points=(line(&c.design)) {
                title { "the design: " (n) " rows" }
            }
            @if partial {
                polyline class="ran" fill="none" points=(line(&c.ran)) {
                    title { "what ran: " (n - c.not_run.len()) " of " (n) " rows" }
                }
                @for r in &c.not_run {
                    g class="not-run" {
                        title { "row " (r) " did not run" }
                        text x=(x.at(*r as f64 + 0.5)) y=(Px(h - bottom - 3.0)) text-anchor="middle" { "×" }
                    }
                }
            }
            @if let Some(r) = c.stopped_after() {
                line class="stop" x1=(x.at(r as f64 + 1.0)) x2=(x.at(r as f64 + 1.0)) y1=(Px(top)) y2=(Px(h - bottom)) {}
                text class="label" x=(Px(x.at(r as f64 + 1.0).0 + 4.0)) y=(Px(top + FONT)) {
                    "the run stopped after row " (r)
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use heddle_generator::{Effort, Expr, Factor, Spec, generate};
    use heddle_store::fixture::SpecBuilder;
    use heddle_test::record::Outcome;

    /// Generates a design with the engine and tallies it with every row run once, or
    /// with the rows `skip` leaves out not run.
    fn tallied(spec: &Spec, skip: impl Fn(usize) -> bool) -> (Vec<f64>, Tallies) {
        let design = generate(spec, Effort::Fast).unwrap();
        let mut b = SpecBuilder::new("f")
            .strength(spec.strength as u32)
            .lambda(spec.lambda)
            .rows(design.rows.clone());
        for f in &spec.factors {
            let labels: Vec<&str> = f.levels.iter().map(String::as_str).collect();
            b = b.factor(&f.name, &labels);
        }
        let formulas: Vec<String> = spec.excludes.iter().map(Expr::to_formula).collect();
        let formulas: Vec<&str> = formulas.iter().map(String::as_str).collect();
        let rec = b.excludes(&formulas).build();
        let outcomes: Vec<(usize, Outcome)> = (0..design.rows.len())
            .filter(|&r| !skip(r))
            .map(|r| (r, Outcome::Passed))
            .collect();
        (
            design.stats.coverage_curve,
            heddle_store::tally(&rec, outcomes).unwrap(),
        )
    }

    #[test]
    fn the_curve_matches_the_engines_own_count() {
        // the engine counts its curve over its own numbering of interactions and its own
        // list of allowed ones; the report's count from the tallies must agree exactly,
        // with excludes, at λ > 1 and at strength 3
        let f = |n: &str, v: usize| Factor::numbered(n, v);
        let base = vec![f("a", 3), f("b", 3), f("c", 2), f("d", 4), f("e", 2)];
        let excl = Expr::parse("a == 0 && d == 3", &base).unwrap();
        let specs = [
            Spec::new(base.clone()),
            Spec::new(base.clone()).lambda(3),
            Spec::new(base.clone()).strength(3).exclude(excl.clone()),
            Spec::new(base.clone()).strength(3).lambda(2).exclude(excl),
        ];
        for spec in &specs {
            let (engine, tallies) = tallied(spec, |_| false);
            let c = from_tallies(&tallies, spec.lambda);
            assert_eq!(c.design.len(), engine.len());
            for (i, (a, b)) in c.design.iter().zip(&engine).enumerate() {
                assert!((a - b).abs() < 1e-12, "row {i}: {a} vs {b}");
            }
            assert_eq!(c.ran, c.design);
            assert!(c.not_run.is_empty() && c.stopped_after().is_none());
            assert!((c.design.last().unwrap() - 1.0).abs() < 1e-12);
        }
    }

    #[test]
    fn a_run_cut_short_shows_where_it_stopped() {
        let spec = Spec::new((0..4).map(|i| Factor::numbered(format!("f{i}"), 3)).collect());
        let (_, tallies) = tallied(&spec, |r| r >= 6);
        let c = from_tallies(&tallies, 1);
        // OA(9; 2, 4, 3): each row meets 6 of the 54 pairs exactly once (Bose 1938)
        assert_eq!(c.design.len(), 9);
        assert_eq!(c.not_run, vec![6, 7, 8]);
        assert_eq!(c.stopped_after(), Some(5));
        assert!((c.ran[5] - 36.0 / 54.0).abs() < 1e-12);
        assert_eq!(c.ran[8], c.ran[5]);
        assert!((c.design[8] - 1.0).abs() < 1e-12);
        // scattered gaps: no single stopping point
        let (_, tallies) = tallied(&spec, |r| r == 2);
        assert_eq!(from_tallies(&tallies, 1).stopped_after(), None);
    }
}
