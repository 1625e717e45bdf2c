//! Appends row starts and outcomes to this process's store file.
//!
//! A row's start line goes out before its body runs and its row line after, so a row
//! whose process ends in between (a crash, an abort, a kill) leaves a start with no
//! finish, which the reader pairs up per file. The start costs one more appended write
//! per row, no flush or sync: the kernel keeps what was written when the process dies.
//!
//! One file per process means no two processes ever share a file (nextest's
//! one-process-per-test included); inside a process libtest's threads are serialised by
//! a mutex, and every record goes out as one `write` on a file opened in append mode, so
//! a reader only ever sees whole lines, or at worst a torn last line after a crash.
//! Recording is best effort: a failure prints one warning line and turns recording off;
//! it never fails or panics a test.

use crate::__private::Suite;
use crate::message;
use crate::record::layout;
use crate::record::{FactorSpec, FocusSpec, Line, Outcome, RowRecord, SpecRecord, StartRecord};
use crate::setup::{Config, SetupError};
use crate::time;
use std::collections::BTreeSet;
use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::PathBuf;
use std::sync::Mutex;
use std::time::{Duration, SystemTime};

/// The outcome of one row, ready to record.
pub(crate) struct RowResult {
    pub(crate) row: usize,
    pub(crate) outcome: Outcome,
    pub(crate) message: Option<String>,
    pub(crate) duration: Duration,
}

enum State {
    /// Nothing recorded yet: the store is opened on the first row.
    Pending,
    Open(Writer),
    /// Recording failed (and said so once).
    Off,
}

struct Writer {
    file: File,
    path: PathBuf,
    run_id: String,
    attempt: Option<u32>,
    build: Option<String>,
    /// Suites whose spec line this process already wrote, by address (suites are
    /// `'static`, so an address names one suite for the life of the process).
    specs: BTreeSet<usize>,
}

/// A sink for row results.
pub(crate) struct Recorder {
    state: Mutex<State>,
    setup: fn() -> Result<Config, SetupError>,
    warn: fn(&str),
}

/// Prints a warning on the process's real stderr, bypassing libtest's output capture so
/// it shows even when every test passes.
pub(crate) fn warn_stderr(text: &str) {
    let _ = std::io::stderr()
        .lock()
        .write_all(format!("heddle: warning: {text}\n").as_bytes());
}

impl Recorder {
    /// A recorder that resolves its config on first use.
    pub(crate) const fn new(setup: fn() -> Result<Config, SetupError>, warn: fn(&str)) -> Self {
        Recorder {
            state: Mutex::new(State::Pending),
            setup,
            warn,
        }
    }

    /// Records that a row starts; on failure warns once and stops recording.
    pub(crate) fn start(&self, suite: &'static Suite, row: usize) {
        self.with_writer(|w| w.write_start(suite, row));
    }

    /// Records one row; on failure warns once and stops recording.
    pub(crate) fn record(&self, suite: &'static Suite, result: &RowResult) {
        self.with_writer(|w| w.write(suite, result));
    }

    fn with_writer(&self, write: impl FnOnce(&mut Writer) -> Result<(), SetupError>) {
        // a panic while holding the lock cannot leave the state half-updated (each arm
        // assigns whole values), so a poisoned lock is safe to reuse
        let mut state = self.state.lock().unwrap_or_else(|e| e.into_inner());
        if let State::Pending = *state {
            *state = match (self.setup)().and_then(open) {
                Ok(w) => State::Open(w),
                Err(e) => {
                    (self.warn)(&format!("outcomes are not recorded: {e}"));
                    State::Off
                }
            };
        }
        let State::Open(writer) = &mut *state else {
            return;
        };
        if let Err(e) = write(writer) {
            (self.warn)(&format!("outcomes are no longer recorded: {e}"));
            *state = State::Off;
        }
    }
}

fn open(config: Config) -> Result<Writer, SetupError> {
    let dir = config.store.join(layout::RUNS_DIR).join(&config.run_id);
    std::fs::create_dir_all(&dir).map_err(|reason| SetupError::Unwritable {
        path: dir.clone(),
        reason,
    })?;
    let ms = time::since_epoch(SystemTime::now()).as_millis() as u64;
    let path = dir.join(layout::process_file_name(ms, std::process::id(), layout::nonce()));
    let file = OpenOptions::new()
        .append(true)
        .create_new(true)
        .open(&path)
        .map_err(|reason| SetupError::Unwritable {
            path: path.clone(),
            reason,
        })?;
    Ok(Writer {
        file,
        path,
        run_id: config.run_id,
        attempt: config.attempt,
        build: config.build,
        specs: BTreeSet::new(),
    })
}

impl Writer {
    /// Writes a row's start line, after its suite's spec line when this process has not
    /// written that yet.
    fn write_start(&mut self, suite: &'static Suite, row: usize) -> Result<(), SetupError> {
        let start = self.start_record(suite, row, time::rfc3339(SystemTime::now()));
        self.write_line(suite, &Line::Start(start))
    }

    fn write(&mut self, suite: &'static Suite, result: &RowResult) -> Result<(), SetupError> {
        let start = self.start_record(suite, result.row, time::rfc3339(SystemTime::now()));
        let row = row_record(&start, result);
        self.write_line(suite, &Line::Row(row))
    }

    fn start_record(&self, suite: &Suite, row: usize, time: String) -> StartRecord {
        let mut start = start_record(suite, row, &self.run_id, time);
        start.attempt = self.attempt;
        start.build.clone_from(&self.build);
        start
    }

    /// Appends one line in one write, preceded by the suite's spec line the first time.
    fn write_line(&mut self, suite: &'static Suite, line: &Line) -> Result<(), SetupError> {
        let key = suite as *const Suite as usize;
        let new_suite = !self.specs.contains(&key);
        let mut buf = String::new();
        if new_suite {
            let stamp = time::rfc3339(SystemTime::now());
            buf.push_str(&Line::Spec(spec_record(suite, &self.run_id, &stamp)).to_json_line());
        }
        buf.push_str(&line.to_json_line());
        // one write of whole lines; the spec goes out with its suite's first line
        self.file
            .write_all(buf.as_bytes())
            .map_err(|reason| SetupError::Unwritable {
                path: self.path.clone(),
                reason,
            })?;
        if new_suite {
            self.specs.insert(key);
        }
        Ok(())
    }
}

pub(crate) fn spec_record(suite: &Suite, run_id: &str, time: &str) -> SpecRecord {
    SpecRecord {
        run: run_id.to_string(),
        krate: suite.krate.to_string(),
        target: message::crate_root(suite.module).to_string(),
        selector: suite.target.to_string(),
        file: suite.file.to_string(),
        function: suite.function.to_string(),
        module: suite.module.to_string(),
        suite: message::suite_path(suite.module).to_string(),
        factors: suite
            .factors
            .iter()
            .map(|f| FactorSpec {
                name: f.name.to_string(),
                labels: f.labels.iter().map(|l| l.to_string()).collect(),
            })
            .collect(),
        strength: suite.strength,
        lambda: suite.lambda,
        seed: suite.seed,
        excludes: suite.excludes.iter().map(|e| e.to_string()).collect(),
        rows: suite.rows.iter().map(|r| r.to_vec()).collect(),
        row_names: suite.row_names.iter().map(|n| n.to_string()).collect(),
        fingerprint: suite.fingerprint.to_string(),
        pinned: suite.pinned,
        should_panic: suite.should_panic,
        budget: suite.budget,
        followups: suite.followups,
        focus: suite
            .focus
            .iter()
            .map(|f| FocusSpec {
                factors: f.factors.to_vec(),
                strength: f.strength,
                lambda: f.lambda,
            })
            .collect(),
        time: time.to_string(),
    }
}

fn start_record(suite: &Suite, row: usize, run_id: &str, time: String) -> StartRecord {
    StartRecord {
        run: run_id.to_string(),
        krate: suite.krate.to_string(),
        target: message::crate_root(suite.module).to_string(),
        test: message::test_name(suite, row),
        fingerprint: suite.fingerprint.to_string(),
        row: u32::try_from(row).unwrap_or(u32::MAX),
        labels: message::row_labels(suite, row)
            .into_iter()
            .map(str::to_string)
            .collect(),
        time,
        attempt: None,
        build: None,
    }
}

/// The row line of a finished row: its start's fields (stamped when it finished), and
/// how it ended.
fn row_record(start: &StartRecord, result: &RowResult) -> RowRecord {
    start.finished(
        result.outcome,
        result.message.clone(),
        u64::try_from(result.duration.as_nanos()).unwrap_or(u64::MAX),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::__private::Factor;
    use crate::record::Line;
    use std::sync::atomic::{AtomicUsize, Ordering};

    static SUITE: Suite = Suite {
        krate: "demo",
        file: "src/lib.rs",
        target: "--lib",
        function: "f",
        module: "demo::tests::f",
        factors: &[Factor {
            name: "x",
            labels: &["1", "2"],
        }],
        strength: 1,
        lambda: 1,
        seed: 5,
        excludes: &["0=0"],
        rows: &[&[0], &[1]],
        row_names: &["row_00", "row_01"],
        fingerprint: "fp",
        pinned: true,
        should_panic: false,
        should_panic_expected: None,
        budget: None,
        followups: 0,
        focus: &[],
    };

    static WARNINGS: AtomicUsize = AtomicUsize::new(0);

    fn count_warning(_: &str) {
        WARNINGS.fetch_add(1, Ordering::SeqCst);
    }

    fn result(row: usize, outcome: Outcome) -> RowResult {
        RowResult {
            row,
            outcome,
            message: (outcome == Outcome::Failed).then(|| "boom".to_string()),
            duration: Duration::from_micros(3),
        }
    }

    #[test]
    fn failing_setup_warns_once_and_records_nothing() {
        fn broken() -> Result<Config, SetupError> {
            Err(SetupError::NoBuildDir { exe: "/x".into() })
        }
        let rec = Recorder::new(broken, count_warning);
        let before = WARNINGS.load(Ordering::SeqCst);
        for _ in 0..5 {
            rec.record(&SUITE, &result(0, Outcome::Passed));
        }
        assert_eq!(WARNINGS.load(Ordering::SeqCst) - before, 1);
    }

    #[test]
    fn spec_record_mirrors_the_suite() {
        let s = spec_record(&SUITE, "r", "t");
        assert_eq!(s.target, "demo");
        assert_eq!(s.suite, "tests::f");
        assert_eq!(s.rows, vec![vec![0], vec![1]]);
        assert_eq!(s.excludes, vec!["0=0"]);
        assert!(s.pinned && !s.should_panic);
        assert_eq!(s.selector, "--lib");
        assert_eq!(s.row_names, ["row_00", "row_01"]);
        assert_eq!(s.row_test_name(1).as_deref(), Some("tests::f::row_01"));
        let r = row_record(
            &start_record(&SUITE, 1, "r", "t".into()),
            &result(1, Outcome::Failed),
        );
        assert_eq!(r.test, "tests::f::row_01");
        assert_eq!(r.labels, vec!["2"]);
        assert_eq!(r.key(), s.key());
    }

    #[test]
    fn writes_the_spec_once_then_rows() {
        let tmp = tempfile::tempdir().unwrap();
        let cfg = Config {
            store: tmp.path().join("heddle"),
            run_id: "run-1".into(),
            attempt: None,
            build: Some("b1".into()),
        };
        let mut w = open(cfg).unwrap();
        w.write_start(&SUITE, 0).unwrap();
        w.write(&SUITE, &result(0, Outcome::Passed)).unwrap();
        w.write_start(&SUITE, 1).unwrap();
        w.write(&SUITE, &result(1, Outcome::Failed)).unwrap();
        // a row whose process dies now leaves its start alone
        w.write_start(&SUITE, 0).unwrap();
        let text = std::fs::read_to_string(&w.path).unwrap();
        let lines: Vec<Line> = text.lines().map(|l| Line::parse(l).unwrap()).collect();
        assert_eq!(lines.len(), 6);
        assert!(matches!(&lines[0], Line::Spec(s) if s.run == "run-1"));
        let shape: Vec<(&str, u32)> = lines[1..]
            .iter()
            .map(|l| match l {
                Line::Start(s) => ("start", s.row),
                Line::Row(r) => ("row", r.row),
                Line::Spec(_) => ("spec", 0),
            })
            .collect();
        assert_eq!(
            shape,
            [("start", 0), ("row", 0), ("start", 1), ("row", 1), ("start", 0)]
        );
        let (Line::Start(s1), Line::Row(r1)) = (&lines[3], &lines[4]) else {
            panic!("a start, then its row: {lines:?}")
        };
        assert!(s1.pairs_with(r1));
        assert!(matches!(&lines[2], Line::Row(r) if r.outcome == Outcome::Passed && r.message.is_none()));
        assert!(r1.message.as_deref() == Some("boom") && r1.duration_ns == 3000);
        assert!(w.path.starts_with(tmp.path().join("heddle/runs/run-1")));
        // every start and row names the build that ran it
        assert!(lines[1..].iter().all(|l| match l {
            Line::Row(r) => r.build.as_deref() == Some("b1"),
            Line::Start(s) => s.build.as_deref() == Some("b1"),
            Line::Spec(_) => false,
        }));
    }
}
