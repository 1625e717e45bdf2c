//! The engine effort the subcommands that generate rows (`design`, `pin`) accept, shared
//! by both so that `--effort` and `--budget` mean the same everywhere.

use clap::ValueEnum;

use crate::failure::{Diagnostic, Failure};

/// How hard the engine works.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum EffortArg {
    /// Constructions and greedy, as builds use.
    Fast,
    /// Adds local search that removes rows.
    Tight,
}

impl EffortArg {
    /// The engine's effort for this choice and an optional `--budget`, which only
    /// `tight` takes.
    pub fn with_budget(self, budget: Option<u64>) -> Result<heddle_generator::Effort, Failure> {
        match (self, budget) {
            (EffortArg::Fast, Some(_)) => Err(crate::failure::usage(
                Diagnostic::new("`--budget` applies to `--effort tight` only").hint("add `--effort tight`"),
            )),
            (EffortArg::Fast, None) => Ok(heddle_generator::Effort::Fast),
            (EffortArg::Tight, b) => Ok(heddle_generator::Effort::Tight {
                budget: b.unwrap_or(heddle_generator::Effort::DEFAULT_TIGHT_BUDGET),
            }),
        }
    }
}
