//! Whether recorded rows form a covering array, judged from the recorded spec alone.
//!
//! Two judges: the engine's independent checker ([`heddle_generator::verify`], which
//! shares no code with generation) on the spec rebuilt from the spec line, and a brute
//! force over every complete row written here from the definition, with the
//! constraints given as a plain Rust predicate by the test (not parsed from the
//! record), so a wrong exclude text in the record cannot go unnoticed.
//!
//! Definition used (Colbourn, "Combinatorial aspects of covering arrays", Le Matematiche
//! 59, 2004, §1; the constrained form as in Cohen, Dwyer and Shi, "Constructing interaction
//! test suites for highly-configurable systems in the presence of constraints", IEEE TSE
//! 34(5), 2008): an N × k array is a covering array of strength t and index λ when every
//! choice of t columns shows every t-tuple of levels at least λ times; with constraints,
//! only the t-tuples that some allowed complete row contains are required, and no row
//! may be disallowed.

use std::collections::BTreeMap;

use heddle_generator::{Coverage, Expr, Spec};
use heddle_test::record::SpecRecord;

/// The engine's spec of a recorded spec line, through the store's one conversion
/// (excludes are recorded as the engine's formulas over level indices). The tests also
/// compare the excludes with the fixture's predicate over every row
/// ([`crate::fixtures`]), so a wrong formula in the record cannot go unnoticed.
pub fn engine_spec(rec: &SpecRecord) -> Result<Spec, String> {
    heddle_store::engine_spec(rec).map_err(|e| format!("`{}`: {e}", rec.suite))
}

/// [`heddle_generator::verify`] on the recorded rows against the rebuilt spec.
pub fn verify_recorded(rec: &SpecRecord) -> Result<Coverage, String> {
    let spec = engine_spec(rec)?;
    heddle_generator::verify(&spec, &rec.rows)
        .map_err(|v| format!("`{}`: the recorded rows are not a covering array: {v}", rec.suite))
}

/// Every complete row of a spec (level indices), in lexicographic order.
pub fn all_rows(levels: &[usize]) -> Vec<Vec<u8>> {
    let mut out = vec![Vec::with_capacity(levels.len())];
    for &n in levels {
        out = out
            .into_iter()
            .flat_map(|prefix| {
                (0..n).map(move |l| {
                    let mut r = prefix.clone();
                    r.push(l as u8);
                    r
                })
            })
            .collect();
    }
    out
}

/// What the brute force found on a valid design.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ByDefinition {
    /// t-way interactions in all (every t columns, every tuple of their levels).
    pub interactions: u64,
    /// Those no allowed complete row contains.
    pub impossible: Vec<Vec<(String, String)>>,
    /// Fewest times a possible interaction appears.
    pub min_count: u64,
}

/// The labels of a row.
pub fn labels<'a>(rec: &'a SpecRecord, row: &[u8]) -> Vec<&'a str> {
    row.iter()
        .zip(&rec.factors)
        .map(|(&l, f)| f.labels[l as usize].as_str())
        .collect()
}

/// Checks the recorded rows against the definition, `allowed` telling (from a row's
/// labels) which complete rows the constraints allow.
pub fn check_by_definition(
    rec: &SpecRecord,
    allowed: &dyn Fn(&[&str]) -> bool,
) -> Result<ByDefinition, String> {
    let levels: Vec<usize> = rec.factors.iter().map(|f| f.labels.len()).collect();
    let k = levels.len();
    let t = rec.strength as usize;
    if t == 0 || t > k {
        return Err(format!("`{}`: strength {t} with {k} factors", rec.suite));
    }
    for (i, row) in rec.rows.iter().enumerate() {
        if row.len() != k || row.iter().zip(&levels).any(|(&l, &n)| usize::from(l) >= n) {
            return Err(format!("`{}`: row {i} is malformed: {row:?}", rec.suite));
        }
        if !allowed(&labels(rec, row)) {
            return Err(format!(
                "`{}`: row {i} ({:?}) is one the constraints rule out",
                rec.suite,
                labels(rec, row)
            ));
        }
    }
    let allowed_rows: Vec<Vec<u8>> = all_rows(&levels)
        .into_iter()
        .filter(|r| allowed(&labels(rec, r)))
        .collect();
    let mut out = ByDefinition {
        interactions: 0,
        impossible: Vec::new(),
        min_count: u64::MAX,
    };
    for cols in column_sets(k, t) {
        // every tuple of levels of these columns, with its count in the design and
        // whether an allowed row shows it
        let mut seen: BTreeMap<Vec<u8>, (u64, bool)> = BTreeMap::new();
        for tuple in all_rows(&cols.iter().map(|&c| levels[c]).collect::<Vec<_>>()) {
            seen.insert(tuple, (0, false));
        }
        let pick = |r: &[u8]| cols.iter().map(|&c| r[c]).collect::<Vec<u8>>();
        for r in &allowed_rows {
            if let Some(e) = seen.get_mut(&pick(r)) {
                e.1 = true;
            }
        }
        for r in &rec.rows {
            if let Some(e) = seen.get_mut(&pick(r)) {
                e.0 += 1;
            }
        }
        for (tuple, (count, possible)) in seen {
            out.interactions += 1;
            let named: Vec<(String, String)> = cols
                .iter()
                .zip(&tuple)
                .map(|(&c, &l)| {
                    let f = &rec.factors[c];
                    (f.name.clone(), f.labels[l as usize].clone())
                })
                .collect();
            if !possible {
                out.impossible.push(named);
                continue;
            }
            if count < u64::from(rec.lambda) {
                return Err(format!(
                    "`{}`: interaction {named:?} appears {count} times, λ = {}",
                    rec.suite, rec.lambda
                ));
            }
            out.min_count = out.min_count.min(count);
        }
    }
    Ok(out)
}

/// Every set of `t` column indices out of `k`, increasing.
pub fn column_sets(k: usize, t: usize) -> Vec<Vec<usize>> {
    fn go(k: usize, t: usize, from: usize, cur: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if cur.len() == t {
            out.push(cur.clone());
            return;
        }
        for c in from..k {
            cur.push(c);
            go(k, t, c + 1, cur, out);
            cur.pop();
        }
    }
    let mut out = Vec::new();
    go(k, t, 0, &mut Vec::new(), &mut out);
    out
}

/// Whether two lists of excludes rule out the same complete rows (compared over every
/// row, since the same formula may be parsed into differently shaped trees).
pub fn same_constraints(levels: &[usize], a: &[Expr], b: &[Expr]) -> bool {
    all_rows(levels)
        .iter()
        .all(|r| a.iter().any(|e| e.eval(r)) == b.iter().any(|e| e.eval(r)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use heddle_store::fixture::SpecBuilder;

    fn rec(levels: &[usize], t: u32, lambda: u32, rows: Vec<Vec<u8>>) -> SpecRecord {
        SpecBuilder::new("f")
            .numbered(levels)
            .strength(t)
            .lambda(lambda)
            .rows(rows)
            .build()
    }

    // The orthogonal array OA(4; 2, 3, 2): rows 000, 011, 101, 110 (the even-weight code
    // of length 3; Hedayat, Sloane and Stufken, "Orthogonal Arrays", 1999, §1.1). Every
    // pair of columns shows each of the 4 pairs once, so it is a CA of strength 2, λ 1,
    // and dropping any row breaks that.
    fn oa4() -> Vec<Vec<u8>> {
        vec![vec![0, 0, 0], vec![0, 1, 1], vec![1, 0, 1], vec![1, 1, 0]]
    }

    #[test]
    fn brute_force_accepts_an_orthogonal_array_and_refuses_less() {
        let all = |_: &[&str]| true;
        let ok = check_by_definition(&rec(&[2, 2, 2], 2, 1, oa4()), &all).unwrap();
        assert_eq!((ok.interactions, ok.min_count), (12, 1));
        assert!(ok.impossible.is_empty());
        assert!(check_by_definition(&rec(&[2, 2, 2], 2, 1, oa4()[..3].to_vec()), &all).is_err());
        // λ = 2 needs every pair twice: the OA repeated is one, the OA alone is not
        let twice = [oa4(), oa4()].concat();
        assert!(check_by_definition(&rec(&[2, 2, 2], 2, 2, twice), &all).is_ok());
        assert!(check_by_definition(&rec(&[2, 2, 2], 2, 2, oa4()), &all).is_err());
        assert!(verify_recorded(&rec(&[2, 2, 2], 2, 1, oa4())).is_ok());
        assert!(verify_recorded(&rec(&[2, 2, 2], 2, 1, oa4()[1..].to_vec())).is_err());
    }

    #[test]
    fn constraints_remove_demands_and_forbid_rows() {
        // forbid f0 = 1 with f1 = 1: that pair is impossible and no longer demanded, but
        // the OA's 110 is forbidden and the pairs it alone covered (f0 = 1 with f2 = 0,
        // f1 = 1 with f2 = 0) need rows of their own: 100 and 010 (worked by hand)
        let allowed = |r: &[&str]| !(r[0] == "1" && r[1] == "1");
        let fixed = vec![
            vec![0, 0, 0],
            vec![0, 1, 1],
            vec![1, 0, 1],
            vec![1, 0, 0],
            vec![0, 1, 0],
        ];
        let mut r = rec(&[2, 2, 2], 2, 1, oa4()[..3].to_vec());
        assert!(check_by_definition(&r, &allowed).is_err());
        r = rec(&[2, 2, 2], 2, 1, fixed);
        let found = check_by_definition(&r, &allowed).unwrap();
        assert_eq!(
            found.impossible,
            vec![vec![
                ("f0".to_string(), "1".to_string()),
                ("f1".to_string(), "1".to_string())
            ]]
        );
        // the recorded formula of `f0 == 1 && f1 == 1`
        r.excludes = vec!["0=1&1=1".into()];
        assert_eq!(verify_recorded(&r).unwrap().impossible, 1);
        r = SpecRecord {
            excludes: r.excludes.clone(),
            ..rec(&[2, 2, 2], 2, 1, oa4())
        };
        assert!(check_by_definition(&r, &allowed).is_err());
        assert!(verify_recorded(&r).is_err());
    }

    #[test]
    fn column_sets_count_binomially() {
        // C(5, 2) = 10, C(5, 3) = 10, C(4, 4) = 1
        assert_eq!(column_sets(5, 2).len(), 10);
        assert_eq!(column_sets(5, 3).len(), 10);
        assert_eq!(column_sets(4, 4), vec![vec![0, 1, 2, 3]]);
        assert_eq!(all_rows(&[2, 3]).len(), 6);
    }
}
