//! Covering arrays invariant under a group acting on the levels: the array is the union of
//! the orbits of a few starter rows (plus, if chosen, the constant rows), so a search needs to
//! place only the starters, and a t-set is covered once its starters meet every orbit of
//! level tuples — a problem |G| times smaller than the array's. Group constructions of
//! this kind (Chateauneuf, Colbourn & Kreher 1999 for strength 3; Meagher & Stevens 2005,
//! "Group construction of covering arrays", for strength 2) give many of the best known
//! arrays with several levels, where the engine's other methods are furthest from them.
//!
//! The starters are found by a tabu search on the weighted count of uncovered (t-set,
//! orbit) pairs, kept incrementally, whose move rewrites one starter on the t-set of an
//! uncovered pair so that it covers that pair (see `Search::tabu`); once every pair is
//! covered the least useful starter is dropped and the search goes on.

use crate::construct::constant_rows;
use crate::construct::gf::Field;
use crate::factor::Row;
use crate::incidence::Incidence;
use crate::interactions::Layout;
use crate::rng::Rng;
use crate::work::Work;

/// A permutation group on the levels `0..v`, given by generators, applied to every column
/// alike.
#[derive(Clone, Debug)]
pub(crate) struct Group {
    /// Name for reports, e.g. `AGL(1,3)`.
    pub name: String,
    /// Generators: `gens[g][x]` is the image of level x.
    gens: Vec<Vec<u8>>,
    /// Number of elements.
    order: usize,
}

impl Group {
    /// The affine group x ↦ ax + b (a ≠ 0) of GF(q), sharply 2-transitive: a t-set's
    /// tuples fall into few orbits, so few starters suffice (the groups of Chateauneuf,
    /// Colbourn & Kreher 1999); None unless q is a prime power.
    pub fn affine(q: usize) -> Option<Group> {
        let f = Field::new(q)?;
        let all = |g: u8| (0..q).map(|x| f.mul(g, x as u8)).collect::<Vec<u8>>();
        // a primitive element: its powers reach every nonzero element
        let primitive = (1..q as u8).find(|&g| {
            let mut x = 1u8;
            (1..q - 1).all(|_| {
                x = f.mul(x, g);
                x != 1
            })
        })?;
        Some(Group {
            name: format!("AGL(1,{q})"),
            gens: vec![(0..q).map(|x| f.add(x as u8, 1)).collect(), all(primitive)],
            order: q * (q - 1),
        })
    }

    /// The groups worth trying for `v` levels: the affine group where v is a prime power
    /// of at least 3 (the cyclic groups, also tried, reached the benchmark's sizes on
    /// none of its strength-3 instances within the same moves).
    pub fn candidates(v: usize) -> Vec<Group> {
        Group::affine(v).into_iter().filter(|_| v >= 3).collect()
    }

    /// The orbit of a row under the group (the row first), by closure under the
    /// generators.
    fn orbit(&self, row: &[u8]) -> Vec<Row> {
        let mut out = vec![row.to_vec()];
        let mut next = 0;
        while next < out.len() {
            for g in &self.gens {
                let image: Row = out[next].iter().map(|&x| g[x as usize]).collect();
                if !out.contains(&image) {
                    out.push(image);
                }
            }
            next += 1;
        }
        out
    }
}

/// The orbits of the group on level tuples of length t (tuples numbered with the first
/// level least significant, as [`Layout`] numbers a t-set's interactions).
struct Orbits {
    /// Orbit of each tuple.
    of: Vec<u32>,
    /// Tuples of each orbit: `members[start[o]..start[o + 1]]`.
    members: Vec<u32>,
    start: Vec<usize>,
}

impl Orbits {
    fn new(group: &Group, v: usize, t: usize) -> Orbits {
        let n = v.pow(t as u32);
        let mut of = vec![u32::MAX; n];
        let mut orbits: Vec<Vec<u32>> = Vec::new();
        let mut digits = vec![0u8; t];
        for first in 0..n {
            if of[first] != u32::MAX {
                continue;
            }
            let id = orbits.len() as u32;
            of[first] = id;
            let mut members = vec![first as u32];
            let mut next = 0;
            while next < members.len() {
                decode(members[next] as usize, v, &mut digits);
                for g in &group.gens {
                    let image = digits
                        .iter()
                        .rev()
                        .fold(0usize, |acc, &x| acc * v + g[x as usize] as usize);
                    if of[image] == u32::MAX {
                        of[image] = id;
                        members.push(image as u32);
                    }
                }
                next += 1;
            }
            orbits.push(members);
        }
        let mut start = vec![0];
        let mut flat = Vec::with_capacity(n);
        for o in &orbits {
            flat.extend_from_slice(o);
            start.push(flat.len());
        }
        Orbits {
            of,
            members: flat,
            start,
        }
    }

    fn count(&self) -> usize {
        self.start.len() - 1
    }

    fn members(&self, orbit: usize) -> &[u32] {
        &self.members[self.start[orbit]..self.start[orbit + 1]]
    }
}

/// Digits of tuple `index` base v, first least significant.
fn decode(mut index: usize, v: usize, digits: &mut [u8]) {
    for d in digits.iter_mut() {
        *d = (index % v) as u8;
        index /= v;
    }
}

/// Rows added beside the starters' orbits.
#[derive(Clone, Copy, Debug)]
enum Extras {
    None,
    /// Every constant row: the orbit of the constant tuples, which a starter would cover
    /// only with as many rows as the group has elements.
    Constant,
}

impl Extras {
    fn rows(self, v: usize, k: usize) -> Vec<Row> {
        match self {
            Extras::None => Vec::new(),
            Extras::Constant => constant_rows(v, k),
        }
    }

    fn name(self) -> &'static str {
        match self {
            Extras::None => "",
            Extras::Constant => ",constant rows",
        }
    }
}

/// A design found, with its method name.
pub(crate) struct Found {
    pub method: String,
    pub rows: Vec<Row>,
}

/// Moves one attempt at a given number of starters may take, per t-set of the spec
/// (measured on the benchmark's 3^12 at t = 3, whose 45 rows it reaches).
const MOVES_PER_SET: u64 = 200;

/// The smallest design of strength t on k columns of v levels that is the union of
/// orbits of starters under one of the candidate groups, with fewer than `below` rows;
/// None when no group reaches that within the work given.
pub(crate) fn search(
    v: usize,
    k: usize,
    t: usize,
    below: usize,
    rng: &mut Rng,
    work: &mut Work,
) -> Option<Found> {
    if v < 2 || t < 2 || k <= t || v > u8::MAX as usize {
        return None;
    }
    let layout = Layout::new(&vec![v; k], t);
    let inc = Incidence::new(&layout);
    let mut best: Option<Found> = None;
    for group in Group::candidates(v) {
        let orbits = Orbits::new(&group, v, t);
        for extras in [Extras::None, Extras::Constant] {
            let limit = best.as_ref().map_or(below, |b| b.rows.len());
            let extra_rows = extras.rows(v, k);
            if limit <= extra_rows.len() + group.order {
                continue;
            }
            let starters = (limit - 1 - extra_rows.len()) / group.order;
            if starters == 0 {
                continue;
            }
            // setting up counts every row on every t-set
            let setup = ((extra_rows.len() + starters) * inc.sets() * t) as u64;
            if work.left() < setup {
                work.cut = true;
                break;
            }
            work.spend(setup);
            let mut search = Search::new(&inc, &orbits, v, &extra_rows, starters, rng);
            let moves = MOVES_PER_SET.saturating_mul(inc.sets() as u64);
            let Some(found) = search.shrink(rng, work, moves) else {
                continue;
            };
            let mut rows = extra_rows.clone();
            for s in &found {
                for r in group.orbit(s) {
                    if !rows.contains(&r) {
                        rows.push(r);
                    }
                }
            }
            if rows.len() < limit {
                best = Some(Found {
                    method: format!(
                        "invariant({}{},{} starters)",
                        group.name,
                        extras.name(),
                        found.len()
                    ),
                    rows,
                });
            }
        }
    }
    best
}

/// The search state: starters and, per (t-set, orbit), how many rows cover it.
struct Search<'a> {
    inc: &'a Incidence,
    orbits: &'a Orbits,
    v: usize,
    starters: Vec<Row>,
    /// Covering count of (t-set rank × orbits + orbit); extra rows count too.
    count: Vec<u32>,
    /// The uncovered (t-set, orbit) pairs, and each pair's place in it (or `u32::MAX`).
    uncovered: Vec<u32>,
    place: Vec<u32>,
    /// Sets a move touches, and a stamp per set to gather them once.
    touched: Vec<u32>,
    stamp: Vec<u32>,
    epoch: u32,
    /// A row to try a move on.
    scratch: Row,
    /// Weight of each pair in the cost: raised while the pair stays uncovered at a local
    /// minimum (the breakout method, Morris 1993), so the search leaves it.
    weight: Vec<u32>,
}

impl<'a> Search<'a> {
    fn new(
        inc: &'a Incidence,
        orbits: &'a Orbits,
        v: usize,
        extras: &[Row],
        starters: usize,
        rng: &mut Rng,
    ) -> Search<'a> {
        let pairs = inc.sets() * orbits.count();
        let mut s = Search {
            inc,
            orbits,
            v,
            starters: Vec::new(),
            count: vec![0; pairs],
            uncovered: Vec::new(),
            place: vec![u32::MAX; pairs],
            touched: Vec::new(),
            stamp: vec![0; inc.sets()],
            epoch: 0,
            scratch: Vec::new(),
            weight: vec![1; pairs],
        };
        for row in extras {
            s.add_row(row);
        }
        for _ in 0..starters {
            let row: Row = (0..inc.columns()).map(|_| rng.below(v as u32) as u8).collect();
            s.add_row(&row);
            s.starters.push(row);
        }
        for p in 0..pairs {
            if s.count[p] == 0 {
                s.place[p] = s.uncovered.len() as u32;
                s.uncovered.push(p as u32);
            }
        }
        s
    }

    /// The (t-set, orbit) pair a row shows on the set with this rank.
    fn pair(&self, rank: usize, row: &[u8]) -> usize {
        let tuple = self.inc.index(rank, row) - self.inc.offset(rank);
        rank * self.orbits.count() + self.orbits.of[tuple] as usize
    }

    /// Counts a row on every t-set (setting up: the uncovered list is built after).
    fn add_row(&mut self, row: &[u8]) {
        for rank in 0..self.inc.sets() {
            let p = self.pair(rank, row);
            self.count[p] += 1;
        }
    }

    fn cover(&mut self, p: usize) {
        self.count[p] += 1;
        if self.count[p] == 1 {
            let at = self.place[p] as usize;
            let last = *self.uncovered.last().expect("an uncovered pair is listed");
            self.uncovered.swap_remove(at);
            if last as usize != p {
                self.place[last as usize] = at as u32;
            }
            self.place[p] = u32::MAX;
        }
    }

    fn uncover(&mut self, p: usize) {
        self.count[p] -= 1;
        if self.count[p] == 0 {
            self.place[p] = self.uncovered.len() as u32;
            self.uncovered.push(p as u32);
        }
    }

    /// Gathers the sets through any of `cols` into `touched`.
    fn gather(&mut self, cols: &[usize]) {
        self.epoch = self.epoch.wrapping_add(1);
        if self.epoch == 0 {
            self.stamp.fill(0);
            self.epoch = 1;
        }
        self.touched.clear();
        for &c in cols {
            for &rank in self.inc.through(c) {
                if self.stamp[rank as usize] != self.epoch {
                    self.stamp[rank as usize] = self.epoch;
                    self.touched.push(rank);
                }
            }
        }
    }

    /// Writes `values` into starter `r` at `cols` (the touched sets gathered), keeping
    /// the counts; returns the steps taken.
    fn rewrite(&mut self, r: usize, cols: &[usize], values: &[u8]) -> u64 {
        let touched = std::mem::take(&mut self.touched);
        let mut row = std::mem::take(&mut self.starters[r]);
        for &rank in &touched {
            let p = self.pair(rank as usize, &row);
            self.uncover(p);
        }
        for (&c, &x) in cols.iter().zip(values) {
            row[c] = x;
        }
        for &rank in &touched {
            let p = self.pair(rank as usize, &row);
            self.cover(p);
        }
        let steps = 2 * touched.len() as u64 * self.inc.t() as u64;
        self.starters[r] = row;
        self.touched = touched;
        steps
    }

    /// The change in uncovered pairs if starter `r` took `values` at `cols` (the touched
    /// sets gathered), and the steps that took.
    fn delta(&mut self, r: usize, cols: &[usize], values: &[u8]) -> (i64, u64) {
        let mut row = std::mem::take(&mut self.scratch);
        row.clear();
        row.extend_from_slice(&self.starters[r]);
        for (&c, &x) in cols.iter().zip(values) {
            row[c] = x;
        }
        let mut delta = 0i64;
        for &rank in &self.touched {
            let before = self.pair(rank as usize, &self.starters[r]);
            let after = self.pair(rank as usize, &row);
            if before != after {
                if self.count[before] == 1 {
                    delta += self.weight[before] as i64;
                }
                if self.count[after] == 0 {
                    delta -= self.weight[after] as i64;
                }
            }
        }
        let steps = 2 * self.touched.len() as u64 * self.inc.t() as u64;
        self.scratch = row;
        (delta, steps)
    }

    /// Tabu search (after Nurmela 2004): each move takes a random uncovered pair and, of
    /// every way to make one starter cover it, the one leaving fewest pairs uncovered
    /// whose cells were not changed in the last few moves. Runs until every pair is
    /// covered or `moves` are spent; true when covered.
    fn tabu(&mut self, rng: &mut Rng, work: &mut Work, moves: u64) -> bool {
        let t = self.inc.t();
        let k = self.inc.columns();
        let mut digits = vec![0u8; t];
        let mut cols: Vec<usize> = Vec::with_capacity(t);
        let mut new: Vec<u8> = Vec::with_capacity(t);
        let orbits = self.orbits.count();
        // the move at which each starter cell may change again
        let mut free_at = vec![0u64; self.starters.len() * k];
        let tenure = (self.starters.len() as u64 / 2).max(2);
        let mut best_moves: Vec<(usize, u32)> = Vec::new();
        // the most one move can take: every starter tried with every tuple of the largest
        // orbit, each on the sets through t columns, then the move made
        let widest = (0..self.orbits.count())
            .map(|o| self.orbits.members(o).len())
            .max()
            .unwrap_or(1);
        let touched = (t * self.inc.widest_through()) as u64;
        let move_cost =
            (self.starters.len() * widest + 1) as u64 * touched * 2 * t as u64 + touched * t as u64;
        for step in 0..moves {
            if self.uncovered.is_empty() {
                return true;
            }
            if work.left() < move_cost {
                work.cut = true;
                return false;
            }
            let p = self.uncovered[rng.index(self.uncovered.len())] as usize;
            let (rank, orbit) = (p / orbits, p % orbits);
            let mut best = i64::MAX;
            best_moves.clear();
            let mut spent = 0;
            let (from, to) = (self.orbits.start[orbit], self.orbits.start[orbit + 1]);
            for r in 0..self.starters.len() {
                for m in from..to {
                    let tuple = self.orbits.members[m];
                    decode(tuple as usize, self.v, &mut digits);
                    cols.clear();
                    new.clear();
                    let mut tabu = false;
                    for (&c, &x) in self.inc.cols(rank).iter().zip(&digits) {
                        let c = c as usize;
                        if self.starters[r][c] != x {
                            tabu |= free_at[r * k + c] > step;
                            cols.push(c);
                            new.push(x);
                        }
                    }
                    if tabu {
                        continue;
                    }
                    self.gather(&cols);
                    let (d, steps) = self.delta(r, &cols, &new);
                    spent += steps;
                    if d < best {
                        best = d;
                        best_moves.clear();
                    }
                    if d == best {
                        best_moves.push((r, tuple));
                    }
                }
            }
            work.spend(spent);
            if best >= 0 {
                for &q in &self.uncovered {
                    self.weight[q as usize] += 1;
                }
                work.spend(self.uncovered.len() as u64);
            }
            if best_moves.is_empty() {
                continue;
            }
            let (r, tuple) = best_moves[rng.index(best_moves.len())];
            decode(tuple as usize, self.v, &mut digits);
            cols.clear();
            new.clear();
            for (&c, &x) in self.inc.cols(rank).iter().zip(&digits) {
                let c = c as usize;
                if self.starters[r][c] != x {
                    cols.push(c);
                    new.push(x);
                    free_at[r * k + c] = step + 1 + tenure;
                }
            }
            self.gather(&cols);
            let steps = self.rewrite(r, &cols, &new);
            work.spend(steps);
        }
        self.uncovered.is_empty()
    }

    /// Removes the starter that alone covers the fewest pairs.
    fn drop_weakest(&mut self, work: &mut Work) {
        let sets = self.inc.sets();
        let mut alone = vec![0usize; self.starters.len()];
        for (i, row) in self.starters.iter().enumerate() {
            for rank in 0..sets {
                if self.count[self.pair(rank, row)] == 1 {
                    alone[i] += 1;
                }
            }
        }
        work.spend((self.starters.len() * sets * self.inc.t()) as u64);
        let weakest = (0..alone.len()).min_by_key(|&i| alone[i]).unwrap_or(0);
        work.spend((sets * self.inc.t()) as u64);
        let row = self.starters.swap_remove(weakest);
        for rank in 0..sets {
            let p = self.pair(rank, &row);
            self.uncover(p);
        }
    }

    /// Anneals to a cover, then drops starters one at a time while a cover is found
    /// again within `moves`; the last covering starters, if any.
    fn shrink(&mut self, rng: &mut Rng, work: &mut Work, moves: u64) -> Option<Vec<Row>> {
        let mut last = None;
        while self.tabu(rng, work, moves) {
            last = Some(self.starters.clone());
            if self.starters.len() <= 1 {
                break;
            }
            let cost = ((self.starters.len() + 1) * self.inc.sets() * self.inc.t()) as u64;
            if work.left() < cost {
                work.cut = true;
                break;
            }
            self.drop_weakest(work);
        }
        last
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Spec;
    use crate::rng::stream;
    use crate::verify::verify;

    fn covers(v: usize, k: usize, t: usize, rows: &[Row]) -> bool {
        let spec = Spec::numbered(&vec![v; k]).strength(t);
        verify(&spec, rows).is_ok()
    }

    #[test]
    fn orbits_partition_the_tuples() {
        for (v, t) in [(3usize, 2usize), (4, 3), (5, 2)] {
            for g in Group::candidates(v) {
                let o = Orbits::new(&g, v, t);
                let mut seen = vec![false; v.pow(t as u32)];
                for i in 0..o.count() {
                    for &m in o.members(i) {
                        assert!(!seen[m as usize]);
                        seen[m as usize] = true;
                        assert_eq!(o.of[m as usize] as usize, i);
                    }
                }
                assert!(seen.iter().all(|&s| s));
            }
        }
    }

    #[test]
    fn the_affine_group_is_sharply_two_transitive() {
        // AGL(1, q) maps any ordered pair of distinct levels to any other in exactly one
        // way (common practice; e.g. Dixon & Mortimer 1996, §7.7, from memory): a row
        // with two distinct levels has q(q − 1) images, a constant row q, and the pairs
        // fall into two orbits, equal and distinct
        for q in [3usize, 4, 5, 7, 8, 9] {
            let g = Group::affine(q).expect("a prime power");
            assert_eq!(g.orbit(&[0, 1, 0]).len(), q * (q - 1));
            assert_eq!(g.orbit(&[2, 2, 2]).len(), q);
            assert_eq!(Orbits::new(&g, q, 2).count(), 2);
        }
        assert!(Group::affine(6).is_none());
    }

    #[test]
    fn found_designs_are_covering_arrays_below_the_limit() {
        for (v, k, t, below) in [(3usize, 8usize, 2usize, 20usize), (4, 10, 2, 40), (3, 7, 3, 60)] {
            let mut rng = Rng::new(7, stream::INVARIANT);
            let mut work = Work::new(u64::MAX);
            let found = search(v, k, t, below, &mut rng, &mut work).expect("a design is found");
            assert!(found.rows.len() < below);
            assert!(covers(v, k, t, &found.rows), "{v}^{k} t={t}: {}", found.method);
        }
    }

    #[test]
    fn one_affine_starter_gives_the_orthogonal_array() {
        // the orbit of a row showing each level of GF(q) once, with the constant rows,
        // is the classical OA(q²; 2, q, q) (Bose 1938): the counting bound
        for q in [5usize, 7] {
            let mut rng = Rng::new(1, stream::INVARIANT);
            let mut work = Work::new(u64::MAX);
            let found = search(q, q, 2, q * q + 5, &mut rng, &mut work).expect("a design is found");
            assert!(covers(q, q, 2, &found.rows));
            assert_eq!(found.rows.len(), q * q, "{}", found.method);
        }
    }

    #[test]
    fn the_search_is_deterministic_and_respects_the_work_bound() {
        let run = |limit: u64| {
            let mut rng = Rng::new(3, stream::INVARIANT);
            let mut work = Work::new(limit);
            let found = search(3, 10, 3, 80, &mut rng, &mut work);
            (found.map(|f| f.rows), work.spent(), work.cut)
        };
        assert_eq!(run(u64::MAX), run(u64::MAX));
        for limit in [1_000, 100_000, 1_000_000] {
            let (_, spent, cut) = run(limit);
            assert!(cut && spent <= limit, "{spent} steps against {limit}");
        }
    }
}
