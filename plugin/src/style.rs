//! Terminal styling through `anstyle` (the styles) and `anstream` (whether a stream takes
//! them), the crates clap already brings.
//!
//! Whether stdout gets colours, first answer wins:
//! 1. `--color always|never` on the command line (`auto` goes on down the list);
//! 2. `CARGO_TERM_COLOR=always|never`, as cargo reads it (`auto`, empty or another value
//!    goes on);
//! 3. `anstream`'s detection: `NO_COLOR` (not empty) turns colours off, then
//!    `CLICOLOR_FORCE` (not `0`) turns them on, `CLICOLOR=0` off; otherwise colours only
//!    on a terminal whose `TERM` supports them (not `dumb`).

use clap::ValueEnum;

/// `--color`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, ValueEnum)]
pub enum ColorChoice {
    /// Colours on a terminal that supports them, as the environment allows.
    #[default]
    Auto,
    /// Always colours.
    Always,
    /// Never colours.
    Never,
}

/// The choice after the command line and `CARGO_TERM_COLOR` (from an env lookup).
pub fn resolve(flag: Option<ColorChoice>, var: &dyn Fn(&str) -> Option<String>) -> ColorChoice {
    match flag {
        Some(c @ (ColorChoice::Always | ColorChoice::Never)) => c,
        _ => match var("CARGO_TERM_COLOR").as_deref() {
            Some("always") => ColorChoice::Always,
            Some("never") => ColorChoice::Never,
            _ => ColorChoice::Auto,
        },
    }
}

/// Whether stdout gets colours, given `--color`.
pub fn color_stdout(flag: Option<ColorChoice>) -> bool {
    match resolve(flag, &|n| std::env::var(n).ok()) {
        ColorChoice::Always => true,
        ColorChoice::Never => false,
        ColorChoice::Auto => anstream::AutoStream::choice(&std::io::stdout()) != anstream::ColorChoice::Never,
    }
}

/// Whether stderr gets colours, given `--color` (for the test run's own output).
pub fn color_stderr(flag: Option<ColorChoice>) -> bool {
    match resolve(flag, &|n| std::env::var(n).ok()) {
        ColorChoice::Always => true,
        ColorChoice::Never => false,
        ColorChoice::Auto => anstream::AutoStream::choice(&std::io::stderr()) != anstream::ColorChoice::Never,
    }
}

/// A styler that emits escapes only when enabled.
#[derive(Clone, Copy, Debug)]
pub struct Style {
    /// Emit escapes.
    pub on: bool,
}

impl Style {
    fn wrap(self, style: anstyle::Style, s: &str) -> String {
        if self.on {
            format!("{}{s}{}", style.render(), style.render_reset())
        } else {
            s.to_string()
        }
    }

    fn fg(color: anstyle::AnsiColor) -> anstyle::Style {
        anstyle::Style::new().fg_color(Some(color.into()))
    }

    /// Bold.
    pub fn bold(self, s: &str) -> String {
        self.wrap(anstyle::Style::new().bold(), s)
    }

    /// Red (failures).
    pub fn red(self, s: &str) -> String {
        self.wrap(Style::fg(anstyle::AnsiColor::Red), s)
    }

    /// Yellow (flaky, partial).
    pub fn yellow(self, s: &str) -> String {
        self.wrap(Style::fg(anstyle::AnsiColor::Yellow), s)
    }

    /// Green (all clear).
    pub fn green(self, s: &str) -> String {
        self.wrap(Style::fg(anstyle::AnsiColor::Green), s)
    }

    /// Dim (secondary text).
    pub fn dim(self, s: &str) -> String {
        self.wrap(anstyle::Style::new().dimmed(), s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_flag_beats_cargo_term_color_which_beats_detection() {
        let env = |v: &'static str| move |n: &str| (n == "CARGO_TERM_COLOR").then(|| v.to_string());
        assert_eq!(
            resolve(Some(ColorChoice::Never), &env("always")),
            ColorChoice::Never
        );
        assert_eq!(
            resolve(Some(ColorChoice::Auto), &env("always")),
            ColorChoice::Always
        );
        assert_eq!(resolve(None, &env("never")), ColorChoice::Never);
        assert_eq!(resolve(None, &env("")), ColorChoice::Auto);
        assert_eq!(resolve(None, &env("purple")), ColorChoice::Auto);
    }

    #[test]
    fn styles_are_sgr_sequences_or_nothing() {
        assert_eq!(Style { on: false }.red("x"), "x");
        assert_eq!(Style { on: true }.red("x"), "\x1b[31mx\x1b[0m");
        assert_eq!(Style { on: true }.bold("x"), "\x1b[1mx\x1b[0m");
    }
}
