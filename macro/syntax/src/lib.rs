//! The `#[cover]` attribute of heddle, minus the proc-macro glue: parsing, validation,
//! conversion to an engine spec, fingerprints, crate defaults, the pins file and the
//! expansion itself.
//!
//! It is a plain library so that the plugin reads test sources with the very code the
//! macro uses: what the plugin pins is exactly what the build will look up.
//!
//! The passes, in order:
//! 1. [`args`] — the attribute's argument tokens, parsed (owned `syn` trees);
//! 2. [`ast`] — the function classified, borrowing from those trees and the `ItemFn`;
//! 3. [`mod@validate`] — every check, errors accumulated and located, giving a
//!    [`CoverSpec`]: the engine's [`heddle_generator::Spec`] (labels are the canonical
//!    text of each level, see [`text`]; excludes converted by [`exclude`], required rows
//!    by [`require`], focus sets by [`mod@focus`], names and levels looked up by [`resolve`]),
//!    the seed
//!    ([`hash::default_seed`] unless given) and the [`Fingerprint`];
//! 4. [`rows`] — the rows, from the [`pins`] file or the engine;
//! 5. [`mod@expand`] — the generated code.
//!
//! Beside the passes: [`keywords`] (every word of the syntax), [`diag`] (compile errors
//! from diagnostics), [`nesting`] (token depth, measured before `syn` recurses into it),
//! [`defaults`] (`[package.metadata.heddle]`), [`paths`] (a test file named as pins name
//! it, and its cargo target), [`hash`] (the default seed), [`budget`] (the row budget of
//! the attribute and of `HEDDLE_BUDGET`).
//!
//! For the plugin: [`find::analyse_source`] finds and analyses every annotated function
//! of a file, [`Defaults::load`] reads the crate's defaults, [`PinsFile`] reads and
//! writes pins, [`paths::relative_to_root`] names a test file as pins do.

#![warn(missing_docs)]

pub mod args;
pub mod ast;
pub mod budget;
pub mod defaults;
pub mod diag;
pub mod exclude;
pub mod expand;
pub mod find;
pub mod fingerprint;
pub mod focus;
pub mod hash;
pub mod keywords;
pub mod nesting;
pub mod paths;
pub mod pins;
pub mod require;
pub mod resolve;
pub mod rows;
pub mod text;
pub mod validate;

pub use defaults::{Defaults, DefaultsError};
pub use expand::{Context, expand};
pub use fingerprint::{Fingerprint, fingerprint};
pub use pins::{FollowUp, Origin, Pin, PinKey, PinsError, PinsFile};
pub use rows::{Rows, RowsError, rows_for};
pub use validate::{Checked, CoverSpec, validate};
