//! Generation for a spec with focus sets (variable strength, Cohen, Colbourn, Collofello,
//! Gibbons and Mugridge 2003): the design for the base strength alone is made first,
//! exactly as for a spec without focus sets (constructions, greedy, local search), so the
//! rows every t-set needs are as good as they get; then rows are added one at a time for
//! the focus demand still open; then a local search over the whole demand — every base
//! t-set at λ and every focus column set at its own index, numbered together in one
//! [`Incidence`] — removes rows, as it does for uniform specs.

use crate::bounds;
use crate::complete::complete_valid;
use crate::constraints::Constraints;
use crate::demand::Demand;
use crate::engine::{Design, FAST_BUDGET, Stats, curve, generate_within};
use crate::error::Error;
use crate::factor::{Row, UNSET};
use crate::incidence::Incidence;
use crate::interactions::Layout;
use crate::model::{Effort, Spec};
use crate::rng::{Rng, stream};
use crate::work::{PIN_WORK, Work};
use crate::{order, tighten, verify};

/// Generates a design for a spec with focus sets (validated by the caller).
pub(crate) fn generate(spec: &Spec, effort: Effort, fast_work: u64) -> Result<Design, Error> {
    let mut base_spec = Spec {
        focus: Vec::new(),
        ..spec.clone()
    };
    // required rows with unset cells are completed against the whole demand, so that
    // their open cells serve the focus sets too; the base design then takes them as they
    // are
    if spec.required.iter().any(|r| r.contains(&UNSET)) {
        base_spec.required = complete_valid(spec, &spec.required, true).rows;
    }
    let base = generate_within(&base_spec, effort, fast_work)?;
    let levels = spec.levels();
    let mut cons = Constraints::new(&spec.excludes, &levels);
    let Mixed {
        inc,
        need,
        base_sets,
        impossible,
    } = Mixed::new(spec, &mut cons);
    let fixed = spec.required.len();
    let mut methods = base.stats.methods.clone();
    // in the fast mode the focus rows and the search share one bound with the base design
    let mut work = Work::new(match effort {
        Effort::Fast => fast_work.saturating_sub(base.stats.work),
        Effort::Tight { .. } => u64::MAX,
    });
    let mut rows = base.rows.clone();
    let mut demand = Demand::from_need(need.clone());
    for row in &rows {
        demand.cover(&inc, row);
    }
    let mut rng = Rng::new(spec.seed, stream::FOCUS);
    let mixed = Mixed {
        inc,
        need,
        base_sets,
        impossible,
    };
    let added = extend(&mixed, &mut demand, &mut cons, &mut rng, &mut work);
    let Mixed { inc, need, .. } = mixed;
    methods.push(format!("focus rows: {} added to {}", added.len(), rows.len()));
    rows.extend(added);
    let mut method = format!("{}+focus", base.stats.method);
    let lower = bounds::spec_lower_bound(spec);
    let budget = match effort {
        Effort::Fast => FAST_BUDGET,
        Effort::Tight { budget } => budget,
    };
    let setup = (rows.len() as u64).saturating_mul(inc.sets() as u64);
    if budget > 0 && (rows.len() as u128) > lower && !work.unbounded() && setup > work.left() {
        work.cut = true;
        methods.push(format!(
            "search: skipped, setting it up costs about {setup} steps against a fast bound of {}",
            work.left()
        ));
    } else if budget > 0 && (rows.len() as u128) > lower {
        work.spend(setup);
        let vmax = levels.iter().copied().max().unwrap_or(1);
        let problem = tighten::Problem {
            inc: &inc,
            need: &need,
            rows: &rows,
            fixed,
            floor: lower as usize,
        };
        let search = (budget, vmax);
        let label = "(focus and base)";
        let (fewer, line) = tighten::shrink(
            &problem,
            &mut cons,
            &mut rng,
            search,
            &mut work,
            &mut method,
            label,
        );
        methods.push(line);
        if let Some(fewer) = fewer {
            rows = fewer;
        }
    }
    order::drop_redundant(&inc, &need, &mut rows, fixed);
    order::order_by_gain(&inc, &need, &mut rows, fixed);
    let checked = verify::verify(spec, &rows)
        .map_err(|v| Error::Internal(format!("{method} produced an invalid design: {v}")))?;
    let passes = (rows.len() as u64)
        .saturating_mul(inc.sets() as u64)
        .saturating_mul(4);
    let spent = base.stats.work.saturating_add(work.spent());
    let stats = Stats {
        method,
        methods,
        lower_bound: lower.min(u64::MAX as u128) as u64,
        expected_bound: crate::bounds::spec_expected_bound(spec),
        interactions: inc.total() as u64,
        impossible,
        coverage_curve: curve(&checked),
        aliased: None,
        work: spent,
        pin_advised: base.stats.pin_advised || work.cut || spent.saturating_add(passes) > PIN_WORK,
        engine_version: crate::ENGINE_VERSION,
    };
    Ok(Design { rows, stats })
}

/// A focus spec's whole demand numbered together: every base t-set (in rank order), then
/// every focus column set ([`crate::focus::column_sets`]), with the rows needed per
/// interaction (λ of its set, 0 where no allowed row shows it).
pub(crate) struct Mixed {
    pub(crate) inc: Incidence,
    pub(crate) need: Vec<u16>,
    /// How many of the sets are base t-sets (they come first).
    pub(crate) base_sets: usize,
    /// Interactions no allowed row shows.
    pub(crate) impossible: u64,
}

impl Mixed {
    pub(crate) fn new(spec: &Spec, cons: &mut Constraints) -> Mixed {
        let layout = Layout::new(&spec.levels(), spec.strength);
        let focus_sets = crate::focus::column_sets(&spec.focus);
        let extra: Vec<Vec<usize>> = focus_sets.iter().map(|(s, _)| s.clone()).collect();
        let inc = Incidence::with_extra(&layout, &extra);
        let (possible, impossible) = cons.possible_in(&inc);
        let base_sets = layout.sets();
        // MAX_LAMBDA fits the 16-bit counters
        let mut need = vec![0u16; inc.total()];
        for rank in 0..inc.sets() {
            let lambda = if rank < base_sets {
                spec.lambda
            } else {
                focus_sets[rank - base_sets].1
            };
            let from = inc.offset(rank);
            for i in from..from + inc.width(rank) {
                need[i] = if possible[i] { lambda as u16 } else { 0 };
            }
        }
        Mixed {
            inc,
            need,
            base_sets,
            impossible,
        }
    }

    /// How many interactions with demand left in `need` the row shows on the sets through
    /// column `c` (whose cell is set) from rank `from` on, counting only sets whose other
    /// columns are set too.
    pub(crate) fn gain_at(&self, row: &[u8], c: usize, need: &[u16], from: usize) -> u64 {
        let through = self.inc.through(c);
        // the sets through a column are listed in rank order
        let first = through.partition_point(|&r| (r as usize) < from);
        let mut gain = 0u64;
        for &rank in &through[first..] {
            let rank = rank as usize;
            if self.inc.cols(rank).iter().any(|&x| row[x as usize] == UNSET) {
                continue;
            }
            gain += u64::from(need[self.inc.index(rank, row)] > 0);
        }
        gain
    }
}

/// Rows for the demand still open, one at a time: each starts from the first interaction
/// still short (the sets after the `base_sets` base t-sets are the focus sets, the only
/// ones with demand left once the base design is in), fixes its cells, and fills every
/// other column of a focus set, in random order, with the allowed level that completes
/// the most short focus interactions with the columns already set — the one-row-at-a-time
/// greedy of Cohen, Dalal, Fredman and Patton (1997), one candidate per row. Columns in no
/// focus set take a random allowed level. Every row meets at least the interaction it
/// started from, so the loop ends.
fn extend(
    mixed: &Mixed,
    demand: &mut Demand,
    cons: &mut Constraints,
    rng: &mut Rng,
    work: &mut Work,
) -> Vec<Row> {
    let inc = &mixed.inc;
    let k = inc.columns();
    let mut rows = Vec::new();
    let mut cursor = 0usize;
    let (mut cols, mut lv) = (Vec::new(), Vec::new());
    let mut order: Vec<usize> = (0..k).collect();
    while demand.remaining > 0 {
        while demand.need[cursor] == 0 {
            cursor += 1;
        }
        inc.decode_into(cursor, &mut cols, &mut lv);
        let mut row = vec![UNSET; k];
        for (&c, &l) in cols.iter().zip(&lv) {
            row[c] = l;
        }
        rng.shuffle(&mut order);
        for &c in &order {
            if row[c] != UNSET {
                continue;
            }
            let through = inc.through(c);
            // sets are numbered base first, so the focus sets through c come last
            let first = through.partition_point(|&r| (r as usize) < mixed.base_sets);
            let v = inc.level_count(c);
            let mut best: Option<(u64, u8)> = None;
            for l in 0..v as u8 {
                row[c] = l;
                if cons.involves(c) && !cons.extendable(&row) {
                    continue;
                }
                let score = if first == through.len() {
                    // in no focus set: any allowed level, at random
                    u64::from(rng.next_u32())
                } else {
                    work.spend((through.len() - first) as u64);
                    mixed.gain_at(&row, c, &demand.need, mixed.base_sets)
                };
                if best.is_none_or(|(b, _)| score > b) {
                    best = Some((score, l));
                }
            }
            // the row was completable before this column, so some level keeps it so
            row[c] = best.map_or(0, |(_, l)| l);
        }
        demand.cover(inc, &row);
        rows.push(row);
    }
    rows
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::focus::Focus;
    use crate::verify::verify;

    #[test]
    fn both_local_searches_shrink_a_padded_focus_design_and_keep_it_valid() {
        // the full factorial 3^4 (81 rows) covers every triple three times; both searches
        // must bring it down to a valid design of the whole demand — every pair, and every
        // triple of the first three factors (variable strength, Cohen, Colbourn,
        // Collofello, Gibbons and Mugridge 2003) — never below the 27 rows those triples
        // alone need (the counting bound)
        let spec = Spec::numbered(&[3; 4]).focus(Focus::new(vec![0, 1, 2], 3));
        let mut cons = Constraints::new(&[], &spec.levels());
        let mixed = Mixed::new(&spec, &mut cons);
        let rows: Vec<Row> = (0..81u8)
            .map(|x| vec![x / 27, x / 9 % 3, x / 3 % 3, x % 3])
            .collect();
        let problem = tighten::Problem {
            inc: &mixed.inc,
            need: &mixed.need,
            rows: &rows,
            fixed: 0,
            floor: 27,
        };
        let tabu = tighten::tighten(
            &problem,
            &mut cons,
            &mut Rng::new(1, 2),
            tighten::Params::new(200_000, 3, 3),
        );
        let annealed = crate::anneal::anneal(
            &problem,
            &mut cons,
            &mut Rng::new(1, 2),
            crate::anneal::Params::new(200_000),
        );
        for (name, out) in [("tabu", tabu), ("anneal", annealed)] {
            assert!(
                out.rows.len() < 81 && out.rows.len() >= 27,
                "{name}: {}",
                out.rows.len()
            );
            verify(&spec, &out.rows).unwrap_or_else(|v| panic!("{name}: {v}"));
        }
    }
}
