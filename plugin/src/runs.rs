//! `cargo heddle runs`: the runs in the store, and pruning them. Every plain `cargo test`
//! adds a run, so the store grows without end unless something removes old ones:
//! `cargo heddle test` prunes after each run to a retention (`HEDDLE_KEEP_RUNS`, default
//! [`DEFAULT_KEEP`] runs per package; `0` keeps everything), and `runs prune` does it by
//! hand.
//!
//! A run is kept while it is among the newest N runs of any package it recorded, so in a
//! target directory shared by several projects one busy project never prunes another's
//! history away.

use std::collections::{BTreeMap, BTreeSet};
use std::path::PathBuf;
use std::process::ExitCode;
use std::time::{Duration, SystemTime};

use clap::{Args, Subcommand};
use heddle_store::{RunInfo, Store};
use heddle_test::record::layout::RUNS_DIR;

use crate::failure::{Diagnostic, Failure, found, usage};
use crate::report::{self, ReportArgs};
use crate::workspace::Selection;

/// Runs kept per package when neither `--keep` nor `HEDDLE_KEEP_RUNS` says otherwise.
pub const DEFAULT_KEEP: usize = 50;
/// Env var with the retention `cargo heddle test` prunes to (`0`: never prune).
pub const KEEP_VAR: &str = "HEDDLE_KEEP_RUNS";

/// Arguments of `runs`.
#[derive(Args, Debug)]
pub struct RunsArgs {
    /// Which packages (and so which target directory) to read.
    #[command(flatten)]
    pub selection: Selection,
    /// Read the stores found under DIR instead of the project's (repeatable).
    #[arg(long, value_name = "DIR", global = true)]
    pub store: Vec<PathBuf>,
    /// `list` (the default) or `prune`.
    #[command(subcommand)]
    pub action: Option<Action>,
}

/// What `runs` does.
#[derive(Subcommand, Debug)]
pub enum Action {
    /// List the runs, newest first (the default).
    List,
    /// Remove old runs: keep the newest N of each package.
    Prune(PruneArgs),
}

/// Arguments of `runs prune`.
#[derive(Args, Debug)]
pub struct PruneArgs {
    /// Runs to keep per package (default: `HEDDLE_KEEP_RUNS`, else 50).
    #[arg(long, value_name = "N")]
    pub keep: Option<usize>,
    /// Also remove kept runs that started more than DAYS days ago.
    #[arg(long, value_name = "DAYS")]
    pub older_than: Option<u64>,
    /// Say what would be removed, remove nothing.
    #[arg(long)]
    pub dry_run: bool,
}

/// `HEDDLE_KEEP_RUNS`: `None` when unset or empty; an invalid value is a named error.
pub fn keep_from_env() -> Result<Option<usize>, Failure> {
    match std::env::var(KEEP_VAR) {
        Ok(v) if !v.is_empty() => v.parse().map(Some).map_err(|_| {
            usage(
                Diagnostic::new(format!("`{KEEP_VAR}` is `{v}`, not a count of runs")).hint(format!(
                    "set it to a number such as `{DEFAULT_KEEP}`, or `0` to keep every run"
                )),
            )
        }),
        _ => Ok(None),
    }
}

/// Each run with the packages it recorded, newest first.
fn runs_with_packages(store: &Store) -> Result<Vec<(RunInfo, BTreeSet<String>)>, Failure> {
    let mut runs: Vec<(RunInfo, BTreeSet<String>)> = store
        .runs()
        .map_err(|e| usage(e.diagnostic()))?
        .into_iter()
        .map(|r| {
            let p = store.packages(&r);
            (r, p)
        })
        .collect();
    runs.reverse();
    Ok(runs)
}

/// The runs to remove: not among the newest `keep` of any of their packages, or older
/// than `older_than` (`keep` 0: none by count).
pub fn to_prune(
    runs: &[(RunInfo, BTreeSet<String>)],
    keep: usize,
    older_than: Option<Duration>,
    now_ms: u64,
) -> Vec<RunInfo> {
    let mut seen: BTreeMap<&str, usize> = BTreeMap::new();
    let mut out = Vec::new();
    for (run, packages) in runs {
        // a run whose files name no package is a group of its own
        let groups: Vec<&str> = if packages.is_empty() {
            vec![""]
        } else {
            packages.iter().map(String::as_str).collect()
        };
        let mut kept = keep == 0;
        for g in groups {
            let n = seen.entry(g).or_default();
            *n += 1;
            kept |= *n <= keep;
        }
        let too_old =
            older_than.is_some_and(|age| now_ms.saturating_sub(run.started_ms) > age.as_millis() as u64);
        if !kept || too_old {
            out.push(run.clone());
        }
    }
    out
}

/// Removes runs' directories in every store root; returns how many directories went.
fn remove(store: &Store, runs: &[RunInfo]) -> Result<usize, Failure> {
    let mut removed = 0;
    for run in runs {
        for root in store.roots() {
            let dir = root.join(RUNS_DIR).join(&run.id);
            if dir.is_dir() {
                std::fs::remove_dir_all(&dir).map_err(|e| {
                    found(
                        Diagnostic::new(format!("cannot remove `{}`: {e}", dir.display()))
                            .hint("check the directory's permissions"),
                    )
                })?;
                removed += 1;
            }
        }
    }
    Ok(removed)
}

fn now_ms() -> u64 {
    SystemTime::now()
        .duration_since(SystemTime::UNIX_EPOCH)
        .map_or(0, |d| d.as_millis() as u64)
}

fn age(ms: u64, now: u64) -> String {
    let s = now.saturating_sub(ms) / 1000;
    match s {
        0..60 => format!("{s} s ago"),
        60..3600 => format!("{} min ago", s / 60),
        3600..86_400 => format!("{} h ago", s / 3600),
        _ => format!("{} days ago", s / 86_400),
    }
}

/// Prunes the store after `cargo heddle test`, to `HEDDLE_KEEP_RUNS` (default
/// [`DEFAULT_KEEP`]); says on stderr what it removed.
pub fn prune_after_test(store: &Store) -> Result<(), Failure> {
    let keep = keep_from_env()?.unwrap_or(DEFAULT_KEEP);
    if keep == 0 {
        return Ok(());
    }
    let runs = runs_with_packages(store)?;
    let gone = to_prune(&runs, keep, None, now_ms());
    if !gone.is_empty() {
        remove(store, &gone)?;
        eprintln!(
            "heddle: removed {} old run{} (keeping {keep} per package; `{KEEP_VAR}` sets it, 0 keeps all)",
            gone.len(),
            if gone.len() == 1 { "" } else { "s" }
        );
    }
    Ok(())
}

/// Runs `runs`.
pub fn run(args: RunsArgs) -> Result<ExitCode, Failure> {
    let rargs = ReportArgs {
        selection: args.selection.clone(),
        run: "latest".into(),
        runs: None,
        all: false,
        format: report::Format::Table,
        store: args.store.clone(),
        confidence: 0.95,
        output: None,
        color: None,
        fail_on: Vec::new(),
    };
    let (store, _) = report::open_store(&rargs)?;
    let runs = runs_with_packages(&store)?;
    let now = now_ms();
    match args.action.unwrap_or(Action::List) {
        Action::List => {
            say!(
                "{} run{} in {}",
                runs.len(),
                if runs.len() == 1 { "" } else { "s" },
                roots(&store)
            );
            for (r, packages) in &runs {
                let names: Vec<&str> = packages.iter().map(String::as_str).collect();
                say!(
                    "{}  {}  {} file{}  {}",
                    r.id,
                    age(r.started_ms, now),
                    r.files.len(),
                    if r.files.len() == 1 { "" } else { "s" },
                    names.join(", ")
                );
            }
        }
        Action::Prune(p) => {
            let keep = match p.keep {
                Some(k) => k,
                None => keep_from_env()?.unwrap_or(DEFAULT_KEEP),
            };
            let older = p.older_than.map(|d| Duration::from_secs(d * 86_400));
            let gone = to_prune(&runs, keep, older, now);
            for r in &gone {
                say!("{} {}", if p.dry_run { "would remove" } else { "remove" }, r.id);
            }
            if !p.dry_run {
                remove(&store, &gone)?;
            }
            say!(
                "{} {} of {} runs, kept {}",
                if p.dry_run { "would remove" } else { "removed" },
                gone.len(),
                runs.len(),
                runs.len() - gone.len()
            );
        }
    }
    Ok(ExitCode::SUCCESS)
}

fn roots(store: &Store) -> String {
    let r: Vec<String> = store
        .roots()
        .iter()
        .map(|p| format!("`{}`", p.display()))
        .collect();
    r.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn run(id: &str, ms: u64, packages: &[&str]) -> (RunInfo, BTreeSet<String>) {
        (
            RunInfo {
                id: id.into(),
                started_ms: ms,
                files: Vec::new(),
                duplicate_files: 0,
            },
            packages.iter().map(|p| p.to_string()).collect(),
        )
    }

    #[test]
    fn keeps_the_newest_runs_of_each_package() {
        // newest first, as `runs_with_packages` gives them
        let runs = vec![
            run("a3", 600, &["a"]),
            run("a2", 500, &["a"]),
            run("b1", 400, &["b"]),
            run("a1", 300, &["a"]),
            run("ab", 200, &["a", "b"]),
            run("x", 100, &[]),
        ];
        let ids = |v: Vec<RunInfo>| v.into_iter().map(|r| r.id).collect::<Vec<_>>();
        // `ab` is the third of `a` but the second of `b`: kept at 2
        assert_eq!(ids(to_prune(&runs, 2, None, 700)), ["a1"]);
        assert_eq!(ids(to_prune(&runs, 1, None, 700)), ["a2", "a1", "ab"]);
        assert!(to_prune(&runs, 0, None, 700).is_empty());
        let day = Duration::from_secs(86_400);
        assert_eq!(
            ids(to_prune(&runs, 0, Some(day), 86_400_000 + 450)),
            ["b1", "a1", "ab", "x"]
        );
    }
}
