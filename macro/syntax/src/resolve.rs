//! A parameter name and a level expression inside the attribute's keys, looked up among
//! the factors: `exclude(codec == Codec::Delta)` and `require(codec = Codec::Delta)`
//! share it, so both accept and refuse the same names and levels in the same words.
//! Levels are matched by canonical text ([`crate::text`]), so `Codec :: Delta` finds the
//! level `Codec::Delta`.

use heddle_generator::Factor;
use syn::ext::IdentExt;

use crate::diag::{self, Errors};
use crate::keywords as kw;
use crate::text::canonical;

/// The index of the factor `name` (written at `at`) names inside `key(…)`; an unknown
/// name is added to `errs`. `exclude`, `require` and `focus` share it.
pub fn factor(
    name: &syn::Ident,
    at: impl quote::ToTokens,
    factors: &[Factor],
    key: &str,
    errs: &mut Errors,
) -> Option<usize> {
    let name = name.unraw().to_string();
    let found = factors.iter().position(|f| f.name == name);
    if found.is_none() {
        errs.at(
            at,
            format!("unknown parameter `{name}` in `{key}(…)`"),
            format!(
                "the parameters are {}",
                diag::list(factors.iter().map(|f| &f.name))
            ),
        );
    }
    found
}

/// The factor index `left` names and the level index of `right` among its levels, for
/// `left op right` inside `key(…)`; every problem is added to `errs`.
pub fn name_and_level(
    left: &syn::Expr,
    op: &str,
    right: &syn::Expr,
    factors: &[Factor],
    key: &str,
    errs: &mut Errors,
) -> Option<(usize, u8)> {
    let name = match left {
        syn::Expr::Path(p) if p.qself.is_none() && p.attrs.is_empty() => p.path.get_ident(),
        _ => None,
    };
    let Some(name) = name else {
        errs.at(
            left,
            format!(
                "expected a parameter name on the left of `{op}`, found `{}`",
                canonical(left)
            ),
            format!(
                "write `name {op} level` with one of {}",
                diag::list(factors.iter().map(|f| &f.name))
            ),
        );
        return None;
    };
    let fi = factor(name, left, factors, key, errs)?;
    let f = &factors[fi];
    let name = &f.name;
    let label = canonical(right);
    let Some(level) = f.level_index(&label) else {
        errs.at(
            right,
            format!("`{label}` is not a level of `{name}`"),
            format!(
                "write it as in `#[{}(…)]`; the levels of `{name}` are {}",
                kw::LEVELS,
                diag::list(&f.levels)
            ),
        );
        return None;
    };
    Some((fi, level))
}
