//! The owned syntax tree of the attribute's arguments, `strength = 2, exclude(...)`.
//!
//! The compiler hands an attribute macro its arguments as a bare token stream (and the
//! plugin finds them inside an `Attribute`); this is their first, purely syntactic parse.
//! Each argument is `key`, `key = EXPR` or `key(EXPR)`; what the keys mean is decided
//! later ([`crate::ast`], [`crate::validate`]), so an unknown key is reported as such
//! rather than as a syntax error.

use proc_macro2::{Span, TokenStream};
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
            let expr = syn::parse2::<syn::Expr>(tokens.clone());
            ArgValue::Call { paren, tokens, expr }
        } else {
            ArgValue::Flag
        };
        Ok(Arg { key, value })
    }
}

impl Args {
    /// Parses the arguments an attribute macro receives; `span` locates errors about
    /// the attribute as a whole.
    pub fn parse_tokens(tokens: TokenStream, span: Span) -> syn::Result<Args> {
        let items = Punctuated::<Arg, Token![,]>::parse_terminated
            .parse2(tokens)
            .map_err(|e| {
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
