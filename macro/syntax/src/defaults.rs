//! Crate-wide defaults from `[package.metadata.heddle]` of the crate's `Cargo.toml`:
//!
//! ```toml
//! [package.metadata.heddle]
//! strength = 2   # 1 ..= heddle_generator::MAX_STRENGTH
//! lambda = 2     # 1 ..= heddle_generator::MAX_LAMBDA
//! seed = 7       # 0 ..= 2^63 - 1 (TOML integers are signed 64-bit)
//! pinned = true  # the crate pins its rows: `cargo heddle check` fails without a pin
//! ```
//!
//! The attribute's own keys override these. A default strength is capped at a function's
//! number of parameters, like the built-in default (only an explicit `strength = N` in
//! the attribute above that number is an error).

use std::ops::Range;
use std::path::Path;

use heddle_generator::{MAX_LAMBDA, MAX_STRENGTH, check_lambda, check_strength};
use serde::Deserialize;
use toml::Spanned;

use crate::diag::{self, Diagnostic};
use crate::keywords as kw;

/// Strength when neither the attribute nor the crate sets one.
pub const DEFAULT_STRENGTH: usize = 2;
/// λ when neither the attribute nor the crate sets one.
pub const DEFAULT_LAMBDA: u32 = 1;

/// The table of crate-wide defaults: `[package.metadata.heddle]`.
pub const METADATA_TABLE: &str = "heddle";
/// The key by which a crate declares that it pins every annotated function's rows, so a
/// missing pins file or pin fails `cargo heddle check` instead of passing as "generated
/// at build time". Builds do not need it: a function without a pin is generated as ever.
pub const PINNED_KEY: &str = "pinned";
/// Keys the defaults table accepts.
pub const METADATA_KEYS: &[&str] = &[kw::STRENGTH, kw::LAMBDA, kw::SEED, PINNED_KEY];
/// The manifest the defaults live in.
pub const MANIFEST_FILE: &str = "Cargo.toml";

/// Defaults a crate sets for all its annotated functions.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Defaults {
    /// Default strength.
    pub strength: Option<usize>,
    /// Default λ.
    pub lambda: Option<u32>,
    /// Default seed (else each function's is derived from its name).
    pub seed: Option<u64>,
    /// The crate pins its rows (`pinned = true`).
    pub pinned: bool,
}

/// Why the defaults could not be read; the message is in the house style (lower case,
/// hint on its own line) and names the line of `Cargo.toml`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DefaultsError(pub Diagnostic);

impl std::fmt::Display for DefaultsError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0.for_compiler())
    }
}

impl std::error::Error for DefaultsError {}

#[derive(Deserialize)]
struct Manifest {
    package: Option<Package>,
}

#[derive(Deserialize)]
struct Package {
    metadata: Option<Metadata>,
}

#[derive(Deserialize)]
struct Metadata {
    // any value, so that one other than a table is named as such here: cargo itself
    // never looks inside `[package.metadata]`
    heddle: Option<Spanned<toml::Value>>,
}

impl Defaults {
    /// Reads the defaults from the text of a `Cargo.toml`; no table means no defaults.
    pub fn from_manifest(text: &str) -> Result<Defaults, DefaultsError> {
        let manifest: Manifest = toml::from_str(text).map_err(|e| {
            DefaultsError(diag::diagnostic(
                format!(
                    "cannot read `{}`{}: {}",
                    MANIFEST_FILE,
                    at(text, e.span()),
                    e.message()
                ),
                "fix the manifest; cargo reports the same problem",
            ))
        })?;
        let Some(table) = manifest.package.and_then(|p| p.metadata).and_then(|m| m.heddle) else {
            return Ok(Defaults::default());
        };
        let table_at = at(text, Some(table.span()));
        let Some(table) = table.get_ref().as_table() else {
            return Err(DefaultsError(diag::diagnostic(
                format!(
                    "`package.metadata.{}` in `{}`{table_at} is `{}`, not a table",
                    METADATA_TABLE,
                    MANIFEST_FILE,
                    table.get_ref()
                ),
                format!(
                    "write a table: `[package.metadata.{}]` with the keys {} on the lines below it",
                    METADATA_TABLE,
                    diag::list(METADATA_KEYS)
                ),
            )));
        };
        let mut d = Defaults::default();
        for (key, value) in table {
            let found = value.to_string();
            let int = value.as_integer().and_then(|v| u64::try_from(v).ok());
            let bad = |range: &str| {
                DefaultsError(diag::diagnostic(
                    format!(
                        "`{key} = {found}` in `[package.metadata.{}]` of `{}`{table_at} is not {range}",
                        METADATA_TABLE, MANIFEST_FILE
                    ),
                    format!("write e.g. `{key} = 2`"),
                ))
            };
            match key.as_str() {
                kw::STRENGTH => match int.map(check_strength) {
                    Some(Ok(t)) => d.strength = Some(t),
                    _ => return Err(bad(&format!("an integer from 1 to {MAX_STRENGTH}"))),
                },
                kw::LAMBDA => match int.map(check_lambda) {
                    Some(Ok(l)) => d.lambda = Some(l),
                    _ => return Err(bad(&format!("an integer from 1 to {MAX_LAMBDA}"))),
                },
                kw::SEED => match int {
                    Some(v) => d.seed = Some(v),
                    None => return Err(bad("a non-negative integer")),
                },
                PINNED_KEY => match value.as_bool() {
                    Some(b) => d.pinned = b,
                    None => {
                        return Err(DefaultsError(diag::diagnostic(
                            format!(
                                "`{key} = {found}` in `[package.metadata.{}]` of `{}`{table_at} is not `true` or `false`",
                                METADATA_TABLE, MANIFEST_FILE
                            ),
                            format!("write `{PINNED_KEY} = true` when the crate pins its rows"),
                        )));
                    }
                },
                _ => {
                    return Err(DefaultsError(diag::diagnostic(
                        format!(
                            "unknown key `{key}` in `[package.metadata.{}]` of `{}`{table_at}",
                            METADATA_TABLE, MANIFEST_FILE
                        ),
                        format!("the keys are {}", diag::list(METADATA_KEYS)),
                    )));
                }
            }
        }
        Ok(d)
    }

    /// Reads the defaults of the crate whose root is `crate_root`; a missing manifest
    /// means no defaults.
    pub fn load(crate_root: &Path) -> Result<Defaults, DefaultsError> {
        let path = crate_root.join(MANIFEST_FILE);
        match std::fs::read_to_string(&path) {
            Ok(text) => Defaults::from_manifest(&text),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(Defaults::default()),
            Err(e) => Err(DefaultsError(diag::diagnostic(
                format!("cannot read `{}`: {e}", path.display()),
                "check the file's permissions",
            ))),
        }
    }
}

/// ` (line L, column C)` for a byte range of `text`, or nothing.
pub(crate) fn at(text: &str, span: Option<Range<usize>>) -> String {
    match span {
        Some(r) => {
            let (line, col) = line_col(text, r.start);
            format!(" (line {line}, column {col})")
        }
        None => String::new(),
    }
}

/// 1-based line and column (in characters) of a byte offset.
pub(crate) fn line_col(text: &str, offset: usize) -> (usize, usize) {
    let offset = offset.min(text.len());
    let before = &text[..offset];
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, col)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_the_table() {
        let text = "[package]\nname = \"x\"\n\n[package.metadata.heddle]\nstrength = 3\nlambda = 2\nseed = 9\npinned = true\n";
        let d = Defaults::from_manifest(text).unwrap();
        assert_eq!(
            d,
            Defaults {
                strength: Some(3),
                lambda: Some(2),
                seed: Some(9),
                pinned: true,
            }
        );
        let e = Defaults::from_manifest("[package.metadata.heddle]\npinned = 1\n")
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("`pinned = 1` in `[package.metadata.heddle]`"),
            "{e}"
        );
        assert!(e.contains("is not `true` or `false`"), "{e}");
    }

    #[test]
    fn no_table_no_defaults() {
        let d = Defaults::from_manifest("[package]\nname = \"x\"\n[dependencies]\n").unwrap();
        assert_eq!(d, Defaults::default());
        assert_eq!(Defaults::from_manifest("").unwrap(), Defaults::default());
    }

    #[test]
    fn bad_values_are_named_with_their_line() {
        let text = "[package]\nname = \"x\"\n\n[package.metadata.heddle]\nstrength = \"two\"\n";
        let e = Defaults::from_manifest(text).unwrap_err().to_string();
        assert!(
            e.starts_with("`strength = \"two\"` in `[package.metadata.heddle]`"),
            "{e}"
        );
        assert!(e.contains("line 4"), "{e}");
        assert!(e.contains("\nhint: "), "{e}");
        let e = Defaults::from_manifest("[package.metadata.heddle]\nlambda = 0\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("from 1 to"), "{e}");
        let e = Defaults::from_manifest("[package.metadata.heddle]\nstrenght = 2\n")
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("unknown key `strenght`"), "{e}");
        let e = Defaults::from_manifest("[package.metadata.heddle]\nseed = -1\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("non-negative"), "{e}");
        // cargo accepts any value there, so the hint must not send the user to cargo
        let e = Defaults::from_manifest("[package]\nname = \"x\"\n\n[package.metadata]\nheddle = 1\n")
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("`package.metadata.heddle` in `Cargo.toml` (line 5, column 10) is `1`, not a table\nhint: write a table: `[package.metadata.heddle]`"),
            "{e}"
        );
    }

    #[test]
    fn line_and_column() {
        assert_eq!(line_col("ab\ncd", 4), (2, 2));
        assert_eq!(line_col("ab\ncd", 0), (1, 1));
    }
}
