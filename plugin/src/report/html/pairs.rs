//! Heat maps of pass rates for every pair of factors: one small grid per pair, a cell per
//! pair of levels, coloured by the pass rate of the runs that contained it, with the
//! figure written in the cell and the counts and rows in its `<title>`. Cells no allowed
//! row contains are crossed out, cells whose rows never ran are hatched, and the levels
//! of a suspect are outlined and marked with a diamond, so no state is told by colour
//! alone. A suite of strength 1 guarantees nothing about pairs; it gets one strip per
//! factor instead.
//!
//! Grids holding a suspect come first, in the suspects' rank order, the rest in factor
//! order.

use maud::{Markup, html};

use heddle_store::{Count, Interaction};

use super::chart::{CHAR_W, FONT, Px, clip, percent};
use super::colour::{self, EXCLUDED, Rgb, SUSPECT};
use crate::report::{SuiteReport, levels_text};

/// Cell size, pixels.
const CELL_W: f64 = 52.0;
const CELL_H: f64 = 28.0;
/// Longest level label drawn before it is clipped (the full one is in the title and the
/// table).
const LABEL_CHARS: usize = 18;
/// Slant of the column labels, degrees.
const SLANT: f64 = 40.0;

/// A suspect's place in a cell.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Mark {
    /// Rank among the suspects, from 1.
    pub rank: usize,
    /// The suspect is this very pair (not a larger interaction it is part of, nor a
    /// single level it holds).
    pub exact: bool,
}

/// One pair of levels.
#[derive(Clone, Debug, PartialEq)]
pub struct Cell {
    /// The levels as `(parameter, label)`.
    pub levels: Vec<(String, String)>,
    /// Its runs; `None` when no allowed row contains it.
    pub count: Option<Count>,
    /// Design rows containing it.
    pub rows: Vec<u32>,
    /// Suspects it shows, best first.
    pub marks: Vec<Mark>,
}

impl Cell {
    /// What the cell says, in words: the `<title>` and the table's status.
    pub fn state(&self) -> String {
        match self.count {
            None => "excluded: no allowed row has these levels".to_string(),
            Some(c) if c.runs == 0 => format!("not run (rows {})", rows_text(&self.rows)),
            Some(c) => format!(
                "passed {} of {} runs ({}) in rows {}",
                c.passes,
                c.runs,
                percent(c.passes as f64 / c.runs as f64),
                rows_text(&self.rows)
            ),
        }
    }

    /// The suspects it shows, in words.
    pub fn marks_text(&self) -> String {
        self.marks
            .iter()
            .map(|m| {
                if m.exact {
                    format!("suspect {}", m.rank)
                } else {
                    format!("shares its levels with suspect {}", m.rank)
                }
            })
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// Row numbers as people count them in the report (`row_03` is row 3).
fn rows_text(rows: &[u32]) -> String {
    rows.iter().map(u32::to_string).collect::<Vec<_>>().join(", ")
}

/// One grid: the levels of `down` (or a single row) against those of `across`.
#[derive(Clone, Debug, PartialEq)]
pub struct Grid {
    /// Factor whose levels are the rows; `None` for a strip of single levels.
    pub down: Option<usize>,
    /// Factor whose levels are the columns.
    pub across: usize,
    /// `cells[row][column]`.
    pub cells: Vec<Vec<Cell>>,
}

impl Grid {
    /// Best rank of a suspect shown in it.
    fn best_rank(&self) -> Option<usize> {
        self.cells
            .iter()
            .flatten()
            .flat_map(|c| &c.marks)
            .map(|m| m.rank)
            .min()
    }
}

/// Every grid of a suite, suspects' grids first.
pub fn grids(s: &SuiteReport<'_>) -> Vec<Grid> {
    let spec = s.spec;
    let k = spec.factors.len();
    let suspects: Vec<(usize, &Interaction)> = s
        .analysis
        .suspects
        .iter()
        .enumerate()
        .filter(|(_, x)| x.explains > 0)
        .map(|(i, x)| (i + 1, &s.tallies.item(x.interaction).interaction))
        .collect();
    let cell = |factors: Vec<usize>, levels: Vec<u8>| {
        let it = Interaction { factors, levels };
        let tally = s.tallies.get(&it);
        let marks = suspects
            .iter()
            // the pair itself, a pair inside a larger suspect, or a pair holding a
            // single-level suspect
            .filter(|(_, sus)| sus.contains(&it) || it.contains(sus))
            .map(|&(rank, sus)| Mark {
                rank,
                exact: sus.arity() == it.arity(),
            })
            .collect();
        Cell {
            levels: it
                .describe(spec)
                .unwrap_or_default()
                .into_iter()
                .map(|(n, l)| (n.to_string(), l.to_string()))
                .collect(),
            count: tally.map(|t| t.count),
            rows: tally.map(|t| t.rows.clone()).unwrap_or_default(),
            marks,
        }
    };
    let levels = |f: usize| spec.factors[f].labels.len() as u8;
    let mut out = Vec::new();
    if s.tallies.strength >= 2 {
        for a in 0..k {
            for b in a + 1..k {
                let cells = (0..levels(a))
                    .map(|x| (0..levels(b)).map(|y| cell(vec![a, b], vec![x, y])).collect())
                    .collect();
                out.push(Grid {
                    down: Some(a),
                    across: b,
                    cells,
                });
            }
        }
    } else {
        for f in 0..k {
            let cells = vec![(0..levels(f)).map(|x| cell(vec![f], vec![x])).collect()];
            out.push(Grid {
                down: None,
                across: f,
                cells,
            });
        }
    }
    // stable: factor order within equal ranks
    out.sort_by_key(|g| g.best_rank().unwrap_or(usize::MAX));
    out
}

/// The SVG of one grid.
pub fn svg(s: &SuiteReport<'_>, g: &Grid) -> Markup {
    let spec = s.spec;
    let row_labels: Vec<&str> = match g.down {
        Some(f) => spec.factors[f].labels.iter().map(String::as_str).collect(),
        None => vec!["pass rate"],
    };
    let col_labels: Vec<&str> = spec.factors[g.across].labels.iter().map(String::as_str).collect();
    let longest = |ls: &[&str]| {
        ls.iter()
            .map(|l| clip(l, LABEL_CHARS).chars().count())
            .max()
            .unwrap_or(0)
    };
    let left = longest(&row_labels) as f64 * CHAR_W + 10.0;
    let slant = SLANT.to_radians();
    let col_text = longest(&col_labels) as f64 * CHAR_W;
    let top = col_text * slant.sin() + FONT + 8.0;
    let width =
        left + col_labels.len() as f64 * CELL_W + (col_text * slant.cos() - CELL_W / 2.0).max(0.0) + 4.0;
    let height = top + row_labels.len() as f64 * CELL_H + 2.0;
    let name = |f: usize| spec.factors[f].name.as_str();
    let label = match g.down {
        Some(d) => format!(
            "pass rate by levels of {} (rows) and {} (columns)",
            name(d),
            name(g.across)
        ),
        None => format!("pass rate by level of {}", name(g.across)),
    };
    html! {
        svg class="grid" role="img" aria-label=(label) width=(Px(width)) height=(Px(height))
            viewBox={ "0 0 " (Px(width)) " " (Px(height)) } {
            @for (j, l) in col_labels.iter().enumerate() {
                @let x = left + (j as f64 + 0.5) * CELL_W;
                text class="label" x=(Px(x)) y=(Px(top - 6.0))
                    transform={ "rotate(-" (SLANT) " " (Px(x)) " " (Px(top - 6.0)) ")" } {
                    title { (l) }
                    (clip(l, LABEL_CHARS))
                }
            }
            @for (i, l) in row_labels.iter().enumerate() {
                text class="label" x=(Px(left - 6.0)) y=(Px(top + (i as f64 + 0.5) * CELL_H + FONT * 0.35))
                    text-anchor="end" {
                    title { (l) }
                    (clip(l, LABEL_CHARS))
                }
            }
            @for (i, row) in g.cells.iter().enumerate() {
                @for (j, c) in row.iter().enumerate() {
                    (cell(c, left + j as f64 * CELL_W, top + i as f64 * CELL_H))
                }
            }
        }
    }
}

/// One cell: its fill and figure, its marks, and a title saying all of it.
fn cell(c: &Cell, x: f64, y: f64) -> Markup {
    let pairs: Vec<(&str, &str)> = c.levels.iter().map(|(n, l)| (n.as_str(), l.as_str())).collect();
    let mut title = format!("{}: {}", levels_text(&pairs), c.state());
    if !c.marks.is_empty() {
        title.push_str("; ");
        title.push_str(&c.marks_text());
    }
    let (fill, ink, figure): (String, Rgb, String) = match c.count {
        None => (EXCLUDED.to_string(), colour::BLACK, "×".into()),
        Some(n) if n.runs == 0 => ("url(#heddle-not-run)".into(), colour::BLACK, "–".into()),
        Some(n) => {
            let bg = colour::pass_rate(n.passes as f64 / n.runs as f64);
            (
                bg.to_string(),
                colour::ink_on(bg),
                percent(n.passes as f64 / n.runs as f64),
            )
        }
    };
    let best = c.marks.first();
    let (cx, cy) = (x + CELL_W / 2.0, y + CELL_H / 2.0 + FONT * 0.35);
    html! {
        g class="cell" data-suspect=[best.map(|m| m.rank)] {
            title { (title) }
            rect x=(Px(x + 0.5)) y=(Px(y + 0.5)) width=(Px(CELL_W - 1.0)) height=(Px(CELL_H - 1.0)) fill=(fill) {}
            text class="figure" x=(Px(cx)) y=(Px(cy)) text-anchor="middle" fill=(ink) { (figure) }
            @if let Some(m) = best {
                rect class="suspect" x=(Px(x + 2.0)) y=(Px(y + 2.0)) width=(Px(CELL_W - 4.0)) height=(Px(CELL_H - 4.0))
                    fill="none" stroke=(SUSPECT) stroke-width="3"
                    stroke-dasharray=[(!m.exact).then_some("5 3")] {}
                (diamond(x + CELL_W - 8.0, y + 8.0))
            }
        }
    }
}

/// The suspect mark: a small diamond, vermillion with a dark edge.
pub fn diamond(x: f64, y: f64) -> Markup {
    let r = 4.5;
    html! {
        path d={ "M" (Px(x)) " " (Px(y - r)) "L" (Px(x + r)) " " (Px(y)) "L" (Px(x)) " " (Px(y + r)) "L" (Px(x - r)) " " (Px(y)) "Z" }
            fill=(SUSPECT) stroke="#000" stroke-width="1" {}
    }
}
