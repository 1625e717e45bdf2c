//! Finishing passes on a valid design: drop rows nothing depends on, then order the rows so
//! that every prefix meets as much demand as possible (a run cut short has still covered
//! the most it could; the checker counts the coverage curve that shows it), and count the
//! interactions that cannot be told apart.

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use crate::interactions::{Layout, Numbering};

/// Removes rows (never the first `fixed`) whose every interaction is covered more than
/// its demand `need` (λ, or 0 where impossible) by the others; later rows are tried first.
pub fn drop_redundant(layout: &impl Numbering, need: &[u16], rows: &mut Vec<Vec<u8>>, fixed: usize) {
    let mut count = vec![0u32; layout.total()];
    for row in rows.iter() {
        layout.for_each_in_row(row, |i| count[i] += 1);
    }
    let mut keep = vec![true; rows.len()];
    for r in (fixed..rows.len()).rev() {
        let mut needed = false;
        // the row itself is among the count: an impossible interaction (need 0) never holds it
        layout.for_each_in_row(&rows[r], |i| needed |= count[i] <= u32::from(need[i]));
        if !needed {
            keep[r] = false;
            layout.for_each_in_row(&rows[r], |i| count[i] -= 1);
        }
    }
    let mut r = 0;
    rows.retain(|_| {
        r += 1;
        keep[r - 1]
    });
}

/// Reorders the rows after the first `fixed` so each prefix meets the most demand (lazy
/// greedy: a row's gain only shrinks as others are chosen, so a row whose fresh gain still
/// beats every other row's stale gain is the best). Ties keep the earlier row. When the
/// work could grow large (rows × t-sets above [`EXACT_ORDER_LIMIT`]) a row is taken once
/// its fresh gain is within 1/16 of the best stale gain, which bounds the re-evaluations;
/// past [`SHOWN_LIMIT`] the rows keep their order (the greedy's, which already took the
/// best of its candidate rows at every step), as re-evaluating gains would cost minutes.
/// `need` is the demand per interaction (λ, or 0 where impossible).
pub fn order_by_gain(layout: &impl Numbering, need: &[u16], rows: &mut [Vec<u8>], fixed: usize) {
    let cells = (rows.len() as u64).saturating_mul(layout.sets() as u64);
    if cells > SHOWN_LIMIT {
        return;
    }
    let mut need = need.to_vec();
    for row in &rows[..fixed] {
        layout.for_each_in_row(row, |i| need[i] = need[i].saturating_sub(1));
    }
    let approximate = cells > EXACT_ORDER_LIMIT;
    // the interactions of every row, listed once, when that fits: re-evaluating a gain is
    // then a scan instead of an enumeration of t-sets
    let sets = layout.sets();
    let mut shown: Vec<u32> = Vec::with_capacity(cells as usize);
    for row in rows.iter() {
        // interaction indices fit u32: the layout numbers them with u32 offsets
        layout.for_each_in_row(row, |i| shown.push(i as u32));
    }
    let gain = |need: &[u16], r: usize| {
        shown[r * sets..(r + 1) * sets]
            .iter()
            .filter(|&&i| need[i as usize] > 0)
            .count() as u64
    };
    // max-heap on (gain, reversed position)
    let mut heap: BinaryHeap<(u64, Reverse<usize>)> = (fixed..rows.len())
        .map(|r| (gain(&need, r), Reverse(r)))
        .collect();
    let mut order = Vec::with_capacity(rows.len() - fixed);
    while let Some((g, Reverse(r))) = heap.pop() {
        let fresh = gain(&need, r);
        if fresh < g {
            let beats = match heap.peek() {
                None => true,
                Some(&(top, Reverse(tr))) => {
                    (fresh, Reverse(r)) > (top, Reverse(tr)) || (approximate && fresh * 16 >= top * 15)
                }
            };
            if !beats {
                heap.push((fresh, Reverse(r)));
                continue;
            }
        }
        layout.for_each_in_row(&rows[r], |i| need[i] = need[i].saturating_sub(1));
        order.push(r);
    }
    let picked: Vec<Vec<u8>> = order.iter().map(|&r| rows[r].clone()).collect();
    for (slot, row) in rows[fixed..].iter_mut().zip(picked) {
        *slot = row;
    }
}

/// Rows × t-sets up to which [`order_by_gain`] reorders, listing every row's interactions
/// once (4 bytes each) so that re-evaluating a gain is a scan.
pub const SHOWN_LIMIT: u64 = 1 << 24;

/// Rows × t-sets up to which [`order_by_gain`] orders exactly.
pub const EXACT_ORDER_LIMIT: u64 = 1 << 23;

/// Most interactions for which [`aliased`] is counted (8 bytes each).
const MAX_ALIAS_INTERACTIONS: usize = 1 << 22;

/// How many possible interactions show in exactly the same rows as another one, so that
/// no outcome of the rows can tell them apart; `None` past [`MAX_ALIAS_INTERACTIONS`].
///
/// Each interaction's set of rows is summarised by the sum of a 64-bit mixing of its row
/// numbers (splitmix64, Steele, Lea & Flood 2014): equal sets give equal sums, and two
/// different sets agree with probability about 2⁻⁶⁴, so a count may in principle include
/// a pair that differs, never leave one out.
pub fn aliased(layout: &Layout, possible: &[bool], rows: &[Vec<u8>]) -> Option<u64> {
    if layout.total() > MAX_ALIAS_INTERACTIONS {
        return None;
    }
    let mut sum = vec![0u64; layout.total()];
    for (r, row) in rows.iter().enumerate() {
        let z = splitmix64(r as u64);
        layout.for_each_in_row(row, |i| sum[i] = sum[i].wrapping_add(z));
    }
    let mut keyed: Vec<u64> = sum
        .iter()
        .zip(possible)
        .filter_map(|(&h, &p)| p.then_some(h))
        .collect();
    keyed.sort_unstable();
    let mut count = 0u64;
    for run in keyed.chunk_by(|a, b| a == b) {
        if run.len() > 1 {
            count += run.len() as u64;
        }
    }
    Some(count)
}

/// splitmix64's output function on `x + 1` (Steele, Lea & Flood 2014).
fn splitmix64(x: u64) -> u64 {
    let mut z = x.wrapping_add(1).wrapping_mul(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn aliases_of_a_linear_array_and_of_relabelled_copies() {
        // OA(9; 2, 4, 3) of index 1 stacked twice identically: every pair of levels sits
        // in the same two rows as the other interactions of its row (each row shows six
        // pairs), so all 54 interactions are aliased; a full factorial 3 × 3 × 3 at t = 2
        // has index 3 and no two pairs in the same three rows
        let oa: Vec<Vec<u8>> = (0..9u8)
            .map(|x| {
                let (i, j) = (x / 3, x % 3);
                vec![i, j, (i + j) % 3, (i + 2 * j) % 3]
            })
            .collect();
        let twice: Vec<Vec<u8>> = oa.iter().chain(&oa).cloned().collect();
        let lay = Layout::new(&[3; 4], 2);
        let possible = vec![true; lay.total()];
        assert_eq!(aliased(&lay, &possible, &twice), Some(54));
        let full: Vec<Vec<u8>> = (0..27u8).map(|x| vec![x / 9, x / 3 % 3, x % 3]).collect();
        let lay = Layout::new(&[3; 3], 2);
        assert_eq!(aliased(&lay, &vec![true; lay.total()], &full), Some(0));
    }
}
