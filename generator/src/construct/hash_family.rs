//! Covering arrays from covering perfect hash families of permutation vectors (Sherwood,
//! Martirosyan & Colbourn 2006, "Covering arrays of higher strength from permutation
//! vectors"; the search for the families as in Colbourn, Lanus & Sarkar 2018).
//!
//! Over GF(q), a column vector g ∈ GF(q)^t gives the column u ↦ u·g of the linear array
//! on all q^t rows u, and t such columns are covered exactly once when their vectors are
//! linearly independent. One linear array cannot hold many columns that way (Bush's
//! bound), but n of them can share the work: an n × k array whose cells are vectors, in
//! which every t columns are independent in at least one row (a covering perfect hash
//! family), gives a covering array of strength t of n·q^t rows, one linear array per row.
//! Sherwood's vectors are (1, x), x ∈ GF(q)^(t−1): t of them are independent exactly when
//! the points x are affinely independent, and every block holds the same q constant rows
//! (u = (c, 0, …, 0)), kept once: n·(q^t − q) + q rows.
//!
//! The family is found by a min-conflicts local search (deterministic, bounded in steps):
//! pick a t-set no row covers, a row and a column of it, and move that cell to the point
//! that leaves fewest t-sets uncovered. A replaced point is independent of the other t − 1
//! exactly when it is off their affine span, so each t-set through the cell costs one span
//! (q^(t−2) points) rather than a test per candidate point.

use std::collections::BTreeSet;

use super::gf::Field;
use super::orthogonal;
use crate::factor::Row;
use crate::rng::{Rng, stream};

/// Most t-sets a family is searched for (the search keeps a counter per t-set and row).
pub(super) const MAX_SETS: usize = 1 << 17;

/// Most steps (t-sets visited through a moved cell, times the work per visit) one search
/// may take. Measured in a release build: a family that exists is found within a few
/// percent of this (q = 3, 4, 5 at t = 3 and q = 3 at t = 4, up to the largest k found
/// with budgets eight times larger), and a failed search costs about 0.15 s.
const MAX_STEPS: u64 = 1 << 22;

/// Which vectors a family's cells hold.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Kind {
    /// Sherwood's (1, x): every block holds the q constant rows, kept once.
    Affine,
    /// Any nonzero vector, up to a scalar (the points of PG(t − 1, q)): more columns fit,
    /// but blocks share only the zero row (Colbourn, Lanus & Sarkar 2018's general
    /// families).
    Projective,
}

impl Kind {
    fn name(self) -> &'static str {
        match self {
            Kind::Affine => "affine",
            Kind::Projective => "projective",
        }
    }
}

/// Rows of the covering array of n family rows, the rows every block shares kept once.
pub(super) fn size(kind: Kind, q: usize, t: usize, n: usize) -> Option<usize> {
    let block = q.checked_pow(t as u32)?;
    let shared = match kind {
        Kind::Affine => q,
        Kind::Projective => 1,
    };
    n.checked_mul(block - shared)?.checked_add(shared)
}

/// The longest vectors (and most of them) [`Geometry::independent`] handles on the stack.
const SMALL: usize = 8;

/// The vectors of GF(q)^t a cell may hold, with the arithmetic the search needs.
struct Geometry<'a> {
    field: &'a Field,
    /// The candidate vectors.
    vectors: Vec<Vec<u8>>,
    /// For every vector of GF(q)^t by number (base-q digits, first coordinate most
    /// significant), the candidate it stands for (itself, or its normalised multiple), or
    /// `NONE`.
    candidate: Vec<u32>,
}

const NONE: u32 = u32::MAX;

impl<'a> Geometry<'a> {
    fn new(field: &'a Field, t: usize, kind: Kind) -> Self {
        let q = field.order();
        let all: Vec<Vec<u8>> = (0..q.pow(t as u32))
            .map(|mut p| {
                let mut v: Vec<u8> = (0..t)
                    .map(|_| {
                        let d = (p % q) as u8;
                        p /= q;
                        d
                    })
                    .collect();
                v.reverse();
                v
            })
            .collect();
        let mut vectors = Vec::new();
        let mut candidate = vec![NONE; all.len()];
        let number = |v: &[u8]| v.iter().fold(0usize, |acc, &d| acc * q + d as usize);
        for (i, v) in all.iter().enumerate() {
            let first = v.iter().copied().find(|&x| x != 0);
            let keep = match kind {
                Kind::Affine => v[0] == 1,
                Kind::Projective => first == Some(1),
            };
            if keep {
                candidate[i] = vectors.len() as u32;
                vectors.push(v.clone());
            }
        }
        if kind == Kind::Projective {
            // every nonzero vector stands for its normalised multiple
            for (i, v) in all.iter().enumerate() {
                if let Some(f) = v.iter().copied().find(|&x| x != 0) {
                    let inv = field.pow(f, q - 2);
                    let norm: Vec<u8> = v.iter().map(|&x| field.mul(x, inv)).collect();
                    candidate[i] = candidate[number(&norm)];
                }
            }
        }
        Geometry {
            field,
            vectors,
            candidate,
        }
    }

    /// The vectors in row-echelon form, or `None` when they are dependent.
    fn basis(&self, pts: &[usize]) -> Option<Vec<Vec<u8>>> {
        let f = self.field;
        let q = f.order();
        let mut rows: Vec<Vec<u8>> = pts.iter().map(|&p| self.vectors[p].clone()).collect();
        let dim = rows.first().map_or(0, Vec::len);
        let mut col = 0;
        for i in 0..rows.len() {
            // a pivot for row i in the first column at or after `col` where one exists
            loop {
                if col == dim {
                    return None;
                }
                if let Some(j) = (i..rows.len()).find(|&j| rows[j][col] != 0) {
                    rows.swap(i, j);
                    break;
                }
                col += 1;
            }
            let inv = f.pow(rows[i][col], q - 2);
            let pivot: Vec<u8> = rows[i].iter().map(|&x| f.mul(x, inv)).collect();
            for row in rows.iter_mut().skip(i + 1) {
                let m = row[col];
                if m != 0 {
                    for (x, &p) in row.iter_mut().zip(&pivot) {
                        *x = f.sub(*x, f.mul(m, p));
                    }
                }
            }
            rows[i] = pivot;
            col += 1;
        }
        Some(rows)
    }

    /// Whether the vectors are linearly independent: [`Geometry::basis`] without its
    /// allocations, for the search's inner loop (vectors of up to [`SMALL`] entries).
    fn independent(&self, pts: &[usize]) -> bool {
        let dim = pts.first().map_or(0, |&p| self.vectors[p].len());
        if dim > SMALL || pts.len() > SMALL {
            return self.basis(pts).is_some();
        }
        let f = self.field;
        let q = f.order();
        let mut rows = [[0u8; SMALL]; SMALL];
        for (row, &p) in rows.iter_mut().zip(pts) {
            row[..dim].copy_from_slice(&self.vectors[p]);
        }
        let n = pts.len();
        let mut col = 0;
        for i in 0..n {
            loop {
                if col == dim {
                    return false;
                }
                if let Some(j) = (i..n).find(|&j| rows[j][col] != 0) {
                    rows.swap(i, j);
                    break;
                }
                col += 1;
            }
            let inv = f.pow(rows[i][col], q - 2);
            let pivot = rows[i].map(|x| f.mul(x, inv));
            for row in rows[i + 1..n].iter_mut() {
                let m = row[col];
                if m != 0 {
                    for (x, &p) in row[..dim].iter_mut().zip(&pivot) {
                        *x = f.sub(*x, f.mul(m, p));
                    }
                }
            }
            col += 1;
        }
        true
    }

    /// The candidates in the linear span of independent vectors (each once, marked in
    /// `seen` with `stamp`); `false` (and nothing listed) when they are dependent. Sherwood's candidates in the
    /// span are its affine combinations (coefficients summing to 1), so only those are
    /// listed for them.
    fn span(&self, kind: Kind, pts: &[usize], seen: &mut [u32], stamp: u32, out: &mut Vec<usize>) -> bool {
        out.clear();
        if !self.independent(pts) {
            return false;
        }
        let f = self.field;
        let q = f.order();
        let dim = self.vectors[pts[0]].len();
        let (first, rest) = (&self.vectors[pts[0]], &pts[1..]);
        // every combination a·rest of all but the first vector (coefficients counted in
        // base q), with the sum of its coefficients; two buffers a call, none a combination
        let mut coeff = vec![0u8; rest.len()];
        let mut v = vec![0u8; dim];
        loop {
            v.fill(0);
            let mut sum = 0u8;
            for (&a, &p) in coeff.iter().zip(rest) {
                if a != 0 {
                    for (x, &y) in v[..dim].iter_mut().zip(&self.vectors[p]) {
                        *x = f.add(*x, f.mul(a, y));
                    }
                    sum = f.add(sum, a);
                }
            }
            let (from, to) = match kind {
                Kind::Affine => {
                    let a = f.sub(1, sum);
                    (a, a)
                }
                Kind::Projective => (0, q as u8 - 1),
            };
            for a in from..=to {
                let number = v
                    .iter()
                    .zip(first)
                    .fold(0usize, |acc, (&x, &y)| acc * q + f.add(x, f.mul(a, y)) as usize);
                let c = self.candidate[number];
                if c != NONE && seen[c as usize] != stamp {
                    seen[c as usize] = stamp;
                    out.push(c as usize);
                }
            }
            // the next coefficients, or done
            let mut i = 0;
            while i < rest.len() {
                coeff[i] += 1;
                if (coeff[i] as usize) < q {
                    break;
                }
                coeff[i] = 0;
                i += 1;
            }
            if i == rest.len() {
                return true;
            }
        }
    }
}

/// An n × k family of vectors of this kind (numbered as the geometry numbers them) in
/// which every t columns are linearly independent in some row, if the bounded search
/// finds one.
pub(super) fn family(field: &Field, kind: Kind, t: usize, k: usize, n: usize) -> Option<Vec<Vec<usize>>> {
    if hopeless(kind, field.order(), t, k, n) {
        return None;
    }
    family_within(field, kind, t, k, n, MAX_STEPS)
}

/// Whether a family is too unlikely to be found to spend a search on: a random family
/// leaves C(k, t)·(1 − p)^n t-sets uncovered (p: the chance that t random vectors of the
/// kind are independent), and the search closed that gap up to about twice its n·k cells
/// at the largest k it reached (measured, release build: affine q = 3, 4, 5 at t = 3 and
/// q = 3 at t = 4, n = 2 … 4, ratios 1.0 to 2.2), never at three times.
fn hopeless(kind: Kind, q: usize, t: usize, k: usize, n: usize) -> bool {
    let q = q as f64;
    let p: f64 = (1..t)
        .map(|i| match kind {
            // affine: the next point off the flat of the first i, of q^(i−1) points
            Kind::Affine => 1.0 - q.powi(i as i32 - 1) / q.powi(t as i32 - 1),
            // projective: the next point off the span of the first i
            Kind::Projective => 1.0 - (q.powi(i as i32) - 1.0) / (q.powi(t as i32) - 1.0),
        })
        .product();
    let sets: f64 = (0..t).map(|i| (k - i) as f64 / (i + 1) as f64).product();
    sets * (1.0 - p).powi(n as i32) > 3.0 * (n * k) as f64
}

/// [`family`] within `max_steps` steps.
fn family_within(
    field: &Field,
    kind: Kind,
    t: usize,
    k: usize,
    n: usize,
    max_steps: u64,
) -> Option<Vec<Vec<usize>>> {
    if t < 2 || k < t || n == 0 {
        return None;
    }
    let geo = Geometry::new(field, t, kind);
    let points = geo.vectors.len();
    let mut seen = vec![0u32; points];
    let mut stamp = 0u32;
    let sets = subsets(k, t, MAX_SETS)?;
    let nsets = sets.len() / t;
    let mut through: Vec<Vec<u32>> = vec![Vec::new(); k];
    for s in 0..nsets {
        for &c in &sets[s * t..(s + 1) * t] {
            through[c as usize].push(s as u32);
        }
    }
    let mut rng = Rng::new(0, stream::CONSTRUCT);
    let mut cells: Vec<Vec<usize>> = (0..n)
        .map(|_| (0..k).map(|_| rng.index(points)).collect())
        .collect();
    // with room for every column, the first row holds distinct vectors and stays: the
    // search then only has to place the t-sets that row leaves dependent (for k = all
    // points, a permutation of the points taking each dependent t-set to an independent
    // one), a far smaller space
    let anchored = k <= points && n >= 2;
    if anchored {
        cells[0] = (0..k).collect();
    }
    // the points of t-set `s` in a row, into a buffer reused across the search
    let mut buffer: Vec<usize> = Vec::with_capacity(t);
    let mut set_independent = |cells: &[usize], s: usize| -> bool {
        buffer.clear();
        buffer.extend(sets[s * t..(s + 1) * t].iter().map(|&c| cells[c as usize]));
        geo.independent(&buffer)
    };
    let mut good: Vec<Vec<bool>> = cells
        .iter()
        .map(|row| (0..nsets).map(|s| set_independent(row, s)).collect())
        .collect();
    let mut cover: Vec<u32> = (0..nsets)
        .map(|s| good.iter().filter(|g| g[s]).count() as u32)
        .collect();
    // the uncovered t-sets, and where each stands in that list
    let mut open: Vec<usize> = (0..nsets).filter(|&s| cover[s] == 0).collect();
    let mut at = vec![usize::MAX; nsets];
    for (i, &s) in open.iter().enumerate() {
        at[s] = i;
    }
    let per_visit = (t * t
        + match kind {
            Kind::Affine => field.order().pow(t as u32 - 2),
            Kind::Projective => field.order().pow(t as u32 - 1),
        }) as u64;
    let mut steps = 0u64;
    let mut delta = vec![0i64; points];
    let mut span: Vec<usize> = Vec::new();
    while !open.is_empty() {
        let s = open[rng.index(open.len())];
        let r = if anchored {
            1 + rng.index(n - 1)
        } else {
            rng.index(n)
        };
        let c = sets[s * t + rng.index(t)] as usize;
        steps += through[c].len() as u64 * per_visit;
        if steps > max_steps {
            return None;
        }
        // change in uncovered t-sets for each point the cell could take
        delta.iter_mut().for_each(|d| *d = 0);
        for &s2 in &through[c] {
            let s2 = s2 as usize;
            let others: Vec<usize> = sets[s2 * t..(s2 + 1) * t]
                .iter()
                .filter(|&&c2| c2 as usize != c)
                .map(|&c2| cells[r][c2 as usize])
                .collect();
            let was_open = i64::from(cover[s2] == 0);
            let rest = cover[s2] - u32::from(good[r][s2]);
            let if_dependent = i64::from(rest == 0) - was_open;
            // off the span every point leaves the t-set covered here (a change of
            // −was_open for all points alike, left out); on it, none does
            stamp += 1;
            if geo.span(kind, &others, &mut seen, stamp, &mut span) {
                for &p in &span {
                    delta[p] += if_dependent + was_open;
                }
            }
        }
        let current = cells[r][c];
        let p = if rng.below(16) == 0 {
            rng.index(points)
        } else {
            let best = (0..points)
                .filter(|&p| p != current)
                .map(|p| delta[p])
                .min()
                .unwrap_or(0);
            let ties: Vec<usize> = (0..points)
                .filter(|&p| p != current && delta[p] == best)
                .collect();
            if ties.is_empty() {
                continue;
            }
            ties[rng.index(ties.len())]
        };
        cells[r][c] = p;
        for &s2 in &through[c] {
            let s2 = s2 as usize;
            let now = set_independent(&cells[r], s2);
            if now == good[r][s2] {
                continue;
            }
            good[r][s2] = now;
            if now {
                cover[s2] += 1;
                if cover[s2] == 1 {
                    let i = at[s2];
                    open.swap_remove(i);
                    if let Some(&moved) = open.get(i) {
                        at[moved] = i;
                    }
                    at[s2] = usize::MAX;
                }
            } else {
                cover[s2] -= 1;
                if cover[s2] == 0 {
                    at[s2] = open.len();
                    open.push(s2);
                }
            }
        }
    }
    Some(cells)
}

/// The covering array of a family: the linear array of each row's vectors, the rows an
/// earlier block holds already left out (they add nothing at index 1).
pub(super) fn rows(field: &Field, kind: Kind, t: usize, family: &[Vec<usize>]) -> Vec<Row> {
    let geo = Geometry::new(field, t, kind);
    let vectors: Vec<Vec<Vec<u8>>> = family
        .iter()
        .map(|cells| cells.iter().map(|&p| geo.vectors[p].clone()).collect())
        .collect();
    rows_of_vectors(field, &vectors)
}

/// The blocks one after another, a constant row shown by an earlier block left out (the
/// rows blocks share are constant: u = (c, 0, …, 0) under Sherwood's vectors, u = 0
/// under any; other repeats are rare and harmless, and not looked for).
fn rows_of_vectors(field: &Field, family: &[Vec<Vec<u8>>]) -> Vec<Row> {
    let mut constant: BTreeSet<Row> = BTreeSet::new();
    let mut out: Vec<Row> = Vec::new();
    for cols in family {
        let block = orthogonal::linear(field, cols);
        for r in block {
            if r.iter().all(|&x| x == r[0]) && !constant.insert(r.clone()) {
                continue;
            }
            out.push(r);
        }
    }
    out
}

/// CA(2q³ − 1; 3, q² + q + 1, q) (Raaphorst, Moura & Stevens 2014, from linear feedback
/// shift register sequences, from memory): the family of two rows P_i and P_−i, where
/// P_i = A^i·e runs over the points of PG(2, q) along a Singer cycle A (the companion
/// matrix of a cubic whose root has projective order q² + q + 1). The lines are the
/// translates D + j of a planar difference set D in those indices, and −D is an oval
/// (Jungnickel & Vedder 1984, from memory), so three columns collinear in the first row
/// are not in the second: every triple is independent in one of them. Its first
/// `columns` columns; `None` for t ≠ 3 or past the plane's points.
pub(super) fn singer_pair(field: &Field, columns: usize) -> Option<Vec<Row>> {
    let q = field.order();
    let points = q * q + q + 1;
    if columns > points {
        return None;
    }
    let orbit = singer_orbit(field)?;
    let first: Vec<Vec<u8>> = orbit[..columns].to_vec();
    let second: Vec<Vec<u8>> = (0..columns)
        .map(|i| orbit[(points - i) % points].clone())
        .collect();
    Some(rows_of_vectors(field, &[first, second]))
}

/// The points of PG(2, q) in the order of a Singer cycle, from the first cubic
/// x³ = a·x² + b·x + c (in the order of (a, b, c)) whose orbit of (0, 0, 1) meets every
/// point.
fn singer_orbit(field: &Field) -> Option<Vec<Vec<u8>>> {
    let q = field.order();
    let points = q * q + q + 1;
    let normal = |v: &[u8]| -> Vec<u8> {
        let f = v.iter().copied().find(|&x| x != 0).unwrap_or(1);
        let inv = field.pow(f, q - 2);
        v.iter().map(|&x| field.mul(x, inv)).collect()
    };
    for a in 0..q as u8 {
        for b in 0..q as u8 {
            for c in 1..q as u8 {
                // the shift register: (s_i, s_i+1, s_i+2) ↦ (s_i+1, s_i+2, c·s_i + b·s_i+1 + a·s_i+2)
                let start = vec![0u8, 0, 1];
                let mut v = start.clone();
                let mut orbit = Vec::with_capacity(points);
                loop {
                    orbit.push(normal(&v));
                    let next = field.add(
                        field.mul(c, v[0]),
                        field.add(field.mul(b, v[1]), field.mul(a, v[2])),
                    );
                    v = vec![v[1], v[2], next];
                    if normal(&v) == start || orbit.len() > points {
                        break;
                    }
                }
                if orbit.len() == points {
                    return Some(orbit);
                }
            }
        }
    }
    None
}

/// The method name of a family's array.
pub(super) fn name(kind: Kind, q: usize, t: usize, n: usize) -> String {
    format!("hash-family(q={q},t={t},n={n},{})", kind.name())
}

/// The t-subsets of k columns in lexicographic order, flattened, or `None` past `most`.
fn subsets(k: usize, t: usize, most: usize) -> Option<Vec<u16>> {
    let mut out = Vec::new();
    let mut s: Vec<usize> = (0..t).collect();
    loop {
        if out.len() / t >= most || k > u16::MAX as usize {
            return None;
        }
        out.extend(s.iter().map(|&c| c as u16));
        // the next subset: raise the last entry that can rise, reset those after it
        let Some(i) = (0..t).rev().find(|&i| s[i] < k - t + i) else {
            return Some(out);
        };
        s[i] += 1;
        for j in i + 1..t {
            s[j] = s[j - 1] + 1;
        }
    }
}
