//! The limits that keep every spec in bounded memory and time, in one place, with the
//! range checks that every front end (the attribute, the CLI, the record reader) shares
//! instead of writing its own.

use crate::error::Error;

/// Most levels one factor may have (indices `0..MAX_LEVELS` fit a `u8` below
/// [`crate::UNSET`]).
pub const MAX_LEVELS: usize = 255;
/// Most factors in one spec.
pub const MAX_FACTORS: usize = 4096;
/// Highest strength accepted.
pub const MAX_STRENGTH: usize = 8;
/// Most focus sets in one spec (each is checked and counted separately).
pub const MAX_FOCUS_SETS: usize = 64;
/// Highest index accepted; per-interaction counters are 16 bits wide.
pub const MAX_LAMBDA: u32 = 1000;
/// Most t-way interactions the engine tracks; each costs some bytes of counters (about
/// 15 at the peak of a search), so this keeps generation under a gigabyte whatever the
/// spec (3^3000 at t = 2, 40.5 million interactions, peaks near 600 MB in
/// `Effort::Tight`). A spec a construction answers in closed form is not held to it (no
/// counters are needed to build it).
pub const MAX_INTERACTIONS: u64 = 3 << 24;
/// Most rows the engine will produce (the lower bound alone may exceed it).
pub const MAX_ROWS: u64 = 1 << 20;
/// Deepest nesting of an exclude formula (operators and parentheses): evaluating and
/// dropping a formula recurses once per level, so a limit keeps any formula far from the
/// stack's end, while real excludes stay within a few dozen levels.
pub const MAX_FORMULA_DEPTH: usize = 1024;

/// Checks a strength against the engine's range (1 ..= [`MAX_STRENGTH`]); whether it fits
/// the number of factors is [`crate::Spec::validate`]'s business.
///
/// Taking a `u64` lets a front end pass the number it parsed before narrowing it.
///
/// ```
/// use heddle_generator::{check_strength, Error, MAX_STRENGTH};
/// assert_eq!(check_strength(3), Ok(3));
/// assert_eq!(check_strength(0), Err(Error::StrengthZero));
/// assert!(matches!(check_strength(MAX_STRENGTH as u64 + 1), Err(Error::StrengthTooHigh { .. })));
/// ```
pub fn check_strength(t: u64) -> Result<usize, Error> {
    match t {
        0 => Err(Error::StrengthZero),
        t if t > MAX_STRENGTH as u64 => Err(Error::StrengthTooHigh {
            strength: t,
            limit: MAX_STRENGTH,
        }),
        // at most MAX_STRENGTH, so it fits
        t => Ok(t as usize),
    }
}

/// Checks an index λ against the engine's range (1 ..= [`MAX_LAMBDA`]).
///
/// ```
/// use heddle_generator::{check_lambda, Error};
/// assert_eq!(check_lambda(2), Ok(2));
/// assert_eq!(check_lambda(0), Err(Error::LambdaZero));
/// assert!(matches!(check_lambda(1 << 40), Err(Error::LambdaTooHigh { .. })));
/// ```
pub fn check_lambda(lambda: u64) -> Result<u32, Error> {
    match lambda {
        0 => Err(Error::LambdaZero),
        l if l > u64::from(MAX_LAMBDA) => Err(Error::LambdaTooHigh {
            lambda: l,
            limit: MAX_LAMBDA,
        }),
        // at most MAX_LAMBDA, so it fits
        l => Ok(l as u32),
    }
}
