//! One-row-at-a-time greedy after Cohen, Dalal, Fredman and Patton (1997): each new row
//! starts from an interaction that still needs rows, fills the other factors in a random
//! order choosing the level that meets the most remaining demand among the interactions
//! it completes, and the best of several such candidates is kept.
//! Demand is counted per interaction (λ minus times covered), so index λ costs only the
//! rows it needs rather than λ copies.
//!
//! At t = 2 the level choice looks ahead as in the density algorithms of Colbourn, Cohen
//! and Turban (2004) and Bryce and Colbourn (2007): besides the demand a level meets with
//! the factors already fixed, it counts the demand it would meet on average with the
//! factors still open, as if they were filled uniformly at random (kept in step through
//! per-pair marginal counts, so it costs no more than the plain count). At larger t the
//! choice counts completed interactions only, as that 1997 method does; the local search
//! that follows does the rest.

use crate::constraints::Constraints;
use crate::demand::Demand;
use crate::factor::{Row, UNSET};
use crate::interactions::{Layout, next_lex};
use crate::rng::Rng;
use crate::work::Work;

/// Tuning of the greedy.
#[derive(Clone, Copy, Debug)]
pub struct Params {
    /// Candidate rows built per emitted row.
    pub candidates: usize,
    /// Weight of the look-ahead term, in sixteenths (0 turns it off).
    pub lookahead: u64,
}

impl Default for Params {
    fn default() -> Self {
        Params {
            candidates: 24,
            lookahead: 16,
        }
    }
}

impl Params {
    /// Level choices (t-set × level) one emitted row may cost across its candidates.
    pub const ROW_WORK: u64 = 480_000;

    /// The default, with fewer candidates on specs so wide that 24 would make each row
    /// cost more than [`Self::ROW_WORK`] level choices (at least 2 candidates remain).
    pub fn for_layout(layout: &Layout) -> Self {
        let vmax = layout.levels.iter().copied().max().unwrap_or(1) as u64;
        let per_candidate = (layout.sets() as u64).saturating_mul(vmax).max(1);
        let d = Params::default();
        Params {
            candidates: (Self::ROW_WORK / per_candidate).clamp(2, d.candidates as u64) as usize,
            ..d
        }
    }
}

/// Fixed-point scale of the look-ahead (an expectation with denominators up to 255).
const SCALE: u64 = 1 << 20;

/// Pairwise marginals for the look-ahead at t = 2: `marg[(f·k + g)·vmax + l]` counts the
/// interactions (f = l, g = any) that still need a row, and `tot[f·vmax + l]` is
/// Σ_g marg/v_g in fixed point, kept exactly in step.
struct Marginals {
    k: usize,
    vmax: usize,
    marg: Vec<u32>,
    /// `q(marg, v_g)` beside every entry of `marg`, so scoring never divides.
    scaled: Vec<u32>,
    tot: Vec<u64>,
}

impl Marginals {
    /// Most entries the table may have; past that the look-ahead is off (it would cost
    /// more memory than the counters themselves).
    const LIMIT: usize = 1 << 22;

    fn new(layout: &Layout, need: &[u16]) -> Option<Self> {
        let k = layout.columns();
        let vmax = layout.levels.iter().copied().max().unwrap_or(1);
        if layout.t != 2 || k.saturating_mul(k).saturating_mul(vmax) > Self::LIMIT {
            return None;
        }
        let mut m = Marginals {
            k,
            vmax,
            marg: vec![0; k * k * vmax],
            scaled: vec![0; k * k * vmax],
            tot: vec![0; k * vmax],
        };
        let lv = &layout.levels;
        let mut rank = 0;
        for g in 1..k {
            for f in 0..g {
                let off = layout.offset(rank);
                for b in 0..lv[g] {
                    for a in 0..lv[f] {
                        if need[off + a + b * lv[f]] > 0 {
                            m.marg[(f * k + g) * vmax + a] += 1;
                            m.marg[(g * k + f) * vmax + b] += 1;
                        }
                    }
                }
                rank += 1;
            }
        }
        for f in 0..k {
            for g in 0..k {
                for l in 0..lv[f] {
                    let at = (f * k + g) * vmax + l;
                    m.scaled[at] = q(m.marg[at], lv[g]) as u32;
                    m.tot[f * vmax + l] += m.scaled[at] as u64;
                }
            }
        }
        Some(m)
    }

    /// One interaction (f = a, g = b) stops needing rows.
    fn drop(&mut self, lv: &[usize], f: usize, a: usize, g: usize, b: usize) {
        let (k, vm) = (self.k, self.vmax);
        for (at, t, v) in [
            ((f * k + g) * vm + a, f * vm + a, lv[g]),
            ((g * k + f) * vm + b, g * vm + b, lv[f]),
        ] {
            self.marg[at] -= 1;
            let new = q(self.marg[at], v) as u32;
            self.tot[t] -= (self.scaled[at] - new) as u64;
            self.scaled[at] = new;
        }
    }
}

/// `m / v` in fixed point.
fn q(m: u32, v: usize) -> u64 {
    m as u64 * SCALE / v as u64
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

/// Working memory of one greedy run, allocated once.
struct Builder<'a> {
    layout: &'a Layout,
    t: usize,
    /// `binom[n * (t + 1) + j]` = C(n, j).
    binom: Vec<u32>,
    score: Vec<u64>,
    met: Vec<u64>,
    look: Vec<u64>,
    pick: Vec<usize>,
    /// Level choices scored since the last look (see [`Work`]).
    steps: u64,
    /// Most fixed factors (t = 2) or subsets of them (t ≥ 3) scored per level choice.
    sample: usize,
}

impl<'a> Builder<'a> {
    fn new(layout: &'a Layout) -> Self {
        let t = layout.t;
        let k = layout.columns();
        let mut binom = vec![0u32; (k + 1) * (t + 1)];
        for n in 0..=k {
            for j in 0..=t {
                binom[n * (t + 1) + j] = layout.binom(n, j) as u32;
            }
        }
        let vmax = layout.levels.iter().copied().max().unwrap_or(1);
        Builder {
            layout,
            t,
            binom,
            score: vec![0; vmax],
            met: vec![0; vmax],
            look: vec![0; vmax],
            pick: Vec::with_capacity(t),
            steps: 0,
            sample: usize::MAX,
        }
    }

    /// The t = 2 case of [`Self::score_completed`], plus the look-ahead over the open
    /// factors when `marg` is given (weight `alpha` sixteenths). With more fixed factors
    /// than `self.sample`, only that many, evenly spaced from a random start, are scored
    /// and the sums scaled up to all of them (an estimate that keeps the work per row
    /// bounded on very wide specs).
    #[allow(clippy::too_many_arguments)]
    fn score_pairs(
        &mut self,
        need: &[u16],
        row: &[u8],
        fixed: &[usize],
        f: usize,
        marg: Option<&Marginals>,
        alpha: u64,
        rng: &mut Rng,
    ) {
        let lv = &self.layout.levels;
        let v = lv[f];
        let n = fixed.len();
        let taken = n.min(self.sample);
        let start = if taken < n { rng.index(n) } else { 0 };
        self.steps += (taken * v) as u64;
        let score = &mut self.score[..v];
        let met = &mut self.met[..v];
        let look = &mut self.look[..v];
        look.fill(0);
        for i in 0..taken {
            let g = fixed[(start + i * n / taken) % n];
            let (rank, base, wf) = if g < f {
                (g + f * (f - 1) / 2, row[g] as usize, lv[g])
            } else {
                (f + g * (g - 1) / 2, row[g] as usize * v, 1)
            };
            let col = &need[self.layout.offset(rank) + base..];
            if wf == 1 {
                for ((s, m), &n) in score.iter_mut().zip(met.iter_mut()).zip(&col[..v]) {
                    *s += n as u64;
                    *m += (n > 0) as u64;
                }
            } else {
                for ((s, m), &n) in score.iter_mut().zip(met.iter_mut()).zip(col.iter().step_by(wf)) {
                    *s += n as u64;
                    *m += (n > 0) as u64;
                }
            }
            if let Some(m) = marg {
                let at = (f * m.k + g) * m.vmax;
                for (x, &q) in look.iter_mut().zip(&m.scaled[at..at + v]) {
                    *x += q as u64;
                }
            }
        }
        // sampled sums stand for all n fixed factors
        let up = |x: u64| {
            if taken < n {
                x * n as u64 / taken.max(1) as u64
            } else {
                x
            }
        };
        match marg {
            Some(m) => {
                for ((s, &x), &tot) in score
                    .iter_mut()
                    .zip(look.iter())
                    .zip(&m.tot[f * m.vmax..f * m.vmax + v])
                {
                    *s = up(*s * SCALE) + alpha * tot.saturating_sub(up(x)) / 16;
                }
            }
            None => {
                for s in score.iter_mut() {
                    *s = up(*s * SCALE);
                }
            }
        }
    }

    /// Adds, for every level of `f`, the remaining demand of the interactions that `f`
    /// completes with the `t - 1`-subsets of `fixed` (sorted) on `row`. `met` gets the
    /// number of those interactions that still need a row. With more subsets than
    /// `self.sample`, that many are drawn at random instead (see [`Self::score_pairs`];
    /// the levels of `f` are compared on the same draws, which is all the choice needs).
    fn score_completed(&mut self, need: &[u16], row: &[u8], fixed: &[usize], f: usize, rng: &mut Rng) {
        let j = self.t - 1;
        let n = fixed.len();
        if n < j {
            return;
        }
        let mut pick = std::mem::take(&mut self.pick);
        pick.clear();
        if (self.sample as u64) < self.binom_of(n, j) {
            for _ in 0..self.sample {
                // j distinct positions out of n, sorted (j < 8, n > j: few redraws)
                pick.clear();
                while pick.len() < j {
                    let p = rng.index(n);
                    if let Err(at) = pick.binary_search(&p) {
                        pick.insert(at, p);
                    }
                }
                self.score_subset(need, row, fixed, f, &pick);
            }
        } else {
            pick.extend(0..j);
            loop {
                self.score_subset(need, row, fixed, f, &pick);
                if !next_lex(&mut pick, n) {
                    break;
                }
            }
        }
        self.pick = pick;
    }

    /// C(n, j), saturating.
    fn binom_of(&self, n: usize, j: usize) -> u64 {
        let mut c: u64 = 1;
        for i in 0..j as u64 {
            c = c.saturating_mul(n as u64 - i) / (i + 1);
        }
        c
    }

    /// Adds the demand of the t-set `pick ∪ {f}` (positions into `fixed`) for every level
    /// of `f`.
    fn score_subset(&mut self, need: &[u16], row: &[u8], fixed: &[usize], f: usize, pick: &[usize]) {
        let t = self.t;
        let v = self.layout.levels[f];
        let tb = t + 1;
        let levels = &self.layout.levels;
        // rank and mixed-radix base of the t-set pick ∪ {f}
        let mut rank = 0usize;
        let mut base = 0usize;
        let mut w = 1usize;
        let mut wf = 0usize;
        let mut pos = 0usize;
        let mut placed = false;
        for &p in pick {
            let s = fixed[p];
            if !placed && s > f {
                rank += self.binom[f * tb + pos + 1] as usize;
                wf = w;
                w *= v;
                pos += 1;
                placed = true;
            }
            rank += self.binom[s * tb + pos + 1] as usize;
            base += row[s] as usize * w;
            w *= levels[s];
            pos += 1;
        }
        if !placed {
            rank += self.binom[f * tb + pos + 1] as usize;
            wf = w;
        }
        let off = self.layout.offset(rank) + base;
        self.steps += v as u64;
        for l in 0..v {
            let n = need[off + l * wf];
            self.score[l] += n as u64;
            self.met[l] += (n > 0) as u64;
        }
    }
}

/// Rows that, added after those already counted in `demand`, bring every demand to zero.
/// Every row is allowed by `cons`.
///
/// The number of candidate rows per emitted row follows the `work` left: each row may
/// spend the steps left divided by the rows still expected (`expected_rows` in all, an
/// estimate), between one candidate and `params.candidates`; with an unbounded budget it
/// is always `params.candidates`.
pub fn extend(
    layout: &Layout,
    demand: &mut Demand,
    cons: &mut Constraints,
    rng: &mut Rng,
    params: Params,
    work: &mut Work,
    expected_rows: u64,
) -> Vec<Row> {
    let mut rows = Vec::new();
    let mut pool = Pool::new(demand);
    let k = layout.columns();
    let mut order: Vec<usize> = (0..k).collect();
    let mut b = Builder::new(layout);
    let mut marg = if params.lookahead > 0 {
        Marginals::new(layout, &demand.need)
    } else {
        None
    };
    let per_candidate = candidate_steps(layout);
    // steps of one scored fixed factor or subset across a whole candidate row
    let per_subset = (layout.columns() as u64)
        .saturating_mul(mean_levels(layout))
        .max(1);
    let mut fixed: Vec<usize> = Vec::with_capacity(k);
    while demand.remaining > 0 {
        let candidates = if work.unbounded() {
            params.candidates.max(1)
        } else {
            // never fewer than an eighth of the estimate still to come: past the estimate
            // the budget left is shared out more thinly rather than spent on one row
            let still = expected_rows
                .saturating_sub(rows.len() as u64)
                .max(expected_rows / 8)
                .max(1);
            let allow = work.left() / still;
            if allow >= per_candidate {
                b.sample = usize::MAX;
                let n = (allow / per_candidate).min(params.candidates.max(1) as u64) as usize;
                work.cut |= n < params.candidates;
                n
            } else {
                // one candidate, scored on a sample of the t-sets it completes
                work.cut = true;
                b.sample = (allow / per_subset).max(MIN_SAMPLE) as usize;
                1
            }
        };
        let mut best: Option<(u64, Row)> = None;
        for _ in 0..candidates {
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
            fixed.clear();
            fixed.extend_from_slice(&cols);
            let mut gain = 1u64;
            for &f in order.iter() {
                if row[f] != UNSET {
                    continue;
                }
                let v = layout.levels[f];
                b.score[..v].fill(0);
                b.met[..v].fill(0);
                if layout.t == 2 {
                    b.score_pairs(
                        &demand.need,
                        &row,
                        &fixed,
                        f,
                        marg.as_ref(),
                        params.lookahead,
                        rng,
                    );
                } else {
                    b.score_completed(&demand.need, &row, &fixed, f, rng);
                }
                let l = choose_level(&b.score[..v], cons, rng, &mut row, f);
                gain += b.met[l as usize];
                row[f] = l;
                let pos = fixed.binary_search(&f).unwrap_or_else(|p| p);
                fixed.insert(pos, f);
            }
            if best.as_ref().is_none_or(|(bg, _)| gain > *bg) {
                best = Some((gain, row));
            }
        }
        let Some((g, row)) = best else { break };
        if g == 0 {
            break;
        }
        match marg.as_mut() {
            Some(m) => {
                let lv = &layout.levels;
                let mut met = 0;
                let mut rank = 0;
                for g in 1..k {
                    for f in 0..g {
                        let (a, bl) = (row[f] as usize, row[g] as usize);
                        let i = layout.offset(rank) + a + bl * lv[f];
                        let n = &mut demand.need[i];
                        if *n > 0 {
                            *n -= 1;
                            met += 1;
                            if *n == 0 {
                                m.drop(lv, f, a, g, bl);
                            }
                        }
                        rank += 1;
                    }
                }
                demand.remaining -= met;
            }
            None => {
                demand.cover(layout, &row);
            }
        }
        rows.push(row);
        work.spend(std::mem::take(&mut b.steps) + layout.sets() as u64);
    }
    rows
}

/// Steps one candidate row costs: every t-set scored once for each level of the column
/// that completes it (on average over the columns), and each column visited.
pub fn candidate_steps(layout: &Layout) -> u64 {
    (layout.sets() as u64).saturating_mul(mean_levels(layout)) + layout.columns() as u64
}

/// Steps a sampled candidate row costs at the least (see [`MIN_SAMPLE`]).
pub fn sampled_steps(layout: &Layout) -> u64 {
    MIN_SAMPLE
        .saturating_mul(layout.columns() as u64)
        .saturating_mul(mean_levels(layout))
}

/// Level count of a column on average, rounded up.
fn mean_levels(layout: &Layout) -> u64 {
    let k = layout.columns().max(1);
    layout.levels.iter().sum::<usize>().div_ceil(k) as u64
}

/// Fewest fixed factors or subsets a level choice is scored on when the work bound
/// samples them: below this the choices approach random ones.
const MIN_SAMPLE: u64 = 16;

/// The level of `f` with the highest score whose choice keeps the row extendable; ties go
/// to the first from a random starting level.
fn choose_level(score: &[u64], cons: &mut Constraints, rng: &mut Rng, row: &mut [u8], f: usize) -> u8 {
    let v = score.len();
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
