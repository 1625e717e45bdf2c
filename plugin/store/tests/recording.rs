//! Drives the runtime the way the `#[cover]` expansion does: hand-written `static Suite`s
//! in modules named like the function, one `#[test]` per row. The row tests are
//! `#[ignore]`d; the tests at the bottom run them in child processes (this same
//! executable, with `--ignored --exact`) under a controlled environment and read what
//! they recorded back through the public store reader.

use heddle_store::Store;
use heddle_test::__private::{Factor, RowError, Suite, run, run_async, run_async_result, run_result};
use heddle_test::record::Outcome;
use std::future::Future;
use std::path::{Path, PathBuf};
use std::pin::pin;
use std::process::{Command, Output};
use std::sync::Arc;
use std::task::{Context, Poll, Wake, Waker};

/// Set for child processes; the row tests do nothing (or the minimum libtest needs to
/// pass them) without it, so `cargo test -- --include-ignored` stays harmless.
const CHILD_VAR: &str = "HEDDLE_TEST_CHILD";

fn is_child() -> bool {
    std::env::var_os(CHILD_VAR).is_some()
}

/// A minimal executor: the crate adds no async runtime, and neither do its tests.
fn block_on<F: Future>(fut: F) -> F::Output {
    struct Unpark(std::thread::Thread);
    impl Wake for Unpark {
        fn wake(self: Arc<Self>) {
            self.0.unpark();
        }
    }
    let waker = Waker::from(Arc::new(Unpark(std::thread::current())));
    let mut cx = Context::from_waker(&waker);
    let mut fut = pin!(fut);
    loop {
        match fut.as_mut().poll(&mut cx) {
            Poll::Ready(v) => return v,
            Poll::Pending => std::thread::park(),
        }
    }
}

/// Returns `Pending` once (after waking itself), so bodies are polled more than once.
async fn yield_now() {
    let mut yielded = false;
    std::future::poll_fn(move |cx| {
        if yielded {
            Poll::Ready(())
        } else {
            yielded = true;
            cx.waker().wake_by_ref();
            Poll::Pending
        }
    })
    .await
}

mod roundtrip {
    use super::*;

    pub static SUITE: Suite = Suite {
        krate: env!("CARGO_PKG_NAME"),
        file: "tests/recording.rs",
        target: "--test recording",
        function: "roundtrip",
        module: module_path!(),
        factors: &[
            Factor {
                name: "batch",
                labels: &["1", "8"],
            },
            Factor {
                name: "codec",
                labels: &["Codec::Plain", "Codec::Rle", "Codec::Delta"],
            },
        ],
        strength: 2,
        lambda: 1,
        seed: 11,
        // `codec == Codec::Delta && batch == 1` as the expansion records it
        excludes: &["1=2&0=0"],
        rows: &[&[0, 0], &[0, 1], &[1, 0], &[1, 1], &[1, 2], &[0, 0]],
        row_names: &["row_00", "row_01", "row_02", "row_03", "row_04", "row_05"],
        fingerprint: "roundtrip-fp",
        pinned: false,
        should_panic: false,
        should_panic_expected: None,
        budget: None,
        followups: 0,
        focus: &[],
    };

    #[test]
    #[ignore = "run as a child by the tests below"]
    fn row_00() {
        if is_child() {
            run(&SUITE, 0, || assert_eq!(1 + 1, 2));
        }
    }

    #[test]
    #[ignore = "run as a child by the tests below"]
    fn row_01() -> Result<(), RowError<String>> {
        if !is_child() {
            return Ok(());
        }
        run_result(&SUITE, 1, || Err("bad checksum".to_string()))
    }

    #[test]
    #[ignore = "run as a child by the tests below"]
    fn row_02() {
        if is_child() {
            run(&SUITE, 2, || panic!("boom in row two"));
        }
    }

    #[test]
    #[ignore = "run as a child by the tests below"]
    fn row_03() {
        if is_child() {
            block_on(run_async(&SUITE, 3, async {
                yield_now().await;
                panic!("async boom after {}", "a yield");
            }));
        }
    }

    #[test]
    #[ignore = "run as a child by the tests below"]
    fn row_04() -> Result<(), RowError<std::fmt::Error>> {
        if !is_child() {
            return Ok(());
        }
        block_on(run_async_result(&SUITE, 4, async {
            yield_now().await;
            Err(std::fmt::Error)
        }))
    }

    #[test]
    #[ignore = "run as a child by the tests below"]
    fn row_05() {
        if is_child() {
            block_on(run_async(&SUITE, 5, async {
                yield_now().await;
            }));
        }
    }
}

mod expected_panic {
    use super::*;

    pub static SUITE: Suite = Suite {
        krate: env!("CARGO_PKG_NAME"),
        file: "tests/recording.rs",
        target: "--test recording",
        function: "expected_panic",
        module: module_path!(),
        factors: &[Factor {
            name: "flag",
            labels: &["true", "false"],
        }],
        strength: 1,
        lambda: 1,
        seed: 3,
        excludes: &[],
        rows: &[&[0], &[1], &[0]],
        row_names: &["row_00", "row_01", "row_02"],
        fingerprint: "expected-fp",
        pinned: true,
        should_panic: true,
        should_panic_expected: Some("kaboom"),
        budget: None,
        followups: 0,
        focus: &[],
    };

    #[test]
    #[ignore = "run as a child by the tests below"]
    #[should_panic(expected = "kaboom")]
    fn row_00() {
        if is_child() {
            run(&SUITE, 0, || panic!("kaboom"));
        }
        panic!("kaboom: not run as a child");
    }

    #[test]
    #[ignore = "run as a child by the tests below"]
    #[should_panic(expected = "kaboom")]
    fn row_01() {
        if is_child() {
            run(&SUITE, 1, || {});
        } else {
            panic!("kaboom: not run as a child");
        }
    }

    /// Panics, but not with the expected text: libtest fails it, and so must the record.
    #[test]
    #[ignore = "run as a child by the tests below"]
    #[should_panic(expected = "kaboom")]
    fn row_02() {
        if is_child() {
            run(&SUITE, 2, || panic!("fizzle"));
        }
        panic!("kaboom: not run as a child");
    }
}

/// Many rows from many threads in one test, as libtest's threads would produce.
mod threads {
    use super::*;

    pub static SUITE: Suite = Suite {
        krate: env!("CARGO_PKG_NAME"),
        file: "tests/recording.rs",
        target: "--test recording",
        function: "threads",
        module: module_path!(),
        factors: &[Factor {
            name: "n",
            labels: &["0", "1", "2", "3"],
        }],
        strength: 1,
        lambda: 1,
        seed: 1,
        excludes: &[],
        rows: &[&[0], &[1], &[2], &[3]],
        row_names: &["row_00", "row_01", "row_02", "row_03"],
        fingerprint: "threads-fp",
        pinned: false,
        should_panic: false,
        should_panic_expected: None,
        budget: None,
        followups: 0,
        focus: &[],
    };

    pub const THREADS: usize = 16;
    pub const ROWS_PER_THREAD: usize = 250;

    #[test]
    #[ignore = "run as a child by the tests below"]
    fn row_00() {
        if !is_child() {
            return;
        }
        let handles: Vec<_> = (0..THREADS)
            .map(|t| {
                std::thread::spawn(move || {
                    for i in 0..ROWS_PER_THREAD {
                        let row = (t + i) % 4;
                        // row 3 fails with an error, so messages go through too
                        let _ = run_result(&SUITE, row, || if row == 3 { Err(i) } else { Ok(()) });
                    }
                })
            })
            .collect();
        for h in handles {
            h.join().unwrap();
        }
    }
}

// ---- the parent side ------------------------------------------------------------

struct Child {
    cmd: Command,
}

impl Child {
    /// This executable, running the given ignored tests, with a clean heddle
    /// environment.
    fn new(exe: &Path, filters: &[&str]) -> Child {
        let mut cmd = Command::new(exe);
        cmd.args(["--ignored", "--exact", "--test-threads", "4"])
            .args(filters);
        for var in [
            "HEDDLE_TARGET_DIR",
            "HEDDLE_RUN_ID",
            "NEXTEST_RUN_ID",
            "RUST_TEST_THREADS",
        ] {
            cmd.env_remove(var);
        }
        cmd.env(CHILD_VAR, "1");
        Child { cmd }
    }

    fn env(mut self, k: &str, v: impl AsRef<std::ffi::OsStr>) -> Child {
        self.cmd.env(k, v);
        self
    }

    fn run(mut self) -> Output {
        self.cmd.output().expect("the test executable runs")
    }
}

fn this_exe() -> PathBuf {
    std::env::current_exe().unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

fn warnings(out: &Output) -> Vec<String> {
    text(&out.stderr)
        .lines()
        .filter(|l| l.starts_with("heddle: warning:"))
        .map(str::to_string)
        .collect()
}

fn store_files(store_root: &Path) -> Vec<PathBuf> {
    let mut files = Vec::new();
    for run in std::fs::read_dir(store_root.join("runs"))
        .into_iter()
        .flatten()
        .flatten()
    {
        for f in std::fs::read_dir(run.path()).into_iter().flatten().flatten() {
            files.push(f.path());
        }
    }
    files.sort();
    files
}

const ALL_ROWS: [&str; 9] = [
    "roundtrip::row_00",
    "roundtrip::row_01",
    "roundtrip::row_02",
    "roundtrip::row_03",
    "roundtrip::row_04",
    "roundtrip::row_05",
    "expected_panic::row_00",
    "expected_panic::row_01",
    "expected_panic::row_02",
];

#[test]
fn every_outcome_is_recorded_and_libtest_still_judges_the_rows() {
    let tmp = tempfile::tempdir().unwrap();
    let out = Child::new(&this_exe(), &ALL_ROWS)
        .env("HEDDLE_TARGET_DIR", tmp.path())
        .env("HEDDLE_RUN_ID", "run-a")
        .run();
    let stdout = text(&out.stdout);
    assert!(!out.status.success(), "failing rows fail the process\n{stdout}");
    assert!(warnings(&out).is_empty(), "{}", text(&out.stderr));
    // libtest's own verdicts are untouched by the runner
    for (test, verdict) in [
        ("roundtrip::row_00", "ok"),
        ("roundtrip::row_01", "FAILED"),
        ("roundtrip::row_02", "FAILED"),
        ("roundtrip::row_03", "FAILED"),
        ("roundtrip::row_04", "FAILED"),
        ("roundtrip::row_05", "ok"),
        ("expected_panic::row_00 - should panic", "ok"),
        ("expected_panic::row_01 - should panic", "FAILED"),
        ("expected_panic::row_02 - should panic", "FAILED"),
    ] {
        assert!(
            stdout.contains(&format!("test {test} ... {verdict}")),
            "{test}: {stdout}"
        );
    }
    assert!(stdout.contains("6 failed"), "{stdout}");

    // the failure messages name function, row, every parameter, seed and rerun command
    let panicked = "heddle: `roundtrip` row 2 of 6 (`roundtrip::row_02`) panicked\n  \
                    batch = 8\n  \
                    codec = Codec::Plain\n  \
                    seed 11 (strength 2, lambda 1, rows from the engine)\n  \
                    rerun: cargo test -p heddle-store --test recording roundtrip::row_02 -- --exact";
    assert!(stdout.contains(panicked), "{stdout}");
    assert!(stdout.contains("Error: heddle: `roundtrip` row 1 of 6 (`roundtrip::row_01`) returned an error: \"bad checksum\"\n  batch = 1\n  codec = Codec::Rle\n"), "{stdout}");
    assert!(
        stdout.contains("returned an error: Error\n  batch = 8\n  codec = Codec::Delta\n"),
        "{stdout}"
    );
    assert!(stdout.contains("(`roundtrip::row_03`) panicked\n"), "{stdout}");
    assert!(
        stdout.contains("async boom after a yield"),
        "the original panic message is kept: {stdout}"
    );
    assert!(stdout.contains("(`expected_panic::row_01`) did not panic as `#[should_panic]` expects\n  flag = false\n  seed 3 (strength 1, lambda 1, rows from the pins file)"), "{stdout}");

    // the records
    let records = Store::open(tmp.path()).unwrap().read_run("run-a").unwrap();
    assert_eq!(records.stats.skipped(), 0, "{:?}", records.stats);
    assert_eq!(records.stats.files, 1, "one file per process");
    assert_eq!(records.stats.spec_lines, 2, "one spec line per suite per process");
    assert_eq!(records.suites.len(), 2);
    let find = |test: &str| {
        records
            .suites
            .iter()
            .flat_map(|s| &s.rows)
            .find(|r| r.test == test)
            .unwrap_or_else(|| panic!("no record of {test}"))
    };
    let expect = [
        ("roundtrip::row_00", Outcome::Passed, None),
        ("roundtrip::row_01", Outcome::Failed, Some("\"bad checksum\"")),
        ("roundtrip::row_02", Outcome::Failed, Some("boom in row two")),
        (
            "roundtrip::row_03",
            Outcome::Failed,
            Some("async boom after a yield"),
        ),
        ("roundtrip::row_04", Outcome::Failed, Some("Error")),
        ("roundtrip::row_05", Outcome::Passed, None),
        (
            "expected_panic::row_00",
            Outcome::PanickedExpected,
            Some("kaboom"),
        ),
        (
            "expected_panic::row_01",
            Outcome::Failed,
            Some("did not panic as `#[should_panic]` expects"),
        ),
        ("expected_panic::row_02", Outcome::Failed, Some("fizzle")),
    ];
    for (test, outcome, message) in expect {
        let r = find(test);
        assert_eq!((r.outcome, r.message.as_deref()), (outcome, message), "{test}");
        assert_eq!(r.run, "run-a");
        assert_eq!(r.krate, "heddle-store");
        assert_eq!(r.target, "recording");
    }
    assert_eq!(find("roundtrip::row_04").labels, ["8", "Codec::Delta"]);
    let spec = &records
        .suites
        .iter()
        .find(|s| s.spec.function == "roundtrip")
        .unwrap()
        .spec;
    assert_eq!(spec.module, "recording::roundtrip");
    assert_eq!(spec.suite, "roundtrip");
    assert_eq!(spec.excludes, ["1=2&0=0"]);
    assert_eq!(spec.rows.len(), 6);
    assert_eq!((spec.strength, spec.lambda, spec.seed), (2, 1, 11));
    let t = records.stats.row_lines;
    assert_eq!(t, 9);
    let durations_ok = records
        .suites
        .iter()
        .flat_map(|s| &s.rows)
        .all(|r| r.time.ends_with('Z'));
    assert!(durations_ok);
}

#[test]
fn the_rerun_command_names_a_test_that_exists() {
    let out = Command::new(this_exe())
        .args(["--list", "--ignored"])
        .output()
        .unwrap();
    let listed = text(&out.stdout);
    for name in ALL_ROWS {
        assert!(listed.contains(&format!("{name}: test")), "{name} in {listed}");
    }
}

#[test]
fn many_threads_in_several_processes_write_only_whole_lines() {
    use threads::{ROWS_PER_THREAD, THREADS};
    let tmp = tempfile::tempdir().unwrap();
    const PROCESSES: usize = 4;
    let children: Vec<_> = (0..PROCESSES)
        .map(|_| {
            let mut c = Child::new(&this_exe(), &["threads::row_00"])
                .env("HEDDLE_TARGET_DIR", tmp.path())
                .env("HEDDLE_RUN_ID", "shared");
            c.cmd.stdout(std::process::Stdio::null());
            c.cmd.spawn().unwrap()
        })
        .collect();
    for mut c in children {
        assert!(c.wait().unwrap().success());
    }
    let root = tmp.path().join("heddle");
    let files = store_files(&root);
    assert_eq!(files.len(), PROCESSES);
    for f in &files {
        let bytes = std::fs::read(f).unwrap();
        assert!(bytes.ends_with(b"\n"));
        for line in bytes.split(|&b| b == b'\n').filter(|l| !l.is_empty()) {
            let line = std::str::from_utf8(line).unwrap();
            assert!(
                heddle_test::record::Line::parse(line).is_ok(),
                "torn line {line:?}"
            );
        }
    }
    let records = Store::open(&root).unwrap().read_run("shared").unwrap();
    assert_eq!(records.stats.skipped(), 0);
    assert_eq!(records.stats.spec_lines, PROCESSES);
    assert_eq!(records.stats.row_lines, PROCESSES * THREADS * ROWS_PER_THREAD);
    let failed = records.suites[0]
        .rows
        .iter()
        .filter(|r| r.outcome == Outcome::Failed)
        .count();
    assert_eq!(failed, PROCESSES * THREADS * ROWS_PER_THREAD / 4);
}

#[test]
fn one_process_per_row_as_nextest_runs_them() {
    let tmp = tempfile::tempdir().unwrap();
    let run_id = "6a0c9a3e-1f2b-4c5d-8e9f-0a1b2c3d4e5f";
    let children: Vec<_> = ALL_ROWS
        .iter()
        .map(|row| {
            let mut c = Child::new(&this_exe(), &[row])
                .env("HEDDLE_TARGET_DIR", tmp.path())
                .env("NEXTEST_RUN_ID", run_id)
                .env("HEDDLE_RUN_ID", "");
            c.cmd
                .stdout(std::process::Stdio::null())
                .stderr(std::process::Stdio::null());
            c.cmd.spawn().unwrap()
        })
        .collect();
    for mut c in children {
        c.wait().unwrap();
    }
    let store = Store::open(tmp.path()).unwrap();
    assert_eq!(store.runs().unwrap().len(), 1);
    let records = store.read_run(run_id).unwrap();
    assert_eq!(records.stats.files, ALL_ROWS.len());
    assert_eq!(
        records.stats.spec_lines,
        ALL_ROWS.len(),
        "each process writes its spec"
    );
    assert_eq!(records.stats.skipped(), 0);
    let tests: Vec<&str> = records
        .suites
        .iter()
        .flat_map(|s| &s.rows)
        .map(|r| r.test.as_str())
        .collect();
    let mut sorted = tests.clone();
    sorted.sort();
    let mut expected = ALL_ROWS.to_vec();
    expected.sort();
    assert_eq!(sorted, expected);
}

#[test]
fn run_id_comes_from_heddle_then_nextest_then_the_process() {
    let tmp = tempfile::tempdir().unwrap();
    let row = &["roundtrip::row_00"];
    let run = |nextest: &str, heddle: &str| {
        let out = Child::new(&this_exe(), row)
            .env("HEDDLE_TARGET_DIR", tmp.path())
            .env("NEXTEST_RUN_ID", nextest)
            .env("HEDDLE_RUN_ID", heddle)
            .run();
        assert!(
            out.status.success() && warnings(&out).is_empty(),
            "{}",
            text(&out.stderr)
        );
    };
    let store = || Store::open(tmp.path()).unwrap();
    run("4f1c2a9e-0000-4000-8000-000000000001", "");
    run("4f1c2a9e-0000-4000-8000-000000000002", "hd-1");
    run("", "hd-1");
    run("", "");
    run("", "");
    let ids: Vec<String> = store().runs().unwrap().into_iter().map(|r| r.id).collect();
    assert!(ids.contains(&"4f1c2a9e-0000-4000-8000-000000000001".to_string()));
    assert_eq!(
        store().read_run("hd-1").unwrap().stats.files,
        2,
        "two processes share the id"
    );
    assert_eq!(ids.len(), 4, "each process without an id gets its own: {ids:?}");
}

#[test]
fn invalid_environment_warns_once_and_passing_tests_still_pass() {
    let tmp = tempfile::tempdir().unwrap();
    let file = tmp.path().join("not-a-dir");
    std::fs::write(&file, "x").unwrap();
    let passing = &["roundtrip::row_00", "roundtrip::row_05", "threads::row_00"];

    let out = Child::new(&this_exe(), passing)
        .env("HEDDLE_TARGET_DIR", &file)
        .run();
    assert!(out.status.success(), "{}", text(&out.stdout));
    let w = warnings(&out);
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].contains("`HEDDLE_TARGET_DIR` is not a usable directory"),
        "{w:?}"
    );
    assert!(w[0].contains("hint:"));

    let out = Child::new(&this_exe(), passing)
        .env("HEDDLE_TARGET_DIR", tmp.path())
        .env("HEDDLE_RUN_ID", "../../escape")
        .run();
    assert!(out.status.success());
    let w = warnings(&out);
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].contains("`HEDDLE_RUN_ID`: invalid run id `../../escape`"),
        "{w:?}"
    );
    assert!(!tmp.path().join("heddle").exists(), "nothing recorded");

    // a failing row is still reported by libtest as usual
    let out = Child::new(&this_exe(), &["roundtrip::row_02"])
        .env("HEDDLE_TARGET_DIR", &file)
        .run();
    assert!(!out.status.success());
    assert!(text(&out.stdout).contains("boom in row two"));
}

#[test]
fn the_store_is_found_from_the_executable_in_any_layout() {
    // a copy of this test executable in a made-up layout, with cargo's marker file at
    // its top: the store must land beside the marker, however deep the executable is
    let tmp = tempfile::tempdir().unwrap();
    let top = tmp.path().join("my-build");
    let deep = top.join("a/b/c");
    std::fs::create_dir_all(&deep).unwrap();
    let exe = deep.join("recording-copy");
    std::fs::copy(this_exe(), &exe).unwrap();

    let out = Child::new(&exe, &["roundtrip::row_00"])
        .env("HEDDLE_TARGET_DIR", "")
        .run();
    assert!(out.status.success());
    let w = warnings(&out);
    assert_eq!(w.len(), 1, "no marker yet: {w:?}");
    assert!(w[0].contains("no directory holding `CACHEDIR.TAG`"), "{w:?}");

    std::fs::write(
        top.join("CACHEDIR.TAG"),
        "Signature: 8a477f597d28d172789f06886806bc55\n",
    )
    .unwrap();
    let out = Child::new(&exe, &["roundtrip::row_00"])
        .env("HEDDLE_TARGET_DIR", "")
        .env("HEDDLE_RUN_ID", "found")
        .run();
    assert!(
        out.status.success() && warnings(&out).is_empty(),
        "{}",
        text(&out.stderr)
    );
    let records = Store::open(&top).unwrap().read_run("found").unwrap();
    assert_eq!(records.stats.row_lines, 1);
    assert_eq!(store_files(&top.join("heddle")).len(), 1);
}

#[test]
fn corrupt_lines_in_a_real_store_are_skipped_and_counted() {
    let tmp = tempfile::tempdir().unwrap();
    let out = Child::new(&this_exe(), &ALL_ROWS[..3])
        .env("HEDDLE_TARGET_DIR", tmp.path())
        .env("HEDDLE_RUN_ID", "r")
        .run();
    assert!(!out.status.success());
    let root = tmp.path().join("heddle");
    let file = store_files(&root).remove(0);
    let mut bytes = std::fs::read(&file).unwrap();
    let whole = bytes.clone();
    // a line of garbage, a future-format line, then a torn copy of the first line
    bytes.extend_from_slice(b"\x00\x01garbage\n{\"v\":4,\"kind\":\"row\",\"x\":1}\n");
    bytes.extend_from_slice(&whole[..whole.iter().position(|&b| b == b'\n').unwrap() / 2]);
    std::fs::write(&file, bytes).unwrap();
    let records = Store::open(&root).unwrap().read_run("r").unwrap();
    assert_eq!(records.stats.row_lines, 3);
    assert_eq!(records.stats.corrupt, 2);
    assert_eq!(records.stats.other_versions.get(&4), Some(&1));
    assert_eq!(records.stats.corrupt_examples[0].path, file);
}
