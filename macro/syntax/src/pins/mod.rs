//! The pins file: rows fixed once (by `cargo heddle pin`, with the engine's thorough
//! search) and then used verbatim by every build, so a test's rows never move under it.
//!
//! # Format
//!
//! One file per crate, `heddle-pins.toml` at the crate root (beside `Cargo.toml`), TOML:
//!
//! ```toml
//! # Rows pinned by `cargo heddle pin`; `#[cover]` uses an entry's rows verbatim while
//! # its fingerprint matches the spec in the source. Regenerate rather than edit.
//! format = 2
//!
//! [pins."tests/codec.rs".roundtrip]
//! fingerprint = "d0e48fe4e5c1a0e1"
//! factors = ["batch", "codec", "checksum"]
//! levels = [
//!     ["1", "8", "64"],
//!     ["Codec::Plain", "Codec::Rle", "Codec::Delta"],
//!     ["true", "false"],
//! ]
//! strength = 2
//! lambda = 2
//! seed = "11"
//! rows = [
//!     [0, 0, 0],
//!     [1, 2, 1],
//! ]
//! ```
//!
//! - `format` (required): the version of this layout, [`PINS_FORMAT`]; a reader refuses
//!   any other. Format 1 wrote the seed as 16 hex digits; builds and `check` refuse it
//!   with a message saying so, and `cargo heddle pin` reads it and rewrites the file in
//!   format 2, keeping every row ([`PinsFile::parse_upgrading`]).
//!   Follow-up rows (`followup.FILE.FUNCTION`, below) are part of format 2.
//! - `pins.FILE.FUNCTION`: one entry per annotated function. `FILE` is the test file's
//!   path relative to the crate root with `/` separators (`..` components when the file
//!   lies outside the root); `FUNCTION` is the function's name. Two annotated functions
//!   of one file must have different names (the macro cannot see module nesting).
//! - `fingerprint` (required): the spec's [`Fingerprint`], 16 lowercase hex digits.
//! - `factors` (optional, informative): the parameter names, in column order.
//! - `levels`, `strength`, `lambda`, `seed` (optional, together: the [`Origin`]): the
//!   level labels of each factor in index order, and the strength, λ and seed (a decimal
//!   string, as every heddle output writes seeds; seeds span all of `u64`, TOML integers
//!   do not) the rows were made for. Builds ignore them; `cargo heddle pin` reads them to carry rows over to a
//!   changed spec (remapping level indices by label). An entry with only some of them is
//!   read as having none.
//! - `rows` (required): one array per row, the level index (0-based, in `#[levels]`
//!   order) of each parameter.
//!
//! - `followup.FILE.FUNCTION` (format 2): follow-up rows of a function, written by
//!   `cargo heddle probe` to tell apart the suspects of a failure. `fingerprint`
//!   (required): the spec they were proposed for; `rows` (required): level indices as in
//!   `pins`, a row listed as often as it should run. The expansion appends them to the
//!   function's rows (pinned or generated) as further row tests, `row_followup_00`, …;
//!   while the fingerprint no longer matches the spec they are stale, which is an error
//!   like a stale pin.
//!
//! ```toml
//! [followup."tests/codec.rs".roundtrip]
//! fingerprint = "d0e48fe4e5c1a0e1"
//! rows = [
//!     [2, 1, 0],
//!     [2, 1, 0],
//! ]
//! ```
//!
//! [`PinsFile::to_toml`] writes exactly this layout: entries sorted by file then
//! function, pins before follow-up rows, one row per line, so the file diffs well and
//! rewriting an unchanged file changes nothing.
//!
//! # Rebuilds
//!
//! The expansion of every annotated function includes the pins file with
//! `include_bytes!` when it exists, so editing it rebuilds the crate's tests. Creating
//! it for the first time is not noticed by a crate already built without it: touch the
//! test file (the plugin does this after writing the file).

mod read;
mod write;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use heddle_generator::Spec;

use crate::diag::{self, Diagnostic};
use crate::fingerprint::Fingerprint;

/// Name of the pins file at the crate root.
pub const PINS_FILE: &str = "heddle-pins.toml";
/// Version of the pins file format this crate reads and writes.
pub const PINS_FORMAT: u32 = 2;
/// The previous version, whose seeds were 16 hex digits: only
/// [`PinsFile::parse_upgrading`] reads it.
pub const PINS_FORMAT_HEX_SEEDS: u32 = 1;
/// The command that proposes follow-up rows, quoted by messages about them.
pub const PROBE_COMMAND: &str = "cargo heddle probe";
/// The command that (re)writes pins, quoted by stale-pin messages.
pub const PIN_COMMAND: &str = "cargo heddle pin";

/// Where a pin lives: the test file (relative to the crate root, `/`-separated) and the
/// function's name.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct PinKey {
    /// The test file, relative to the crate root.
    pub file: String,
    /// The annotated function's name.
    pub function: String,
}

impl PinKey {
    /// A key.
    pub fn new(file: impl Into<String>, function: impl Into<String>) -> Self {
        PinKey {
            file: file.into(),
            function: function.into(),
        }
    }
}

/// The pinned rows of one function.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Pin {
    /// Fingerprint of the spec the rows were made for.
    pub fingerprint: Fingerprint,
    /// Parameter names, in column order (informative).
    pub factors: Vec<String>,
    /// Level index of each parameter, per row.
    pub rows: Vec<Vec<u8>>,
}

impl Pin {
    /// Checks that the rows fit `spec`: one entry per factor, each an existing level, no
    /// row excluded. The fingerprint is not compared here.
    pub fn check(&self, spec: &Spec) -> Result<(), String> {
        check_rows(&self.rows, spec, "the pin")
    }
}

impl FollowUp {
    /// Checks that the rows fit `spec`, as [`Pin::check`] does.
    pub fn check(&self, spec: &Spec) -> Result<(), String> {
        check_rows(&self.rows, spec, "the follow-up rows")
    }
}

/// Checks rows of `what` against `spec`: one entry per factor, each an existing level,
/// none excluded, at least one row.
fn check_rows(rows: &[Vec<u8>], spec: &Spec, what: &str) -> Result<(), String> {
    let levels = spec.levels();
    if rows.is_empty() {
        return Err(format!("there are no rows in {what}"));
    }
    for (i, row) in rows.iter().enumerate() {
        if row.len() != levels.len() {
            let plural = |n: usize, one: &str, many: &str| format!("{n} {}", if n == 1 { one } else { many });
            return Err(format!(
                "row {i} of {what} has {} but the function has {}",
                plural(row.len(), "entry", "entries"),
                plural(levels.len(), "parameter", "parameters")
            ));
        }
        for (c, (&l, &n)) in row.iter().zip(&levels).enumerate() {
            if usize::from(l) >= n {
                return Err(format!(
                    "row {i} of {what} uses level {l} of `{}`, which has {n} levels",
                    spec.factors[c].name
                ));
            }
        }
        if let Some(e) = spec.excludes.iter().position(|e| e.eval(row)) {
            return Err(format!("row {i} of {what} is ruled out by exclude #{}", e + 1));
        }
    }
    Ok(())
}

/// What a pin's rows were made for, beyond the fingerprint (which only tells "same spec
/// or not"): the labels behind the level indices, and the strength, λ and seed. Kept
/// beside the pin rather than in it so that code building [`Pin`] values stays as is.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Origin {
    /// Level labels of each factor (in the pin's column order), in index order.
    pub levels: Vec<Vec<String>>,
    /// Strength t.
    pub strength: usize,
    /// Index λ.
    pub lambda: u32,
    /// Seed of the engine's random choices.
    pub seed: u64,
}

impl Origin {
    /// The origin of rows made for `spec`.
    pub fn of(spec: &Spec) -> Origin {
        Origin {
            levels: spec.factors.iter().map(|f| f.levels.clone()).collect(),
            strength: spec.strength,
            lambda: spec.lambda,
            seed: spec.seed,
        }
    }
}

/// Follow-up rows of one function: extra rows proposed to tell suspects apart, run
/// after the design's rows.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FollowUp {
    /// Fingerprint of the spec they were proposed for.
    pub fingerprint: Fingerprint,
    /// Level index of each parameter, per row; a row appears as often as it runs.
    pub rows: Vec<Vec<u8>>,
}

/// A pins file's contents.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct PinsFile {
    /// Every pin, by key.
    pub pins: BTreeMap<PinKey, Pin>,
    /// Every function's follow-up rows, by key.
    pub followups: BTreeMap<PinKey, FollowUp>,
    lines: BTreeMap<PinKey, usize>,
    followup_lines: BTreeMap<PinKey, usize>,
    origins: BTreeMap<PinKey, Origin>,
}

/// Why a pins file could not be read: a message in the house style, with the line and
/// column when the problem has a place.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PinsError {
    /// 1-based line of the problem, when known.
    pub line: Option<usize>,
    /// 1-based column of the problem, when known.
    pub column: Option<usize>,
    /// What is wrong and what to do.
    pub diagnostic: Diagnostic,
}

impl std::fmt::Display for PinsError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.diagnostic.for_compiler())
    }
}

impl std::error::Error for PinsError {}

impl PinsFile {
    /// The pins file's path for the crate whose root is `crate_root`.
    pub fn path(crate_root: &Path) -> PathBuf {
        crate_root.join(PINS_FILE)
    }

    /// Reads the pins file of a crate: `None` when there is none.
    pub fn load(crate_root: &Path) -> Result<Option<PinsFile>, PinsError> {
        PinsFile::load_with(crate_root, PinsFile::parse)
    }

    /// [`PinsFile::load`] that also reads the previous format (for `cargo heddle pin`,
    /// which rewrites it).
    pub fn load_upgrading(crate_root: &Path) -> Result<Option<PinsFile>, PinsError> {
        PinsFile::load_with(crate_root, PinsFile::parse_upgrading)
    }

    fn load_with(
        crate_root: &Path,
        parse: fn(&str) -> Result<PinsFile, PinsError>,
    ) -> Result<Option<PinsFile>, PinsError> {
        let path = PinsFile::path(crate_root);
        match std::fs::read_to_string(&path) {
            Ok(text) => parse(&text).map(Some),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
            Err(e) => Err(PinsError {
                line: None,
                column: None,
                diagnostic: diag::diagnostic(
                    format!("cannot read `{}`: {e}", path.display()),
                    "check the file's permissions",
                ),
            }),
        }
    }

    /// The pin of a function.
    pub fn get(&self, key: &PinKey) -> Option<&Pin> {
        self.pins.get(key)
    }

    /// The line its entry starts on, for pins read from a file.
    pub fn line_of(&self, key: &PinKey) -> Option<usize> {
        self.lines.get(key).copied()
    }

    /// What the pin's rows were made for, when the entry records it.
    pub fn origin(&self, key: &PinKey) -> Option<&Origin> {
        self.origins.get(key)
    }

    /// Adds or replaces a pin, returning the one replaced. The entry records no
    /// [`Origin`] (the replaced one's would describe other rows).
    pub fn insert(&mut self, key: PinKey, pin: Pin) -> Option<Pin> {
        self.lines.remove(&key);
        self.origins.remove(&key);
        self.pins.insert(key, pin)
    }

    /// Adds or replaces a pin together with what its rows were made for.
    pub fn insert_with_origin(&mut self, key: PinKey, pin: Pin, origin: Origin) -> Option<Pin> {
        let old = self.insert(key.clone(), pin);
        self.origins.insert(key, origin);
        old
    }

    /// Removes a pin.
    pub fn remove(&mut self, key: &PinKey) -> Option<Pin> {
        self.lines.remove(key);
        self.origins.remove(key);
        self.pins.remove(key)
    }

    /// The follow-up rows of a function.
    pub fn followup(&self, key: &PinKey) -> Option<&FollowUp> {
        self.followups.get(key)
    }

    /// The line a function's follow-up entry starts on, for files read from disk.
    pub fn followup_line(&self, key: &PinKey) -> Option<usize> {
        self.followup_lines.get(key).copied()
    }

    /// Sets a function's follow-up rows (none: removes them), returning the old ones.
    pub fn set_followup(&mut self, key: PinKey, followup: Option<FollowUp>) -> Option<FollowUp> {
        self.followup_lines.remove(&key);
        match followup {
            Some(f) => self.followups.insert(key, f),
            None => self.followups.remove(&key),
        }
    }

    /// Whether a function without a pin here is missing one: the crate pins (some
    /// function has a pin), as opposed to a file holding only follow-up rows.
    pub fn pins_functions(&self) -> bool {
        !self.pins.is_empty()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use heddle_generator::{Expr, Factor};

    fn sample() -> PinsFile {
        let mut p = PinsFile::default();
        p.insert(
            PinKey::new("tests/codec.rs", "roundtrip"),
            Pin {
                fingerprint: Fingerprint(0xd0e4_8fe4_e5c1_a0e1),
                factors: vec!["batch".into(), "codec".into()],
                rows: vec![vec![0, 0], vec![1, 2]],
            },
        );
        p.insert(
            PinKey::new("src/we\"ird\\dir/lib.rs", "r#type"),
            Pin {
                fingerprint: Fingerprint(1),
                factors: vec!["x".into()],
                rows: vec![vec![0], vec![1]],
            },
        );
        p.insert(
            PinKey::new("tests/a.rs", "b"),
            Pin {
                fingerprint: Fingerprint(2),
                factors: vec![],
                rows: vec![vec![3]],
            },
        );
        p
    }

    #[test]
    fn round_trip() {
        let p = sample();
        let text = p.to_toml();
        let back = PinsFile::parse(&text).unwrap();
        assert_eq!(back.pins, p.pins);
        // writing what was read gives the same text: the writer is deterministic
        assert_eq!(back.to_toml(), text);
    }

    #[test]
    fn origin_round_trips_and_is_dropped_by_insert() {
        let mut p = sample();
        let key = PinKey::new("tests/codec.rs", "roundtrip");
        let pin = p.get(&key).unwrap().clone();
        let origin = Origin {
            levels: vec![
                vec!["1".into(), "8".into(), "6\"4".into()],
                vec!["a".into(), "b".into()],
            ],
            strength: 2,
            lambda: 3,
            seed: u64::MAX - 1,
        };
        p.insert_with_origin(key.clone(), pin.clone(), origin.clone());
        let text = p.to_toml();
        assert!(text.contains("seed = \"18446744073709551614\"\n"), "{text}");
        assert!(
            text.contains("levels = [\n    [\"1\", \"8\", \"6\\\"4\"],\n    [\"a\", \"b\"],\n]\n"),
            "{text}"
        );
        let back = PinsFile::parse(&text).unwrap();
        assert_eq!(back.origin(&key), Some(&origin));
        assert_eq!(back.to_toml(), text);
        // entries without one have none
        assert_eq!(back.origin(&PinKey::new("tests/a.rs", "b")), None);
        // replacing the rows forgets what the old ones were made for
        let mut back = back;
        back.insert(key.clone(), pin);
        assert_eq!(back.origin(&key), None);
    }

    #[test]
    fn partial_origin_is_none_and_bad_seed_is_located() {
        let text =
            "format = 2\n[pins.\"t.rs\".f]\nfingerprint = \"0000000000000001\"\nlambda = 2\nrows = [[0]]\n";
        let p = PinsFile::parse(text).unwrap();
        assert_eq!(p.origin(&PinKey::new("t.rs", "f")), None);
        let text = "format = 2\n[pins.\"t.rs\".f]\nfingerprint = \"0000000000000001\"\nlevels = [[\"x\"]]\n\
                    strength = 1\nlambda = 1\nseed = \"0x12\"\nrows = [[0]]\n";
        let e = PinsFile::parse(text).unwrap_err();
        assert_eq!(e.line, Some(7), "{e}");
        assert!(e.to_string().contains("`0x12` is not a seed"), "{e}");
    }

    #[test]
    fn layout_is_sorted_and_one_row_per_line() {
        let text = sample().to_toml();
        let a = text.find("[pins.\"src/").unwrap();
        let b = text.find("[pins.\"tests/a.rs\".b]").unwrap();
        let c = text.find("[pins.\"tests/codec.rs\".roundtrip]").unwrap();
        assert!(a < b && b < c, "{text}");
        assert!(text.contains("\nformat = 2\n"));
        assert!(text.contains("rows = [\n    [0, 0],\n    [1, 2],\n]\n"), "{text}");
        assert!(text.contains("fingerprint = \"d0e48fe4e5c1a0e1\""));
        assert!(text.contains(".\"r#type\"]"), "{text}");
    }

    #[test]
    fn lines_of_entries() {
        let text = "format = 2\n\n[pins.\"t.rs\".f]\nfingerprint = \"0000000000000001\"\nrows = [[0]]\n";
        let p = PinsFile::parse(text).unwrap();
        let key = PinKey::new("t.rs", "f");
        assert_eq!(p.get(&key).unwrap().rows, vec![vec![0]]);
        assert_eq!(p.get(&key).unwrap().factors, Vec::<String>::new());
        assert!(p.line_of(&key).is_some());
    }

    #[test]
    fn syntax_errors_are_located() {
        let text = "format = 2\n\n[pins.\"t.rs\".f]\nfingerprint = \"0000000000000001\"\nrows = [[0, ]\n";
        let e = PinsFile::parse(text).unwrap_err();
        assert_eq!(e.line, Some(5), "{e}");
        assert!(
            e.to_string()
                .starts_with("cannot read `heddle-pins.toml` (line 5, column"),
            "{e}"
        );
        assert!(e.to_string().contains("\nhint: "), "{e}");
    }

    #[test]
    fn bad_values_are_located() {
        let text = "format = 2\n[pins.\"t.rs\".f]\nfingerprint = \"xyz\"\nrows = [[0]]\n";
        let e = PinsFile::parse(text).unwrap_err();
        assert_eq!(e.line, Some(3), "{e}");
        assert!(e.to_string().contains("`xyz` is not a fingerprint"), "{e}");

        let text = "format = 2\n[pins.\"t.rs\".f]\nfingerprint = \"0000000000000001\"\nrows = [[300]]\n";
        let e = PinsFile::parse(text).unwrap_err();
        assert_eq!(e.line, Some(4), "{e}");

        let text =
            "format = 2\n[pins.\"t.rs\".f]\nfingerprint = \"0000000000000001\"\nrows = [[0]]\ncolour = 1\n";
        let e = PinsFile::parse(text).unwrap_err();
        assert!(e.to_string().contains("colour"), "{e}");
    }

    #[test]
    fn format_is_required_and_checked() {
        let e = PinsFile::parse("[pins]\n").unwrap_err();
        assert!(e.to_string().contains("`format = 2` is missing"), "{e}");
        let e = PinsFile::parse("format = 3\n").unwrap_err();
        assert_eq!(e.line, Some(1));
        assert!(
            e.to_string()
                .contains("has `format = 3`, this heddle reads format 2"),
            "{e}"
        );
        assert!(PinsFile::parse("format = 2\n").unwrap().pins.is_empty());
    }

    #[test]
    fn format_1_with_hex_seeds_is_refused_by_builds_and_upgraded_by_pin() {
        let old = "format = 1\n[pins.\"t.rs\".f]\nfingerprint = \"0000000000000001\"\nlevels = [[\"x\"]]\n\
                   strength = 1\nlambda = 1\nseed = \"000000000000000b\"\nrows = [[0]]\n";
        let e = PinsFile::parse(old).unwrap_err().to_string();
        assert!(e.contains("has `format = 1` (seeds in hex)"), "{e}");
        assert!(e.contains("run `cargo heddle pin`"), "{e}");
        let up = PinsFile::parse_upgrading(old).unwrap();
        let key = PinKey::new("t.rs", "f");
        assert_eq!(up.origin(&key).map(|o| o.seed), Some(11));
        let text = up.to_toml();
        assert!(
            text.contains("format = 2\n") && text.contains("seed = \"11\"\n"),
            "{text}"
        );
        assert_eq!(
            PinsFile::parse(&text).unwrap().origin(&key).map(|o| o.seed),
            Some(11)
        );
    }

    #[test]
    fn followups_round_trip() {
        let mut p = sample();
        assert!(!p.to_toml().contains("[followup."));
        let key = PinKey::new("tests/codec.rs", "roundtrip");
        let f = FollowUp {
            fingerprint: Fingerprint(0xd0e4_8fe4_e5c1_a0e1),
            rows: vec![vec![2, 1], vec![2, 1], vec![0, 1]],
        };
        assert_eq!(p.set_followup(key.clone(), Some(f.clone())), None);
        // a follow-up for a function without a pin is fine: the build generates its rows
        let lone = PinKey::new("tests/other.rs", "g");
        p.set_followup(lone.clone(), Some(f.clone()));
        let text = p.to_toml();
        assert!(text.contains("\nformat = 2\n"), "{text}");
        assert!(
            text.contains(
                "[followup.\"tests/codec.rs\".roundtrip]\nfingerprint = \"d0e48fe4e5c1a0e1\"\nrows = [\n    [2, 1],\n    [2, 1],\n    [0, 1],\n]\n"
            ),
            "{text}"
        );
        let back = PinsFile::parse(&text).unwrap();
        assert_eq!(back.followup(&key), Some(&f));
        assert_eq!(back.followup(&lone), Some(&f));
        assert!(back.followup_line(&key).is_some());
        assert_eq!(back.to_toml(), text);
        assert!(back.pins_functions());
        let mut back = back;
        assert_eq!(back.set_followup(key.clone(), None), Some(f));
        assert_eq!(back.followup(&key), None);
        let only = PinsFile::parse(
            "format = 2\n[followup.\"t.rs\".f]\nfingerprint = \"0000000000000001\"\nrows = [[0]]\n",
        )
        .unwrap();
        assert!(!only.pins_functions());
        let e = PinsFile::parse("format = 2\n[followup.\"t.rs\".f]\nfingerprint = \"zz\"\nrows = [[0]]\n")
            .unwrap_err();
        assert_eq!(e.line, Some(3), "{e}");
    }

    #[test]
    fn check_against_spec() {
        let spec =
            Spec::new(vec![Factor::numbered("a", 2), Factor::numbered("b", 3)]).exclude(Expr::is(0, 1));
        let pin = |rows: Vec<Vec<u8>>| Pin {
            fingerprint: Fingerprint(0),
            factors: vec![],
            rows,
        };
        assert!(pin(vec![vec![0, 2]]).check(&spec).is_ok());
        assert!(
            pin(vec![vec![0]])
                .check(&spec)
                .unwrap_err()
                .contains("has 1 entry but the function has 2 parameters")
        );
        assert!(
            pin(vec![vec![0, 3]])
                .check(&spec)
                .unwrap_err()
                .contains("level 3 of `b`")
        );
        assert!(
            pin(vec![vec![1, 0]])
                .check(&spec)
                .unwrap_err()
                .contains("exclude #1")
        );
        assert!(pin(vec![]).check(&spec).is_err());
    }
}
