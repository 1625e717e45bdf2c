//! The `#[cover]` attribute of heddle. Use it through the `heddle` crate
//! (`use heddle::cover;`), which also carries the runtime the expansion calls.
//!
//! This crate is only the compiler glue: it gathers what the expansion depends on — the
//! crate root, the test file's path, the crate's `Cargo.toml` defaults and its pins file
//! — and hands it with the tokens to [`heddle_syntax::expand()`], where parsing,
//! validation and code generation live (shared with the plugin). It never writes files.
//!
//! Creating the pins file for the first time is not noticed by tests already built
//! without it: touch the test file (the plugin does) to make the build pick it up; later
//! edits are tracked, since the expansion includes the file with `include_bytes!`.

#![warn(missing_docs)]

use std::path::PathBuf;

use proc_macro::TokenStream;

/// Turns a test function whose parameters list their levels into one test per row of a
/// covering array.
///
/// ```ignore
/// #[cover(strength = 2, lambda = 2, seed = 11, exclude(codec == Codec::Delta && batch == 1))]
/// fn roundtrip(
///     #[levels(1, 8, 64)] batch: usize,
///     #[levels(Codec::Plain, Codec::Rle, Codec::Delta)] codec: Codec,
///     #[levels(true, false)] checksum: bool,
/// ) {
///     // ordinary test body
/// }
/// ```
///
/// Keys: `strength` (default 2, or `[package.metadata.heddle]`), `lambda` (default 1),
/// `seed` (default: from the function's name), `exclude(EXPR)` (repeatable). The
/// function stays; a module of the same name holds `row_00`, `row_01`, ….
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
    let ctx = heddle_syntax::Context::load(root.as_deref(), rel);
    heddle_syntax::expand(attr.into(), item.into(), &ctx).into()
}
