//! One shape for every message heddle shows a person: what is wrong, where, and what to
//! do about it. Every crate builds these; each front end renders them its own way (the
//! compiler, a terminal, one line in a list of notes), so the wording and the order of
//! the parts never drift apart between them.

use std::fmt;

use crate::error::Error;

/// A message for a person: lower case, no final period, syntax quoted in backticks.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Diagnostic {
    /// What is wrong.
    pub message: String,
    /// What to do about it.
    pub hint: Option<String>,
    /// Where, when the front end does not show it otherwise: `path:line:column`, an
    /// argument, a file.
    pub location: Option<String>,
}

impl Diagnostic {
    /// A diagnostic with a message only.
    pub fn new(message: impl Into<String>) -> Diagnostic {
        Diagnostic {
            message: message.into(),
            hint: None,
            location: None,
        }
    }

    /// Adds the hint.
    pub fn hint(mut self, hint: impl Into<String>) -> Diagnostic {
        self.hint = Some(hint.into());
        self
    }

    /// Adds the location (replacing one already given).
    pub fn at(mut self, location: impl Into<String>) -> Diagnostic {
        self.location = Some(location.into());
        self
    }

    /// `location: message; hint: …` on one line, for notes and warnings in a list.
    ///
    /// ```
    /// use heddle_generator::Diagnostic;
    /// let d = Diagnostic::new("`x` is unknown").hint("use `y`").at("a.toml:3:1");
    /// assert_eq!(d.one_line(), "a.toml:3:1: `x` is unknown; hint: use `y`");
    /// ```
    pub fn one_line(&self) -> String {
        let mut out = self.located();
        if let Some(h) = &self.hint {
            out.push_str("; hint: ");
            out.push_str(h);
        }
        out
    }

    /// `message`, then `hint: …` on the next line, without the location: the compiler
    /// shows the tokens the error points at.
    pub fn for_compiler(&self) -> String {
        match &self.hint {
            Some(h) => format!("{}\nhint: {h}", self.message),
            None => self.message.clone(),
        }
    }

    fn located(&self) -> String {
        match &self.location {
            Some(l) => format!("{l}: {}", self.message),
            None => self.message.clone(),
        }
    }
}

/// `location: message`, then `  hint: …` indented on the next line: for a terminal.
///
/// ```
/// use heddle_generator::Diagnostic;
/// let d = Diagnostic::new("no factors given").hint("write `3^4`");
/// assert_eq!(d.to_string(), "no factors given\n  hint: write `3^4`");
/// ```
impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.located())?;
        if let Some(h) = &self.hint {
            write!(f, "\n  hint: {h}")?;
        }
        Ok(())
    }
}

impl From<&Error> for Diagnostic {
    fn from(e: &Error) -> Diagnostic {
        Diagnostic::new(e.to_string()).hint(e.hint())
    }
}

impl From<Error> for Diagnostic {
    fn from(e: Error) -> Diagnostic {
        Diagnostic::from(&e)
    }
}

impl From<String> for Diagnostic {
    fn from(message: String) -> Diagnostic {
        Diagnostic::new(message)
    }
}

impl From<&str> for Diagnostic {
    fn from(message: &str) -> Diagnostic {
        Diagnostic::new(message)
    }
}
