//! How deeply tokens nest, measured without recursion before `syn` reads them.
//!
//! `syn` parses expressions, types and patterns by recursive descent, and a proc macro
//! runs on the compiler's thread in an unoptimised build: a few hundred nested
//! parentheses or prefix operators overflow the stack and crash the compiler, where
//! the compiler's own parser would have accepted far deeper input. So every token
//! stream is measured here first and refused, with an error at the token that goes too
//! deep, above [`MAX_NESTING`].
//!
//! The measure counts what makes `syn` recurse: each delimited group adds one level, and
//! so does each punctuation token of an unbroken run (`!!-x`, `&&&x`: prefix operators
//! nest like groups; a binary operator is a run of one or two, ended by its right
//! operand). Commas and semicolons end a run. The contents of a list-shaped attribute
//! (`#[name(…)]`, `#[name[…]]`, `#[name{…}]`) are skipped when measuring an item: `syn`
//! keeps them as tokens, and whoever parses them later measures them then.
//!
//! A chain of binary operators (`a == 1 && b == 2 && …`) does not nest in the tokens but
//! does in the tree `syn` builds, which is then printed and dropped by recursion: the
//! attribute's arguments and level lists are also held to [`MAX_OPERATORS`].

use proc_macro2::{Delimiter, Span, TokenStream, TokenTree};

use crate::diag;

/// Deepest nesting accepted in the attribute's arguments, a `#[levels(…)]` list or the
/// annotated function. Real tests stay within a few dozen levels; `syn` in an unoptimised
/// build needs about 14 KiB of stack per level of parentheses (measured with syn 2.0.119
/// on x86-64 Linux: 1.4 MiB for 100 levels, 2.7 MiB for 200), so parsing stays within
/// 2 MiB of the 8 MiB the compiler's main thread has (rustc's default, from memory).
pub const MAX_NESTING: usize = 128;

/// Most operators (runs of punctuation other than `,`, `;`, `:`, `::`, `.` and `#`)
/// in the attribute's arguments or one level list. A chain of N binary operators costs
/// about 0.6 KiB of stack per operator to print and drop in an unoptimised build
/// (measured as above: 1.2 MiB for a chain of 1000 comparisons), so this is 2.4 MiB at
/// most, and leaves room for an exclude at the engine's depth limit (two operators per
/// comparison, [`heddle_generator::MAX_FORMULA_DEPTH`] comparisons).
pub const MAX_OPERATORS: usize = 4 * heddle_generator::MAX_FORMULA_DEPTH;

/// What is measured, and so what is refused.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scope {
    /// An item or a file: nesting only, contents of list-shaped attributes skipped.
    Item,
    /// Tokens parsed as expressions where they stand: nesting and operators.
    Expressions,
}

/// The first token at which `tokens` nests deeper than `limit`, if any.
///
/// ```
/// use heddle_syntax::nesting::too_deep;
/// let deep: proc_macro2::TokenStream = format!("{}1{}", "(".repeat(9), ")".repeat(9)).parse().unwrap();
/// assert!(too_deep(&deep, 9, false).is_none());
/// assert!(too_deep(&deep, 8, false).is_some());
/// let nots: proc_macro2::TokenStream = "!!!x == 1".parse().unwrap();
/// assert!(too_deep(&nots, 3, false).is_none());
/// assert!(too_deep(&nots, 2, false).is_some());
/// ```
pub fn too_deep(tokens: &TokenStream, limit: usize, skip_list_attributes: bool) -> Option<Span> {
    struct Frame {
        tokens: std::iter::Peekable<proc_macro2::token_stream::IntoIter>,
        /// Groups enclosing this stream (plus operator runs leading into it).
        base: usize,
        /// Punctuation tokens since the last operand or separator.
        run: usize,
        /// The previous token was a `#` (an attribute may follow).
        after_hash: bool,
    }
    let mut stack = vec![Frame {
        tokens: tokens.clone().into_iter().peekable(),
        base: 0,
        run: 0,
        after_hash: false,
    }];
    while let Some(frame) = stack.last_mut() {
        let Some(tt) = frame.tokens.next() else {
            stack.pop();
            continue;
        };
        let after_hash = std::mem::replace(&mut frame.after_hash, false);
        match tt {
            TokenTree::Group(g) => {
                let depth = frame.base + frame.run + 1;
                frame.run = 0;
                if depth > limit {
                    return Some(g.span_open());
                }
                let inner = if skip_list_attributes && after_hash && g.delimiter() == Delimiter::Bracket {
                    list_attribute_path(&g.stream())
                } else {
                    None
                };
                let inner = inner.unwrap_or_else(|| g.stream());
                stack.push(Frame {
                    tokens: inner.into_iter().peekable(),
                    base: depth,
                    run: 0,
                    after_hash: false,
                });
            }
            TokenTree::Punct(p) => match p.as_char() {
                ',' | ';' => frame.run = 0,
                // an attribute's `#` leads into brackets without nesting anything
                '#' => frame.after_hash = true,
                _ => {
                    frame.run += 1;
                    if frame.base + frame.run > limit {
                        return Some(p.span());
                    }
                }
            },
            TokenTree::Ident(_) | TokenTree::Literal(_) => frame.run = 0,
        }
    }
    None
}

/// For the inside of an attribute's brackets shaped `path(…)` (any delimiter): the
/// tokens before the group, so that the group's contents are not measured. `None` for
/// any other shape (`path = value`, a bare path), which is measured whole.
fn list_attribute_path(inner: &TokenStream) -> Option<TokenStream> {
    let tokens: Vec<TokenTree> = inner.clone().into_iter().collect();
    let (last, path) = tokens.split_last()?;
    let is_path = path.iter().all(|t| match t {
        TokenTree::Ident(_) => true,
        TokenTree::Punct(p) => p.as_char() == ':',
        _ => false,
    });
    (matches!(last, TokenTree::Group(g) if g.delimiter() != Delimiter::None) && is_path && !path.is_empty())
        .then(|| path.iter().cloned().collect())
}

/// The token that starts operator number `limit + 1` of `tokens`, if there are more.
///
/// ```
/// use heddle_syntax::nesting::too_many_operators;
/// let chain: proc_macro2::TokenStream = "a == 1 && Codec::Rle != b.c || !(d)".parse().unwrap();
/// // `==`, `&&`, `!=` and `|| !`: paths and fields are no operators, `|| !` is one run
/// assert!(too_many_operators(&chain, 4).is_none());
/// assert!(too_many_operators(&chain, 3).is_some());
/// ```
pub fn too_many_operators(tokens: &TokenStream, limit: usize) -> Option<Span> {
    let mut stack = vec![tokens.clone().into_iter()];
    let mut count = 0;
    let mut in_run = false;
    while let Some(iter) = stack.last_mut() {
        let Some(tt) = iter.next() else {
            stack.pop();
            in_run = false;
            continue;
        };
        match tt {
            TokenTree::Group(g) => {
                in_run = false;
                stack.push(g.stream().into_iter());
            }
            TokenTree::Punct(p) if matches!(p.as_char(), ',' | ';' | ':' | '.' | '#') => in_run = false,
            TokenTree::Punct(p) => {
                if !in_run {
                    count += 1;
                    if count > limit {
                        return Some(p.span());
                    }
                }
                in_run = true;
            }
            TokenTree::Ident(_) | TokenTree::Literal(_) => in_run = false,
        }
    }
    None
}

/// A located error when `tokens` nest deeper than [`MAX_NESTING`] or, for
/// [`Scope::Expressions`], hold more than [`MAX_OPERATORS`]; `what` names them in the
/// message (``"`#[levels(…)]`"``, "the function"), `hint` says what to do instead.
pub fn check(tokens: &TokenStream, what: &str, hint: &str, scope: Scope) -> Result<(), syn::Error> {
    if let Some(span) = too_deep(tokens, MAX_NESTING, scope == Scope::Item) {
        return Err(diag::error_at_span(
            span,
            format!("{what} nests deeper than {MAX_NESTING} levels of brackets and operators"),
            hint,
        ));
    }
    if scope == Scope::Expressions
        && let Some(span) = too_many_operators(tokens, MAX_OPERATORS)
    {
        return Err(diag::error_at_span(
            span,
            format!("{what} holds more than {MAX_OPERATORS} operators"),
            hint,
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ts(s: &str) -> TokenStream {
        s.parse().expect("valid token text")
    }

    fn depth_of(s: &str) -> usize {
        let t = ts(s);
        (0..).find(|&l| too_deep(&t, l, true).is_none()).unwrap_or(0)
    }

    #[test]
    fn groups_and_operator_runs_count() {
        // hand-counted expectations
        assert_eq!(depth_of(""), 0);
        assert_eq!(depth_of("a"), 0);
        assert_eq!(depth_of("(a)"), 1);
        assert_eq!(depth_of("[(a), {b}]"), 2);
        assert_eq!(depth_of("a == 1 && b != 2 && c == 3"), 2);
        assert_eq!(depth_of("!!!!a"), 4);
        assert_eq!(depth_of("!(!(a))"), 4);
        assert_eq!(depth_of("f(-1, -2, -3)"), 2);
        assert_eq!(depth_of("a == !(b)"), 4);
    }

    #[test]
    fn list_attribute_contents_are_skipped_only_in_items() {
        let deep = format!("{}1{}", "(".repeat(50), ")".repeat(50));
        let item = ts(&format!("fn f(#[levels{deep}] a: u8) {{}}"));
        // the parameter list and the attribute's brackets
        assert!(too_deep(&item, 2, true).is_none());
        assert!(too_deep(&item, 2, false).is_some());
        // a name-value attribute's value is parsed as an expression: measured
        let item = ts(&format!("#[doc = {deep}] fn f() {{}}"));
        assert!(too_deep(&item, 40, true).is_some());
    }

    #[test]
    fn the_error_points_at_the_first_token_too_deep() {
        let t = ts("a == ((((1))))");
        assert!(check(&t, "`x`", "h", Scope::Expressions).is_ok());
        let text = format!("{}x{}", "(".repeat(MAX_NESTING + 1), ")".repeat(MAX_NESTING + 1));
        let e = check(&ts(&text), "`x`", "do less", Scope::Item)
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            format!("`x` nests deeper than {MAX_NESTING} levels of brackets and operators\nhint: do less")
        );
    }
}
