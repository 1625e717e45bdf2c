//! How well the report names a planted fault, simulated in-process (no cargo), and how
//! fast the report is over 100 000 records. Prints figures; asserts nothing.
//!
//! 1. Deterministic fault: random specs (4–12 factors, 2–5 levels, t = 2, λ = 1..4),
//!    rows from the engine, one planted 2-way interaction whose rows all fail; figure:
//!    how often it is ranked first among the suspects (target: ≥ 95% for λ ≥ 2).
//! 2. Flaky fault: the same specs at λ = 4, every row run twice (flakiness is seen only in
//!    a row that both passed and failed), each run of a row containing the planted
//!    interaction fails with probability 0.5; figures: how often it is flagged flaky (target ≥ 90%),
//!    how often it is named among the suspects at all, and the share of clean 2-way
//!    interactions flagged (target ≤ 5%).
//! 3. Follow-up rows (`cargo_heddle::followup`): after one run of the design, rounds of
//!    proposed rows (at most k new distinct rows per trial, k = number of factors; rows
//!    already recorded may run again) are run and the report judges again; figures: how
//!    often the planted pair is then the only suspect explaining failures — a
//!    deterministic pair at λ = 1 (target ≥ 98%) and a pair failing with probability 0.5
//!    at λ = 2 (target ≥ 90%), over all trials and over the trials where some row of the
//!    design failed (the others give nothing to follow up, so their share is the ceiling)
//!    — the new rows, runs and rounds used, and how often rows are proposed when no fault
//!    is planted (must be never).
//! 4. Aliasing: where an orthogonal array of index λ exists it is the fewest rows, but a
//!    linear one aliases interactions; figures: rows and aliased interactions of the
//!    engine's design at λ, and how often a planted pair is ranked first (alone) with it
//!    and with λ relabelled copies of the λ = 1 design instead.
//! 5. The report (tallies, analysis, table and JSON rendering) over 100 000 row records
//!    of 50 suites (target ≤ 2 s), store reading excluded (the runner's bench times it).
//!
//! `cargo bench -p cargo-heddle --bench localise [-- TRIALS]` (default 400 per case).

use std::time::Instant;

use cargo_heddle::analysis::analyse;
use cargo_heddle::followup::propose;
use cargo_heddle::report::{self, Format};
use heddle_generator::{Effort, Factor, Spec, generate};
use heddle_store::fixture::{self, SpecBuilder};
use heddle_store::{Interaction, tally};
use heddle_store::{ReadStats, Records, SuiteRecords};
use heddle_test::record::{Outcome, SpecRecord};

/// splitmix64: the bench's own randomness, seeded per trial (reproducible figures).
struct Mix(u64);

impl Mix {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }

    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn record(levels: &[usize], lambda: u32, seed: u64, rows: Vec<Vec<u8>>, name: &str) -> SpecRecord {
    SpecBuilder::new(name)
        .test_target("bench")
        .krate("bench")
        .run("bench")
        .numbered(levels)
        .strength(2)
        .lambda(lambda)
        .seed(seed)
        .fingerprint(&format!("{seed:016x}"))
        .rows(rows)
        .build()
}

/// A random spec and its fast-mode rows.
fn random_design(rng: &mut Mix, lambda: u32) -> (Vec<usize>, Vec<Vec<u8>>, u64) {
    let (levels, rows, seed, _) = random_spec(rng, lambda);
    (levels, rows, seed)
}

/// [`random_design`] with the engine's spec.
fn random_spec(rng: &mut Mix, lambda: u32) -> (Vec<usize>, Vec<Vec<u8>>, u64, Spec) {
    let k = 4 + rng.below(9) as usize;
    let levels: Vec<usize> = (0..k).map(|_| 2 + rng.below(4) as usize).collect();
    let seed = rng.next();
    let spec = Spec::new(
        levels
            .iter()
            .enumerate()
            .map(|(i, &v)| Factor::numbered(format!("f{i}"), v))
            .collect(),
    )
    .strength(2)
    .lambda(lambda)
    .seed(seed);
    let rows = generate(&spec, Effort::Fast).expect("valid spec").rows;
    (levels, rows, seed, spec)
}

/// A 2-way interaction present in the design: two columns of a random row.
fn plant(rng: &mut Mix, rows: &[Vec<u8>]) -> Interaction {
    let row = &rows[rng.below(rows.len() as u64) as usize];
    let k = row.len() as u64;
    let a = rng.below(k) as usize;
    let mut b = rng.below(k - 1) as usize;
    if b >= a {
        b += 1;
    }
    let (a, b) = (a.min(b), a.max(b));
    Interaction {
        factors: vec![a, b],
        levels: vec![row[a], row[b]],
    }
}

fn deterministic(trials: usize) {
    println!("deterministic 2-way fault, ranked first among suspects:");
    for lambda in 1..=4u32 {
        let (mut first, mut named) = (0usize, 0usize);
        for trial in 0..trials {
            let mut rng = Mix(1000 * lambda as u64 + trial as u64);
            let (levels, rows, seed) = random_design(&mut rng, lambda);
            let fault = plant(&mut rng, &rows);
            let j = judge_deterministic(&levels, lambda, seed, rows, &fault);
            first += j.first as usize;
            named += j.named as usize;
        }
        println!(
            "  lambda {lambda}: first in {:.1}% of {trials} trials, named in {:.1}%",
            100.0 * first as f64 / trials as f64,
            100.0 * named as f64 / trials as f64
        );
    }
}

/// How the report judged one run of a design with a planted deterministic fault.
struct Judged {
    /// Ranked first among the suspects.
    first: bool,
    /// Ranked first, and no other suspect explains a failure.
    alone: bool,
    /// Among the suspects at all.
    named: bool,
}

fn judge_deterministic(
    levels: &[usize],
    lambda: u32,
    seed: u64,
    rows: Vec<Vec<u8>>,
    fault: &Interaction,
) -> Judged {
    let outcomes: Vec<(usize, Outcome)> = rows
        .iter()
        .enumerate()
        .map(|(r, row)| {
            (
                r,
                if fault.in_row(row) {
                    Outcome::Failed
                } else {
                    Outcome::Passed
                },
            )
        })
        .collect();
    let rec = record(levels, lambda, seed, rows, "det");
    let t = tally(&rec, outcomes).expect("valid spec");
    let a = analyse(&t);
    let pos = a
        .suspects
        .iter()
        .position(|s| t.item(s.interaction).interaction == *fault);
    Judged {
        first: pos == Some(0),
        alone: pos == Some(0) && a.suspects.iter().filter(|s| s.explains > 0).count() == 1,
        named: pos.is_some(),
    }
}

/// What aliasing costs: where an orthogonal array of index λ exists it has the fewest
/// rows (λ·v^t), but a linear one aliases interactions (`Stats::aliased`: pairs of levels
/// whose rows coincide with another pair's, so that a failure cannot be pinned on one of
/// them); the engine's design at λ is measured (the optimum, or a less aliased design
/// the engine preferred). The alternative measured beside it: λ copies of the engine's
/// λ = 1 design, each copy's levels permuted per column at random (what the engine's own
/// stacking does, here with the bench's randomness). Figures: rows, how often a planted
/// deterministic pair is ranked first, and ranked first with no other suspect explaining
/// a failure.
fn aliasing(trials: usize) {
    println!("aliasing: the engine's design at λ against λ relabelled copies of the λ = 1 design:");
    // (levels, column counts, λ): Rao–Hamming OA(27; 2, 13, 3) of index 3, Sylvester's
    // Hadamard arrays of orders 8 and 16 (index 2 and 4), Rao–Hamming OA(64; 2, 21, 4)
    for (v, ks, lambda) in [
        (3usize, 5..=13usize, 3u32),
        (2, 4..=7, 2),
        (2, 8..=15, 4),
        (4, 6..=20, 4),
    ] {
        let (mut rows_oa, mut rows_stack, mut aliased) = (0usize, 0usize, 0u64);
        let (mut first, mut alone) = ([0usize; 2], [0usize; 2]);
        for trial in 0..trials {
            let mut rng = Mix(900_000 + trial as u64);
            let k = *ks.start() + rng.below((ks.end() - ks.start() + 1) as u64) as usize;
            let levels = vec![v; k];
            let seed = rng.next();
            let spec = Spec::numbered(&levels).strength(2).seed(seed);
            let oa = generate(&spec.clone().lambda(lambda), Effort::Fast).expect("valid spec");
            aliased += oa.stats.aliased.unwrap_or(0);
            let base = generate(&spec, Effort::Fast).expect("valid spec").rows;
            let mut stack = base.clone();
            for _ in 1..lambda {
                let perms: Vec<Vec<u8>> = (0..k)
                    .map(|_| {
                        let mut p: Vec<u8> = (0..v as u8).collect();
                        for i in (1..v).rev() {
                            p.swap(i, rng.below(i as u64 + 1) as usize);
                        }
                        p
                    })
                    .collect();
                stack.extend(base.iter().map(|r| {
                    r.iter()
                        .zip(&perms)
                        .map(|(&l, p)| p[l as usize])
                        .collect::<Vec<u8>>()
                }));
            }
            rows_oa += oa.rows.len();
            rows_stack += stack.len();
            let fault = plant(&mut rng, &oa.rows);
            for (i, rows) in [oa.rows, stack].into_iter().enumerate() {
                let j = judge_deterministic(&levels, lambda, seed, rows, &fault);
                first[i] += j.first as usize;
                alone[i] += j.alone as usize;
            }
        }
        let pct = |n: usize| 100.0 * n as f64 / trials as f64;
        let avg = |n: usize| n as f64 / trials as f64;
        println!(
            "  {v}^{}..{} lambda {lambda}: engine {:.1} rows (aliased {:.0} on average), first {:.1}%, alone {:.1}%; \
             copies {:.1} rows, first {:.1}%, alone {:.1}%",
            ks.start(),
            ks.end(),
            avg(rows_oa),
            avg(aliased as usize),
            pct(first[0]),
            pct(alone[0]),
            avg(rows_stack),
            pct(first[1]),
            pct(alone[1])
        );
    }
}

/// Rounds of every row in the flaky trials (`cargo heddle test --repeat 2`).
const ROUNDS: usize = 2;

fn flaky(trials: usize) {
    let lambda = 4;
    let (mut flagged, mut named, mut clean_flagged, mut clean_total, mut silent) = (0, 0, 0usize, 0usize, 0);
    for trial in 0..trials {
        let mut rng = Mix(77_000 + trial as u64);
        let (levels, rows, seed) = random_design(&mut rng, lambda);
        let fault = plant(&mut rng, &rows);
        // two rounds: a row is flaky evidence only when it both passed and failed
        let mut outcomes: Vec<(usize, Outcome)> = Vec::new();
        for _ in 0..ROUNDS {
            for (r, row) in rows.iter().enumerate() {
                let fail = fault.in_row(row) && rng.unit() < 0.5;
                outcomes.push((r, if fail { Outcome::Failed } else { Outcome::Passed }));
            }
        }
        if outcomes.iter().all(|(_, o)| o.is_pass()) {
            silent += 1;
        }
        let rec = record(&levels, lambda, seed, rows, "flaky");
        let t = tally(&rec, outcomes).expect("valid spec");
        let a = analyse(&t);
        let is_fault = |i: usize| t.item(i).interaction == fault;
        flagged += a.flaky.iter().any(|f| is_fault(f.interaction)) as usize;
        named += a
            .suspects
            .iter()
            .any(|s| s.explains > 0 && is_fault(s.interaction)) as usize;
        clean_total += t.interactions().len() - 1;
        clean_flagged += a
            .flaky
            .iter()
            .filter(|f| t.item(f.interaction).interaction.arity() == 2 && !is_fault(f.interaction))
            .count();
    }
    println!("flaky 2-way fault (fails with probability 0.5 per run), lambda {lambda}, {ROUNDS} rounds:");
    println!(
        "  flagged flaky in {:.1}% of {trials} trials; named as a suspect in {:.1}%; no row failed in {:.1}%",
        100.0 * flagged as f64 / trials as f64,
        100.0 * named as f64 / trials as f64,
        100.0 * silent as f64 / trials as f64
    );
    println!(
        "  clean 2-way interactions flagged flaky: {:.2}% ({clean_flagged} of {clean_total})",
        100.0 * clean_flagged as f64 / clean_total.max(1) as f64
    );
}

/// What one trial of adaptive localisation did.
#[derive(Default)]
struct Followed {
    /// The planted interaction was the top suspect, and the only one explaining failures,
    /// before any follow-up row.
    unique_before: bool,
    /// … and after the follow-up rows.
    unique_after: bool,
    /// Ranked first before.
    first_before: bool,
    /// Distinct new rows used (not in the design nor an earlier round), and the runs of
    /// every follow-up row (new or run again).
    rows: usize,
    runs: usize,
    /// Rounds with a proposal.
    rounds: usize,
    /// Some row failed in the design's own run.
    failed: bool,
}

/// Most rounds of follow-up rows per trial (each a `cargo heddle probe` and a test run).
const MAX_ROUNDS: usize = 12;

/// Runs the design once, then proposes follow-up rows (at most `cap` distinct new ones
/// over every round, rows of the design or of an earlier round run again not counted;
/// at most [`MAX_ROUNDS`] rounds) and runs them, with `fails(row, rng)` deciding each run; the report's
/// analysis judges before and after.
fn follow_up(
    rng: &mut Mix,
    spec: &Spec,
    levels: &[usize],
    rows: Vec<Vec<u8>>,
    fault: Option<&Interaction>,
    cap: usize,
    fails: &dyn Fn(&[u8], &mut Mix) -> bool,
) -> Followed {
    let mut all = rows;
    let mut outcomes: Vec<(usize, Outcome)> = Vec::new();
    let run = |rng: &mut Mix, r: usize, row: &[u8], outcomes: &mut Vec<(usize, Outcome)>| {
        let o = if fails(row, rng) {
            Outcome::Failed
        } else {
            Outcome::Passed
        };
        outcomes.push((r, o));
    };
    for (r, row) in all.iter().enumerate() {
        run(rng, r, row, &mut outcomes);
    }
    let judge = |all: &[Vec<u8>], outcomes: &[(usize, Outcome)]| {
        let rec = record(levels, spec.lambda, spec.seed, all.to_vec(), "follow");
        let t = tally(&rec, outcomes.iter().copied()).expect("valid spec");
        let a = analyse(&t);
        (t, a)
    };
    let is = |t: &heddle_store::Tallies, i: usize| fault.is_some_and(|f| &t.item(i).interaction == f);
    let unique = |t: &heddle_store::Tallies, a: &cargo_heddle::analysis::Analysis| {
        a.suspects.first().is_some_and(|s| is(t, s.interaction))
            && a.suspects.iter().filter(|s| s.explains > 0).count() == 1
    };
    let (mut t, mut a) = judge(&all, &outcomes);
    let mut out = Followed {
        unique_before: unique(&t, &a),
        first_before: a.suspects.first().is_some_and(|s| is(&t, s.interaction)),
        failed: a.failures > 0,
        ..Followed::default()
    };
    while out.rounds < MAX_ROUNDS {
        let Some(p) = propose(spec, &all, &t, &a, cap - out.rows) else {
            break;
        };
        out.rounds += 1;
        for (row, repeat) in &p.rows {
            // a recorded row run again is no new configuration
            if !all.contains(row) {
                out.rows += 1;
            }
            for _ in 0..*repeat {
                all.push(row.clone());
                run(rng, all.len() - 1, row, &mut outcomes);
                out.runs += 1;
            }
        }
        (t, a) = judge(&all, &outcomes);
    }
    out.unique_after = unique(&t, &a);
    out
}

fn localisation_with_follow_ups(trials: usize) {
    println!("follow-up rows (at most k per trial, k = number of factors), one run of the design:");
    // a deterministic pair at λ = 1
    let (mut before, mut first, mut after, mut rows, mut runs, mut rounds) = (0, 0, 0, 0, 0, 0);
    let (mut most, mut over_k) = (0usize, 0usize);
    for trial in 0..trials {
        let mut rng = Mix(500_000 + trial as u64);
        let (levels, design, _, spec) = random_spec(&mut rng, 1);
        let fault = plant(&mut rng, &design);
        let k = levels.len();
        let f = follow_up(&mut rng, &spec, &levels, design, Some(&fault), k, &|row, _| {
            fault.in_row(row)
        });
        before += f.unique_before as usize;
        first += f.first_before as usize;
        after += f.unique_after as usize;
        rows += f.rows;
        runs += f.runs;
        rounds += f.rounds;
        most = most.max(f.rows);
        over_k += (f.rows > k) as usize;
    }
    let pct = |n: usize| 100.0 * n as f64 / trials as f64;
    println!(
        "  deterministic pair, lambda 1: ranked first {:.1}% and uniquely named {:.1}% before; \
         uniquely named {:.1}% after (target ≥ 98%)",
        pct(first),
        pct(before),
        pct(after),
    );
    println!(
        "    per trial: {:.2} new rows ({:.2} runs of follow-up rows, new or run again), {:.2} rounds on \
         average; at most {most} new rows, more than k in {over_k} trials",
        rows as f64 / trials as f64,
        runs as f64 / trials as f64,
        rounds as f64 / trials as f64
    );

    // a flaky pair at λ = 2, failing with probability 0.5 in each run
    let (mut before, mut after, mut rows, mut runs, mut seen, mut after_seen) = (0, 0, 0, 0, 0, 0);
    let (mut rounds, mut most_rounds, mut capped) = (0, 0usize, 0usize);
    for trial in 0..trials {
        let mut rng = Mix(600_000 + trial as u64);
        let (levels, design, _, spec) = random_spec(&mut rng, 2);
        let fault = plant(&mut rng, &design);
        let k = levels.len();
        let f = follow_up(&mut rng, &spec, &levels, design, Some(&fault), k, &|row, rng| {
            fault.in_row(row) && rng.unit() < 0.5
        });
        before += f.unique_before as usize;
        after += f.unique_after as usize;
        rows += f.rows;
        runs += f.runs;
        rounds += f.rounds;
        most_rounds = most_rounds.max(f.rounds);
        capped += (f.rounds >= MAX_ROUNDS) as usize;
        seen += f.failed as usize;
        after_seen += (f.failed && f.unique_after) as usize;
    }
    let per = |n: usize, of: usize| n as f64 / of.max(1) as f64;
    println!(
        "  flaky pair (p = 0.5), lambda 2: uniquely named {:.1}% before, {:.1}% after, over all {trials} trials \
         (target ≥ 90%)",
        pct(before),
        pct(after),
    );
    println!(
        "    some row failed in {:.1}% of trials: the ceiling over all trials (nothing to follow up in the \
         others); of the {seen} trials with a failure, uniquely named {:.1}% after",
        pct(seen),
        100.0 * per(after_seen, seen),
    );
    println!(
        "    per trial with a failure: {:.2} new rows, {:.2} runs of follow-up rows (new or run again), \
         {:.2} rounds; at most {most_rounds} rounds, the cap of {MAX_ROUNDS} reached in {capped} trials",
        per(rows, seen),
        per(runs, seen),
        per(rounds, seen),
    );

    // nothing wrong: no fault planted
    let mut proposed = 0;
    for trial in 0..trials {
        let mut rng = Mix(700_000 + trial as u64);
        let lambda = 1 + (trial % 3) as u32;
        let (levels, design, _, spec) = random_spec(&mut rng, lambda);
        let k = levels.len();
        let f = follow_up(&mut rng, &spec, &levels, design, None, k, &|_, _| false);
        proposed += (f.rounds > 0) as usize;
    }
    println!(
        "  nothing wrong (lambda 1..3): follow-up rows proposed in {proposed} of {trials} trials (must be 0)"
    );
}

fn report_speed() {
    let mut rng = Mix(5);
    let mut suites = Vec::new();
    let mut total = 0usize;
    for s in 0..50 {
        let (levels, rows, seed) = random_design(&mut rng, 3);
        let rec = record(&levels, 3, seed, rows, &format!("suite_{s}"));
        let per_suite = 100_000 / 50;
        let mut recs = Vec::with_capacity(per_suite);
        for i in 0..per_suite {
            let row = i % rec.rows.len();
            let fail = rng.unit() < 0.02;
            let mut rec_row = fixture::row(&rec, row, if fail { Outcome::Failed } else { Outcome::Passed });
            rec_row.run = "bench".into();
            rec_row.message = fail.then(|| "assertion failed".to_string());
            recs.push(rec_row);
        }
        total += recs.len();
        suites.push(SuiteRecords {
            spec: rec,
            rows: recs,
            unfinished: Vec::new(),
        });
    }
    let records = Records {
        runs: Vec::new(),
        suites,
        stats: ReadStats::default(),
    };
    let started = Instant::now();
    let rep = report::build(&records, &[], 0.95, false);
    let table = report::render(&rep, Format::Table, false);
    let json = report::render(&rep, Format::Json, false);
    let elapsed = started.elapsed();
    println!(
        "report over {total} row records in {} suites: {:.0} ms (table {} KiB, json {} KiB; target ≤ 2 s)",
        rep.suites.len(),
        elapsed.as_secs_f64() * 1e3,
        table.len() / 1024,
        json.len() / 1024
    );
}

fn main() {
    let trials: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(400);
    deterministic(trials);
    aliasing(trials);
    flaky(trials);
    localisation_with_follow_ups(trials);
    report_speed();
}
