//! The spec fingerprint: what a pin records to tell whether its rows still belong to the
//! spec written in the source.
//!
//! It is an FNV-1a 64 hash ([`crate::hash`]) of a fixed, length-prefixed encoding of
//! everything that determines the rows: the factor names and level labels in order, the
//! strength, λ, the seed, the excludes (as formulas over level indices, so rewording an
//! exclude without changing its meaning keeps the pin), required rows, and
//! [`heddle_generator::ENGINE_VERSION`], then the focus sets (factor indices sorted,
//! strength, λ) when there are any — appended only then, so that a spec without focus
//! sets keeps the fingerprint it had before they existed. The encoding starts with a tag
//! naming its own version; changing it changes every fingerprint, which is what a change
//! of meaning must do.

use std::fmt;
use std::str::FromStr;

use heddle_generator::{ENGINE_VERSION, Expr, Spec};

use crate::hash::Fnv64;

/// Names the encoding below; bump it whenever the encoding changes.
const TAG: &str = "heddle-spec-fingerprint/1";

/// A spec fingerprint, written as 16 lowercase hex digits.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Fingerprint(pub u64);

impl fmt::Display for Fingerprint {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:016x}", self.0)
    }
}

impl FromStr for Fingerprint {
    type Err = String;

    fn from_str(s: &str) -> Result<Self, String> {
        if s.len() != 16
            || !s
                .bytes()
                .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
        {
            return Err(format!("`{s}` is not a fingerprint (16 lowercase hex digits)"));
        }
        u64::from_str_radix(s, 16)
            .map(Fingerprint)
            .map_err(|e| format!("`{s}` is not a fingerprint: {e}"))
    }
}

/// The fingerprint of a spec made by engine version [`ENGINE_VERSION`].
pub fn fingerprint(spec: &Spec) -> Fingerprint {
    fingerprint_with_engine(spec, ENGINE_VERSION)
}

/// The fingerprint of a spec made by a given engine version.
pub fn fingerprint_with_engine(spec: &Spec, engine_version: u32) -> Fingerprint {
    let mut h = Fnv64::new();
    h.str(TAG).u64(u64::from(engine_version));
    h.u64(spec.factors.len() as u64);
    for f in &spec.factors {
        h.str(&f.name).u64(f.levels.len() as u64);
        for l in &f.levels {
            h.str(l);
        }
    }
    h.u64(spec.strength as u64)
        .u64(u64::from(spec.lambda))
        .u64(spec.seed);
    h.u64(spec.excludes.len() as u64);
    for e in &spec.excludes {
        expr(&mut h, e);
    }
    h.u64(spec.required.len() as u64);
    for row in &spec.required {
        h.u64(row.len() as u64).bytes(row);
    }
    if !spec.focus.is_empty() {
        h.str("focus").u64(spec.focus.len() as u64);
        for f in &spec.focus {
            // sorted: the order the factors are named in does not change the rows
            let factors = f.sorted();
            h.u64(factors.len() as u64);
            for &c in &factors {
                h.u64(c as u64);
            }
            h.u64(f.strength as u64).u64(u64::from(f.lambda));
        }
    }
    Fingerprint(h.finish())
}

fn expr(h: &mut Fnv64, e: &Expr) {
    match e {
        Expr::Is { factor, level } => {
            h.bytes(b"I").u64(*factor as u64).u64(u64::from(*level));
        }
        Expr::Not(inner) => {
            h.bytes(b"N");
            expr(h, inner);
        }
        Expr::And(a, b) => {
            h.bytes(b"A");
            expr(h, a);
            expr(h, b);
        }
        Expr::Or(a, b) => {
            h.bytes(b"O");
            expr(h, a);
            expr(h, b);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use heddle_generator::{Factor, Focus, UNSET};

    fn spec() -> Spec {
        Spec::new(vec![
            Factor::new("batch", ["1", "8", "64"]),
            Factor::new("codec", ["Codec::Plain", "Codec::Rle", "Codec::Delta"]),
            Factor::new("checksum", ["true", "false"]),
        ])
        .strength(2)
        .lambda(2)
        .seed(11)
        .exclude(Expr::is(1, 2).and(Expr::is(0, 0)))
    }

    // Golden value for determinism (labelled as such): computed once by this code and
    // kept so that any change of the encoding, the hash or its inputs is noticed. It
    // only changes together with `TAG` or `ENGINE_VERSION` (the engine's is 1 here).
    #[test]
    fn golden_fingerprint() {
        assert_eq!(fingerprint_with_engine(&spec(), 1).to_string(), GOLDEN);
    }
    const GOLDEN: &str = "21825a0706bffdfc";

    #[test]
    fn every_input_counts() {
        let base = fingerprint(&spec());
        let mut changed = vec![
            spec().strength(3),
            spec().lambda(1),
            spec().seed(12),
            spec().exclude(Expr::is(2, 0)),
            spec().require(vec![0, 0, 0]),
            // a required row with a cell left to the engine is another spec again
            spec().require(vec![0, UNSET, 0]),
            spec().require(vec![0, 0, 0]).require(vec![1, UNSET, UNSET]),
            spec().focus(Focus::new(vec![0, 1, 2], 3)),
            spec().focus(Focus::new(vec![0, 1, 2], 3).lambda(2)),
            spec().focus(Focus::new(vec![0, 1], 2)),
            spec()
                .focus(Focus::new(vec![0, 1, 2], 3))
                .focus(Focus::new(vec![0, 1, 2], 3)),
        ];
        let mut s = spec();
        s.factors[0].levels[2] = "65".into();
        changed.push(s);
        let mut s = spec();
        s.factors[2].name = "crc".into();
        changed.push(s);
        let mut s = spec();
        s.factors[1].levels.swap(0, 1);
        changed.push(s);
        let mut s = spec();
        s.excludes[0] = Expr::is(0, 0).and(Expr::is(1, 2));
        changed.push(s);
        for c in &changed {
            assert_ne!(fingerprint(c), base, "{c:?}");
        }
        let prints: std::collections::BTreeSet<Fingerprint> = changed.iter().map(fingerprint).collect();
        assert_eq!(
            prints.len(),
            changed.len(),
            "two changed specs share a fingerprint"
        );
        assert_ne!(
            fingerprint_with_engine(&spec(), 2),
            fingerprint_with_engine(&spec(), 1)
        );
        assert_eq!(fingerprint(&spec()), base);
        // naming a focus set's factors in another order is the same spec
        assert_eq!(
            fingerprint(&spec().focus(Focus::new(vec![2, 0, 1], 3))),
            fingerprint(&spec().focus(Focus::new(vec![0, 1, 2], 3)))
        );
    }

    #[test]
    fn text_round_trip() {
        let f = Fingerprint(0x00ab_cdef_0123_4567);
        assert_eq!(f.to_string(), "00abcdef01234567");
        assert_eq!("00abcdef01234567".parse::<Fingerprint>(), Ok(f));
        assert!("00ABCDEF01234567".parse::<Fingerprint>().is_err());
        assert!("abc".parse::<Fingerprint>().is_err());
    }
}
