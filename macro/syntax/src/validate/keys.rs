//! The attribute's keys: each known, given once (but `exclude`), with a value of the
//! right kind and range.

use std::collections::BTreeSet;

use heddle_generator::{MAX_LAMBDA, MAX_STRENGTH, check_lambda, check_strength};
use quote::ToTokens;
use syn::Lit;

use crate::args::ArgValue;
use crate::ast::{CoverFn, KeyKind};
use crate::budget::{self, Budget};
use crate::diag::{self, Errors};
use crate::keywords as kw;
use crate::text::canonical;

pub(super) struct KeyValues<'a> {
    pub(super) strength: Option<(usize, &'a syn::Expr)>,
    pub(super) lambda: Option<u32>,
    pub(super) seed: Option<u64>,
    pub(super) excludes: Vec<&'a syn::Expr>,
    /// Each `require(…)`: its key and the tokens inside the parentheses.
    pub(super) requires: Vec<(&'a syn::Ident, &'a proc_macro2::TokenStream)>,
    /// Each `focus(…)`: its key and the tokens inside the parentheses.
    pub(super) focus: Vec<(&'a syn::Ident, &'a proc_macro2::TokenStream)>,
    pub(super) budget: Option<Budget>,
}

fn int_value<'a>(
    value: &'a ArgValue,
    key: &str,
    example: &str,
    errs: &mut Errors,
) -> Option<(u64, &'a syn::Expr)> {
    let hint = format!("write `{key} = {example}`");
    match value {
        ArgValue::Assign { expr, .. } => match expr {
            syn::Expr::Lit(syn::ExprLit { lit: Lit::Int(i), .. }) => match i.base10_parse::<u64>() {
                Ok(v) => Some((v, expr)),
                Err(_) => {
                    errs.at(expr, format!("`{key} = {i}` does not fit in 64 bits"), hint);
                    None
                }
            },
            other => {
                let what = match other {
                    syn::Expr::Lit(syn::ExprLit { lit: Lit::Str(_), .. }) => "a string",
                    syn::Expr::Lit(syn::ExprLit {
                        lit: Lit::Float(_), ..
                    }) => "a float",
                    syn::Expr::Lit(syn::ExprLit {
                        lit: Lit::Bool(_), ..
                    }) => "a bool",
                    syn::Expr::Unary(_) => "a negative number",
                    _ => "an expression",
                };
                errs.at(
                    other,
                    format!(
                        "`{key}` takes an integer literal, found {what} `{}`",
                        canonical(other)
                    ),
                    hint,
                );
                None
            }
        },
        ArgValue::Flag => None,
        ArgValue::Call { paren, .. } => {
            errs.at_span(
                paren.span.join(),
                format!("`{key}` takes a value after `=`, not a list"),
                hint,
            );
            None
        }
    }
}

pub(super) fn check_keys<'a>(cover: &CoverFn<'a>, errs: &mut Errors) -> KeyValues<'a> {
    let mut kv = KeyValues {
        strength: None,
        lambda: None,
        seed: None,
        excludes: Vec::new(),
        requires: Vec::new(),
        focus: Vec::new(),
        budget: None,
    };
    let mut seen = BTreeSet::new();
    for key in &cover.keys {
        let name = key.arg.key.to_string();
        if key.kind == KeyKind::Unknown {
            errs.at(
                &key.arg.key,
                format!("unknown key `{name}` in `#[{}(…)]`", kw::COVER),
                format!("the keys are {}", diag::list(kw::KEYS)),
            );
            continue;
        }
        if !key.kind.repeatable() && !seen.insert(key.kind as u8) {
            errs.at(
                &key.arg.key,
                format!("duplicate key `{name}`"),
                format!(
                    "give `{name}` once; only `{}(…)`, `{}(…)` and `{}(…)` may repeat",
                    kw::EXCLUDE,
                    kw::REQUIRE,
                    kw::FOCUS
                ),
            );
            continue;
        }
        if matches!(key.arg.value, ArgValue::Flag)
            && !matches!(
                key.kind,
                KeyKind::Exclude | KeyKind::Require | KeyKind::Focus | KeyKind::Budget
            )
        {
            errs.at(
                &key.arg.key,
                format!("`{name}` needs a value"),
                format!(
                    "write `{name} = {}`",
                    if key.kind == KeyKind::Seed { 7 } else { 2 }
                ),
            );
            continue;
        }
        match key.kind {
            KeyKind::Strength => kv.strength = strength_value(&key.arg.value, errs),
            KeyKind::Lambda => kv.lambda = lambda_value(&key.arg.value, errs).map(|(l, _)| l),
            KeyKind::Seed => {
                if let Some((v, _)) = int_value(&key.arg.value, kw::SEED, "7", errs) {
                    kv.seed = Some(v);
                }
            }
            KeyKind::Exclude => match &key.arg.value {
                ArgValue::Call { expr: Ok(e), .. } => kv.excludes.push(e),
                ArgValue::Call { tokens, .. } if tokens.is_empty() => errs.at(
                    &key.arg.key,
                    format!("`{}()` holds no condition", kw::EXCLUDE),
                    exclude_hint(),
                ),
                ArgValue::Call {
                    expr: Err(e), tokens, ..
                } => errs.at_span(
                    e.span(),
                    format!("cannot read `{}({})`: {e}", kw::EXCLUDE, canonical(tokens)),
                    exclude_hint(),
                ),
                _ => errs.at(
                    &key.arg.key,
                    format!("`{}` takes a condition in parentheses", kw::EXCLUDE),
                    exclude_hint(),
                ),
            },
            KeyKind::Require => match &key.arg.value {
                ArgValue::Call { tokens, .. } => kv.requires.push((&key.arg.key, tokens)),
                _ => errs.at(
                    &key.arg.key,
                    format!(
                        "`{}` takes parameters and their levels in parentheses",
                        kw::REQUIRE
                    ),
                    crate::require::example(),
                ),
            },
            KeyKind::Focus => match &key.arg.value {
                ArgValue::Call { tokens, .. } => kv.focus.push((&key.arg.key, tokens)),
                _ => errs.at(
                    &key.arg.key,
                    format!("`{}` takes parameter names in parentheses", kw::FOCUS),
                    crate::focus::example(),
                ),
            },
            KeyKind::Budget => kv.budget = budget_value(&key.arg.key, &key.arg.value, errs),
            KeyKind::Unknown => {}
        }
    }
    kv
}

/// The value of `strength = N` (in the attribute or inside `focus(…)`), range-checked by
/// the engine, the words the attribute's.
pub(crate) fn strength_value<'a>(value: &'a ArgValue, errs: &mut Errors) -> Option<(usize, &'a syn::Expr)> {
    let zero = format!(
        "strength is at least 1: `{} = 1` covers every level, `{} = 2` every pair",
        kw::STRENGTH,
        kw::STRENGTH
    );
    ranged(
        value,
        kw::STRENGTH,
        check_strength,
        MAX_STRENGTH as u64,
        &zero,
        errs,
    )
}

/// The value of `lambda = N` (in the attribute or inside `focus(…)`).
pub(crate) fn lambda_value<'a>(value: &'a ArgValue, errs: &mut Errors) -> Option<(u32, &'a syn::Expr)> {
    let zero = format!(
        "lambda is at least 1: how many rows must cover each combination; write `{} = 1`",
        kw::LAMBDA
    );
    ranged(
        value,
        kw::LAMBDA,
        check_lambda,
        u64::from(MAX_LAMBDA),
        &zero,
        errs,
    )
}

/// An integer `key = N` checked by the engine's `check` (1 ..= `max`): 0 and values
/// above the maximum get the attribute's own words, `zero` the hint for 0.
fn ranged<'a, T>(
    value: &'a ArgValue,
    key: &str,
    check: fn(u64) -> Result<T, heddle_generator::Error>,
    max: u64,
    zero: &str,
    errs: &mut Errors,
) -> Option<(T, &'a syn::Expr)> {
    let (v, expr) = int_value(value, key, "2", errs)?;
    match check(v) {
        Ok(t) => Some((t, expr)),
        Err(_) if v == 0 => {
            errs.at(expr, format!("`{key} = 0` is not allowed"), zero);
            None
        }
        Err(_) => {
            errs.at(
                expr,
                format!("`{key} = {v}` is above the supported maximum of {max}"),
                format!("use `{key} = {max}` or less"),
            );
            None
        }
    }
}

/// `budget(12)` or `budget(25%)`.
fn budget_value(key: &syn::Ident, value: &ArgValue, errs: &mut Errors) -> Option<Budget> {
    let ArgValue::Call { tokens, .. } = value else {
        errs.at(
            key,
            format!("`{}` takes a row count or a share in parentheses", kw::BUDGET),
            budget::hint(),
        );
        return None;
    };
    let trees: Vec<proc_macro2::TokenTree> = tokens.clone().into_iter().collect();
    let (lit, percent) = match trees.as_slice() {
        [proc_macro2::TokenTree::Literal(l)] => (l, false),
        [
            proc_macro2::TokenTree::Literal(l),
            proc_macro2::TokenTree::Punct(p),
        ] if p.as_char() == '%' => (l, true),
        _ => {
            let shown = canonical(tokens);
            let at = if trees.is_empty() {
                key.to_token_stream()
            } else {
                tokens.clone()
            };
            errs.at(
                at,
                format!("`{}({shown})` is not a row count or a share", kw::BUDGET),
                budget::hint(),
            );
            return None;
        }
    };
    let text = format!("{}{}", lit, if percent { "%" } else { "" });
    let parsed = match syn::parse2::<syn::LitInt>(lit.to_token_stream()) {
        Ok(int) if int.suffix().is_empty() => Budget::parse(&format!(
            "{}{}",
            int.base10_digits(),
            if percent { "%" } else { "" }
        )),
        _ => Err(format!("`{text}` is not a whole number")),
    };
    match parsed {
        Ok(b) => Some(b),
        Err(why) => {
            errs.at(tokens, format!("`{}({text})`: {why}", kw::BUDGET), budget::hint());
            None
        }
    }
}

fn exclude_hint() -> String {
    format!(
        "write e.g. `{}(codec == Codec::Delta && batch == 1)`",
        kw::EXCLUDE
    )
}
