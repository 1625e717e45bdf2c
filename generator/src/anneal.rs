//! Simulated annealing for designs too large for the tabu search's tables: the same
//! start-and-shrink loop (remove a row, repair, repeat), with memory that does not grow
//! with rows × t-sets — one counter per interaction and the cells, nothing cached per
//! row and t-set — after Cohen, Colbourn & Ling (2008, "Constructing strength three
//! covering arrays with augmented annealing").
//!
//! The cost is the total shortfall (Σ over possible interactions of λ minus times
//! covered, when positive), as in [`crate::tighten`]. A move picks an interaction that is
//! short, a random row, and changes the cells that differ so that the row shows it (plus,
//! where constraints require, other constrained cells, as in the tabu search); its effect
//! on the cost is computed from the t-sets through the changed columns only, each row's
//! interaction on a t-set recomputed from its cells (t lookups) instead of read from a
//! table. A move that does not raise the cost is made; one that raises it by d is made
//! with probability p^d = exp(−d/T) (Metropolis; Kirkpatrick, Gelatt & Vecchi 1983), the
//! temperature halving every so many moves (p squared) and starting again after every row
//! removed. The probabilities are integers in 1/65536 squared in integer arithmetic, so
//! every platform agrees.

use crate::constraints::Constraints;
use crate::factor::{Row, UNSET};
use crate::incidence::Incidence;
use crate::rng::Rng;
use crate::tighten::{MOVE_SETS, Outcome, Problem, Shortfall, acceptance, repair, rows_of};

/// Tuning of the annealing (chosen by hand on the benchmark's wide specs).
#[derive(Clone, Copy, Debug)]
pub struct Params {
    /// Moves allowed, counted as in [`crate::tighten::Params::budget`].
    pub budget: u64,
    /// Probability, in 1/65536, of making a move that raises the cost by one, at the
    /// start and after every removed row (that is exp(−1/T) for the temperature T).
    pub accept: u32,
    /// Moves over which the temperature halves.
    pub half_life: u64,
    /// Rows among which the next row to remove is chosen (the one whose loss costs
    /// least): scoring every row would visit every row and t-set.
    pub removal_sample: usize,
}

impl Params {
    /// The tuning for a move budget.
    pub fn new(budget: u64) -> Self {
        Params {
            budget,
            // exp(−2): T = 1/2 cost unit
            accept: 8_869,
            half_life: 20_000,
            removal_sample: 16,
        }
    }
}

struct Anneal<'a> {
    inc: &'a Incidence,
    /// Rows needed per interaction (λ of its set, 0 where impossible).
    need: &'a [u16],
    k: usize,
    n: usize,
    fixed: usize,
    cells: Vec<u8>,
    /// Times covered, per interaction (saturating).
    count: Vec<u16>,
    /// Possible interactions covered fewer than λ times.
    short: Shortfall,
    cost: u64,
}

impl<'a> Anneal<'a> {
    fn new(inc: &'a Incidence, need: &'a [u16], rows: &[Row], fixed: usize) -> Self {
        let k = rows.first().map_or(0, Vec::len);
        let mut a = Anneal {
            inc,
            need,
            k,
            n: 0,
            fixed,
            cells: Vec::with_capacity(rows.len() * k),
            count: vec![0; need.len()],
            short: Shortfall::new(need.len()),
            cost: 0,
        };
        for (i, &n) in need.iter().enumerate() {
            if n > 0 {
                a.cost += n as u64;
                a.short.add(i);
            }
        }
        for row in rows {
            a.cells.extend_from_slice(row);
            a.n += 1;
            for rank in 0..inc.sets() {
                a.add(inc.index(rank, row));
            }
        }
        a
    }

    fn row(&self, r: usize) -> &[u8] {
        &self.cells[r * self.k..(r + 1) * self.k]
    }

    fn rows(&self) -> Vec<Row> {
        rows_of(&self.cells, self.k)
    }

    /// One more row shows interaction i.
    fn add(&mut self, i: usize) {
        let c = self.count[i];
        self.count[i] = c.saturating_add(1);
        let need = self.need[i];
        if c < need {
            self.cost -= 1;
            if c + 1 == need {
                self.short.remove(i);
            }
        }
    }

    /// One row fewer shows interaction i.
    fn remove_one(&mut self, i: usize) {
        let c = self.count[i];
        self.count[i] = c - 1;
        let need = self.need[i];
        if c <= need && need > 0 {
            self.cost += 1;
            if c == need {
                self.short.add(i);
            }
        }
    }

    /// Sets one cell, updating the counts of the t-sets through its column.
    fn set_cell(&mut self, r: usize, c: usize, val: u8) {
        let old = self.cells[r * self.k + c];
        if old == val {
            return;
        }
        let inc = self.inc;
        for (&rank, &w) in inc.through(c).iter().zip(inc.through_weights(c)) {
            let i_old = inc.index(rank as usize, self.row(r));
            let i_new = i_old + val as usize * w as usize - old as usize * w as usize;
            self.remove_one(i_old);
            self.add(i_new);
        }
        self.cells[r * self.k + c] = val;
    }

    /// How much cost removing row `r` would add.
    fn removal_cost(&self, r: usize) -> u64 {
        let row = self.row(r);
        (0..self.inc.sets())
            .filter(|&rank| {
                let i = self.inc.index(rank, row);
                self.need[i] > 0 && self.count[i] <= self.need[i]
            })
            .count() as u64
    }

    /// Removes the cheapest of a few random rows (never a fixed one).
    fn remove_cheapest(&mut self, rng: &mut Rng, sample: usize) {
        let free = self.n - self.fixed;
        let mut best = (u64::MAX, self.fixed);
        for _ in 0..sample.min(free) {
            let r = self.fixed + rng.index(free);
            let c = self.removal_cost(r);
            if c < best.0 {
                best = (c, r);
            }
        }
        let r = best.1;
        for rank in 0..self.inc.sets() {
            let i = self.inc.index(rank, self.row(r));
            self.remove_one(i);
        }
        let last = self.n - 1;
        if r != last {
            let k = self.k;
            self.cells.copy_within(last * k..(last + 1) * k, r * k);
        }
        self.n -= 1;
        self.cells.truncate(self.n * self.k);
    }
}

/// Searches for a smaller design than the problem's rows, as [`crate::tighten`] does.
/// Deterministic for a given `rng` state and budget.
pub(crate) fn anneal(
    problem: &Problem<'_>,
    cons: &mut Constraints,
    rng: &mut Rng,
    params: Params,
) -> Outcome {
    let floor = problem.floor();
    // counters are 16 bits wide (λ ≤ MAX_LAMBDA keeps this from happening)
    if problem.rows.len() <= floor || problem.need.contains(&u16::MAX) {
        return problem.unchanged();
    }
    let Problem {
        inc,
        need,
        rows,
        fixed,
        ..
    } = *problem;
    let mut s = Anneal::new(inc, need, rows, fixed);
    let mut best = rows.to_vec();
    s.remove_cheapest(rng, params.removal_sample);
    let k = s.k;
    let per_column = inc.widest_through() as u64;
    let charge = per_column.div_ceil(MOVE_SETS).max(1);
    let mut moves = 0u64;
    let mut since = 0u64;
    let mut table = acceptance(params.accept);
    let mut halvings = 0u64;
    let (mut cols, mut lv) = (Vec::new(), Vec::new());
    let mut scratch: Row = vec![0; k];
    let mut partial: Row = vec![UNSET; k];
    let mut changes: Vec<(usize, u8, u8)> = Vec::with_capacity(k);
    while moves < params.budget {
        if s.cost == 0 {
            best = s.rows();
            if s.n <= floor {
                break;
            }
            s.remove_cheapest(rng, params.removal_sample);
            since = 0;
            continue;
        }
        // the temperature halves (the per-unit probability is squared) every
        // `half_life` moves since the last removal
        let due = (since / params.half_life.max(1)).min(8);
        if due != halvings {
            let mut p = params.accept as u64;
            for _ in 0..due {
                p = (p * p) >> 16;
            }
            table = acceptance(p as u32);
            halvings = due;
        }
        let target = s.short.draw(rng);
        inc.decode_into(target, &mut cols, &mut lv);
        let r = s.fixed + rng.index(s.n - s.fixed);
        scratch.copy_from_slice(s.row(r));
        let mut constrained = false;
        for (&c, &l) in cols.iter().zip(&lv) {
            scratch[c] = l;
            constrained |= cons.involves(c);
        }
        if constrained && !cons.allows(&scratch) && !repair(cons, inc, &mut scratch, &cols, &mut partial) {
            moves += 1;
            since += 1;
            continue;
        }
        changes.clear();
        for (c, (&new, &old)) in scratch.iter().zip(s.row(r)).enumerate() {
            if new != old {
                changes.push((c, old, new));
            }
        }
        let before = s.cost;
        for &(c, _, new) in &changes {
            s.set_cell(r, c, new);
        }
        let rise = s.cost as i64 - before as i64;
        let keep = rise <= 0 || rng.next_u32() < table[(rise as usize).min(table.len() - 1)];
        if !keep {
            for &(c, old, _) in changes.iter().rev() {
                s.set_cell(r, c, old);
            }
        }
        let spent = charge * changes.len().max(1) as u64 * if keep { 1 } else { 2 };
        moves += spent;
        since += spent;
    }
    Outcome { rows: best, moves }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::interactions::Layout;

    /// Whether every interaction is covered `lambda` times (brute force over t-sets).
    fn covers(rows: &[Row], levels: &[usize], t: usize, lambda: u32) -> bool {
        let lay = Layout::new(levels, t);
        let mut count = vec![0u32; lay.total()];
        for r in rows {
            lay.for_each_in_row(r, |i| count[i] += 1);
        }
        count.iter().all(|&c| c >= lambda)
    }

    #[test]
    fn shrinks_a_padded_design_and_keeps_it_valid() {
        // the full factorial 3^4 (81 rows) covers every pair 9 times; annealing at λ = 1
        // must reach a valid design far smaller, at least the 9 rows of OA(9; 2, 4, 3)
        // (Bose 1938) being the floor
        let levels = [3usize; 4];
        let lay = Layout::new(&levels, 2);
        let inc = Incidence::new(&lay);
        let rows: Vec<Row> = (0..81u8)
            .map(|x| vec![x / 27, x / 9 % 3, x / 3 % 3, x % 3])
            .collect();
        let need = vec![1u16; lay.total()];
        let mut cons = Constraints::new(&[], &levels);
        let problem = Problem {
            inc: &inc,
            need: &need,
            rows: &rows,
            fixed: 0,
            floor: 9,
        };
        let mut run = || anneal(&problem, &mut cons, &mut Rng::new(1, 2), Params::new(200_000));
        let out = run();
        assert!(covers(&out.rows, &levels, 2, 1));
        assert!(out.rows.len() <= 12, "{} rows", out.rows.len());
        assert!(out.rows.len() >= 9);
        // deterministic
        assert_eq!(run().rows, out.rows);
    }

    #[test]
    fn fixed_rows_and_excludes_are_respected() {
        use crate::expr::Expr;
        let levels = [2usize; 5];
        let lay = Layout::new(&levels, 2);
        let inc = Incidence::new(&lay);
        let excludes = [Expr::is(0, 1).and(Expr::is(1, 1))];
        let mut cons = Constraints::new(&excludes, &levels);
        let (possible, _) = cons.possible(&lay);
        let need: Vec<u16> = possible.iter().map(|&p| u16::from(p)).collect();
        // every allowed row once: valid, with slack
        let rows: Vec<Row> = (0..32u8)
            .map(|x| (0..5).map(|c| x >> c & 1).collect::<Row>())
            .filter(|r| cons.allows(r))
            .collect();
        let first = rows[0].clone();
        let mut rng = Rng::new(3, 2);
        let out = anneal(
            &Problem {
                inc: &inc,
                need: &need,
                rows: &rows,
                fixed: 1,
                floor: 4,
            },
            &mut cons,
            &mut rng,
            Params::new(100_000),
        );
        assert_eq!(out.rows[0], first);
        assert!(out.rows.iter().all(|r| cons.allows(r)));
        assert!(out.rows.len() < rows.len());
        let mut count = vec![0u32; lay.total()];
        for r in &out.rows {
            lay.for_each_in_row(r, |i| count[i] += 1);
        }
        assert!(count.iter().zip(&possible).all(|(&c, &p)| !p || c >= 1));
    }
}
