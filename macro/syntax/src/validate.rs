//! The checks between the parsed attribute and a spec the engine accepts.
//!
//! Every problem is reported, each at the tokens it is about, in one pass: a user fixing
//! a test should see all that is wrong with it in one build. The result carries the
//! [`CoverSpec`] (what the engine, the pins file and the runtime need) and the
//! [`Shape`] of the function (what the expansion needs).

use std::collections::BTreeSet;

use heddle_generator::constraints::Constraints;
use heddle_generator::{Factor, MAX_LAMBDA, MAX_LEVELS, MAX_STRENGTH, Spec};
use syn::ext::IdentExt;
use syn::{GenericArgument, Lit, PathArguments, ReturnType, Type};

use crate::args::ArgValue;
use crate::ast::{CoverFn, KeyKind, ParamKind};
use crate::defaults::Defaults;
use crate::diag::{self, Errors};
use crate::exclude;
use crate::fingerprint::{Fingerprint, fingerprint};
use crate::hash::default_seed;
use crate::keywords as kw;
use crate::text::canonical;

/// Everything about an annotated function that decides its rows: owned, so the plugin
/// can keep it after the source is gone.
#[derive(Clone, Debug, PartialEq)]
pub struct CoverSpec {
    /// The function's name (without `r#`).
    pub function: String,
    /// The engine's spec: factors named after the parameters, labels from the levels.
    pub spec: Spec,
    /// Each exclude's canonical source text, in order (what the runtime shows).
    pub excludes: Vec<String>,
    /// The fingerprint of `spec`.
    pub fingerprint: Fingerprint,
    /// Whether `strength` was written in the attribute (else it came from a default).
    pub strength_explicit: bool,
}

/// How the function is called, which decides the shape of each row test.
#[derive(Clone, Debug)]
pub struct Shape<'a> {
    /// `async fn`.
    pub is_async: bool,
    /// What it returns.
    pub returns: Returns<'a>,
    /// The rows carry `#[should_panic]`.
    pub should_panic: bool,
    /// Its `expected = "…"` text, if any.
    pub should_panic_expected: Option<String>,
}

/// What the function returns.
#[derive(Clone, Copy, Debug)]
pub enum Returns<'a> {
    /// `()`.
    Unit,
    /// `Result<(), E>`; `error` is `E` when written out (not behind an alias such as
    /// `io::Result<()>`).
    Result {
        /// The error type, when named.
        error: Option<&'a Type>,
    },
}

/// A validated annotated function.
pub struct Checked<'a> {
    /// The parsed function.
    pub cover: CoverFn<'a>,
    /// Its spec.
    pub spec: CoverSpec,
    /// Its call shape.
    pub shape: Shape<'a>,
}

struct KeyValues<'a> {
    strength: Option<(usize, &'a syn::Expr)>,
    lambda: Option<u32>,
    seed: Option<u64>,
    excludes: Vec<&'a syn::Expr>,
}

/// Checks `cover` against the crate's `defaults`, reporting every problem.
pub fn validate<'a>(cover: CoverFn<'a>, defaults: &Defaults) -> Result<Checked<'a>, syn::Error> {
    let mut errs = Errors::default();
    let keys = check_keys(&cover, &mut errs);
    let shape = check_signature(&cover, &mut errs);
    let factors = check_params(&cover, &mut errs);

    let Some(factors) = factors else {
        // check_params returns None only after reporting why, so the fallback is never used
        return Err(errs
            .into_error()
            .unwrap_or_else(|| diag::error_at_span(cover.span, "invalid parameters", "see the parameters")));
    };
    let k = factors.len();
    let strength = match keys.strength {
        Some((t, expr)) => {
            if t > k {
                errs.at(
                    expr,
                    format!(
                        "`{} = {t}` is larger than the number of parameters ({k})",
                        kw::STRENGTH
                    ),
                    format!("use `{} = {k}` or less, or add parameters", kw::STRENGTH),
                );
            }
            t
        }
        None => defaults.strength.unwrap_or(kw::DEFAULT_STRENGTH).min(k),
    };
    let lambda = keys.lambda.or(defaults.lambda).unwrap_or(kw::DEFAULT_LAMBDA);
    let function = cover.name().unraw().to_string();
    let seed = keys
        .seed
        .or(defaults.seed)
        .unwrap_or_else(|| default_seed(&function));

    let mut excludes = Vec::new();
    let mut exclude_src = Vec::new();
    let levels: Vec<usize> = factors.iter().map(|f| f.levels.len()).collect();
    for e in &keys.excludes {
        let Some(x) = exclude::convert(e, &factors, &mut errs) else {
            continue;
        };
        excludes.push(x);
        exclude_src.push(canonical(*e));
        if !Constraints::new(&excludes, &levels).any_allowed() {
            let msg = if excludes.len() == 1 {
                format!("`{}({})` rules out every row", kw::EXCLUDE, canonical(*e))
            } else {
                format!(
                    "`{}({})` rules out every row the other excludes left",
                    kw::EXCLUDE,
                    canonical(*e)
                )
            };
            errs.at(
                e,
                msg,
                "loosen the excludes so that at least one combination stays allowed",
            );
            break;
        }
    }
    if !errs.is_empty() {
        return Err(errs.into_error().unwrap_or_else(|| {
            diag::error_at_span(cover.span, "invalid attribute", "see the other errors")
        }));
    }
    let mut spec = Spec::new(factors).strength(strength).lambda(lambda).seed(seed);
    spec.excludes = excludes;
    if let Err(e) = spec.validate() {
        // limits only the engine knows in full (interaction count, row bound)
        return Err(diag::error_at_span(
            cover.span,
            format!("the engine refuses this spec: {e}"),
            "make the spec smaller",
        ));
    }
    let fp = fingerprint(&spec);
    Ok(Checked {
        spec: CoverSpec {
            function,
            spec,
            excludes: exclude_src,
            fingerprint: fp,
            strength_explicit: keys.strength.is_some(),
        },
        shape,
        cover,
    })
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

fn check_keys<'a>(cover: &CoverFn<'a>, errs: &mut Errors) -> KeyValues<'a> {
    let mut kv = KeyValues {
        strength: None,
        lambda: None,
        seed: None,
        excludes: Vec::new(),
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
        if key.kind != KeyKind::Exclude && !seen.insert(key.kind as u8) {
            errs.at(
                &key.arg.key,
                format!("duplicate key `{name}`"),
                format!("give `{name}` once; only `{}(…)` may repeat", kw::EXCLUDE),
            );
            continue;
        }
        if matches!(key.arg.value, ArgValue::Flag) && key.kind != KeyKind::Exclude {
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
            KeyKind::Strength => {
                if let Some((v, expr)) = int_value(&key.arg.value, kw::STRENGTH, "2", errs) {
                    if v == 0 {
                        errs.at(
                            expr,
                            format!("`{} = 0` is not allowed", kw::STRENGTH),
                            format!(
                                "strength is at least 1: `{} = 1` covers every level, `{} = 2` every pair",
                                kw::STRENGTH,
                                kw::STRENGTH
                            ),
                        );
                    } else if v > MAX_STRENGTH as u64 {
                        errs.at(
                            expr,
                            format!(
                                "`{} = {v}` is above the supported maximum of {MAX_STRENGTH}",
                                kw::STRENGTH
                            ),
                            format!("use `{} = {MAX_STRENGTH}` or less", kw::STRENGTH),
                        );
                    } else {
                        kv.strength = Some((v as usize, expr));
                    }
                }
            }
            KeyKind::Lambda => {
                if let Some((v, expr)) = int_value(&key.arg.value, kw::LAMBDA, "2", errs) {
                    if v == 0 {
                        errs.at(
                            expr,
                            format!("`{} = 0` is not allowed", kw::LAMBDA),
                            format!(
                                "lambda is at least 1: how many rows must cover each combination; write `{} = 1`",
                                kw::LAMBDA
                            ),
                        );
                    } else if v > u64::from(MAX_LAMBDA) {
                        errs.at(
                            expr,
                            format!(
                                "`{} = {v}` is above the supported maximum of {MAX_LAMBDA}",
                                kw::LAMBDA
                            ),
                            format!("use `{} = {MAX_LAMBDA}` or less", kw::LAMBDA),
                        );
                    } else {
                        kv.lambda = Some(v as u32);
                    }
                }
            }
            KeyKind::Seed => {
                if let Some((v, _)) = int_value(&key.arg.value, kw::SEED, "7", errs) {
                    kv.seed = Some(v);
                }
            }
            KeyKind::Exclude => match &key.arg.value {
                ArgValue::Call { expr: Ok(e), .. } => kv.excludes.push(e),
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
            KeyKind::Unknown => {}
        }
    }
    kv
}

fn exclude_hint() -> String {
    format!(
        "write e.g. `{}(codec == Codec::Delta && batch == 1)`",
        kw::EXCLUDE
    )
}

fn check_signature<'a>(cover: &CoverFn<'a>, errs: &mut Errors) -> Shape<'a> {
    let sig = &cover.item.sig;
    let attrs = &cover.attrs;
    if !sig.generics.params.is_empty() || sig.generics.where_clause.is_some() {
        errs.at(
            &sig.generics,
            format!("a `#[{}]` function cannot be generic", kw::COVER),
            "give the parameters concrete types; write one function per type if needed",
        );
    }
    if let Some(u) = &sig.unsafety {
        errs.at(
            u,
            format!("a `#[{}]` function cannot be `unsafe`", kw::COVER),
            "make it safe and use an `unsafe` block inside",
        );
    }
    if let Some(abi) = &sig.abi {
        errs.at(
            abi,
            format!("a `#[{}]` function cannot have an `extern` ABI", kw::COVER),
            "remove the `extern`",
        );
    }
    if let Some(v) = &sig.variadic {
        errs.at(
            v,
            format!("a `#[{}]` function cannot be variadic", kw::COVER),
            "remove the `...`",
        );
    }
    for extra in &attrs.covers {
        errs.at(
            extra,
            format!("`#[{}]` is given twice", kw::COVER),
            "merge the two into one attribute",
        );
    }
    for t in &attrs.test {
        errs.at(
            t,
            format!(
                "`#[{}]` does not belong on a `#[{}]` function",
                kw::TEST,
                kw::COVER
            ),
            format!("remove it: `#[{}]` writes one test per row", kw::COVER),
        );
    }
    for extra in attrs.runtime.iter().skip(1) {
        errs.at(
            extra,
            "a second test attribute",
            "keep one runtime test attribute, like `#[tokio::test]`",
        );
    }
    if let (Some(a), true) = (&sig.asyncness, attrs.runtime.is_empty()) {
        errs.at(
            a,
            format!(
                "an `async fn` needs a runtime's test attribute below `#[{}]`",
                kw::COVER
            ),
            format!("add one under `#[{}(…)]`, e.g. `#[tokio::test]`", kw::COVER),
        );
    }
    let returns = match &sig.output {
        ReturnType::Default => Returns::Unit,
        ReturnType::Type(_, ty) => match result_type(ty) {
            Some(r) => r,
            None if is_unit(ty) => Returns::Unit,
            None => {
                errs.at(
                    ty,
                    format!(
                        "a `#[{}]` function returns `()` or `Result<(), E>`, not `{}`",
                        kw::COVER,
                        canonical(ty)
                    ),
                    "return `Result<(), E>` with `E: Debug` to fail a row with an error",
                );
                Returns::Unit
            }
        },
    };
    if let (Some(a), Returns::Result { error: None }) = (&sig.asyncness, returns) {
        errs.at(
            a,
            format!("an `async` `#[{}]` function must name its error type", kw::COVER),
            "write the return type as `Result<(), E>`, not through an alias",
        );
    }
    let should_panic = attrs.should_panic();
    if let (true, Returns::Result { .. }, ReturnType::Type(_, ty)) = (should_panic, returns, &sig.output) {
        errs.at(
            ty,
            format!("`#[{}]` needs the function to return `()`", kw::SHOULD_PANIC),
            format!(
                "libtest only runs `#[{}]` tests that return `()`; drop the `Result`",
                kw::SHOULD_PANIC
            ),
        );
    }
    Shape {
        is_async: sig.asyncness.is_some(),
        returns,
        should_panic,
        should_panic_expected: attrs.should_panic_expected(),
    }
}

fn is_unit(ty: &Type) -> bool {
    match ty {
        Type::Tuple(t) => t.elems.is_empty(),
        Type::Paren(p) => is_unit(&p.elem),
        Type::Group(g) => is_unit(&g.elem),
        _ => false,
    }
}

/// `Result<(), E>` (any path ending in `Result`), or an alias `Result<()>` / `Result`.
fn result_type(ty: &Type) -> Option<Returns<'_>> {
    let Type::Path(p) = ty else { return None };
    if p.qself.is_some() {
        return None;
    }
    let last = p.path.segments.last()?;
    if last.ident != "Result" {
        return None;
    }
    let args: Vec<&Type> = match &last.arguments {
        PathArguments::None => Vec::new(),
        PathArguments::AngleBracketed(a) => a
            .args
            .iter()
            .filter_map(|g| match g {
                GenericArgument::Type(t) => Some(t),
                _ => None,
            })
            .collect(),
        PathArguments::Parenthesized(_) => return None,
    };
    match args.as_slice() {
        [] => Some(Returns::Result { error: None }),
        [ok] if is_unit(ok) => Some(Returns::Result { error: None }),
        [ok, err] if is_unit(ok) => Some(Returns::Result { error: Some(err) }),
        _ => None,
    }
}

fn check_params(cover: &CoverFn<'_>, errs: &mut Errors) -> Option<Vec<Factor>> {
    let mut factors = Vec::new();
    let mut ok = true;
    if cover.params.is_empty() {
        errs.at_span(
            cover.item.sig.paren_token.span.join(),
            format!("a `#[{}]` function needs at least one parameter", kw::COVER),
            format!(
                "add parameters with their levels, e.g. `#[{}(1, 8)] batch: usize`",
                kw::LEVELS
            ),
        );
        return None;
    }
    for p in &cover.params {
        let name = match &p.kind {
            ParamKind::Receiver(r) => {
                errs.at(
                    r,
                    format!("a `#[{}]` function cannot take `self`", kw::COVER),
                    "make it a free function; each row calls it without a value",
                );
                ok = false;
                continue;
            }
            ParamKind::Pattern { pat } => {
                errs.at(
                    pat,
                    format!("the parameter pattern `{}` is not supported", canonical(*pat)),
                    "bind a plain name (`x: T`) and destructure it in the body",
                );
                ok = false;
                continue;
            }
            ParamKind::Named { ident, .. } => ident.unraw().to_string(),
        };
        let Some(first) = p.levels.first() else {
            errs.at(
                p.arg,
                format!("parameter `{name}` has no `#[{}(…)]`", kw::LEVELS),
                format!("list the values it takes: `#[{}(a, b)] {name}: T`", kw::LEVELS),
            );
            ok = false;
            continue;
        };
        for extra in &p.levels[1..] {
            errs.at(
                extra.attr,
                format!("`#[{}]` is given twice on `{name}`", kw::LEVELS),
                "merge the lists into one",
            );
            ok = false;
        }
        if matches!(first.attr.meta, syn::Meta::Path(_)) {
            errs.at(
                first.attr,
                format!("`#[{}]` needs a list of levels", kw::LEVELS),
                format!("write `#[{}(a, b)]`", kw::LEVELS),
            );
            ok = false;
            continue;
        }
        let list = match &first.levels {
            Ok(l) => l,
            Err(e) => {
                errs.at_span(
                    e.span(),
                    format!("cannot read the levels of `{name}`: {e}"),
                    "levels are Rust expressions separated by commas",
                );
                ok = false;
                continue;
            }
        };
        if list.is_empty() {
            errs.at(
                first.attr,
                format!("`#[{}()]` of `{name}` is empty", kw::LEVELS),
                format!("list at least one level: `#[{}(a, b)]`", kw::LEVELS),
            );
            ok = false;
            continue;
        }
        if list.len() > MAX_LEVELS {
            errs.at(
                first.attr,
                format!(
                    "`{name}` has {} levels, at most {MAX_LEVELS} are supported",
                    list.len()
                ),
                "split the parameter or sample its values",
            );
            ok = false;
            continue;
        }
        let mut labels: Vec<String> = Vec::with_capacity(list.len());
        for e in list {
            let label = canonical(e);
            if labels.contains(&label) {
                errs.at(
                    e,
                    format!("level `{label}` of `{name}` is listed twice"),
                    "remove the repeat; each level is tested once per combination",
                );
                ok = false;
            } else {
                labels.push(label);
            }
        }
        factors.push(Factor::new(name, labels));
    }
    ok.then_some(factors)
}
