//! The expansion of `#[cover]`, as a pure function of the attribute's tokens, the item's
//! tokens and a [`Context`] holding everything read from disk.
//!
//! It lives here rather than in the proc-macro crate so that benchmarks and tests can
//! call it (a proc-macro crate can export nothing else). The output touches the runtime
//! only through its `__private` module, reached by the path in [`Context::runtime`] (the
//! user may have renamed the dependency), and uses `::core`/`::std` paths and
//! `__heddle`/`__HEDDLE` names only, so it cannot collide with the user's items.
//!
//! The expansion is the one place that names the row tests: it hands the runtime each
//! row's test function name and the cargo target selector of the file, and the runtime
//! writes them into the records, so messages and reports never rebuild them.
//!
//! Level expressions are written into a child module (named after the function) that
//! starts with `use super::*;`, so names visible where the attribute is written resolve
//! as usual; a path starting with `self::` or `super::` inside a level, however, is
//! read one module deeper than it was written.

use std::path::{Path, PathBuf};

use proc_macro2::{Literal, Span, TokenStream};
use quote::{ToTokens, format_ident, quote, quote_spanned};
use syn::{Attribute, FnArg, Item, ItemFn};

use crate::args::Args;
use crate::ast::{CoverFn, ParamKind, is_cover_path, is_levels_attr, is_runtime_test};
use crate::budget::{BUDGET_VAR, Budget};
use crate::defaults::{Defaults, DefaultsError};
use crate::diag::{self, Diagnostic, Errors};
use crate::keywords as kw;
use crate::nesting;
use crate::paths;
use crate::pins::{PinKey, PinsError, PinsFile};
use crate::rows::{Rows, rows_for};
use crate::validate::{Checked, Returns, validate};

/// Everything the expansion depends on besides the tokens.
#[derive(Clone)]
pub struct Context {
    /// The crate root (`CARGO_MANIFEST_DIR`), absolute, when known.
    pub crate_root: Option<PathBuf>,
    /// The test file relative to the crate root, `/`-separated, when known.
    pub file: Option<String>,
    /// The crate's defaults, or why they could not be read.
    pub defaults: Result<Defaults, DefaultsError>,
    /// The crate's pins file (`None`: there is none), or why it could not be read.
    pub pins: Result<Option<PinsFile>, PinsError>,
    /// Whether the crate root holds a `Cargo.toml` (then it is tracked for rebuilds).
    pub has_manifest: bool,
    /// The path generated code reaches the runtime crate by (`::heddle_test` unless the
    /// dependency was renamed).
    pub runtime: syn::Path,
    /// The package being compiled (`CARGO_PKG_NAME`), when known.
    pub package: Option<String>,
    /// The crate being compiled (`CARGO_CRATE_NAME`: the library or the test, bin,
    /// example or bench target), when known.
    pub crate_name: Option<String>,
    /// The row budget of `HEDDLE_BUDGET` at compile time (`None`: unset), or why its
    /// value is refused.
    pub budget_env: Result<Option<Budget>, Diagnostic>,
}

// by hand: syn's `Path` implements `Debug` only with syn's `extra-traits` feature
impl std::fmt::Debug for Context {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Context")
            .field("crate_root", &self.crate_root)
            .field("file", &self.file)
            .field("defaults", &self.defaults)
            .field("pins", &self.pins)
            .field("has_manifest", &self.has_manifest)
            .field("runtime", &crate::text::canonical(&self.runtime))
            .field("package", &self.package)
            .field("crate_name", &self.crate_name)
            .finish()
    }
}

/// The path of the runtime crate under its own name.
pub fn default_runtime() -> syn::Path {
    let krate = syn::Ident::new(kw::CRATE, Span::call_site());
    syn::parse_quote!(::#krate)
}

impl Context {
    /// A context with no crate: built-in defaults, no pins, no file.
    pub fn detached() -> Context {
        Context {
            crate_root: None,
            file: None,
            defaults: Ok(Defaults::default()),
            pins: Ok(None),
            has_manifest: false,
            runtime: default_runtime(),
            package: None,
            crate_name: None,
            budget_env: Ok(None),
        }
    }

    /// Reads the defaults and the pins file of the crate at `crate_root`.
    pub fn load(crate_root: Option<&Path>, file: Option<String>) -> Context {
        let Some(root) = crate_root else {
            return Context {
                file,
                ..Context::detached()
            };
        };
        Context {
            crate_root: Some(root.to_path_buf()),
            file,
            defaults: Defaults::load(root),
            pins: PinsFile::load(root),
            has_manifest: root.join(crate::defaults::MANIFEST_FILE).is_file(),
            ..Context::detached()
        }
    }

    /// The cargo target selector of the test file (`--test hub`), empty when unknown.
    fn target_selector(&self) -> String {
        let (Some(file), Some(krate)) = (&self.file, &self.crate_name) else {
            return String::new();
        };
        let package = self.package.as_deref().unwrap_or(krate);
        paths::target_selector(file, package, krate).unwrap_or_default()
    }
}

/// Expands `#[cover(attr)] item`. Never fails: problems become compile errors placed
/// at their tokens, followed by the plain function so that no follow-on errors appear.
pub fn expand(attr: TokenStream, item: TokenStream, ctx: &Context) -> TokenStream {
    // `syn` would recurse into a deep body until the compiler's stack ends; such an item
    // cannot be read, so it is handed back unchanged after the error
    if let Err(e) = nesting::check(&item, "the function", FUNCTION_TOO_DEEP, nesting::Scope::Item) {
        return with_errors(e, item);
    }
    let parsed: Item = match syn::parse2(item.clone()) {
        Ok(i) => i,
        Err(e) => return with_errors(e, item),
    };
    let f = match parsed {
        Item::Fn(f) => f,
        other => {
            let (what, tokens) = item_kind(&other);
            let e = diag::error_at(
                tokens,
                format!("`#[{}]` applies to functions, not to {what}", kw::COVER),
                format!(
                    "put it on a test function whose parameters carry `#[{}(…)]`",
                    kw::LEVELS
                ),
            );
            return with_errors(e, item);
        }
    };
    let args = match Args::parse_tokens(attr, Span::call_site()) {
        Ok(a) => a,
        Err(e) => return with_errors(e, plain_fn(&f).into_token_stream()),
    };
    match expand_fn(&args, &f, ctx) {
        Ok(ts) => ts,
        Err(e) => with_errors(e, plain_fn(&f).into_token_stream()),
    }
}

/// The hint for a function too deep to read, shared with the plugin's reading of files.
pub(crate) const FUNCTION_TOO_DEEP: &str = "move the deeply nested code into a helper function";

fn with_errors(e: syn::Error, fallback: TokenStream) -> TokenStream {
    let mut out = e.to_compile_error();
    out.extend(fallback);
    out
}

fn expand_fn(args: &Args, f: &ItemFn, ctx: &Context) -> Result<TokenStream, syn::Error> {
    let mut errs = Errors::default();
    let defaults = match &ctx.defaults {
        Ok(d) => *d,
        Err(e) => {
            errs.push(syn::Error::new(args.span, e.0.for_compiler()));
            Defaults::default()
        }
    };
    if let Err(d) = &ctx.budget_env {
        errs.push(syn::Error::new(args.span, d.for_compiler()));
    }
    let checked = match validate(CoverFn::new(args, f, None), &defaults) {
        Ok(c) => c,
        Err(e) => {
            errs.push(e);
            return Err(errs
                .into_error()
                .unwrap_or_else(|| syn::Error::new(args.span, "invalid")));
        }
    };
    let pins = match &ctx.pins {
        Ok(p) => p.as_ref(),
        Err(e) => {
            errs.push(syn::Error::new(args.span, e.diagnostic.for_compiler()));
            None
        }
    };
    let key = ctx
        .file
        .as_ref()
        .map(|file| PinKey::new(file.clone(), checked.spec.function.clone()));
    let rows = match rows_for(&checked.spec, key.as_ref(), pins) {
        Ok(r) => Some(r),
        Err(e) => {
            errs.push(syn::Error::new(args.span, e.to_string()));
            None
        }
    };
    match (errs.into_error(), rows) {
        (None, Some(rows)) => Ok(generate_code(&checked, &rows, ctx)),
        (Some(e), _) => Err(e),
        (None, None) => Err(diag::error_at_span(args.span, "no rows", "see the other errors")),
    }
}

/// The function as the user wrote it, minus what belongs to heddle or to the rows:
/// `#[levels]` on parameters, `#[cover]`, `#[test]`, `#[ignore]`, `#[should_panic]` and
/// a runtime's test attribute. One parameter per knob is the point of `#[cover]`, so
/// clippy's `too_many_arguments` is allowed on it.
pub fn plain_fn(f: &ItemFn) -> ItemFn {
    let mut f = f.clone();
    f.attrs.retain(|a| !moved_off_the_fn(a));
    f.attrs
        .push(syn::parse_quote!(#[allow(clippy::too_many_arguments)]));
    for input in &mut f.sig.inputs {
        let attrs = match input {
            FnArg::Receiver(r) => &mut r.attrs,
            FnArg::Typed(t) => &mut t.attrs,
        };
        attrs.retain(|a| !is_levels_attr(a));
    }
    f
}

fn moved_off_the_fn(a: &Attribute) -> bool {
    let p = a.path();
    is_cover_path(p)
        || p.is_ident(kw::TEST)
        || p.is_ident(kw::IGNORE)
        || p.is_ident(kw::SHOULD_PANIC)
        || is_runtime_test(a)
}

fn item_kind(item: &Item) -> (&'static str, TokenStream) {
    match item {
        Item::Struct(s) => ("a struct", s.struct_token.into_token_stream()),
        Item::Enum(e) => ("an enum", e.enum_token.into_token_stream()),
        Item::Mod(m) => ("a module", m.mod_token.into_token_stream()),
        Item::Impl(i) => ("an impl block", i.impl_token.into_token_stream()),
        Item::Trait(t) => ("a trait", t.trait_token.into_token_stream()),
        Item::Const(c) => ("a constant", c.const_token.into_token_stream()),
        Item::Static(s) => ("a static", s.static_token.into_token_stream()),
        Item::Type(t) => ("a type alias", t.type_token.into_token_stream()),
        Item::Use(u) => ("a `use`", u.use_token.into_token_stream()),
        other => ("this item", other.into_token_stream()),
    }
}

/// The name of row `i` of `n`: zero-padded to the width of the largest index, at least
/// two digits, so the names sort in row order.
pub fn row_name(i: usize, n: usize) -> String {
    let width = n.saturating_sub(1).to_string().len().max(2);
    format!("row_{i:0width$}")
}

/// The name of follow-up row `i` of `n`: after every design row in name order (a
/// letter sorts after digits), numbered like the design's rows.
pub fn followup_name(i: usize, n: usize) -> String {
    let width = n.saturating_sub(1).to_string().len().max(2);
    format!("row_followup_{i:0width$}")
}

fn generate_code(checked: &Checked<'_>, rows: &Rows, ctx: &Context) -> TokenStream {
    let cover = &checked.cover;
    let cs = &checked.spec;
    let spec = &cs.spec;
    let name = cover.name();
    let plain = plain_fn(cover.item);
    let cfgs = &cover.attrs.cfgs;

    let rt = &ctx.runtime;
    let factors = spec.factors.iter().map(|f| {
        let n = &f.name;
        let labels = &f.levels;
        quote!(#rt::__private::Factor { name: #n, labels: &[#(#labels),*] })
    });
    // the design's rows, then the follow-up rows (`cargo heddle probe`)
    let all_rows: Vec<&Vec<u8>> = rows.rows.iter().chain(&rows.followups).collect();
    let row_lits = all_rows.iter().map(|r| {
        let cells = r.iter().map(|&l| Literal::u8_unsuffixed(l));
        quote!(&[#(#cells),*])
    });
    let file = ctx.file.as_deref().unwrap_or("");
    let target = ctx.target_selector();
    let function = &cs.function;
    let strength = Literal::u32_unsuffixed(spec.strength as u32);
    let lambda = Literal::u32_unsuffixed(spec.lambda);
    let seed = Literal::u64_unsuffixed(spec.seed);
    // formulas over level indices: what the records store and the report reads back
    // without a Rust parser
    let excludes: Vec<String> = spec.excludes.iter().map(|e| e.to_formula()).collect();
    let focus = spec.focus.iter().map(|f| {
        let factors = f.factors.iter().map(|&c| Literal::u32_unsuffixed(c as u32));
        let strength = Literal::u32_unsuffixed(f.strength as u32);
        let lambda = Literal::u32_unsuffixed(f.lambda);
        quote!(#rt::__private::FocusSet {
            factors: &[#(#factors),*],
            strength: #strength,
            lambda: #lambda,
        })
    });
    let fingerprint = cs.fingerprint.to_string();
    let pinned = rows.pinned;
    let should_panic = checked.shape.should_panic;
    let expected = match &checked.shape.should_panic_expected {
        Some(text) => quote!(::core::option::Option::Some(#text)),
        None => quote!(::core::option::Option::None),
    };

    let mut tracked = TokenStream::new();
    if let Some(root) = &ctx.crate_root {
        if let Ok(Some(_)) = &ctx.pins {
            let p = PinsFile::path(root).to_string_lossy().into_owned();
            tracked.extend(quote!(
                const _: &[u8] = ::core::include_bytes!(#p);
            ));
        }
        if ctx.has_manifest {
            let p = root
                .join(crate::defaults::MANIFEST_FILE)
                .to_string_lossy()
                .into_owned();
            tracked.extend(quote!(
                const _: &[u8] = ::core::include_bytes!(#p);
            ));
        }
    }

    // level expressions per parameter, in `#[levels]` order
    let levels: Vec<Vec<&syn::Expr>> = cover
        .params
        .iter()
        .filter(|p| matches!(p.kind, ParamKind::Named { .. }))
        .filter_map(|p| p.levels.first().and_then(|l| l.levels.as_ref().ok()))
        .map(|list| list.iter().collect())
        .collect();
    let test_attr = match cover.attrs.runtime.first() {
        Some(rt) => rt.to_token_stream(),
        None => quote!(#[::core::prelude::v1::test]),
    };
    let row_attrs = &cover.attrs.rows;
    let n = rows.rows.len();
    let extra = rows.followups.len();
    let row_names: Vec<String> = (0..n)
        .map(|i| row_name(i, n))
        .chain((0..extra).map(|i| followup_name(i, extra)))
        .collect();
    let followups = Literal::u32_unsuffixed(extra as u32);
    // the rows past the budget are ignored, so libtest counts them as such
    let env_budget = ctx.budget_env.as_ref().ok().copied().flatten();
    let budget = Budget::effective(env_budget, cs.budget);
    let runs = budget.map_or(n, |b| b.rows(n));
    let budget_field = if runs < n {
        let runs = Literal::u32_unsuffixed(runs as u32);
        quote!(::core::option::Option::Some(#runs))
    } else {
        quote!(::core::option::Option::None)
    };
    let past_budget = match budget {
        Some(b) if runs < n && !cover.attrs.rows.iter().any(|a| a.path().is_ident(kw::IGNORE)) => {
            let source = match env_budget {
                Some(_) => format!("`{BUDGET_VAR}={b}`"),
                None => format!("`{}({b})`", kw::BUDGET),
            };
            let reason = format!(
                "heddle: past the row budget, {source} runs {runs} of {n} rows; `{BUDGET_VAR}=all` runs every row"
            );
            quote!(#[ignore = #reason])
        }
        _ => quote!(),
    };
    let row_fns = all_rows.iter().enumerate().map(|(i, row)| {
        let fn_name = format_ident!("{}", row_names[i]);
        let index = Literal::usize_unsuffixed(i);
        // every index was checked against the level counts (pin check or the engine's
        // verification), so the lookups cannot fail
        let args = row.iter().enumerate().map(|(c, &l)| levels[c][usize::from(l)]);
        let call = quote!(super::#name(#(#args),*));
        let (asyncness, output, body) = match (checked.shape.is_async, checked.shape.returns) {
            (false, Returns::Unit) => (
                quote!(),
                quote!(),
                quote!(#rt::__private::run(&__HEDDLE_SUITE, #index, || #call)),
            ),
            (false, Returns::Result { error }) => (
                quote!(),
                match error {
                    Some(e) => quote!(-> ::core::result::Result<(), #rt::__private::RowError<#e>>),
                    None => quote!(-> impl ::std::process::Termination),
                },
                quote!(#rt::__private::run_result(&__HEDDLE_SUITE, #index, || #call)),
            ),
            (true, Returns::Unit) => (
                quote!(async),
                quote!(),
                quote!(#rt::__private::run_async(&__HEDDLE_SUITE, #index, async move { #call.await }).await),
            ),
            (true, Returns::Result { error }) => (
                quote!(async),
                // validation requires the error type to be written out for async fns
                error
                    .map(|e| quote!(-> ::core::result::Result<(), #rt::__private::RowError<#e>>))
                    .unwrap_or_default(),
                quote!(
                    #rt::__private::run_async_result(&__HEDDLE_SUITE, #index, async move { #call.await })
                        .await
                ),
            ),
        };
        // follow-up rows always run: they were asked for
        let past = if i >= runs && i < n {
            past_budget.clone()
        } else {
            quote!()
        };
        quote! {
            #test_attr
            #(#row_attrs)*
            #past
            #asyncness fn #fn_name() #output {
                #body
            }
        }
    });

    // a proc macro has no warnings of its own on stable Rust: the use of a deprecated
    // item, at the function's name, carries the advice into the build's warnings
    let advice = if rows.pin_advised {
        let note = diag::message(
            format!("the rows of `{function}` are costly to generate on every build ({n} rows)"),
            format!(
                "run `{}` once to keep them in the pins file",
                crate::pins::PIN_COMMAND
            ),
        );
        let at = cover.item.sig.ident.span();
        quote_spanned! {at=>
            #[deprecated(note = #note)]
            const __HEDDLE_PIN_ADVISED: () = ();
            const _: () = __HEDDLE_PIN_ADVISED;
        }
    } else {
        quote!()
    };

    quote! {
        #plain

        #(#cfgs)*
        #[cfg(test)]
        #[doc(hidden)]
        mod #name {
            #[allow(unused_imports)]
            use super::*;

            #tracked
            #advice
            // read here so that the compiler records it and cargo rebuilds the rows when
            // it changes: the expansion read it to decide which rows are past the budget
            const _: ::core::option::Option<&str> = ::core::option_env!(#BUDGET_VAR);

            static __HEDDLE_SUITE: #rt::__private::Suite = #rt::__private::Suite {
                krate: ::core::env!("CARGO_PKG_NAME"),
                file: #file,
                target: #target,
                function: #function,
                module: ::core::module_path!(),
                factors: &[#(#factors),*],
                strength: #strength,
                lambda: #lambda,
                seed: #seed,
                excludes: &[#(#excludes),*],
                rows: &[#(#row_lits),*],
                row_names: &[#(#row_names),*],
                fingerprint: #fingerprint,
                pinned: #pinned,
                should_panic: #should_panic,
                should_panic_expected: #expected,
                budget: #budget_field,
                followups: #followups,
                focus: &[#(#focus),*],
            };

            #(#row_fns)*
        }
    }
}
