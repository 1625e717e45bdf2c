//! Building located compile errors from [`Diagnostic`]s: the message, then `hint: …` on
//! its own line, at the tokens the error is about (the compiler shows the location).
//! [`diagnostic_of`] reads such an error back, so the plugin shows the macro's errors as
//! diagnostics of its own.

use std::fmt::Display;

pub use heddle_generator::Diagnostic;
use proc_macro2::Span;
use quote::ToTokens;

/// A diagnostic from a message and a hint.
pub fn diagnostic(msg: impl Display, hint: impl Display) -> Diagnostic {
    Diagnostic::new(msg.to_string()).hint(hint.to_string())
}

/// The text of an error as the compiler shows it: the message, then `hint: …` on the
/// next line.
pub fn message(msg: impl Display, hint: impl Display) -> String {
    diagnostic(msg, hint).for_compiler()
}

/// A compile error of this crate read back as the diagnostic it was made from (an error
/// `syn` itself raised has no hint), at `location`.
pub fn diagnostic_of(e: &syn::Error, location: impl Into<String>) -> Diagnostic {
    let text = e.to_string();
    let d = match text.split_once("\nhint: ") {
        Some((msg, hint)) => Diagnostic::new(msg).hint(hint),
        None => Diagnostic::new(text),
    };
    d.at(location)
}

/// An error spanning `tokens` (first to last token where the compiler allows it).
pub fn error_at<T: ToTokens>(tokens: T, msg: impl Display, hint: impl Display) -> syn::Error {
    syn::Error::new_spanned(tokens, message(msg, hint))
}

/// An error at one span.
pub fn error_at_span(span: Span, msg: impl Display, hint: impl Display) -> syn::Error {
    syn::Error::new(span, message(msg, hint))
}

/// Collects every error of a pass, so the user sees them all in one build.
#[derive(Default)]
pub struct Errors(Option<syn::Error>);

impl Errors {
    /// Adds an error (itself possibly several combined).
    pub fn push(&mut self, e: syn::Error) {
        match &mut self.0 {
            Some(all) => all.combine(e),
            None => self.0 = Some(e),
        }
    }

    /// Adds an error spanning `tokens`.
    pub fn at<T: ToTokens>(&mut self, tokens: T, msg: impl Display, hint: impl Display) {
        self.push(error_at(tokens, msg, hint));
    }

    /// Adds an error at one span.
    pub fn at_span(&mut self, span: Span, msg: impl Display, hint: impl Display) {
        self.push(error_at_span(span, msg, hint));
    }

    /// How many errors so far.
    pub fn len(&self) -> usize {
        self.0.as_ref().map_or(0, |e| e.into_iter().count())
    }

    /// Whether nothing went wrong so far.
    pub fn is_empty(&self) -> bool {
        self.0.is_none()
    }

    /// `Ok(value)` when nothing went wrong, else every error combined.
    pub fn finish<T>(self, value: T) -> Result<T, syn::Error> {
        match self.0 {
            Some(e) => Err(e),
            None => Ok(value),
        }
    }

    /// The combined errors, if any.
    pub fn into_error(self) -> Option<syn::Error> {
        self.0
    }
}

/// `a`, `b` and `c` — a list of names for hints.
pub fn list(items: impl IntoIterator<Item = impl Display>) -> String {
    let items: Vec<String> = items.into_iter().map(|i| format!("`{i}`")).collect();
    match items.len() {
        0 => String::from("none"),
        1 => items[0].clone(),
        n => format!("{} and {}", items[..n - 1].join(", "), items[n - 1]),
    }
}
