//! Prints figures, asserts nothing about time: the runner's overhead per row, the same
//! body called directly and through `__private::run` / `run_result`, over a few thousand
//! rows, from one thread and from several (libtest runs rows on parallel threads);
//! target ≤ 50 µs per row (common practice for a test harness's per-test cost). Reading
//! the store is benchmarked by `heddle-store`.
//!
//! Run with `cargo bench -p heddle-test`. The benchmark re-executes itself with
//! `HEDDLE_TARGET_DIR` pointing at a temporary directory, so nothing lands in the real
//! store.

use heddle_test::__private::{Factor, Suite, run, run_result};
use std::hint::black_box;
use std::time::{Duration, Instant};

const ROWS: usize = 5_000;
const THREADS: usize = 4;

static SUITE: Suite = Suite {
    krate: "bench",
    file: "tests/bench.rs",
    target: "--test bench",
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
    row_names: &[
        "row_00", "row_01", "row_02", "row_03", "row_04", "row_05", "row_06", "row_07", "row_08",
    ],
    fingerprint: "bench-fp",
    pinned: false,
    should_panic: false,
    should_panic_expected: None,
    budget: None,
    followups: 0,
    focus: &[],
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
    overhead();
}
