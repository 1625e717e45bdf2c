//! The one error type of the command line: a message and the exit code it maps to.

use std::fmt;

/// Why a command stopped. Usage errors (bad input) exit with 2, failures found in the
/// project (a stale pin, a failing test) with 1.
#[derive(Debug)]
pub enum Failure {
    /// The user's input is wrong: exit code 2.
    Usage(String),
    /// The work ran and found a problem: exit code 1.
    Found(String),
}

impl Failure {
    /// Exit code for this failure.
    pub fn code(&self) -> u8 {
        match self {
            Failure::Usage(_) => 2,
            Failure::Found(_) => 1,
        }
    }
}

impl fmt::Display for Failure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Failure::Usage(m) | Failure::Found(m) => f.write_str(m),
        }
    }
}

/// Shorthand for a usage error.
pub fn usage(msg: impl Into<String>) -> Failure {
    Failure::Usage(msg.into())
}
