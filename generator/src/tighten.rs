//! Offline tightening: a local search that takes a valid design, removes a row, and
//! searches for a valid design with the rows that are left; on success it removes another.
//!
//! The search is the tabu search of Nurmela (2004, "Upper bounds for covering arrays by
//! tabu search"): the cost of an array is its total shortfall (Σ over possible
//! interactions of λ minus times covered, when positive); each step picks an interaction
//! that is short at random and considers, for the rows that need the fewest cell changes
//! to show it, the change of those cells; the best change is made, except that a cell
//! changed within the last few steps may not change again unless that reaches cost 0.
//! With many levels a change that makes the cost worse is made only with a probability
//! falling geometrically in how much worse (a Metropolis-style rule as in simulated
//! annealing, Cohen, Colbourn and Ling 2003). Cost changes are computed incrementally:
//! changing one cell only touches the t-sets through its column, and the interaction each
//! row shows on each t-set is cached. The start-and-shrink loop around it (remove the row
//! the others depend on least, repair, repeat) follows the row-reduction scheme of Cohen,
//! Colbourn and Ling (2003).
//!
//! Rows before `fixed` (required rows) never change and are never removed. No change may
//! produce a row the constraints exclude: when the cells that show the interaction make the
//! row excluded, the row's other constrained cells are changed too, as few as the exact
//! extendability search allows, or the row is not a candidate.

use crate::constraints::Constraints;
use crate::factor::{Row, UNSET};
use crate::incidence::Incidence;
use crate::rng::Rng;

/// Tuning of the search.
#[derive(Clone, Copy, Debug)]
pub struct Params {
    /// Moves allowed: examining the change of one cell is one move, or more when its
    /// column lies in more than [`MOVE_SETS`] t-sets (one per started [`MOVE_SETS`]), so
    /// that a budget bounds the work on any spec.
    pub budget: u64,
    /// Moves without finding a smaller design after which the search gives up.
    pub patience: u64,
    /// Steps during which a changed cell may not change again.
    pub tenure: u64,
    /// Probability, in 1/65536, of making a best change that worsens the cost by one
    /// (by d: that to the power d); otherwise the step changes nothing.
    pub accept: u32,
}

impl Params {
    /// The tuning used for a move budget at strength `t` on factors of at most `vmax`
    /// levels: tenure t + 1 steps; a worsening best change is always made, as in
    /// Nurmela's search, except with 4 or more levels, where it is made with probability
    /// about 0.46 per unit of cost. (Tuned on the benchmark: always moving stalls a row
    /// higher on 4^15 and 5^20 at t = 2; moving less often loses rows on binary arrays of
    /// index λ > 1 and of high strength.)
    pub fn new(budget: u64, t: usize, vmax: usize) -> Self {
        Params {
            budget,
            patience: u64::MAX,
            tenure: t as u64 + 1,
            accept: if vmax >= 4 { 30_000 } else { 1 << 16 },
        }
    }
}

/// Most rows the search works on: per-interaction slack is kept in 16 bits.
pub const SEARCH_MAX_ROWS: usize = 30_000;

/// t-sets through the changed column that one move pays for (see [`Params::budget`]).
pub const MOVE_SETS: u64 = 64;

/// Most (row, t-set) pairs the search caches the shown interaction of (4 bytes each).
pub const MAX_SHOWN: usize = 1 << 24;

const ABSENT: u32 = u32::MAX;

/// The interactions still short of λ, in no particular order, with each one's position in
/// the list: adding, removing and drawing one at random are all O(1). Both local searches
/// keep one.
pub(crate) struct Shortfall {
    list: Vec<u32>,
    pos: Vec<u32>,
}

impl Shortfall {
    /// An empty list over this many interactions.
    pub(crate) fn new(interactions: usize) -> Self {
        Shortfall {
            list: Vec::new(),
            pos: vec![ABSENT; interactions],
        }
    }

    /// Interaction i became short.
    pub(crate) fn add(&mut self, i: usize) {
        self.pos[i] = self.list.len() as u32;
        // interaction indices fit u32: the layout numbers them with u32 offsets
        self.list.push(i as u32);
    }

    /// Interaction i is short no more (the last one takes its place).
    pub(crate) fn remove(&mut self, i: usize) {
        let p = self.pos[i] as usize;
        let last = self.list.pop().unwrap_or(i as u32);
        if p < self.list.len() {
            self.list[p] = last;
            self.pos[last as usize] = p as u32;
        }
        self.pos[i] = ABSENT;
    }

    /// A short interaction at random (the list is not empty while the cost is positive).
    pub(crate) fn draw(&self, rng: &mut Rng) -> usize {
        self.list[rng.index(self.list.len())] as usize
    }
}

/// The rows of a flat `n × k` cell array.
pub(crate) fn rows_of(cells: &[u8], k: usize) -> Vec<Row> {
    cells.chunks(k.max(1)).map(<[u8]>::to_vec).collect()
}

/// What a local search starts from: a valid design (every interaction covered as often as
/// `need` asks — λ of its set, 0 where impossible — and every row allowed) whose first
/// `fixed` rows never change, and the fewest rows worth trying for.
pub(crate) struct Problem<'a> {
    pub(crate) inc: &'a Incidence,
    pub(crate) need: &'a [u16],
    pub(crate) rows: &'a [Row],
    pub(crate) fixed: usize,
    pub(crate) floor: usize,
}

impl Problem<'_> {
    /// The fewest rows to try for: the floor, the fixed rows, and one row.
    pub(crate) fn floor(&self) -> usize {
        self.floor.max(self.fixed).max(1)
    }

    /// The outcome when the search does not run: the rows as they are.
    pub(crate) fn unchanged(&self) -> Outcome {
        Outcome {
            rows: self.rows.to_vec(),
            moves: 0,
        }
    }
}

/// What the search returns.
#[derive(Clone, Debug)]
pub struct Outcome {
    /// The smallest valid design found (the input when nothing better was found).
    pub rows: Vec<Row>,
    /// Moves spent.
    pub moves: u64,
}

struct Search<'a> {
    inc: &'a Incidence,
    k: usize,
    sets: usize,
    fixed: usize,
    n: usize,
    /// `n × k` cells, row-major.
    cells: Vec<u8>,
    /// `n × sets`: the interaction each row shows on each t-set.
    shown: Vec<u32>,
    /// Times covered minus times needed, per interaction.
    slack: Vec<i16>,
    /// Interactions with negative slack.
    short: Shortfall,
    /// Σ of the negative slacks, negated.
    cost: u64,
    /// Step until which each cell is tabu.
    tabu: Vec<u64>,
    /// Per column: 0, or 1 + its position in the change being evaluated.
    mark: Vec<u16>,
}

impl<'a> Search<'a> {
    fn new(inc: &'a Incidence, need: &[u16], rows: &[Row], fixed: usize) -> Self {
        let k = rows.first().map_or(0, Vec::len);
        let sets = inc.sets();
        let mut slack: Vec<i16> = need.iter().map(|&n| -(n as i16)).collect();
        let mut cells = Vec::with_capacity(rows.len() * k);
        let mut shown = Vec::with_capacity(rows.len() * sets);
        for row in rows {
            cells.extend_from_slice(row);
            for rank in 0..sets {
                let i = inc.index(rank, row);
                slack[i] += 1;
                // interaction indices fit u32: the layout numbers them with u32 offsets
                shown.push(i as u32);
            }
        }
        let mut s = Search {
            inc,
            k,
            sets,
            fixed,
            n: rows.len(),
            cells,
            shown,
            short: Shortfall::new(slack.len()),
            slack,
            cost: 0,
            tabu: vec![0; rows.len() * k],
            mark: vec![0; k],
        };
        for i in 0..s.slack.len() {
            if s.slack[i] < 0 {
                s.cost += (-s.slack[i]) as u64;
                s.short.add(i);
            }
        }
        s
    }

    fn row(&self, r: usize) -> &[u8] {
        &self.cells[r * self.k..(r + 1) * self.k]
    }

    fn rows(&self) -> Vec<Row> {
        rows_of(&self.cells, self.k)
    }

    fn dec(&mut self, i: usize) {
        let s = self.slack[i];
        self.slack[i] = s - 1;
        if s <= 0 {
            self.cost += 1;
            if s == 0 {
                self.short.add(i);
            }
        }
    }

    fn inc(&mut self, i: usize) {
        let s = self.slack[i];
        self.slack[i] = s + 1;
        if s < 0 {
            self.cost -= 1;
            if s == -1 {
                self.short.remove(i);
            }
        }
    }

    /// Sets one cell, updating the slack of the t-sets through its column.
    fn set_cell(&mut self, r: usize, c: usize, val: u8) {
        let old = self.cells[r * self.k + c];
        if old == val {
            return;
        }
        let inc = self.inc;
        let base = r * self.sets;
        for (&rank, &w) in inc.through(c).iter().zip(inc.through_weights(c)) {
            let i_old = self.shown[base + rank as usize] as usize;
            let i_new = i_old + val as usize * w as usize - old as usize * w as usize;
            self.dec(i_old);
            self.inc(i_new);
            self.shown[base + rank as usize] = i_new as u32;
        }
        self.cells[r * self.k + c] = val;
    }

    /// Change in cost if row `r` took the values `changes` (distinct columns, each
    /// different from the row's current value).
    fn delta(&mut self, r: usize, changes: &[(usize, u8)]) -> i64 {
        let inc = self.inc;
        let base = r * self.sets;
        let row = &self.cells[r * self.k..(r + 1) * self.k];
        let mut d = 0i64;
        if let [(c, val)] = *changes {
            let cur = row[c] as usize;
            for (&rank, &w) in inc.through(c).iter().zip(inc.through_weights(c)) {
                let old = self.shown[base + rank as usize] as usize;
                let new = old + val as usize * w as usize - cur * w as usize;
                d += (self.slack[old] <= 0) as i64 - (self.slack[new] < 0) as i64;
            }
            return d;
        }
        for (j, &(c, _)) in changes.iter().enumerate() {
            // at most one change per column, and columns are below MAX_FACTORS = 4096
            self.mark[c] = j as u16 + 1;
        }
        for (j, &(c, _)) in changes.iter().enumerate() {
            'sets: for &rank in inc.through(c) {
                let rank = rank as usize;
                let old = self.shown[base + rank] as usize;
                let mut new = old;
                for (&col, &w) in inc.cols(rank).iter().zip(inc.weights(rank)) {
                    let m = self.mark[col as usize] as usize;
                    if m == 0 {
                        continue;
                    }
                    if m - 1 < j {
                        // counted with the earlier changed column
                        continue 'sets;
                    }
                    let (_, val) = changes[m - 1];
                    new = new + val as usize * w as usize - row[col as usize] as usize * w as usize;
                }
                d += (self.slack[old] <= 0) as i64 - (self.slack[new] < 0) as i64;
            }
        }
        for &(c, _) in changes {
            self.mark[c] = 0;
        }
        d
    }

    /// How much cost removing row `r` would add.
    fn removal_cost(&self, r: usize) -> u64 {
        self.shown[r * self.sets..(r + 1) * self.sets]
            .iter()
            .filter(|&&i| self.slack[i as usize] <= 0)
            .count() as u64
    }

    /// Removes the row whose loss adds the least cost (ties at random).
    fn remove_cheapest(&mut self, rng: &mut Rng) {
        let mut best = (u64::MAX, self.fixed);
        let mut ties = 0u32;
        for r in self.fixed..self.n {
            let c = self.removal_cost(r);
            if c < best.0 {
                best = (c, r);
                ties = 1;
            } else if c == best.0 {
                ties += 1;
                if rng.below(ties) == 0 {
                    best.1 = r;
                }
            }
        }
        self.remove(best.1);
    }

    fn remove(&mut self, r: usize) {
        let sets = self.sets;
        for rank in 0..sets {
            self.dec(self.shown[r * sets + rank] as usize);
        }
        let last = self.n - 1;
        if r != last {
            let k = self.k;
            self.cells.copy_within(last * k..(last + 1) * k, r * k);
            self.tabu.copy_within(last * k..(last + 1) * k, r * k);
            self.shown.copy_within(last * sets..(last + 1) * sets, r * sets);
        }
        self.n -= 1;
        self.cells.truncate(self.n * self.k);
        self.tabu.truncate(self.n * self.k);
        self.shown.truncate(self.n * sets);
    }
}

/// Whether the search takes a design of `rows` rows over `sets` t-sets at all (it refuses
/// beyond [`SEARCH_MAX_ROWS`] rows or [`MAX_SHOWN`] cached interactions, keeping memory bounded).
pub fn fits(rows: usize, sets: usize) -> bool {
    rows <= SEARCH_MAX_ROWS && rows.saturating_mul(sets) <= MAX_SHOWN
}

/// The local search that fits the problem, with its name: this tabu search while its
/// per-row tables fit ([`fits`]), annealing (`crate::anneal`, whose memory does not grow
/// with rows × sets) past them; `vmax` (most levels of a factor) tunes the tabu search.
pub(crate) fn search(
    problem: &Problem<'_>,
    cons: &mut Constraints,
    rng: &mut Rng,
    budget: u64,
    vmax: usize,
) -> (&'static str, Outcome) {
    if fits(problem.rows.len(), problem.inc.sets()) {
        let params = Params::new(budget, problem.inc.t(), vmax);
        ("tabu", tighten(problem, cons, rng, params))
    } else {
        let params = crate::anneal::Params::new(budget);
        ("anneal", crate::anneal::anneal(problem, cons, rng, params))
    }
}

/// [`search`], its moves charged to `work` (a move pays for [`MOVE_SETS`] sets), and its
/// rows taken when fewer than the problem's: returned, with `method` gaining `+tabu` or
/// `+anneal`. The other value is the line for a design's list of methods, `{label}`
/// after the search's name.
pub(crate) fn shrink(
    problem: &Problem<'_>,
    cons: &mut Constraints,
    rng: &mut Rng,
    (budget, vmax): (u64, usize),
    work: &mut crate::work::Work,
    method: &mut String,
    label: &str,
) -> (Option<Vec<Row>>, String) {
    let (name, out) = search(problem, cons, rng, budget, vmax);
    work.spend(out.moves.saturating_mul(MOVE_SETS));
    let line = format!("{name} {label}: {} rows in {} moves", out.rows.len(), out.moves);
    if out.rows.len() < problem.rows.len() {
        method.push('+');
        method.push_str(name);
        return (Some(out.rows), line);
    }
    (None, line)
}

/// Searches for a smaller design than the problem's rows, never going below its floor,
/// never touching its fixed rows. Deterministic for a given `rng` state and budget.
pub(crate) fn tighten(
    problem: &Problem<'_>,
    cons: &mut Constraints,
    rng: &mut Rng,
    params: Params,
) -> Outcome {
    let floor = problem.floor();
    if problem.rows.len() <= floor || !fits(problem.rows.len(), problem.inc.sets()) {
        return problem.unchanged();
    }
    let Problem {
        inc,
        need,
        rows,
        fixed,
        ..
    } = *problem;
    let mut s = Search::new(inc, need, rows, fixed);
    let mut best = rows.to_vec();
    s.remove_cheapest(rng);
    let accept = acceptance(params.accept);
    let mut moves = 0u64;
    let mut last_success = 0u64;
    let mut step = 0u64;
    let (mut cols, mut lv) = (Vec::new(), Vec::new());
    let mut changes: Vec<(usize, u8)> = Vec::with_capacity(inc.t());
    let mut best_changes: Vec<(usize, u8)> = Vec::with_capacity(inc.t());
    let mut scratch: Row = vec![0; s.k];
    let mut partial: Row = vec![UNSET; s.k];
    let k = s.k;
    // a move on a column in more than 64 t-sets counts as proportionally more moves, so a
    // budget bounds the time whatever the spec
    let per_column = inc.widest_through() as u64;
    let charge = per_column.div_ceil(MOVE_SETS).max(1);
    while moves < params.budget && moves - last_success < params.patience {
        if s.cost == 0 {
            best = s.rows();
            last_success = moves;
            if s.n <= floor {
                break;
            }
            s.remove_cheapest(rng);
            continue;
        }
        let target = s.short.draw(rng);
        inc.decode_into(target, &mut cols, &mut lv);
        // only the rows that need the fewest cell changes are candidates
        let mismatches = |s: &Search, r: usize| {
            cols.iter()
                .zip(&lv)
                .filter(|&(&c, &l)| s.cells[r * k + c] != l)
                .count()
        };
        let fewest = (s.fixed..s.n)
            .map(|r| mismatches(&s, r))
            .filter(|&m| m > 0)
            .min()
            .unwrap_or(0);
        let mut best_d = i64::MAX;
        let mut best_r = usize::MAX;
        let mut ties = 0u32;
        let moves_before = moves;
        for r in s.fixed..s.n {
            if mismatches(&s, r) != fewest {
                continue;
            }
            changes.clear();
            let mut tabu = false;
            let mut constrained = false;
            for (&c, &l) in cols.iter().zip(&lv) {
                if s.cells[r * k + c] != l {
                    changes.push((c, l));
                    tabu |= s.tabu[r * k + c] > step;
                    constrained |= cons.involves(c);
                }
            }
            if constrained {
                scratch.copy_from_slice(s.row(r));
                for &(c, l) in &changes {
                    scratch[c] = l;
                }
                if !cons.allows(&scratch) {
                    // change other constrained cells of the row as well, as few as it takes
                    if !repair(cons, inc, &mut scratch, &cols, &mut partial) {
                        continue;
                    }
                    changes.clear();
                    for (c, &l) in scratch.iter().enumerate() {
                        if l != s.cells[r * k + c] {
                            changes.push((c, l));
                            tabu |= s.tabu[r * k + c] > step;
                        }
                    }
                }
            }
            let d = s.delta(r, &changes);
            moves += charge * changes.len() as u64;
            // a tabu change is allowed only when it completes the design (aspiration)
            if tabu && s.cost as i64 + d > 0 {
                continue;
            }
            if d < best_d {
                best_d = d;
                ties = 1;
            } else if d == best_d {
                ties += 1;
                if rng.below(ties) != 0 {
                    continue;
                }
            } else {
                continue;
            }
            best_r = r;
            best_changes.clone_from(&changes);
        }
        let take = best_r != usize::MAX
            && (best_d <= 0
                || params.accept >= 1 << 16
                || rng.next_u32() < accept[(best_d as usize).min(accept.len() - 1)]);
        if take {
            for &(c, l) in &best_changes {
                s.set_cell(best_r, c, l);
                s.tabu[best_r * k + c] = step + params.tenure;
            }
        }
        if moves == moves_before {
            // nothing could be examined (every change excluded): the step still costs
            moves += 1;
        }
        step += 1;
    }
    Outcome { rows: best, moves }
}

/// Makes `row`, whose cells on `keep` are set as wanted, allowed by changing only its
/// other constrained cells, each kept as it is when the row stays completable. False when
/// no allowed row shows the kept cells.
pub(crate) fn repair(
    cons: &mut Constraints,
    inc: &Incidence,
    row: &mut [u8],
    keep: &[usize],
    partial: &mut [u8],
) -> bool {
    partial.fill(UNSET);
    for &c in keep {
        partial[c] = row[c];
    }
    if !cons.extendable(partial) {
        return false;
    }
    for c in 0..row.len() {
        if partial[c] != UNSET || !cons.involves(c) {
            continue;
        }
        partial[c] = row[c];
        if !cons.extendable(partial) {
            // some level keeps it completable: the partial row was completable before
            let Some(l) = (0..inc.level_count(c) as u8).find(|&l| {
                partial[c] = l;
                cons.extendable(partial)
            }) else {
                return false;
            };
            partial[c] = l;
        }
    }
    for (cell, &p) in row.iter_mut().zip(partial.iter()) {
        if p != UNSET {
            *cell = p;
        }
    }
    true
}

/// Thresholds on a uniform u32 for accepting a move that worsens the cost by d (index d):
/// `p^d` for the per-unit probability `p = per_65536 / 65536`, in integer arithmetic so
/// every platform agrees. Index 0 is unused; worse changes than the table is long use its
/// last entry.
pub(crate) fn acceptance(per_65536: u32) -> [u32; 16] {
    let mut table = [0u32; 16];
    let mut p: u64 = 1 << 32;
    for slot in table.iter_mut() {
        *slot = p.min(u32::MAX as u64) as u32;
        p = (p * per_65536 as u64) >> 16;
    }
    table
}
