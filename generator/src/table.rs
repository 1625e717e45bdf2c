//! Designs the tight mode found, shipped with the engine so that the fast mode — what a
//! build runs, which cannot afford the tight mode's group searches (seconds to a minute
//! each in an optimised build) — starts from them too. An entry on k columns serves every
//! spec with the same levels and strength on k or fewer columns (dropping columns keeps
//! coverage), and like every design it passes the independent checker before it is
//! returned. Only entries smaller than what the fast mode finds without them are kept.
//!
//! `designs.txt` is written by `cargo run --release -p heddle-generator --example
//! design_table` (one line per entry: levels, strength, columns, the method that found
//! it with `_` for spaces, then the rows, one digit per level, separated by commas); the
//! test below checks
//! that every entry covers.

use std::sync::OnceLock;

use crate::factor::Row;

/// One stored design.
#[derive(Debug)]
pub(crate) struct Entry {
    pub v: usize,
    pub t: usize,
    pub k: usize,
    pub method: String,
    pub rows: Vec<Row>,
}

/// The table, parsed once.
fn entries() -> &'static [Entry] {
    static TABLE: OnceLock<Vec<Entry>> = OnceLock::new();
    TABLE.get_or_init(|| parse(include_str!("designs.txt")))
}

/// Parses the table's text; a line it cannot read is a defect of the shipped file (the
/// test below reads every line), so it is left out rather than stopping a build.
fn parse(text: &str) -> Vec<Entry> {
    text.lines()
        .filter(|l| !l.trim().is_empty() && !l.starts_with('#'))
        .filter_map(parse_line)
        .collect()
}

fn parse_line(line: &str) -> Option<Entry> {
    let mut fields = line.split(' ');
    let mut number = || fields.next()?.parse::<usize>().ok();
    let (v, t, k) = (number()?, number()?, number()?);
    // a method name's spaces are written as underscores
    let method = fields.next()?.replace('_', " ");
    let rows: Vec<Row> = fields
        .next()?
        .split(',')
        .map(|r| r.bytes().map(|b| b.wrapping_sub(b'0')).collect::<Row>())
        .collect();
    let fits = rows
        .iter()
        .all(|r| r.len() == k && r.iter().all(|&x| (x as usize) < v));
    (fits && fields.next().is_none()).then_some(Entry {
        v,
        t,
        k,
        method,
        rows,
    })
}

/// The smallest stored design for k columns of v levels at strength t (from an entry on
/// k or more columns, its first k kept), with its method name.
pub(crate) fn lookup(v: usize, k: usize, t: usize) -> Option<(String, Vec<Row>)> {
    let entry = entries()
        .iter()
        .filter(|e| e.v == v && e.t == t && e.k >= k)
        .min_by_key(|e| (e.rows.len(), e.k))?;
    let mut rows: Vec<Row> = Vec::with_capacity(entry.rows.len());
    for r in &entry.rows {
        let r = r[..k].to_vec();
        if !rows.contains(&r) {
            rows.push(r);
        }
    }
    let method = format!("table({}^{} t={}: {})", v, entry.k, t, entry.method);
    Some((method, rows))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Spec;
    use crate::verify::verify;

    #[test]
    fn every_line_of_the_table_is_read_and_covers() {
        let text = include_str!("designs.txt");
        let lines = text
            .lines()
            .filter(|l| !l.trim().is_empty() && !l.starts_with('#'));
        assert_eq!(
            lines.count(),
            entries().len(),
            "a line of designs.txt was not read"
        );
        assert!(!entries().is_empty());
        for e in entries() {
            let spec = Spec::numbered(&vec![e.v; e.k]).strength(e.t);
            assert!(verify(&spec, &e.rows).is_ok(), "{}^{} t={}", e.v, e.k, e.t);
        }
    }

    #[test]
    fn a_lookup_drops_columns_and_never_returns_an_invalid_design() {
        for e in entries() {
            for k in [e.t + 1, e.k.saturating_sub(3).max(e.t + 1), e.k] {
                let (_, rows) = lookup(e.v, k, e.t).expect("an entry serves fewer columns");
                assert!(rows.len() <= e.rows.len());
                let spec = Spec::numbered(&vec![e.v; k]).strength(e.t);
                assert!(verify(&spec, &rows).is_ok(), "{}^{k} t={}", e.v, e.t);
            }
        }
        assert!(lookup(3, 1000, 3).is_none());
    }

    #[test]
    fn lines_that_do_not_fit_are_left_out() {
        let good = "3 2 3 m 000,111,222,012,120,201,021,102,210";
        assert_eq!(parse(good).len(), 1);
        for bad in [
            "3 2 3 m 000,111,22",
            "3 2 3 m 000,113",
            "3 2 x m 000",
            "3 2 3 m 000 extra",
            "3 2 3",
        ] {
            assert!(parse(bad).is_empty(), "{bad}");
        }
    }
}
