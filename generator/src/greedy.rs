//! One-row-at-a-time greedy in the manner of AETG (Cohen, Dalal, Fredman and Patton
//! 1997): each new row starts from an interaction that still needs rows, fills the other
//! factors in a random order choosing the level that meets the most remaining demand
//! among interactions it completes, and the best of several such candidates is kept.
//! Demand is counted per interaction (λ minus times covered), so index λ costs only the
//! rows it needs rather than λ copies.

use crate::constraints::Constraints;
use crate::demand::Demand;
use crate::interactions::{Layout, for_each_subset};
use crate::model::{Row, UNSET};
use crate::rng::Rng;

/// Tuning of the greedy.
#[derive(Clone, Copy, Debug)]
pub struct Params {
    /// Candidate rows built per emitted row.
    pub candidates: usize,
}

impl Default for Params {
    fn default() -> Self {
        Params { candidates: 24 }
    }
}

/// Live interactions to start rows from, compacted lazily.
struct Pool {
    live: Vec<u32>,
    stale: usize,
}

impl Pool {
    fn new(demand: &Demand) -> Self {
        let live = (0..demand.need.len() as u32)
            .filter(|&i| demand.need[i as usize] > 0)
            .collect();
        Pool { live, stale: 0 }
    }

    /// A random interaction that still has demand, preferring the neediest of a few draws.
    fn pick(&mut self, demand: &Demand, rng: &mut Rng) -> Option<usize> {
        if self.stale * 2 > self.live.len() {
            self.live.retain(|&i| demand.need[i as usize] > 0);
            self.stale = 0;
        }
        let mut best: Option<usize> = None;
        let mut draws = 0;
        while draws < 3 {
            if self.live.is_empty() {
                return best;
            }
            let p = rng.index(self.live.len());
            let i = self.live[p] as usize;
            if demand.need[i] == 0 {
                self.live.swap_remove(p);
                continue;
            }
            draws += 1;
            if best.is_none_or(|b| demand.need[i] > demand.need[b]) {
                best = Some(i);
            }
        }
        best
    }
}

/// Rows that, added after those already counted in `demand`, bring every demand to zero.
/// Every row is allowed by `cons`.
pub fn extend(
    layout: &Layout,
    demand: &mut Demand,
    cons: &mut Constraints,
    rng: &mut Rng,
    params: Params,
) -> Vec<Row> {
    let mut rows = Vec::new();
    let mut pool = Pool::new(demand);
    let k = layout.columns();
    let mut order: Vec<usize> = (0..k).collect();
    while demand.remaining > 0 {
        let mut best: Option<(u64, Row)> = None;
        for _ in 0..params.candidates.max(1) {
            let Some(start) = pool.pick(demand, rng) else {
                break;
            };
            let (cols, lv) = layout.decode(start);
            let mut row = vec![UNSET; k];
            for (&c, &l) in cols.iter().zip(&lv) {
                row[c] = l;
            }
            if !cons.extendable(&row) {
                // impossible interactions have no demand, so this cannot happen; keep
                // the pool honest anyway
                continue;
            }
            rng.shuffle(&mut order);
            let mut fixed: Vec<usize> = cols.clone();
            for &f in order.iter() {
                if row[f] != UNSET {
                    continue;
                }
                row[f] = choose_level(layout, demand, cons, rng, &mut row, &fixed, f);
                let pos = fixed.binary_search(&f).unwrap_or_else(|p| p);
                fixed.insert(pos, f);
            }
            let g = demand.gain(layout, &row);
            if best.as_ref().is_none_or(|(bg, _)| g > *bg) {
                best = Some((g, row));
            }
        }
        let Some((g, row)) = best else { break };
        if g == 0 {
            break;
        }
        demand.cover(layout, &row);
        rows.push(row);
    }
    rows
}

/// The level of `f` meeting the most remaining demand among the interactions it completes
/// with the already fixed factors; ties go to the first from a random starting level.
fn choose_level(
    layout: &Layout,
    demand: &Demand,
    cons: &mut Constraints,
    rng: &mut Rng,
    row: &mut [u8],
    fixed: &[usize],
    f: usize,
) -> u8 {
    let v = layout.levels[f];
    let t = layout.t;
    let mut score = vec![0u64; v];
    let mut cols = vec![0usize; t];
    for_each_subset(fixed, t - 1, |s| {
        // merge f into the sorted subset
        let mut wf = 1usize;
        let mut base = 0usize;
        let mut w = 1usize;
        let mut j = 0;
        let mut placed = false;
        for slot in cols.iter_mut() {
            let c = if !placed && (j == s.len() || s[j] > f) {
                placed = true;
                wf = w;
                f
            } else {
                let c = s[j];
                j += 1;
                base += row[c] as usize * w;
                c
            };
            *slot = c;
            w *= layout.levels[c];
        }
        let off = layout.offset(layout.rank(&cols)) + base;
        for (l, sc) in score.iter_mut().enumerate() {
            *sc += demand.need[off + l * wf] as u64;
        }
    });
    let start = rng.index(v);
    let mut best: Option<(u64, u8)> = None;
    for i in 0..v {
        let l = ((start + i) % v) as u8;
        if best.is_some_and(|(b, _)| score[l as usize] <= b) {
            continue;
        }
        if cons.involves(f) {
            row[f] = l;
            let ok = cons.extendable(row);
            row[f] = UNSET;
            if !ok {
                continue;
            }
        }
        best = Some((score[l as usize], l));
    }
    // some level is always extendable: the row was extendable before this factor
    best.map_or(0, |(_, l)| l)
}
