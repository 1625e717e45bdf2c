//! Joining row lines to the spec lines of their suite, across every file of the runs
//! read: a row whose process lost its spec line is still placed when another process
//! wrote the same spec.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use heddle_test::record::layout;
use heddle_test::record::{Outcome, RowRecord, SpecRecord, StartRecord, SuiteKey};

use crate::discover::RunInfo;
use crate::notes::ReadStats;
use crate::read::Partial;

/// The records of one suite (one annotated function at one spec fingerprint).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SuiteRecords {
    /// Its spec (the first spec line read for it).
    pub spec: SpecRecord,
    /// Its row records, in run order, then file order, then line order; a row's
    /// executions in earlier runs by another build than its latest are left out. A
    /// nextest execution that did not finish is here as a failed record.
    pub rows: Vec<RowRecord>,
    /// Executions that started and did not finish in a process that ran several rows
    /// (plain `cargo test`), in run and file order: not outcomes, since any row in flight
    /// may have ended the process (see the `unfinished` module).
    pub unfinished: Vec<StartRecord>,
}

impl SuiteRecords {
    /// `(row index, outcome)` of every row record, as [`crate::tally()`] takes them.
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

/// Merges the partial reads (in file order) into suites.
pub(crate) fn join(runs: Vec<RunInfo>, partials: Vec<Partial>) -> Records {
    let mut stats = ReadStats {
        duplicate_files: runs.iter().map(|r| r.duplicate_files).sum(),
        ..ReadStats::default()
    };
    // every distinct content seen per key, the first one (in file order) kept
    let mut variants: BTreeMap<SuiteKey, Vec<SpecRecord>> = BTreeMap::new();
    let mut rows: Vec<RowRecord> = Vec::new();
    let mut unfinished: Vec<StartRecord> = Vec::new();
    // the store root each row was read from, by index into `roots`
    let mut roots: Vec<PathBuf> = Vec::new();
    let mut row_roots: Vec<usize> = Vec::new();
    for part in partials {
        for (n, file) in &part.row_files {
            let root = store_root_of(file);
            let at = roots.iter().position(|r| *r == root).unwrap_or_else(|| {
                roots.push(root);
                roots.len() - 1
            });
            row_roots.extend(std::iter::repeat_n(at, *n));
        }
        stats.absorb(part.stats);
        for spec in part.specs {
            let known = variants.entry(spec.key()).or_default();
            if let Some(same) = known.iter_mut().find(|k| k.same_spec(&spec)) {
                // runs of one spec under different row budgets: the merge ran what the
                // widest allowed
                same.budget = SpecRecord::wider_budget(same.budget, spec.budget);
                // a later round of follow-up rows continues an earlier one: keep the
                // longer, so the rows of both place
                if spec.extends(same) {
                    same.rows = spec.rows;
                    same.row_names = spec.row_names;
                    same.followups = spec.followups;
                } else if !same.extends(&spec) {
                    stats.conflicting_specs += 1;
                }
            } else {
                if !known.is_empty() {
                    stats.conflicting_specs += 1;
                }
                known.push(spec);
            }
        }
        rows.extend(part.rows);
        unfinished.extend(part.unfinished);
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
                unfinished: Vec::new(),
            })
        })
        .collect();
    let mut suite_roots: Vec<Vec<usize>> = vec![Vec::new(); suites.len()];
    let mut last: Option<usize> = None;
    for (row, root) in rows.into_iter().zip(row_roots) {
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
        if !labels_match(&suites[i].spec, row.row, &row.labels) {
            stats.mismatched_rows += 1;
            continue;
        }
        stats.row_lines += 1;
        suites[i].rows.push(row);
        suite_roots[i].push(root);
    }
    for start in unfinished {
        let key = start.key();
        match suites.binary_search_by(|s| s.spec.key_cmp(&key)) {
            Ok(i) if labels_match(&suites[i].spec, start.row, &start.labels) => {
                suites[i].unfinished.push(start)
            }
            Ok(_) => stats.mismatched_rows += 1,
            Err(_) => stats.orphan_rows += 1,
        }
    }
    for (suite, roots) in suites.iter_mut().zip(&mut suite_roots) {
        let left_out = keep_latest_builds(&mut suite.rows, roots);
        stats.superseded_rows += left_out;
        stats.row_lines -= left_out;
        stats.earlier_build_rows += earlier_build_rows(&suite.rows, roots);
        stats.unfinished_attempts += crate::attempts::fill_unfinished(&mut suite.rows);
    }
    let suites = latest_specs(suites, &runs, &mut stats);
    Records { runs, suites, stats }
}

/// Keeps, of the suites of one function (crate, target and path alike) recorded under
/// several spec fingerprints, the one recorded last: a changed spec makes other rows, and
/// the verdicts of the old ones describe a test the code no longer has. "Last" is the
/// latest run holding a row (or, without rows, the spec line) of it; specs last recorded
/// in the same run all stay, as nothing tells which is current.
fn latest_specs(suites: Vec<SuiteRecords>, runs: &[RunInfo], stats: &mut ReadStats) -> Vec<SuiteRecords> {
    let order: BTreeMap<&str, usize> = runs.iter().enumerate().map(|(i, r)| (r.id.as_str(), i)).collect();
    let at = |run: &str| order.get(run).copied().unwrap_or(0);
    let last = |s: &SuiteRecords| {
        s.rows
            .iter()
            .map(|r| at(&r.run))
            .max()
            .unwrap_or_else(|| at(&s.spec.run))
    };
    let function = |s: &SuiteRecords| (s.spec.krate.clone(), s.spec.target.clone(), s.spec.suite.clone());
    let mut newest: BTreeMap<(String, String, String), usize> = BTreeMap::new();
    for s in &suites {
        let n = newest.entry(function(s)).or_default();
        *n = (*n).max(last(s));
    }
    let mut kept = Vec::with_capacity(suites.len());
    for s in suites {
        if last(&s) < newest[&function(&s)] {
            stats.superseded_specs.push(s.spec.suite.clone());
            stats.superseded_spec_rows += s.rows.len();
            stats.row_lines -= s.rows.len();
        } else {
            kept.push(s);
        }
    }
    kept
}

/// Lets each row's latest build decide its outcome: the executions of a row in earlier
/// runs by another build of the test executable, in the same store, are left out, since
/// the code changed in between (a row that failed, was fixed and passed is not flaky).
/// Executions in the row's latest run all stay whatever their build (shards of one run
/// built on several machines), and so do earlier runs of the same build (history across
/// runs of unchanged code, which is what shows a flake) and runs read from other stores
/// (jobs of a CI matrix, copied and merged: another machine's build is no later version
/// of this one, and a failure there must not be hidden). Rows come in run order, so the
/// last is the latest; `roots` holds the store of each. Returns how many executions were
/// left out.
fn keep_latest_builds(rows: &mut Vec<RowRecord>, roots: &mut Vec<usize>) -> usize {
    let latest = last_executions(rows, roots);
    let keep: Vec<bool> = rows
        .iter()
        .zip(roots.iter())
        .map(|(r, &root)| {
            latest.get(&r.row).is_none_or(|&(run, build, store)| {
                r.run == run || r.build.as_deref() == build || root != store
            })
        })
        .collect();
    let before = rows.len();
    let mut flags = keep.iter();
    rows.retain(|_| flags.next().copied().unwrap_or(true));
    let mut flags = keep.iter();
    roots.retain(|_| flags.next().copied().unwrap_or(true));
    before - rows.len()
}

/// How many rows last ran, in the same store, in an earlier run by a build that the
/// latest run did not use: when a rebuilt test ran only some rows (a one-row rerun after
/// a fix), the other rows' outcomes in a merged report come from code that may have
/// changed since, which the report says in a note. Rows read from another store (a CI
/// job's, merged) and rows of unknown build are not counted: nothing says they are older
/// code.
fn earlier_build_rows(rows: &[RowRecord], roots: &[usize]) -> usize {
    let Some(latest) = rows.last().map(|r| r.run.as_str()) else {
        return 0;
    };
    let latest_builds: Vec<(usize, &str)> = rows
        .iter()
        .zip(roots)
        .filter(|(r, _)| r.run == latest)
        .filter_map(|(r, &root)| Some((root, r.build.as_deref()?)))
        .collect();
    let Some(&(latest_root, _)) = latest_builds.first() else {
        return 0;
    };
    last_executions(rows, roots)
        .values()
        .filter(|&&(run, build, root)| {
            run != latest && root == latest_root && build.is_some_and(|b| !latest_builds.contains(&(root, b)))
        })
        .count()
}

/// Each row's last execution (rows come in run order): its run, build and store root.
fn last_executions<'r>(
    rows: &'r [RowRecord],
    roots: &[usize],
) -> BTreeMap<u32, (&'r str, Option<&'r str>, usize)> {
    rows.iter()
        .zip(roots)
        .map(|(r, &root)| (r.row, (r.run.as_str(), r.build.as_deref(), root)))
        .collect()
}

/// The store root a record file lies in, as the store's layout places it.
fn store_root_of(file: &Path) -> PathBuf {
    layout::store_of_file(file).unwrap_or(file).to_path_buf()
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

/// Whether a row's index and labels (of a row or start line) agree with its spec.
fn labels_match(spec: &SpecRecord, row: u32, labels: &[String]) -> bool {
    let Some(levels) = spec.rows.get(row as usize) else {
        return false;
    };
    levels.len() == labels.len()
        && levels
            .iter()
            .zip(&spec.factors)
            .zip(labels)
            .all(|((&lv, f), label)| f.labels.get(lv as usize) == Some(label))
}
