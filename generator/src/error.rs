//! Every way a spec can be refused, each with enough context to act on.

use std::fmt;

/// Why the engine refused a spec. Messages are lower case without a final period so
/// callers can prefix them with a location.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Error {
    /// The spec has no factors.
    NoFactors,
    /// More factors than the engine accepts.
    TooManyFactors {
        /// Factors given.
        count: usize,
        /// The limit.
        limit: usize,
    },
    /// A factor has an empty name.
    EmptyName,
    /// Two factors share a name.
    DuplicateFactor {
        /// The shared name.
        name: String,
    },
    /// A factor has no levels.
    NoLevels {
        /// The factor.
        factor: String,
    },
    /// A factor has more levels than fit.
    TooManyLevels {
        /// The factor.
        factor: String,
        /// Levels given.
        count: usize,
        /// The limit.
        limit: usize,
    },
    /// Two levels of one factor share a label.
    DuplicateLevel {
        /// The factor.
        factor: String,
        /// The shared label.
        label: String,
    },
    /// Strength 0.
    StrengthZero,
    /// Strength above the number of factors.
    StrengthAboveFactors {
        /// Strength given.
        strength: usize,
        /// Number of factors.
        factors: usize,
    },
    /// Strength above what the engine supports.
    StrengthTooHigh {
        /// Strength given (as parsed, before narrowing).
        strength: u64,
        /// The limit.
        limit: usize,
    },
    /// λ = 0.
    LambdaZero,
    /// λ above what the counters hold.
    LambdaTooHigh {
        /// λ given (as parsed, before narrowing).
        lambda: u64,
        /// The limit.
        limit: u32,
    },
    /// A constraint names a factor or level that does not exist.
    BadConstraintRef {
        /// Position of the constraint among the excludes.
        constraint: usize,
        /// Factor index used.
        factor: usize,
        /// Level index used.
        level: u8,
    },
    /// An exclude nests deeper than [`crate::MAX_FORMULA_DEPTH`].
    ExcludeTooDeep {
        /// Position of the constraint among the excludes.
        constraint: usize,
        /// The limit.
        limit: usize,
    },
    /// A required row has the wrong number of entries.
    RequiredRowWidth {
        /// Position among the required rows.
        row: usize,
        /// Entries given.
        width: usize,
        /// Number of factors.
        factors: usize,
    },
    /// A required row uses a level a factor does not have.
    RequiredRowLevel {
        /// Position among the required rows.
        row: usize,
        /// The factor.
        factor: String,
        /// The level index.
        level: u8,
    },
    /// A required row is excluded by a constraint.
    RequiredRowExcluded {
        /// Position among the required rows.
        row: usize,
        /// Position of the constraint that excludes it.
        constraint: usize,
    },
    /// A required row with unset cells has no allowed completion.
    RequiredRowNotCompletable {
        /// Position among the required rows.
        row: usize,
    },
    /// A focus set names a factor index the spec does not have.
    FocusUnknownFactor {
        /// Position of the focus set.
        focus: usize,
        /// Factor index used.
        factor: usize,
    },
    /// A focus set names a factor twice.
    FocusRepeatedFactor {
        /// Position of the focus set.
        focus: usize,
        /// The factor.
        factor: String,
    },
    /// A focus set's strength is not above the spec's.
    FocusStrengthNotAbove {
        /// Position of the focus set.
        focus: usize,
        /// Its strength.
        strength: usize,
        /// The spec's strength.
        base: usize,
    },
    /// A focus set's strength is above its number of factors.
    FocusStrengthAboveSize {
        /// Position of the focus set.
        focus: usize,
        /// Its strength.
        strength: usize,
        /// Its number of factors.
        size: usize,
    },
    /// More focus sets than the engine accepts.
    TooManyFocusSets {
        /// Focus sets given.
        count: usize,
        /// The limit.
        limit: usize,
    },
    /// The constraints exclude every row.
    NothingAllowed,
    /// Too many interactions to track in bounded memory.
    TooLarge {
        /// t-way interactions of the spec.
        interactions: u128,
        /// The limit.
        limit: u64,
    },
    /// The lower bound alone exceeds the row limit.
    TooManyRows {
        /// λ·(product of the t largest level counts).
        lower_bound: u128,
        /// The limit.
        limit: u64,
    },
    /// The independent checker rejected a result: a bug in the engine, never a user error.
    Internal(String),
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::NoFactors => write!(f, "no factors given"),
            Error::TooManyFactors { count, limit } => {
                write!(f, "{count} factors given, at most {limit} are supported")
            }
            Error::EmptyName => write!(f, "a factor has an empty name"),
            Error::DuplicateFactor { name } => write!(f, "factor `{name}` is declared twice"),
            Error::NoLevels { factor } => write!(f, "factor `{factor}` has no levels"),
            Error::TooManyLevels { factor, count, limit } => {
                write!(
                    f,
                    "factor `{factor}` has {count} levels, at most {limit} are supported"
                )
            }
            Error::DuplicateLevel { factor, label } => {
                write!(f, "factor `{factor}` lists level `{label}` twice")
            }
            Error::StrengthZero => write!(f, "strength must be at least 1"),
            Error::StrengthAboveFactors { strength, factors } => write!(
                f,
                "strength {strength} is larger than the number of factors ({factors})"
            ),
            Error::StrengthTooHigh { strength, limit } => {
                write!(f, "strength {strength} is above the supported maximum of {limit}")
            }
            Error::LambdaZero => write!(f, "lambda must be at least 1"),
            Error::LambdaTooHigh { lambda, limit } => {
                write!(f, "lambda {lambda} is above the supported maximum of {limit}")
            }
            Error::BadConstraintRef {
                constraint,
                factor,
                level,
            } => write!(
                f,
                "exclude #{} refers to factor #{factor} level #{level}, which does not exist",
                constraint + 1
            ),
            Error::RequiredRowWidth { row, width, factors } => write!(
                f,
                "required row #{} has {width} entries but there are {factors} factors",
                row + 1
            ),
            Error::RequiredRowLevel { row, factor, level } => write!(
                f,
                "required row #{} uses level #{level} of factor `{factor}`, which does not exist",
                row + 1
            ),
            Error::RequiredRowExcluded { row, constraint } => write!(
                f,
                "required row #{} is excluded by exclude #{}",
                row + 1,
                constraint + 1
            ),
            Error::ExcludeTooDeep { constraint, limit } => {
                write!(f, "exclude #{} nests deeper than {limit} levels", constraint + 1)
            }
            Error::RequiredRowNotCompletable { row } => write!(
                f,
                "required row #{} cannot be completed: the excludes rule out every level of its unset cells",
                row + 1
            ),
            Error::FocusUnknownFactor { focus, factor } => write!(
                f,
                "focus set #{} names factor #{factor}, which does not exist",
                focus + 1
            ),
            Error::FocusRepeatedFactor { focus, factor } => {
                write!(f, "focus set #{} names `{factor}` twice", focus + 1)
            }
            Error::FocusStrengthNotAbove {
                focus,
                strength,
                base,
            } => write!(
                f,
                "focus set #{} has strength {strength}, not above the strength {base} of all factors",
                focus + 1
            ),
            Error::FocusStrengthAboveSize {
                focus,
                strength,
                size,
            } => write!(
                f,
                "focus set #{} has strength {strength} over only {size} factor{}",
                focus + 1,
                if *size == 1 { "" } else { "s" }
            ),
            Error::TooManyFocusSets { count, limit } => {
                write!(f, "{count} focus sets given, at most {limit} are supported")
            }
            Error::NothingAllowed => write!(f, "the excludes rule out every row"),
            Error::TooLarge { interactions, limit } => write!(
                f,
                "the spec has {interactions} t-way interactions, more than the limit of {limit}"
            ),
            Error::TooManyRows { lower_bound, limit } => write!(
                f,
                "any design needs at least {lower_bound} rows, more than the limit of {limit}; \
                 lower lambda, the strength or the number of levels"
            ),
            Error::Internal(msg) => write!(f, "internal error (please report): {msg}"),
        }
    }
}

impl Error {
    /// What the user can do about it, for a front end to show after the message (as
    /// `hint: …`); the message itself stays one clause that callers can prefix.
    pub fn hint(&self) -> &'static str {
        match self {
            Error::NoFactors => "declare at least one factor",
            Error::TooManyFactors { .. } => "split the factors over several specs",
            Error::EmptyName => "give every factor a name",
            Error::DuplicateFactor { .. } => "rename one of the two factors",
            Error::NoLevels { .. } => "give the factor at least one level",
            Error::TooManyLevels { .. } => "group the levels into classes",
            Error::DuplicateLevel { .. } => "remove or rename the repeated level",
            Error::StrengthZero => "use a strength of 1 or more",
            Error::StrengthAboveFactors { .. } => {
                "lower the strength to the number of factors, or add factors"
            }
            Error::StrengthTooHigh { .. } => "lower the strength",
            Error::LambdaZero => "use a lambda of 1 or more",
            Error::LambdaTooHigh { .. } => "lower lambda",
            Error::BadConstraintRef { .. } => "refer only to declared factors and levels",
            Error::ExcludeTooDeep { .. } => "split the exclude into several simpler excludes",
            Error::RequiredRowWidth { .. } => "give every required row one entry per factor",
            Error::RequiredRowLevel { .. } => "use only declared levels in required rows",
            Error::RequiredRowExcluded { .. } => "drop the row or loosen the exclude",
            Error::RequiredRowNotCompletable { .. } => "set the unset cells yourself or loosen the excludes",
            Error::FocusUnknownFactor { .. } => "name only declared factors in a focus set",
            Error::FocusRepeatedFactor { .. } => "name each factor once in a focus set",
            Error::FocusStrengthNotAbove { .. } => {
                "give the focus set a strength above the base strength, or drop it"
            }
            Error::FocusStrengthAboveSize { .. } => "name more factors or lower the focus strength",
            Error::TooManyFocusSets { .. } => "merge focus sets that share factors",
            Error::NothingAllowed => "loosen the excludes so that at least one combination stays allowed",
            Error::TooLarge { .. } => "lower the strength or the number of levels",
            Error::TooManyRows { .. } => "lower lambda, the strength or the number of levels",
            Error::Internal(_) => "report this, with the spec, as an engine bug",
        }
    }
}

impl std::error::Error for Error {}
