//! The test file's path as pins and records name it: relative to the crate root,
//! `/`-separated, the same on every machine whatever the compiler was handed.

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
}
