//! The annotated function as heddle sees it, borrowing from the `syn` trees it came from.
//!
//! Building it never fails: whatever is malformed (an unknown key, a parameter without
//! levels, a level list that does not parse) is recorded as found, and
//! [`mod@crate::validate`] reports all of it at once. Only the level lists are parsed here
//! (they are attribute tokens), so they are owned.

use proc_macro2::Span;
use syn::punctuated::Punctuated;
use syn::{Attribute, Expr, FnArg, Ident, ItemFn, Pat, Receiver, Token, Type};

use crate::args::{Arg, Args};
use crate::keywords as kw;

/// An annotated function: the attribute's arguments and the function, classified.
pub struct CoverFn<'a> {
    /// The function as written (with its `#[levels]` and other attributes).
    pub item: &'a ItemFn,
    /// Where errors about the attribute as a whole point.
    pub span: Span,
    /// The attribute's arguments, in source order.
    pub keys: Vec<Key<'a>>,
    /// Every parameter, in order.
    pub params: Vec<Param<'a>>,
    /// The function's own attributes, sorted by what the expansion does with them.
    pub attrs: FnAttrs<'a>,
}

/// One argument of the attribute with the meaning of its key.
pub struct Key<'a> {
    /// The argument.
    pub arg: &'a Arg,
    /// What its key means.
    pub kind: KeyKind,
}

/// What a key of `#[cover(...)]` means.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum KeyKind {
    /// `strength = N`.
    Strength,
    /// `lambda = N`.
    Lambda,
    /// `seed = N`.
    Seed,
    /// `exclude(EXPR)`.
    Exclude,
    /// `require(name = level, …)`.
    Require,
    /// `focus(name, …, strength = N, lambda = N)`.
    Focus,
    /// `budget(N)` or `budget(P%)`.
    Budget,
    /// Anything else.
    Unknown,
}

impl KeyKind {
    /// The meaning of a key.
    pub fn of(key: &Ident) -> KeyKind {
        match key.to_string().as_str() {
            kw::STRENGTH => KeyKind::Strength,
            kw::LAMBDA => KeyKind::Lambda,
            kw::SEED => KeyKind::Seed,
            kw::EXCLUDE => KeyKind::Exclude,
            kw::REQUIRE => KeyKind::Require,
            kw::FOCUS => KeyKind::Focus,
            kw::BUDGET => KeyKind::Budget,
            _ => KeyKind::Unknown,
        }
    }

    /// Whether the key may be given more than once.
    pub fn repeatable(self) -> bool {
        matches!(self, KeyKind::Exclude | KeyKind::Require | KeyKind::Focus)
    }
}

/// One parameter of the function.
pub struct Param<'a> {
    /// The parameter as written.
    pub arg: &'a FnArg,
    /// Its shape.
    pub kind: ParamKind<'a>,
    /// Every `#[levels(...)]` on it (more than one is an error).
    pub levels: Vec<LevelsAttr<'a>>,
}

/// The shape of a parameter.
pub enum ParamKind<'a> {
    /// `name: Type` (possibly `mut name`).
    Named {
        /// The name.
        ident: &'a Ident,
        /// The type.
        ty: &'a Type,
    },
    /// Any other pattern, `(a, b): (u8, u8)` or `_: u8`.
    Pattern {
        /// The pattern.
        pat: &'a Pat,
    },
    /// `self`, `&self`, `&mut self`, `self: Box<Self>`.
    Receiver(&'a Receiver),
}

/// One `#[levels(...)]` and its parsed list.
pub struct LevelsAttr<'a> {
    /// The attribute.
    pub attr: &'a Attribute,
    /// The level expressions, or why they do not parse.
    pub levels: Result<Punctuated<Expr, Token![,]>, syn::Error>,
}

/// The function's attributes, by what the expansion does with them.
#[derive(Default)]
pub struct FnAttrs<'a> {
    /// Stay on the function: doc comments, lints, `cfg`, anything unknown.
    pub kept: Vec<&'a Attribute>,
    /// `cfg` attributes (also in `kept`), copied to the generated module.
    pub cfgs: Vec<&'a Attribute>,
    /// `#[ignore]` and `#[should_panic]`: moved to every row.
    pub rows: Vec<&'a Attribute>,
    /// Another crate's test attribute (`#[tokio::test]`): replaces `#[test]` on every row.
    pub runtime: Vec<&'a Attribute>,
    /// libtest's own `#[test]`, which does not belong on the function.
    pub test: Vec<&'a Attribute>,
    /// Further `#[cover]` attributes.
    pub covers: Vec<&'a Attribute>,
}

impl FnAttrs<'_> {
    /// Whether the rows carry `#[should_panic]`.
    pub fn should_panic(&self) -> bool {
        self.rows.iter().any(|a| a.path().is_ident(kw::SHOULD_PANIC))
    }

    /// The text of `#[should_panic(expected = "…")]`, which the runtime checks the panic
    /// message against as libtest does (a substring match).
    pub fn should_panic_expected(&self) -> Option<String> {
        let attr = self.rows.iter().find(|a| a.path().is_ident(kw::SHOULD_PANIC))?;
        let nv: syn::MetaNameValue = attr.parse_args().ok()?;
        if !nv.path.is_ident("expected") {
            return None;
        }
        match nv.value {
            syn::Expr::Lit(syn::ExprLit {
                lit: syn::Lit::Str(s),
                ..
            }) => Some(s.value()),
            _ => None,
        }
    }
}

/// Whether a path names the attribute: `cover`, `heddle_test::cover`, `::heddle_test::cover` or
/// `heddle_macros::cover`.
pub fn is_cover_path(path: &syn::Path) -> bool {
    let segs: Vec<String> = path.segments.iter().map(|s| s.ident.to_string()).collect();
    match segs.as_slice() {
        [one] => path.leading_colon.is_none() && one == kw::COVER,
        [krate, name] => (krate == kw::CRATE || krate == kw::MACRO_CRATE) && name == kw::COVER,
        _ => false,
    }
}

/// Whether an attribute is another crate's test attribute: a path of two or more
/// segments ending in `test` (`#[tokio::test]`, `#[async_std::test]`).
pub fn is_runtime_test(attr: &Attribute) -> bool {
    let p = attr.path();
    p.segments.len() >= 2 && p.segments.last().is_some_and(|s| s.ident == kw::TEST)
}

impl<'a> CoverFn<'a> {
    /// Classifies `item` under the attribute whose arguments are `args`. `own` is that
    /// attribute when it is still among `item`'s attributes (a source file read by the
    /// plugin); an attribute macro's item no longer carries it.
    pub fn new(args: &'a Args, item: &'a ItemFn, own: Option<&'a Attribute>) -> CoverFn<'a> {
        let keys = args
            .items
            .iter()
            .map(|arg| Key {
                arg,
                kind: KeyKind::of(&arg.key),
            })
            .collect();
        let mut attrs = FnAttrs::default();
        for a in &item.attrs {
            if own.is_some_and(|o| std::ptr::eq(o, a)) {
                continue;
            }
            let p = a.path();
            if is_cover_path(p) {
                attrs.covers.push(a);
            } else if p.is_ident(kw::IGNORE) || p.is_ident(kw::SHOULD_PANIC) {
                attrs.rows.push(a);
            } else if p.is_ident(kw::TEST) {
                attrs.test.push(a);
            } else if is_runtime_test(a) {
                attrs.runtime.push(a);
            } else {
                if p.is_ident(kw::CFG) {
                    attrs.cfgs.push(a);
                }
                attrs.kept.push(a);
            }
        }
        let params = item.sig.inputs.iter().map(Param::new).collect();
        CoverFn {
            item,
            span: args.span,
            keys,
            params,
            attrs,
        }
    }

    /// The function's name.
    pub fn name(&self) -> &'a Ident {
        &self.item.sig.ident
    }
}

impl<'a> Param<'a> {
    fn new(arg: &'a FnArg) -> Param<'a> {
        match arg {
            FnArg::Receiver(r) => Param {
                arg,
                kind: ParamKind::Receiver(r),
                levels: levels_of(&r.attrs),
            },
            FnArg::Typed(pt) => {
                let kind = match &*pt.pat {
                    Pat::Ident(pi) if pi.by_ref.is_none() && pi.subpat.is_none() => ParamKind::Named {
                        ident: &pi.ident,
                        ty: &pt.ty,
                    },
                    pat => ParamKind::Pattern { pat },
                };
                Param {
                    arg,
                    kind,
                    levels: levels_of(&pt.attrs),
                }
            }
        }
    }
}

/// Whether an attribute is `#[levels(...)]`.
pub fn is_levels_attr(attr: &Attribute) -> bool {
    attr.path().is_ident(kw::LEVELS)
}

fn levels_of(attrs: &[Attribute]) -> Vec<LevelsAttr<'_>> {
    attrs
        .iter()
        .filter(|a| is_levels_attr(a))
        .map(|attr| LevelsAttr {
            attr,
            levels: level_list(attr),
        })
        .collect()
}

/// The level expressions of a `#[levels(…)]`, measured before they are parsed.
fn level_list(attr: &Attribute) -> Result<Punctuated<Expr, Token![,]>, syn::Error> {
    if let syn::Meta::List(list) = &attr.meta {
        crate::nesting::check(
            &list.tokens,
            &format!("`#[{}(…)]`", kw::LEVELS),
            "give a deeply nested level a name: a constant or a helper function",
            crate::nesting::Scope::Expressions,
        )?;
    }
    attr.parse_args_with(Punctuated::<Expr, Token![,]>::parse_terminated)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn attributes_are_sorted_by_destination() {
        let f: syn::ItemFn = syn::parse_str(
            "/// doc\n#[ignore] #[cfg(unix)] #[allow(unused)] #[should_panic] #[test] #[tokio::test] \
             #[heddle_test::cover] fn f(#[levels(1, 2)] a: u8, (b, c): (u8, u8), #[levels] d: u8) {}",
        )
        .unwrap();
        let args = Args::parse_tokens(proc_macro2::TokenStream::new(), Span::call_site()).unwrap();
        let c = CoverFn::new(&args, &f, None);
        let paths = |v: &[&Attribute]| -> Vec<String> {
            v.iter()
                .map(|a| quote::ToTokens::to_token_stream(a.path()).to_string())
                .collect()
        };
        assert_eq!(paths(&c.attrs.kept), ["doc", "cfg", "allow"]);
        assert_eq!(paths(&c.attrs.cfgs), ["cfg"]);
        assert_eq!(paths(&c.attrs.rows), ["ignore", "should_panic"]);
        assert_eq!(paths(&c.attrs.test), ["test"]);
        assert_eq!(paths(&c.attrs.runtime), ["tokio :: test"]);
        assert_eq!(paths(&c.attrs.covers), ["heddle_test :: cover"]);
        assert!(c.attrs.should_panic());
        // the plugin passes the attribute it found, which is then not a duplicate
        let own = CoverFn::new(&args, &f, Some(&f.attrs[7]));
        assert!(own.attrs.covers.is_empty());

        assert!(matches!(c.params[0].kind, ParamKind::Named { ident, .. } if ident == "a"));
        assert_eq!(c.params[0].levels[0].levels.as_ref().unwrap().len(), 2);
        assert!(matches!(c.params[1].kind, ParamKind::Pattern { .. }));
        assert!(c.params[1].levels.is_empty());
        assert!(c.params[2].levels[0].levels.is_err());
    }

    #[test]
    fn cover_paths() {
        for (p, yes) in [
            ("cover", true),
            ("heddle_test::cover", true),
            ("heddle_macros::cover", true),
            ("::cover", false),
            ("other::cover", false),
            ("heddle_test::levels", false),
        ] {
            let path: syn::Path = syn::parse_str(p).unwrap();
            assert_eq!(is_cover_path(&path), yes, "{p}");
        }
    }
}
