//! The problem statement the engine accepts and how hard to work on it.

use std::collections::BTreeSet;

use crate::constraints::Constraints;
use crate::construct::Construction;
use crate::error::Error;
use crate::expr::Expr;
use crate::factor::{Factor, Row, UNSET};
use crate::focus::Focus;
use crate::limits::{
    MAX_FACTORS, MAX_FORMULA_DEPTH, MAX_INTERACTIONS, MAX_LEVELS, MAX_ROWS, check_lambda, check_strength,
};

/// Most rows × t-sets of a closed-form design past [`MAX_INTERACTIONS`]: the checker visits
/// each once (about a second in an unoptimised build per 10⁸).
const MAX_CHECKED_VISITS: u128 = 1 << 28;

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
    /// Rows the design must contain (counted toward coverage), in this order, first. A
    /// cell may be [`UNSET`]: the design then starts with the row completed as
    /// [`crate::complete`] does, the cell at the level that covers most of what the rows
    /// before it left short of λ, among the levels the excludes allow.
    pub required: Vec<Row>,
    /// Subsets of factors covered at a higher strength than [`Spec::strength`] (variable
    /// strength): the design covers every t-set at λ and, in addition, every s-set of each
    /// focus set at its own strength s and index.
    pub focus: Vec<Focus>,
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
            focus: Vec::new(),
        }
    }

    /// A spec of factors `f1`, `f2`, … with these level counts, levels labelled `0`, `1`,
    /// … (the `V^N` form of tables and benchmarks).
    ///
    /// ```
    /// use heddle_generator::Spec;
    /// let spec = Spec::numbered(&[3, 3, 2]);
    /// assert_eq!(spec.factors[2].name, "f3");
    /// assert_eq!(spec.levels(), [3, 3, 2]);
    /// ```
    pub fn numbered(levels: &[usize]) -> Self {
        Spec::new(
            levels
                .iter()
                .enumerate()
                .map(|(i, &v)| Factor::numbered(format!("f{}", i + 1), v))
                .collect(),
        )
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

    /// Adds a required row. Cells may be [`UNSET`]: the engine fills them (see
    /// [`crate::complete`]) before it counts the row.
    pub fn require(mut self, row: Row) -> Self {
        self.required.push(row);
        self
    }

    /// Adds a focus set, covered at its own higher strength.
    pub fn focus(mut self, focus: Focus) -> Self {
        self.focus.push(focus);
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

    /// Whether some complete row satisfies none of the excludes: an exact search over the
    /// factors the excludes mention, so that a front end can refuse excludes that rule out
    /// everything, and say which, before asking for a design. Excludes that
    /// [`Spec::validate`] would refuse (a reference outside the factors, too deep) are
    /// left out of the question.
    ///
    /// ```
    /// use heddle_generator::{Expr, Factor, Spec};
    /// let f = vec![Factor::numbered("a", 2), Factor::numbered("b", 2)];
    /// let spec = Spec::new(f).exclude(Expr::is(0, 0).and(Expr::is(1, 0)));
    /// assert!(spec.any_allowed());
    /// // a = 0 forces b = 1, and a = 1 is excluded outright: still a = 0, b = 1
    /// let spec = spec.exclude(Expr::is(0, 1));
    /// assert!(spec.any_allowed());
    /// assert!(!spec.exclude(Expr::is(1, 1)).any_allowed());
    /// ```
    pub fn any_allowed(&self) -> bool {
        let levels = self.levels();
        let usable: Vec<Expr> = self
            .excludes
            .iter()
            .filter(|e| !e.depth_exceeds(MAX_FORMULA_DEPTH) && e.check_refs(&levels).is_ok())
            .cloned()
            .collect();
        Constraints::new(&usable, &levels).any_allowed()
    }

    /// Checks everything that can be checked without searching: shape, limits, names,
    /// constraint references and required rows. Generation calls it first.
    pub fn validate(&self) -> Result<(), Error> {
        self.validate_problem()?;
        self.validate_rows(&self.required, true)
    }

    /// [`Spec::validate`] without the required rows.
    pub(crate) fn validate_problem(&self) -> Result<(), Error> {
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
        check_strength(self.strength as u64)?;
        check_lambda(u64::from(self.lambda))?;
        let levels = self.levels();
        for (i, e) in self.excludes.iter().enumerate() {
            if e.depth_exceeds(MAX_FORMULA_DEPTH) {
                return Err(Error::ExcludeTooDeep {
                    constraint: i,
                    limit: MAX_FORMULA_DEPTH,
                });
            }
            e.check_refs(&levels)
                .map_err(|(factor, level)| Error::BadConstraintRef {
                    constraint: i,
                    factor,
                    level,
                })?;
        }
        crate::focus::check_count(self.focus.len())?;
        let names: Vec<&str> = self.factors.iter().map(|f| f.name.as_str()).collect();
        for (i, f) in self.focus.iter().enumerate() {
            f.validate(i, &names, self.strength)?;
        }
        let interactions = crate::interactions::count(&levels, self.strength)
            .saturating_add(crate::focus::count(&self.focus, &levels));
        if interactions > MAX_INTERACTIONS as u128 && self.closed_form().is_none() {
            return Err(Error::TooLarge {
                interactions,
                limit: MAX_INTERACTIONS,
            });
        }
        let lower = crate::bounds::spec_lower_bound(self);
        if lower > MAX_ROWS as u128 {
            return Err(Error::TooManyRows {
                lower_bound: lower,
                limit: MAX_ROWS,
            });
        }
        Ok(())
    }

    /// For a spec past [`MAX_INTERACTIONS`]: the construction that answers it in closed
    /// form — no excludes, no required rows, and few enough rows × t-sets for the checker
    /// (e.g. Bose's OA(16384; 2, 129, 128) for 128^80 at t = 2). Such a spec needs no
    /// counter per interaction, so the cap does not refuse it; no search runs on it.
    pub(crate) fn closed_form(&self) -> Option<Construction> {
        if !self.excludes.is_empty() || !self.required.is_empty() || !self.focus.is_empty() {
            return None;
        }
        let levels = self.levels();
        let t = self.strength;
        let tsets = crate::interactions::count(&vec![1; levels.len()], t);
        let c = crate::construct::best(&levels, t, self.lambda)?;
        (tsets.saturating_mul(c.rows.len() as u128) <= MAX_CHECKED_VISITS).then_some(c)
    }

    /// Checks rows meant to be required: width, levels (cells may be [`UNSET`]) and, with
    /// `allowed`, that the excludes allow each (some completion of it, if it has unset
    /// cells).
    pub(crate) fn validate_rows(&self, rows: &[Row], allowed: bool) -> Result<(), Error> {
        let k = self.factors.len();
        let levels = self.levels();
        let mut cons = None;
        for (i, row) in rows.iter().enumerate() {
            if row.len() != k {
                return Err(Error::RequiredRowWidth {
                    row: i,
                    width: row.len(),
                    factors: k,
                });
            }
            for (c, &l) in row.iter().enumerate() {
                if l != UNSET && l as usize >= levels[c] {
                    return Err(Error::RequiredRowLevel {
                        row: i,
                        factor: self.factors[c].name.clone(),
                        level: l,
                    });
                }
            }
            if !allowed {
                continue;
            }
            if row.contains(&UNSET) {
                // unset cells are filled by the engine (see `crate::complete`); some fill
                // must be allowed
                let cons = cons.get_or_insert_with(|| Constraints::new(&self.excludes, &levels));
                if !cons.extendable(row) {
                    return Err(Error::RequiredRowNotCompletable { row: i });
                }
            } else if let Some(e) = self.excludes.iter().position(|e| e.eval(row)) {
                return Err(Error::RequiredRowExcluded {
                    row: i,
                    constraint: e,
                });
            }
        }
        Ok(())
    }
}

/// How hard the engine works.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Effort {
    /// What builds use: constructions, the greedy and a brief local search, held to a
    /// bound on work (a count of steps, not time) that keeps any spec within seconds in an
    /// unoptimised build; [`crate::Stats::pin_advised`] says when the bound bit.
    Fast,
    /// Constructions, the greedy with all its candidates, then a local search that tries
    /// to remove rows for at most `budget` moves from what was kept, and as many again
    /// from a construction the greedy beat (deterministic for a given seed and budget).
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
