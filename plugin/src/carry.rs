//! Carrying a pin's rows over to a changed spec, so that editing a test's levels or
//! raising its λ keeps the configurations it already ran and only adds what the new spec
//! lacks (the engine takes the carried rows as required rows: a fixed prefix that counts
//! toward coverage).
//!
//! The pin records the labels and the strength, λ and seed its rows were made for
//! ([`Origin`]); each old row is rewritten for the new spec, in its old order:
//! - columns are matched by factor name and levels by label, so reordering factors or
//!   levels, and adding levels, keep every row as it was;
//! - a removed factor is projected away (its column is dropped; the rest of the row still
//!   covers what it covered among the remaining factors);
//! - an added factor gets, in each row, the level that covers the most interactions still
//!   short of λ given the rows kept so far (ties to the lowest level; horizontal growth as
//!   in IPOG, Lei, Kacker, Kuhn, Okun, Lawrence 2007, "IPOG: a general strategy for t-way
//!   software testing"), among the levels the excludes allow;
//! - a row using a removed (or relabelled) level is dropped: replacing the level by
//!   another would invent a configuration the row never was;
//! - a row the new excludes rule out is dropped;
//! - a row that no longer covers anything still short of λ (after the rows kept before
//!   it) is dropped as redundant, which is how lowering λ or the strength shrinks a pin.
//!
//! A changed seed carries nothing over: a new seed asks for other random choices, and
//! keeping the rows would silently ignore it. A pin without a recorded origin cannot be
//! remapped (its indices have no labels) and is drawn anew as well.

use heddle_generator::{Row, Spec, UNSET, complete};
use heddle_syntax::{Origin, Pin};

/// Old rows carried over to the new spec and what became of the others.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Carried {
    /// The carried rows, rewritten for the new spec, in their old order.
    pub rows: Vec<Row>,
    /// Old rows dropped because they use a level the spec no longer has.
    pub level_gone: usize,
    /// Old rows dropped because the excludes now rule them out (for every level of an
    /// added factor, if any).
    pub excluded: usize,
    /// Old rows dropped because the rows before them already cover all they would.
    pub redundant: usize,
    /// Why nothing at all was carried over, when that is the case.
    pub fresh: Option<&'static str>,
}

impl Carried {
    /// Old rows not carried over.
    pub fn dropped(&self) -> usize {
        self.level_gone + self.excluded + self.redundant
    }

    /// Why rows were dropped, in words (empty when none were).
    pub fn why_dropped(&self) -> String {
        if let Some(why) = self.fresh {
            return why.to_string();
        }
        let mut parts = Vec::new();
        for (n, what) in [
            (self.level_gone, "use a removed level"),
            (self.excluded, "now excluded"),
            (self.redundant, "no longer needed"),
        ] {
            if n > 0 {
                parts.push(format!("{n} {what}"));
            }
        }
        parts.join(", ")
    }
}

/// The rows of `pin` (made for `origin`) that stay valid and useful under `spec`.
pub fn carry_over(pin: &Pin, origin: Option<&Origin>, spec: &Spec) -> Carried {
    let all_dropped = |why: &'static str| Carried {
        level_gone: pin.rows.len(),
        fresh: Some(why),
        ..Carried::default()
    };
    let Some(origin) = origin.filter(|o| o.levels.len() == pin.factors.len()) else {
        return all_dropped("the pin records no labels to carry its rows over with");
    };
    if origin.seed != spec.seed {
        return all_dropped("the seed changed, so the rows are drawn anew");
    }
    let k = spec.factors.len();
    // for each new column, its old column and the old→new level map
    let maps: Vec<Option<(usize, Vec<Option<u8>>)>> = spec
        .factors
        .iter()
        .map(|f| {
            let old = pin.factors.iter().position(|n| *n == f.name)?;
            let map = origin.levels[old]
                .iter()
                .map(|label| f.level_index(label))
                .collect();
            Some((old, map))
        })
        .collect();
    let mut out = Carried::default();
    let mut partials: Vec<Row> = Vec::with_capacity(pin.rows.len());
    'rows: for old in &pin.rows {
        let mut row: Row = vec![UNSET; k];
        for (c, m) in maps.iter().enumerate() {
            let Some((oc, map)) = m else { continue };
            match old
                .get(*oc)
                .and_then(|&l| map.get(usize::from(l)))
                .copied()
                .flatten()
            {
                Some(l) => row[c] = l,
                None => {
                    out.level_gone += 1;
                    continue 'rows;
                }
            }
        }
        partials.push(row);
    }
    // the added columns are filled, excluded and redundant rows dropped, by the engine
    match complete(spec, &partials) {
        Ok(done) => {
            out.rows = done.rows;
            out.excluded = done.excluded.len();
            out.redundant = done.redundant.len();
            out
        }
        // the spec itself is refused: nothing can be carried over to it
        Err(_) => all_dropped("the engine refuses the new spec"),
    }
}

/// What changed between the spec a pin was made for and `spec` (which differ), in words,
/// as far as the pin tells: without an origin only added and removed factors show.
pub fn describe_change(pin: &Pin, origin: Option<&Origin>, spec: &Spec) -> Vec<String> {
    let mut out = Vec::new();
    for f in &spec.factors {
        if !pin.factors.contains(&f.name) {
            out.push(format!("factor `{}` added", f.name));
        }
    }
    for name in &pin.factors {
        if spec.factor_index(name).is_none() {
            out.push(format!("factor `{name}` removed"));
        }
    }
    let Some(o) = origin.filter(|o| o.levels.len() == pin.factors.len()) else {
        return out;
    };
    for (name, old) in pin.factors.iter().zip(&o.levels) {
        let Some(f) = spec.factor_index(name).map(|i| &spec.factors[i]) else {
            continue;
        };
        for l in &f.levels {
            if !old.contains(l) {
                out.push(format!("level `{l}` of `{name}` added"));
            }
        }
        for l in old {
            if f.level_index(l).is_none() {
                out.push(format!("level `{l}` of `{name}` removed"));
            }
        }
    }
    let moved = |what: &str, a: u64, b: u64| {
        let dir = if b > a { "raised" } else { "lowered" };
        format!("{what} {dir} from {a} to {b}")
    };
    if o.strength != spec.strength {
        out.push(moved("strength", o.strength as u64, spec.strength as u64));
    }
    if o.lambda != spec.lambda {
        out.push(moved("lambda", u64::from(o.lambda), u64::from(spec.lambda)));
    }
    if o.seed != spec.seed {
        out.push(format!("seed changed from {} to {}", o.seed, spec.seed));
    }
    let same_labels = o.levels.len() == spec.factors.len()
        && pin.factors.iter().zip(&spec.factors).all(|(n, f)| *n == f.name)
        && o.levels.iter().zip(&spec.factors).all(|(l, f)| *l == f.levels);
    let fills = |row: &Vec<u8>, req: &Vec<u8>| row.iter().zip(req).all(|(&a, &b)| b == UNSET || a == b);
    if same_labels
        && (spec.required.len() > pin.rows.len()
            || !pin
                .rows
                .iter()
                .zip(&spec.required)
                .all(|(row, req)| fills(row, req)))
    {
        out.push("the required rows changed".to_string());
    }
    if out.is_empty() {
        // the fingerprint covers nothing else
        out.push("the excludes, the required rows, the focus sets or the engine version changed".to_string());
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use heddle_generator::{Effort, Expr, Factor, generate, verify};
    use heddle_syntax::Fingerprint;

    fn pinned(spec: &Spec) -> (Pin, Origin) {
        let d = generate(spec, Effort::Fast).unwrap();
        let pin = Pin {
            fingerprint: Fingerprint(0),
            factors: spec.factors.iter().map(|f| f.name.clone()).collect(),
            rows: d.rows,
        };
        (pin, Origin::of(spec))
    }

    fn base() -> Spec {
        Spec::new(vec![
            Factor::new("a", ["x", "y", "z"]),
            Factor::new("b", ["1", "2", "3"]),
            Factor::new("c", ["p", "q"]),
        ])
        .seed(5)
    }

    /// Labels of a row under a spec, to compare rows across specs.
    fn labels(spec: &Spec, row: &[u8]) -> Vec<(String, String)> {
        row.iter()
            .zip(&spec.factors)
            .map(|(&l, f)| (f.name.clone(), f.levels[l as usize].clone()))
            .collect()
    }

    #[test]
    fn unchanged_spec_keeps_every_row() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let c = carry_over(&pin, Some(&origin), &spec);
        assert_eq!(c.rows, pin.rows);
        assert_eq!(c.dropped(), 0);
    }

    #[test]
    fn reordered_factors_and_levels_are_remapped_by_name_and_label() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let new = Spec::new(vec![
            Factor::new("c", ["q", "p"]),
            Factor::new("a", ["z", "x", "y"]),
            Factor::new("b", ["1", "2", "3"]),
        ])
        .seed(5);
        let c = carry_over(&pin, Some(&origin), &new);
        assert_eq!(c.rows.len(), pin.rows.len());
        for (old, now) in pin.rows.iter().zip(&c.rows) {
            let mut a = labels(&spec, old);
            let mut b = labels(&new, now);
            a.sort();
            b.sort();
            assert_eq!(a, b);
        }
        // still a covering array: the same configurations in other words
        assert!(verify(&new, &c.rows).is_ok());
    }

    #[test]
    fn removed_level_drops_its_rows_and_added_level_keeps_all() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let mut fewer = base();
        fewer.factors[0].levels.retain(|l| l != "z");
        let c = carry_over(&pin, Some(&origin), &fewer);
        let using_z = pin.rows.iter().filter(|r| r[0] == 2).count();
        assert!(using_z > 0);
        assert_eq!(c.level_gone, using_z);
        assert_eq!(c.rows.len() + c.dropped(), pin.rows.len());
        let mut more = base();
        more.factors[1].levels.push("4".into());
        let c = carry_over(&pin, Some(&origin), &more);
        assert_eq!(c.rows, pin.rows);
    }

    #[test]
    fn added_factor_is_filled_and_removed_factor_projected() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let mut more = base();
        more.factors.push(Factor::new("d", ["on", "off"]));
        let c = carry_over(&pin, Some(&origin), &more);
        assert_eq!(c.dropped(), 0);
        for (old, now) in pin.rows.iter().zip(&c.rows) {
            assert_eq!(&now[..3], &old[..]);
            assert!(now[3] < 2);
        }
        // the filled column is balanced enough to pair d with each level of c
        let d_levels: std::collections::BTreeSet<u8> = c.rows.iter().map(|r| r[3]).collect();
        assert_eq!(d_levels.len(), 2);

        let fewer = Spec::new(vec![base().factors[0].clone(), base().factors[2].clone()]).seed(5);
        let c = carry_over(&pin, Some(&origin), &fewer);
        assert!(c.rows.iter().all(|r| r.len() == 2));
        // 3 x 2 = 6 pairs once each: every carried row adds one, the rest are redundant
        assert_eq!(c.rows.len(), 6);
        assert_eq!(c.redundant, pin.rows.len() - 6);
        assert!(verify(&fewer, &c.rows).is_ok());
    }

    #[test]
    fn excluded_rows_are_dropped() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let new = base().exclude(Expr::is(0, 0).and(Expr::is(2, 0)));
        let c = carry_over(&pin, Some(&origin), &new);
        let hit = pin.rows.iter().filter(|r| r[0] == 0 && r[2] == 0).count();
        assert!(hit > 0);
        assert_eq!(c.excluded, hit);
        assert!(c.rows.iter().all(|r| !(r[0] == 0 && r[2] == 0)));
    }

    #[test]
    fn lower_lambda_drops_redundant_rows() {
        let spec = base().lambda(2);
        let (pin, origin) = pinned(&spec);
        let c = carry_over(&pin, Some(&origin), &base());
        assert!(c.redundant > 0);
        assert!(c.rows.len() < pin.rows.len());
    }

    #[test]
    fn new_seed_or_no_origin_carries_nothing() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let c = carry_over(&pin, Some(&origin), &base().seed(6));
        assert!(c.rows.is_empty() && c.fresh.is_some());
        let c = carry_over(&pin, None, &spec);
        assert!(c.rows.is_empty() && c.fresh.is_some());
        assert_eq!(c.dropped(), pin.rows.len());
    }

    #[test]
    fn an_exclude_change_is_named_by_elimination() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let new = base().exclude(Expr::is(0, 0));
        assert_eq!(
            describe_change(&pin, Some(&origin), &new),
            ["the excludes, the required rows, the focus sets or the engine version changed"]
        );
        assert!(describe_change(&pin, None, &new).is_empty());
    }

    #[test]
    fn a_new_required_row_is_named_when_the_pin_lacks_it() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let missing = (0..3u8)
            .flat_map(|a| (0..2u8).map(move |b| vec![a, b, UNSET]))
            .find(|r| !pin.rows[0].starts_with(&r[..2]))
            .expect("some pair is not the first pinned row's");
        let new = base().require(missing);
        assert_eq!(
            describe_change(&pin, Some(&origin), &new),
            ["the required rows changed"]
        );
    }

    #[test]
    fn changes_are_described() {
        let spec = base();
        let (pin, origin) = pinned(&spec);
        let mut new = base().lambda(2).strength(3);
        new.factors[0].levels[2] = "w".into();
        new.factors.push(Factor::new("d", ["on", "off"]));
        let d = describe_change(&pin, Some(&origin), &new);
        assert_eq!(
            d,
            [
                "factor `d` added",
                "level `w` of `a` added",
                "level `z` of `a` removed",
                "strength raised from 2 to 3",
                "lambda raised from 1 to 2"
            ]
        );
    }
}
