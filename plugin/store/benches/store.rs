//! Prints figures, asserts nothing about time: reading the store and tallying over
//! 100 000 records, in a libtest-like layout (few files, many lines) and a nextest-like
//! one (one process, so one file, per row); target: the report over 100 000 records in
//! ≤ 2 s (a target of our own: about the time a CI step may add unnoticed).
//!
//! Run with `cargo bench -p heddle-store`. `HEDDLE_BENCH_STORE=DIR` only times reading an
//! existing store (a real one, or a fixture kept with `HEDDLE_BENCH_KEEP=DIR`).

use heddle_store::Store;
use heddle_store::fixture::{self, SpecBuilder};
use heddle_test::record::{Line, Outcome, RowRecord, SpecRecord};
use std::path::Path;
use std::time::Instant;

/// A deterministic fixture generator (invented data for the benchmark only).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        self.0 >> 33
    }

    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
}

fn fixture_spec(i: usize, run: &str, k: usize, v: usize, t: u32, rows: usize, rng: &mut Lcg) -> SpecRecord {
    SpecBuilder::new(&format!("f{i}"))
        .test_target("suite")
        .run(run)
        .numbered(&vec![v; k])
        .strength(t)
        .lambda(2)
        .seed(i as u64)
        .fingerprint(&format!("fp{i}"))
        .rows(
            (0..rows)
                .map(|_| (0..k).map(|_| rng.below(v as u64) as u8).collect())
                .collect(),
        )
        .build()
}

fn fixture_row(spec: &SpecRecord, row: usize, rng: &mut Lcg) -> RowRecord {
    let failed = rng.below(10) == 0;
    let mut rec = fixture::row(spec, row, if failed { Outcome::Failed } else { Outcome::Passed });
    rec.duration_ns = rng.below(1_000_000);
    rec
}

/// Writes `runs` runs of `files_per_run` process files with `rows_per_file` row records
/// each, cycling over `suites` specs (each file carries the spec lines of the suites it
/// holds, as the runtime writes them).
fn write_store(root: &Path, runs: usize, files_per_run: usize, rows_per_file: usize, suites: usize) -> usize {
    let mut rng = Lcg(7);
    let specs: Vec<SpecRecord> = (0..suites)
        .map(|i| fixture_spec(i, "", 8, 3, 2, 30, &mut rng))
        .collect();
    let mut written = 0;
    let mut cursor = 0usize;
    for r in 0..runs {
        let run = format!("run-{r:04}");
        let dir = root.join("runs").join(&run);
        std::fs::create_dir_all(&dir).unwrap();
        for f in 0..files_per_run {
            let mut text = String::new();
            let mut seen = vec![false; suites];
            for _ in 0..rows_per_file {
                let s = cursor % suites;
                let row = (cursor / suites) % 30;
                cursor += 1;
                let mut spec = specs[s].clone();
                spec.run = run.clone();
                if !seen[s] {
                    seen[s] = true;
                    text.push_str(&Line::Spec(spec.clone()).to_json_line());
                }
                text.push_str(&Line::Row(fixture_row(&spec, row, &mut rng)).to_json_line());
                written += 1;
            }
            let name = format!(
                "{:013}-{}-{:016x}.jsonl",
                1_700_000_000_000u64 + (r * 1000 + f) as u64,
                f,
                r
            );
            std::fs::write(dir.join(name), text).unwrap();
        }
    }
    written
}

fn report(label: &str, root: &Path) {
    let t = Instant::now();
    let store = Store::open(root).unwrap();
    let runs = store.runs().unwrap();
    let list = t.elapsed();
    let t = Instant::now();
    let records = store.read_all().unwrap();
    let read = t.elapsed();
    let t = Instant::now();
    let mut entries = 0;
    for suite in &records.suites {
        let tallies = heddle_store::tally(&suite.spec, suite.outcomes()).unwrap();
        entries += tallies.entries.len();
    }
    let tally = t.elapsed();
    let bytes: u64 = runs
        .iter()
        .flat_map(|r| &r.files)
        .map(|f| std::fs::metadata(f).map(|m| m.len()).unwrap_or(0))
        .sum();
    println!(
        "  {label}: {} runs, {} files, {:.1} MB, {} row records, {} suites",
        runs.len(),
        records.stats.files,
        bytes as f64 / 1e6,
        records.stats.row_lines,
        records.suites.len()
    );
    println!(
        "    list runs {:7.1} ms | read + parse {:7.1} ms | tally {:6.1} ms ({entries} entries) | total {:7.1} ms  (target <= 2000)",
        list.as_secs_f64() * 1e3,
        read.as_secs_f64() * 1e3,
        tally.as_secs_f64() * 1e3,
        (list + read + tally).as_secs_f64() * 1e3
    );
}

/// Lets the kernel write the fixture out first, so reading does not compete with the
/// writeback of what was just generated (best effort: `sync` may be missing).
fn settle() {
    let _ = std::process::Command::new("sync").status();
}

fn store_speed(tmp: &Path) {
    println!(
        "store reading and tallies over 100 000 records (8 factors x 3 levels, t = 2, 30 rows per suite)"
    );
    let libtest = tmp.join("libtest-like/heddle");
    let n = write_store(&libtest, 50, 4, 500, 10);
    assert_eq!(n, 100_000);
    settle();
    report("libtest-like, 50 runs x 4 processes x 500 rows", &libtest);
    report("same, read again", &libtest);
    let nextest = tmp.join("nextest-like/heddle");
    let n = write_store(&nextest, 10, 10_000, 1, 10);
    assert_eq!(n, 100_000);
    settle();
    report("nextest-like, 10 runs x 10 000 processes x 1 row", &nextest);
    report("same, read again", &nextest);

    // tallies alone at a larger strength
    let mut rng = Lcg(3);
    let spec = fixture_spec(0, "r", 12, 4, 3, 200, &mut rng);
    let outcomes: Vec<(usize, Outcome)> = (0..100_000)
        .map(|i| {
            (
                i % 200,
                if rng.below(20) == 0 {
                    Outcome::Failed
                } else {
                    Outcome::Passed
                },
            )
        })
        .collect();
    let t = Instant::now();
    let tallies = heddle_store::tally(&spec, outcomes).unwrap();
    println!(
        "  tally of 100 000 outcomes, 12 factors x 4 levels, t = 3, 200 rows: {:.1} ms ({} entries)",
        t.elapsed().as_secs_f64() * 1e3,
        tallies.entries.len()
    );
}

fn main() {
    if let Some(dir) = std::env::var_os("HEDDLE_BENCH_STORE").filter(|d| !d.is_empty()) {
        report("given store", Path::new(&dir));
        report("same, read again", Path::new(&dir));
        return;
    }
    let tmp = tempfile::tempdir().expect("a temp dir");
    let keep = std::env::var_os("HEDDLE_BENCH_KEEP").filter(|d| !d.is_empty());
    store_speed(keep.as_ref().map_or(tmp.path(), Path::new));
}
