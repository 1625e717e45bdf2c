//! The checks between the parsed attribute and a spec the engine accepts.
//!
//! Every problem is reported, each at the tokens it is about, in one pass: a user fixing
//! a test should see all that is wrong with it in one build. The result carries the
//! [`CoverSpec`] (what the engine, the pins file and the runtime need) and the
//! [`Shape`] of the function (what the expansion needs).
//!
//! By job: `keys` (the attribute's keys and their values), `signature` (how the
//! function is called: async, return type, `#[should_panic]`), `params` (the
//! parameters and their levels); this module joins them into a spec.

pub(crate) mod keys;
mod params;
mod signature;

pub use signature::{Returns, Shape};

use keys::check_keys;
use params::check_params;
use signature::check_signature;

use heddle_generator::Spec;
use syn::ext::IdentExt;

use crate::ast::CoverFn;
use crate::budget::Budget;
use crate::defaults::Defaults;
use crate::diag::{self, Errors};
use crate::exclude;
use crate::fingerprint::{Fingerprint, fingerprint};
use crate::hash::default_seed;
use crate::keywords as kw;
use crate::require::{self, Blocked};
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
    /// Each required row's canonical source text (`codec = Codec::Delta, unit = Unit::F`),
    /// in the order of `spec.required`.
    pub required: Vec<String>,
    /// The attribute's row budget (it does not change the rows, so it is no part of the
    /// fingerprint).
    pub budget: Option<Budget>,
    /// The fingerprint of `spec`.
    pub fingerprint: Fingerprint,
    /// Whether `strength` was written in the attribute (else it came from a default).
    pub strength_explicit: bool,
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
        None => defaults
            .strength
            .unwrap_or(crate::defaults::DEFAULT_STRENGTH)
            .min(k),
    };
    let lambda = keys
        .lambda
        .or(defaults.lambda)
        .unwrap_or(crate::defaults::DEFAULT_LAMBDA);
    let function = cover.name().unraw().to_string();
    let seed = keys
        .seed
        .or(defaults.seed)
        .unwrap_or_else(|| default_seed(&function));

    let mut excludes = Vec::new();
    let mut exclude_src = Vec::new();
    let mut allowed = Spec::new(factors.clone());
    for e in &keys.excludes {
        let Some(x) = exclude::convert(e, &factors, &mut errs) else {
            continue;
        };
        excludes.push(x);
        exclude_src.push(canonical(*e));
        allowed.excludes = excludes.clone();
        if !allowed.any_allowed() {
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
    allowed.excludes = excludes.clone();
    let focus: Vec<_> = keys
        .focus
        .iter()
        .filter_map(|&(key, tokens)| {
            crate::focus::convert(key, tokens, &factors, strength, lambda, &mut errs)
        })
        .collect();
    let mut required = Vec::new();
    let mut required_src = Vec::new();
    for &(key, tokens) in &keys.requires {
        let Some(row) = require::convert(key, tokens, &factors, &mut errs) else {
            continue;
        };
        let shown = canonical(tokens);
        match require::blocked(&allowed, &row) {
            None => {
                required.push(row);
                required_src.push(shown);
            }
            Some(Blocked::Exclude(i)) => errs.at(
                require::whole(key, tokens),
                format!(
                    "`{}({shown})` is ruled out by `{}({})`",
                    kw::REQUIRE,
                    kw::EXCLUDE,
                    exclude_src[i]
                ),
                "drop the require, change one of its levels, or loosen that exclude",
            ),
            Some(Blocked::NoCompletion) => errs.at(
                require::whole(key, tokens),
                format!(
                    "`{}({shown})` has no allowed row: the excludes rule out every way to fill in the other parameters",
                    kw::REQUIRE
                ),
                "name the parameters that make it allowed, change a level, or loosen the excludes",
            ),
        }
    }
    if !errs.is_empty() {
        return Err(errs.into_error().unwrap_or_else(|| {
            diag::error_at_span(cover.span, "invalid attribute", "see the other errors")
        }));
    }
    let mut spec = Spec::new(factors).strength(strength).lambda(lambda).seed(seed);
    spec.excludes = excludes;
    spec.required = required;
    spec.focus = focus;
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
            required: required_src,
            budget: keys.budget,
            fingerprint: fp,
            strength_explicit: keys.strength.is_some(),
        },
        shape,
        cover,
    })
}
