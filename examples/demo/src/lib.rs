//! The quick start's first command, `cargo run -p heddle-demo`, and the headless browser
//! that checks the HTML report.
//!
//! - [`quickstart`]: runs the greenhouse demo (`examples/greenhouse`) through the
//!   plugin's library as `cargo heddle test --repeat 5` would, prints the report, writes
//!   the HTML report and says where; it exits 0 once the report is out, since the demo's
//!   tests fail on purpose (`cargo heddle test` keeps cargo's status, for CI);
//! - [`browser`]: Debian's Chromium, headless: the DOM and console messages of a loaded
//!   page, and screenshots (the README's picture of the report is one).
//!
//! The crate is not published: it runs a crate of this repository by its path.

#![warn(missing_docs)]
#![forbid(unsafe_code)]

pub mod browser;
pub mod quickstart;
