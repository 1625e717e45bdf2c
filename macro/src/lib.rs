//! The `#[cover]` attribute of heddle. Use it through the `heddle-test` crate
//! (`use heddle_test::cover;`), which also carries the runtime the expansion calls.
//!
//! This crate is only the compiler glue: it gathers what the expansion depends on — the
//! crate root, the test file's path, the crate's `Cargo.toml` defaults, its pins file and
//! the row budget in `HEDDLE_BUDGET` — and hands it with the tokens to
//! [`heddle_syntax::expand()`], where parsing, validation and code generation live
//! (shared with the plugin). It never writes files.
//!
//! Creating the pins file for the first time is not noticed by tests already built
//! without it: touch the test file (the plugin does) to make the build pick it up; later
//! edits are tracked, since the expansion includes the file with `include_bytes!`.

#![warn(missing_docs)]

use std::path::PathBuf;

use proc_macro::TokenStream;

/// Turns a test function whose parameters list their levels into one test per row of a
/// covering array. Documented, with examples, where users meet it: `heddle_test::cover`.
#[proc_macro_attribute]
pub fn cover(attr: TokenStream, item: TokenStream) -> TokenStream {
    let root = std::env::var_os("CARGO_MANIFEST_DIR")
        .filter(|v| !v.is_empty())
        .map(PathBuf::from);
    let file = proc_macro::Span::call_site().local_file();
    let cwd = std::env::current_dir().ok();
    let rel = match (&root, &file) {
        (Some(root), Some(file)) => Some(heddle_syntax::paths::relative_to_root(root, file, cwd.as_deref())),
        _ => None,
    };
    let mut ctx = heddle_syntax::Context::load(root.as_deref(), rel);
    if let Some(path) = runtime_path() {
        ctx.runtime = path;
    }
    ctx.package = env_var("CARGO_PKG_NAME");
    ctx.crate_name = env_var("CARGO_CRATE_NAME");
    // the expansion names the variable in an `option_env!`, so cargo rebuilds on a change
    ctx.budget_env =
        heddle_syntax::budget::Budget::from_env(std::env::var_os(heddle_syntax::budget::BUDGET_VAR));
    heddle_syntax::expand(attr.into(), item.into(), &ctx).into()
}

fn env_var(name: &str) -> Option<String> {
    std::env::var(name).ok().filter(|v| !v.is_empty())
}

/// The path of the runtime crate as the crate being compiled names it: a renamed
/// dependency (`rt = { package = "heddle-test", … }`) is found through the manifest.
/// `None` keeps the default `::heddle_test` (the runtime itself, whose root declares
/// `extern crate self as heddle_test`, or a manifest that cannot be read: the compiler
/// then names the missing crate).
fn runtime_path() -> Option<syn::Path> {
    use proc_macro_crate::{FoundCrate, crate_name};
    match crate_name(RUNTIME_PACKAGE).ok()? {
        FoundCrate::Itself => None,
        FoundCrate::Name(name) => {
            let ident = syn::Ident::new(&name, proc_macro2::Span::call_site());
            Some(syn::parse_quote!(::#ident))
        }
    }
}

/// The package name of the runtime crate on the registry.
const RUNTIME_PACKAGE: &str = "heddle-test";
