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
use crate::record::{LineError, LineKind, Outcome, RowRecord, SpecRecord, SuiteKey, spec_identity};
use std::collections::{BTreeMap, BTreeSet};
use std::io::{self, Read};
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
    /// Its process files over all roots, by file name (so by creation time), a file
    /// name seen in two roots once.
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
    /// Distinct spec contents beyond the first for one key (a writer bug; the first, in
    /// file order, is kept).
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
    /// One line per kind of thing left out, for the report to print (empty when nothing
    /// was); worded like the project's other messages.
    pub fn notes(&self) -> Vec<String> {
        let mut out = Vec::new();
        if self.corrupt > 0 {
            let at: Vec<String> = self
                .corrupt_examples
                .iter()
                .map(|l| format!("`{}:{}`", l.path.display(), l.line))
                .collect();
            out.push(format!(
                "skipped {} corrupt or truncated record line{} (at {}{}); hint: a test process \
                 was killed while writing, or the file was damaged",
                self.corrupt,
                plural(self.corrupt),
                at.join(", "),
                if self.corrupt > at.len() { ", …" } else { "" }
            ));
        }
        for (v, n) in &self.other_versions {
            let age = if *v < crate::record::FORMAT_VERSION {
                "older"
            } else {
                "newer"
            };
            out.push(format!(
                "skipped {n} record line{} of {age} format version {v} (this build reads version {}); \
                 hint: rerun the tests with this heddle, or report with the heddle that wrote them",
                plural(*n),
                crate::record::FORMAT_VERSION
            ));
        }
        let others = [
            (
                self.invalid_specs,
                "inconsistent spec line",
                "inconsistent spec lines",
            ),
            (
                self.conflicting_specs,
                "spec line that contradicts another with its fingerprint",
                "spec lines that contradict another with their fingerprint",
            ),
            (
                self.orphan_rows,
                "row line whose spec line is missing",
                "row lines whose spec line is missing",
            ),
            (
                self.mismatched_rows,
                "row line whose row or labels disagree with its spec",
                "row lines whose row or labels disagree with their spec",
            ),
        ];
        for (n, one, many) in others {
            if n > 0 {
                let what = if n == 1 { one } else { many };
                out.push(format!("skipped {n} {what}; hint: the store is damaged"));
            }
        }
        if self.duplicate_files > 0 {
            out.push(format!(
                "read {} file{} found in several stores once",
                self.duplicate_files,
                plural(self.duplicate_files)
            ));
        }
        if !self.unreadable.is_empty() {
            out.push(format!(
                "could not read {} file{} (first `{}`); hint: check permissions",
                self.unreadable.len(),
                plural(self.unreadable.len()),
                self.unreadable[0].display()
            ));
        }
        out
    }

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
            for (run_dir, is_dir) in list_dir(&runs_dir)? {
                let Some(id) = run_dir.file_name().and_then(|n| n.to_str()).map(str::to_string) else {
                    continue;
                };
                if layout::validate_run_id(&id).is_err() || !is_dir {
                    continue;
                }
                let entry = found.entry(id).or_default();
                let suffix = format!(".{FILE_EXTENSION}");
                for (file, is_dir) in list_dir(&run_dir)? {
                    let Some(name) = file.file_name().and_then(|n| n.to_str()).map(str::to_string) else {
                        continue;
                    };
                    if !name.ends_with(&suffix) || is_dir {
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
                // the map is ordered by file name, which is the order files are read in
                let files: Vec<PathBuf> = files.into_values().collect();
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
    for (sub, is_dir) in list_dir(dir).unwrap_or_default() {
        if is_dir {
            discover_in(&sub, depth + 1, roots);
        }
    }
}

/// Entries of a directory with whether each is a directory, sorted; a missing
/// directory is empty. The type comes from the directory listing where the platform
/// gives it (no `stat` per file: a nextest store holds a file per test); symbolic links
/// are followed.
fn list_dir(dir: &Path) -> Result<Vec<(PathBuf, bool)>, StoreError> {
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
    let mut out: Vec<(PathBuf, bool)> = entries
        .filter_map(|e| {
            let e = e.ok()?;
            let path = e.path();
            let is_dir = match e.file_type() {
                Ok(t) if t.is_symlink() => path.is_dir(),
                Ok(t) => t.is_dir(),
                Err(_) => path.is_dir(),
            };
            Some((path, is_dir))
        })
        .collect();
    // entries share their parent, so comparing the whole path as bytes orders by name;
    // much cheaper than `Path`'s component-wise order over a nextest store's many files
    out.sort_by(|a, b| a.0.as_os_str().cmp(b.0.as_os_str()));
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

/// What one worker read from a contiguous slice of the run's files.
#[derive(Default)]
struct Partial {
    /// Fully parsed, valid spec lines, in file order.
    specs: Vec<SpecRecord>,
    rows: Vec<RowRecord>,
    stats: ReadStats,
}

/// Files per worker below which reading stays on one thread.
const FILES_PER_WORKER: usize = 64;

/// Reads the given runs (oldest first) into suites. Files are read on a few threads in
/// contiguous slices and merged in file order, so the result does not depend on the
/// thread count.
fn read_runs(runs: Vec<RunInfo>) -> Records {
    let files = runs.iter().map(|r| r.files.len()).sum::<usize>();
    let workers = std::thread::available_parallelism()
        .map_or(1, |n| n.get())
        .clamp(1, 8)
        .min(files.div_ceil(FILES_PER_WORKER))
        .max(1);
    read_runs_with(runs, workers)
}

fn read_runs_with(runs: Vec<RunInfo>, workers: usize) -> Records {
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

    let mut stats = ReadStats {
        duplicate_files: runs.iter().map(|r| r.duplicate_files).sum(),
        ..ReadStats::default()
    };
    // every distinct content seen per key, the first one (in file order) kept
    let mut variants: BTreeMap<SuiteKey, Vec<SpecRecord>> = BTreeMap::new();
    let mut rows: Vec<RowRecord> = Vec::new();
    for part in partials {
        stats.absorb(part.stats);
        for spec in part.specs {
            let known = variants.entry(spec.key()).or_default();
            if !known.iter().any(|k| k.same_spec(&spec)) {
                if !known.is_empty() {
                    stats.conflicting_specs += 1;
                }
                known.push(spec);
            }
        }
        rows.extend(part.rows);
    }
    // rows are joined to specs after every file is read, so a row whose process lost its
    // spec line is still placed when another process of the runs wrote the same spec
    // suites in key order; rows are placed by binary search, and consecutive rows of one
    // suite (the common case) reuse the previous answer without building a key
    let mut suites: Vec<SuiteRecords> = variants
        .into_values()
        .filter_map(|mut v| {
            (!v.is_empty()).then(|| SuiteRecords {
                spec: v.swap_remove(0),
                rows: Vec::new(),
            })
        })
        .collect();
    let mut last: Option<usize> = None;
    for row in rows {
        let index = match last.filter(|&i| row_belongs(&row, &suites[i].spec)) {
            Some(i) => Some(i),
            None => {
                let key = row.key();
                suites.binary_search_by(|s| s.spec.key_cmp(&key)).ok()
            }
        };
        let Some(i) = index else {
            stats.orphan_rows += 1;
            continue;
        };
        last = Some(i);
        if !labels_match(&suites[i].spec, &row) {
            stats.mismatched_rows += 1;
            continue;
        }
        stats.row_lines += 1;
        suites[i].rows.push(row);
    }
    Records { runs, suites, stats }
}

fn plural(n: usize) -> &'static str {
    if n == 1 { "" } else { "s" }
}

/// Whether a row record carries this spec's key.
fn row_belongs(row: &RowRecord, spec: &SpecRecord) -> bool {
    row.fingerprint == spec.fingerprint
        && row.krate == spec.krate
        && row.target == spec.target
        && row.test.len() > spec.suite.len()
        && row.test.starts_with(spec.suite.as_str())
        && row.test[spec.suite.len()..].starts_with("::")
        && !row.test[spec.suite.len() + 2..].contains("::")
}

/// Whether a row record's index and labels agree with its spec.
fn labels_match(spec: &SpecRecord, row: &RowRecord) -> bool {
    let Some(levels) = spec.rows.get(row.row as usize) else {
        return false;
    };
    levels.len() == row.labels.len()
        && levels
            .iter()
            .zip(&spec.factors)
            .zip(&row.labels)
            .all(|((&lv, f), label)| f.labels.get(lv as usize) == Some(label))
}

impl ReadStats {
    /// Adds the counts of a later slice of files.
    fn absorb(&mut self, other: ReadStats) {
        self.files += other.files;
        self.lines += other.lines;
        self.spec_lines += other.spec_lines;
        self.row_lines += other.row_lines;
        self.corrupt += other.corrupt;
        let room = CORRUPT_EXAMPLES.saturating_sub(self.corrupt_examples.len());
        self.corrupt_examples
            .extend(other.corrupt_examples.into_iter().take(room));
        for (v, n) in other.other_versions {
            *self.other_versions.entry(v).or_default() += n;
        }
        self.invalid_specs += other.invalid_specs;
        self.conflicting_specs += other.conflicting_specs;
        self.orphan_rows += other.orphan_rows;
        self.mismatched_rows += other.mismatched_rows;
        self.duplicate_files += other.duplicate_files;
        self.unreadable.extend(other.unreadable);
    }
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
                    LineKind::Spec => {
                        let identity = spec_identity(text);
                        if identity.is_some_and(|id| parsed.contains(id)) {
                            stats.spec_lines += 1;
                            return Ok(());
                        }
                        let spec = serde_json::from_str::<SpecRecord>(text)
                            .map_err(|e| LineError::Corrupt(e.to_string()))?;
                        if spec.validate().is_err() {
                            stats.invalid_specs += 1;
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
    }
    part
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::{FactorSpec, Line};
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
        let notes = s.notes();
        assert_eq!(notes.len(), 5, "{notes:#?}");
        assert!(
            notes[0].starts_with("skipped 3 corrupt or truncated record lines (at `"),
            "{}",
            notes[0]
        );
        assert!(notes[0].contains(".jsonl:7`"), "{}", notes[0]);
        assert!(
            notes[1]
                .starts_with("skipped 1 record line of newer format version 7 (this build reads version 1)")
        );
        assert_eq!(
            notes[2],
            "skipped 1 inconsistent spec line; hint: the store is damaged"
        );
        assert!(notes.iter().all(|n| !n.ends_with('.')));
        assert!(ReadStats::default().notes().is_empty());
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
    fn parallel_reading_gives_the_same_records_as_one_thread() {
        let tmp = tempfile::tempdir().unwrap();
        let root = tmp.path().join("heddle");
        for f in 0..300u32 {
            let run = format!("r{}", f % 3);
            let mut conflicting = spec(&run);
            conflicting.seed = 99;
            let first = if f == 150 { conflicting } else { spec(&run) };
            let lines = [Line::Spec(first), Line::Row(row(&run, f % 2, Outcome::Passed))];
            let tail = if f % 7 == 0 { "garbage\n{\"v\":3}\n" } else { "" };
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
        assert_eq!(one.stats.other_versions.get(&3), Some(&43));
        assert_eq!(one.stats.conflicting_specs, 1);
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
