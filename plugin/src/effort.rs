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
            (EffortArg::Tight, Some(b)) if b > MAX_BUDGET => Err(crate::failure::usage(
                Diagnostic::new(format!(
                    "`--budget {b}` is more moves than the search takes, at most {MAX_BUDGET}"
                ))
                .hint(format!(
                    "the default, {}, takes seconds; the time grows in proportion to the budget",
                    heddle_generator::Effort::DEFAULT_TIGHT_BUDGET
                )),
            )),
            (EffortArg::Tight, b) => Ok(heddle_generator::Effort::Tight {
                budget: b.unwrap_or(heddle_generator::Effort::DEFAULT_TIGHT_BUDGET),
            }),
        }
    }
}

/// Most moves `--budget` accepts: a thousand times the default. The search's time grows
/// in proportion to its budget — the default took 1.5 to 3.1 s on 3^13, 2^20 at t = 3
/// and 4^8 at t = 3 in a release build (64 to 132 s unoptimised) — so this is under an
/// hour on such specs, where `u64::MAX` ran until killed.
pub const MAX_BUDGET: u64 = 1000 * heddle_generator::Effort::DEFAULT_TIGHT_BUDGET;

/// Shows a spinner with the elapsed time on stderr while `work` runs, when stderr is a
/// terminal: a tight search can take minutes and would otherwise look hung.
pub fn with_spinner<T>(what: &str, work: impl FnOnce() -> T) -> T {
    use std::io::IsTerminal;
    if !std::io::stderr().is_terminal() {
        return work();
    }
    let spinner = indicatif::ProgressBar::new_spinner();
    if let Ok(style) = indicatif::ProgressStyle::with_template("{spinner} {msg} {elapsed}") {
        spinner.set_style(style);
    }
    spinner.set_message(what.to_string());
    spinner.enable_steady_tick(std::time::Duration::from_millis(120));
    let out = work();
    spinner.finish_and_clear();
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_budget_is_capped_with_a_named_error() {
        let err = EffortArg::Tight.with_budget(Some(u64::MAX)).unwrap_err();
        assert_eq!(err.code(), 2);
        let text = err.to_string();
        assert!(
            text.starts_with("`--budget 18446744073709551615` is more moves than the search takes"),
            "{text}"
        );
        assert!(text.contains("hint: "), "{text}");
        assert!(EffortArg::Tight.with_budget(Some(MAX_BUDGET + 1)).is_err());
        assert_eq!(
            EffortArg::Tight.with_budget(Some(MAX_BUDGET)).unwrap(),
            heddle_generator::Effort::Tight { budget: MAX_BUDGET }
        );
        assert!(EffortArg::Fast.with_budget(Some(1)).is_err());
    }
}
