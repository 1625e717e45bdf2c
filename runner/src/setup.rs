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
/// CI pipeline's (so the shards of one pipeline are one run), else nextest's, else the
/// `cargo test` invocation's that started this process (`invocation`, so every test
/// binary of one `cargo test` is one run), else a fresh one for this process.
pub(crate) fn run_id(
    var: &dyn Fn(&str) -> Option<OsString>,
    invocation: &dyn Fn() -> Option<String>,
) -> Result<String, SetupError> {
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
    Ok(invocation()
        .filter(|id| layout::validate_run_id(id).is_ok())
        .unwrap_or_else(layout::new_run_id))
}

/// Names the cargo process that started this one, when it is one (its executable is the
/// `CARGO` cargo sets for the processes it runs): `cargo-<pid>-<start>-<boot>`, from the
/// parent's process id, its start time (clock ticks since boot) and the boot's id, so
/// two invocations never share a name, whatever pids get reused. Read from `proc` (Linux's
/// `/proc`); `None` where that is missing or the parent is not that cargo, and each
/// process then is a run of its own.
pub(crate) fn cargo_invocation(
    cargo: Option<&std::path::Path>,
    proc: &std::path::Path,
    parent: u32,
) -> Option<String> {
    let cargo = cargo.filter(|c| !c.as_os_str().is_empty())?;
    let dir = proc.join(parent.to_string());
    let exe = std::fs::read_link(dir.join("exe")).ok()?;
    let same = |a: &std::path::Path, b: &std::path::Path| {
        a == b || matches!((a.canonicalize(), b.canonicalize()), (Ok(x), Ok(y)) if x == y)
    };
    if !same(&exe, cargo) {
        return None;
    }
    // `pid (comm) state ppid …`: comm may hold spaces and parentheses, so fields are
    // counted after its last `)`; the start time is field 22, the 20th after it
    let stat = std::fs::read_to_string(dir.join("stat")).ok()?;
    let start = stat.rsplit_once(')')?.1.split_whitespace().nth(19)?;
    let boot = std::fs::read_to_string(proc.join("sys/kernel/random/boot_id")).ok()?;
    let boot: String = boot.chars().filter(char::is_ascii_hexdigit).take(16).collect();
    (start.bytes().all(|b| b.is_ascii_digit()) && !boot.is_empty())
        .then(|| format!("cargo-{parent}-{start}-{boot}"))
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
    invocation: &dyn Fn() -> Option<String>,
) -> Result<Config, SetupError> {
    let run_id = run_id(var, invocation)?;
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
    resolve(&|name| std::env::var_os(name), &std::env::current_exe, &|| {
        cargo_invocation(
            std::env::var_os("CARGO").as_deref().map(std::path::Path::new),
            std::path::Path::new("/proc"),
            parent_id()?,
        )
    })
}

/// The parent process's id, where the platform tells it.
fn parent_id() -> Option<u32> {
    #[cfg(unix)]
    return Some(std::os::unix::process::parent_id());
    #[cfg(not(unix))]
    return None;
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
        assert_eq!(run_id(&both, &|| None).unwrap(), "hd-1");
        let empty_heddle = env(&[(NEXTEST_RUN_ID_VAR, "nx-1"), (RUN_ID_VAR, "")]);
        assert_eq!(run_id(&empty_heddle, &|| None).unwrap(), "nx-1");
        // a CI pipeline's id comes before nextest's: the shards of a pipeline are one run
        let shard = env(&[(NEXTEST_RUN_ID_VAR, "nx-1"), ("CI_PIPELINE_ID", "42")]);
        assert_eq!(run_id(&shard, &|| None).unwrap(), "gitlab-42");
        let explicit = env(&[(RUN_ID_VAR, "hd-1"), ("CI_PIPELINE_ID", "42")]);
        assert_eq!(run_id(&explicit, &|| None).unwrap(), "hd-1");
        let none = env(&[(RUN_ID_VAR, "")]);
        let fresh = run_id(&none, &|| None).unwrap();
        assert!(layout::validate_run_id(&fresh).is_ok());
        assert_ne!(fresh, run_id(&none, &|| None).unwrap());
    }

    #[cfg(unix)]
    #[test]
    fn the_processes_of_one_cargo_invocation_share_its_run() {
        let tmp = tempfile::tempdir().unwrap();
        let proc = tmp.path().join("proc");
        let cargo = tmp.path().join("bin/cargo");
        let other = tmp.path().join("bin/sh");
        std::fs::create_dir_all(proc.join("sys/kernel/random")).unwrap();
        std::fs::create_dir_all(cargo.parent().unwrap()).unwrap();
        std::fs::write(&cargo, "").unwrap();
        std::fs::write(&other, "").unwrap();
        std::fs::write(
            proc.join("sys/kernel/random/boot_id"),
            "6f1c2a9e-0b7d-4e55-9a43-1d2e3f405162\n",
        )
        .unwrap();
        let parent = |pid: u32, exe: &std::path::Path, comm: &str| {
            let dir = proc.join(pid.to_string());
            std::fs::create_dir_all(&dir).unwrap();
            std::os::unix::fs::symlink(exe, dir.join("exe")).unwrap();
            // fields 3 to 21, then the start time (field 22), as Linux writes them
            let fields: Vec<String> = (3..=21).map(|f| f.to_string()).collect();
            std::fs::write(
                dir.join("stat"),
                format!("{pid} ({comm}) {} 98765 4 5\n", fields.join(" ")),
            )
            .unwrap();
        };
        parent(4242, &cargo, "car) (go");
        parent(77, &other, "sh");
        let id = cargo_invocation(Some(&cargo), &proc, 4242);
        assert_eq!(id.as_deref(), Some("cargo-4242-98765-6f1c2a9e0b7d4e55"));
        assert_eq!(layout::validate_run_id(id.as_deref().unwrap()), Ok(()));
        // started by something else, or outside cargo, or where there is no `/proc`
        assert_eq!(cargo_invocation(Some(&cargo), &proc, 77), None);
        assert_eq!(cargo_invocation(None, &proc, 4242), None);
        assert_eq!(
            cargo_invocation(Some(&cargo), &tmp.path().join("none"), 4242),
            None
        );
        // after the explicit, pipeline and nextest ids, before a fresh one
        let invocation = || Some("cargo-1-2-ab".to_string());
        assert_eq!(run_id(&env(&[]), &invocation).unwrap(), "cargo-1-2-ab");
        let nextest = env(&[(NEXTEST_RUN_ID_VAR, "nx-1")]);
        assert_eq!(run_id(&nextest, &invocation).unwrap(), "nx-1");
        let bad = || Some("../x".to_string());
        assert!(run_id(&env(&[]), &bad).unwrap().len() > 20, "a fresh id instead");
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
        let err = run_id(&bad, &|| None).unwrap_err();
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
        let cfg = resolve(&e, &no_exe, &|| None).unwrap();
        assert_eq!(cfg.store, fresh.join("heddle"));
        assert!(fresh.is_dir());

        let file = tmp.path().join("a-file");
        std::fs::write(&file, "x").unwrap();
        let e = env(&[(TARGET_DIR_VAR, file.to_str().unwrap())]);
        let err = resolve(&e, &no_exe, &|| None).unwrap_err();
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
        assert_eq!(resolve(&e, &found, &|| None).unwrap().build, build_id(&exe));
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
        assert_eq!(resolve(&e, &exe, &|| None).unwrap().store, build.join("heddle"));

        let lost = tmp.path().join("nowhere/t");
        let exe = move || Ok(lost.clone());
        assert!(matches!(
            resolve(&e, &exe, &|| None),
            Err(SetupError::NoBuildDir { .. })
        ));
    }
}
