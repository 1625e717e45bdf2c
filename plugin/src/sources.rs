//! The annotated functions of the selected packages, read from their sources with the
//! very parser and validation the `#[cover]` macro uses (`heddle-syntax`), so that what
//! `pin`, `check` and `show` see is what the build will see.
//!
//! Problems (a file that does not parse, an attribute the macro would reject, two
//! annotated functions of one file sharing a name) are collected with their place
//! rather than stopping the scan: the other functions can still be pinned or checked.
//! The keys those problems touch are remembered, so `pin` leaves their pins alone
//! instead of mistaking an unreadable function for a deleted one.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

use heddle_syntax::diag::{self, Diagnostic};
use heddle_syntax::find::analyse_source;
use heddle_syntax::keywords as kw;
use heddle_syntax::{CoverSpec, Defaults, PinKey};

use crate::workspace::{Package, Project, rust_files};

/// One annotated function whose spec the macro accepts.
#[derive(Clone, Debug)]
pub struct Function {
    /// Its file, relative to the crate root, `/`-separated (as pins key it).
    pub file: String,
    /// 1-based line of its `#[cover]` attribute.
    pub line: usize,
    /// Its name.
    pub function: String,
    /// The inline modules it sits in, outermost first.
    pub modules: Vec<String>,
    /// Its spec, as the macro computes it.
    pub spec: CoverSpec,
}

impl Function {
    /// The key of its pin.
    pub fn key(&self) -> PinKey {
        PinKey::new(self.file.clone(), self.function.clone())
    }

    /// Its path inside the compiled target, as libtest names its rows without the
    /// `::row_NN`: the file's module path (guessed from the standard layout, see
    /// [`file_module_path`]), the inline modules, the name.
    pub fn test_path(&self) -> String {
        let mut parts = file_module_path(&self.file);
        parts.extend(self.modules.iter().cloned());
        parts.push(self.function.clone());
        parts.join("::")
    }
}

/// What one package's sources hold.
#[derive(Clone, Debug)]
pub struct Scanned {
    /// The package.
    pub package: Package,
    /// Its root relative to the workspace root (`""` for the root itself), for display.
    pub prefix: String,
    /// Every valid, uniquely named annotated function, by file then source order.
    pub functions: Vec<Function>,
    /// Every problem found.
    pub problems: Vec<Diagnostic>,
    /// Whether the crate's defaults could be read (if not, no function was analysed).
    pub defaults_ok: bool,
    /// Files that did not parse.
    pub broken_files: BTreeSet<String>,
    /// Annotated functions found but not usable (invalid spec, duplicate name).
    pub broken_keys: BTreeSet<PinKey>,
    /// The crate declares that it pins its rows (`pinned = true` in its
    /// `[package.metadata.heddle]`).
    pub pinned: bool,
}

impl Scanned {
    /// Whether a pin under `key` might belong to a function this scan could not read,
    /// so must be kept as it is.
    pub fn protects(&self, key: &PinKey) -> bool {
        !self.defaults_ok || self.broken_files.contains(&key.file) || self.broken_keys.contains(key)
    }

    /// A file of the package (relative to its root) as messages show it: relative to
    /// the workspace root.
    pub fn display(&self, file: &str) -> String {
        if self.prefix.is_empty() {
            file.to_string()
        } else {
            format!("{}/{file}", self.prefix)
        }
    }
}

/// Reads every selected package.
pub fn scan(project: &Project) -> Vec<Scanned> {
    project
        .packages
        .iter()
        .map(|p| scan_package(project, p))
        .collect()
}

/// The package root relative to the workspace root, `/`-separated.
fn prefix_of(project: &Project, package: &Package) -> String {
    match package.root.strip_prefix(&project.workspace_root) {
        Ok(rel) => rel
            .components()
            .map(|c| c.as_os_str().to_string_lossy().into_owned())
            .collect::<Vec<_>>()
            .join("/"),
        Err(_) => package.root.display().to_string(),
    }
}

fn scan_package(project: &Project, package: &Package) -> Scanned {
    let mut out = Scanned {
        package: package.clone(),
        prefix: prefix_of(project, package),
        functions: Vec::new(),
        problems: Vec::new(),
        defaults_ok: true,
        broken_files: BTreeSet::new(),
        broken_keys: BTreeSet::new(),
        pinned: false,
    };
    let defaults = match Defaults::load(&package.root) {
        Ok(d) => d,
        Err(e) => {
            out.problems
                .push(e.0.at(out.display(heddle_syntax::defaults::MANIFEST_FILE)));
            out.defaults_ok = false;
            return out;
        }
    };
    out.pinned = defaults.pinned;
    for file in rust_files(&package.root) {
        scan_file(&package.root, &file, &defaults, &mut out);
    }
    out
}

fn scan_file(root: &Path, file: &str, defaults: &Defaults, out: &mut Scanned) {
    let src = match std::fs::read_to_string(root.join(file)) {
        Ok(s) => s,
        Err(e) => {
            out.problems.push(
                Diagnostic::new(format!("cannot read the file: {e}"))
                    .hint("check its permissions and encoding")
                    .at(out.display(file)),
            );
            out.broken_files.insert(file.to_string());
            return;
        }
    };
    // A file that never spells the attribute's name holds no annotated function: no
    // need to parse it (nor to complain when it is a deliberately broken fixture).
    if !src.contains(kw::COVER) {
        return;
    }
    let found = match analyse_source(&src, defaults) {
        Ok(f) => f,
        Err(e) => {
            for e in e {
                let at = e.span().start();
                out.problems.push(
                    Diagnostic::new(format!("this file does not parse as Rust: {e}"))
                        .hint(format!(
                            "fix it so that heddle can find its `#[{}]` functions",
                            kw::COVER
                        ))
                        .at(format!("{}:{}:{}", out.display(file), at.line, at.column + 1)),
                );
            }
            out.broken_files.insert(file.to_string());
            return;
        }
    };
    // pins are keyed by file and name, so a name may be annotated once per file
    let mut first_line: BTreeMap<String, usize> = BTreeMap::new();
    let mut twice: BTreeSet<String> = BTreeSet::new();
    for f in &found {
        if let Some(&first) = first_line.get(&f.function) {
            twice.insert(f.function.clone());
            out.problems.push(
                Diagnostic::new(format!(
                    "`{}` is annotated with `#[{}]` a second time in this file (first at line {first})",
                    f.function,
                    kw::COVER
                ))
                .hint("rename one of them: pins are keyed by file and function name")
                .at(format!("{}:{}", out.display(file), f.line)),
            );
        } else {
            first_line.insert(f.function.clone(), f.line);
        }
    }
    for f in found {
        let key = PinKey::new(file, f.function.clone());
        if twice.contains(&f.function) {
            out.broken_keys.insert(key);
            continue;
        }
        match f.spec {
            Ok(spec) => out.functions.push(Function {
                file: file.to_string(),
                line: f.line,
                function: f.function,
                modules: f.modules,
                spec,
            }),
            Err(e) => {
                for e in e {
                    let at = e.span().start();
                    let mut d = diag::diagnostic_of(
                        &e,
                        format!("{}:{}:{}", out.display(file), at.line, at.column + 1),
                    );
                    d.message = format!("in `{}`: {}", f.function, d.message);
                    out.problems.push(d);
                }
                out.broken_keys.insert(key);
            }
        }
    }
}

/// The module path a file has inside its target, by cargo's standard layout: `src/lib.rs`,
/// `src/main.rs`, `src/bin/x.rs`, `tests/x.rs`, `examples/x.rs`, `benches/x.rs` and
/// `build.rs` are roots (as are `…/x/main.rs` of multi-file targets), `src/a/b.rs` is
/// `a::b`, `src/a/mod.rs` is `a`, `tests/x/y.rs` is `y`. Purely lexical: `#[path]`
/// attributes and custom target paths are not followed.
pub fn file_module_path(file: &str) -> Vec<String> {
    let parts: Vec<&str> = file.split('/').collect();
    let (dirs, name) = match parts.split_last() {
        Some((name, dirs)) => (dirs, name.strip_suffix(".rs").unwrap_or(name)),
        None => return Vec::new(),
    };
    // strip the target root directory: src/, src/bin/<x>/, tests/<x>/, examples/<x>/ …
    let inner: &[&str] = match dirs {
        [] => return Vec::new(),
        ["src", "bin", rest @ ..] => {
            if rest.is_empty() {
                return Vec::new();
            }
            &rest[1..]
        }
        ["src", rest @ ..] => {
            if rest.is_empty() && matches!(name, "lib" | "main") {
                return Vec::new();
            }
            rest
        }
        [top, rest @ ..] if matches!(*top, "tests" | "examples" | "benches") => {
            if rest.is_empty() {
                return Vec::new();
            }
            &rest[1..]
        }
        other => other,
    };
    let mut path: Vec<String> = inner.iter().map(|s| s.to_string()).collect();
    // `tests/x/main.rs`, `src/bin/x/main.rs`: the root of a multi-file target
    let target_root = inner.is_empty() && name == "main";
    if name != "mod" && !target_root {
        path.push(name.to_string());
    }
    path
}

#[cfg(test)]
mod tests {
    use super::*;

    fn path(file: &str) -> String {
        file_module_path(file).join("::")
    }

    // cargo's target layout (The Cargo Book, "Package Layout" and "Target
    // auto-discovery") and the 2018 module file rules (The Rust Reference, "Modules")
    #[test]
    fn module_paths_follow_the_standard_layout() {
        assert_eq!(path("src/lib.rs"), "");
        assert_eq!(path("src/main.rs"), "");
        assert_eq!(path("src/codec.rs"), "codec");
        assert_eq!(path("src/codec/mod.rs"), "codec");
        assert_eq!(path("src/codec/rle.rs"), "codec::rle");
        assert_eq!(path("src/bin/tool.rs"), "");
        assert_eq!(path("src/bin/tool/main.rs"), "");
        assert_eq!(path("src/bin/tool/args.rs"), "args");
        assert_eq!(path("tests/io.rs"), "");
        assert_eq!(path("tests/io/main.rs"), "");
        assert_eq!(path("tests/io/helpers.rs"), "helpers");
        assert_eq!(path("tests/io/deep/mod.rs"), "deep");
        assert_eq!(path("examples/demo.rs"), "");
        assert_eq!(path("benches/speed.rs"), "");
        assert_eq!(path("build.rs"), "");
    }
}
