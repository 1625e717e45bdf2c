//! The covering-array engine of heddle.
//!
//! Given factors and their levels, a strength t, an index λ, exclude constraints and a
//! seed, [`generate`] returns a small set of rows in which every t-way combination of
//! levels that some allowed row contains appears at least λ times (and, for each
//! [`Focus`] set of factors, every combination at its own higher strength and index).
//! It tries algebraic constructions, a greedy and a local search, keeps the smallest,
//! and checks it with an independent checker ([`verify`]) before returning. Everything is deterministic: the
//! same spec gives the same rows on every platform, and [`Effort::Fast`] bounds its work
//! by a count of steps, never by time ([`Stats::pin_advised`] says when it bit).
//!
//! ```
//! use heddle_generator::{generate, Effort, Factor, Spec};
//! let spec = Spec::new((1..=4).map(|i| Factor::numbered(format!("f{i}"), 3)).collect());
//! let design = generate(&spec, Effort::Fast).unwrap();
//! assert_eq!(design.rows.len(), 9); // an orthogonal array OA(9; 2, 4, 3)
//! ```
//!
//! # Modules
//!
//! The public surface is the crate root (and `bounds`); the modules behind it:
//! - `factor`, `expr`, `focus`, `model`, `limits`, `error`: the problem statement —
//!   factors, exclude formulas and their two text forms, focus sets (variable strength)
//!   and the column sets they ask for, the spec, the limits and range checks, and every
//!   way a spec is refused;
//! - `engine`: [`generate`], which runs the methods below and keeps the smallest result;
//!   `focused`: the same for a spec with focus sets (the base design, rows for the focus
//!   demand, a search over both); `complete`: [`complete`], rows with unset cells filled
//!   in; `work`: the fast mode's bound on work;
//! - `construct`: algebraic constructions (orthogonal arrays incl. ovoids, Hadamard,
//!   difference matrices, binary families, cyclotomy, Singer pairs and covering perfect
//!   hash families, recursions), fitted to a spec by dropping columns, collapsing levels
//!   and stacking, and the strength-2 product the engine builds from its own designs for
//!   many factors;
//! - `greedy`, `tighten`, `anneal`, `order`: the one-row-at-a-time greedy, the two local
//!   searches that remove rows (tabu with per-row tables; annealing without, for large
//!   designs), and the finishing passes; `invariant`: the tight mode's search for
//!   designs that a group of the rows maps to themselves (few starter rows); `table`:
//!   designs the tight mode found, shipped so that the fast mode starts from them;
//! - `interactions`, `incidence`, `demand`, `constraints`: numbering of t-way
//!   interactions, per-column tables of column sets (all t-sets, then any focus sets of
//!   other sizes), remaining demand, and exact answers to "can this partial row still be
//!   allowed?";
//! - `verify`: the independent checker; `bounds`: the counting and first-moment bounds;
//!   `rng`: the one source of randomness;
//! - `diagnostic`: [`Diagnostic`], the one shape of every message heddle's crates show a
//!   person (message, hint, location), rendered by each front end.

#![warn(missing_docs)]

mod anneal;
pub mod bounds;
mod complete;
mod constraints;
mod construct;
mod demand;
mod diagnostic;
mod engine;
mod error;
mod expr;
mod factor;
mod focus;
mod focused;
mod greedy;
mod incidence;
mod interactions;
mod invariant;
mod limits;
mod model;
mod order;
mod product_tree;
mod rng;
mod table;
mod tighten;
mod verify;
mod work;

pub use complete::{Completion, complete};
pub use diagnostic::Diagnostic;
pub use engine::{Design, FAST_BUDGET, Stats, generate, generate_untabled};
pub use error::Error;
pub use expr::{Expr, FORMULA_VERSION, ParseError};
pub use factor::{Factor, Row, UNSET};
pub use focus::{Focus, column_sets as focus_sets};
/// The engine's subset stepper, for readers that walk t-sets in the engine's order.
pub use interactions::next_lex as next_subset;
pub use limits::{
    MAX_FACTORS, MAX_FOCUS_SETS, MAX_FORMULA_DEPTH, MAX_INTERACTIONS, MAX_LAMBDA, MAX_LEVELS, MAX_ROWS,
    MAX_STRENGTH, check_lambda, check_strength,
};
pub use model::{Effort, Spec};
pub use verify::{Coverage, Violation, verify};

/// Version of the generation algorithms. Any change that can alter the rows produced for
/// some spec and seed bumps it, so pinned rows can tell they came from another engine.
pub const ENGINE_VERSION: u32 = 11;
