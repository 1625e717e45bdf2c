//! Constraint formulas over "factor == level" atoms and their evaluation on full and
//! partial rows; [`text`] renders and reads them (the human syntax with names and labels,
//! and the versioned formula over level indices that records store).

mod text;

pub use text::{FORMULA_VERSION, ParseError};

use crate::factor::UNSET;

/// A boolean formula over the levels of a row.
///
/// ```
/// use heddle_generator::{Expr, Factor};
/// let factors = [Factor::numbered("f1", 2), Factor::numbered("f2", 2)];
/// let e = Expr::parse("f1 == 0 && !(f2 != 1)", &factors).unwrap();
/// assert!(e.eval(&[0, 1]));
/// assert!(!e.eval(&[0, 0]));
/// ```
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub enum Expr {
    /// Factor `factor` is at level `level`.
    Is {
        /// Factor index.
        factor: usize,
        /// Level index.
        level: u8,
    },
    /// Negation.
    Not(Box<Expr>),
    /// Conjunction.
    And(Box<Expr>, Box<Expr>),
    /// Disjunction.
    Or(Box<Expr>, Box<Expr>),
}

impl Expr {
    /// `factor == level`.
    pub fn is(factor: usize, level: u8) -> Self {
        Expr::Is { factor, level }
    }

    /// `factor != level`.
    pub fn is_not(factor: usize, level: u8) -> Self {
        Expr::Not(Box::new(Expr::is(factor, level)))
    }

    /// `self && other`.
    pub fn and(self, other: Expr) -> Self {
        Expr::And(Box::new(self), Box::new(other))
    }

    /// `self || other`.
    pub fn or(self, other: Expr) -> Self {
        Expr::Or(Box::new(self), Box::new(other))
    }

    /// `!self`.
    #[allow(clippy::should_implement_trait)]
    pub fn not(self) -> Self {
        Expr::Not(Box::new(self))
    }

    /// Value on a complete row.
    pub fn eval(&self, row: &[u8]) -> bool {
        match self {
            Expr::Is { factor, level } => row[*factor] == *level,
            Expr::Not(e) => !e.eval(row),
            Expr::And(a, b) => a.eval(row) && b.eval(row),
            Expr::Or(a, b) => a.eval(row) || b.eval(row),
        }
    }

    /// Value on a partial row whose unset entries are [`UNSET`]: `None` when it depends
    /// on an unset entry (Kleene's three-valued logic).
    pub fn eval_partial(&self, row: &[u8]) -> Option<bool> {
        match self {
            Expr::Is { factor, level } => match row[*factor] {
                UNSET => None,
                l => Some(l == *level),
            },
            Expr::Not(e) => e.eval_partial(row).map(|v| !v),
            Expr::And(a, b) => match (a.eval_partial(row), b.eval_partial(row)) {
                (Some(false), _) | (_, Some(false)) => Some(false),
                (Some(true), Some(true)) => Some(true),
                _ => None,
            },
            Expr::Or(a, b) => match (a.eval_partial(row), b.eval_partial(row)) {
                (Some(true), _) | (_, Some(true)) => Some(true),
                (Some(false), Some(false)) => Some(false),
                _ => None,
            },
        }
    }

    /// Adds the factors the formula mentions to `out` (sorted, without repeats).
    pub fn collect_factors(&self, out: &mut Vec<usize>) {
        match self {
            Expr::Is { factor, .. } => {
                if let Err(pos) = out.binary_search(factor) {
                    out.insert(pos, *factor);
                }
            }
            Expr::Not(e) => e.collect_factors(out),
            Expr::And(a, b) | Expr::Or(a, b) => {
                a.collect_factors(out);
                b.collect_factors(out);
            }
        }
    }

    /// The first reference to a factor or level outside `levels` (level counts).
    pub fn check_refs(&self, levels: &[usize]) -> Result<(), (usize, u8)> {
        match self {
            Expr::Is { factor, level } => {
                if *factor < levels.len() && (*level as usize) < levels[*factor] {
                    Ok(())
                } else {
                    Err((*factor, *level))
                }
            }
            Expr::Not(e) => e.check_refs(levels),
            Expr::And(a, b) | Expr::Or(a, b) => {
                a.check_refs(levels)?;
                b.check_refs(levels)
            }
        }
    }

    /// Whether the formula nests deeper than `limit` levels (an atom is one level, each
    /// operator adds one). Iterative, so that it answers for any depth without recursing.
    pub fn depth_exceeds(&self, limit: usize) -> bool {
        let mut stack: Vec<(&Expr, usize)> = vec![(self, 1)];
        while let Some((e, d)) = stack.pop() {
            if d > limit {
                return true;
            }
            match e {
                Expr::Is { .. } => {}
                Expr::Not(inner) => stack.push((inner, d + 1)),
                Expr::And(a, b) | Expr::Or(a, b) => {
                    stack.push((a, d + 1));
                    stack.push((b, d + 1));
                }
            }
        }
        false
    }
}
