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

/// Rows of the covering array of n family rows, constant rows kept once.
pub(super) fn size(q: usize, t: usize, n: usize) -> Option<usize> {
    let block = q.checked_pow(t as u32)?;
    n.checked_mul(block - q)?.checked_add(q)
}

/// The points of AG(t − 1, q), with the arithmetic the search needs.
struct Geometry<'a> {
    field: &'a Field,
    /// Coordinates of each point (base-q digits of its number).
    coords: Vec<Vec<u8>>,
}

impl<'a> Geometry<'a> {
    fn new(field: &'a Field, dim: usize) -> Self {
        let q = field.order();
        let coords = (0..q.pow(dim as u32))
            .map(|mut p| {
                (0..dim)
                    .map(|_| {
                        let d = (p % q) as u8;
                        p /= q;
                        d
                    })
                    .collect()
            })
            .collect();
        Geometry { field, coords }
    }

    fn point(&self, coords: &[u8]) -> usize {
        let q = self.field.order();
        coords.iter().rev().fold(0, |acc, &d| acc * q + d as usize)
    }

    /// The differences p_i − p_0 in row-echelon form, or `None` when they are dependent.
    fn basis(&self, pts: &[usize]) -> Option<Vec<Vec<u8>>> {
        let f = self.field;
        let q = f.order();
        let base = &self.coords[pts[0]];
        let mut rows: Vec<Vec<u8>> = pts[1..]
            .iter()
            .map(|&p| {
                self.coords[p]
                    .iter()
                    .zip(base)
                    .map(|(&a, &b)| f.sub(a, b))
                    .collect()
            })
            .collect();
        let dim = base.len();
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

    fn independent(&self, pts: &[usize]) -> bool {
        self.basis(pts).is_some()
    }

    /// The affine span of independent points, as point numbers; `None` when dependent.
    fn span(&self, pts: &[usize]) -> Option<Vec<usize>> {
        let basis = self.basis(pts)?;
        let f = self.field;
        let q = f.order();
        let mut out = vec![self.coords[pts[0]].clone()];
        for b in &basis {
            let mut next = Vec::with_capacity(out.len() * q);
            for p in &out {
                for a in 0..q as u8 {
                    next.push(p.iter().zip(b).map(|(&x, &y)| f.add(x, f.mul(a, y))).collect());
                }
            }
            out = next;
        }
        Some(out.iter().map(|c| self.point(c)).collect())
    }
}

/// An n × k family of points of AG(t − 1, q) in which every t columns are affinely
/// independent in some row, if the bounded search finds one.
pub(super) fn family(field: &Field, t: usize, k: usize, n: usize) -> Option<Vec<Vec<usize>>> {
    if t < 2 || k < t || n == 0 {
        return None;
    }
    let geo = Geometry::new(field, t - 1);
    let points = geo.coords.len();
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
    let pts_of = |cells: &[usize], s: usize| -> Vec<usize> {
        sets[s * t..(s + 1) * t]
            .iter()
            .map(|&c| cells[c as usize])
            .collect()
    };
    let mut good: Vec<Vec<bool>> = cells
        .iter()
        .map(|row| (0..nsets).map(|s| geo.independent(&pts_of(row, s))).collect())
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
    let per_visit = (t * t + points / field.order()) as u64;
    let mut steps = 0u64;
    let mut delta = vec![0i64; points];
    while !open.is_empty() {
        let s = open[rng.index(open.len())];
        let r = rng.index(n);
        let c = sets[s * t + rng.index(t)] as usize;
        steps += through[c].len() as u64 * per_visit;
        if steps > MAX_STEPS {
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
            if let Some(span) = geo.span(&others) {
                for p in span {
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
            let now = geo.independent(&pts_of(&cells[r], s2));
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

/// The covering array of a family: the linear array of the vectors (1, x) of each row,
/// the constant rows kept once (they repeat in every block, so a later block's add
/// nothing at index 1).
pub(super) fn rows(field: &Field, t: usize, family: &[Vec<usize>]) -> Vec<Row> {
    let geo = Geometry::new(field, t - 1);
    let mut out: Vec<Row> = Vec::new();
    for (i, cells) in family.iter().enumerate() {
        let cols: Vec<Vec<u8>> = cells
            .iter()
            .map(|&p| [&[1u8][..], &geo.coords[p]].concat())
            .collect();
        let block = orthogonal::linear(field, &cols);
        let constant = |r: &Row| r.iter().all(|&x| x == r[0]);
        out.extend(block.into_iter().filter(|r| i == 0 || !constant(r)));
    }
    out
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
