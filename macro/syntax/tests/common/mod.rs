//! Helpers shared by the integration tests: run the macro's passes on source text.

#![allow(dead_code)]

use heddle_syntax::args::Args;
use heddle_syntax::ast::CoverFn;
use heddle_syntax::{CoverSpec, Defaults, validate};
use proc_macro2::Span;

/// Validates `#[cover(attr)] item` with `defaults`: the spec, or every error message.
pub fn check_with(attr: &str, item: &str, defaults: &Defaults) -> Result<CoverSpec, Vec<String>> {
    let tokens = attr.parse().expect("test attribute is valid token text");
    let args = Args::parse_tokens(tokens, Span::call_site()).map_err(|e| messages(&e))?;
    let f: syn::ItemFn = syn::parse_str(item).expect("test item is a function");
    validate(CoverFn::new(&args, &f, None), defaults)
        .map(|c| c.spec)
        .map_err(|e| messages(&e))
}

/// Validates with no crate defaults.
pub fn check(attr: &str, item: &str) -> Result<CoverSpec, Vec<String>> {
    check_with(attr, item, &Defaults::default())
}

/// The error messages, one per located error.
pub fn messages(e: &syn::Error) -> Vec<String> {
    e.clone().into_iter().map(|e| e.to_string()).collect()
}

/// Asserts the single error starts with `prefix` and carries a hint.
pub fn assert_one_error(result: Result<CoverSpec, Vec<String>>, prefix: &str) {
    let errs = result.expect_err("the input is invalid");
    assert_eq!(errs.len(), 1, "{errs:#?}");
    assert!(errs[0].starts_with(prefix), "expected `{prefix}…`, got {errs:#?}");
    assert!(errs[0].contains("\nhint: "), "{errs:#?}");
}
