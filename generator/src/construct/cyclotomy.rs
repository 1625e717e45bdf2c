//! Binary arrays of strength t ≥ 3 from cyclotomy (Colbourn 2010, "Covering arrays from
//! cyclotomy"): for a prime p, the p × p circulant whose entry in row r and column c is 1
//! when c − r is a nonzero square mod p (the quadratic character; the diagonal takes a
//! chosen value). Character-sum bounds make it a covering array of strength t once p is
//! large enough for t; below that it often still is, and whether it is, and with what
//! index, is counted here on the columns the spec needs rather than assumed. Its
//! fold-over [A; Ā] is tried as well (twice the rows, often one strength more).

use super::gf::is_prime;
use crate::factor::Row;

/// Most primes tried above the column count.
const MAX_PRIMES: usize = 16;

/// Most (t-set × level combination × 64-row word) steps one count may take: keeps the
/// search to a fraction of a second in an unoptimised build.
const MAX_COUNT_STEPS: u128 = 1 << 26;

/// The circulant of the quadratic character mod p: row r, column c is 1 when c − r is a
/// nonzero square, `diagonal` when c = r.
pub fn circulant(p: usize, diagonal: u8) -> Vec<Row> {
    let mut square = vec![false; p];
    for x in 1..p {
        square[x * x % p] = true;
    }
    (0..p)
        .map(|r| {
            (0..p)
                .map(|c| match (c + p - r) % p {
                    0 => diagonal,
                    d => u8::from(square[d]),
                })
                .collect()
        })
        .collect()
}

/// The fewest times any level combination shows on any t of the first k columns of a
/// binary array (0 as soon as one is missing), counted on bit masks of the rows; `None`
/// when counting would take more than [`MAX_COUNT_STEPS`].
#[allow(clippy::needless_range_loop)] // index loops on purpose, see below
pub fn binary_index(rows: &[Row], k: usize, t: usize) -> Option<u32> {
    let n = rows.len();
    let words = n.div_ceil(64).max(1);
    let tsets = (0..t as u128).fold(1u128, |c, i| c * (k as u128 - i) / (i + 1));
    if t == 0 || k < t || tsets * (1u128 << t) * words as u128 > MAX_COUNT_STEPS {
        return None;
    }
    // masks[(c·2 + l)·words ..]: the rows showing level l in column c
    let mut masks = vec![0u64; k * 2 * words];
    for (r, row) in rows.iter().enumerate() {
        for c in 0..k {
            masks[(c * 2 + usize::from(row[c] & 1)) * words + r / 64] |= 1 << (r % 64);
        }
    }
    // prefix[d]: the rows of each pattern on the first d columns of the current t-set
    let mut prefix: Vec<Vec<u64>> = (0..=t).map(|d| vec![0u64; (1 << d) * words]).collect();
    for w in 0..words {
        prefix[0][w] = if (w + 1) * 64 <= n {
            u64::MAX
        } else {
            (1u64 << (n % 64)) - 1
        };
    }
    let mut min = u32::MAX;
    let mut cols: Vec<usize> = (0..t).collect();
    // the prefix levels still valid for `cols` (0: none)
    let mut valid = 0;
    loop {
        // extend the prefixes from the first column that changed (plain index loops:
        // this runs in unoptimised builds, where iterator adapters are calls)
        for d in valid..t {
            let (done, rest) = prefix.split_at_mut(d + 1);
            let (prev, next) = (&done[d], &mut rest[0]);
            let c = cols[d];
            for pattern in 0..1usize << d {
                for l in 0..2 {
                    let mask = (c * 2 + l) * words;
                    let at = (pattern | l << d) * words;
                    for w in 0..words {
                        next[at + w] = prev[pattern * words + w] & masks[mask + w];
                    }
                }
            }
        }
        let last = &prefix[t];
        for pattern in 0..1usize << t {
            let mut count = 0;
            for w in 0..words {
                count += last[pattern * words + w].count_ones();
            }
            if count == 0 {
                return Some(0);
            }
            min = min.min(count);
        }
        // the next t-set; the prefixes before the first changed position stay valid
        let before = cols.clone();
        if !crate::interactions::next_lex(&mut cols, k) {
            return Some(min);
        }
        valid = (0..t).find(|&i| cols[i] != before[i]).unwrap_or(t);
    }
}

/// The cyclotomic arrays for k binary columns at strength t, up to `limit` rows, each
/// with its name and its counted index (at least 1). Primes are tried upwards while they
/// can still give fewer rows than the first array found.
pub fn arrays(k: usize, t: usize, limit: usize) -> Vec<(String, Vec<Row>, u32)> {
    let mut out: Vec<(String, Vec<Row>, u32)> = Vec::new();
    let primes = (k.max(t + 2)..).filter(|&p| is_prime(p)).take(MAX_PRIMES);
    for p in primes {
        let fewest = out
            .iter()
            .map(|(_, rows, _)| rows.len())
            .min()
            .unwrap_or(usize::MAX);
        if p > limit || p >= fewest {
            break;
        }
        for diagonal in [0u8, 1] {
            let a: Vec<Row> = circulant(p, diagonal)
                .into_iter()
                .map(|r| r[..k].to_vec())
                .collect();
            if let Some(index @ 1..) = binary_index(&a, k, t) {
                out.push((format!("cyclotomy(p={p},diagonal={diagonal})"), a.clone(), index));
            }
            if 2 * p > limit {
                continue;
            }
            let mut folded = a.clone();
            folded.extend(a.iter().map(|r| r.iter().map(|&x| 1 - x).collect::<Row>()));
            if let Some(index @ 1..) = binary_index(&folded, k, t) {
                out.push((
                    format!("cyclotomy(p={p},diagonal={diagonal},fold-over)"),
                    folded,
                    index,
                ));
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn circulant_rows_are_shifts_of_the_residue_sequence() {
        // the nonzero squares mod 7 are 1, 2, 4 (common practice)
        let a = circulant(7, 0);
        assert_eq!(a[0], [0, 1, 1, 0, 1, 0, 0]);
        for r in 1..7 {
            let mut shifted = a[0].clone();
            shifted.rotate_right(r);
            assert_eq!(a[r], shifted);
        }
    }

    #[test]
    fn binary_index_matches_brute_force() {
        // every pattern on every triple of the full factorial 2^4 shows twice
        let full: Vec<Row> = (0..16u8).map(|x| (0..4).map(|c| x >> c & 1).collect()).collect();
        assert_eq!(binary_index(&full, 4, 3), Some(2));
        assert_eq!(binary_index(&full, 4, 4), Some(1));
        assert_eq!(binary_index(&full[..15], 4, 4), Some(0));
        // 70 rows: more than one word
        let wide: Vec<Row> = (0..70usize)
            .map(|x| (0..3).map(|c| (x >> c & 1) as u8).collect())
            .collect();
        // x < 64 covers each pattern 8 times, x = 64..69 add (0,0,0),(1,0,0),(0,1,0),(1,1,0),(0,0,1),(1,0,1)
        assert_eq!(binary_index(&wide, 3, 3), Some(8));
    }

    #[test]
    fn what_is_offered_is_a_covering_array() {
        for (k, t) in [(12, 3), (20, 3), (20, 4)] {
            for (name, rows, index) in arrays(k, t, 200) {
                // brute force over every t-set and pattern
                let mut worst = u32::MAX;
                let mut cols: Vec<usize> = (0..t).collect();
                loop {
                    let mut seen = vec![0u32; 1 << t];
                    for r in &rows {
                        seen[cols
                            .iter()
                            .enumerate()
                            .map(|(j, &c)| (r[c] as usize) << j)
                            .sum::<usize>()] += 1;
                    }
                    worst = worst.min(*seen.iter().min().unwrap());
                    if !crate::interactions::next_lex(&mut cols, k) {
                        break;
                    }
                }
                assert_eq!(worst, index, "{name}");
            }
        }
    }
}
