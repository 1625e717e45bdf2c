//! The one error type of the command line: a [`Diagnostic`] and the exit code it maps to.

use std::fmt;

pub use heddle_generator::Diagnostic;

/// Why a command stopped. Usage errors (bad input) exit with 2, failures found in the
/// project (a stale pin, a failing test) with 1.
#[derive(Debug)]
pub enum Failure {
    /// The user's input is wrong: exit code 2.
    Usage(Diagnostic),
    /// The work ran and found a problem: exit code 1.
    Found(Diagnostic),
    /// Nothing was recorded where the command looked: exit code 2, as a usage error,
    /// unless `report --fail-on incomplete` asked for its own code.
    Unrecorded(Diagnostic),
}

impl Failure {
    /// Exit code for this failure.
    pub fn code(&self) -> u8 {
        match self {
            Failure::Usage(_) | Failure::Unrecorded(_) => 2,
            Failure::Found(_) => 1,
        }
    }

    /// What went wrong.
    pub fn diagnostic(&self) -> &Diagnostic {
        match self {
            Failure::Usage(d) | Failure::Found(d) | Failure::Unrecorded(d) => d,
        }
    }
}

impl fmt::Display for Failure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.diagnostic().fmt(f)
    }
}

/// A usage error.
pub fn usage(d: impl Into<Diagnostic>) -> Failure {
    Failure::Usage(d.into())
}

/// A problem found in the project.
pub fn found(d: impl Into<Diagnostic>) -> Failure {
    Failure::Found(d.into())
}

/// Nothing recorded where the command looked.
pub fn unrecorded(d: impl Into<Diagnostic>) -> Failure {
    Failure::Unrecorded(d.into())
}
