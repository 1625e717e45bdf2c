//! Orchestration: validate, find what is possible, run every applicable method, keep the
//! smallest result, finish it, check it independently.
//!
//! Order of work: a construction at the counting bound ends the search at once; otherwise
//! the greedy runs, a construction replaces it when no larger, and the tabu search of
//! [`crate::tighten`] then tries to remove rows from what was kept — briefly in
//! [`Effort::Fast`] ([`FAST_BUDGET`] moves), for the given budget in [`Effort::Tight`].
//! Redundant rows are dropped, the rest ordered by gain, and the independent checker has
//! the last word.

use crate::bounds;
use crate::complete::complete_valid;
use crate::constraints::Constraints;
use crate::construct;
use crate::demand::Demand;
use crate::error::Error;
use crate::factor::{Row, UNSET};
use crate::greedy;
use crate::incidence::Incidence;
use crate::interactions::Layout;
use crate::model::{Effort, Spec};
use crate::order;
use crate::rng::{Rng, stream};
use crate::tighten;
use crate::verify::verify;

/// Move budget of the local search in [`Effort::Fast`]: small enough that an ordinary spec
/// finishes in milliseconds even in an unoptimised build (the macro runs there), large
/// enough to take a greedy result most of the way to what the search reaches at all.
pub const FAST_BUDGET: u64 = 40_000;

/// A generated design and what is known about it.
#[derive(Clone, Debug, PartialEq)]
pub struct Design {
    /// The rows: the spec's required rows first, then the rest ordered so that each
    /// prefix meets as much demand as possible.
    pub rows: Vec<Row>,
    /// Figures about the design.
    pub stats: Stats,
}

/// Figures reported beside every design.
#[derive(Clone, Debug, PartialEq)]
pub struct Stats {
    /// The method whose result was kept: a construction (e.g. `bose(q=5)`), `greedy`, or
    /// either followed by `+tabu` when the local search removed rows from it.
    pub method: String,
    /// λ · (product of the t largest level counts).
    pub lower_bound: u64,
    /// Least N at which a random N-row array is expected to leave under one interaction
    /// short of λ (see [`bounds::expected_bound`]).
    pub expected_bound: u64,
    /// t-way interactions of the spec.
    pub interactions: u64,
    /// Interactions no allowed row contains (so not required).
    pub impossible: u64,
    /// Fraction of the demand (λ per possible interaction) met after each row.
    pub coverage_curve: Vec<f64>,
    /// [`crate::ENGINE_VERSION`] of the engine that made the rows.
    pub engine_version: u32,
}

/// Generates a design for `spec`.
///
/// ```
/// use heddle_generator::{generate, Effort, Expr, Factor, Spec};
/// let factors = vec![Factor::numbered("a", 2), Factor::numbered("b", 2), Factor::numbered("c", 2)];
/// let no_a0_b0 = Expr::parse("a == 0 && b == 0", &factors).unwrap();
/// let spec = Spec::new(factors).lambda(2).exclude(no_a0_b0);
/// let d = generate(&spec, Effort::Fast).unwrap();
/// assert!(d.rows.iter().all(|r| !(r[0] == 0 && r[1] == 0)));
/// assert_eq!(d.stats.impossible, 1);
/// ```
pub fn generate(spec: &Spec, effort: Effort) -> Result<Design, Error> {
    spec.validate()?;
    let levels = spec.levels();
    let t = spec.strength;
    let layout = Layout::new(&levels, t);
    let mut cons = Constraints::new(&spec.excludes, &levels);
    if !cons.any_allowed() {
        return Err(Error::NothingAllowed);
    }
    let (possible, impossible) = cons.possible(&layout);
    // required rows with unset cells are completed first, as `complete` does (kept even
    // where they add nothing: they are required)
    let required: Vec<Row> = if spec.required.iter().any(|r| r.contains(&UNSET)) {
        complete_valid(spec, &spec.required, true).rows
    } else {
        spec.required.clone()
    };

    let lower = bounds::lower_bound(&levels, t, spec.lambda);
    let construction = if spec.excludes.is_empty() && spec.required.is_empty() {
        construct::best(&levels, t, spec.lambda)
    } else {
        None
    };
    let proven = construction
        .as_ref()
        .is_some_and(|c| c.optimal || c.rows.len() as u128 <= lower);
    let (mut method, mut rows) = match construction {
        // at the counting bound, or at a proven minimum (e.g. Kleitman–Spencer), nothing
        // can be smaller: skip the search
        Some(c) if proven => (c.method, c.rows),
        construction => {
            let mut demand = Demand::new(&possible, spec.lambda);
            for row in &required {
                demand.cover(&layout, row);
            }
            let mut rng = Rng::new(spec.seed, stream::GREEDY);
            let mut rows = required.clone();
            rows.extend(greedy::extend(
                &layout,
                &mut demand,
                &mut cons,
                &mut rng,
                greedy::Params::for_layout(&layout),
            ));
            order::drop_redundant(&layout, &possible, spec.lambda, &mut rows, required.len());
            match construction {
                // a construction wins ties: its structure is the optimum where it applies
                Some(c) if c.rows.len() <= rows.len() => (c.method, c.rows),
                _ => ("greedy".to_string(), rows),
            }
        }
    };
    let budget = match effort {
        Effort::Fast => FAST_BUDGET,
        Effort::Tight { budget } => budget,
    };
    if budget > 0 && !proven && (rows.len() as u128) > lower && tighten::fits(rows.len(), layout.sets()) {
        let inc = Incidence::new(&layout);
        let mut rng = Rng::new(spec.seed, stream::TIGHTEN);
        let out = tighten::tighten(
            &inc,
            &possible,
            spec.lambda,
            &mut cons,
            &rows,
            required.len(),
            lower as usize,
            &mut rng,
            tighten::Params::new(budget, t, levels.iter().copied().max().unwrap_or(1)),
        );
        if out.rows.len() < rows.len() {
            rows = out.rows;
            method.push_str("+tabu");
        }
    }
    order::order_by_gain(&layout, &possible, spec.lambda, &mut rows, required.len());
    verify(spec, &rows).map_err(|v| Error::Internal(format!("{method} produced an invalid design: {v}")))?;
    let coverage_curve = order::coverage_curve(&layout, &possible, spec.lambda, &rows);
    let stats = Stats {
        method,
        lower_bound: lower as u64,
        expected_bound: bounds::expected_bound(&levels, t, spec.lambda),
        interactions: layout.total() as u64,
        impossible,
        coverage_curve,
        engine_version: crate::ENGINE_VERSION,
    };
    Ok(Design { rows, stats })
}
