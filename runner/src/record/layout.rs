//! Where the store lives and how its files and run ids are named; shared by the writer
//! in test processes and the reader in the plugin, so both agree by construction.
//!
//! ```text
//! <dir>/heddle/runs/<run id>/<unix ms, 13 digits>-<pid>-<nonce, 16 hex>.jsonl
//! ```
//! `<dir>` is `HEDDLE_TARGET_DIR` when set, else the directory holding cargo's
//! `CACHEDIR.TAG` above the test executable: the target directory, or the build
//! directory when `build.build-dir` moves intermediate artifacts (test executables among
//! them) elsewhere.

use crate::time;
use std::collections::hash_map::RandomState;
use std::hash::{BuildHasher, Hasher};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::SystemTime;

/// Env var overriding the directory the store is put in.
pub const TARGET_DIR_VAR: &str = "HEDDLE_TARGET_DIR";
/// Env var giving the run id; `cargo heddle test` sets it so a whole invocation shares one.
pub const RUN_ID_VAR: &str = "HEDDLE_RUN_ID";
/// Env var nextest sets to its run id; used when [`RUN_ID_VAR`] is unset and no CI
/// pipeline names the run ([`pipeline_run_id`]).
pub const NEXTEST_RUN_ID_VAR: &str = "NEXTEST_RUN_ID";
/// Env var nextest sets to the attempt number of the test process (1, then 2, … under
/// `--retries`).
pub const NEXTEST_ATTEMPT_VAR: &str = "NEXTEST_ATTEMPT";
/// CI services' pipeline ids, in the order they are tried, with the prefix each run id
/// gets: every job (shard) of one pipeline records under one run id, so the stores of a
/// pipeline's jobs merge into one run by default. GitHub Actions' run id is joined with
/// `GITHUB_RUN_ATTEMPT` (a re-run of the workflow is a run of its own).
///
/// | service | variables | run id |
/// |---|---|---|
/// | GitHub Actions | `GITHUB_RUN_ID`, `GITHUB_RUN_ATTEMPT` | `gha-<id>-<attempt>` |
/// | GitLab CI | `CI_PIPELINE_ID` | `gitlab-<id>` |
/// | Buildkite | `BUILDKITE_BUILD_ID` | `buildkite-<id>` |
/// | CircleCI | `CIRCLE_WORKFLOW_ID` | `circleci-<id>` |
pub const PIPELINE_VARS: &[(&str, &str)] = &[
    ("GITHUB_RUN_ID", "gha"),
    ("CI_PIPELINE_ID", "gitlab"),
    ("BUILDKITE_BUILD_ID", "buildkite"),
    ("CIRCLE_WORKFLOW_ID", "circleci"),
];

/// The run id of the CI pipeline this process runs in (see [`PIPELINE_VARS`]), from an
/// env lookup; `None` outside a known CI service or when its value cannot name a run.
pub fn pipeline_run_id(var: &dyn Fn(&str) -> Option<String>) -> Option<String> {
    let get = |name: &str| var(name).filter(|v| !v.is_empty());
    PIPELINE_VARS.iter().find_map(|(name, prefix)| {
        let id = get(name)?;
        let id = if *name == "GITHUB_RUN_ID" {
            format!(
                "{prefix}-{id}-{}",
                get("GITHUB_RUN_ATTEMPT").unwrap_or_else(|| "1".into())
            )
        } else {
            format!("{prefix}-{id}")
        };
        validate_run_id(&id).is_ok().then_some(id)
    })
}

/// Name of the store directory inside the target (or build) directory.
pub const STORE_DIR: &str = "heddle";
/// Name of the directory holding one directory per run inside the store.
pub const RUNS_DIR: &str = "runs";
/// Extension of store files.
pub const FILE_EXTENSION: &str = "jsonl";
/// The marker cargo writes at the top of every target and build directory.
pub const CACHEDIR_TAG: &str = "CACHEDIR.TAG";
/// Longest run id accepted.
pub const MAX_RUN_ID_LEN: usize = 128;

/// The store directory inside a target (or build) directory.
pub fn store_root(target_dir: &Path) -> PathBuf {
    target_dir.join(STORE_DIR)
}

/// The store a record file lies in: a store holds `runs/<run id>/<file>`.
pub fn store_of_file(file: &Path) -> Option<&Path> {
    file.ancestors().nth(3)
}

/// The directory cargo built `exe` in: the nearest ancestor holding `CACHEDIR.TAG`. No
/// fixed depth is assumed, so `CARGO_TARGET_DIR`, target triples, custom profiles and a
/// build directory all work.
pub fn find_build_dir(exe: &Path) -> Option<PathBuf> {
    exe.ancestors()
        .skip(1)
        .find(|dir| dir.join(CACHEDIR_TAG).is_file())
        .map(Path::to_path_buf)
}

/// Why a run id is refused.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RunIdError {
    /// The refused value.
    pub value: String,
    /// What is wrong with it.
    pub reason: &'static str,
}

impl RunIdError {
    /// What is wrong, without the hint (for front ends that print the hint apart).
    pub fn message(&self) -> String {
        format!("invalid run id `{}`: {}", self.value.escape_debug(), self.reason)
    }

    /// What a valid run id looks like.
    pub fn hint(&self) -> String {
        format!(
            "use ASCII letters, digits, `.`, `_` and `-`, starting with a letter or digit, \
             at most {MAX_RUN_ID_LEN} characters"
        )
    }
}

/// The one-line shape of the runtime's warnings: `message; hint: hint`.
impl std::fmt::Display for RunIdError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}; hint: {}", self.message(), self.hint())
    }
}

impl std::error::Error for RunIdError {}

/// Checks a run id can name a directory on every platform: no separators, no `..`, no
/// hidden or option-like names.
pub fn validate_run_id(id: &str) -> Result<(), RunIdError> {
    let fail = |reason| {
        Err(RunIdError {
            value: id.to_string(),
            reason,
        })
    };
    if id.is_empty() {
        return fail("it is empty");
    }
    if id.len() > MAX_RUN_ID_LEN {
        return fail("it is too long");
    }
    if !id
        .chars()
        .all(|c| c.is_ascii_alphanumeric() || matches!(c, '.' | '_' | '-'))
    {
        return fail("it holds a character other than a letter, digit, `.`, `_` or `-`");
    }
    if !id.starts_with(|c: char| c.is_ascii_alphanumeric()) {
        return fail("it does not start with a letter or digit");
    }
    Ok(())
}

/// A fresh run id: UTC time (so ids sort by start) and a random suffix, for example
/// `20250102T030405Z-3fa2c1d08e41b7aa`.
pub fn new_run_id() -> String {
    format!("{}-{:016x}", time::compact(SystemTime::now()), nonce())
}

/// 64 bits unlikely to repeat across processes: std's per-process random hash keys over
/// the time, the pid and a counter.
pub(crate) fn nonce() -> u64 {
    static COUNTER: AtomicU64 = AtomicU64::new(0);
    let mut h = RandomState::new().build_hasher();
    h.write_u128(time::since_epoch(SystemTime::now()).as_nanos());
    h.write_u32(std::process::id());
    h.write_u64(COUNTER.fetch_add(1, Ordering::Relaxed));
    h.finish()
}

/// File name of one process's records.
pub fn process_file_name(unix_ms: u64, pid: u32, nonce: u64) -> String {
    format!("{unix_ms:013}-{pid}-{nonce:016x}.{FILE_EXTENSION}")
}

/// The creation time (Unix ms) a process file's name carries.
pub fn file_stamp(name: &str) -> Option<u64> {
    let stem = name.strip_suffix(FILE_EXTENSION)?.strip_suffix('.')?;
    let ms = stem.split('-').next()?;
    if ms.is_empty() || !ms.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    ms.parse().ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_record_file_names_its_store() {
        let root = Path::new("target").join(STORE_DIR);
        let file = root.join(RUNS_DIR).join("r1").join(process_file_name(1, 2, 3));
        assert_eq!(store_of_file(&file), Some(root.as_path()));
        assert_eq!(store_of_file(Path::new("a.jsonl")), None);
    }

    #[test]
    fn run_ids_that_could_escape_or_confuse_are_refused() {
        for bad in [
            "",
            "a/b",
            "a\\b",
            "..",
            ".hidden",
            "-rf",
            "a b",
            "ü",
            "a:b",
            &"x".repeat(129),
        ] {
            assert!(validate_run_id(bad).is_err(), "{bad:?}");
        }
        for good in [
            "1",
            "ci-42.3_a",
            "5b2b9a8e-3b4e-4a47-9c7e-0d4c8d3c2f11",
            &"x".repeat(128),
        ] {
            assert_eq!(validate_run_id(good), Ok(()), "{good:?}");
        }
    }

    #[test]
    fn pipeline_ids_name_one_run_per_pipeline() {
        let env = |pairs: &'static [(&'static str, &'static str)]| {
            move |name: &str| pairs.iter().find(|(k, _)| *k == name).map(|(_, v)| v.to_string())
        };
        let gh = env(&[("GITHUB_RUN_ID", "1234"), ("GITHUB_RUN_ATTEMPT", "2")]);
        assert_eq!(pipeline_run_id(&gh).as_deref(), Some("gha-1234-2"));
        let gh1 = env(&[("GITHUB_RUN_ID", "1234")]);
        assert_eq!(pipeline_run_id(&gh1).as_deref(), Some("gha-1234-1"));
        let gl = env(&[("CI_PIPELINE_ID", "99"), ("CI", "true")]);
        assert_eq!(pipeline_run_id(&gl).as_deref(), Some("gitlab-99"));
        assert_eq!(pipeline_run_id(&env(&[("CI", "true")])), None);
        assert_eq!(pipeline_run_id(&env(&[("CI_PIPELINE_ID", "a/b")])), None);
        assert_eq!(pipeline_run_id(&env(&[("CI_PIPELINE_ID", "")])), None);
    }

    #[test]
    fn generated_run_ids_are_valid_and_distinct() {
        let a = new_run_id();
        let b = new_run_id();
        assert_eq!(validate_run_id(&a), Ok(()));
        assert_ne!(a, b);
        assert_eq!(a.len(), "20250102T030405Z-".len() + 16);
    }

    #[test]
    fn file_names_carry_their_stamp() {
        let name = process_file_name(1_700_000_000_123, 42, 0xabc);
        assert_eq!(name, "1700000000123-42-0000000000000abc.jsonl");
        assert_eq!(file_stamp(&name), Some(1_700_000_000_123));
        assert_eq!(file_stamp("x-1.jsonl"), None);
        assert_eq!(file_stamp("1-2-3.json"), None);
    }

    #[test]
    fn build_dir_is_the_nearest_cachedir_tag_ancestor() {
        let tmp = tempfile::tempdir().unwrap();
        let top = tmp.path().join("custom");
        let deep = top.join("x/y/z");
        std::fs::create_dir_all(&deep).unwrap();
        assert_eq!(find_build_dir(&deep.join("exe")), None);
        std::fs::write(
            top.join(CACHEDIR_TAG),
            "Signature: 8a477f597d28d172789f06886806bc55",
        )
        .unwrap();
        assert_eq!(find_build_dir(&deep.join("exe")), Some(top.clone()));
        std::fs::write(top.join("x").join(CACHEDIR_TAG), "").unwrap();
        assert_eq!(find_build_dir(&deep.join("exe")), Some(top.join("x")));
    }

    #[test]
    fn this_test_executable_finds_its_target_dir() {
        let exe = std::env::current_exe().unwrap();
        let dir = find_build_dir(&exe).expect("cargo writes CACHEDIR.TAG in its target dir");
        assert!(exe.starts_with(&dir));
        assert!(dir.join(CACHEDIR_TAG).is_file());
    }
}
