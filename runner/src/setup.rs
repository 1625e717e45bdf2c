//! Decides, once per test process, where its records go and under which run id, from
//! the environment and the test executable's path.

use crate::record::layout::{self, NEXTEST_RUN_ID_VAR, RUN_ID_VAR, TARGET_DIR_VAR};
use std::ffi::OsString;
use std::io;
use std::path::PathBuf;

/// Where one process records.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Config {
    /// The store root (`…/heddle`).
    pub(crate) store: PathBuf,
    /// The run id its records carry.
    pub(crate) run_id: String,
    /// nextest's attempt number for this process (nextest runs one test per process).
    pub(crate) attempt: Option<u32>,
    /// Which build of the test executable this process is ([`build_id`]).
    pub(crate) build: Option<String>,
}

/// Why a process cannot record. Printed as a one-line warning; never fails a test.
#[derive(Debug)]
pub(crate) enum SetupError {
    /// `HEDDLE_TARGET_DIR` names something that is not a directory and cannot be made one.
    TargetDir { path: PathBuf, reason: io::Error },
    /// A run id env var holds a value that cannot name a run directory.
    RunId {
        var: &'static str,
        error: layout::RunIdError,
    },
    /// An env var is not valid Unicode.
    NotUnicode { var: &'static str },
    /// No ancestor of the test executable holds cargo's `CACHEDIR.TAG`.
    NoBuildDir { exe: PathBuf },
    /// The test executable's path is unknown.
    NoExecutable { reason: io::Error },
    /// The store directory or file cannot be created or written.
    Unwritable { path: PathBuf, reason: io::Error },
}

impl std::fmt::Display for SetupError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SetupError::TargetDir { path, reason } => write!(
                f,
                "`{TARGET_DIR_VAR}` is not a usable directory: `{}` ({reason}); \
                 hint: point it at a directory heddle may create, or unset it",
                path.display()
            ),
            SetupError::RunId { var, error } => write!(f, "`{var}`: {error}"),
            SetupError::NotUnicode { var } => write!(
                f,
                "`{var}` is not valid unicode; hint: set it to ASCII letters, digits, `.`, `_` and `-`"
            ),
            SetupError::NoBuildDir { exe } => write!(
                f,
                "no directory holding `{}` above the test executable `{}`; hint: set `{TARGET_DIR_VAR}`",
                layout::CACHEDIR_TAG,
                exe.display()
            ),
            SetupError::NoExecutable { reason } => write!(
                f,
                "cannot tell where the test executable is ({reason}); hint: set `{TARGET_DIR_VAR}`"
            ),
            SetupError::Unwritable { path, reason } => write!(
                f,
                "cannot write `{}` ({reason}); hint: check permissions and free space, or set `{TARGET_DIR_VAR}`",
                path.display()
            ),
        }
    }
}

/// An env var's value; empty means unset.
fn non_empty(var: &dyn Fn(&str) -> Option<OsString>, name: &str) -> Option<OsString> {
    var(name).filter(|v| !v.is_empty())
}

/// The run id: `HEDDLE_RUN_ID` (set explicitly, e.g. by `cargo heddle test`), else the
/// CI pipeline's (so the shards of one pipeline are one run), else nextest's, else a
/// fresh one for this process.
pub(crate) fn run_id(var: &dyn Fn(&str) -> Option<OsString>) -> Result<String, SetupError> {
    let names: &[&'static str] = &[RUN_ID_VAR, NEXTEST_RUN_ID_VAR];
    for (i, &name) in names.iter().enumerate() {
        if i == 1
            && let Some(id) = layout::pipeline_run_id(&|n| var(n).and_then(|v| v.into_string().ok()))
        {
            return Ok(id);
        }
        if let Some(value) = non_empty(var, name) {
            let value = value
                .into_string()
                .map_err(|_| SetupError::NotUnicode { var: name })?;
            layout::validate_run_id(&value).map_err(|error| SetupError::RunId { var: name, error })?;
            return Ok(value);
        }
    }
    Ok(layout::new_run_id())
}

/// nextest's attempt number (`NEXTEST_ATTEMPT`, 1-based), when running under nextest.
/// nextest owns the variable, so a value it would never set is passed over, not an error.
pub(crate) fn attempt(var: &dyn Fn(&str) -> Option<OsString>) -> Option<u32> {
    non_empty(var, layout::NEXTEST_ATTEMPT_VAR)?
        .to_str()?
        .parse()
        .ok()
        .filter(|&n| n >= 1)
}

/// Names one build of the test executable: its size and modification time, which a
/// rebuild (a change to the code under test, the test or a dependency) changes, and
/// which every process started from that executable shares. Reading the metadata costs
/// one `stat`, where hashing the contents would cost every nextest process a read of
/// the whole executable. `None` when the metadata cannot be read: such rows are one
/// build of unknown identity, as rows written before the field existed.
pub(crate) fn build_id(exe: &std::path::Path) -> Option<String> {
    let meta = std::fs::metadata(exe).ok()?;
    let modified = meta.modified().ok()?;
    let since = modified.duration_since(std::time::UNIX_EPOCH).ok()?;
    Some(format!("{:x}-{:x}", meta.len(), since.as_nanos()))
}

/// Resolves the store and run id from an env lookup and the executable's path.
pub(crate) fn resolve(
    var: &dyn Fn(&str) -> Option<OsString>,
    exe: &dyn Fn() -> io::Result<PathBuf>,
) -> Result<Config, SetupError> {
    let run_id = run_id(var)?;
    let exe_path = exe();
    let build = exe_path.as_deref().ok().and_then(build_id);
    let dir = match non_empty(var, TARGET_DIR_VAR) {
        Some(path) => {
            let path = PathBuf::from(path);
            if !path.is_dir() {
                std::fs::create_dir_all(&path).map_err(|reason| SetupError::TargetDir {
                    path: path.clone(),
                    reason,
                })?;
            }
            path
        }
        None => {
            let exe = exe_path.map_err(|reason| SetupError::NoExecutable { reason })?;
            layout::find_build_dir(&exe).ok_or(SetupError::NoBuildDir { exe })?
        }
    };
    Ok(Config {
        store: layout::store_root(&dir),
        run_id,
        attempt: attempt(var),
        build,
    })
}

/// [`resolve`] against this process's environment.
pub(crate) fn from_process() -> Result<Config, SetupError> {
    resolve(&|name| std::env::var_os(name), &std::env::current_exe)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeMap;

    fn env(pairs: &[(&str, &str)]) -> impl Fn(&str) -> Option<OsString> + use<> {
        let map: BTreeMap<String, OsString> = pairs
            .iter()
            .map(|(k, v)| (k.to_string(), OsString::from(v)))
            .collect();
        move |name| map.get(name).cloned()
    }

    fn no_exe() -> io::Result<PathBuf> {
        Err(io::Error::other("not asked for"))
    }

    #[test]
    fn run_id_precedence_is_heddle_then_nextest_then_fresh() {
        let both = env(&[(NEXTEST_RUN_ID_VAR, "nx-1"), (RUN_ID_VAR, "hd-1")]);
        assert_eq!(run_id(&both).unwrap(), "hd-1");
        let empty_heddle = env(&[(NEXTEST_RUN_ID_VAR, "nx-1"), (RUN_ID_VAR, "")]);
        assert_eq!(run_id(&empty_heddle).unwrap(), "nx-1");
        // a CI pipeline's id comes before nextest's: the shards of a pipeline are one run
        let shard = env(&[(NEXTEST_RUN_ID_VAR, "nx-1"), ("CI_PIPELINE_ID", "42")]);
        assert_eq!(run_id(&shard).unwrap(), "gitlab-42");
        let explicit = env(&[(RUN_ID_VAR, "hd-1"), ("CI_PIPELINE_ID", "42")]);
        assert_eq!(run_id(&explicit).unwrap(), "hd-1");
        let none = env(&[(RUN_ID_VAR, "")]);
        let fresh = run_id(&none).unwrap();
        assert!(layout::validate_run_id(&fresh).is_ok());
        assert_ne!(fresh, run_id(&none).unwrap());
    }

    #[test]
    fn the_attempt_comes_from_nextest() {
        assert_eq!(attempt(&env(&[(layout::NEXTEST_ATTEMPT_VAR, "2")])), Some(2));
        for v in ["", "0", "x", "-1"] {
            assert_eq!(attempt(&env(&[(layout::NEXTEST_ATTEMPT_VAR, v)])), None, "{v:?}");
        }
        assert_eq!(attempt(&env(&[])), None);
    }

    #[test]
    fn invalid_run_ids_are_named_errors() {
        let bad = env(&[(RUN_ID_VAR, "../escape")]);
        let err = run_id(&bad).unwrap_err();
        assert!(matches!(err, SetupError::RunId { var: RUN_ID_VAR, .. }));
        let text = err.to_string();
        assert!(
            text.starts_with("`HEDDLE_RUN_ID`: invalid run id `../escape`"),
            "{text}"
        );
        assert!(text.contains("hint:"));
        assert!(!text.ends_with('.'));
    }

    #[test]
    fn target_dir_override_is_created_or_refused() {
        let tmp = tempfile::tempdir().unwrap();
        let fresh = tmp.path().join("made/here");
        let e = env(&[(TARGET_DIR_VAR, fresh.to_str().unwrap()), (RUN_ID_VAR, "r")]);
        let cfg = resolve(&e, &no_exe).unwrap();
        assert_eq!(cfg.store, fresh.join("heddle"));
        assert!(fresh.is_dir());

        let file = tmp.path().join("a-file");
        std::fs::write(&file, "x").unwrap();
        let e = env(&[(TARGET_DIR_VAR, file.to_str().unwrap())]);
        let err = resolve(&e, &no_exe).unwrap_err();
        assert!(matches!(err, SetupError::TargetDir { .. }), "{err:?}");
        assert!(
            err.to_string()
                .starts_with("`HEDDLE_TARGET_DIR` is not a usable directory")
        );
    }

    #[test]
    fn a_rebuilt_executable_is_another_build() {
        let tmp = tempfile::tempdir().unwrap();
        let exe = tmp.path().join("t-0123");
        std::fs::write(&exe, "first build").unwrap();
        let first = build_id(&exe).expect("metadata of a file is readable");
        assert_eq!(build_id(&exe).as_ref(), Some(&first), "one build, one name");
        // the same size written again, later: cargo relinking after a change
        let f = std::fs::File::options().write(true).open(&exe).unwrap();
        let later = std::fs::metadata(&exe).unwrap().modified().unwrap() + std::time::Duration::from_secs(5);
        f.set_modified(later).unwrap();
        assert_ne!(build_id(&exe), Some(first.clone()));
        std::fs::write(&exe, "a longer second build").unwrap();
        assert_ne!(build_id(&exe), Some(first));
        assert_eq!(build_id(&tmp.path().join("gone")), None);
        let e = env(&[(RUN_ID_VAR, "r")]);
        let path = exe.clone();
        let found = move || Ok(path.clone());
        std::fs::write(tmp.path().join(layout::CACHEDIR_TAG), "").unwrap();
        assert_eq!(resolve(&e, &found).unwrap().build, build_id(&exe));
    }

    #[test]
    fn empty_target_dir_means_search_from_the_executable() {
        let tmp = tempfile::tempdir().unwrap();
        let build = tmp.path().join("elsewhere");
        std::fs::create_dir_all(build.join("p/deps")).unwrap();
        std::fs::write(build.join(layout::CACHEDIR_TAG), "").unwrap();
        let exe_path = build.join("p/deps/t-0123");
        let exe = move || Ok(exe_path.clone());
        let e = env(&[(TARGET_DIR_VAR, ""), (RUN_ID_VAR, "r")]);
        assert_eq!(resolve(&e, &exe).unwrap().store, build.join("heddle"));

        let lost = tmp.path().join("nowhere/t");
        let exe = move || Ok(lost.clone());
        assert!(matches!(resolve(&e, &exe), Err(SetupError::NoBuildDir { .. })));
    }
}
