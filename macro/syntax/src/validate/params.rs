//! The parameters: each a plain name with one `#[levels(…)]` list of distinct levels,
//! which become the engine's factors.

use heddle_generator::{Factor, MAX_LEVELS};
use syn::ext::IdentExt;

use crate::ast::{CoverFn, ParamKind};
use crate::diag::Errors;
use crate::keywords as kw;
use crate::text::canonical;

pub(super) fn check_params(cover: &CoverFn<'_>, errs: &mut Errors) -> Option<Vec<Factor>> {
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
        if let syn::Meta::NameValue(nv) = &first.attr.meta {
            errs.at(
                first.attr,
                format!("`#[{} = …]` is not how levels are listed", kw::LEVELS),
                format!(
                    "write the levels in parentheses: `#[{}({})]`",
                    kw::LEVELS,
                    canonical(&nv.value)
                ),
            );
            ok = false;
            continue;
        }
        let list = match &first.levels {
            Ok(l) => l,
            // an error of heddle's own (it has a hint) stands as it is
            Err(e) if e.to_string().contains("\nhint: ") => {
                errs.push(e.clone());
                ok = false;
                continue;
            }
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
