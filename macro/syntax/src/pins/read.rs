//! Reading the pins file: its text parsed and checked, every problem placed at its line
//! and column.

use std::collections::BTreeMap;

use serde::Deserialize;
use toml::Spanned;

use super::{
    FollowUp, OLDEST_PINS_FORMAT, Origin, PIN_COMMAND, PINS_FILE, PINS_FORMAT, Pin, PinKey, PinsError,
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
    /// Parses the text of a pins file.
    pub fn parse(text: &str) -> Result<PinsFile, PinsError> {
        let head: Head = toml::from_str(text)
            .map_err(|e| located(text, e.span().map(|s| s.start), e.message().to_string()))?;
        let Some(format) = head.format else {
            return Err(located(
                text,
                None,
                format!("`format = {}` is missing", OLDEST_PINS_FORMAT),
            ));
        };
        let version = format.get_ref().as_integer();
        if !(i64::from(OLDEST_PINS_FORMAT)..=i64::from(PINS_FORMAT)).contains(&version.unwrap_or(0)) {
            return Err(PinsError {
                diagnostic: diag::diagnostic(
                    format!(
                        "`{}`{} has `format = {}`, this heddle reads formats {} and {}",
                        PINS_FILE,
                        at(text, Some(format.span())),
                        format.get_ref(),
                        OLDEST_PINS_FORMAT,
                        PINS_FORMAT
                    ),
                    format!(
                        "use the heddle that wrote it, or run `{}` to rewrite it",
                        PIN_COMMAND
                    ),
                ),
                ..located(text, Some(format.span().start), String::new())
            });
        }
        let raw: RawFile = toml::from_str(text)
            .map_err(|e| located(text, e.span().map(|s| s.start), e.message().to_string()))?;
        let mut out = PinsFile::default();
        for (file, fns) in raw.followup {
            for (function, f) in fns {
                let start = f.span().start;
                if version == Some(i64::from(OLDEST_PINS_FORMAT)) {
                    return Err(located(
                        text,
                        Some(start),
                        format!("follow-up rows need `format = {PINS_FORMAT}`"),
                    ));
                }
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
                    let seed =
                        parse_seed(seed.get_ref()).map_err(|e| located(text, Some(seed.span().start), e))?;
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

/// A seed as the file writes it: 16 lowercase hex digits.
fn parse_seed(s: &str) -> Result<u64, String> {
    if s.len() == 16
        && s.bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
    {
        u64::from_str_radix(s, 16).map_err(|e| format!("`{s}` is not a seed: {e}"))
    } else {
        Err(format!("`{s}` is not a seed (16 lowercase hex digits)"))
    }
}
