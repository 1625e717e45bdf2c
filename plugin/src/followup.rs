//! Follow-up rows that tell suspects apart: when the recorded rows cannot single out the
//! interaction behind a failure (several interactions share exactly the failing rows,
//! as happens at λ = 1; or a flaky one passed in some of its rows and hides behind one
//! that happened to fail every time), a few extra rows, run as ordinary rows of the same
//! test, can.
//!
//! The method, in rounds:
//! 1. **Candidates.** One faulty interaction of at most t factors behind the failures is
//!    in every failing row, so the candidates are the interactions in all of them (when
//!    none is, there are several faults: those in all failing rows of the report's top
//!    suspect), of the base strength and of each focus set at its own. Each is weighed by
//!    the marginal likelihood of its own passes and failures under a uniform prior on its
//!    failure rate (Bayes–Laplace: g failures in n runs weigh B(g + 1, n − g + 1)),
//!    relative to the best; those within a factor of `PLAUSIBLE_GAP` of the best are
//!    kept. Unlike the best-fitting rate, the prior does not take a candidate that failed
//!    in its two runs for a certain fault.
//! 2. **Rows from a failing row.** Every candidate sits in the failing row the follow-ups
//!    start from; changing the levels of a set D of factors removes exactly the
//!    candidates that touch D and keeps the others, as in the adaptive characterisation of
//!    failure-causing interactions by Zhang & Zhang (2011, "Characterizing failure-causing
//!    parameter interactions by adaptive testing", ISSTA; from memory). The new levels are
//!    chosen among those already seen in passing interactions with the rest of the row
//!    (so a failure of the new row is blamed on what it kept), within the excludes.
//! 3. **One round, many rows.** The rows of a round are chosen greedily so that no two
//!    candidates are held by the same set of rows and each is held by one (separated from
//!    a stand-in for "none of them") — for the candidates alone, the property of a
//!    locating array (Colbourn & McClary 2008, "Locating and detecting arrays for
//!    interaction faults", J. Comb. Optim. 15; from memory) — each row separating the
//!    most weight of still-confused pairs. A row already recorded (of the design or an
//!    earlier round) that separates as much is run again instead of a new one: a passing
//!    run of a row holding a flaky candidate is weak evidence, and another run of it
//!    costs no new configuration.
//! 4. **Flaky candidates.** A row holding a fault that fails with probability p passes
//!    with probability 1 − p, so a row runs r times, the fewest for which the candidates
//!    it holds, by weight, would have passed every run with probability at most 5%, each
//!    rate estimated by the rule of succession ((g + 1) / (n + 2), Laplace 1814; from
//!    memory), which never takes two failures in two runs for a rate of 1.
//! 5. **Named.** One candidate is taken as named when it holds at least [`DECISIVE`] of
//!    the weight and the recorded rows separate it from every other candidate that is
//!    not negligible (some row holds it without the other); until then the rounds go on. When the report still
//!    ranks other suspects whose failing rows all hold it too, each of those is run once
//!    more without it (clearing).
//!
//! After the follow-up rows ran, the ordinary analysis ranks the suspects again with
//! them, and another round is proposed while it is needed. Nothing is proposed when no
//! row failed.

use std::collections::BTreeSet;

use heddle_generator::{Row, Spec, UNSET};
use heddle_store::{Interaction, Tallies, Tally};
use heddle_syntax::require::blocked;

use crate::analysis::{Analysis, lambda_for};

/// How much lower (natural log) a candidate's marginal likelihood may be than the best
/// one's and still be worth separating: a ratio of e⁷ ≈ 1100, so that a flaky fault that
/// passed in several of its rows stays among the candidates beside an interaction that
/// failed in its few rows.
const PLAUSIBLE_GAP: f64 = 7.0;

/// The share of the candidates' weight at which the most likely one is taken as named
/// (once the rows separate it from the others).
pub const DECISIVE: f64 = 0.99;

/// Confidence that r runs of a row holding a flaky fault see it fail.
const REPEAT_CONFIDENCE: f64 = 0.95;

/// Least and most runs of each follow-up row for flaky candidates.
const REPEAT_RANGE: (u32, u32) = (2, 8);

/// Sets of factors tried exhaustively up to this many factors in play, greedily above.
const EXHAUSTIVE_FACTORS: usize = 16;

/// Follow-up rows for one suite.
#[derive(Clone, Debug, PartialEq)]
pub struct Proposal {
    /// The failing row (its index among the recorded rows) the follow-ups vary.
    pub base: usize,
    /// The new rows, distinct, in order, each with how many times it should run (1 when
    /// it holds no flaky candidate).
    pub rows: Vec<(Row, u32)>,
    /// The candidates the rows tell apart (interactions of the base strength or below,
    /// and of the focus sets at their own strength), most likely first.
    pub candidates: Vec<Interaction>,
    /// Whether the rows tell every pair of candidates apart, and hold each candidate at
    /// least once (else the new rows `max_rows` allows ran out, or the excludes leave no
    /// row that would).
    pub separates_all: bool,
}

/// A candidate: its entry, its weight (likelihood relative to the best one) and its
/// observed failure rate.
struct Candidate {
    /// Its place in the pool ([`pool`]).
    entry: usize,
    weight: f64,
    rate: f64,
}

/// Every interaction a candidate may be ([`Tallies::items`]: the entries, then the focus
/// interactions); a candidate is its place in this list, as a suspect is.
fn pool(tallies: &Tallies) -> Vec<&Tally> {
    tallies.items().collect()
}

/// The candidates behind the failures, most likely first, and the failing rows they
/// are all in. Empty when nothing failed.
fn candidates(tallies: &Tallies, pool: &[&Tally], analysis: &Analysis) -> (Vec<Candidate>, Vec<u32>) {
    let failing = |rows: &[u32]| -> Vec<u32> {
        rows.iter()
            .copied()
            .filter(|&r| tallies.rows.get(r as usize).is_some_and(|c| c.failures > 0))
            .collect()
    };
    let every: Vec<u32> = (0..tallies.rows.len() as u32).collect();
    let in_all = |focus: &[u32]| -> Vec<usize> {
        (0..pool.len())
            .filter(|&i| {
                let e = pool[i];
                e.count.failures > 0 && focus.iter().all(|r| e.rows.binary_search(r).is_ok())
            })
            .collect()
    };
    // one fault behind every failure is in every failing row; when no interaction is,
    // there are several faults: take the failures of the top suspect
    let mut focus = failing(&every);
    if focus.is_empty() {
        return (Vec::new(), focus);
    }
    let mut all = in_all(&focus);
    if all.is_empty() {
        let Some(top) = analysis.suspects.first() else {
            return (Vec::new(), focus);
        };
        focus = failing(&tallies.item(top.interaction).rows);
        all = in_all(&focus);
    }
    let ll: Vec<f64> = all
        .iter()
        .map(|&i| {
            let c = &pool[i].count;
            log_marginal(c.failures, c.runs)
        })
        .collect();
    let best = ll.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let mut kept: Vec<Candidate> = all
        .iter()
        .zip(&ll)
        .filter(|&(_, &l)| l >= best - PLAUSIBLE_GAP)
        .map(|(&entry, &l)| {
            let c = &pool[entry].count;
            Candidate {
                entry,
                weight: (l - best).exp(),
                rate: succession(c.failures, c.runs),
            }
        })
        .collect();
    // most likely first, then in entry order (deterministic)
    kept.sort_by(|a, b| b.weight.total_cmp(&a.weight).then(a.entry.cmp(&b.entry)));
    (kept, focus)
}

/// Natural log of B(g + 1, n − g + 1) = g! (n − g)! / (n + 1)!: the probability of a
/// given sequence of `g` failures in `n` runs when the failure rate is uniform on [0, 1].
fn log_marginal(g: u64, n: u64) -> f64 {
    let ln_factorial = |m: u64| (2..=m).map(|i| (i as f64).ln()).sum::<f64>();
    let g = g.min(n);
    ln_factorial(g) + ln_factorial(n - g) - ln_factorial(n + 1)
}

/// The rule of succession: the expected failure rate after `g` failures in `n` runs
/// under a uniform prior.
fn succession(g: u64, n: u64) -> f64 {
    (g.min(n) as f64 + 1.0) / (n as f64 + 2.0)
}

/// Proposes follow-up rows, at most `max_rows` of them new (not among the recorded
/// rows; recorded rows run again are not counted, each is proposed once a round), for a
/// suite whose `rows` (every recorded row, design and earlier follow-ups, indexed as in
/// `tallies`) were judged by `analysis`; `spec` gives the factors and excludes. `None`
/// when nothing failed, when one candidate is named (see the module's step 5) and no
/// other suspect needs clearing, or when no row allowed by the excludes would tell any
/// two candidates apart.
pub fn propose(
    spec: &Spec,
    rows: &[Row],
    tallies: &Tallies,
    analysis: &Analysis,
    max_rows: usize,
) -> Option<Proposal> {
    let pool = pool(tallies);
    let (cands, focus) = candidates(tallies, &pool, analysis);
    let total: f64 = cands.iter().map(|c| c.weight).sum();
    if cands.is_empty() {
        return None;
    }
    let interaction = |c: &Candidate| &pool[c.entry].interaction;
    // some recorded row holds c without d (or d without c, when every row holding c
    // holds d: d is part of c)
    let separated = |c: &Candidate, d: &Candidate| {
        let (c, d) = (interaction(c), interaction(d));
        let (c, d) = if c.contains(d) { (d, c) } else { (c, d) };
        rows.iter().any(|r| c.in_row(r) && !d.in_row(r))
    };
    // candidates too unlikely to matter (below 1 − DECISIVE of the top's weight) need
    // not have been separated
    let negligible = |d: &Candidate| d.weight < (1.0 - DECISIVE) * cands[0].weight;
    if cands.len() == 1
        || (cands[0].weight / total >= DECISIVE
            && cands[1..]
                .iter()
                .all(|d| negligible(d) || separated(&cands[0], d)))
    {
        return clearing(spec, rows, tallies, analysis, pool[cands[0].entry], max_rows);
    }
    let base = *focus.first()? as usize;
    let r0 = rows.get(base)?;
    let k = r0.len();
    if k > 63 {
        return None;
    }
    // bit f of a mask: the candidate touches factor f
    let masks: Vec<u64> = cands
        .iter()
        .map(|c| interaction(c).factors.iter().fold(0, |m, &f| m | (1u64 << f)))
        .collect();
    // the last element stands for "none of them": every row leaves it out, so
    // separating a candidate from it means some row holds that candidate
    let none = cands.len();
    let mut weights: Vec<f64> = cands.iter().map(|c| c.weight).collect();
    weights.push(cands[0].weight);
    let mut masks_all = masks.clone();
    masks_all.push(u64::MAX);
    // the recorded rows that hold some candidates and not others, each once, with the
    // candidates they hold (a row that holds all of them or none separates nothing)
    let mut recorded: Vec<(&Row, Vec<bool>)> = Vec::new();
    for row in rows {
        let held: Vec<bool> = cands
            .iter()
            .map(|c| interaction(c).in_row(row))
            .chain([false])
            .collect();
        if held[..none].iter().any(|&h| h)
            && held[..none].iter().any(|&h| !h)
            && !recorded.iter().any(|(r, _)| *r == row)
        {
            recorded.push((row, held));
        }
    }
    let mut classes: Vec<Vec<usize>> = vec![(0..=none).collect()];
    let mut out: Vec<(Row, u32)> = Vec::new();
    let mut new_rows = 0;
    let mut tried: BTreeSet<u64> = BTreeSet::new();
    let known = Known::new(tallies, cands.iter().map(&interaction));
    while classes.iter().any(|c| c.len() > 1) {
        // the best recorded row to run again, unless a new row separates more
        let again = recorded
            .iter()
            .filter(|(r, _)| !out.iter().any(|(o, _)| o == *r))
            .map(|(r, held)| (split_score(&classes, &weights, |h| held[h]), *r, held))
            .filter(|s| s.0 > 0.0)
            .max_by(|a, b| a.0.total_cmp(&b.0));
        let options = if new_rows < max_rows {
            change_sets(k, &masks_all, &weights, &classes, &tried)
        } else {
            Vec::new()
        };
        let mut built = None;
        for d in options {
            let gain = split_score(&classes, &weights, |h| masks_all[h] & d == 0);
            if again.as_ref().is_some_and(|a| a.0 >= gain) {
                break;
            }
            tried.insert(d);
            let changed: Vec<usize> = (0..k).filter(|&f| d & (1 << f) != 0).collect();
            if let Some(row) = build_row(spec, r0, &changed, &known) {
                let held: Vec<bool> = (0..=none).map(|h| masks_all[h] & d == 0).collect();
                built = Some((row, held));
                new_rows += 1;
                break;
            }
        }
        let Some((row, held)) = built.or_else(|| again.map(|(_, r, held)| (r.clone(), held.clone()))) else {
            break;
        };
        classes = classes
            .into_iter()
            .flat_map(|c| {
                let (kept, gone): (Vec<usize>, Vec<usize>) = c.into_iter().partition(|&h| held[h]);
                [kept, gone]
            })
            .filter(|c| !c.is_empty())
            .collect();
        let kept: Vec<(f64, f64)> = cands
            .iter()
            .zip(&held)
            .filter(|(_, h)| **h)
            .map(|(c, _)| (c.weight / total, c.rate))
            .collect();
        let repeat = repeats(&kept);
        out.push((row, repeat));
    }
    if out.is_empty() {
        return None;
    }
    Some(Proposal {
        base,
        rows: out,
        candidates: cands.iter().map(|c| interaction(c).clone()).collect(),
        separates_all: classes.iter().all(|c| c.len() == 1),
    })
}

/// The weight of candidate pairs within `classes` that a row holding the candidates
/// `held` says apart (the sum, over classes, of the kept weight times the removed).
fn split_score(classes: &[Vec<usize>], weights: &[f64], held: impl Fn(usize) -> bool) -> f64 {
    classes
        .iter()
        .map(|c| {
            let (mut kept, mut gone) = (0.0, 0.0);
            for &h in c {
                if held(h) {
                    kept += weights[h];
                } else {
                    gone += weights[h];
                }
            }
            kept * gone
        })
        .sum()
}

/// How many times a row should run, given the candidates it holds (their shares of the
/// weight and their observed failure rates): the fewest runs after which the chance
/// that the row passed every time although it holds the fault — a flaky candidate that
/// happened to pass — is at most 1 − [`REPEAT_CONFIDENCE`], within [`REPEAT_RANGE`]; 1
/// when even one run leaves it that small (the candidates it holds never passed).
fn repeats(kept: &[(f64, f64)]) -> u32 {
    let missed = |r: u32| -> f64 {
        kept.iter()
            .map(|&(share, rate)| share * (1.0 - rate).powi(r as i32))
            .sum()
    };
    let limit = 1.0 - REPEAT_CONFIDENCE;
    if missed(1) <= limit {
        return 1;
    }
    (REPEAT_RANGE.0..=REPEAT_RANGE.1)
        .find(|&r| missed(r) <= limit)
        .unwrap_or(REPEAT_RANGE.1)
}

/// Rows that clear the suspects the report ranks beside `named` although every failure
/// they explain is in a row holding `named` too (they only share its rows): each keeps
/// such a suspect and changes the levels of `named` that it lacks, starting from a
/// failing row of both. `None` when there is no such suspect.
fn clearing(
    spec: &Spec,
    rows: &[Row],
    tallies: &Tallies,
    analysis: &Analysis,
    c: &Tally,
    max_rows: usize,
) -> Option<Proposal> {
    let mut out: Vec<(Row, u32)> = Vec::new();
    let mut cleared = Vec::new();
    for s in analysis
        .suspects
        .iter()
        .filter(|s| s.explains > 0 && tallies.item(s.interaction).interaction != c.interaction)
    {
        if out.len() >= max_rows {
            break;
        }
        let e = tallies.item(s.interaction);
        let failing: Vec<u32> = e
            .rows
            .iter()
            .copied()
            .filter(|&r| tallies.rows[r as usize].failures > 0)
            .collect();
        // a suspect failing without `named` is a fault of its own, and one holding
        // `named` cannot be run without it
        let Some(&base) = failing.first() else { continue };
        if e.interaction.contains(&c.interaction) || failing.iter().any(|r| c.rows.binary_search(r).is_err())
        {
            continue;
        }
        let changed: Vec<usize> = c
            .interaction
            .factors
            .iter()
            .copied()
            .filter(|f| !e.interaction.factors.contains(f))
            .collect();
        let known = Known::new(tallies, [&c.interaction, &e.interaction]);
        let Some(row) = build_row(spec, &rows[base as usize], &changed, &known) else {
            continue;
        };
        let rate = succession(e.count.failures, e.count.runs);
        let repeat = lambda_for(rate, REPEAT_CONFIDENCE)
            .unwrap_or(1)
            .clamp(1, REPEAT_RANGE.1);
        // already cleared: its rows without `named` passed as often as a row clearing
        // it would run (the report may still rank it, when `named` is a focus set's
        // interaction of more factors than the report's suspects)
        let passed_without: u64 = e
            .rows
            .iter()
            .filter(|r| c.rows.binary_search(r).is_err())
            .map(|&r| tallies.rows[r as usize].passes)
            .sum();
        if passed_without >= u64::from(repeat) {
            continue;
        }
        cleared.push(s.interaction);
        // two suspects in one failing row may be cleared by the same row
        match out.iter_mut().find(|(r, _)| *r == row) {
            Some((_, r)) => *r = (*r).max(repeat),
            None => out.push((row, repeat)),
        }
    }
    if out.is_empty() {
        return None;
    }
    let base = tallies
        .item(cleared[0])
        .rows
        .iter()
        .copied()
        .find(|&r| tallies.rows[r as usize].failures > 0)? as usize;
    let mut candidates = vec![c.interaction.clone()];
    candidates.extend(cleared.iter().map(|&i| tallies.item(i).interaction.clone()));
    Some(Proposal {
        base,
        rows: out,
        candidates,
        separates_all: true,
    })
}

/// Sets of factors to change (bit j: the j-th factor in play), best first: each scored
/// by the weight of candidate pairs it separates within the classes still confused,
/// fewer changes first on ties. Sets already tried are left out.
fn change_sets(
    n: usize,
    masks: &[u64],
    weights: &[f64],
    classes: &[Vec<usize>],
    tried: &BTreeSet<u64>,
) -> Vec<u64> {
    let score = |d: u64| split_score(classes, weights, |h| masks[h] & d == 0);
    let mut scored: Vec<(f64, u32, u64)> = Vec::new();
    if n <= EXHAUSTIVE_FACTORS {
        for d in 1u64..(1 << n) {
            if !tried.contains(&d) {
                let s = score(d);
                if s > 0.0 {
                    scored.push((s, d.count_ones(), d));
                }
            }
        }
    } else {
        // greedy: add the factor that helps most while it helps, keeping every step
        let mut d = 0u64;
        let mut best = 0.0;
        loop {
            let next = (0..n)
                .filter(|&j| d & (1 << j) == 0)
                .map(|j| (score(d | (1 << j)), j))
                .max_by(|a, b| a.0.total_cmp(&b.0).then(b.1.cmp(&a.1)));
            match next {
                Some((s, j)) if s > best => {
                    d |= 1 << j;
                    best = s;
                    if !tried.contains(&d) {
                        scored.push((s, d.count_ones(), d));
                    }
                }
                _ => break,
            }
        }
        for j in 0..n {
            let d = 1u64 << j;
            let s = score(d);
            if s > 0.0 && !tried.contains(&d) {
                scored.push((s, 1, d));
            }
        }
    }
    scored.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)).then(a.2.cmp(&b.2)));
    scored.dedup_by_key(|s| s.2);
    scored.truncate(64);
    scored.into_iter().map(|s| s.2).collect()
}

/// What the recorded rows tell about interactions a new row would hold.
struct Known<'a> {
    tallies: &'a Tallies,
    candidates: BTreeSet<&'a Interaction>,
}

impl<'a> Known<'a> {
    fn new(tallies: &'a Tallies, candidates: impl IntoIterator<Item = &'a Interaction>) -> Known<'a> {
        Known {
            tallies,
            candidates: candidates.into_iter().collect(),
        }
    }

    /// +1 for an interaction seen passing (and no candidate), −1 for one never run.
    fn score(&self, interaction: &Interaction) -> i64 {
        let group = self.tallies.of_arity(interaction.arity());
        match group.binary_search_by(|t| t.interaction.cmp(interaction)) {
            Ok(i) => i64::from(group[i].count.passes > 0 && !self.candidates.contains(interaction)),
            Err(_) => -1,
        }
    }
}

/// The base row with the levels of `changed` factors replaced: each by a level other
/// than the base's, preferring levels whose interactions with the rest of the row were
/// seen passing, the whole row allowed by the excludes. `None` when no such row exists
/// (within a bounded search).
fn build_row(spec: &Spec, base: &[u8], changed: &[usize], known: &Known<'_>) -> Option<Row> {
    let levels = spec.levels();
    let t = known.tallies.strength;
    let mut row: Row = base.to_vec();
    for &c in changed {
        row[c] = UNSET;
    }
    if blocked(spec, &row).is_some() {
        return None;
    }
    let mut budget = 10_000usize;
    fill(spec, &levels, t, &mut row, changed, base, known, &mut budget).then_some(row)
}

/// Depth-first: the next changed cell takes its best-scoring level that keeps the row
/// allowed.
#[allow(clippy::too_many_arguments)]
fn fill(
    spec: &Spec,
    levels: &[usize],
    t: usize,
    row: &mut Row,
    changed: &[usize],
    base: &[u8],
    known: &Known<'_>,
    budget: &mut usize,
) -> bool {
    let Some((&c, rest)) = changed.split_first() else {
        return true;
    };
    let mut options: Vec<(i64, u8)> = (0..levels[c] as u8)
        .filter(|&l| l != base[c])
        .map(|l| {
            row[c] = l;
            (cell_score(row, c, t, known), l)
        })
        .collect();
    row[c] = UNSET;
    options.sort_by(|a, b| b.0.cmp(&a.0).then(a.1.cmp(&b.1)));
    for (_, l) in options {
        if *budget == 0 {
            return false;
        }
        *budget -= 1;
        row[c] = l;
        if blocked(spec, row).is_none() && fill(spec, levels, t, row, rest, base, known, budget) {
            return true;
        }
    }
    row[c] = UNSET;
    false
}

/// How well the level in cell `c` fits what is known: the scores of the interactions
/// of 2 to t cells through `c` whose other cells are set.
fn cell_score(row: &[u8], c: usize, t: usize, known: &Known<'_>) -> i64 {
    let others: Vec<usize> = (0..row.len()).filter(|&o| o != c && row[o] != UNSET).collect();
    let mut total = 0;
    for arity in 1..t.min(others.len() + 1) {
        let mut pick: Vec<usize> = (0..arity).collect();
        loop {
            let mut factors: Vec<usize> = pick.iter().map(|&p| others[p]).collect();
            factors.push(c);
            factors.sort_unstable();
            let levels = factors.iter().map(|&f| row[f]).collect();
            total += known.score(&Interaction { factors, levels });
            if !heddle_generator::next_subset(&mut pick, others.len()) {
                break;
            }
        }
    }
    total
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::analyse;
    use heddle_generator::{Effort, Expr, Factor, generate};
    use heddle_store::fixture::{SpecBuilder, oa9};
    use heddle_test::record::Outcome;

    fn record(spec: &Spec, rows: &[Row]) -> heddle_test::record::SpecRecord {
        SpecBuilder::new("f")
            .numbered(&spec.levels())
            .strength(spec.strength as u32)
            .lambda(spec.lambda)
            .rows(rows.to_vec())
            .build()
    }

    fn run(spec: &Spec, rows: &[Row], fails: impl Fn(&[u8]) -> bool) -> (Tallies, Analysis) {
        let outcomes = rows.iter().enumerate().map(|(i, r)| {
            (
                i,
                if fails(r) {
                    Outcome::Failed
                } else {
                    Outcome::Passed
                },
            )
        });
        let t = heddle_store::tally(&record(spec, rows), outcomes).unwrap();
        let a = analyse(&t);
        (t, a)
    }

    fn four_by_three() -> Spec {
        Spec::new((0..4).map(|i| Factor::numbered(format!("f{i}"), 3)).collect())
    }

    /// Proposes, runs (each row as often as asked) and judges again until nothing is
    /// proposed or `cap` distinct rows were used; the final analysis and the rows used.
    fn follow(
        spec: &Spec,
        mut rows: Vec<Row>,
        fails: impl Fn(&[u8]) -> bool,
        cap: usize,
    ) -> (Tallies, Analysis, usize) {
        let mut used = 0;
        loop {
            let (t, a) = run(spec, &rows, &fails);
            let Some(p) = propose(spec, &rows, &t, &a, cap - used) else {
                return (t, a, used);
            };
            for (row, repeat) in &p.rows {
                assert!(
                    !spec.excludes.iter().any(|e| e.eval(row)),
                    "an excluded row {row:?}"
                );
                rows.extend(std::iter::repeat_n(row.clone(), *repeat as usize));
            }
            used += p.rows.len();
            if used >= cap {
                let (t, a) = run(spec, &rows, &fails);
                return (t, a, used);
            }
        }
    }

    /// The suspects that explain failures.
    fn named(t: &Tallies, a: &Analysis) -> Vec<Interaction> {
        a.suspects
            .iter()
            .filter(|s| s.explains > 0)
            .map(|s| t.item(s.interaction).interaction.clone())
            .collect()
    }

    #[test]
    fn aliased_pairs_of_an_orthogonal_array_are_told_apart() {
        // OA(9; 2, 4, 3) (see `oa9`): no two rows share a pair, so the six pairs of a
        // failing row are aliases; every one of the 54 pairs is planted in turn
        let spec = four_by_three();
        for row in oa9() {
            for (x, y) in [(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3)] {
                let fault = Interaction {
                    factors: vec![x, y],
                    levels: vec![row[x], row[y]],
                };
                let (t, a) = run(&spec, &oa9(), |r| fault.in_row(r));
                assert!(
                    named(&t, &a).len() > 1,
                    "the design alone names {:?}",
                    named(&t, &a)
                );
                let (t, a, used) = follow(&spec, oa9(), |r| fault.in_row(r), 4);
                assert_eq!(named(&t, &a), vec![fault.clone()], "after {used} rows");
                assert!(a.suspects[0].always);
            }
        }
    }

    #[test]
    fn rows_keep_to_the_excludes_and_levels_seen_passing() {
        // f0 = 0 never goes with f1 = 2: the follow-ups may not use that pair either
        let spec = four_by_three().exclude(Expr::is(0, 0).and(Expr::is(1, 2)));
        let rows = generate(&spec, Effort::Fast).unwrap().rows;
        let fault = Interaction {
            factors: vec![2, 3],
            levels: vec![rows[0][2], rows[0][3]],
        };
        let (t, a, _) = follow(&spec, rows, |r| fault.in_row(r), 4);
        assert_eq!(named(&t, &a), vec![fault]);
    }

    #[test]
    fn a_flaky_candidate_makes_its_rows_run_again() {
        // a row holding only candidates that never passed runs once; one holding a
        // candidate that failed in half its runs, as often as 1 − 0.5^r ≥ 0.95 asks
        assert_eq!(repeats(&[(0.5, 1.0), (0.5, 1.0)]), 1);
        assert_eq!(
            repeats(&[(1.0, 0.5)]),
            lambda_for(0.5, REPEAT_CONFIDENCE).unwrap()
        );
        assert_eq!(repeats(&[(1.0, 0.5)]), 5);
        // a flaky candidate with little of the weight asks for fewer runs
        assert!(repeats(&[(0.9, 1.0), (0.1, 0.5)]) < 5);
        // a rate too low to catch within the range gets the most runs
        assert_eq!(repeats(&[(1.0, 0.01)]), REPEAT_RANGE.1);
    }

    #[test]
    fn a_suspect_that_only_shares_the_culprits_rows_is_cleared() {
        // λ = 2 (OA9 twice): the fault f0 = 0, f1 = 0 fails in its second copy only; the
        // pairs of that row are then suspects beside it, and it passed once: the
        // follow-ups must end with it alone
        let spec = four_by_three().lambda(2);
        let rows: Vec<Row> = oa9().into_iter().chain(oa9()).collect();
        let fault = Interaction {
            factors: vec![0, 1],
            levels: vec![0, 0],
        };
        // the first copy of the fault's row passed; every later row holding it fails
        let outcomes = |rows: &[Row]| -> Vec<(usize, Outcome)> {
            rows.iter()
                .enumerate()
                .map(|(i, r)| {
                    let f = fault.in_row(r) && i >= 9;
                    (i, if f { Outcome::Failed } else { Outcome::Passed })
                })
                .collect()
        };
        let t = heddle_store::tally(&record(&spec, &rows), outcomes(&rows)).unwrap();
        assert!(
            named(&t, &analyse(&t)).len() > 1,
            "the design alone names one suspect"
        );
        let mut all = rows.clone();
        for _ in 0..6 {
            let t = heddle_store::tally(&record(&spec, &all), outcomes(&all)).unwrap();
            let a = analyse(&t);
            let Some(p) = propose(&spec, &all, &t, &a, 4) else {
                break;
            };
            for (row, repeat) in p.rows {
                all.extend(std::iter::repeat_n(row, repeat as usize));
            }
        }
        let t = heddle_store::tally(&record(&spec, &all), outcomes(&all)).unwrap();
        let a = analyse(&t);
        assert_eq!(named(&t, &a), vec![fault]);
    }

    #[test]
    fn weights_are_beta_functions_and_rates_follow_the_rule_of_succession() {
        // B(a, b) = (a − 1)! (b − 1)! / (a + b − 1)! for whole a, b (the Beta function's
        // relation to the Gamma function; common practice): B(3, 1) = 1/3, B(3, 5) = 1/105
        assert!((log_marginal(2, 2) - (1.0f64 / 3.0).ln()).abs() < 1e-12);
        assert!((log_marginal(2, 6) - (1.0f64 / 105.0).ln()).abs() < 1e-12);
        assert_eq!(log_marginal(0, 0), 0.0);
        // Laplace's rule: after g of n, (g + 1) / (n + 2); two failures in two runs
        // are not a certain fault
        assert_eq!(succession(2, 2), 0.75);
        assert_eq!(succession(0, 0), 0.5);
    }

    #[test]
    fn a_flaky_fault_behind_a_pair_that_failed_in_all_its_rows_is_named() {
        // five factors of three levels; the fault f0 = 0, f1 = 0 fails in rows 0 and 1
        // and passes in rows 2–5; the pair f2 = 0, f3 = 0 is only in rows 0 and 1, so it
        // failed every time and the design alone names it; rows 6–9 show the other
        // pairs of rows 0 and 1 passing
        let spec = Spec::new((0..5).map(|i| Factor::numbered(format!("f{i}"), 3)).collect()).lambda(2);
        let design: Vec<Row> = vec![
            vec![0, 0, 0, 0, 0],
            vec![0, 0, 0, 0, 1],
            vec![0, 0, 1, 1, 2],
            vec![0, 0, 2, 2, 0],
            vec![0, 0, 1, 2, 1],
            vec![0, 0, 2, 1, 2],
            vec![0, 1, 0, 1, 0],
            vec![0, 1, 1, 0, 1],
            vec![1, 0, 0, 1, 2],
            vec![1, 0, 1, 0, 0],
        ];
        let fault = Interaction {
            factors: vec![0, 1],
            levels: vec![0, 0],
        };
        let alias = Interaction {
            factors: vec![2, 3],
            levels: vec![0, 0],
        };
        // after the design, the runs of rows holding the fault pass and fail in turn,
        // passing first: as unlucky as a rate of one half allows
        let outcomes = |rows: &[Row]| -> Vec<(usize, Outcome)> {
            let mut seen = 0;
            rows.iter()
                .enumerate()
                .map(|(i, r)| {
                    let fail = fault.in_row(r)
                        && if i < 2 {
                            true
                        } else if i < design.len() {
                            false
                        } else {
                            seen += 1;
                            seen % 2 == 0
                        };
                    (i, if fail { Outcome::Failed } else { Outcome::Passed })
                })
                .collect()
        };
        let judge = |rows: &[Row]| {
            let t = heddle_store::tally(&record(&spec, rows), outcomes(rows)).unwrap();
            let a = analyse(&t);
            (t, a)
        };
        let (t, a) = judge(&design);
        assert_eq!(named(&t, &a), vec![alias], "the design alone");
        let mut all = design.clone();
        let mut new = 0;
        for _ in 0..8 {
            let (t, a) = judge(&all);
            let Some(p) = propose(&spec, &all, &t, &a, 5 - new) else {
                break;
            };
            for (row, repeat) in p.rows {
                new += usize::from(!all.contains(&row));
                all.extend(std::iter::repeat_n(row, repeat as usize));
            }
        }
        let (t, a) = judge(&all);
        assert_eq!(
            named(&t, &a),
            vec![fault],
            "after {} runs",
            all.len() - design.len()
        );
        assert!(new <= 5);
    }

    #[test]
    fn a_fault_of_a_focus_set_is_a_candidate_at_its_own_strength() {
        // five three-level factors at strength 2, the first three also at strength 3
        // (a focus set): a planted triple of a design row fails every run; its pairs fail
        // with it, but only the triple explains every failure, so the follow-ups must
        // hold it as a candidate and end with each of its pairs seen passing without it
        let spec = Spec::new((0..5).map(|i| Factor::numbered(format!("f{i}"), 3)).collect())
            .focus(heddle_generator::Focus::new(vec![0, 1, 2], 3));
        let rows = generate(&spec, Effort::Fast).unwrap().rows;
        let fault = Interaction {
            factors: vec![0, 1, 2],
            levels: vec![rows[0][0], rows[0][1], rows[0][2]],
        };
        let rec = |rows: &[Row]| {
            SpecBuilder::new("f")
                .numbered(&spec.levels())
                .strength(2)
                .focus(&[0, 1, 2], 3, 1)
                .rows(rows.to_vec())
                .build()
        };
        let judge = |rows: &[Row]| {
            let outcomes = rows.iter().enumerate().map(|(i, r)| {
                (
                    i,
                    if fault.in_row(r) {
                        Outcome::Failed
                    } else {
                        Outcome::Passed
                    },
                )
            });
            let t = heddle_store::tally(&rec(rows), outcomes).unwrap();
            let a = analyse(&t);
            (t, a)
        };
        let mut all = rows.clone();
        let mut first = None;
        for _ in 0..6 {
            let (t, a) = judge(&all);
            let Some(p) = propose(&spec, &all, &t, &a, 5) else {
                break;
            };
            first.get_or_insert(p.candidates.clone());
            for (row, repeat) in p.rows {
                all.extend(std::iter::repeat_n(row, repeat as usize));
            }
        }
        let first = first.expect("the design alone cannot tell the triple from its pairs");
        assert!(first.contains(&fault), "{first:?}");
        let (t, _) = judge(&all);
        assert_eq!(t.get(&fault).unwrap().count.passes, 0);
        for (x, y) in [(0, 1), (0, 2), (1, 2)] {
            let pair = Interaction {
                factors: vec![x, y],
                levels: vec![fault.levels[x], fault.levels[y]],
            };
            assert!(
                all.iter().any(|r| pair.in_row(r) && !fault.in_row(r)),
                "{pair:?} never ran without the triple"
            );
        }
    }

    #[test]
    fn nothing_failed_nothing_proposed() {
        let spec = Spec::new((0..5).map(|i| Factor::numbered(format!("f{i}"), 3)).collect());
        let rows = generate(&spec, Effort::Fast).unwrap().rows;
        let (t, a) = run(&spec, &rows, |_| false);
        assert_eq!(propose(&spec, &rows, &t, &a, 5), None);
    }
}
