//! The row budget: how many rows of a design run, for tests too expensive to run every
//! row on every job.
//!
//! The engine orders a design so that each prefix covers as much as it can, so a
//! budget is a prefix: `budget(12)` runs the first 12 rows, `budget(25%)` the first
//! quarter (rounded up, at least one row). The rows are the same with or without a
//! budget (it is not part of the fingerprint); rows past it are generated with
//! `#[ignore]`, so libtest counts them as ignored, never as passed, and
//! `cargo test -- --include-ignored` still runs them.
//!
//! `HEDDLE_BUDGET` ([`BUDGET_VAR`]), read when the tests are compiled, overrides every
//! function's budget: `12`, `25%`, or `all` for the whole design (the nightly job).
//! The generated code reads it with `option_env!`, so the compiler records it and cargo
//! rebuilds the tests when it changes. `cargo heddle test --budget` sets it.

use std::fmt;

use crate::diag::{self, Diagnostic};
use crate::keywords as kw;

/// The env var holding a budget for every function (empty means unset).
pub const BUDGET_VAR: &str = "HEDDLE_BUDGET";

/// A row budget.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Budget {
    /// The first N rows (N ≥ 1).
    Rows(u32),
    /// The first P percent of the rows, rounded up (1 ≤ P ≤ 100).
    Percent(u8),
    /// Every row.
    All,
}

impl Budget {
    /// How many of `total` rows run.
    ///
    /// ```
    /// use heddle_syntax::budget::Budget;
    /// assert_eq!(Budget::Percent(25).rows(27), 7); // 6.75 rounded up
    /// assert_eq!(Budget::Rows(40).rows(27), 27);
    /// assert_eq!(Budget::Percent(1).rows(3), 1);
    /// ```
    pub fn rows(self, total: usize) -> usize {
        match self {
            Budget::Rows(n) => (n as usize).min(total),
            Budget::Percent(p) => (total * usize::from(p)).div_ceil(100).clamp(1.min(total), total),
            Budget::All => total,
        }
    }

    /// Reads a budget as the command line and [`BUDGET_VAR`] write it: `12`, `25%` or
    /// `all`. The error says what is wrong, for the caller to name where it came from.
    pub fn parse(text: &str) -> Result<Budget, String> {
        let t = text.trim();
        if t == "all" {
            return Ok(Budget::All);
        }
        if let Some(p) = t.strip_suffix('%') {
            return match p.trim().parse::<u32>() {
                Ok(p @ 1..=100) => Ok(Budget::Percent(p as u8)),
                Ok(_) => Err(format!("`{t}` is not a share between 1% and 100%")),
                Err(_) => Err(format!("`{t}` is not a share of the design")),
            };
        }
        match t.parse::<u32>() {
            Ok(0) => Err("a budget of `0` rows runs nothing".to_string()),
            Ok(n) => Ok(Budget::Rows(n)),
            Err(_) => Err(format!("`{t}` is not a row budget")),
        }
    }

    /// The budget in [`BUDGET_VAR`]'s value (`None`: unset or empty), or why the value is
    /// refused, naming the variable.
    pub fn from_env(value: Option<std::ffi::OsString>) -> Result<Option<Budget>, Diagnostic> {
        let Some(value) = value.filter(|v| !v.is_empty()) else {
            return Ok(None);
        };
        let text = value.to_string_lossy();
        Budget::parse(&text).map(Some).map_err(|why| {
            diag::diagnostic(
                format!("`{BUDGET_VAR}` is invalid: {why}"),
                "set it to a row count (`12`), a share of the design (`25%`) or `all`, or leave it empty",
            )
        })
    }

    /// The budget a build uses: [`BUDGET_VAR`]'s when set, else the attribute's.
    pub fn effective(env: Option<Budget>, attribute: Option<Budget>) -> Option<Budget> {
        env.or(attribute)
    }
}

impl fmt::Display for Budget {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Budget::Rows(n) => write!(f, "{n}"),
            Budget::Percent(p) => write!(f, "{p}%"),
            Budget::All => f.write_str("all"),
        }
    }
}

/// The hint every mistake in `budget(…)` gets.
pub fn hint() -> String {
    format!(
        "write `{b}(12)` to run the first 12 rows, or `{b}(25%)` for the first quarter of the design",
        b = kw::BUDGET
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_forms_both_ways() {
        for (text, b) in [
            ("12", Budget::Rows(12)),
            ("25%", Budget::Percent(25)),
            (" 100 % ", Budget::Percent(100)),
            ("all", Budget::All),
        ] {
            assert_eq!(Budget::parse(text), Ok(b), "{text}");
            assert_eq!(Budget::parse(&b.to_string()), Ok(b));
        }
        for bad in ["0", "0%", "101%", "-3", "x", "", "1.5", "%", "ALL"] {
            assert!(Budget::parse(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn shares_round_up_and_never_exceed_the_design() {
        assert_eq!(Budget::Percent(100).rows(27), 27);
        assert_eq!(Budget::Percent(50).rows(27), 14);
        assert_eq!(Budget::Percent(4).rows(27), 2);
        assert_eq!(Budget::Rows(1).rows(27), 1);
        assert_eq!(Budget::All.rows(27), 27);
        assert_eq!(Budget::Percent(10).rows(0), 0);
    }

    #[test]
    fn env_values_empty_unset_or_named_errors() {
        assert_eq!(Budget::from_env(None), Ok(None));
        assert_eq!(Budget::from_env(Some("".into())), Ok(None));
        assert_eq!(
            Budget::from_env(Some("30%".into())),
            Ok(Some(Budget::Percent(30)))
        );
        let e = Budget::from_env(Some("lots".into())).unwrap_err();
        assert!(
            e.message
                .starts_with("`HEDDLE_BUDGET` is invalid: `lots` is not a row budget"),
            "{e:?}"
        );
        assert!(e.hint.is_some());
        assert_eq!(
            Budget::effective(Some(Budget::All), Some(Budget::Rows(3))),
            Some(Budget::All)
        );
        assert_eq!(
            Budget::effective(None, Some(Budget::Rows(3))),
            Some(Budget::Rows(3))
        );
    }
}
