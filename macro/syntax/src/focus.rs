//! `focus(name, …, strength = N, lambda = N)`: factors covered at a higher strength than
//! the rest (a variable-strength covering array, Cohen, Colbourn, Collofello, Gibbons and
//! Mugridge 2003). The strength defaults to one above the strength of all parameters, λ
//! to theirs.

use heddle_generator::{Factor, Focus};
use proc_macro2::TokenStream;
use syn::punctuated::Punctuated;
use syn::{Ident, Token};

use crate::args::{Arg, ArgValue};
use crate::diag::{self, Errors};
use crate::keywords as kw;
use crate::require::whole;
use crate::resolve;
use crate::text::canonical;
use crate::validate::keys::{lambda_value, strength_value};

/// The example every hint about `focus` shows.
pub fn example() -> String {
    format!(
        "write e.g. `{}(codec, unit, workers)`, or `{}(codec, unit, workers, {} = 3)`",
        kw::FOCUS,
        kw::FOCUS,
        kw::STRENGTH
    )
}

/// A focus set as the attribute writes it, `focus(codec, unit, workers, strength = 3)`:
/// what `cargo heddle show` prints. `strength` and `lambda` are written only where they
/// differ from their defaults (one above `base`, and `lambda`).
pub fn text(focus: &Focus, factors: &[Factor], base: usize, lambda: u32) -> String {
    let mut parts: Vec<String> = focus
        .factors
        .iter()
        .map(|&c| factors.get(c).map_or_else(|| format!("#{c}"), |f| f.name.clone()))
        .collect();
    if focus.strength != base + 1 {
        parts.push(format!("{} = {}", kw::STRENGTH, focus.strength));
    }
    if focus.lambda != lambda {
        parts.push(format!("{} = {}", kw::LAMBDA, focus.lambda));
    }
    format!("{}({})", kw::FOCUS, parts.join(", "))
}

/// Converts the tokens of one `focus(…)` (written after `key`) at the base strength `base`
/// and index `lambda`; every problem found is added to `errs`, and `None` is returned
/// when there was any.
pub(crate) fn convert(
    key: &Ident,
    tokens: &TokenStream,
    factors: &[Factor],
    base: usize,
    lambda: u32,
    errs: &mut Errors,
) -> Option<Focus> {
    let shown = canonical(tokens);
    let items = match crate::args::parse_to_end(
        Punctuated::<Arg, Token![,]>::parse_terminated,
        tokens.clone(),
        crate::args::last_span(tokens, key.span()),
    ) {
        Ok(items) => items,
        Err(e) => {
            errs.at_span(
                e.span(),
                format!("cannot read `{}({shown})`: {e}", kw::FOCUS),
                example(),
            );
            return None;
        }
    };
    let before = errs.len();
    let mut names: Vec<usize> = Vec::new();
    let mut strength: Option<(usize, &syn::Expr)> = None;
    let mut index: Option<u32> = None;
    let mut seen_strength = false;
    let mut seen_lambda = false;
    for item in &items {
        let word = item.key.to_string();
        let repeated = match (&item.value, word.as_str()) {
            (ArgValue::Flag, _) => {
                if let Some(f) = resolve::factor(&item.key, &item.key, factors, kw::FOCUS, errs) {
                    if names.contains(&f) {
                        errs.at(
                            &item.key,
                            format!("`{}` is named twice in one `{}(…)`", factors[f].name, kw::FOCUS),
                            "name each parameter once",
                        );
                    } else {
                        names.push(f);
                    }
                }
                false
            }
            (value, kw::STRENGTH) => {
                strength = strength_value(value, errs);
                std::mem::replace(&mut seen_strength, true)
            }
            (value, kw::LAMBDA) => {
                index = lambda_value(value, errs).map(|(l, _)| l);
                std::mem::replace(&mut seen_lambda, true)
            }
            _ if factors.iter().any(|f| f.name == word) => {
                errs.at(
                    &item.key,
                    format!(
                        "`{}(…)` names parameters without levels, found a value after `{word}`",
                        kw::FOCUS
                    ),
                    format!(
                        "write `{word}` alone: a focus set covers every combination of its parameters' levels"
                    ),
                );
                false
            }
            _ => {
                errs.at(
                    &item.key,
                    format!("unknown key `{word}` in `{}(…)`", kw::FOCUS),
                    format!(
                        "inside `{}(…)` name parameters, then optionally {}",
                        kw::FOCUS,
                        diag::list(kw::FOCUS_KEYS.iter().map(|k| format!("{k} = N")))
                    ),
                );
                false
            }
        };
        if repeated {
            errs.at(
                &item.key,
                format!("`{word}` is given twice in one `{}(…)`", kw::FOCUS),
                format!("give `{word}` once per `{}(…)`", kw::FOCUS),
            );
        }
    }
    if items.iter().all(|i| !matches!(i.value, ArgValue::Flag)) {
        errs.at(
            whole(key, tokens),
            format!("`{}({shown})` names no parameter", kw::FOCUS),
            example(),
        );
    }
    if errs.len() > before {
        return None;
    }
    let s = match strength {
        Some((s, expr)) => {
            if s <= base {
                errs.at(
                    expr,
                    format!(
                        "`{} = {s}` in `{}(…)` is not above the strength {base} of all parameters",
                        kw::STRENGTH,
                        kw::FOCUS
                    ),
                    format!(
                        "use `{} = {}` or more, or leave it out for one above the rest",
                        kw::STRENGTH,
                        base + 1
                    ),
                );
                return None;
            }
            if s > names.len() {
                errs.at(
                    expr,
                    format!(
                        "`{} = {s}` in `{}(…)` is above its {} parameters",
                        kw::STRENGTH,
                        kw::FOCUS,
                        names.len()
                    ),
                    format!(
                        "name {s} parameters or more, or use `{} = {}` or less",
                        kw::STRENGTH,
                        names.len()
                    ),
                );
                return None;
            }
            s
        }
        None => {
            let s = base + 1;
            if s > names.len() {
                errs.at(
                    whole(key, tokens),
                    format!(
                        "`{}({shown})` names {} parameters, fewer than its strength {s} (one above the strength {base} of all)",
                        kw::FOCUS,
                        names.len()
                    ),
                    format!("name {s} parameters or more; a smaller set is already covered at strength {base}"),
                );
                return None;
            }
            s
        }
    };
    Some(Focus::new(names, s).lambda(index.unwrap_or(lambda)))
}
