//! The problem statement the engine accepts, and the limits that keep it in bounded memory.

use std::collections::BTreeSet;

use crate::error::Error;
use crate::expr::Expr;

/// One row of a design: the level index chosen for every factor, in factor order.
pub type Row = Vec<u8>;

/// Sentinel for "no level chosen yet" in partial rows; level indices never reach it
/// because a factor has at most [`MAX_LEVELS`] levels.
pub const UNSET: u8 = u8::MAX;

/// Most levels one factor may have (indices `0..MAX_LEVELS` fit a `u8` below [`UNSET`]).
pub const MAX_LEVELS: usize = 255;
/// Most factors in one spec.
pub const MAX_FACTORS: usize = 4096;
/// Highest strength accepted.
pub const MAX_STRENGTH: usize = 8;
/// Highest index accepted; per-interaction counters are 16 bits wide.
pub const MAX_LAMBDA: u32 = 1000;
/// Most t-way interactions the engine tracks; each costs a few bytes of counters, so this
/// keeps generation well under a gigabyte whatever the spec.
pub const MAX_INTERACTIONS: u64 = 1 << 24;
/// Most rows the engine will produce (the lower bound alone may exceed it).
pub const MAX_ROWS: u64 = 1 << 20;

/// A factor: a name and the labels of its levels, in order.
///
/// ```
/// use heddle_generator::Factor;
/// let codec = Factor::new("codec", ["plain", "rle", "delta"]);
/// assert_eq!(codec.levels.len(), 3);
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Factor {
    /// Name, unique within the spec; constraints refer to it.
    pub name: String,
    /// Level labels, unique within the factor; constraints refer to them.
    pub levels: Vec<String>,
}

impl Factor {
    /// A factor from a name and its level labels.
    pub fn new<S: Into<String>>(name: impl Into<String>, levels: impl IntoIterator<Item = S>) -> Self {
        Factor {
            name: name.into(),
            levels: levels.into_iter().map(Into::into).collect(),
        }
    }

    /// A factor with `count` levels labelled `0`, `1`, … (the form `V^N` specs use).
    pub fn numbered(name: impl Into<String>, count: usize) -> Self {
        Factor::new(name, (0..count).map(|i| i.to_string()))
    }

    /// The index of the level with this label.
    pub fn level_index(&self, label: &str) -> Option<u8> {
        self.levels.iter().position(|l| l == label).map(|i| i as u8)
    }
}

/// Everything that determines a design: the same spec gives the same rows everywhere.
///
/// ```
/// use heddle_generator::{Factor, Spec};
/// let spec = Spec::new(vec![Factor::numbered("a", 2), Factor::numbered("b", 3)])
///     .strength(2)
///     .lambda(2)
///     .seed(7);
/// assert!(spec.validate().is_ok());
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Spec {
    /// The factors, in column order.
    pub factors: Vec<Factor>,
    /// Strength t: every t-way combination of levels must be covered.
    pub strength: usize,
    /// Index λ: how many rows must cover each possible t-way combination.
    pub lambda: u32,
    /// Seed of every random choice the engine makes.
    pub seed: u64,
    /// A row is allowed when none of these is true for it.
    pub excludes: Vec<Expr>,
    /// Rows the design must contain (counted toward coverage), in this order, first.
    pub required: Vec<Row>,
}

impl Spec {
    /// A spec with strength 2, λ = 1, seed 0, no constraints and no required rows.
    pub fn new(factors: Vec<Factor>) -> Self {
        Spec {
            factors,
            strength: 2,
            lambda: 1,
            seed: 0,
            excludes: Vec::new(),
            required: Vec::new(),
        }
    }

    /// Sets the strength.
    pub fn strength(mut self, t: usize) -> Self {
        self.strength = t;
        self
    }

    /// Sets the index λ.
    pub fn lambda(mut self, lambda: u32) -> Self {
        self.lambda = lambda;
        self
    }

    /// Sets the seed.
    pub fn seed(mut self, seed: u64) -> Self {
        self.seed = seed;
        self
    }

    /// Adds an exclude constraint.
    pub fn exclude(mut self, e: Expr) -> Self {
        self.excludes.push(e);
        self
    }

    /// Adds a required row.
    pub fn require(mut self, row: Row) -> Self {
        self.required.push(row);
        self
    }

    /// Level count of every factor, in order.
    pub fn levels(&self) -> Vec<usize> {
        self.factors.iter().map(|f| f.levels.len()).collect()
    }

    /// The index of the factor with this name.
    pub fn factor_index(&self, name: &str) -> Option<usize> {
        self.factors.iter().position(|f| f.name == name)
    }

    /// Checks everything that can be checked without searching: shape, limits, names,
    /// constraint references and required rows. Generation calls it first.
    pub fn validate(&self) -> Result<(), Error> {
        let k = self.factors.len();
        if k == 0 {
            return Err(Error::NoFactors);
        }
        if k > MAX_FACTORS {
            return Err(Error::TooManyFactors {
                count: k,
                limit: MAX_FACTORS,
            });
        }
        let mut names = BTreeSet::new();
        for f in &self.factors {
            if f.name.is_empty() {
                return Err(Error::EmptyName);
            }
            if !names.insert(f.name.as_str()) {
                return Err(Error::DuplicateFactor { name: f.name.clone() });
            }
            if f.levels.is_empty() {
                return Err(Error::NoLevels {
                    factor: f.name.clone(),
                });
            }
            if f.levels.len() > MAX_LEVELS {
                return Err(Error::TooManyLevels {
                    factor: f.name.clone(),
                    count: f.levels.len(),
                    limit: MAX_LEVELS,
                });
            }
            let mut labels = BTreeSet::new();
            for l in &f.levels {
                if !labels.insert(l.as_str()) {
                    return Err(Error::DuplicateLevel {
                        factor: f.name.clone(),
                        label: l.clone(),
                    });
                }
            }
        }
        if self.strength == 0 {
            return Err(Error::StrengthZero);
        }
        if self.strength > k {
            return Err(Error::StrengthAboveFactors {
                strength: self.strength,
                factors: k,
            });
        }
        if self.strength > MAX_STRENGTH {
            return Err(Error::StrengthTooHigh {
                strength: self.strength,
                limit: MAX_STRENGTH,
            });
        }
        if self.lambda == 0 {
            return Err(Error::LambdaZero);
        }
        if self.lambda > MAX_LAMBDA {
            return Err(Error::LambdaTooHigh {
                lambda: self.lambda,
                limit: MAX_LAMBDA,
            });
        }
        let levels = self.levels();
        for (i, e) in self.excludes.iter().enumerate() {
            e.check_refs(&levels)
                .map_err(|(factor, level)| Error::BadConstraintRef {
                    constraint: i,
                    factor,
                    level,
                })?;
        }
        for (i, row) in self.required.iter().enumerate() {
            if row.len() != k {
                return Err(Error::RequiredRowWidth {
                    row: i,
                    width: row.len(),
                    factors: k,
                });
            }
            for (c, &l) in row.iter().enumerate() {
                if l as usize >= levels[c] {
                    return Err(Error::RequiredRowLevel {
                        row: i,
                        factor: self.factors[c].name.clone(),
                        level: l,
                    });
                }
            }
            if let Some(e) = self.excludes.iter().position(|e| e.eval(row)) {
                return Err(Error::RequiredRowExcluded {
                    row: i,
                    constraint: e,
                });
            }
        }
        let interactions = crate::interactions::count(&levels, self.strength);
        if interactions > MAX_INTERACTIONS as u128 {
            return Err(Error::TooLarge {
                interactions,
                limit: MAX_INTERACTIONS,
            });
        }
        let lower = crate::bounds::lower_bound(&levels, self.strength, self.lambda);
        if lower > MAX_ROWS as u128 {
            return Err(Error::TooManyRows {
                lower_bound: lower,
                limit: MAX_ROWS,
            });
        }
        Ok(())
    }
}

/// How hard the engine works.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Effort {
    /// Constructions, greedy and redundant-row removal: what builds use.
    Fast,
    /// Everything in `Fast`, then local search that tries to remove rows, for at most
    /// `budget` moves (deterministic for a given seed and budget).
    Tight {
        /// Move budget of the local search.
        budget: u64,
    },
}

impl Effort {
    /// The budget `Tight` uses when none is given.
    pub const DEFAULT_TIGHT_BUDGET: u64 = 20_000_000;

    /// `Tight` with the default budget.
    pub fn tight() -> Self {
        Effort::Tight {
            budget: Self::DEFAULT_TIGHT_BUDGET,
        }
    }
}
