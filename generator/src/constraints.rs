//! Exact answers to "can this partial row still be completed to an allowed row?".
//!
//! Excludes are split into independent components (factors linked by sharing an exclude);
//! a partial row is extendable when each component's part of it is. Each component is
//! decided by a backtracking search with three-valued evaluation for pruning, memoised on
//! the component's part of the row. The search is exact: no sampling, no heuristics.

use std::collections::HashMap;

use crate::expr::Expr;
use crate::factor::UNSET;
use crate::incidence::Incidence;
use crate::interactions::Layout;

struct Component {
    factors: Vec<usize>,
    excludes: Vec<usize>,
}

/// The excludes of a spec, prepared for repeated extendability queries.
pub struct Constraints {
    excludes: Vec<Expr>,
    levels: Vec<usize>,
    comp_of: Vec<usize>,
    comps: Vec<Component>,
    memo: HashMap<(usize, Vec<u8>), bool>,
}

const NONE: usize = usize::MAX;
const MEMO_LIMIT: usize = 1 << 20;

impl Constraints {
    /// Prepares `excludes` over factors with these level counts.
    pub fn new(excludes: &[Expr], levels: &[usize]) -> Self {
        let k = levels.len();
        // union-find over factors linked by an exclude
        let mut parent: Vec<usize> = (0..k).collect();
        fn find(p: &mut [usize], x: usize) -> usize {
            let mut r = x;
            while p[r] != r {
                r = p[r];
            }
            let mut y = x;
            while p[y] != r {
                let n = p[y];
                p[y] = r;
                y = n;
            }
            r
        }
        let mut mentioned = vec![false; k];
        let mut per_exclude = Vec::with_capacity(excludes.len());
        for e in excludes {
            let mut fs = Vec::new();
            e.collect_factors(&mut fs);
            for w in fs.windows(2) {
                let (a, b) = (find(&mut parent, w[0]), find(&mut parent, w[1]));
                parent[a] = b;
            }
            for &f in &fs {
                mentioned[f] = true;
            }
            per_exclude.push(fs);
        }
        let mut comp_of = vec![NONE; k];
        let mut comps: Vec<Component> = Vec::new();
        let mut root_comp: HashMap<usize, usize> = HashMap::new();
        for f in 0..k {
            if !mentioned[f] {
                continue;
            }
            let r = find(&mut parent, f);
            let c = *root_comp.entry(r).or_insert_with(|| {
                comps.push(Component {
                    factors: Vec::new(),
                    excludes: Vec::new(),
                });
                comps.len() - 1
            });
            comp_of[f] = c;
            comps[c].factors.push(f);
        }
        for (i, fs) in per_exclude.iter().enumerate() {
            if let Some(&f) = fs.first() {
                comps[comp_of[f]].excludes.push(i);
            }
        }
        Constraints {
            excludes: excludes.to_vec(),
            levels: levels.to_vec(),
            comp_of,
            comps,
            memo: HashMap::new(),
        }
    }

    /// True when some exclude mentions factor `f`.
    pub fn involves(&self, f: usize) -> bool {
        self.comp_of[f] != NONE
    }

    /// True when no exclude holds for this complete row.
    pub fn allows(&self, row: &[u8]) -> bool {
        !self.excludes.iter().any(|e| e.eval(row))
    }

    /// True when the partial row (unset entries are [`UNSET`]) has an allowed completion.
    pub fn extendable(&mut self, partial: &[u8]) -> bool {
        if self.excludes.is_empty() {
            return true;
        }
        let mut seen: Vec<usize> = Vec::new();
        for f in 0..partial.len() {
            let c = self.comp_of[f];
            if c != NONE && partial[f] != UNSET && !seen.contains(&c) {
                seen.push(c);
                if !self.component_extendable(c, partial) {
                    return false;
                }
            }
        }
        true
    }

    /// True when some complete row is allowed at all.
    pub fn any_allowed(&mut self) -> bool {
        let empty = vec![UNSET; self.levels.len()];
        (0..self.comps.len()).all(|c| self.component_extendable(c, &empty))
    }

    fn component_extendable(&mut self, c: usize, partial: &[u8]) -> bool {
        let key: Vec<u8> = self.comps[c].factors.iter().map(|&f| partial[f]).collect();
        if let Some(&v) = self.memo.get(&(c, key.clone())) {
            return v;
        }
        let mut work = vec![UNSET; partial.len()];
        for &f in &self.comps[c].factors {
            work[f] = partial[f];
        }
        let v = self.search(c, &mut work);
        if self.memo.len() >= MEMO_LIMIT {
            self.memo.clear();
        }
        self.memo.insert((c, key), v);
        v
    }

    fn search(&self, c: usize, work: &mut [u8]) -> bool {
        let comp = &self.comps[c];
        let mut open = false;
        for &e in &comp.excludes {
            match self.excludes[e].eval_partial(work) {
                Some(true) => return false,
                Some(false) => {}
                None => open = true,
            }
        }
        if !open {
            return true;
        }
        // branch on the first unset factor of the component
        let Some(&f) = comp.factors.iter().find(|&&f| work[f] == UNSET) else {
            return false;
        };
        for l in 0..self.levels[f] {
            work[f] = l as u8;
            if self.search(c, work) {
                work[f] = UNSET;
                return true;
            }
        }
        work[f] = UNSET;
        false
    }

    /// Marks, for every t-way interaction of `layout`, whether some allowed row contains
    /// it. Returns the marks and the number of impossible interactions.
    pub fn possible(&mut self, layout: &Layout) -> (Vec<bool>, u64) {
        let total = layout.total();
        let mut mask = vec![true; total];
        if self.excludes.is_empty() {
            return (mask, 0);
        }
        let t = layout.t;
        let mut impossible = 0u64;
        let mut cols: Vec<usize> = (0..t).collect();
        let mut partial = vec![UNSET; layout.columns()];
        for rank in 0..layout.sets() {
            let off = layout.offset(rank);
            let slots = &mut mask[off..off + layout.width(rank)];
            impossible += self.mark(&cols, &layout.levels, slots, &mut partial);
            crate::interactions::next_colex(&mut cols);
        }
        (mask, impossible)
    }

    /// [`Constraints::possible`] for every set of an incidence table (sets of any sizes).
    pub fn possible_in(&mut self, inc: &Incidence) -> (Vec<bool>, u64) {
        let mut mask = vec![true; inc.total()];
        if self.excludes.is_empty() {
            return (mask, 0);
        }
        let levels = self.levels.clone();
        let mut impossible = 0u64;
        let mut partial = vec![UNSET; levels.len()];
        let mut cols = Vec::new();
        for rank in 0..inc.sets() {
            cols.clear();
            cols.extend(inc.cols(rank).iter().map(|&c| c as usize));
            let off = inc.offset(rank);
            let slots = &mut mask[off..off + inc.width(rank)];
            impossible += self.mark(&cols, &levels, slots, &mut partial);
        }
        (mask, impossible)
    }

    /// Clears the slot of every combination of levels on `cols` (mixed radix, first column
    /// fastest) that no allowed row contains; returns how many. `partial` is all unset
    /// before and after.
    fn mark(&mut self, cols: &[usize], levels: &[usize], slots: &mut [bool], partial: &mut [u8]) -> u64 {
        if !cols.iter().any(|&c| self.involves(c)) {
            return 0;
        }
        let mut impossible = 0;
        let mut lv = vec![0u8; cols.len()];
        for slot in slots.iter_mut() {
            for (i, &c) in cols.iter().enumerate() {
                partial[c] = if self.involves(c) { lv[i] } else { UNSET };
            }
            if !self.extendable(partial) {
                *slot = false;
                impossible += 1;
            }
            // advance mixed radix, first column fastest
            for (i, &c) in cols.iter().enumerate() {
                lv[i] += 1;
                if (lv[i] as usize) < levels[c] {
                    break;
                }
                lv[i] = 0;
            }
        }
        for &c in cols {
            partial[c] = UNSET;
        }
        impossible
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::factor::Factor;

    fn fs(n: usize, v: usize) -> Vec<Factor> {
        (0..n)
            .map(|i| Factor::numbered(format!("f{}", i + 1), v))
            .collect()
    }

    #[test]
    fn chained_constraints_are_found_exactly() {
        // f1==0 forces f2==1 (excluded f2==0), f2==1 forces f3==1; so (f1=0, f3=0) is
        // impossible although no single exclude mentions both.
        let f = fs(3, 2);
        let ex = vec![
            Expr::parse("f1 == 0 && f2 == 0", &f).unwrap(),
            Expr::parse("f2 == 1 && f3 == 0", &f).unwrap(),
        ];
        let mut c = Constraints::new(&ex, &[2, 2, 2]);
        assert!(!c.extendable(&[0, UNSET, 0]));
        assert!(c.extendable(&[0, UNSET, 1]));
        assert!(c.extendable(&[1, UNSET, 0]));
        let lay = Layout::new(&[2, 2, 2], 2);
        let (_, impossible) = c.possible(&lay);
        // impossible pairs: (f1=0,f2=0), (f2=1,f3=0), (f1=0,f3=0)
        assert_eq!(impossible, 3);
    }

    #[test]
    fn nothing_allowed_is_detected() {
        let f = fs(2, 2);
        let ex = vec![
            Expr::parse("f1 == 0", &f).unwrap(),
            Expr::parse("f1 == 1", &f).unwrap(),
        ];
        let mut c = Constraints::new(&ex, &[2, 2]);
        assert!(!c.any_allowed());
    }
}
