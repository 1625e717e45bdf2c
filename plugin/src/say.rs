//! Printing that never panics: `println!` panics when stdout is a closed pipe
//! (`cargo heddle pin | head -1`), and a report cut short is no reason to crash.

use std::io::Write;

/// Writes one line to stdout, ignoring a closed pipe.
pub fn out(line: impl std::fmt::Display) {
    let _ = writeln!(std::io::stdout().lock(), "{line}");
}

/// Writes one line to stderr, ignoring failures.
pub fn err(line: impl std::fmt::Display) {
    let _ = writeln!(std::io::stderr().lock(), "{line}");
}
