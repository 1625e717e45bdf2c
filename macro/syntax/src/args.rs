//! The owned syntax tree of the attribute's arguments, `strength = 2, exclude(...)`.
//!
//! The compiler hands an attribute macro its arguments as a bare token stream (and the
//! plugin finds them inside an `Attribute`); this is their first, purely syntactic parse.
//! Each argument is `key`, `key = EXPR` or `key(EXPR)`; what the keys mean is decided
//! later ([`crate::ast`], [`mod@crate::validate`]), so an unknown key is reported as such
//! rather than as a syntax error.

use proc_macro2::{Delimiter, Group, Span, TokenStream, TokenTree};
use syn::ext::IdentExt;
use syn::parse::{Parse, ParseStream, Parser};
use syn::punctuated::Punctuated;
use syn::spanned::Spanned;
use syn::{Attribute, Ident, Meta, Token, token};

/// The arguments of one `#[cover(...)]`.
#[derive(Clone)]
pub struct Args {
    /// The arguments, in source order.
    pub items: Punctuated<Arg, Token![,]>,
    /// Where errors about the attribute as a whole point.
    pub span: Span,
}

/// One argument.
#[derive(Clone)]
pub struct Arg {
    /// The key (keywords allowed, so `type = 1` reads as an unknown key).
    pub key: Ident,
    /// What follows the key.
    pub value: ArgValue,
}

/// What follows a key.
#[derive(Clone)]
pub enum ArgValue {
    /// Nothing: `key`.
    Flag,
    /// `key = EXPR`.
    Assign {
        /// The `=`.
        eq: Token![=],
        /// The value.
        expr: syn::Expr,
    },
    /// `key(…)`: the parenthesised tokens, with their parse as one expression (kept as a
    /// result: only keys that take an expression report a failed parse).
    Call {
        /// The parentheses.
        paren: token::Paren,
        /// The tokens inside.
        tokens: TokenStream,
        /// Those tokens parsed as one expression.
        expr: Result<syn::Expr, syn::Error>,
    },
}

impl Parse for Arg {
    fn parse(input: ParseStream) -> syn::Result<Self> {
        let key = Ident::parse_any(input)?;
        let value = if input.peek(Token![=]) {
            ArgValue::Assign {
                eq: input.parse()?,
                expr: input.parse()?,
            }
        } else if input.peek(token::Paren) {
            let content;
            let paren = syn::parenthesized!(content in input);
            let tokens: TokenStream = content.parse()?;
            let expr = parse_to_end(
                |input: ParseStream| {
                    let expr: syn::Expr = input.parse()?;
                    if !input.is_empty() {
                        return Err(input.error("unexpected token"));
                    }
                    Ok(expr)
                },
                tokens.clone(),
                paren.span.close(),
            );
            ArgValue::Call { paren, tokens, expr }
        } else {
            ArgValue::Flag
        };
        Ok(Arg { key, value })
    }
}

/// Parses `tokens` to their end with `parser`, as if they sat in parentheses whose
/// closing one is at `end`: a plain `parse2` blames an input that stops too early
/// (`exclude(a ==)`) on the call site, which is the whole attribute in the macro and
/// line 1 in the plugin, where the user needs the place it stopped.
pub fn parse_to_end<T>(
    parser: impl FnOnce(ParseStream) -> syn::Result<T>,
    tokens: TokenStream,
    end: Span,
) -> syn::Result<T> {
    let mut group = Group::new(Delimiter::Parenthesis, tokens);
    group.set_span(end);
    (|input: ParseStream| {
        let content;
        syn::parenthesized!(content in input);
        parser(&content)
    })
    .parse2(TokenTree::Group(group).into())
}

/// The span of the last token of `tokens` (where an input that stops too early
/// stopped), or `otherwise` when there is none.
pub fn last_span(tokens: &TokenStream, otherwise: Span) -> Span {
    tokens.clone().into_iter().last().map_or(otherwise, |t| t.span())
}

impl Args {
    /// Parses the arguments an attribute macro receives; `span` locates errors about
    /// the attribute as a whole.
    pub fn parse_tokens(tokens: TokenStream, span: Span) -> syn::Result<Args> {
        crate::nesting::check(
            &tokens,
            &format!("`#[{}(…)]`", crate::keywords::COVER),
            "write each condition as an `exclude(…)` of its own, without redundant parentheses",
            crate::nesting::Scope::Expressions,
        )?;
        let end = last_span(&tokens, span);
        let items =
            parse_to_end(Punctuated::<Arg, Token![,]>::parse_terminated, tokens, end).map_err(|e| {
                crate::diag::error_at_span(
                    e.span(),
                    format!("cannot read `#[{}(…)]`: {e}", crate::keywords::COVER),
                    "write `key = value` or `exclude(condition)`, separated by commas",
                )
            })?;
        Ok(Args { items, span })
    }

    /// Parses the arguments of an attribute found in a source file (`#[cover]` has none).
    pub fn from_attribute(attr: &Attribute) -> syn::Result<Args> {
        let span = attr.span();
        match &attr.meta {
            Meta::Path(_) => Ok(Args {
                items: Punctuated::new(),
                span,
            }),
            Meta::List(list) => Args::parse_tokens(list.tokens.clone(), span),
            Meta::NameValue(nv) => Err(crate::diag::error_at(
                nv,
                format!(
                    "`#[{} = …]` is not the attribute's syntax",
                    crate::keywords::COVER
                ),
                format!(
                    "write `#[{}]` or `#[{}(key = value, …)]`",
                    crate::keywords::COVER,
                    crate::keywords::COVER
                ),
            )),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(s: &str) -> syn::Result<Args> {
        Args::parse_tokens(s.parse().expect("valid token text"), Span::call_site())
    }

    #[test]
    fn the_three_forms() {
        let a = parse("strength = 2, exclude(a == 1 && b != 2), seed, type = 1,").unwrap();
        let keys: Vec<String> = a.items.iter().map(|i| i.key.to_string()).collect();
        assert_eq!(keys, ["strength", "exclude", "seed", "type"]);
        assert!(matches!(a.items[0].value, ArgValue::Assign { .. }));
        assert!(matches!(
            &a.items[1].value,
            ArgValue::Call {
                expr: Ok(syn::Expr::Binary(_)),
                ..
            }
        ));
        assert!(matches!(a.items[2].value, ArgValue::Flag));
        assert!(parse("").unwrap().items.is_empty());
    }

    #[test]
    fn a_call_that_is_no_expression_is_kept_for_later() {
        let a = parse("foo(1, 2)").unwrap();
        assert!(matches!(&a.items[0].value, ArgValue::Call { expr: Err(_), .. }));
    }

    #[test]
    fn syntax_errors_are_in_house_style() {
        let e = parse("strength = , lambda = 2").err().unwrap().to_string();
        assert!(
            e.starts_with("cannot read `#[cover(…)]`: expected an expression\nhint: "),
            "{e}"
        );
        assert!(parse("strength 2").is_err());
    }

    #[test]
    fn input_that_stops_early_is_blamed_where_it_stops() {
        // (attribute, the text at whose start the error must point)
        for (attr, at) in [
            ("#[cover(strength =)]", "=)"),
            ("#[cover(exclude(a ==))]", "))"),
            ("#[cover(require(a =))]", "=)"),
            ("#[cover(focus(a, b, strength =))]", "=)"),
        ] {
            let src = format!("\n\n{attr}\nfn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {{}}");
            let found = crate::find::analyse_source(&src, &crate::Defaults::default()).unwrap();
            let Err(errors) = &found[0].spec else {
                panic!("`{attr}` was accepted");
            };
            for e in errors.clone() {
                let start = e.span().start();
                assert_eq!(
                    (start.line, start.column),
                    (3, attr.find(at).unwrap()),
                    "{attr}: {e}"
                );
            }
        }
    }

    #[test]
    fn from_a_source_attribute() {
        let f: syn::ItemFn = syn::parse_str("#[cover] #[heddle_test::cover(lambda = 2)] fn f() {}").unwrap();
        assert!(Args::from_attribute(&f.attrs[0]).unwrap().items.is_empty());
        assert_eq!(Args::from_attribute(&f.attrs[1]).unwrap().items.len(), 1);
        let f: syn::ItemFn = syn::parse_str("#[cover = 1] fn f() {}").unwrap();
        assert!(Args::from_attribute(&f.attrs[0]).is_err());
    }
}
