//! The covering-array engine of heddle.
//!
//! Given factors and their levels, a strength t, an index λ, exclude constraints and a
//! seed, [`generate`] returns a small set of rows in which every t-way combination of
//! levels that some allowed row contains appears at least λ times. It tries algebraic
//! constructions, a greedy and (with [`Effort::Tight`]) a local search, keeps the
//! smallest, and checks it with an independent checker ([`verify`]) before returning.
//! Everything is deterministic: the same spec gives the same rows on every platform.
//!
//! ```
//! use heddle_generator::{generate, Effort, Factor, Spec};
//! let spec = Spec::new((1..=4).map(|i| Factor::numbered(format!("f{i}"), 3)).collect());
//! let design = generate(&spec, Effort::Fast).unwrap();
//! assert_eq!(design.rows.len(), 9); // an orthogonal array OA(9; 2, 4, 3)
//! ```

#![warn(missing_docs)]

pub mod bounds;
pub mod constraints;
pub mod construct;
mod demand;
mod engine;
mod error;
mod expr;
pub mod greedy;
pub mod incidence;
pub mod interactions;
mod model;
pub mod order;
mod rng;
pub mod tighten;
mod verify;

pub use engine::{Design, FAST_BUDGET, Stats, generate};
pub use error::Error;
pub use expr::{Expr, ParseError};
pub use model::{
    Effort, Factor, MAX_FACTORS, MAX_INTERACTIONS, MAX_LAMBDA, MAX_LEVELS, MAX_ROWS, MAX_STRENGTH, Row, Spec,
    UNSET,
};
pub use verify::{Coverage, Violation, verify};

/// Version of the generation algorithms. Any change that can alter the rows produced for
/// some spec and seed bumps it, so pinned rows can tell they came from another engine.
pub const ENGINE_VERSION: u32 = 1;
