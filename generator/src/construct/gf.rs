//! Finite fields GF(q), q = p^m ≤ 256: the arithmetic under Bose, Bush, Rao–Hamming and
//! Paley. Extension fields are GF(p)\[x\] modulo a monic irreducible polynomial found at run
//! time by trial division (no polynomial is tabled), so every q that can index a level
//! (and 256, which collapses onto 255 levels) is available.
//!
//! An element is the integer Σ cᵢ·pⁱ of its coefficients c₀ … c_{m−1} (c₀ the constant
//! term), so the prime field is 0 … p−1 in the usual order and 0 / 1 are the field's zero
//! and one. Addition and multiplication are full q × q tables (64 KiB each at q = 256),
//! multiplication built from discrete logarithms of a primitive element.

/// Largest field order supported: elements must fit a `u8`.
pub const MAX_ORDER: usize = 256;

/// `Some((p, m))` when `q = p^m` for a prime p and m ≥ 1.
pub fn prime_power(q: usize) -> Option<(usize, u32)> {
    if q < 2 {
        return None;
    }
    let p = (2..)
        .take_while(|d| d * d <= q)
        .find(|d| q.is_multiple_of(*d))
        .unwrap_or(q);
    let (mut rest, mut m) = (q, 0);
    while rest % p == 0 {
        rest /= p;
        m += 1;
    }
    (rest == 1).then_some((p, m))
}

/// Whether n is prime (trial division; n is small wherever this is used).
pub fn is_prime(n: usize) -> bool {
    n >= 2 && (2..).take_while(|d| d * d <= n).all(|d| !n.is_multiple_of(d))
}

/// The field GF(q) as lookup tables.
#[derive(Clone, Debug)]
pub struct Field {
    q: usize,
    add: Vec<u8>,
    mul: Vec<u8>,
    neg: Vec<u8>,
}

impl Field {
    /// GF(q), or `None` when q is not a prime power or exceeds [`MAX_ORDER`].
    pub fn new(q: usize) -> Option<Field> {
        if q > MAX_ORDER {
            return None;
        }
        let (p, m) = prime_power(q)?;
        let modulus = if m == 1 {
            vec![0, 1] // x: reduction never happens on constants
        } else {
            first_irreducible(p, m as usize)?
        };
        let digits = |a: usize| -> Vec<usize> {
            let mut d = vec![0; m as usize];
            let mut a = a;
            for slot in d.iter_mut() {
                *slot = a % p;
                a /= p;
            }
            d
        };
        let undigits = |d: &[usize]| d.iter().rev().fold(0, |acc, &c| acc * p + c);
        let all_digits: Vec<Vec<usize>> = (0..q).map(digits).collect();
        let mut add = vec![0u8; q * q];
        for (a, da) in all_digits.iter().enumerate() {
            for (b, db) in all_digits.iter().enumerate() {
                // digit-wise sum mod p, read back as Σ cᵢ·pⁱ
                let sum = da
                    .iter()
                    .zip(db)
                    .rev()
                    .fold(0, |acc, (x, y)| acc * p + (x + y) % p);
                add[a * q + b] = sum as u8;
            }
        }
        let slow_mul = |a: usize, b: usize| undigits(&poly_mul_mod(&digits(a), &digits(b), &modulus, p));
        // a primitive element: one whose powers reach every nonzero element
        let (exp, log) = (1..q)
            .find_map(|g| {
                let mut exp = Vec::with_capacity(q - 1);
                let mut log = vec![usize::MAX; q];
                let mut x = 1;
                for i in 0..q - 1 {
                    if log[x] != usize::MAX {
                        return None;
                    }
                    log[x] = i;
                    exp.push(x);
                    x = slow_mul(x, g);
                }
                (x == 1).then_some((exp, log))
            })
            // a finite field's multiplicative group is cyclic, and the modulus is
            // irreducible, so some element generates it
            .expect("GF(q)* is cyclic");
        let mut mul = vec![0u8; q * q];
        for a in 1..q {
            for b in 1..q {
                mul[a * q + b] = exp[(log[a] + log[b]) % (q - 1)] as u8;
            }
        }
        let neg = (0..q)
            .map(|a| (0..q).find(|&b| add[a * q + b] == 0).unwrap_or(0) as u8)
            .collect();
        Some(Field { q, add, mul, neg })
    }

    /// Number of elements.
    pub fn order(&self) -> usize {
        self.q
    }

    /// a + b.
    pub fn add(&self, a: u8, b: u8) -> u8 {
        self.add[a as usize * self.q + b as usize]
    }

    /// a − b.
    pub fn sub(&self, a: u8, b: u8) -> u8 {
        self.add(a, self.neg(b))
    }

    /// a · b.
    pub fn mul(&self, a: u8, b: u8) -> u8 {
        self.mul[a as usize * self.q + b as usize]
    }

    /// −a.
    pub fn neg(&self, a: u8) -> u8 {
        self.neg[a as usize]
    }

    /// aⁿ.
    pub fn pow(&self, a: u8, n: usize) -> u8 {
        (0..n).fold(1, |acc, _| self.mul(acc, a))
    }

    /// Which elements are nonzero squares (the quadratic character is +1 on them).
    pub fn squares(&self) -> Vec<bool> {
        let mut sq = vec![false; self.q];
        for a in 1..self.q {
            sq[self.mul(a as u8, a as u8) as usize] = true;
        }
        sq
    }
}

/// The first monic irreducible polynomial of degree m over GF(p), in the order of its
/// lower coefficients read as a base-p number: a deterministic choice.
fn first_irreducible(p: usize, m: usize) -> Option<Vec<usize>> {
    let count = p.checked_pow(m as u32)?;
    (0..count).map(|c| monic(p, m, c)).find(|f| is_irreducible(f, p))
}

/// The monic polynomial of degree m whose lower coefficients are the base-p digits of c.
fn monic(p: usize, m: usize, mut c: usize) -> Vec<usize> {
    let mut f = Vec::with_capacity(m + 1);
    for _ in 0..m {
        f.push(c % p);
        c /= p;
    }
    f.push(1);
    f
}

/// Trial division by every monic polynomial of degree 1 … m/2.
pub(crate) fn is_irreducible(f: &[usize], p: usize) -> bool {
    let m = f.len() - 1;
    for d in 1..=m / 2 {
        for c in 0..p.pow(d as u32) {
            let g = monic(p, d, c);
            if poly_rem(f, &g, p).iter().all(|&x| x == 0) {
                return false;
            }
        }
    }
    m >= 1
}

/// Remainder of a divided by the monic g over GF(p), as a vector of length deg g.
fn poly_rem(a: &[usize], g: &[usize], p: usize) -> Vec<usize> {
    let d = g.len() - 1;
    let mut r = a.to_vec();
    while r.len() > d {
        let lead = r[r.len() - 1];
        let shift = r.len() - 1 - d;
        if lead != 0 {
            for (i, &gi) in g.iter().enumerate() {
                r[shift + i] = (r[shift + i] + (p - lead) * gi) % p;
            }
        }
        r.pop();
    }
    r.resize(d, 0);
    r
}

/// a · b mod the monic modulus over GF(p); a and b have length deg modulus.
fn poly_mul_mod(a: &[usize], b: &[usize], modulus: &[usize], p: usize) -> Vec<usize> {
    let mut prod = vec![0; a.len() + b.len()];
    for (i, &x) in a.iter().enumerate() {
        for (j, &y) in b.iter().enumerate() {
            prod[i + j] = (prod[i + j] + x * y) % p;
        }
    }
    poly_rem(&prod, modulus, p)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prime_powers_are_recognised() {
        // brute force: q is a power of its smallest divisor, which is prime
        let brute = |q: usize| {
            (2..=q).any(|p| {
                (2..p).all(|d| p % d != 0) && {
                    let mut x = p;
                    while x < q {
                        x *= p;
                    }
                    x == q
                }
            })
        };
        for q in 0..=300 {
            assert_eq!(prime_power(q).is_some(), brute(q), "q = {q}");
            if let Some((p, m)) = prime_power(q) {
                assert_eq!(p.pow(m), q);
                assert!(is_prime(p));
            }
        }
        // 54 primes below 256 and 16 proper prime powers up to 256 (4, 8, 16, 32, 64,
        // 128, 256, 9, 27, 81, 243, 25, 125, 49, 121, 169): common practice
        assert_eq!((0..=256).filter(|&q| prime_power(q).is_some()).count(), 54 + 16);
        assert_eq!(prime_power(6), None);
        assert_eq!(prime_power(256), Some((2, 8)));
        assert_eq!(prime_power(243), Some((3, 5)));
    }

    /// The field axioms, checked over every pair and (where given) every triple.
    fn check_axioms(f: &Field, all_triples: bool) {
        let q = f.order();
        let els: Vec<u8> = (0..q).map(|a| a as u8).collect();
        for &a in &els {
            assert_eq!(f.add(a, 0), a);
            assert_eq!(f.mul(a, 1), a);
            assert_eq!(f.mul(a, 0), 0);
            assert_eq!(f.add(a, f.neg(a)), 0);
            if a != 0 {
                assert!(els.iter().any(|&b| f.mul(a, b) == 1), "q={q}: {a} has no inverse");
            }
            for &b in &els {
                assert_eq!(f.add(a, b), f.add(b, a));
                assert_eq!(f.mul(a, b), f.mul(b, a));
                // no zero divisors
                assert_eq!(f.mul(a, b) == 0, a == 0 || b == 0);
                assert_eq!(f.add(f.sub(a, b), b), a);
            }
        }
        let triple = |a: u8, b: u8, c: u8| {
            assert_eq!(f.add(f.add(a, b), c), f.add(a, f.add(b, c)));
            assert_eq!(f.mul(f.mul(a, b), c), f.mul(a, f.mul(b, c)));
            assert_eq!(f.mul(a, f.add(b, c)), f.add(f.mul(a, b), f.mul(a, c)));
        };
        if all_triples {
            for &a in &els {
                for &b in &els {
                    for &c in &els {
                        triple(a, b, c);
                    }
                }
            }
        } else {
            // a fixed spread of triples (common practice for large tables)
            for i in 0..20_000usize {
                let (a, b, c) = ((i * 7919) % q, (i * 104_729 + 3) % q, (i * 1_299_709 + 11) % q);
                triple(a as u8, b as u8, c as u8);
            }
        }
        // characteristic p: 1 + 1 + … (p times) = 0, and no fewer
        let (p, _) = prime_power(q).unwrap();
        let mut s = 0u8;
        for i in 1..=p {
            s = f.add(s, 1);
            assert_eq!(s == 0, i == p);
        }
    }

    #[test]
    fn field_axioms_exhaustively_for_small_orders() {
        for q in [2, 3, 4, 5, 7, 8, 9, 11, 13, 16, 25, 27, 32, 49, 64] {
            let f = Field::new(q).unwrap();
            check_axioms(&f, true);
        }
    }

    #[test]
    fn field_axioms_for_large_orders() {
        for q in [81, 121, 125, 128, 169, 243, 251, 256] {
            let f = Field::new(q).unwrap();
            check_axioms(&f, false);
        }
    }

    #[test]
    fn every_prime_power_up_to_256_is_a_field() {
        for q in 2..=256 {
            assert_eq!(Field::new(q).is_some(), prime_power(q).is_some(), "q = {q}");
        }
        assert!(Field::new(257).is_none());
    }

    #[test]
    fn moduli_are_irreducible_by_brute_force() {
        // an independent check: a degree-m polynomial is irreducible iff it has no root
        // and no factor of degree 2 … m/2; here by evaluating every product of two monic
        // polynomials of complementary degrees
        for q in [4, 8, 9, 16, 25, 27, 32, 49, 64, 81, 121, 125, 128, 169, 243, 256] {
            let (p, m) = prime_power(q).unwrap();
            let m = m as usize;
            // the modulus Field::new reduces by
            let modulus = first_irreducible(p, m).unwrap();
            assert_eq!(modulus.len(), m + 1);
            assert_eq!(modulus[m], 1);
            for d in 1..=m / 2 {
                for a in 0..p.pow(d as u32) {
                    for b in 0..p.pow((m - d) as u32) {
                        let (ga, gb) = (monic(p, d, a), monic(p, m - d, b));
                        let mut prod = vec![0; m + 1];
                        for (i, x) in ga.iter().enumerate() {
                            for (j, y) in gb.iter().enumerate() {
                                prod[i + j] = (prod[i + j] + x * y) % p;
                            }
                        }
                        assert_ne!(prod, modulus, "q={q}: modulus factors");
                    }
                }
            }
        }
    }

    #[test]
    fn gf4_matches_the_textbook_table() {
        // GF(4) = {0, 1, ω, ω²} with ω² = ω + 1 (Lidl & Niederreiter 1997, "Finite
        // Fields", example of GF(4); from memory). ω is x, encoded 2; ω² = x + 1 is 3.
        let f = Field::new(4).unwrap();
        // x² + x + 1, the only irreducible quadratic
        assert_eq!(first_irreducible(2, 2), Some(vec![1, 1, 1]));
        assert_eq!(f.mul(2, 2), 3);
        assert_eq!(f.mul(2, 3), 1);
        assert_eq!(f.mul(3, 3), 2);
        assert_eq!(f.add(2, 3), 1);
        assert_eq!(f.add(1, 1), 0);
    }

    #[test]
    fn squares_are_half_of_the_nonzero_elements_in_odd_order() {
        // exactly (q−1)/2 nonzero squares in GF(q), q odd (Euler's criterion, common
        // practice); every element a square in characteristic 2
        for q in [3, 5, 7, 9, 11, 25, 27, 49, 81, 121, 125, 243] {
            let f = Field::new(q).unwrap();
            assert_eq!(f.squares().iter().filter(|&&s| s).count(), (q - 1) / 2, "q = {q}");
            // −1 is a square iff q ≡ 1 (mod 4)
            assert_eq!(f.squares()[f.neg(1) as usize], q % 4 == 1, "q = {q}");
        }
        for q in [4, 8, 16, 256] {
            assert_eq!(
                Field::new(q).unwrap().squares().iter().filter(|&&s| s).count(),
                q - 1
            );
        }
    }

    #[test]
    fn multiplicative_group_is_cyclic_of_order_q_minus_1() {
        for q in [16, 27, 125, 256] {
            let f = Field::new(q).unwrap();
            for a in 1..q {
                assert_eq!(f.pow(a as u8, q - 1), 1, "q={q} a={a}");
            }
        }
    }
}
