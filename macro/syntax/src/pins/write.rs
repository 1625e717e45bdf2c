//! Writing the pins file in its one layout: sorted, one row per line, so the file diffs
//! well and rewriting an unchanged file changes nothing.

use std::fmt::Write as _;

use super::{PIN_COMMAND, PINS_FORMAT, PinsFile};
use crate::keywords as kw;

impl PinsFile {
    /// The file's text in the layout documented above: deterministic, sorted, one row
    /// per line.
    pub fn to_toml(&self) -> String {
        let mut out = String::new();
        out.push_str(&format!(
            "# Rows pinned by `{}`; `#[{}]` uses an entry's rows verbatim while\n\
             # its fingerprint matches the spec in the source. Regenerate rather than edit.\n",
            PIN_COMMAND,
            kw::COVER
        ));
        // writing to a String cannot fail
        let _ = writeln!(out, "format = {PINS_FORMAT}");
        for (key, pin) in &self.pins {
            let _ = writeln!(out, "\n[pins.{}.{}]", quoted(&key.file), toml_key(&key.function));
            let _ = writeln!(out, "fingerprint = \"{}\"", pin.fingerprint);
            let names: Vec<String> = pin.factors.iter().map(|f| quoted(f)).collect();
            let _ = writeln!(out, "factors = [{}]", names.join(", "));
            if let Some(o) = self.origins.get(key) {
                out.push_str("levels = [\n");
                for labels in &o.levels {
                    let labels: Vec<String> = labels.iter().map(|l| quoted(l)).collect();
                    let _ = writeln!(out, "    [{}],", labels.join(", "));
                }
                out.push_str("]\n");
                let _ = writeln!(out, "strength = {}", o.strength);
                let _ = writeln!(out, "lambda = {}", o.lambda);
                let _ = writeln!(out, "seed = \"{}\"", o.seed);
            }
            rows(&mut out, &pin.rows);
        }
        for (key, f) in &self.followups {
            let _ = writeln!(
                out,
                "\n[followup.{}.{}]",
                quoted(&key.file),
                toml_key(&key.function)
            );
            let _ = writeln!(out, "fingerprint = \"{}\"", f.fingerprint);
            rows(&mut out, &f.rows);
        }
        out
    }
}

/// `rows = [ … ]`, one row per line.
fn rows(out: &mut String, rows: &[Vec<u8>]) {
    out.push_str("rows = [\n");
    for row in rows {
        let cells: Vec<String> = row.iter().map(u8::to_string).collect();
        let _ = writeln!(out, "    [{}],", cells.join(", "));
    }
    out.push_str("]\n");
}

/// A TOML key: bare when TOML allows it, else a basic string.
fn toml_key(k: &str) -> String {
    if !k.is_empty()
        && k.bytes()
            .all(|b| b.is_ascii_alphanumeric() || b == b'_' || b == b'-')
    {
        k.to_string()
    } else {
        quoted(k)
    }
}

/// A TOML basic string.
fn quoted(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\t' => out.push_str("\\t"),
            '\r' => out.push_str("\\r"),
            c if c.is_control() => {
                let _ = write!(out, "\\u{:04X}", c as u32);
            }
            c => out.push(c),
        }
    }
    out.push('"');
    out
}
