//! Orthogonal arrays of index 2 from difference matrices: a D(2q, 2q; q) over GF(q) — a
//! 2q × 2q matrix in which, for any two columns, the differences of their entries show
//! every field element exactly twice (a generalised Hadamard matrix GH(q, 2)) — gives
//! OA(2q²; 2, 2q, q) of index 2 (Bose & Bush 1952), and with the row number of the matrix
//! as a factor of 2q levels split into 2 × q (the expansive replacement) the mixed
//! OA(2q²; 2, 2^1 q^(2q+1)): Masuyama 1957's family (from memory), e.g. the classical OA(18; 2^1 3^7) and
//! OA(50; 2^1 5^11) (N. J. A. Sloane's library of orthogonal arrays, from memory).
//!
//! Rows are the pairs (i, x), i a row of D, x ∈ GF(q); column c shows d_ic + x. Two
//! columns c, c′ show (y, y′) where d_ic − d_ic′ = y − y′, for exactly two i, and then
//! one x each: index 2. The row number i meets any column c in each
//! pair (i, y) once (x = y − d_ic): index 2 for i ÷ 2 (q levels) and q for i mod 2
//! (2 levels) against any column, and q for the two parts against each other.
//!
//! The matrix, for odd q, with η a non-square: rows (a, e) and columns (b, f), a, b ∈
//! GF(q), e, f ∈ {0, 1}, entry c_ef·a² + s_ef·a·b + h_ef(b) with
//! (c, s, h) = (0, 1, b²/4η), (1, 1, b²/4), (0, 1, b²/4), (η, η, η·b²/4) for
//! ef = 00, 01, 10, 11 (worked out here in the manner of the quadratic constructions of
//! generalised Hadamard matrices; the independent checker validates every array).
//! Two columns with f = f′ differ by a·s·(b − b′) + const within a block e, a bijection
//! of a: every value once per block, twice in all. With f ≠ f′ each block's difference is
//! a quadratic α_e·a² + β_e·a + γ_e, which takes the value v exactly 1 + χ((v − m_e)/α_e)
//! times (χ the quadratic character, m_e its extreme value); α_0 = −1 and α_1 = −η have
//! opposite characters, and the h terms make m_0 = m_1, so the two blocks together take
//! every value exactly twice.

use super::gf::Field;
use crate::factor::Row;

/// D(2q, 2q; q) as rows of field elements (row (a, e) at 2a + e, column (b, f) at
/// 2b + f), for odd q.
pub(super) fn matrix(field: &Field) -> Option<Vec<Vec<u8>>> {
    let q = field.order();
    if q < 3 || q.is_multiple_of(2) {
        return None;
    }
    let squares = field.squares();
    let eta = (1..q as u8).find(|&x| !squares[x as usize])?;
    let inv = |x: u8| field.pow(x, q - 2);
    let four = field.add(field.add(1, 1), field.add(1, 1));
    let quarter = inv(four);
    let entry = |a: u8, e: usize, b: u8, f: usize| -> u8 {
        let (c, s, h) = match (e, f) {
            (0, 0) => (0, 1, field.mul(quarter, inv(eta))),
            (0, 1) | (1, 0) => ((e == 0) as u8, 1, quarter),
            _ => (eta, eta, field.mul(eta, quarter)),
        };
        let square = field.mul(c, field.mul(a, a));
        let cross = field.mul(s, field.mul(a, b));
        field.add(field.add(square, cross), field.mul(h, field.mul(b, b)))
    };
    Some(
        (0..2 * q)
            .map(|i| {
                (0..2 * q)
                    .map(|j| entry((i / 2) as u8, i % 2, (j / 2) as u8, j % 2))
                    .collect()
            })
            .collect(),
    )
}

/// The 2q² rows of the orthogonal array: for row i of `d` and x ∈ GF(q), the row number's
/// two parts (i mod 2, i ÷ 2), then d_ic + x for every column c.
pub(super) fn array(field: &Field, d: &[Vec<u8>]) -> Vec<Row> {
    let q = field.order();
    let mut rows = Vec::with_capacity(d.len() * q);
    for (i, di) in d.iter().enumerate() {
        for x in 0..q as u8 {
            let mut row: Row = vec![(i % 2) as u8, (i / 2) as u8];
            row.extend(di.iter().map(|&e| field.add(e, x)));
            rows.push(row);
        }
    }
    rows
}
