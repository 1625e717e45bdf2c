//! The test file's path as pins and records name it (relative to the crate root,
//! `/`-separated, the same on every machine whatever the compiler was handed), and the
//! cargo target it belongs to, as a rerun command selects it.

use std::path::{Component, Path, PathBuf};

/// `file` relative to `root`, `/`-separated. A relative `file` is taken relative to
/// `cwd` first (the compiler names files relative to the directory cargo runs it in,
/// which is the workspace root, not the crate root). A file outside `root` gets `..`
/// components. Purely lexical: no file system access, no symlinks resolved.
///
/// ```
/// use std::path::Path;
/// use heddle_syntax::paths::relative_to_root;
/// let rel = relative_to_root(Path::new("/w/crate"), Path::new("crate/tests/a.rs"), Some(Path::new("/w")));
/// assert_eq!(rel, "tests/a.rs");
/// ```
pub fn relative_to_root(root: &Path, file: &Path, cwd: Option<&Path>) -> String {
    let file = match (file.is_absolute(), cwd) {
        (false, Some(cwd)) => cwd.join(file),
        _ => file.to_path_buf(),
    };
    let root = normalise(root);
    let file = normalise(&file);
    let r: Vec<Component> = root.components().collect();
    let f: Vec<Component> = file.components().collect();
    let common = r.iter().zip(&f).take_while(|(a, b)| a == b).count();
    let mut parts: Vec<String> = Vec::new();
    for _ in common..r.len() {
        parts.push("..".into());
    }
    for c in &f[common..] {
        parts.push(c.as_os_str().to_string_lossy().into_owned());
    }
    parts.join("/")
}

/// The cargo selector of the target a test file is compiled into (`--test hub`,
/// `--lib`), or `None` when the layout does not tell.
///
/// Cargo's conventional layout decides: `tests/NAME.rs` or `tests/NAME/…` is the test
/// target NAME, likewise `examples/`, `benches/`, `src/bin/`; `src/main.rs` the
/// package's default bin; other `src/` files the library. The derived name is checked
/// against `crate_name`, the name of the crate being compiled (cargo turns `-` into `_`);
/// when a `[[test]]` section renamed the target, the crate's own name is the better guess.
///
/// ```
/// use heddle_syntax::paths::target_selector;
/// assert_eq!(target_selector("tests/hub.rs", "greenhouse", "hub").as_deref(), Some("--test hub"));
/// assert_eq!(target_selector("src/codec.rs", "greenhouse", "greenhouse").as_deref(), Some("--lib"));
/// ```
pub fn target_selector(file: &str, package: &str, crate_name: &str) -> Option<String> {
    let parts: Vec<&str> = file.split('/').filter(|p| !p.is_empty() && *p != ".").collect();
    let named = |flag: &str, name: &str| {
        let name = name.strip_suffix(".rs").unwrap_or(name);
        let pick = if name.replace('-', "_") == crate_name || crate_name.is_empty() {
            name
        } else {
            crate_name
        };
        Some(format!("{flag} {pick}"))
    };
    match parts.as_slice() {
        ["tests", name, ..] => named("--test", name),
        ["examples", name, ..] => named("--example", name),
        ["benches", name, ..] => named("--bench", name),
        ["src", "bin", name, ..] => named("--bin", name),
        ["src", "main.rs"] => named("--bin", package),
        ["src", ..] => Some("--lib".to_string()),
        _ => None,
    }
}

/// Removes `.` and folds `..` where a preceding normal component allows it.
fn normalise(p: &Path) -> PathBuf {
    let mut out: Vec<Component> = Vec::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir if matches!(out.last(), Some(Component::Normal(_))) => {
                out.pop();
            }
            c => out.push(c),
        }
    }
    out.iter().collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inside_and_outside_the_root() {
        let root = Path::new("/w/crate");
        assert_eq!(
            relative_to_root(root, Path::new("/w/crate/tests/a.rs"), None),
            "tests/a.rs"
        );
        assert_eq!(
            relative_to_root(root, Path::new("/w/crate/./src/../tests/a.rs"), None),
            "tests/a.rs"
        );
        assert_eq!(
            relative_to_root(root, Path::new("/w/other/t.rs"), None),
            "../other/t.rs"
        );
        assert_eq!(
            relative_to_root(root, Path::new("tests/a.rs"), Some(Path::new("/w/crate"))),
            "tests/a.rs"
        );
        assert_eq!(
            relative_to_root(root, Path::new("crate/src/lib.rs"), Some(Path::new("/w"))),
            "src/lib.rs"
        );
    }

    #[test]
    fn target_selectors_follow_cargo_layout() {
        let sel = |file, krate| target_selector(file, "my-pkg", krate);
        assert_eq!(
            sel("tests/codec-io.rs", "codec_io").as_deref(),
            Some("--test codec-io")
        );
        assert_eq!(
            sel("tests/suite/main.rs", "suite").as_deref(),
            Some("--test suite")
        );
        assert_eq!(
            sel("tests/suite/parts/a.rs", "suite").as_deref(),
            Some("--test suite")
        );
        // a `[[test]] name = "other"` target whose file name differs
        assert_eq!(sel("tests/file.rs", "other").as_deref(), Some("--test other"));
        assert_eq!(sel("src/lib.rs", "my_pkg").as_deref(), Some("--lib"));
        assert_eq!(sel("src/deep/mod.rs", "my_pkg").as_deref(), Some("--lib"));
        assert_eq!(sel("src/main.rs", "my_pkg").as_deref(), Some("--bin my-pkg"));
        assert_eq!(sel("src/bin/tool.rs", "tool").as_deref(), Some("--bin tool"));
        assert_eq!(sel("examples/demo.rs", "demo").as_deref(), Some("--example demo"));
        assert_eq!(sel("benches/speed.rs", "speed").as_deref(), Some("--bench speed"));
        assert_eq!(sel("checks/odd.rs", "odd"), None);
    }
}
