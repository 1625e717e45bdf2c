//! The independent checker. It shares nothing with the generation code but the formula
//! type: its own t-set enumeration, its own counting, its own (plain, unmemoised)
//! search for whether an uncovered interaction is possible at all. Every design passes
//! through it before it is returned, and pinned rows are verified with it too.

use std::fmt;

use crate::expr::Expr;
use crate::factor::UNSET;
use crate::model::Spec;

/// What the checker found on a valid design.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Coverage {
    /// Number of t-way interactions of the spec.
    pub interactions: u64,
    /// How many of them no allowed row contains.
    pub impossible: u64,
    /// Fewest times any possible interaction is covered.
    pub min_count: u64,
}

/// Why a list of rows is not a valid design for a spec.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Violation {
    /// A row has the wrong number of entries.
    Width {
        /// Row position.
        row: usize,
        /// Entries.
        width: usize,
    },
    /// A row uses a level its factor does not have.
    Level {
        /// Row position.
        row: usize,
        /// Factor name.
        factor: String,
        /// Level index.
        level: u8,
    },
    /// A row is excluded by a constraint.
    Excluded {
        /// Row position.
        row: usize,
        /// Constraint position.
        constraint: usize,
    },
    /// A required row is not where it must be (the rows start with the required ones).
    MissingRequired {
        /// Position among the required rows.
        required: usize,
    },
    /// A possible interaction is covered fewer than λ times.
    Uncovered {
        /// `(factor name, level label)` of each factor in the interaction.
        levels: Vec<(String, String)>,
        /// Times covered.
        count: u64,
        /// λ.
        lambda: u32,
    },
}

impl fmt::Display for Violation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Violation::Width { row, width } => write!(f, "row {row} has {width} entries"),
            Violation::Level { row, factor, level } => {
                write!(
                    f,
                    "row {row} uses level #{level} of `{factor}`, which does not exist"
                )
            }
            Violation::Excluded { row, constraint } => {
                write!(f, "row {row} is excluded by exclude #{}", constraint + 1)
            }
            Violation::MissingRequired { required } => {
                write!(f, "required row #{} is not at position {required}", required + 1)
            }
            Violation::Uncovered {
                levels,
                count,
                lambda,
            } => {
                let parts: Vec<String> = levels.iter().map(|(n, l)| format!("{n} = {l}")).collect();
                write!(
                    f,
                    "interaction ({}) is covered {count} times, needs {lambda}",
                    parts.join(", ")
                )
            }
        }
    }
}

/// Checks that `rows` is a covering array of strength `spec.strength` and index
/// `spec.lambda` for every interaction some allowed row contains, that no row is
/// excluded, and that the rows begin with the spec's required rows (an [`UNSET`] cell of a
/// required row matches any level).
///
/// ```
/// use heddle_generator::{verify, Factor, Spec};
/// let spec = Spec::new(vec![Factor::numbered("a", 2), Factor::numbered("b", 2)]);
/// let full = vec![vec![0, 0], vec![0, 1], vec![1, 0], vec![1, 1]];
/// assert!(verify(&spec, &full).is_ok());
/// assert!(verify(&spec, &full[..3]).is_err());
/// ```
pub fn verify(spec: &Spec, rows: &[Vec<u8>]) -> Result<Coverage, Violation> {
    let k = spec.factors.len();
    let levels: Vec<usize> = spec.factors.iter().map(|f| f.levels.len()).collect();
    for (r, row) in rows.iter().enumerate() {
        if row.len() != k {
            return Err(Violation::Width {
                row: r,
                width: row.len(),
            });
        }
        for (c, &l) in row.iter().enumerate() {
            if l as usize >= levels[c] {
                return Err(Violation::Level {
                    row: r,
                    factor: spec.factors[c].name.clone(),
                    level: l,
                });
            }
        }
        if let Some(e) = spec.excludes.iter().position(|e| e.eval(row)) {
            return Err(Violation::Excluded {
                row: r,
                constraint: e,
            });
        }
    }
    for (i, req) in spec.required.iter().enumerate() {
        // an unset cell of a required row matches whatever level fills it
        let matches = rows.get(i).is_some_and(|row| {
            row.len() == req.len() && row.iter().zip(req).all(|(&a, &b)| b == UNSET || a == b)
        });
        if !matches {
            return Err(Violation::MissingRequired { required: i });
        }
    }
    let mut mentioned = Vec::new();
    for e in &spec.excludes {
        e.collect_factors(&mut mentioned);
    }
    let t = spec.strength;
    let mut out = Coverage {
        interactions: 0,
        impossible: 0,
        min_count: u64::MAX,
    };
    let mut failure = None;
    let mut walk = Walk::new(rows, &levels, t);
    walk.each(0, 0, 1, &mut |cols, index| {
        if failure.is_some() {
            return;
        }
        let size: usize = cols.iter().map(|&c| levels[c]).product();
        let mut counts = vec![0u64; size];
        for &i in index {
            counts[i as usize] += 1;
        }
        for (idx, &n) in counts.iter().enumerate() {
            out.interactions += 1;
            if n >= spec.lambda as u64 {
                out.min_count = out.min_count.min(n);
                continue;
            }
            let mut partial = vec![UNSET; k];
            let mut rest = idx;
            for &c in cols.iter() {
                partial[c] = (rest % levels[c]) as u8;
                rest /= levels[c];
            }
            if completable(&spec.excludes, &levels, &mentioned, &mut partial) {
                failure = Some(Violation::Uncovered {
                    levels: cols
                        .iter()
                        .map(|&c| {
                            let f = &spec.factors[c];
                            (f.name.clone(), f.levels[partial[c] as usize].clone())
                        })
                        .collect(),
                    count: n,
                    lambda: spec.lambda,
                });
                return;
            }
            out.impossible += 1;
        }
    });
    match failure {
        Some(v) => Err(v),
        None => {
            if out.min_count == u64::MAX {
                out.min_count = 0;
            }
            Ok(out)
        }
    }
}

/// Every t-set of columns in lexicographic order, with the mixed-radix index (first column
/// least significant) each row shows on it. The rows are held by column, and the index of
/// every prefix of the t-set is kept per row, so one more column costs one pass over the
/// rows rather than t.
struct Walk {
    t: usize,
    levels: Vec<usize>,
    /// `columns[c][r]`: row r's level in column c.
    columns: Vec<Vec<u8>>,
    /// `prefix[d][r]`: row r's index on the first d columns of the current t-set.
    prefix: Vec<Vec<u32>>,
    cols: Vec<usize>,
}

impl Walk {
    fn new(rows: &[Vec<u8>], levels: &[usize], t: usize) -> Self {
        let columns = (0..levels.len())
            .map(|c| rows.iter().map(|r| r[c]).collect())
            .collect();
        Walk {
            t,
            levels: levels.to_vec(),
            columns,
            prefix: vec![vec![0; rows.len()]; t + 1],
            cols: Vec::with_capacity(t),
        }
    }

    /// Visits the t-sets whose first `depth` columns are chosen (the next one from
    /// `from` on; `weight` is the product of the chosen columns' level counts).
    fn each(&mut self, depth: usize, from: usize, weight: usize, f: &mut dyn FnMut(&[usize], &[u32])) {
        if depth == self.t {
            f(&self.cols, &self.prefix[depth]);
            return;
        }
        let k = self.levels.len();
        for c in from..=k - (self.t - depth) {
            let (done, rest) = self.prefix.split_at_mut(depth + 1);
            for ((next, &prev), &l) in rest[0].iter_mut().zip(&done[depth]).zip(&self.columns[c]) {
                *next = prev + l as u32 * weight as u32;
            }
            self.cols.push(c);
            self.each(depth + 1, c + 1, weight * self.levels[c], f);
            self.cols.pop();
        }
    }
}

/// Plain depth-first search: fill the unset factors that excludes mention, in column
/// order, pruning as soon as an exclude is already true.
fn completable(excludes: &[Expr], levels: &[usize], vars: &[usize], partial: &mut [u8]) -> bool {
    if excludes.iter().any(|e| e.eval_partial(partial) == Some(true)) {
        return false;
    }
    if excludes.iter().all(|e| e.eval_partial(partial) == Some(false)) {
        return true;
    }
    let Some(&f) = vars.iter().find(|&&f| partial[f] == UNSET) else {
        return false;
    };
    for l in 0..levels[f] {
        partial[f] = l as u8;
        if completable(excludes, levels, vars, partial) {
            partial[f] = UNSET;
            return true;
        }
    }
    partial[f] = UNSET;
    false
}
