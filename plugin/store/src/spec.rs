//! A recorded spec checked for consistency, and turned back into the engine's spec: the
//! one place that does either, for tallies, coverage checks and the report alike.

use heddle_generator::{Expr, Factor, Focus, MAX_LEVELS, MAX_STRENGTH, Spec};
use heddle_test::record::SpecRecord;

/// Why a spec line cannot be used.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SpecError {
    /// The spec has no factors.
    NoFactors,
    /// A factor has no levels or more than the engine allows.
    LevelCount {
        /// Factor index.
        factor: usize,
        /// Its number of labels.
        count: usize,
    },
    /// Strength is 0, above the factor count or above the engine's maximum.
    Strength {
        /// The strength given.
        strength: u32,
        /// Number of factors.
        factors: usize,
    },
    /// A row does not have one level per factor.
    RowWidth {
        /// Row index.
        row: usize,
        /// Its length.
        width: usize,
    },
    /// A row names a level the factor does not have.
    LevelOutOfRange {
        /// Row index.
        row: usize,
        /// Factor index.
        factor: usize,
    },
    /// The row names do not match the rows one to one.
    RowNames {
        /// Rows.
        rows: usize,
        /// Names.
        names: usize,
    },
    /// Tallying even the single levels would cost more than
    /// [`crate::tally::MAX_TALLY_CELLS`].
    TallyTooLarge {
        /// Design rows.
        rows: usize,
        /// Factors (the column sets of arity 1).
        sets: u128,
    },
    /// A focus set does not fit the spec (the engine's check, in its words).
    Focus {
        /// What the engine says.
        why: String,
    },
    /// An exclude is not a formula over these factors' levels.
    Exclude {
        /// The recorded text.
        text: String,
        /// What is wrong with it.
        why: String,
    },
}

impl std::fmt::Display for SpecError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SpecError::NoFactors => write!(f, "spec has no factors"),
            SpecError::LevelCount { factor, count } => {
                write!(
                    f,
                    "factor {factor} has {count} levels, expected 1 to {MAX_LEVELS}"
                )
            }
            SpecError::Strength { strength, factors } => write!(
                f,
                "strength {strength} does not fit {factors} factors (at most {MAX_STRENGTH})"
            ),
            SpecError::RowWidth { row, width } => {
                write!(f, "row {row} has {width} levels, not one per factor")
            }
            SpecError::LevelOutOfRange { row, factor } => {
                write!(f, "row {row} names a level factor {factor} does not have")
            }
            SpecError::RowNames { rows, names } => {
                write!(f, "{rows} rows but {names} row names")
            }
            SpecError::Focus { why } => write!(f, "{why}"),
            SpecError::Exclude { text, why } => write!(f, "exclude `{}`: {why}", shortened(text)),
            SpecError::TallyTooLarge { rows, sets } => {
                return write!(
                    f,
                    "counting {rows} rows over {sets} column sets takes {} steps, more than the \
                     {} a suite may take, even for single levels; hint: split the factors \
                     into several suites",
                    (*rows as u128).saturating_mul(*sets),
                    crate::tally::MAX_TALLY_CELLS
                );
            }
        }?;
        write!(f, "; hint: the spec line is damaged")
    }
}

impl std::error::Error for SpecError {}

/// At most the first 40 characters of a recorded text, for a message.
fn shortened(text: &str) -> String {
    const SHOWN: usize = 40;
    match text.char_indices().nth(SHOWN) {
        Some((cut, _)) => format!("{}…", &text[..cut]),
        None => text.to_string(),
    }
}

/// Checks a spec line is self-consistent, so tallies can index it without bounds checks
/// failing: a spec line from a buggy or foreign writer is refused instead.
pub fn check(spec: &SpecRecord) -> Result<(), SpecError> {
    if spec.factors.is_empty() {
        return Err(SpecError::NoFactors);
    }
    for (i, f) in spec.factors.iter().enumerate() {
        if f.labels.is_empty() || f.labels.len() > MAX_LEVELS {
            return Err(SpecError::LevelCount {
                factor: i,
                count: f.labels.len(),
            });
        }
    }
    let t = spec.strength as usize;
    if t == 0 || t > spec.factors.len() || t > MAX_STRENGTH {
        return Err(SpecError::Strength {
            strength: spec.strength,
            factors: spec.factors.len(),
        });
    }
    for (r, row) in spec.rows.iter().enumerate() {
        if row.len() != spec.factors.len() {
            return Err(SpecError::RowWidth {
                row: r,
                width: row.len(),
            });
        }
        for (c, &lv) in row.iter().enumerate() {
            if lv as usize >= spec.factors[c].labels.len() {
                return Err(SpecError::LevelOutOfRange { row: r, factor: c });
            }
        }
    }
    if spec.row_names.len() != spec.rows.len() {
        return Err(SpecError::RowNames {
            rows: spec.rows.len(),
            names: spec.row_names.len(),
        });
    }
    focus(spec)?;
    excludes(spec).map(drop)
}

/// The recorded focus sets as the engine's, checked by the engine's own focus check
/// (the part of [`engine_spec`] a reader needs without the excludes).
pub fn focus(spec: &SpecRecord) -> Result<Vec<Focus>, SpecError> {
    let names: Vec<&str> = spec.factors.iter().map(|f| f.name.as_str()).collect();
    spec.focus
        .iter()
        .enumerate()
        .map(|(i, f)| {
            let out = Focus::new(
                f.factors.iter().map(|&c| c as usize).collect(),
                f.strength as usize,
            )
            .lambda(f.lambda);
            out.validate(i, &names, spec.strength as usize)
                .map_err(|e| SpecError::Focus { why: e.to_string() })?;
            Ok(out)
        })
        .collect()
}

/// The recorded excludes, read as the engine's formulas.
fn excludes(spec: &SpecRecord) -> Result<Vec<Expr>, SpecError> {
    let levels: Vec<usize> = spec.factors.iter().map(|f| f.labels.len()).collect();
    spec.excludes
        .iter()
        .map(|text| {
            Expr::parse_formula(text, &levels).map_err(|e| SpecError::Exclude {
                text: text.clone(),
                why: format!("{} at column {}", e.message, e.column),
            })
        })
        .collect()
}

/// The engine's spec a spec line describes (factors with their labels, strength, λ, seed,
/// excludes and focus sets; the recorded rows are not required rows of it).
pub fn engine_spec(spec: &SpecRecord) -> Result<Spec, SpecError> {
    check(spec)?;
    let factors: Vec<Factor> = spec
        .factors
        .iter()
        .map(|f| Factor::new(f.name.clone(), f.labels.clone()))
        .collect();
    let mut out = Spec::new(factors)
        .strength(spec.strength as usize)
        .lambda(spec.lambda)
        .seed(spec.seed);
    out.excludes = excludes(spec)?;
    out.focus = focus(spec)?;
    Ok(out)
}
