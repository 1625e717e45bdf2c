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
//! 3. The report (tallies, analysis, table and JSON rendering) over 100 000 row records
//!    of 50 suites (target ≤ 2 s), store reading excluded (the runner's bench times it).
//!
//! `cargo bench -p cargo-heddle --bench localise [-- TRIALS]` (default 400 per case).

use std::time::Instant;

use cargo_heddle::analysis::analyse;
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
    (levels, rows, seed)
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
            let rec = record(&levels, lambda, seed, rows, "det");
            let t = tally(&rec, outcomes).expect("valid spec");
            let a = analyse(&t);
            let pos = a
                .suspects
                .iter()
                .position(|s| t.entries[s.interaction].interaction == fault);
            first += (pos == Some(0)) as usize;
            named += pos.is_some() as usize;
        }
        println!(
            "  lambda {lambda}: first in {:.1}% of {trials} trials, named in {:.1}%",
            100.0 * first as f64 / trials as f64,
            100.0 * named as f64 / trials as f64
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
        let is_fault = |i: usize| t.entries[i].interaction == fault;
        flagged += a.flaky.iter().any(|f| is_fault(f.interaction)) as usize;
        named += a
            .suspects
            .iter()
            .any(|s| s.explains > 0 && is_fault(s.interaction)) as usize;
        clean_total += t.interactions().len() - 1;
        clean_flagged += a
            .flaky
            .iter()
            .filter(|f| t.entries[f.interaction].interaction.arity() == 2 && !is_fault(f.interaction))
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
    flaky(trials);
    report_speed();
}
