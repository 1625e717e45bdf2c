//! Reading the pins file: its text parsed and checked, every problem placed at its line
//! and column.

use std::collections::BTreeMap;

use serde::Deserialize;
use toml::Spanned;

use super::{
    FollowUp, Origin, PIN_COMMAND, PINS_FILE, PINS_FORMAT, PINS_FORMAT_HEX_SEEDS, Pin, PinKey, PinsError,
    PinsFile,
};
use crate::defaults::{at, line_col};
use crate::diag;
use crate::fingerprint::Fingerprint;

#[derive(Deserialize)]
struct Head {
    format: Option<Spanned<toml::Value>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    #[allow(dead_code)] // checked through `Head`
    format: toml::Value,
    #[serde(default)]
    pins: BTreeMap<String, BTreeMap<String, Spanned<RawPin>>>,
    #[serde(default)]
    followup: BTreeMap<String, BTreeMap<String, Spanned<RawFollowUp>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFollowUp {
    fingerprint: Spanned<String>,
    rows: Vec<Vec<u8>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPin {
    fingerprint: Spanned<String>,
    #[serde(default)]
    factors: Vec<String>,
    levels: Option<Vec<Vec<String>>>,
    strength: Option<usize>,
    lambda: Option<u32>,
    seed: Option<Spanned<String>>,
    rows: Vec<Vec<u8>>,
}

fn located(text: &str, offset: Option<usize>, what: String) -> PinsError {
    let (line, column) = match offset {
        Some(o) => {
            let (l, c) = line_col(text, o);
            (Some(l), Some(c))
        }
        None => (None, None),
    };
    let place = at(text, offset.map(|o| o..o));
    PinsError {
        line,
        column,
        diagnostic: diag::diagnostic(
            format!("cannot read `{}`{place}: {what}", PINS_FILE),
            format!(
                "fix that line, or delete the file and run `{}` to write it anew",
                PIN_COMMAND
            ),
        ),
    }
}

impl PinsFile {
    /// Parses the text of a pins file of the current format.
    pub fn parse(text: &str) -> Result<PinsFile, PinsError> {
        PinsFile::parse_formats(text, false)
    }

    /// Parses the text of a pins file of the current or the previous format (seeds in
    /// hex): what `cargo heddle pin` reads before rewriting the file.
    pub fn parse_upgrading(text: &str) -> Result<PinsFile, PinsError> {
        PinsFile::parse_formats(text, true)
    }

    fn parse_formats(text: &str, upgrading: bool) -> Result<PinsFile, PinsError> {
        let head: Head = toml::from_str(text)
            .map_err(|e| located(text, e.span().map(|s| s.start), e.message().to_string()))?;
        let Some(format) = head.format else {
            return Err(located(
                text,
                None,
                format!("`format = {}` is missing", PINS_FORMAT),
            ));
        };
        let version = format.get_ref().as_integer();
        let hex_seeds = version == Some(i64::from(PINS_FORMAT_HEX_SEEDS));
        // the file's format refused: `has` says what it has, placed at the `format` line
        let refuse = |has: String, hint: String| PinsError {
            diagnostic: diag::diagnostic(
                format!("`{}`{} has {has}", PINS_FILE, at(text, Some(format.span()))),
                hint,
            ),
            ..located(text, Some(format.span().start), String::new())
        };
        if hex_seeds && !upgrading {
            return Err(refuse(
                format!(
                    "`format = {PINS_FORMAT_HEX_SEEDS}` (seeds in hex), this heddle reads format {PINS_FORMAT} (seeds in decimal)"
                ),
                format!(
                    "run `{PIN_COMMAND}`: it reads format {PINS_FORMAT_HEX_SEEDS} and rewrites the file in format {PINS_FORMAT}, keeping every row"
                ),
            ));
        }
        if version != Some(i64::from(PINS_FORMAT)) && !hex_seeds {
            return Err(refuse(
                format!(
                    "`format = {}`, this heddle reads format {PINS_FORMAT}",
                    format.get_ref()
                ),
                format!("use the heddle that wrote it, or run `{PIN_COMMAND}` to rewrite it"),
            ));
        }
        let raw: RawFile = toml::from_str(text)
            .map_err(|e| located(text, e.span().map(|s| s.start), e.message().to_string()))?;
        let mut out = PinsFile::default();
        for (file, fns) in raw.followup {
            for (function, f) in fns {
                let start = f.span().start;
                let f = f.into_inner();
                let fingerprint = fingerprint(text, &f.fingerprint)?;
                let key = PinKey {
                    file: file.clone(),
                    function,
                };
                out.followup_lines.insert(key.clone(), line_col(text, start).0);
                out.followups.insert(
                    key,
                    FollowUp {
                        fingerprint,
                        rows: f.rows,
                    },
                );
            }
        }
        for (file, fns) in raw.pins {
            for (function, pin) in fns {
                let start = pin.span().start;
                let pin = pin.into_inner();
                let fingerprint = fingerprint(text, &pin.fingerprint)?;
                let key = PinKey {
                    file: file.clone(),
                    function,
                };
                if let (Some(levels), Some(strength), Some(lambda), Some(seed)) =
                    (pin.levels, pin.strength, pin.lambda, pin.seed)
                {
                    let parsed = if hex_seeds {
                        parse_hex_seed(seed.get_ref())
                    } else {
                        parse_seed(seed.get_ref())
                    };
                    let seed = parsed.map_err(|e| located(text, Some(seed.span().start), e))?;
                    out.origins.insert(
                        key.clone(),
                        Origin {
                            levels,
                            strength,
                            lambda,
                            seed,
                        },
                    );
                }
                out.lines.insert(key.clone(), line_col(text, start).0);
                out.pins.insert(
                    key,
                    Pin {
                        fingerprint,
                        factors: pin.factors,
                        rows: pin.rows,
                    },
                );
            }
        }
        Ok(out)
    }
}

/// An entry's fingerprint, or an error at its place.
fn fingerprint(text: &str, value: &Spanned<String>) -> Result<Fingerprint, PinsError> {
    value
        .get_ref()
        .parse::<Fingerprint>()
        .map_err(|e| located(text, Some(value.span().start), e))
}

/// A seed as the file writes it: a decimal string (digits only).
fn parse_seed(s: &str) -> Result<u64, String> {
    if !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit()) {
        s.parse()
            .map_err(|_| format!("`{s}` is not a seed (a decimal number below 2^64)"))
    } else {
        Err(format!("`{s}` is not a seed (a decimal number below 2^64)"))
    }
}

/// A seed as format 1 wrote it: 16 lowercase hex digits.
fn parse_hex_seed(s: &str) -> Result<u64, String> {
    if s.len() == 16
        && s.bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
    {
        u64::from_str_radix(s, 16).map_err(|e| format!("`{s}` is not a seed: {e}"))
    } else {
        Err(format!("`{s}` is not a seed (16 lowercase hex digits)"))
    }
}
