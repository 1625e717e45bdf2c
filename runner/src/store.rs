//! Reading the record store: runs, their records grouped by suite, shards merged.
//!
//! Layout (see also [`crate::layout`]):
//! ```text
//! <target or build dir>/heddle/                 store root
//!     runs/<run id>/                            one directory per run
//!         <unix ms>-<pid>-<nonce>.jsonl         one file per test process
//! ```
//! A run is every process that recorded under one run id; its start is the earliest
//! stamp among its file names, which orders runs without reading them. Shards (stores
//! copied from several CI jobs) are merged by opening them together: a run present in
//! several shards is the union of its files, and a file present twice (the same shard
//! copied twice) is read once.
//!
//! Reading never fails on content: corrupt or truncated lines, lines of another format
//! version, rows whose spec is missing or does not match are skipped and counted in
//! [`ReadStats`], so a report can say what it left out.
//!
//! ```no_run
//! use heddle::store::Store;
//! let store = Store::open("target")?;            // a target dir or a store root
//! let records = store.read_last(1)?;             // the latest run
//! for suite in &records.suites {
//!     let tallies = heddle::tally::tally(&suite.spec, suite.outcomes())?;
//!     println!("{}: {} interactions", suite.spec.suite, tallies.interactions().len());
//! }
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

use crate::layout::{self, FILE_EXTENSION, RUNS_DIR, STORE_DIR};
use crate::record::{Line, LineError, Outcome, RowRecord, SpecRecord, SuiteKey};
use std::collections::{BTreeMap, BTreeSet};
use std::io;
use std::path::{Path, PathBuf};

/// One or more store roots read as one store.
#[derive(Clone, Debug)]
pub struct Store {
    roots: Vec<PathBuf>,
}

/// One run, as found on disk.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RunInfo {
    /// Run id.
    pub id: String,
    /// Earliest file stamp of the run (Unix ms); runs are ordered by it, then by id.
    pub started_ms: u64,
    /// Its process files over all roots, sorted, a file name seen in two roots once.
    pub files: Vec<PathBuf>,
    /// How many files were left out because another root held the same file name.
    pub duplicate_files: usize,
}

/// Where a skipped line was.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LineRef {
    /// The file.
    pub path: PathBuf,
    /// 1-based line number.
    pub line: usize,
}

/// What reading found and what it skipped.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct ReadStats {
    /// Files read.
    pub files: usize,
    /// Non-empty lines seen.
    pub lines: usize,
    /// Spec lines accepted (one per process per suite).
    pub spec_lines: usize,
    /// Row lines accepted.
    pub row_lines: usize,
    /// Lines that are not a record of any known version (truncated, damaged, foreign).
    pub corrupt: usize,
    /// The first few corrupt lines, for the message.
    pub corrupt_examples: Vec<LineRef>,
    /// Well-formed lines of another format version, counted by version.
    pub other_versions: BTreeMap<u32, usize>,
    /// Spec lines refused by [`SpecRecord::validate`].
    pub invalid_specs: usize,
    /// Spec lines with a known key but different content (a writer bug; first one kept).
    pub conflicting_specs: usize,
    /// Row lines whose spec was never read (its line lost or corrupt).
    pub orphan_rows: usize,
    /// Row lines whose row index or labels disagree with their spec.
    pub mismatched_rows: usize,
    /// Files left out as copies of a file in another root.
    pub duplicate_files: usize,
    /// Files or directories that could not be read.
    pub unreadable: Vec<PathBuf>,
}

impl ReadStats {
    /// Number of lines left out for any reason.
    pub fn skipped(&self) -> usize {
        self.corrupt
            + self.other_versions.values().sum::<usize>()
            + self.invalid_specs
            + self.conflicting_specs
            + self.orphan_rows
            + self.mismatched_rows
    }
}

/// The records of one suite (one annotated function at one spec fingerprint).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SuiteRecords {
    /// Its spec (the first spec line read for it).
    pub spec: SpecRecord,
    /// Its row records, in run order, then file order, then line order.
    pub rows: Vec<RowRecord>,
}

impl SuiteRecords {
    /// `(row index, outcome)` of every row record, as [`crate::tally::tally`] takes them.
    pub fn outcomes(&self) -> impl Iterator<Item = (usize, Outcome)> + '_ {
        self.rows.iter().map(|r| (r.row as usize, r.outcome))
    }
}

/// The records of one or more runs.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Records {
    /// The runs read, oldest first.
    pub runs: Vec<RunInfo>,
    /// Every suite with at least one valid spec line, ordered by key.
    pub suites: Vec<SuiteRecords>,
    /// What was read and skipped.
    pub stats: ReadStats,
}

/// Why the store cannot be read at all.
#[derive(Debug)]
pub enum StoreError {
    /// No store at or below the path.
    NotFound {
        /// The path looked at.
        path: PathBuf,
    },
    /// The store holds no runs.
    NoRuns {
        /// The store roots.
        roots: Vec<PathBuf>,
    },
    /// No run has this id.
    UnknownRun {
        /// The id asked for.
        id: String,
        /// The latest run ids, newest first, for the hint.
        latest: Vec<String>,
    },
    /// A directory of the store cannot be listed.
    Io {
        /// The directory.
        path: PathBuf,
        /// The error.
        source: io::Error,
    },
}

impl std::fmt::Display for StoreError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            StoreError::NotFound { path } => write!(
                f,
                "no heddle store at `{}`; hint: run the tests first (`cargo heddle test`), \
                 or pass a target directory or a directory of shards",
                path.display()
            ),
            StoreError::NoRuns { roots } => {
                let roots: Vec<String> = roots.iter().map(|r| format!("`{}`", r.display())).collect();
                write!(
                    f,
                    "the store at {} holds no runs; hint: run the tests first (`cargo heddle test`)",
                    roots.join(", ")
                )
            }
            StoreError::UnknownRun { id, latest } => {
                write!(f, "no run `{id}` in the store")?;
                if latest.is_empty() {
                    write!(f, "; hint: the store is empty")
                } else {
                    let ids: Vec<String> = latest.iter().map(|i| format!("`{i}`")).collect();
                    write!(f, "; hint: latest runs are {}", ids.join(", "))
                }
            }
            StoreError::Io { path, source } => {
                write!(
                    f,
                    "cannot read `{}` ({source}); hint: check permissions",
                    path.display()
                )
            }
        }
    }
}

impl std::error::Error for StoreError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            StoreError::Io { source, .. } => Some(source),
            _ => None,
        }
    }
}

/// The store root at `path`: `path` itself when it holds `runs/`, else `path/heddle`
/// when that holds `runs/`.
pub fn find_root(path: &Path) -> Option<PathBuf> {
    if path.join(RUNS_DIR).is_dir() {
        Some(path.to_path_buf())
    } else if path.join(STORE_DIR).join(RUNS_DIR).is_dir() {
        Some(path.join(STORE_DIR))
    } else {
        None
    }
}

/// How deep [`Store::discover`] looks below its directory (`shards/<job>/target/heddle`
/// is three levels down).
pub const DISCOVER_DEPTH: usize = 4;

impl Store {
    /// Opens one store: a store root (holding `runs/`) or a directory holding `heddle/`
    /// (a target or build directory).
    pub fn open(path: impl AsRef<Path>) -> Result<Store, StoreError> {
        let path = path.as_ref();
        let root = find_root(path).ok_or_else(|| StoreError::NotFound {
            path: path.to_path_buf(),
        })?;
        Ok(Store { roots: vec![root] })
    }

    /// Opens several stores as one (each path as in [`Store::open`]); every path must
    /// hold a store.
    pub fn merge<P: AsRef<Path>>(paths: impl IntoIterator<Item = P>) -> Result<Store, StoreError> {
        let mut roots = Vec::new();
        for p in paths {
            let root = Store::open(p)?.roots.remove(0);
            if !roots.contains(&root) {
                roots.push(root);
            }
        }
        Ok(Store { roots })
    }

    /// Opens every store at or below `dir` (up to [`DISCOVER_DEPTH`] levels): for a
    /// directory of shards copied from CI jobs. Roots are taken in path order.
    pub fn discover(dir: impl AsRef<Path>) -> Result<Store, StoreError> {
        let dir = dir.as_ref();
        let mut roots = BTreeSet::new();
        discover_in(dir, 0, &mut roots);
        if roots.is_empty() {
            return Err(StoreError::NotFound {
                path: dir.to_path_buf(),
            });
        }
        Ok(Store {
            roots: roots.into_iter().collect(),
        })
    }

    /// The store roots read, in the order given.
    pub fn roots(&self) -> &[PathBuf] {
        &self.roots
    }

    /// Every run, oldest first.
    pub fn runs(&self) -> Result<Vec<RunInfo>, StoreError> {
        // run id -> file name -> first path holding it, and the count of later copies
        let mut found: BTreeMap<String, (BTreeMap<String, PathBuf>, usize)> = BTreeMap::new();
        for root in &self.roots {
            let runs_dir = root.join(RUNS_DIR);
            for run_dir in list_dir(&runs_dir)? {
                let Some(id) = run_dir.file_name().and_then(|n| n.to_str()).map(str::to_string) else {
                    continue;
                };
                if layout::validate_run_id(&id).is_err() || !run_dir.is_dir() {
                    continue;
                }
                let entry = found.entry(id).or_default();
                for file in list_dir(&run_dir)? {
                    let Some(name) = file.file_name().and_then(|n| n.to_str()).map(str::to_string) else {
                        continue;
                    };
                    if !name.ends_with(&format!(".{FILE_EXTENSION}")) || !file.is_file() {
                        continue;
                    }
                    match entry.0.entry(name) {
                        std::collections::btree_map::Entry::Occupied(_) => entry.1 += 1,
                        std::collections::btree_map::Entry::Vacant(v) => {
                            v.insert(file);
                        }
                    }
                }
            }
        }
        let mut runs: Vec<RunInfo> = found
            .into_iter()
            .filter(|(_, (files, _))| !files.is_empty())
            .map(|(id, (files, duplicate_files))| {
                let started_ms = files
                    .iter()
                    .map(|(name, path)| layout::file_stamp(name).unwrap_or_else(|| mtime_ms(path)))
                    .min()
                    .unwrap_or(0);
                let mut files: Vec<PathBuf> = files.into_values().collect();
                files.sort();
                RunInfo {
                    id,
                    started_ms,
                    files,
                    duplicate_files,
                }
            })
            .collect();
        runs.sort_by(|a, b| (a.started_ms, &a.id).cmp(&(b.started_ms, &b.id)));
        Ok(runs)
    }

    /// The records of one run.
    pub fn read_run(&self, id: &str) -> Result<Records, StoreError> {
        let runs = self.runs()?;
        match runs.iter().find(|r| r.id == id) {
            Some(run) => Ok(read_runs(vec![run.clone()])),
            None => Err(StoreError::UnknownRun {
                id: id.to_string(),
                latest: runs.iter().rev().take(5).map(|r| r.id.clone()).collect(),
            }),
        }
    }

    /// The records of the last `n` runs (all of them when fewer), merged: the history a
    /// flakiness report looks at.
    pub fn read_last(&self, n: usize) -> Result<Records, StoreError> {
        let runs = self.runs()?;
        if runs.is_empty() {
            return Err(StoreError::NoRuns {
                roots: self.roots.clone(),
            });
        }
        let keep = runs.len().saturating_sub(n);
        Ok(read_runs(runs.into_iter().skip(keep).collect()))
    }

    /// The records of every run.
    pub fn read_all(&self) -> Result<Records, StoreError> {
        self.read_last(usize::MAX)
    }
}

fn discover_in(dir: &Path, depth: usize, roots: &mut BTreeSet<PathBuf>) {
    if let Some(root) = find_root(dir) {
        roots.insert(root);
        return;
    }
    if depth >= DISCOVER_DEPTH {
        return;
    }
    // unreadable directories below the one asked for are passed over
    for sub in list_dir(dir).unwrap_or_default() {
        if sub.is_dir() {
            discover_in(&sub, depth + 1, roots);
        }
    }
}

/// Entries of a directory, sorted; a missing directory is empty.
fn list_dir(dir: &Path) -> Result<Vec<PathBuf>, StoreError> {
    let entries = match std::fs::read_dir(dir) {
        Ok(e) => e,
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(Vec::new()),
        Err(source) => {
            return Err(StoreError::Io {
                path: dir.to_path_buf(),
                source,
            });
        }
    };
    let mut out: Vec<PathBuf> = entries.filter_map(|e| e.ok().map(|e| e.path())).collect();
    out.sort();
    Ok(out)
}

fn mtime_ms(path: &Path) -> u64 {
    std::fs::metadata(path)
        .and_then(|m| m.modified())
        .map(|t| crate::time::since_epoch(t).as_millis() as u64)
        .unwrap_or(0)
}

/// How many corrupt lines [`ReadStats::corrupt_examples`] keeps.
const CORRUPT_EXAMPLES: usize = 5;

/// Reads the given runs (oldest first) into suites.
fn read_runs(runs: Vec<RunInfo>) -> Records {
    let mut stats = ReadStats::default();
    let mut specs: BTreeMap<SuiteKey, SpecRecord> = BTreeMap::new();
    let mut rows: Vec<RowRecord> = Vec::new();
    for run in &runs {
        stats.duplicate_files += run.duplicate_files;
        for path in &run.files {
            let bytes = match std::fs::read(path) {
                Ok(b) => b,
                Err(_) => {
                    stats.unreadable.push(path.clone());
                    continue;
                }
            };
            stats.files += 1;
            for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
                if raw.iter().all(u8::is_ascii_whitespace) {
                    continue;
                }
                stats.lines += 1;
                let parsed = std::str::from_utf8(raw)
                    .map_err(|e| LineError::Corrupt(e.to_string()))
                    .and_then(Line::parse);
                match parsed {
                    Ok(Line::Spec(spec)) => {
                        if spec.validate().is_err() {
                            stats.invalid_specs += 1;
                            continue;
                        }
                        stats.spec_lines += 1;
                        match specs.get(&spec.key()) {
                            Some(known) if !known.same_spec(&spec) => stats.conflicting_specs += 1,
                            Some(_) => {}
                            None => {
                                specs.insert(spec.key(), spec);
                            }
                        }
                    }
                    Ok(Line::Row(row)) => rows.push(row),
                    Err(LineError::OtherVersion(v)) => *stats.other_versions.entry(v).or_default() += 1,
                    Err(LineError::Corrupt(_)) => {
                        stats.corrupt += 1;
                        if stats.corrupt_examples.len() < CORRUPT_EXAMPLES {
                            stats.corrupt_examples.push(LineRef {
                                path: path.clone(),
                                line: i + 1,
                            });
                        }
                    }
                }
            }
        }
    }
    // rows are joined to specs after every file is read: under nextest a row and its
    // spec may sit in different files of the run only if a spec line was lost, but a
    // spec read later still rescues the rows
    let mut grouped: BTreeMap<SuiteKey, Vec<RowRecord>> = BTreeMap::new();
    for row in rows {
        let key = row.key();
        let Some(spec) = specs.get(&key) else {
            stats.orphan_rows += 1;
            continue;
        };
        let matches = spec
            .row_labels(row.row as usize)
            .is_some_and(|labels| labels.iter().copied().eq(row.labels.iter().map(String::as_str)));
        if !matches {
            stats.mismatched_rows += 1;
            continue;
        }
        stats.row_lines += 1;
        grouped.entry(key).or_default().push(row);
    }
    let suites = specs
        .into_iter()
        .map(|(key, spec)| SuiteRecords {
            spec,
            rows: grouped.remove(&key).unwrap_or_default(),
        })
        .collect();
    Records { runs, suites, stats }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::FactorSpec;
    use std::fs;

    fn spec(run: &str) -> SpecRecord {
        SpecRecord {
            run: run.into(),
            krate: "demo".into(),
            target: "t".into(),
            file: "tests/t.rs".into(),
            function: "f".into(),
            module: "t::f".into(),
            suite: "f".into(),
            factors: vec![FactorSpec {
                name: "x".into(),
                labels: vec!["a".into(), "b".into()],
            }],
            strength: 1,
            lambda: 1,
            seed: 1,
            excludes: vec![],
            rows: vec![vec![0], vec![1]],
            fingerprint: "fp".into(),
            pinned: false,
            should_panic: false,
            time: "t".into(),
        }
    }

    fn row(run: &str, r: u32, outcome: Outcome) -> RowRecord {
        RowRecord {
            run: run.into(),
            krate: "demo".into(),
            target: "t".into(),
            test: format!("f::row_{r:02}"),
            fingerprint: "fp".into(),
            row: r,
            labels: vec![["a", "b"][r as usize].into()],
            outcome,
            message: None,
            duration_ns: 1,
            time: "t".into(),
        }
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
        assert_eq!(rec.suites.len(), 1);
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
