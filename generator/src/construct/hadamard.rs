//! Hadamard matrices (n × n, entries ±1, H·Hᵀ = n·I) and the binary arrays they give.
//!
//! Orders come from Sylvester (1867, orders 2^a), Paley (1933: order q + 1 for a prime
//! power q ≡ 3 mod 4, order 2(q + 1) for q ≡ 1 mod 4) and Kronecker products of these.
//! With the first column made all +1, the other n − 1 columns are an orthogonal array of
//! strength 2 and index n/4 (any two columns are orthogonal to each other and to the
//! first); the fold-over [H; −H] is one of strength 3 and index n/4 on all n columns.

use std::collections::BTreeMap;

use super::gf::{self, Field};
use crate::factor::Row;

/// How to build a Hadamard matrix of some order.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Recipe {
    /// Sylvester's doubling, applied a times to (1): order 2^a.
    Sylvester(u32),
    /// Paley's first construction over GF(q), q ≡ 3 (mod 4): order q + 1.
    PaleyI(usize),
    /// Paley's second construction over GF(q), q ≡ 1 (mod 4): order 2(q + 1).
    PaleyII(usize),
    /// The Kronecker product of two matrices: order the product of theirs.
    Kronecker(Box<Recipe>, Box<Recipe>),
}

/// Largest order searched for (it bounds memory: one byte per entry).
pub const MAX_ORDER: usize = 4096;

impl Recipe {
    /// The order of the matrix it builds.
    pub fn order(&self) -> usize {
        match self {
            Recipe::Sylvester(a) => 1 << a,
            Recipe::PaleyI(q) => q + 1,
            Recipe::PaleyII(q) => 2 * (q + 1),
            Recipe::Kronecker(a, b) => a.order() * b.order(),
        }
    }

    /// A short name for reports.
    pub fn name(&self) -> String {
        match self {
            Recipe::Sylvester(_) => "sylvester".into(),
            Recipe::PaleyI(q) => format!("paley-1 q={q}"),
            Recipe::PaleyII(q) => format!("paley-2 q={q}"),
            Recipe::Kronecker(a, b) => format!("{}x{}", a.order(), b.name()),
        }
    }

    /// Builds the matrix.
    pub fn build(&self) -> Hadamard {
        match self {
            Recipe::Sylvester(a) => {
                let mut h = Hadamard { n: 1, h: vec![1] };
                for _ in 0..*a {
                    h = kronecker(
                        &Hadamard {
                            n: 2,
                            h: vec![1, 1, 1, -1],
                        },
                        &h,
                    );
                }
                h
            }
            Recipe::PaleyI(q) => paley_one(&Residues::new(*q)),
            Recipe::PaleyII(q) => paley_two(&Residues::new(*q)),
            Recipe::Kronecker(a, b) => kronecker(&a.build(), &b.build()),
        }
    }
}

/// Whether Paley's constructions can be built over GF(q): a prime (any size, by residues)
/// or a prime power within [`gf::MAX_ORDER`].
fn paley_field(q: usize) -> bool {
    gf::is_prime(q) || (q <= gf::MAX_ORDER && gf::prime_power(q).is_some())
}

/// The recipes of order n that need no product (Sylvester, Paley I, Paley II).
pub fn direct_recipes(n: usize) -> Vec<Recipe> {
    let mut out = Vec::new();
    if n.is_power_of_two() {
        out.push(Recipe::Sylvester(n.trailing_zeros()));
    }
    if n >= 4 && n.is_multiple_of(4) {
        let q = n - 1;
        if q % 4 == 3 && paley_field(q) {
            out.push(Recipe::PaleyI(q));
        }
        let q = n / 2 - 1;
        if q % 4 == 1 && paley_field(q) {
            out.push(Recipe::PaleyII(q));
        }
    }
    out
}

/// Hadamard orders up to a limit, each with one recipe: the first direct one, else a
/// product of two smaller known orders (the smaller factor as small as possible).
pub fn known_orders(limit: usize) -> BTreeMap<usize, Recipe> {
    let limit = limit.min(MAX_ORDER);
    let mut known: BTreeMap<usize, Recipe> = BTreeMap::new();
    for n in 1..=limit {
        if n > 2 && n % 4 != 0 {
            continue;
        }
        if let Some(r) = direct_recipes(n).into_iter().next() {
            known.insert(n, r);
            continue;
        }
        let product = (2..)
            .take_while(|d| d * d <= n)
            .filter(|d| n % d == 0)
            .find_map(|d| Some((known.get(&d)?.clone(), known.get(&(n / d))?.clone())));
        if let Some((a, b)) = product {
            known.insert(n, Recipe::Kronecker(Box::new(a), Box::new(b)));
        }
    }
    known
}

/// A Hadamard matrix, row-major.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Hadamard {
    n: usize,
    h: Vec<i8>,
}

impl Hadamard {
    /// The order.
    #[cfg(test)]
    pub fn order(&self) -> usize {
        self.n
    }

    /// Entry (i, j), ±1.
    pub fn at(&self, i: usize, j: usize) -> i8 {
        self.h[i * self.n + j]
    }

    /// Whether H·Hᵀ = n·I and every entry is ±1 (checked in full).
    #[cfg(test)]
    pub fn is_hadamard(&self) -> bool {
        let n = self.n;
        if self.h.iter().any(|&x| x != 1 && x != -1) {
            return false;
        }
        (0..n).all(|i| {
            (i..n).all(|j| {
                let dot: i64 = (0..n).map(|c| (self.at(i, c) * self.at(j, c)) as i64).sum();
                dot == if i == j { n as i64 } else { 0 }
            })
        })
    }

    /// The binary array of strength 2, index n/4: every row multiplied by its first
    /// entry, the first column dropped, +1 ↦ level 0 and −1 ↦ level 1. n rows, n − 1
    /// columns.
    pub fn strength_two(&self) -> Vec<Row> {
        (0..self.n)
            .map(|i| {
                let s = self.at(i, 0);
                (1..self.n).map(|j| u8::from(self.at(i, j) * s < 0)).collect()
            })
            .collect()
    }

    /// The fold-over [H; −H] as a binary array: 2n rows, n columns, strength 3 and index
    /// n/4 (the odd-degree terms of the counting identity cancel between H and −H, the
    /// degree-2 terms vanish by orthogonality).
    pub fn fold_over(&self) -> Vec<Row> {
        let mut rows = Vec::with_capacity(2 * self.n);
        for sign in [1i8, -1] {
            for i in 0..self.n {
                rows.push((0..self.n).map(|j| u8::from(self.at(i, j) * sign < 0)).collect());
            }
        }
        rows
    }
}

fn kronecker(a: &Hadamard, b: &Hadamard) -> Hadamard {
    let n = a.n * b.n;
    let mut h = vec![0i8; n * n];
    for i in 0..a.n {
        for j in 0..a.n {
            let x = a.at(i, j);
            for k in 0..b.n {
                for l in 0..b.n {
                    h[(i * b.n + k) * n + j * b.n + l] = x * b.at(k, l);
                }
            }
        }
    }
    Hadamard { n, h }
}

/// GF(q) as far as Paley needs it: subtraction and the quadratic character. Primes use
/// residues (so q may exceed 256); other prime powers use [`Field`].
struct Residues {
    q: usize,
    field: Option<Field>,
    square: Vec<bool>,
}

impl Residues {
    fn new(q: usize) -> Self {
        if gf::is_prime(q) {
            let mut square = vec![false; q];
            for a in 1..q {
                square[a * a % q] = true;
            }
            Residues {
                q,
                field: None,
                square,
            }
        } else {
            // `direct_recipes` only names prime powers within the field limit
            let field = Field::new(q).expect("paley over a supported prime power");
            let square = field.squares();
            Residues {
                q,
                field: Some(field),
                square,
            }
        }
    }

    /// χ(a − b): 0, +1 or −1.
    fn chi_diff(&self, a: usize, b: usize) -> i8 {
        let d = match &self.field {
            Some(f) => f.sub(a as u8, b as u8) as usize,
            None => (a + self.q - b) % self.q,
        };
        if d == 0 {
            0
        } else if self.square[d] {
            1
        } else {
            -1
        }
    }
}

/// Paley I: with the Jacobsthal matrix Q_ab = χ(a − b) (skew for q ≡ 3 mod 4),
/// H = I + [[0, 1ᵀ], [−1, Q]].
fn paley_one(f: &Residues) -> Hadamard {
    let q = f.q;
    let n = q + 1;
    let mut h = vec![0i8; n * n];
    for i in 0..n {
        for j in 0..n {
            h[i * n + j] = match (i, j) {
                _ if i == j => 1,
                (0, _) => 1,
                (_, 0) => -1,
                _ => f.chi_diff(i - 1, j - 1),
            };
        }
    }
    Hadamard { n, h }
}

/// Paley II: with the symmetric conference matrix C = [[0, 1ᵀ], [1, Q]] (q ≡ 1 mod 4),
/// H = C ⊗ [[1, 1], [1, −1]] + I ⊗ [[1, −1], [−1, −1]].
fn paley_two(f: &Residues) -> Hadamard {
    let q = f.q;
    let m = q + 1;
    let c = |i: usize, j: usize| -> i8 {
        match (i, j) {
            (0, 0) => 0,
            (0, _) | (_, 0) => 1,
            _ => f.chi_diff(i - 1, j - 1),
        }
    };
    let n = 2 * m;
    let mut h = vec![0i8; n * n];
    for i in 0..m {
        for j in 0..m {
            let block: [i8; 4] = if i == j {
                [1, -1, -1, -1]
            } else {
                let x = c(i, j);
                [x, x, x, -x]
            };
            for (k, &b) in block.iter().enumerate() {
                h[(2 * i + k / 2) * n + 2 * j + k % 2] = b;
            }
        }
    }
    Hadamard { n, h }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_recipe_builds_a_hadamard_matrix() {
        // the defining identity H·Hᵀ = n·I, checked in full for every known order ≤ 100
        let known = known_orders(100);
        for (&n, r) in &known {
            let h = r.build();
            assert_eq!(h.order(), n);
            assert!(h.is_hadamard(), "order {n} by {}", r.name());
        }
        for n in [12, 20, 28, 36, 44, 52, 60, 68, 76, 84, 100] {
            for r in direct_recipes(n) {
                assert!(r.build().is_hadamard(), "order {n} by {}", r.name());
            }
        }
        // Paley II over a prime above 256 and Paley I over GF(243) (extension field)
        assert!(Recipe::PaleyII(269).build().is_hadamard());
        assert!(Recipe::PaleyI(243).build().is_hadamard());
    }

    #[test]
    fn known_orders_cover_multiples_of_four_to_88() {
        // every multiple of 4 up to 88 comes from Sylvester, Paley or a product, and 92 is
        // the first that needs another method (Williamson 1944; Baumert, Golomb & Hall
        // 1962): Hedayat, Sloane & Stufken 1999, "Orthogonal Arrays", ch. 7 (from memory)
        let known = known_orders(100);
        for n in (4..=88).step_by(4) {
            assert!(known.contains_key(&n), "order {n}");
        }
        assert!(!known.contains_key(&92));
        assert!(known.contains_key(&1) && known.contains_key(&2));
        assert!(!known.contains_key(&6));
    }

    #[test]
    fn strength_two_array_has_index_n_over_4() {
        for n in [4, 8, 12, 20, 24, 28] {
            let rows = known_orders(n)[&n].build().strength_two();
            assert_eq!(rows.len(), n);
            for a in 0..n - 1 {
                for b in a + 1..n - 1 {
                    let mut c = [0; 4];
                    for r in &rows {
                        c[(r[a] * 2 + r[b]) as usize] += 1;
                    }
                    assert_eq!(c, [n / 4; 4], "n={n} columns {a},{b}");
                }
            }
        }
    }

    #[test]
    fn fold_over_has_strength_three() {
        for n in [4, 8, 12, 16, 20] {
            let rows = known_orders(n)[&n].build().fold_over();
            for a in 0..n {
                for b in a + 1..n {
                    for c in b + 1..n {
                        let mut cnt = [0; 8];
                        for r in &rows {
                            cnt[(r[a] * 4 + r[b] * 2 + r[c]) as usize] += 1;
                        }
                        assert_eq!(cnt, [n / 4; 8], "n={n}");
                    }
                }
            }
        }
    }
}
