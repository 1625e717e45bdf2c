//! Finding stores and their runs on disk.

use std::collections::{BTreeMap, BTreeSet};
use std::io;
use std::path::{Path, PathBuf};

use heddle_generator::Diagnostic;
use heddle_test::record::Line;
use heddle_test::record::layout::{self, FILE_EXTENSION, RUNS_DIR, STORE_DIR};

use crate::join::Records;
use crate::read::read_runs;

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

impl StoreError {
    /// What went wrong, in the shape every front end renders.
    pub fn diagnostic(&self) -> Diagnostic {
        match self {
            StoreError::NotFound { path } => {
                Diagnostic::new(format!("no heddle store at `{}`", path.display())).hint(
                    "run the tests first (`cargo heddle test`), or pass a target directory or a \
                     directory of shards",
                )
            }
            StoreError::NoRuns { roots } => {
                let roots: Vec<String> = roots.iter().map(|r| format!("`{}`", r.display())).collect();
                Diagnostic::new(format!("the store at {} holds no runs", roots.join(", ")))
                    .hint("run the tests first (`cargo heddle test`)")
            }
            StoreError::UnknownRun { id, latest } => {
                let d = Diagnostic::new(format!("no run `{id}` in the store"));
                if latest.is_empty() {
                    d.hint("the store is empty")
                } else {
                    let ids: Vec<String> = latest.iter().map(|i| format!("`{i}`")).collect();
                    d.hint(format!("latest runs are {}", ids.join(", ")))
                }
            }
            StoreError::Io { path, source } => {
                Diagnostic::new(format!("cannot read `{}` ({source})", path.display()))
                    .hint("check permissions")
            }
        }
    }
}

impl std::fmt::Display for StoreError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.diagnostic().one_line())
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

    /// The records of the given runs (as [`Store::runs`] lists them), merged.
    pub fn read_runs(&self, runs: Vec<RunInfo>) -> Records {
        read_runs(runs)
    }

    /// The packages a run recorded suites of, from the first line of each of its files:
    /// one file is one test process of one package, and the runtime writes a suite's
    /// spec line before its first row, so the first line names the package. Cheap next
    /// to reading the run; files that cannot be read or start otherwise are passed over.
    pub fn packages(&self, run: &RunInfo) -> BTreeSet<String> {
        use std::io::BufRead;
        let mut out = BTreeSet::new();
        let mut line = String::new();
        for path in &run.files {
            let Ok(file) = std::fs::File::open(path) else {
                continue;
            };
            line.clear();
            if std::io::BufReader::new(file).read_line(&mut line).is_err() {
                continue;
            }
            if let Ok(Line::Spec(spec)) = Line::parse(line.trim_end()) {
                out.insert(spec.krate);
            }
        }
        out
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
        .map(|t| {
            t.duration_since(std::time::UNIX_EPOCH)
                .unwrap_or_default()
                .as_millis() as u64
        })
        .unwrap_or(0)
}
