//! Reading a run's files: every line parsed (spec lines once per distinct content), on
//! a few threads in contiguous slices, so the result does not depend on the thread count.

use std::collections::BTreeSet;
use std::io::Read;
use std::path::{Path, PathBuf};

use heddle_test::record::{LineError, LineKind, RowRecord, SpecRecord, StartRecord, spec_identity};

use crate::discover::RunInfo;
use crate::join::{Records, join};
use crate::notes::{CORRUPT_EXAMPLES, LineRef, ReadStats};

/// What one worker read from a contiguous slice of the run's files.
#[derive(Default)]
pub(crate) struct Partial {
    /// Fully parsed, valid spec lines, in file order.
    pub(crate) specs: Vec<SpecRecord>,
    pub(crate) rows: Vec<RowRecord>,
    /// Executions that did not finish in a process that ran several rows (see
    /// `unfinished`), in file order.
    pub(crate) unfinished: Vec<StartRecord>,
    /// The file each run of consecutive `rows` came from: (rows, file), in order.
    pub(crate) row_files: Vec<(usize, PathBuf)>,
    pub(crate) stats: ReadStats,
}

/// Files per worker below which reading stays on one thread.
const FILES_PER_WORKER: usize = 64;

/// Reads the given runs (oldest first) into suites. Files are read on a few threads in
/// contiguous slices and merged in file order, so the result does not depend on the
/// thread count.
pub(crate) fn read_runs(runs: Vec<RunInfo>) -> Records {
    let files = runs.iter().map(|r| r.files.len()).sum::<usize>();
    let workers = std::thread::available_parallelism()
        .map_or(1, |n| n.get())
        .clamp(1, 8)
        .min(files.div_ceil(FILES_PER_WORKER))
        .max(1);
    read_runs_with(runs, workers)
}

pub(crate) fn read_runs_with(runs: Vec<RunInfo>, workers: usize) -> Records {
    let files: Vec<&Path> = runs
        .iter()
        .flat_map(|r| r.files.iter().map(PathBuf::as_path))
        .collect();
    let workers = workers.clamp(1, files.len().max(1));
    let chunk = files.len().div_ceil(workers).max(1);
    let partials: Vec<Partial> = if workers == 1 {
        vec![read_files(&files)]
    } else {
        std::thread::scope(|s| {
            let handles: Vec<_> = files
                .chunks(chunk)
                .map(|c| s.spawn(move || read_files(c)))
                .collect();
            // a worker only panics on a bug; its files then count as unreadable
            handles
                .into_iter()
                .zip(files.chunks(chunk))
                .map(|(h, c)| {
                    h.join().unwrap_or_else(|_| Partial {
                        stats: ReadStats {
                            unreadable: c.iter().map(|p| p.to_path_buf()).collect(),
                            ..ReadStats::default()
                        },
                        ..Partial::default()
                    })
                })
                .collect()
        })
    };

    join(runs, partials)
}

/// Parses a slice of files. Row lines are parsed fully; a spec line only the first time
/// its content is met in the slice (see [`spec_identity`]).
fn read_files(files: &[&Path]) -> Partial {
    let mut part = Partial::default();
    let stats = &mut part.stats;
    // identities of the valid spec lines parsed so far: the same spec written again by
    // another process (or run) is counted without parsing it again
    let mut parsed: BTreeSet<String> = BTreeSet::new();
    let mut bytes = Vec::new();
    for &path in files {
        bytes.clear();
        // one buffer for every file: a nextest store holds a small file per test
        if std::fs::File::open(path)
            .and_then(|mut f| f.read_to_end(&mut bytes))
            .is_err()
        {
            stats.unreadable.push(path.to_path_buf());
            continue;
        }
        stats.files += 1;
        let rows_before = part.rows.len();
        let mut starts: Vec<StartRecord> = Vec::new();
        for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
            if raw.iter().all(u8::is_ascii_whitespace) {
                continue;
            }
            stats.lines += 1;
            let outcome = std::str::from_utf8(raw)
                .map_err(|e| LineError::Corrupt(e.to_string()))
                .and_then(|text| Ok((text, LineKind::of(text)?)))
                .and_then(|(text, kind)| match kind {
                    LineKind::Row => serde_json::from_str::<RowRecord>(text)
                        .map(|row| part.rows.push(row))
                        .map_err(|e| LineError::Corrupt(e.to_string())),
                    LineKind::Start => serde_json::from_str::<StartRecord>(text)
                        .map(|start| starts.push(start))
                        .map_err(|e| LineError::Corrupt(e.to_string())),
                    LineKind::Spec => {
                        let identity = spec_identity(text);
                        if identity.is_some_and(|id| parsed.contains(id)) {
                            stats.spec_lines += 1;
                            return Ok(());
                        }
                        let spec = serde_json::from_str::<SpecRecord>(text)
                            .map_err(|e| LineError::Corrupt(e.to_string()))?;
                        if let Err(e) = crate::spec::check(&spec) {
                            match e {
                                crate::SpecError::Exclude { why, .. } => {
                                    stats.unreadable_excludes += 1;
                                    stats.unreadable_exclude_example.get_or_insert(why);
                                }
                                _ => stats.invalid_specs += 1,
                            }
                        } else {
                            stats.spec_lines += 1;
                            if let Some(id) = identity {
                                parsed.insert(id.to_string());
                            }
                            part.specs.push(spec);
                        }
                        Ok(())
                    }
                });
            match outcome {
                Ok(()) => {}
                Err(LineError::OtherVersion(v)) => *stats.other_versions.entry(v).or_default() += 1,
                Err(LineError::Corrupt(_)) => {
                    stats.corrupt += 1;
                    if stats.corrupt_examples.len() < CORRUPT_EXAMPLES {
                        stats.corrupt_examples.push(LineRef {
                            path: path.to_path_buf(),
                            line: i + 1,
                        });
                    }
                }
            }
        }
        // a start is paired with a finish in its own file only: one process wrote both
        for start in crate::unfinished::unpaired(starts, &part.rows[rows_before..]) {
            if crate::unfinished::ran_alone(&start) {
                stats.unfinished_attempts += 1;
                part.rows.push(crate::unfinished::failed(&start));
            } else {
                stats.did_not_finish += 1;
                part.unfinished.push(start);
            }
        }
        let read = part.rows.len() - rows_before;
        if read > 0 {
            part.row_files.push((read, path.to_path_buf()));
        }
    }
    part
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fixture::{self, SpecBuilder};
    use crate::notes::ReadStats;
    use crate::{Store, StoreError};
    use heddle_test::record::layout::RUNS_DIR;
    use heddle_test::record::{Line, Outcome, RowRecord, SpecRecord};
    use std::collections::BTreeMap;
    use std::fs;
    use std::path::Path;

    fn spec(run: &str) -> SpecRecord {
        SpecBuilder::new("f")
            .factor("x", &["a", "b"])
            .rows(vec![vec![0], vec![1]])
            .fingerprint("fp")
            .run(run)
            .build()
    }

    fn row(run: &str, r: u32, outcome: Outcome) -> RowRecord {
        let mut rec = fixture::row(&spec(run), r as usize, outcome);
        rec.message = None;
        rec
    }

    /// A row line of `row`'s, run by the named build.
    fn built(run: &str, r: u32, outcome: Outcome, build: &str) -> Line {
        let mut rec = row(run, r, outcome);
        rec.build = Some(build.into());
        Line::Row(rec)
    }

    fn write_file(root: &Path, run: &str, name: &str, lines: &[Line], tail: &str) {
        let dir = root.join(RUNS_DIR).join(run);
        fs::create_dir_all(&dir).unwrap();
        let mut text: String = lines.iter().map(Line::to_json_line).collect();
        text.push_str(tail);
        fs::write(dir.join(name), text).unwrap();
    }

    #[test]
    fn runs_are_ordered_by_file_stamp_and_read_last_merges() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        // ids sort opposite to their stamps: order must follow the stamps
        write_file(
            &root,
            "b-old",
            "0000000000100-1-0.jsonl",
            &[
                Line::Spec(spec("b-old")),
                Line::Row(row("b-old", 0, Outcome::Passed)),
            ],
            "",
        );
        write_file(
            &root,
            "a-new",
            "0000000000200-2-0.jsonl",
            &[
                Line::Spec(spec("a-new")),
                Line::Row(row("a-new", 1, Outcome::Failed)),
            ],
            "",
        );
        let store = Store::open(tmp.path()).unwrap();
        let ids: Vec<String> = store.runs().unwrap().into_iter().map(|r| r.id).collect();
        assert_eq!(ids, ["b-old", "a-new"]);
        let last = store.read_last(1).unwrap();
        assert_eq!(last.runs.len(), 1);
        assert_eq!(last.suites[0].rows, vec![row("a-new", 1, Outcome::Failed)]);
        let both = store.read_last(5).unwrap();
        assert_eq!(both.suites.len(), 1, "one suite across runs");
        assert_eq!(
            both.suites[0].outcomes().collect::<Vec<_>>(),
            [(0, Outcome::Passed), (1, Outcome::Failed)]
        );
        assert_eq!(both.stats.spec_lines, 2);
        assert_eq!(store.read_run("b-old").unwrap().suites[0].rows.len(), 1);
        let err = store.read_run("zzz").unwrap_err();
        assert_eq!(
            err.to_string(),
            "no run `zzz` in the store; hint: latest runs are `a-new`, `b-old`"
        );
    }

    #[test]
    fn damaged_foreign_and_unmatched_lines_are_counted_not_fatal() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        let mut bad_spec = spec("r");
        bad_spec.fingerprint = "bad".into();
        bad_spec.rows.push(vec![9]);
        let mut wrong_labels = row("r", 0, Outcome::Passed);
        wrong_labels.labels = vec!["b".into()];
        let mut orphan = row("r", 0, Outcome::Passed);
        orphan.fingerprint = "other".into();
        let lines = [
            Line::Spec(spec("r")),
            Line::Row(row("r", 0, Outcome::Passed)),
            Line::Spec(bad_spec),
            Line::Row(wrong_labels),
            Line::Row(orphan),
        ];
        let full = Line::Row(row("r", 1, Outcome::Failed)).to_json_line();
        let tail = format!(
            "{{\"v\":7,\"kind\":\"row\"}}\nnot json\n\n\u{0}\u{ff}\n{}",
            &full[..full.len() / 2]
        );
        write_file(&root, "r", "0000000000001-1-0.jsonl", &lines, &tail);
        let rec = Store::open(&root).unwrap().read_run("r").unwrap();
        let s = &rec.stats;
        assert_eq!(s.row_lines, 1);
        assert_eq!(s.corrupt, 3, "{s:?}");
        assert_eq!(
            s.corrupt_examples.iter().map(|l| l.line).collect::<Vec<_>>(),
            [7, 9, 10]
        );
        assert_eq!(s.other_versions, BTreeMap::from([(7, 1)]));
        assert_eq!((s.invalid_specs, s.mismatched_rows, s.orphan_rows), (1, 1, 1));
        assert_eq!(s.skipped(), 7);
        let notes: Vec<String> = s.notes().iter().map(|d| d.one_line()).collect();
        assert_eq!(notes.len(), 5, "{notes:#?}");
        assert!(
            notes[0].starts_with("skipped 3 corrupt or truncated record lines (at `"),
            "{}",
            notes[0]
        );
        assert!(notes[0].contains(".jsonl:7`"), "{}", notes[0]);
        assert!(notes[1].starts_with(
            "skipped 1 record line of newer format version 7 (this build reads versions 2 to 3)"
        ));
        assert_eq!(
            notes[2],
            "skipped 1 inconsistent spec line; hint: the store is damaged"
        );
        assert!(notes.iter().all(|n| !n.ends_with('.')));
        assert!(ReadStats::default().notes().is_empty());
        assert_eq!(rec.suites.len(), 1);
    }

    #[test]
    fn a_spec_line_with_an_exclude_nested_too_deep_is_skipped_and_named() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        let mut deep = spec("r");
        deep.function = "deep".into();
        deep.suite = "deep".into();
        deep.fingerprint = "deep".into();
        // 3000 negations: the engine reads formulas up to MAX_FORMULA_DEPTH levels
        deep.excludes = vec![format!("{}0=0", "!".repeat(3000))];
        let lines = [
            Line::Spec(deep),
            Line::Spec(spec("r")),
            Line::Row(row("r", 0, Outcome::Passed)),
        ];
        write_file(&root, "r", "0000000000001-1-0.jsonl", &lines, "");
        let rec = Store::open(&root).unwrap().read_run("r").unwrap();
        let s = &rec.stats;
        assert_eq!((s.unreadable_excludes, s.invalid_specs, s.spec_lines), (1, 0, 1));
        assert_eq!(s.skipped(), 1);
        let notes: Vec<String> = s.notes().iter().map(|d| d.one_line()).collect();
        assert_eq!(
            notes,
            [format!(
                "skipped 1 spec line whose exclude cannot be read (the formula nests deeper than \
                 {} levels at column {}); hint: the store is damaged, or was written by a build \
                 that is not heddle's",
                heddle_generator::MAX_FORMULA_DEPTH,
                heddle_generator::MAX_FORMULA_DEPTH
            )]
        );
        assert_eq!(rec.suites.len(), 1, "the good suite is still read");
    }

    #[test]
    fn shards_merge_and_duplicate_files_are_read_once() {
        let tmp = tempfile::tempdir().unwrap();
        let job1 = tmp.path().join("shards/job1/target/heddle");
        let job2 = tmp.path().join("shards/job2/heddle");
        let lines0 = [Line::Spec(spec("ci")), Line::Row(row("ci", 0, Outcome::Passed))];
        let lines1 = [Line::Spec(spec("ci")), Line::Row(row("ci", 1, Outcome::Failed))];
        write_file(&job1, "ci", "0000000000001-1-0.jsonl", &lines0, "");
        write_file(&job2, "ci", "0000000000002-2-0.jsonl", &lines1, "");
        // job2 also carries a copy of job1's file
        write_file(&job2, "ci", "0000000000001-1-0.jsonl", &lines0, "");
        let store = Store::discover(tmp.path().join("shards")).unwrap();
        assert_eq!(store.roots(), [job1.clone(), job2.clone()]);
        let rec = store.read_run("ci").unwrap();
        assert_eq!(rec.stats.duplicate_files, 1);
        assert_eq!(
            rec.suites[0].outcomes().collect::<Vec<_>>(),
            [(0, Outcome::Passed), (1, Outcome::Failed)]
        );
        let merged = Store::merge([tmp.path().join("shards/job1/target"), job2.clone(), job2]).unwrap();
        assert_eq!(merged.roots().len(), 2);
        assert_eq!(merged.read_all().unwrap().stats.row_lines, 2);
    }

    #[test]
    fn a_later_build_supersedes_a_rows_earlier_runs_but_not_its_own() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        // run 1, build A: row 0 fails, row 1 passes; run 2, build A: row 1 fails (a
        // flake of one build); run 3, build B: row 0 passes (the fix), on two machines
        // of one run whose builds differ (B and C: both stay)
        let files: [(&str, &str, Vec<Line>); 4] = [
            (
                "r1",
                "0000000000001-1-0.jsonl",
                vec![
                    built("r1", 0, Outcome::Failed, "A"),
                    built("r1", 1, Outcome::Passed, "A"),
                ],
            ),
            (
                "r2",
                "0000000000002-1-0.jsonl",
                vec![built("r2", 1, Outcome::Failed, "A")],
            ),
            (
                "r3",
                "0000000000003-1-0.jsonl",
                vec![built("r3", 0, Outcome::Passed, "B")],
            ),
            (
                "r3",
                "0000000000004-2-0.jsonl",
                vec![built("r3", 0, Outcome::Failed, "C")],
            ),
        ];
        for (run, name, rows) in files {
            let mut lines = vec![Line::Spec(spec(run))];
            lines.extend(rows);
            write_file(&root, run, name, &lines, "");
        }
        let rec = Store::open(&root).unwrap().read_all().unwrap();
        let kept: Vec<(String, u32, Outcome)> = rec.suites[0]
            .rows
            .iter()
            .map(|r| (r.run.clone(), r.row, r.outcome))
            .collect();
        assert_eq!(
            kept,
            [
                ("r1".to_string(), 1, Outcome::Passed),
                ("r2".to_string(), 1, Outcome::Failed),
                ("r3".to_string(), 0, Outcome::Passed),
                ("r3".to_string(), 0, Outcome::Failed),
            ]
        );
        assert_eq!((rec.stats.superseded_rows, rec.stats.row_lines), (1, 4));
        let notes: Vec<String> = rec.stats.notes().iter().map(|d| d.one_line()).collect();
        assert!(
            notes[0].starts_with("left out 1 row record of earlier runs of another build"),
            "{notes:?}"
        );
        // one run read alone keeps what it holds
        assert_eq!(
            Store::open(&root)
                .unwrap()
                .read_run("r1")
                .unwrap()
                .stats
                .superseded_rows,
            0
        );
    }

    #[test]
    fn rows_a_rebuilt_test_did_not_run_again_are_named_as_earlier_builds() {
        // run 1, build A: rows 0 and 1; run 2: row 0 alone, by build B (a fix, then a
        // one-row rerun) or by build A again (a rerun without a rebuild)
        for (second, earlier) in [("B", 1), ("A", 0)] {
            let tmp = tempfile::tempdir().unwrap();
            let root = tmp.path().join("heddle");
            let first = vec![
                Line::Spec(spec("r1")),
                built("r1", 0, Outcome::Failed, "A"),
                built("r1", 1, Outcome::Passed, "A"),
            ];
            write_file(&root, "r1", "0000000000001-1-0.jsonl", &first, "");
            let rerun = vec![Line::Spec(spec("r2")), built("r2", 0, Outcome::Passed, second)];
            write_file(&root, "r2", "0000000000002-1-0.jsonl", &rerun, "");
            let rec = Store::open(&root).unwrap().read_all().unwrap();
            assert_eq!(rec.stats.earlier_build_rows, earlier, "second build {second}");
            let notes: Vec<String> = rec.stats.notes().iter().map(|d| d.one_line()).collect();
            assert_eq!(
                notes
                    .iter()
                    .any(|n| n.starts_with("1 row last ran under an earlier build than the latest run's")),
                earlier > 0,
                "{notes:?}"
            );
        }
    }

    #[test]
    fn another_stores_build_is_no_later_version() {
        // two jobs of a matrix, each with its store, copied and merged: the row failed
        // on one machine's build and passed on the other's, later; both stay
        let tmp = tempfile::tempdir().unwrap();
        for (job, run, ms, outcome, build) in [
            ("linux", "r1", 1, Outcome::Failed, "A"),
            ("mac", "r2", 2, Outcome::Passed, "B"),
        ] {
            let root = tmp.path().join(job).join("heddle");
            let lines = [Line::Spec(spec(run)), built(run, 0, outcome, build)];
            write_file(&root, run, &format!("{ms:013}-1-0.jsonl"), &lines, "");
        }
        let store = Store::discover(tmp.path()).unwrap();
        let rec = store.read_all().unwrap();
        assert_eq!(
            rec.suites[0].outcomes().collect::<Vec<_>>(),
            [(0, Outcome::Failed), (0, Outcome::Passed)]
        );
        assert_eq!(rec.stats.superseded_rows, 0);
        // another store's older run is no earlier build of this one either
        assert_eq!(rec.stats.earlier_build_rows, 0);
    }

    #[test]
    fn parallel_reading_gives_the_same_records_as_one_thread() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        for f in 0..300u32 {
            let run = format!("r{}", f % 3);
            let mut conflicting = spec(&run);
            conflicting.seed = 99;
            let first = if f == 150 { conflicting } else { spec(&run) };
            let lines = [Line::Spec(first), Line::Row(row(&run, f % 2, Outcome::Passed))];
            let tail = if f % 7 == 0 { "garbage\n{\"v\":4}\n" } else { "" };
            write_file(&root, &run, &format!("{:013}-{f}-0.jsonl", f), &lines, tail);
        }
        let store = Store::open(&root).unwrap();
        let one = read_runs_with(store.runs().unwrap(), 1);
        for workers in [2, 3, 8] {
            assert_eq!(
                read_runs_with(store.runs().unwrap(), workers),
                one,
                "{workers} workers"
            );
        }
        assert_eq!(store.read_all().unwrap(), one);
        assert_eq!(one.stats.row_lines, 300);
        assert_eq!(one.stats.corrupt, 43);
        assert_eq!(one.stats.corrupt_examples.len(), 5);
        assert_eq!(one.stats.other_versions.get(&4), Some(&43));
        assert_eq!(one.stats.conflicting_specs, 1);
    }

    #[test]
    fn a_spec_run_before_and_after_pinning_its_same_rows_is_one_suite_without_a_note() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        let mut pinned = spec("r2");
        pinned.pinned = true;
        write_file(
            &root,
            "r1",
            "0000000000001-1-0.jsonl",
            &[Line::Spec(spec("r1")), Line::Row(row("r1", 0, Outcome::Passed))],
            "",
        );
        write_file(
            &root,
            "r2",
            "0000000000002-2-0.jsonl",
            &[Line::Spec(pinned), Line::Row(row("r2", 1, Outcome::Failed))],
            "",
        );
        let rec = Store::open(&root).unwrap().read_all().unwrap();
        assert_eq!(rec.stats.conflicting_specs, 0);
        assert!(rec.stats.notes().is_empty(), "{:?}", rec.stats.notes());
        assert_eq!(rec.suites.len(), 1);
        assert_eq!(rec.suites[0].outcomes().count(), 2);
        // rows of their own under one fingerprint still contradict
        let mut other = spec("r3");
        other.rows[0][0] ^= 1;
        write_file(&root, "r3", "0000000000003-3-0.jsonl", &[Line::Spec(other)], "");
        assert_eq!(
            Store::open(&root)
                .unwrap()
                .read_all()
                .unwrap()
                .stats
                .conflicting_specs,
            1
        );
    }

    #[test]
    fn a_nextest_start_without_a_finish_is_one_failed_attempt() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        let at = |r: usize, a: u32| {
            let mut s = fixture::start(&spec("nx"), r);
            s.attempt = Some(a);
            s
        };
        let finished = |s: &heddle_test::record::StartRecord, outcome: Outcome| s.finished(outcome, None, 5);
        // row 0 aborted at attempt 1 and passed at attempt 2 (one process each);
        // row 1 aborted at both attempts (the retries ran out)
        let files = [
            vec![Line::Spec(spec("nx")), Line::Start(at(0, 1))],
            vec![
                Line::Spec(spec("nx")),
                Line::Start(at(0, 2)),
                Line::Row(finished(&at(0, 2), Outcome::Passed)),
            ],
            vec![Line::Spec(spec("nx")), Line::Start(at(1, 1))],
            vec![Line::Spec(spec("nx")), Line::Start(at(1, 2))],
        ];
        for (i, lines) in files.iter().enumerate() {
            write_file(&root, "nx", &format!("{i:013}-{i}-0.jsonl"), lines, "");
        }
        let rec = Store::open(&root).unwrap().read_run("nx").unwrap();
        let seen: Vec<(u32, Outcome, Option<u32>)> = rec.suites[0]
            .rows
            .iter()
            .map(|r| (r.row, r.outcome, r.attempt))
            .collect();
        // each failed attempt once: the retry of row 0 shows attempt 1 failed, and its
        // start already said so
        assert_eq!(
            seen,
            [
                (0, Outcome::Failed, Some(1)),
                (0, Outcome::Passed, Some(2)),
                (1, Outcome::Failed, Some(1)),
                (1, Outcome::Failed, Some(2)),
            ]
        );
        assert!(rec.suites[0].unfinished.is_empty());
        assert_eq!((rec.stats.unfinished_attempts, rec.stats.did_not_finish), (3, 0));
        let message = rec.suites[0].rows[3].message.as_deref().unwrap();
        assert!(message.starts_with("attempt 2 did not finish"), "{message}");
        let notes: Vec<String> = rec.stats.notes().iter().map(|d| d.one_line()).collect();
        assert!(
            notes[0].starts_with("counted 3 nextest attempts that did not finish as failed"),
            "{notes:?}"
        );
    }

    #[test]
    fn starts_without_a_finish_in_a_process_of_several_rows_are_no_outcomes() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        let s = spec("plain");
        // one process: row 0 finished, then rows 1 and 0 (again) were in flight when it
        // ended; another file's finish of row 1 does not pair with this file's start
        let lines = [
            Line::Spec(s.clone()),
            Line::Start(fixture::start(&s, 0)),
            Line::Row(row("plain", 0, Outcome::Passed)),
            Line::Start(fixture::start(&s, 1)),
            Line::Start(fixture::start(&s, 0)),
        ];
        write_file(&root, "plain", "0000000000001-1-0.jsonl", &lines, "");
        let other = [Line::Spec(s.clone()), Line::Row(row("plain", 1, Outcome::Passed))];
        write_file(&root, "plain", "0000000000002-2-0.jsonl", &other, "");
        let rec = Store::open(&root).unwrap().read_run("plain").unwrap();
        let suite = &rec.suites[0];
        assert_eq!(
            suite.outcomes().collect::<Vec<_>>(),
            [(0, Outcome::Passed), (1, Outcome::Passed)],
            "no failure is made up"
        );
        assert_eq!(suite.unfinished.iter().map(|s| s.row).collect::<Vec<_>>(), [1, 0]);
        assert_eq!((rec.stats.unfinished_attempts, rec.stats.did_not_finish), (0, 2));
        assert_eq!(rec.stats.row_lines, 2);
    }

    #[test]
    fn missing_and_empty_stores_are_named() {
        let tmp = tempfile::tempdir().unwrap();
        assert!(matches!(
            Store::open(tmp.path()),
            Err(StoreError::NotFound { .. })
        ));
        assert!(matches!(
            Store::discover(tmp.path()),
            Err(StoreError::NotFound { .. })
        ));
        fs::create_dir_all(tmp.path().join("heddle/runs")).unwrap();
        let store = Store::open(tmp.path()).unwrap();
        let err = store.read_last(1).unwrap_err();
        assert!(matches!(err, StoreError::NoRuns { .. }));
        assert!(err.to_string().contains("hint: run the tests first"));
        // junk in the runs directory is passed over
        fs::create_dir_all(tmp.path().join("heddle/runs/.hidden")).unwrap();
        fs::write(tmp.path().join("heddle/runs/stray.txt"), "x").unwrap();
        assert_eq!(store.runs().unwrap(), vec![]);
    }
}
