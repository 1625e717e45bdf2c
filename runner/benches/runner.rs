//! Prints figures, asserts nothing about time:
//!
//! 1. runner overhead per row: the same body called directly and through
//!    `__private::run` / `run_result`, over a few thousand rows, from one thread and from
//!    several (libtest runs rows on parallel threads); target ≤ 50 µs per row;
//! 2. store reading and tallies over 100 000 records, in a libtest-like layout (few
//!    files, many lines) and a nextest-like one (one process, so one file, per row);
//!    target: the report over 100 000 records in ≤ 2 s.
//!
//! Run with `cargo bench -p heddle`. The benchmark re-executes itself with
//! `HEDDLE_TARGET_DIR` pointing at a temporary directory, so nothing lands in the real
//! store.

use heddle::__private::{Factor, Suite, run, run_result};
use heddle::record::{FactorSpec, Line, Outcome, RowRecord, SpecRecord};
use heddle::store::Store;
use std::hint::black_box;
use std::path::Path;
use std::time::{Duration, Instant};

const ROWS: usize = 5_000;
const THREADS: usize = 4;

static SUITE: Suite = Suite {
    krate: "bench",
    file: "tests/bench.rs",
    function: "codec",
    module: "bench::codec",
    factors: &[
        Factor {
            name: "batch",
            labels: &["1", "8", "64"],
        },
        Factor {
            name: "codec",
            labels: &["Codec::Plain", "Codec::Rle", "Codec::Delta"],
        },
        Factor {
            name: "checksum",
            labels: &["true", "false"],
        },
    ],
    strength: 2,
    lambda: 1,
    seed: 1,
    excludes: &[],
    rows: &[
        &[0, 0, 0],
        &[0, 1, 1],
        &[0, 2, 0],
        &[1, 0, 1],
        &[1, 1, 0],
        &[1, 2, 1],
        &[2, 0, 0],
        &[2, 1, 1],
        &[2, 2, 0],
    ],
    fingerprint: "bench-fp",
    pinned: false,
    should_panic: false,
    should_panic_expected: None,
};

/// A small, real amount of work, like a quick unit test: build and sort a vector.
fn body(i: usize) -> u64 {
    let mut v: Vec<u64> = (0..64u64)
        .map(|k| (k * 2_654_435_761 + i as u64) % 1_000)
        .collect();
    v.sort_unstable();
    black_box(v.iter().sum())
}

fn per_row(d: Duration, n: usize) -> f64 {
    d.as_secs_f64() * 1e6 / n as f64
}

fn overhead() {
    println!("runner overhead ({ROWS} rows, store in a temp dir)");
    // warm up: opens the store file and writes the spec line
    run(&SUITE, 0, || {
        body(0);
    });

    let t = Instant::now();
    for i in 0..ROWS {
        body(i);
    }
    let direct = t.elapsed();

    let t = Instant::now();
    for i in 0..ROWS {
        run(&SUITE, i % SUITE.rows.len(), || {
            body(i);
        });
    }
    let via_run = t.elapsed();

    let t = Instant::now();
    for i in 0..ROWS {
        let _ = run_result(&SUITE, i % SUITE.rows.len(), || {
            if i % 2 == 0 { Err(i) } else { Ok(()) }
        });
    }
    let via_result = t.elapsed();

    let t = Instant::now();
    std::thread::scope(|s| {
        for th in 0..THREADS {
            s.spawn(move || {
                for i in (th..ROWS).step_by(THREADS) {
                    run(&SUITE, i % SUITE.rows.len(), || {
                        body(i);
                    });
                }
            });
        }
    });
    let threaded = t.elapsed();

    // what libtest itself spends per test (a thread per test), for scale
    let t = Instant::now();
    for i in 0..ROWS / 5 {
        std::thread::spawn(move || body(i)).join().unwrap_or_default();
    }
    let thread_per_test = t.elapsed();

    println!(
        "  body called directly           {:8.2} µs/row",
        per_row(direct, ROWS)
    );
    println!(
        "  body through run               {:8.2} µs/row",
        per_row(via_run, ROWS)
    );
    println!(
        "  overhead of run                {:8.2} µs/row  (target <= 50)",
        per_row(via_run.saturating_sub(direct), ROWS)
    );
    println!(
        "  run_result, half the rows Err  {:8.2} µs/row",
        per_row(via_result, ROWS)
    );
    println!(
        "  run from {THREADS} threads at once     {:8.2} µs/row  (wall time / rows)",
        per_row(threaded, ROWS)
    );
    println!(
        "  libtest-like thread per test   {:8.2} µs/row  (for scale)",
        per_row(thread_per_test, ROWS / 5)
    );
}

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
    SpecRecord {
        run: run.to_string(),
        krate: "demo".into(),
        target: "suite".into(),
        file: "tests/suite.rs".into(),
        function: format!("f{i}"),
        module: format!("suite::f{i}"),
        suite: format!("f{i}"),
        factors: (0..k)
            .map(|f| FactorSpec {
                name: format!("p{f}"),
                labels: (0..v).map(|l| format!("Level::L{l}")).collect(),
            })
            .collect(),
        strength: t,
        lambda: 2,
        seed: i as u64,
        excludes: vec![],
        rows: (0..rows)
            .map(|_| (0..k).map(|_| rng.below(v as u64) as u8).collect())
            .collect(),
        fingerprint: format!("fp{i}"),
        pinned: false,
        should_panic: false,
        time: "2025-01-01T00:00:00.000000Z".into(),
    }
}

fn fixture_row(spec: &SpecRecord, row: usize, rng: &mut Lcg) -> RowRecord {
    let failed = rng.below(10) == 0;
    RowRecord {
        run: spec.run.clone(),
        krate: spec.krate.clone(),
        target: spec.target.clone(),
        test: format!("{}::row_{row:02}", spec.suite),
        fingerprint: spec.fingerprint.clone(),
        row: row as u32,
        labels: spec
            .row_labels(row)
            .unwrap_or_default()
            .into_iter()
            .map(str::to_string)
            .collect(),
        outcome: if failed { Outcome::Failed } else { Outcome::Passed },
        message: failed.then(|| "assertion `left == right` failed\n  left: 1\n right: 2".to_string()),
        duration_ns: rng.below(1_000_000),
        time: "2025-01-01T00:00:01.000000Z".into(),
    }
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
        let tallies = heddle::tally::tally(&suite.spec, suite.outcomes()).unwrap();
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
    let tallies = heddle::tally::tally(&spec, outcomes).unwrap();
    println!(
        "  tally of 100 000 outcomes, 12 factors x 4 levels, t = 3, 200 rows: {:.1} ms ({} entries)",
        t.elapsed().as_secs_f64() * 1e3,
        tallies.entries.len()
    );
}

fn main() {
    if std::env::var_os("HEDDLE_BENCH_CHILD").is_none() {
        let tmp = tempfile::tempdir().expect("a temp dir");
        let status = std::process::Command::new(std::env::current_exe().expect("own path"))
            .args(std::env::args_os().skip(1))
            .env("HEDDLE_BENCH_CHILD", tmp.path())
            .env("HEDDLE_TARGET_DIR", tmp.path().join("target"))
            .env("HEDDLE_RUN_ID", "bench")
            .env_remove("NEXTEST_RUN_ID")
            .status()
            .expect("the benchmark re-runs itself");
        std::process::exit(status.code().unwrap_or(1));
    }
    let tmp = std::path::PathBuf::from(std::env::var_os("HEDDLE_BENCH_CHILD").unwrap_or_default());
    // `HEDDLE_BENCH_STORE=DIR`: only time reading an existing store (a real one, or a
    // fixture kept with `HEDDLE_BENCH_KEEP=DIR`)
    if let Some(dir) = std::env::var_os("HEDDLE_BENCH_STORE").filter(|d| !d.is_empty()) {
        report("given store", Path::new(&dir));
        report("same, read again", Path::new(&dir));
        return;
    }
    overhead();
    let keep = std::env::var_os("HEDDLE_BENCH_KEEP").filter(|d| !d.is_empty());
    store_speed(keep.as_ref().map_or(tmp.as_path(), Path::new));
}
