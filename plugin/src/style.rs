//! Terminal styling: ANSI colours only when writing to a terminal and `NO_COLOR` is
//! unset or empty (<https://no-color.org>).

use std::io::IsTerminal;

/// Whether stdout should get colours.
pub fn color_stdout() -> bool {
    std::io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
}

/// A styler that emits escapes only when enabled.
#[derive(Clone, Copy, Debug)]
pub struct Style {
    /// Emit escapes.
    pub on: bool,
}

impl Style {
    fn wrap(self, code: &str, s: &str) -> String {
        if self.on {
            format!("\x1b[{code}m{s}\x1b[0m")
        } else {
            s.to_string()
        }
    }

    /// Bold.
    pub fn bold(self, s: &str) -> String {
        self.wrap("1", s)
    }

    /// Red (failures).
    pub fn red(self, s: &str) -> String {
        self.wrap("31", s)
    }

    /// Yellow (flaky).
    pub fn yellow(self, s: &str) -> String {
        self.wrap("33", s)
    }

    /// Green (all clear).
    pub fn green(self, s: &str) -> String {
        self.wrap("32", s)
    }

    /// Dim (secondary text).
    pub fn dim(self, s: &str) -> String {
        self.wrap("2", s)
    }
}
