//! The product of two strength-two covering arrays: CA(N + M − v; 2, k·l, v) from
//! CA(N; 2, k, v) and CA(M; 2, l, v) that both hold the v constant rows (Colbourn,
//! Martirosyan, Mullen, Shasha, Sherwood & Yucas 2006, "Products of mixed covering arrays
//! of strength two", from memory; the proof below is what the code relies on).
//!
//! Its size grows with the factors', which grow with ln k, so the product's grows as
//! 2·(a + b·ln √k) = 2a + b·ln k: the slope of a good small design at any k, for the cost
//! of two designs on about √k columns — the method for very many factors at t = 2,
//! where a greedy over every pair of columns gets slow.
//!
//! Columns are the pairs (i, j), i < k, j < l, numbered i·l + j. Each row of A shows its
//! entry of column i in every column (i, ·); each row of B shows its entry of column j.
//! Two columns (i, j), (i′, j′): with i ≠ i′ the rows from A show every pair of levels;
//! with i = i′ (so j ≠ j′) the rows from B show every pair of distinct levels — a pair
//! (x, x) may come from a constant row of B, but the rows from A include that very row
//! (A's constant row x), so B's constant rows are left out: v rows fewer.

use crate::factor::Row;

/// The v constant rows over k columns: what both factors of a product must hold.
pub(crate) fn constant_rows(v: usize, k: usize) -> Vec<Row> {
    (0..v).map(|x| vec![x as u8; k]).collect()
}

/// The product of `a` (columns 0 … k − 1) and `b` (columns 0 … l − 1), its first
/// `levels.len()` columns, each symbol x shown as level x mod the column's count (a
/// collapse keeps coverage, see `transform`). Rows of `b` that are constant with a value
/// some constant row of `a` shows are left out (see the module's proof).
pub(crate) fn product(a: &[Row], b: &[Row], levels: &[usize]) -> Vec<Row> {
    let columns = levels.len();
    let l = b.first().map_or(0, |r| r.len());
    debug_assert!(a.first().is_some_and(|r| r.len() * l >= columns));
    let constant = |r: &Row| r.first().filter(|&&x| r.iter().all(|&y| y == x)).copied();
    let in_a: Vec<u8> = a.iter().filter_map(constant).collect();
    let from_a = a
        .iter()
        .map(|r| (0..columns).map(|c| r[c / l] % levels[c] as u8).collect::<Row>());
    let from_b = b
        .iter()
        .filter(|r| !constant(r).is_some_and(|x| in_a.contains(&x)))
        .map(|r| (0..columns).map(|c| r[c % l] % levels[c] as u8).collect::<Row>());
    from_a.chain(from_b).collect()
}

/// The factors' column counts for k columns: ⌈√k⌉ and what makes up the rest.
pub(crate) fn split(k: usize) -> (usize, usize) {
    let k1 = (1..=k).find(|&x| x * x >= k).unwrap_or(k);
    (k1, k.div_ceil(k1))
}
