//! Orthogonal arrays: every t-way combination exactly the same number of times, so they
//! meet the counting bound. The full factorial and the zero-sum array need no field;
//! Bose, Bush and Rao–Hamming are *linear* arrays over GF(q): the rows are all vectors u
//! of GF(q)^m and column c shows u·g_c. When any t of the column vectors g_c are linearly
//! independent, u ↦ (u·g_c)_{c∈T} is onto GF(q)^t for each t-set T, with every value hit
//! q^(m−t) times — an orthogonal array of strength t and index q^(m−t).

use super::gf::Field;
use crate::factor::Row;

/// Every combination of the levels, first column fastest.
pub fn full_factorial(levels: &[usize]) -> Vec<Row> {
    let total: usize = levels.iter().product();
    let mut rows = Vec::with_capacity(total);
    let mut row = vec![0u8; levels.len()];
    for _ in 0..total {
        rows.push(row.clone());
        for (c, &v) in levels.iter().enumerate() {
            row[c] += 1;
            if (row[c] as usize) < v {
                break;
            }
            row[c] = 0;
        }
    }
    rows
}

/// The zero-sum array for k = t + 1 factors of any level counts: the t factors with the
/// most levels as a full factorial, the remaining one (the fewest levels, w) showing the
/// sum of the others modulo w. Rows: the product of the t largest counts, the counting
/// bound, so it is optimal.
///
/// Why it covers: a t-set of the full-factorial factors is covered by construction. A
/// t-set that leaves out full-factorial factor j fixes every other full-factorial level
/// and the sum s; the rows with x_j ≡ s − (the others) (mod w) cover it, and there is such
/// an x_j because j has at least w levels, so 0 … v_j − 1 meets every residue mod w.
pub fn zero_sum(levels: &[usize]) -> Vec<Row> {
    let k = levels.len();
    let Some(last) = (0..k).min_by_key(|&c| (levels[c], std::cmp::Reverse(c))) else {
        return Vec::new();
    };
    let w = levels[last];
    let rest: Vec<usize> = (0..k).filter(|&c| c != last).collect();
    let rest_levels: Vec<usize> = rest.iter().map(|&c| levels[c]).collect();
    full_factorial(&rest_levels)
        .into_iter()
        .map(|ff| {
            let mut row = vec![0u8; k];
            let mut sum = 0usize;
            for (&c, &l) in rest.iter().zip(&ff) {
                row[c] = l;
                sum += l as usize;
            }
            row[last] = (sum % w) as u8;
            row
        })
        .collect()
}

/// The column vectors of Bush (1952), Bose (1938) for t = 2: g_x = (1, x, x², …, x^(t−1))
/// for every x ∈ GF(q) and g_∞ = (0, …, 0, 1). Any t of them are independent (a
/// Vandermonde determinant, or one with the point at infinity), so with t ≤ q these q + 1
/// columns give OA(q^t; t, q + 1, q).
///
/// For q even and t = 3 the vector (0, 1, 0) can be added (the nucleus, which makes the
/// conic x ↦ (1, x, x²) with its point at infinity a hyperoval of PG(2, q)): OA(q³; 3,
/// q + 2, q). With it, (1, x, x²), (1, y, y²), (0, 1, 0) have determinant x² − y² =
/// (x − y)² ≠ 0 in characteristic 2; the other new triples are plainly independent.
pub fn bush_columns(field: &Field, t: usize, nucleus: bool) -> Vec<Vec<u8>> {
    let q = field.order();
    let mut cols: Vec<Vec<u8>> = (0..q)
        .map(|x| (0..t).map(|i| field.pow(x as u8, i)).collect())
        .collect();
    let mut inf = vec![0u8; t];
    inf[t - 1] = 1;
    cols.push(inf);
    if nucleus && t == 3 && q.is_multiple_of(2) {
        cols.push(vec![0, 1, 0]);
    }
    cols
}

/// Columns of a Bush array (Bose for t = 2): q + 1, or q + 2 with the hyperoval.
pub fn bush_capacity(q: usize, t: usize) -> usize {
    if t > q {
        return t + 1;
    }
    q + 1 + usize::from(t == 3 && q.is_multiple_of(2))
}

/// The column vectors of the Rao–Hamming array (Rao 1947): one nonzero vector of GF(q)^m
/// per point of PG(m − 1, q) (first nonzero coordinate 1). Two distinct points are
/// independent, so this is OA(q^m; 2, (q^m − 1)/(q − 1), q) of index q^(m−2).
pub fn rao_hamming_columns(field: &Field, m: usize) -> Vec<Vec<u8>> {
    let q = field.order();
    let mut cols = Vec::new();
    for lead in 0..m {
        // vectors (0, …, 0, 1, *, …, *) with the leading 1 at position `lead`
        let mut tail = vec![0u8; m - 1 - lead];
        loop {
            let mut g = vec![0u8; m];
            g[lead] = 1;
            g[lead + 1..].copy_from_slice(&tail);
            cols.push(g);
            if !next_vector(&mut tail, q) {
                break;
            }
        }
    }
    cols
}

/// Columns of the Rao–Hamming array.
pub fn rao_hamming_capacity(q: usize, m: u32) -> usize {
    (q.pow(m) - 1) / (q - 1)
}

/// The points of an elliptic quadric of PG(3, q), an ovoid: the projective points
/// (first nonzero coordinate 1) where Q(x) = x₀x₁ + x₂² + b·x₂x₃ + c·x₃² vanishes, with
/// z² + bz + c irreducible over GF(q) (the first such (b, c) in element order). There are
/// q² + 1 of them and no three are collinear (Bose 1947 for the maximal caps of PG(3, q);
/// Qvist 1952; both from memory, the tests count the points and check the array), so any
/// three are linearly independent: as columns of a linear array they give
/// OA(q⁴; 3, q² + 1, q) of index q — the counting bound at λ = q, where Bush's arrays
/// stop at q + 1 (or q + 2) columns.
///
/// Why q² + 1 points: f(x₂, x₃) = x₂² + b·x₂x₃ + c·x₃² vanishes only at (0, 0) (z² + bz + c
/// has no root). For (x₂, x₃) ≠ (0, 0), x₀x₁ = −f ≠ 0: x₁ is any of q − 1 values and fixes
/// x₀, (q² − 1)(q − 1) vectors; for (x₂, x₃) = (0, 0), x₀x₁ = 0: 2(q − 1) vectors. In all
/// (q − 1)(q² + 1) nonzero vectors, q² + 1 points.
pub fn ovoid_columns(field: &Field) -> Vec<Vec<u8>> {
    let els = || (0..field.order()).map(|a| a as u8);
    // z² + bz + c without a root
    let Some((b, c)) = els()
        .flat_map(|b| els().map(move |c| (b, c)))
        .find(|&(b, c)| els().all(|z| field.add(field.add(field.mul(z, z), field.mul(b, z)), c) != 0))
    else {
        // every finite field has an irreducible quadratic; only GF(q) tables are used here
        return Vec::new();
    };
    let form = |x: &[u8]| {
        let f = field.add(
            field.add(field.mul(x[2], x[2]), field.mul(b, field.mul(x[2], x[3]))),
            field.mul(c, field.mul(x[3], x[3])),
        );
        field.add(field.mul(x[0], x[1]), f)
    };
    let mut points = Vec::new();
    for lead in 0..4 {
        let mut tail = vec![0u8; 3 - lead];
        loop {
            let mut x = vec![0u8; 4];
            x[lead] = 1;
            x[lead + 1..].copy_from_slice(&tail);
            if form(&x) == 0 {
                points.push(x);
            }
            if !next_vector(&mut tail, field.order()) {
                break;
            }
        }
    }
    points
}

/// Columns of the ovoid array.
pub fn ovoid_capacity(q: usize) -> usize {
    q * q + 1
}

/// The linear array of the given column vectors (all of one length m): q^m rows, row u
/// showing u·g_c in column c, with u in lexicographic order.
pub fn linear(field: &Field, columns: &[Vec<u8>]) -> Vec<Row> {
    let m = columns.first().map_or(0, Vec::len);
    let q = field.order();
    let mut rows = Vec::with_capacity(q.pow(m as u32));
    let mut u = vec![0u8; m];
    loop {
        rows.push(
            columns
                .iter()
                .map(|g| {
                    u.iter()
                        .zip(g)
                        .fold(0, |acc, (&a, &b)| field.add(acc, field.mul(a, b)))
                })
                .collect(),
        );
        if !next_vector(&mut u, q) {
            return rows;
        }
    }
}

/// Advances a vector over 0 … q−1 in lexicographic order; false after the last.
fn next_vector(v: &mut [u8], q: usize) -> bool {
    for x in v.iter_mut().rev() {
        if (*x as usize) + 1 < q {
            *x += 1;
            return true;
        }
        *x = 0;
    }
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Exact index of an array at strength t: every t-set shows every combination the
    /// same number of times (brute force, independent of the construction).
    fn oa_index(rows: &[Row], levels: &[usize], t: usize) -> Option<usize> {
        let all: Vec<usize> = (0..levels.len()).collect();
        let mut index = None;
        let mut uniform = true;
        crate::interactions::for_each_subset(&all, t, |cols| {
            let size: usize = cols.iter().map(|&c| levels[c]).product();
            let mut counts = vec![0usize; size];
            for r in rows {
                let idx = cols.iter().fold(0, |acc, &c| acc * levels[c] + r[c] as usize);
                counts[idx] += 1;
            }
            let first = counts[0];
            uniform &= counts.iter().all(|&n| n == first) && index.is_none_or(|i| i == first);
            index = Some(first);
        });
        index.filter(|_| uniform)
    }

    #[test]
    fn bush_is_an_orthogonal_array() {
        // Bush 1952: OA(q^t; t, q+1, q) for t ≤ q; Bose 1938 for t = 2
        for (q, t) in [
            (3, 2),
            (4, 2),
            (5, 2),
            (7, 2),
            (8, 2),
            (9, 2),
            (3, 3),
            (4, 3),
            (5, 3),
            (5, 4),
        ] {
            let f = Field::new(q).unwrap();
            let rows = linear(&f, &bush_columns(&f, t, false));
            assert_eq!(rows.len(), q.pow(t as u32));
            assert_eq!(oa_index(&rows, &vec![q; q + 1], t), Some(1), "q={q} t={t}");
        }
    }

    #[test]
    fn hyperoval_adds_a_column_for_even_q() {
        // Bush 1952: OA(q³; 3, q+2, q) for q even
        for q in [2, 4, 8] {
            let f = Field::new(q).unwrap();
            let cols = bush_columns(&f, 3, true);
            assert_eq!(cols.len(), bush_capacity(q, 3));
            assert_eq!(cols.len(), q + 2);
            let rows = linear(&f, &cols);
            assert_eq!(oa_index(&rows, &vec![q; q + 2], 3), Some(1), "q={q}");
        }
        // for odd q the vector is refused: a conic of PG(2, q), q odd, has no nucleus
        assert_eq!(bush_columns(&Field::new(5).unwrap(), 3, true).len(), 6);
    }

    #[test]
    fn rao_hamming_is_an_orthogonal_array() {
        // Rao 1947: OA(q^m; 2, (q^m−1)/(q−1), q), index q^(m−2)
        for (q, m) in [(2, 3), (2, 4), (3, 3), (4, 3), (5, 3), (3, 4)] {
            let f = Field::new(q).unwrap();
            let cols = rao_hamming_columns(&f, m);
            assert_eq!(cols.len(), rao_hamming_capacity(q, m as u32));
            let rows = linear(&f, &cols);
            let k = cols.len();
            assert_eq!(
                oa_index(&rows, &vec![q; k], 2),
                Some(q.pow(m as u32 - 2)),
                "q={q} m={m}"
            );
        }
    }

    #[test]
    fn ovoids_have_q_squared_plus_one_points_and_give_strength_three() {
        // an elliptic quadric of PG(3, q) has q² + 1 points, no three collinear (Bose 1947;
        // Qvist 1952, from memory): OA(q⁴; 3, q² + 1, q) of index q, checked here in full
        for q in [2, 3, 4, 5] {
            let f = Field::new(q).unwrap();
            let cols = ovoid_columns(&f);
            assert_eq!(cols.len(), ovoid_capacity(q), "q={q}");
            let rows = linear(&f, &cols);
            assert_eq!(rows.len(), q.pow(4));
            assert_eq!(oa_index(&rows, &vec![q; cols.len()], 3), Some(q), "q={q}");
        }
        // larger fields, including GF(8) and GF(9): the point count
        for q in [7, 8, 9, 11, 16] {
            assert_eq!(ovoid_columns(&Field::new(q).unwrap()).len(), q * q + 1, "q={q}");
        }
        // and four points of an ovoid can be coplanar (a plane meets it in an oval of
        // q + 1 points), so strength 4 fails: the index is not uniform at t = 4
        let f = Field::new(3).unwrap();
        let rows = linear(&f, &ovoid_columns(&f));
        assert_eq!(oa_index(&rows, &[3; 10], 4), None);
    }

    #[test]
    fn zero_sum_meets_the_counting_bound_for_mixed_levels() {
        for levels in [
            vec![3, 3, 3],
            vec![5, 2, 4],
            vec![2, 6, 3, 4],
            vec![7, 7, 3, 5, 2],
        ] {
            let t = levels.len() - 1;
            let rows = zero_sum(&levels);
            let mut sorted = levels.clone();
            sorted.sort_unstable();
            assert_eq!(rows.len(), sorted[1..].iter().product::<usize>());
            // every t-set covered at least once: brute force
            let k = levels.len();
            for skip in 0..k {
                let cols: Vec<usize> = (0..k).filter(|&c| c != skip).collect();
                let mut seen = std::collections::BTreeSet::new();
                for r in &rows {
                    seen.insert(cols.iter().map(|&c| r[c]).collect::<Vec<_>>());
                }
                let need: usize = cols.iter().map(|&c| levels[c]).product();
                assert_eq!(seen.len(), need, "levels {levels:?} t={t} without {skip}");
            }
        }
    }

    #[test]
    fn full_factorial_lists_each_combination_once() {
        let rows = full_factorial(&[2, 3, 2]);
        assert_eq!(rows.len(), 12);
        let set: std::collections::BTreeSet<_> = rows.iter().collect();
        assert_eq!(set.len(), 12);
        assert_eq!(oa_index(&rows, &[2, 3, 2], 3), Some(1));
    }
}
