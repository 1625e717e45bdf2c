//! `require(name = level, …)`: a row the design must contain, named by level labels.
//!
//! A user adds a configuration they know matters (one that failed in production, the
//! configuration production runs) and the design is built around it: the engine takes
//! it as a required row, first in the design and counted toward coverage, so the rows
//! around it shrink. Parameters the require leaves out are [`UNSET`]: the engine fills
//! them with the levels that cover the most (see [`heddle_generator::complete`]).
//!
//! [`blocked`] answers whether the excludes allow such a row; the macro and
//! `cargo heddle design --require` both ask it, so both refuse the same rows.

use heddle_generator::{Expr, Factor, Row, Spec, UNSET};
use proc_macro2::TokenStream;
use quote::ToTokens;
use syn::punctuated::Punctuated;
use syn::{Ident, Token};

use crate::diag::Errors;
use crate::keywords as kw;
use crate::resolve;
use crate::text::canonical;

/// Why the excludes refuse a required row.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Blocked {
    /// This exclude (by position) is true of every row with the required levels.
    Exclude(usize),
    /// Each completion of the row is ruled out, by one exclude or another.
    NoCompletion,
}

/// Whether the excludes of `spec` refuse a row with the set cells of `row` (cells may
/// be [`UNSET`]); `None` when some allowed row has them.
///
/// ```
/// use heddle_generator::{Expr, Factor, Spec, UNSET};
/// use heddle_syntax::require::{Blocked, blocked};
/// let f = vec![Factor::numbered("a", 2), Factor::numbered("b", 2), Factor::numbered("c", 2)];
/// let spec = Spec::new(f)
///     .exclude(Expr::is(0, 1).and(Expr::is(2, 0)))
///     .exclude(Expr::is(0, 1).and(Expr::is(2, 1)));
/// assert_eq!(blocked(&spec, &[0, UNSET, 1]), None);
/// assert_eq!(blocked(&spec, &[1, 0, 0]), Some(Blocked::Exclude(0)));
/// // a = 1 leaves no level for c
/// assert_eq!(blocked(&spec, &[1, UNSET, UNSET]), Some(Blocked::NoCompletion));
/// ```
pub fn blocked(spec: &Spec, row: &[u8]) -> Option<Blocked> {
    if spec.excludes.is_empty() {
        return None;
    }
    if let Some(e) = spec
        .excludes
        .iter()
        .position(|e| e.eval_partial(row) == Some(true))
    {
        return Some(Blocked::Exclude(e));
    }
    if !row.contains(&UNSET) {
        return None;
    }
    // the allowed rows that keep every set cell: exclude every other level of it
    let mut pinned = spec.clone();
    for (c, &l) in row.iter().enumerate() {
        if l != UNSET {
            pinned.excludes.push(Expr::is_not(c, l));
        }
    }
    (!pinned.any_allowed()).then_some(Blocked::NoCompletion)
}

/// Builds a row from `(factor index, level)` pairs: [`UNSET`] where none is given. The
/// first pair repeating a factor is returned as the error.
pub fn row_of(width: usize, cells: &[(usize, u8)]) -> Result<Row, usize> {
    let mut row = vec![UNSET; width];
    for (i, &(c, l)) in cells.iter().enumerate() {
        if row[c] != UNSET {
            return Err(i);
        }
        row[c] = l;
    }
    Ok(row)
}

/// The example every hint about `require` shows.
pub fn example() -> String {
    format!(
        "write e.g. `{}(codec = Codec::Delta, unit = Unit::Fahrenheit)`; parameters left out are chosen by the engine",
        kw::REQUIRE
    )
}

/// Converts the tokens of one `require(…)` (written after `key`) into a row; every
/// problem found is added to `errs`, and `None` is returned when there was any.
pub fn convert(key: &Ident, tokens: &TokenStream, factors: &[Factor], errs: &mut Errors) -> Option<Row> {
    let items = match crate::args::parse_to_end(
        Punctuated::<syn::Expr, Token![,]>::parse_terminated,
        tokens.clone(),
        crate::args::last_span(tokens, key.span()),
    ) {
        Ok(items) => items,
        Err(e) => {
            errs.at_span(
                e.span(),
                format!("cannot read `{}({})`: {e}", kw::REQUIRE, canonical(tokens)),
                example(),
            );
            return None;
        }
    };
    if items.is_empty() {
        errs.at(key, format!("`{}()` names no parameter", kw::REQUIRE), example());
        return None;
    }
    let mut cells = Vec::with_capacity(items.len());
    let mut names = Vec::with_capacity(items.len());
    let mut ok = true;
    for item in &items {
        let syn::Expr::Assign(a) = item else {
            errs.at(
                item,
                format!(
                    "expected `name = level` in `{}(…)`, found `{}`",
                    kw::REQUIRE,
                    canonical(item)
                ),
                example(),
            );
            ok = false;
            continue;
        };
        match resolve::name_and_level(&a.left, "=", &a.right, factors, kw::REQUIRE, errs) {
            Some(cell) => {
                cells.push(cell);
                names.push(&a.left);
            }
            None => ok = false,
        }
    }
    if !ok {
        return None;
    }
    match row_of(factors.len(), &cells) {
        Ok(row) => Some(row),
        Err(i) => {
            let name = &factors[cells[i].0].name;
            errs.at(
                names[i],
                format!("`{name}` is given twice in one `{}(…)`", kw::REQUIRE),
                format!(
                    "give each parameter once per required row; a second row is another `{}(…)`",
                    kw::REQUIRE
                ),
            );
            None
        }
    }
}

/// The tokens an error about a whole `require(…)` spans: its key and its contents.
pub fn whole(key: &Ident, tokens: &TokenStream) -> TokenStream {
    let mut all = key.to_token_stream();
    all.extend(tokens.clone());
    all
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_of_pairs_leave_the_rest_unset() {
        assert_eq!(row_of(3, &[(2, 1), (0, 0)]), Ok(vec![0, UNSET, 1]));
        assert_eq!(row_of(2, &[]), Ok(vec![UNSET, UNSET]));
        assert_eq!(row_of(2, &[(1, 0), (1, 1)]), Err(1));
    }

    #[test]
    fn a_complete_row_names_the_exclude_that_rules_it_out() {
        let f = vec![Factor::numbered("a", 3), Factor::numbered("b", 2)];
        let spec = Spec::new(f)
            .exclude(Expr::is(0, 0))
            .exclude(Expr::is(0, 2).and(Expr::is(1, 1)));
        assert_eq!(blocked(&spec, &[2, 1]), Some(Blocked::Exclude(1)));
        assert_eq!(blocked(&spec, &[2, 0]), None);
        // an exclude decided by the set cells alone is named for a partial row too
        assert_eq!(blocked(&spec, &[0, UNSET]), Some(Blocked::Exclude(0)));
        assert_eq!(blocked(&spec, &[UNSET, 1]), None);
    }
}
