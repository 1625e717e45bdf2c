//! Finishing passes on a valid design: drop rows nothing depends on, then order the rows so
//! that every prefix meets as much demand as possible (a run cut short has still covered
//! the most it could), and the coverage curve that shows it.

use std::collections::BinaryHeap;

use crate::interactions::Layout;

/// Removes rows (never the first `fixed`) whose every interaction is covered more than λ
/// times by the others; later rows are tried first.
pub fn drop_redundant(
    layout: &Layout,
    possible: &[bool],
    lambda: u32,
    rows: &mut Vec<Vec<u8>>,
    fixed: usize,
) {
    let mut count = vec![0u32; layout.total()];
    for row in rows.iter() {
        layout.for_each_in_row(row, |i| count[i] += 1);
    }
    let mut keep = vec![true; rows.len()];
    for r in (fixed..rows.len()).rev() {
        let mut needed = false;
        layout.for_each_in_row(&rows[r], |i| needed |= possible[i] && count[i] <= lambda);
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
/// greedy: a row's gain only shrinks as others are chosen). Ties keep the earlier row.
pub fn order_by_gain(layout: &Layout, possible: &[bool], lambda: u32, rows: &mut [Vec<u8>], fixed: usize) {
    let mut need: Vec<u16> = possible
        .iter()
        .map(|&p| if p { lambda as u16 } else { 0 })
        .collect();
    for row in &rows[..fixed] {
        layout.for_each_in_row(row, |i| need[i] = need[i].saturating_sub(1));
    }
    let gain = |need: &[u16], row: &[u8]| {
        let mut g = 0u64;
        layout.for_each_in_row(row, |i| g += (need[i] > 0) as u64);
        g
    };
    // max-heap on (gain, reversed position)
    let mut heap: BinaryHeap<(u64, std::cmp::Reverse<usize>)> = (fixed..rows.len())
        .map(|r| (gain(&need, &rows[r]), std::cmp::Reverse(r)))
        .collect();
    let mut order = Vec::with_capacity(rows.len() - fixed);
    while let Some((g, std::cmp::Reverse(r))) = heap.pop() {
        let fresh = gain(&need, &rows[r]);
        if fresh < g {
            heap.push((fresh, std::cmp::Reverse(r)));
            continue;
        }
        layout.for_each_in_row(&rows[r], |i| need[i] = need[i].saturating_sub(1));
        order.push(r);
    }
    let picked: Vec<Vec<u8>> = order.iter().map(|&r| rows[r].clone()).collect();
    for (slot, row) in rows[fixed..].iter_mut().zip(picked) {
        *slot = row;
    }
}

/// Fraction of the total demand (λ per possible interaction) met after each row.
pub fn coverage_curve(layout: &Layout, possible: &[bool], lambda: u32, rows: &[Vec<u8>]) -> Vec<f64> {
    let mut need: Vec<u16> = possible
        .iter()
        .map(|&p| if p { lambda as u16 } else { 0 })
        .collect();
    let total: u64 = need.iter().map(|&n| n as u64).sum();
    let mut met = 0u64;
    rows.iter()
        .map(|row| {
            layout.for_each_in_row(row, |i| {
                if need[i] > 0 {
                    need[i] -= 1;
                    met += 1;
                }
            });
            if total == 0 {
                1.0
            } else {
                met as f64 / total as f64
            }
        })
        .collect()
}
