//! Algebraic constructions: exact designs for the parameter sets where mathematics gives
//! the optimum (or near it), tried before any search.

use crate::model::Row;

/// A design produced by a construction.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Construction {
    /// The rows, one entry per factor, levels below each factor's count.
    pub rows: Vec<Row>,
    /// Which construction, with its parameters (e.g. `bose(q=5)`), for reports.
    pub method: String,
}

/// The smallest construction that applies to these level counts at strength `t` and
/// index `lambda`, if any.
pub fn best(levels: &[usize], t: usize, lambda: u32) -> Option<Construction> {
    let mut found: Vec<Construction> = Vec::new();
    if let Some(c) = full_factorial(levels, t, lambda) {
        found.push(c);
    }
    found.into_iter().min_by_key(|c| c.rows.len())
}

/// k = t: every combination, λ times; the counting bound, so optimal.
fn full_factorial(levels: &[usize], t: usize, lambda: u32) -> Option<Construction> {
    if levels.len() != t {
        return None;
    }
    let mut rows = Vec::new();
    let mut row = vec![0u8; t];
    loop {
        for _ in 0..lambda {
            rows.push(row.clone());
        }
        let mut i = 0;
        loop {
            if i == t {
                return Some(Construction {
                    rows,
                    method: "full-factorial".into(),
                });
            }
            row[i] += 1;
            if (row[i] as usize) < levels[i] {
                break;
            }
            row[i] = 0;
            i += 1;
        }
    }
}
