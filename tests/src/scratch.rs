//! Temporary crates and the cargo invocations on them.
//!
//! Every temporary crate builds into one shared target directory, the greenhouse
//! demo's (`examples/greenhouse/target`), so heddle and its dependencies (syn,
//! serde, toml, …) compile once for all of them and stay built between runs of the
//! suite. This workspace's `Cargo.lock` is copied into each crate, so they resolve to
//! the versions already built, without the network; `--offline` is passed once a crate
//! has resolved offline. At most two invocations of a test process run at once (builds in
//! one target directory queue on cargo's own lock) and each one prints its
//! wall time on stderr, past libtest's capture. Each crate keeps its directory,
//! `e2e-crates/NAME` in this workspace's target directory, from one run to the next, laid
//! out afresh from its definition, so a warm run finds it built.

use std::cell::Cell;
use std::ffi::OsString;
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::{Condvar, Mutex};
use std::time::{Duration, Instant, SystemTime};

/// The workspace this crate belongs to (its `Cargo.lock`, its `runner/`).
pub fn workspace_root() -> PathBuf {
    // the package lives in `<workspace>/tests`
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_MANIFEST_DIR")))
}

/// The target directory every temporary crate builds into: the greenhouse demo's,
/// `examples/greenhouse/target`, where the quick start builds heddle for the demo. The
/// temporary crates copy this workspace's lock, as the demo's holds the same versions,
/// and depend on heddle alone, as the demo does, so they and the demo share one build of
/// heddle and its dependencies (checked: the same unit hashes); the suite's browser test
/// runs the quick start after the plugin's tests have built it.
pub fn shared_target_dir() -> PathBuf {
    workspace_root()
        .join("examples")
        .join("greenhouse")
        .join("target")
}

/// The cargo running these tests (cargo sets `CARGO` for test processes), so the
/// temporary crates are built by the same toolchain.
pub fn cargo_program() -> OsString {
    std::env::var_os("CARGO")
        .filter(|v| !v.is_empty())
        .unwrap_or_else(|| OsString::from(env!("CARGO")))
}

/// How many cargo invocations of one test process run at once. Two keep both cores of
/// a small CI machine busy while a warm run's invocations mostly wait on test binaries;
/// builds in the shared target directory still queue on cargo's own lock.
const CARGO_SLOTS: usize = 2;

/// Slots taken, out of [`CARGO_SLOTS`].
static TAKEN: Mutex<usize> = Mutex::new(0);
static FREED: Condvar = Condvar::new();

thread_local! {
    static HOLDING: Cell<bool> = const { Cell::new(false) };
}

/// Runs `f` in one of the process's cargo slots; re-entrant, so a test can make several
/// invocations one sequence in its slot (a clean followed by its rebuild).
pub fn in_cargo_slot<R>(f: impl FnOnce() -> R) -> R {
    if HOLDING.with(Cell::get) {
        return f();
    }
    {
        // a test that panicked in its slot gave it back on the way out (`Release`)
        let mut taken = TAKEN.lock().unwrap_or_else(|e| e.into_inner());
        while *taken >= CARGO_SLOTS {
            taken = FREED.wait(taken).unwrap_or_else(|e| e.into_inner());
        }
        *taken += 1;
    }
    struct Release;
    impl Drop for Release {
        fn drop(&mut self) {
            HOLDING.with(|h| h.set(false));
            let mut taken = TAKEN.lock().unwrap_or_else(|e| e.into_inner());
            *taken -= 1;
            FREED.notify_one();
        }
    }
    HOLDING.with(|h| h.set(true));
    let _release = Release;
    f()
}

/// Prints one line on the process's real stderr, so it shows even for passing tests.
pub fn note(text: &str) {
    let _ = std::io::stderr()
        .lock()
        .write_all(format!("heddle-e2e: {text}\n").as_bytes());
}

/// What a temporary crate is made of.
#[derive(Clone, Debug, Default)]
pub struct CrateDef<'a> {
    /// Package name; unique per test, since all crates share a target directory.
    pub name: &'a str,
    /// Body of `[package.metadata.heddle]`, if any.
    pub metadata: Option<&'a str>,
    /// Extra `[dev-dependencies]` lines (heddle is always there).
    pub dev_dependencies: &'a [&'a str],
    /// The name the crate gives its `heddle-test` dependency, when not its own
    /// (`rt = { package = "heddle-test", … }`).
    pub runtime_as: Option<&'a str>,
    /// Files, by path relative to the crate root.
    pub files: &'a [(&'a str, &'a str)],
}

/// One finished cargo invocation.
#[derive(Debug)]
pub struct Run {
    /// The command line, for messages.
    pub command: String,
    /// Exit status code (`None` when killed by a signal).
    pub code: Option<i32>,
    /// Its stdout.
    pub stdout: String,
    /// Its stderr.
    pub stderr: String,
    /// Wall time.
    pub elapsed: Duration,
}

impl Run {
    /// Whether cargo exited with 0.
    pub fn succeeded(&self) -> bool {
        self.code == Some(0)
    }

    /// Whether every target compiled (the run may still have failing tests).
    pub fn compiled(&self) -> bool {
        !self.stderr.contains("could not compile") && !self.stderr.contains("error: failed to ")
    }

    /// Both streams, for parsing output that may go to either.
    pub fn all_output(&self) -> String {
        format!("{}\n{}", self.stdout, self.stderr)
    }

    /// Panics with the full output unless everything compiled.
    pub fn assert_compiled(&self) -> &Run {
        assert!(
            self.compiled() && self.code.is_some(),
            "`{}` did not build:\n{}\n{}",
            self.command,
            self.stderr,
            self.stdout
        );
        self
    }
}

/// Why a temporary crate could not be made.
#[derive(Debug)]
pub enum CreateError {
    /// The directory or its files could not be written: always a failure.
    Setup(String),
    /// Its dependencies resolve neither offline nor online: a dependency from the
    /// registry (tokio) cannot be had here.
    Unresolved(String),
}

impl std::fmt::Display for CreateError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            CreateError::Setup(why) | CreateError::Unresolved(why) => f.write_str(why),
        }
    }
}

/// A temporary crate, in a directory of its own named for it (see [`crates_dir`]).
pub struct Scratch {
    dir: PathBuf,
    name: String,
    offline: bool,
}

/// Escapes a string for a TOML basic string.
fn toml_string(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '\\' => out.push_str("\\\\"),
            '"' => out.push_str("\\\""),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

impl Scratch {
    /// Writes the crate and resolves its dependencies; [`CreateError::Unresolved`] says
    /// why resolution failed both offline and online (for tests that need a dependency
    /// from the registry).
    pub fn create(def: &CrateDef<'_>) -> Result<Scratch, CreateError> {
        let dir = crates_dir().join(def.name);
        let runner = workspace_root().join("runner");
        let mut manifest = format!(
            "[package]\nname = \"{}\"\nversion = \"0.0.0\"\nedition = \"2024\"\npublish = false\n\n",
            def.name
        );
        if let Some(meta) = def.metadata {
            manifest.push_str(&format!("[package.metadata.heddle]\n{meta}\n\n"));
        }
        // a workspace of its own, whatever directory the temporary one lies in
        manifest.push_str("[workspace]\n\n[dev-dependencies]\n");
        let path = toml_string(&runner.to_string_lossy());
        manifest.push_str(&match def.runtime_as {
            Some(name) => format!("{name} = {{ package = \"heddle-test\", path = {path} }}\n"),
            None => format!("heddle-test = {{ path = {path} }}\n"),
        });
        for line in def.dev_dependencies {
            manifest.push_str(line);
            manifest.push('\n');
        }
        let lock = workspace_root().join("Cargo.lock");
        let lock_text = std::fs::read_to_string(&lock)
            .map_err(|e| CreateError::Setup(format!("cannot read `{}`: {e}", lock.display())))?;
        let mut files: Vec<(&str, &str)> = vec![
            ("Cargo.toml", &manifest),
            ("Cargo.lock", &lock_text),
            ("src/lib.rs", "//! Nothing: the suites are integration tests.\n"),
        ];
        files.extend(def.files.iter().copied());
        forget_records(&shared_target_dir(), def.name).map_err(|e| {
            CreateError::Setup(format!("cannot clear earlier records of `{}`: {e}", def.name))
        })?;
        lay_out(&dir, &files)
            .map_err(|e| CreateError::Setup(format!("cannot lay out `{}`: {e}", dir.display())))?;
        let mut krate = Scratch {
            dir,
            name: def.name.to_string(),
            offline: false,
        };
        // resolving again finds what it found last time, unless the manifest or the lock
        // changed: the key of the last success is kept beside the crates
        let key = {
            use std::hash::{Hash as _, Hasher as _};
            let mut h = std::hash::DefaultHasher::new();
            (manifest.as_str(), lock_text.as_str()).hash(&mut h);
            format!("{:016x}\n", h.finish())
        };
        let resolved = crates_dir().join(format!(".resolved-{}", def.name));
        if std::fs::read_to_string(&resolved).is_ok_and(|k| k == key) {
            krate.offline = true;
        } else {
            krate.resolve().map_err(CreateError::Unresolved)?;
            std::fs::write(&resolved, key)
                .map_err(|e| CreateError::Setup(format!("cannot write `{}`: {e}", resolved.display())))?;
        }
        Ok(krate)
    }

    /// Resolves offline when the copied lock file and the local registry cache allow it
    /// (the usual case), else online once; later invocations then pass `--offline`.
    fn resolve(&mut self) -> Result<(), String> {
        let offline = self.cargo_raw(&["metadata", "--offline", "--format-version", "1"], None, &[]);
        if offline.succeeded() {
            self.offline = true;
            return Ok(());
        }
        let online = self.cargo_raw(&["metadata", "--format-version", "1"], None, &[]);
        if online.succeeded() {
            self.offline = true;
            return Ok(());
        }
        Err(format!(
            "cannot resolve the dependencies of `{}` offline ({}) or online ({})",
            self.name,
            first_error(&offline.stderr),
            first_error(&online.stderr)
        ))
    }

    /// The crate root.
    pub fn root(&self) -> &Path {
        &self.dir
    }

    /// The package name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// Writes a file (parent directories created).
    pub fn write(&self, path: &str, text: &str) {
        let path = self.root().join(path);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent).expect("the crate directory is writable");
        }
        std::fs::write(&path, text).expect("the crate directory is writable");
    }

    /// Reads a file of the crate.
    pub fn read(&self, path: &str) -> String {
        std::fs::read_to_string(self.root().join(path)).expect("the file exists")
    }

    /// Sets a file's modification time to now, as a user's `touch` would.
    pub fn touch(&self, path: &str) {
        let file = std::fs::File::options()
            .append(true)
            .open(self.root().join(path))
            .expect("the file to touch exists");
        file.set_modified(SystemTime::now())
            .expect("the file's time can be set");
    }

    /// A fresh, empty directory for one invocation's store (`HEDDLE_TARGET_DIR`).
    pub fn store_dir(&self, label: &str) -> PathBuf {
        let dir = self.root().join("stores").join(label);
        assert!(!dir.exists(), "store `{label}` is used twice");
        std::fs::create_dir_all(&dir).expect("the crate directory is writable");
        dir
    }

    /// Runs cargo in the crate with `args` (`--offline` added after the subcommand when
    /// resolution allowed it), recording into `store` (`None`: `HEDDLE_TARGET_DIR`
    /// unset, so the runtime finds the target directory itself), with extra env vars.
    pub fn cargo(&self, args: &[&str], store: Option<&Path>, env: &[(&str, &str)]) -> Run {
        // the flag goes after the subcommand (`cargo nextest run`: after `run`)
        let at = match args {
            ["nextest", "run", ..] => Some(2),
            ["nextest", ..] => None,
            [] => None,
            _ => Some(1),
        };
        let mut full: Vec<&str> = Vec::with_capacity(args.len() + 1);
        match at.filter(|_| self.offline) {
            Some(at) => {
                full.extend(&args[..at]);
                full.push("--offline");
                full.extend(&args[at..]);
            }
            None => full.extend(args),
        }
        self.cargo_raw(&full, store, env)
    }

    fn cargo_raw(&self, args: &[&str], store: Option<&Path>, env: &[(&str, &str)]) -> Run {
        self.run_program(&cargo_program(), args, store, env)
    }

    /// Runs the cargo subcommand `cargo heddle ARGS` from the built binary `bin`
    /// (`env!("CARGO_BIN_EXE_cargo-heddle")` in the plugin's tests) the way cargo runs it,
    /// with colours off.
    pub fn heddle(&self, bin: &str, args: &[&str]) -> Run {
        let mut full = vec!["heddle"];
        full.extend_from_slice(args);
        self.run_program(bin.as_ref(), &full, None, &[("NO_COLOR", "1")])
    }

    /// Runs any program in the crate's directory with the environment the cargo
    /// invocations get (this process's package variables removed, the shared target
    /// directory, `store` as `HEDDLE_TARGET_DIR`): for `cargo-heddle`, which runs cargo
    /// itself.
    pub fn run_program(
        &self,
        program: &std::ffi::OsStr,
        args: &[&str],
        store: Option<&Path>,
        env: &[(&str, &str)],
    ) -> Run {
        in_cargo_slot(|| {
            let mut cmd = Command::new(program);
            cmd.args(args).current_dir(self.root());
            for (key, _) in std::env::vars_os() {
                let k = key.to_string_lossy();
                if k.starts_with("HEDDLE_") || k.starts_with("NEXTEST") || INHERITED_NOT.contains(&&*k) {
                    cmd.env_remove(&key);
                }
            }
            cmd.env("CARGO", cargo_program())
                .env("CARGO_TARGET_DIR", shared_target_dir())
                .env("CARGO_TERM_COLOR", "never")
                .env("RUST_BACKTRACE", "0");
            if let Some(store) = store {
                cmd.env(heddle_test::record::layout::TARGET_DIR_VAR, store);
            }
            for (k, v) in env {
                cmd.env(k, v);
            }
            let name = Path::new(program)
                .file_name()
                .map_or_else(|| "?".into(), |n| n.to_string_lossy());
            let command = format!("{name} {}", args.join(" "));
            let start = Instant::now();
            let out = cmd
                .output()
                .unwrap_or_else(|e| panic!("cannot run `{command}`: {e}"));
            let elapsed = start.elapsed();
            note(&format!(
                "[{}] `{command}` took {:.1} s",
                self.name,
                elapsed.as_secs_f64()
            ));
            Run {
                command,
                code: out.status.code(),
                stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
                stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
                elapsed,
            }
        })
    }
}

/// Variables cargo sets for this test process that must not leak into the builds it
/// starts: they describe this package, or would move the temporary crates' output.
const INHERITED_NOT: &[&str] = &[
    "CARGO_TARGET_DIR",
    "CARGO_BUILD_TARGET_DIR",
    "CARGO_BUILD_BUILD_DIR",
    "CARGO_MANIFEST_DIR",
    "CARGO_MANIFEST_PATH",
    "CARGO_PKG_NAME",
    "CARGO_CRATE_NAME",
    "CARGO_PRIMARY_PACKAGE",
    "CARGO_TARGET_TMPDIR",
    "RUST_TEST_THREADS",
    // a CI service's pipeline ids would make every temporary crate's runs one run
    "GITHUB_RUN_ID",
    "GITHUB_RUN_ATTEMPT",
    "CI_PIPELINE_ID",
    "BUILDKITE_BUILD_ID",
    "CIRCLE_WORKFLOW_ID",
    // a CI service colours a terminal's output whatever `TERM` says (anstream); the
    // temporary crates' programs see the terminal, or the pipe, a test gives them
    "CI",
];

/// Where the temporary crates live: `e2e-crates/NAME` beside the shared target
/// directory. A crate keeps its directory from one run of the suite to the next, so a
/// warm run finds its test binaries built and compiles only what changed; every run
/// starts it from its definition again (see `lay_out`).
pub fn crates_dir() -> PathBuf {
    std::env::current_exe()
        .ok()
        .and_then(|exe| heddle_test::record::layout::find_build_dir(&exe))
        .unwrap_or_else(|| workspace_root().join("target"))
        .join("e2e-crates")
}

/// Removes what earlier runs of the suite recorded for package `name` in the store of
/// the shared target directory (where its runs land when a test sets no store), so a
/// test starts from no history of its own, and the store, read by every report there,
/// does not grow from one run of the suite to the next. A file belongs to the process
/// that wrote it, and so to one package, named on each of its lines; other packages'
/// files, which tests running at the same time may be writing, are left alone.
fn forget_records(target: &Path, name: &str) -> std::io::Result<()> {
    use heddle_test::record::Line;
    use heddle_test::record::layout::{RUNS_DIR, store_root};
    let runs = store_root(target).join(RUNS_DIR);
    let Ok(dirs) = std::fs::read_dir(&runs) else {
        return Ok(());
    };
    for run in dirs {
        let run = run?.path();
        let Ok(files) = std::fs::read_dir(&run) else {
            continue;
        };
        for file in files {
            let file = file?.path();
            let Ok(text) = std::fs::read_to_string(&file) else {
                continue;
            };
            let package = text.lines().find_map(|l| match Line::parse(l) {
                Ok(Line::Spec(s)) => Some(s.krate),
                Ok(Line::Row(r)) => Some(r.krate),
                Ok(Line::Start(r)) => Some(r.krate),
                Err(_) => None,
            });
            if package.as_deref() == Some(name) {
                std::fs::remove_file(&file)?;
            }
        }
        // only when empty: another test may be writing there
        let _ = std::fs::remove_dir(&run);
    }
    Ok(())
}

/// Makes `dir` hold exactly `files` (path relative to `dir`, text): a file whose text
/// is already right is left alone, so its modification time, and with it cargo's
/// verdict that the crate is built, survives; anything else an earlier run left there
/// (stores, markers, a pins file, edited sources) is removed or rewritten.
fn lay_out(dir: &Path, files: &[(&str, &str)]) -> std::io::Result<()> {
    let wanted: std::collections::BTreeMap<PathBuf, &str> =
        files.iter().map(|(p, t)| (dir.join(p), *t)).collect();
    if dir.is_dir() {
        remove_unwanted(dir, &wanted)?;
    }
    for (path, text) in &wanted {
        if std::fs::read(path).is_ok_and(|old| old == text.as_bytes()) {
            continue;
        }
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent)?;
        }
        std::fs::write(path, text)?;
    }
    Ok(())
}

/// Removes every file under `dir` that is not wanted, and directories left empty.
fn remove_unwanted(dir: &Path, wanted: &std::collections::BTreeMap<PathBuf, &str>) -> std::io::Result<()> {
    for entry in std::fs::read_dir(dir)? {
        let path = entry?.path();
        if path.is_dir() && !path.is_symlink() {
            remove_unwanted(&path, wanted)?;
            if std::fs::read_dir(&path)?.next().is_none() {
                std::fs::remove_dir(&path)?;
            }
        } else if !wanted.contains_key(&path) {
            std::fs::remove_file(&path)?;
        }
    }
    Ok(())
}

/// The first `error` line of cargo's stderr, for a one-line reason.
fn first_error(stderr: &str) -> String {
    stderr
        .lines()
        .find(|l| l.starts_with("error"))
        .unwrap_or("no error line")
        .to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn toml_strings_are_escaped() {
        assert_eq!(toml_string("/a/b"), "\"/a/b\"");
        assert_eq!(toml_string("C:\\x\"y"), "\"C:\\\\x\\\"y\"");
    }

    #[test]
    fn the_crates_live_in_a_cargo_target_dir_and_build_in_the_demos() {
        let crates = crates_dir();
        let parent = crates.parent().expect("e2e-crates has a parent");
        assert!(
            parent.join(heddle_test::record::layout::CACHEDIR_TAG).is_file(),
            "{}",
            crates.display()
        );
        // the demo's manifest sits beside its target directory
        assert!(shared_target_dir().with_file_name("Cargo.toml").is_file());
    }

    #[test]
    fn laying_out_keeps_what_is_right_and_drops_the_rest() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let root = dir.path().join("krate");
        lay_out(&root, &[("Cargo.toml", "a"), ("src/lib.rs", "b")]).unwrap();
        // what an earlier run leaves behind: a store, an edit, a new file
        std::fs::create_dir_all(root.join("stores/one")).unwrap();
        std::fs::write(root.join("stores/one/x.jsonl"), "{}").unwrap();
        std::fs::write(root.join("heddle-pins.toml"), "p").unwrap();
        std::fs::write(root.join("src/lib.rs"), "edited").unwrap();
        let past = SystemTime::UNIX_EPOCH + Duration::from_secs(1_000_000);
        std::fs::File::options()
            .append(true)
            .open(root.join("Cargo.toml"))
            .unwrap()
            .set_modified(past)
            .unwrap();
        lay_out(&root, &[("Cargo.toml", "a"), ("src/lib.rs", "b")]).unwrap();
        assert!(!root.join("stores").exists());
        assert!(!root.join("heddle-pins.toml").exists());
        assert_eq!(std::fs::read_to_string(root.join("src/lib.rs")).unwrap(), "b");
        // an unchanged file keeps its time, so cargo keeps its build
        let kept = std::fs::metadata(root.join("Cargo.toml"))
            .unwrap()
            .modified()
            .unwrap();
        assert_eq!(kept, past);
    }

    #[test]
    fn earlier_records_of_a_package_are_forgotten_and_others_kept() {
        use heddle_test::record::layout::{RUNS_DIR, STORE_DIR};
        let dir = tempfile::tempdir().expect("a temporary directory");
        let line = |krate: &str| {
            let spec = heddle_store::fixture::SpecBuilder::new("f").krate(krate).build();
            let row = heddle_store::fixture::row(&spec, 0, heddle_test::record::Outcome::Passed);
            assert_eq!(row.krate, krate);
            heddle_test::record::Line::Row(row).to_json_line()
        };
        let runs = dir.path().join(STORE_DIR).join(RUNS_DIR);
        for (run, file, krate) in [
            ("r1", "a.jsonl", "mine"),
            ("r1", "b.jsonl", "other"),
            ("r2", "c.jsonl", "mine"),
        ] {
            std::fs::create_dir_all(runs.join(run)).unwrap();
            std::fs::write(runs.join(run).join(file), line(krate)).unwrap();
        }
        forget_records(dir.path(), "mine").unwrap();
        assert!(!runs.join("r1/a.jsonl").exists());
        assert!(runs.join("r1/b.jsonl").exists());
        assert!(!runs.join("r2").exists(), "an emptied run directory goes too");
    }

    #[test]
    fn a_slot_is_reentrant_and_given_back() {
        assert_eq!(in_cargo_slot(|| in_cargo_slot(|| 7)), 7);
        // every slot can be taken again, also after a panic inside one
        let _ = std::panic::catch_unwind(|| in_cargo_slot(|| panic!("inside a slot")));
        let held: Vec<_> = (0..CARGO_SLOTS)
            .map(|_| std::thread::spawn(|| in_cargo_slot(|| std::thread::sleep(Duration::from_millis(20)))))
            .collect();
        for h in held {
            h.join().unwrap();
        }
        assert_eq!(*TAKEN.lock().unwrap_or_else(|e| e.into_inner()), 0);
    }
}
