//! How the annotated function is called: `async` or not, what it returns, whether it
//! expects to panic. This decides the shape of each row test.

use syn::{GenericArgument, PathArguments, ReturnType, Type};

use crate::ast::CoverFn;
use crate::diag::Errors;
use crate::keywords as kw;
use crate::text::canonical;

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
#[derive(Clone, Copy)]
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

// by hand: syn's syntax trees implement `Debug` only with its `extra-traits` feature,
// which would double what syn costs to build for one message
impl std::fmt::Debug for Returns<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Returns::Unit => f.write_str("Unit"),
            Returns::Result { error } => f
                .debug_struct("Result")
                .field("error", &error.map(crate::text::canonical))
                .finish(),
        }
    }
}

pub(super) fn check_signature<'a>(cover: &CoverFn<'a>, errs: &mut Errors) -> Shape<'a> {
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
