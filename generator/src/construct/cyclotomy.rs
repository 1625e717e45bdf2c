//! Binary arrays of strength t ≥ 3 from cyclotomy (Colbourn 2010, "Covering arrays from
//! cyclotomy"): for a prime p, the p × p circulant whose entry in row r and column c is 1
//! when c − r is a nonzero square mod p (the quadratic character; the diagonal takes a
//! chosen value). Character-sum bounds make it a covering array of strength t once p is
//! large enough for t; below that it often still is, and whether it is, and with what
//! index, is counted here on the columns the spec needs rather than assumed. Its
//! fold-over [A; Ā] is tried as well (twice the rows, often one strength more).

use super::gf::is_prime;
use crate::factor::Row;
use crate::rng::{Rng, stream};

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
pub fn binary_index(rows: &[Row], k: usize, t: usize) -> Option<u32> {
    let mut min = u32::MAX;
    scan(rows, k, t, false, |_, counts| {
        min = min.min(counts.iter().copied().min().unwrap_or(0));
        min > 0
    })?;
    Some(min)
}

/// Calls `visit` with every t-set of the first k columns of a binary array (only those
/// holding column 0 when `anchored`), in lexicographic order, and how often each level
/// combination shows on it (bit j of a combination's number is the level of the t-set's
/// j-th column), until `visit` returns false; counted on bit masks of the rows. `None`
/// when counting would take more than [`MAX_COUNT_STEPS`].
#[allow(clippy::needless_range_loop)] // index loops on purpose, see below
fn scan(
    rows: &[Row],
    k: usize,
    t: usize,
    anchored: bool,
    mut visit: impl FnMut(&[usize], &[u32]) -> bool,
) -> Option<()> {
    let n = rows.len();
    let words = n.div_ceil(64).max(1);
    let (from, choose) = if anchored {
        (1, t.saturating_sub(1))
    } else {
        (0, t)
    };
    let tsets = (0..choose as u128).fold(1u128, |c, i| c * ((k - from) as u128 - i) / (i + 1));
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
    let mut counts = vec![0u32; 1 << t];
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
            counts[pattern] = count;
        }
        if !visit(&cols, &counts) {
            return Some(());
        }
        // the next t-set; the prefixes before the first changed position stay valid
        let before = cols.clone();
        if !crate::interactions::next_lex(&mut cols, k) || (anchored && cols[0] != 0) {
            return Some(());
        }
        valid = (0..t).find(|&i| cols[i] != before[i]).unwrap_or(t);
    }
}

/// The cyclotomic arrays for k binary columns at strength t, up to `limit` rows, each
/// with its name and its counted index (at least 1). Primes are tried upwards while they
/// can still give fewer rows than the first array found; at t ≥ 4, where the first k
/// columns of a circulant fail, k of its p columns are chosen (see [`choose_columns`]).
pub fn arrays(k: usize, t: usize, limit: usize) -> Vec<(String, Vec<Row>, u32)> {
    let mut out: Vec<(String, Vec<Row>, u32)> = Vec::new();
    let primes = || (k.max(t + 2)..).filter(|&p| is_prime(p)).take(MAX_PRIMES);
    let fewest = |out: &[(String, Vec<Row>, u32)]| {
        out.iter()
            .map(|(_, rows, _)| rows.len())
            .min()
            .unwrap_or(usize::MAX)
    };
    for p in primes() {
        if p > limit || p >= fewest(&out) {
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
            if 2 * p <= limit
                && let Some(index @ 1..) = binary_index(&fold_over(&a), k, t)
            {
                out.push((
                    format!("cyclotomy(p={p},diagonal={diagonal},fold-over)"),
                    fold_over(&a),
                    index,
                ));
            }
        }
    }
    if !(4..=MAX_CHOICE_STRENGTH).contains(&t) {
        return out;
    }
    // then chosen columns, only where they give fewer rows than found so far: choosing
    // scans every t-set through a column of the whole circulant
    for p in primes() {
        if p > limit || p >= fewest(&out) {
            break;
        }
        if p == k {
            continue;
        }
        for diagonal in [0u8, 1] {
            let full = circulant(p, diagonal);
            let fold = 2 * p <= limit.min(fewest(&out).saturating_sub(1));
            if p >= fewest(&out) {
                break;
            }
            for (folded, cols) in choose_columns(&full, k, t, fold) {
                let chosen: Vec<Row> = full
                    .iter()
                    .map(|r| cols.iter().map(|&c| r[c]).collect())
                    .collect();
                let (rows, kind) = if folded {
                    (fold_over(&chosen), ",fold-over")
                } else {
                    (chosen, "")
                };
                // counted again on the chosen columns: the choice is checked, not assumed
                if let Some(index @ 1..) = binary_index(&rows, k, t) {
                    let name = format!("cyclotomy(p={p},diagonal={diagonal}{kind},chosen columns)");
                    out.push((name, rows, index));
                }
            }
        }
    }
    out
}

/// The array over its complement, [A; Ā]: at strength t it covers a combination when A
/// shows it or its complement.
fn fold_over(a: &[Row]) -> Vec<Row> {
    let mut folded = a.to_vec();
    folded.extend(a.iter().map(|r| r.iter().map(|&x| 1 - x).collect::<Row>()));
    folded
}

/// Most bad t-sets through column 0, as a share of all t-sets through it (1/this), with
/// which columns are still chosen: past it a circulant leaves too few (measured at t = 5:
/// p = 67 has 0.16% bad and gives 34 columns, p = 59 0.75% and 15).
///
/// Why no smaller prime reaches 20 columns at t = 5 (measured with a throwaway tabu search
/// over column sets, minimising the bad 5-sets inside the set, not kept): the fold-over
/// leaves 21.6% of the 5-sets through column 0 bad at p = 41, 10.4% at 43, 7.8% at 47,
/// 4.8% at 53, 0.75% at 59 and 1.6% at 61, and the search found at most 10 (p = 53),
/// 16 (p = 59) and 15 (p = 61) columns; the circulant alone leaves 19–50% bad for
/// p = 89…113 and gave no 14 columns; quartic and sextic classes mod 53 and 61 in place of
/// the quadratic character leave as many bad or more. So 2^20 at t = 5 stays at p = 67.
/// Nor did a search over any starter, not only the quadratic character: a binary word of
/// length m = 41…49 with 20 chosen shifts as columns and its fold-over (82–98 rows, plus
/// the two constant rows or not), annealed over the word and the shifts, stayed 768 or
/// more of the 248 064 (5-set, pattern-and-complement) classes short; m = 63 (126 rows)
/// 133 short (measured, not kept).
const BAD_SHARE: usize = 256;

/// Highest strength at which columns are chosen: measured to pay at t = 4 and 5, and
/// the count of t-sets through a column soon passes [`MAX_COUNT_STEPS`] beyond.
const MAX_CHOICE_STRENGTH: usize = 6;

/// Tries of the randomised greedy choice of columns.
const CHOICE_TRIES: usize = 32;

/// Most (bad t-set × member) checks one choice of columns may take.
const MAX_CHOICE_STEPS: usize = 1 << 27;

/// k columns of the p × p circulant `full` on which it covers every t-set — alone, and
/// when `fold`, as a fold-over [A; Ā] — whichever a choice was found for (`true` for the
/// fold-over), the circulant's own first.
///
/// A circulant is fixed by shifting rows and columns together, so a t-set of columns is
/// covered exactly when its shifts are: the bad t-sets are the shifts of the bad ones
/// through column 0, and those are counted once. Columns are then taken in a random order
/// (a fixed seed) when no shift of a bad t-set would lie among those taken, a few orders
/// tried until one reaches k (greedy, as for an independent set of a hypergraph).
fn choose_columns(full: &[Row], k: usize, t: usize, fold: bool) -> Vec<(bool, Vec<usize>)> {
    let p = full.len();
    let through_zero = (1..t).fold(1usize, |c, i| c * (p - i) / i);
    let cap = through_zero / BAD_SHARE;
    let mut bad: [Vec<Vec<usize>>; 2] = [Vec::new(), Vec::new()];
    let mut open = [true, fold];
    let all = (1usize << t) - 1;
    let scanned = scan(full, p, t, true, |cols, counts| {
        // shows[0]: every combination shows; shows[1]: each or its complement does
        let mut shows = [true, true];
        for x in 0..=all {
            if counts[x] == 0 {
                shows[0] = false;
                if counts[all ^ x] == 0 {
                    shows[1] = false;
                    break;
                }
            }
        }
        for kind in 0..2 {
            if open[kind] && !shows[kind] {
                bad[kind].push(cols.to_vec());
                open[kind] = bad[kind].len() <= cap;
            }
        }
        open[0] || open[1]
    });
    if scanned.is_none() {
        return Vec::new();
    }
    let mut out = Vec::new();
    for (kind, bad) in bad.iter().enumerate() {
        if !open[kind] {
            continue;
        }
        if let Some(cols) = greedy_columns(p, k, bad) {
            out.push((kind == 1, cols));
        }
    }
    out
}

/// k of p cyclically arranged columns holding no shift of a `bad` set, by randomised
/// greedy choices (see [`choose_columns`]); `None` when no try reaches k.
#[allow(clippy::needless_range_loop)] // index loops on purpose, as in `scan`
fn greedy_columns(p: usize, k: usize, bad: &[Vec<usize>]) -> Option<Vec<usize>> {
    let t = bad.first().map_or(0, Vec::len);
    let per_try = p * bad.len() * t * t;
    let tries = (MAX_CHOICE_STEPS / per_try.max(1)).min(CHOICE_TRIES);
    // the bad sets one after another (each holds t columns)
    let flat: Vec<usize> = bad.concat();
    let mut rng = Rng::new(p as u64, stream::CONSTRUCT);
    let mut taken = vec![false; p];
    for _ in 0..tries {
        let mut order: Vec<usize> = (0..p).collect();
        rng.shuffle(&mut order);
        taken.fill(false);
        let mut chosen = Vec::new();
        for &c in &order {
            // c is refused when some shift of a bad set holds c and only taken columns
            // (plain index loops: this runs in unoptimised builds)
            let mut refused = false;
            'sets: for b in 0..bad.len() {
                let set = &flat[b * t..(b + 1) * t];
                for i in 0..t {
                    let shift = c + p - set[i];
                    let mut inside = true;
                    for j in 0..t {
                        let y = (set[j] + shift) % p;
                        if y != c && !taken[y] {
                            inside = false;
                            break;
                        }
                    }
                    if inside {
                        refused = true;
                        break 'sets;
                    }
                }
            }
            if !refused {
                taken[c] = true;
                chosen.push(c);
                if chosen.len() == k {
                    chosen.sort_unstable();
                    return Some(chosen);
                }
            }
        }
    }
    None
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
    fn chosen_columns_avoid_every_shift_of_a_bad_set() {
        // the anchored scan lists the bad 5-sets through column 0 of the fold-over mod 67;
        // columns chosen for it must hold no shift of one, which the count over every
        // 5-set of the chosen columns confirms
        let full = circulant(67, 0);
        let choices = choose_columns(&full, 30, 5, true);
        assert!(choices.iter().any(|(folded, _)| *folded), "{choices:?}");
        for (folded, cols) in choices {
            let a: Vec<Row> = full
                .iter()
                .map(|r| cols.iter().map(|&c| r[c]).collect())
                .collect();
            let rows = if folded { fold_over(&a) } else { a };
            assert!(binary_index(&rows, 30, 5).unwrap() >= 1, "{cols:?}");
        }
        // the greedy refuses a column that completes a shift of a bad set
        assert_eq!(greedy_columns(5, 5, &[vec![0, 1]]), None);
        let two = greedy_columns(5, 2, &[vec![0, 1]]).unwrap();
        assert!(
            (two[1] - two[0]) % 5 != 1 && (two[0] + 5 - two[1]) % 5 != 1,
            "{two:?}"
        );
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
