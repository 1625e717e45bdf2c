//! Which packages a command works on and where their files and records live, as cargo
//! itself sees it (through `cargo metadata`), so custom target and build directories,
//! `--manifest-path`, `-p` and `--workspace` behave as they do for `cargo test`.

use std::path::{Path, PathBuf};

use cargo_metadata::MetadataCommand;
use clap::Args;

use crate::failure::{Diagnostic, Failure, usage};

/// Package selection flags shared by the subcommands that work on a project.
#[derive(Args, Clone, Debug, Default)]
pub struct Selection {
    /// Path to Cargo.toml.
    #[arg(long, value_name = "PATH")]
    pub manifest_path: Option<PathBuf>,
    /// Package to work on (repeatable).
    #[arg(long, short = 'p', value_name = "SPEC")]
    pub package: Vec<String>,
    /// Work on every package of the workspace.
    #[arg(long)]
    pub workspace: bool,
}

/// A selected package.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Package {
    /// Package name.
    pub name: String,
    /// Directory holding its Cargo.toml.
    pub root: PathBuf,
}

/// The selected packages and the directories cargo builds into.
#[derive(Clone, Debug)]
pub struct Project {
    /// The workspace root.
    pub workspace_root: PathBuf,
    /// Cargo's target directory (final artifacts).
    pub target_dir: PathBuf,
    /// Cargo's build directory (intermediate artifacts, where test binaries run from)
    /// when configured apart from the target directory.
    pub build_dir: Option<PathBuf>,
    /// Selected packages, sorted by name.
    pub packages: Vec<Package>,
}

impl Project {
    /// Directories records may be under: `HEDDLE_TARGET_DIR` when set (where the runtime
    /// then writes), else the target directory, then the build directory.
    pub fn record_roots(&self) -> Vec<PathBuf> {
        if let Some(dir) = store_override() {
            return vec![dir];
        }
        let mut roots = vec![self.target_dir.clone()];
        if let Some(b) = &self.build_dir
            && *b != self.target_dir
        {
            roots.push(b.clone());
        }
        roots
    }
}

/// `HEDDLE_TARGET_DIR` as an absolute path (relative to the working directory), when
/// set and not empty: the directory the runtime puts its store in.
pub fn store_override() -> Option<PathBuf> {
    let dir = std::env::var_os(heddle_test::record::layout::TARGET_DIR_VAR).filter(|v| !v.is_empty())?;
    let dir = PathBuf::from(dir);
    Some(if dir.is_absolute() {
        dir
    } else {
        std::env::current_dir().map_or(dir.clone(), |cwd| cwd.join(&dir))
    })
}

/// The `--target-dir DIR` (or `--target-dir=DIR`) among arguments for cargo, before any
/// `--` that starts the test binary's own arguments.
pub fn target_dir_arg(args: &[String]) -> Option<PathBuf> {
    let mut it = args.iter().take_while(|a| *a != "--");
    while let Some(a) = it.next() {
        if a == "--target-dir" {
            return it.next().map(PathBuf::from);
        }
        if let Some(dir) = a.strip_prefix("--target-dir=") {
            return Some(PathBuf::from(dir));
        }
    }
    None
}

/// Loads the project the way cargo would for these flags.
pub fn load(sel: &Selection) -> Result<Project, Failure> {
    let mut cmd = MetadataCommand::new();
    cmd.no_deps();
    if let Some(p) = &sel.manifest_path {
        if !p.is_file() {
            return Err(usage(
                Diagnostic::new(format!("manifest path `{}` does not exist", p.display()))
                    .hint("give the path of a package's or workspace's `Cargo.toml`"),
            ));
        }
        cmd.manifest_path(p);
    }
    let meta = cmd.exec().map_err(metadata_failure)?;
    let members: Vec<&cargo_metadata::Package> = meta
        .packages
        .iter()
        .filter(|p| meta.workspace_members.contains(&p.id))
        .collect();
    let chosen: Vec<&cargo_metadata::Package> = if !sel.package.is_empty() {
        let mut out = Vec::new();
        for name in &sel.package {
            match members.iter().find(|p| p.name.as_str() == name) {
                Some(p) => out.push(*p),
                None => {
                    let known: Vec<&str> = members.iter().map(|p| p.name.as_str()).collect();
                    return Err(usage(
                        Diagnostic::new(format!("package `{name}` is not in this workspace"))
                            .hint(format!("packages are: {}", known.join(", "))),
                    ));
                }
            }
        }
        out
    } else if sel.workspace {
        members.clone()
    } else {
        let manifest = match &sel.manifest_path {
            Some(p) => p.canonicalize().ok(),
            None => std::env::current_dir().ok().and_then(|d| find_manifest(&d)),
        };
        let here = manifest.and_then(|m| {
            members
                .iter()
                .find(|p| p.manifest_path.as_std_path().canonicalize().ok().as_ref() == Some(&m))
                .copied()
        });
        match here {
            Some(p) => vec![p],
            // a virtual manifest: cargo's default members
            None => members
                .iter()
                .filter(|p| meta.workspace_default_members.contains(&p.id))
                .copied()
                .collect(),
        }
    };
    let mut packages: Vec<Package> = chosen
        .iter()
        .map(|p| Package {
            name: p.name.to_string(),
            root: p
                .manifest_path
                .parent()
                .map(|d| d.as_std_path().to_path_buf())
                .unwrap_or_default(),
        })
        .collect();
    packages.sort_by(|a, b| a.name.cmp(&b.name));
    packages.dedup();
    // every command would find nothing to do, and to the store reader no package
    // means every package: the report would show other projects' runs
    if packages.is_empty() {
        return Err(usage(
            Diagnostic::new(format!(
                "the workspace at `{}` has no member packages",
                meta.workspace_root
            ))
            .hint("add a package to its `members`, or run it in a package's directory"),
        ));
    }
    Ok(Project {
        workspace_root: meta.workspace_root.as_std_path().to_path_buf(),
        target_dir: meta.target_directory.as_std_path().to_path_buf(),
        build_dir: meta
            .build_directory
            .as_ref()
            .map(|b| b.as_std_path().to_path_buf()),
        packages,
    })
}

/// A failed `cargo metadata`: cargo's own words (without its `error: `, which the front
/// end adds) and a hint: where to run it when there is no package, else to fix what
/// cargo named.
fn metadata_failure(e: cargo_metadata::Error) -> Failure {
    let why = match &e {
        cargo_metadata::Error::CargoMetadata { stderr } => {
            let stderr = stderr.trim();
            stderr.strip_prefix("error: ").unwrap_or(stderr).to_string()
        }
        other => other.to_string(),
    };
    let hint = if why.contains("could not find `Cargo.toml`") {
        "run it in a cargo package's directory, or name one with `--manifest-path PATH/Cargo.toml`"
    } else {
        "fix what cargo names above (`cargo metadata --no-deps` reads the project the same way)"
    };
    usage(Diagnostic::new(format!("could not read the cargo project: {why}")).hint(hint))
}

/// The nearest Cargo.toml at or above `dir`.
fn find_manifest(dir: &Path) -> Option<PathBuf> {
    dir.ancestors()
        .map(|d| d.join("Cargo.toml"))
        .find(|m| m.is_file())
        .and_then(|m| m.canonicalize().ok())
}

/// Every `.rs` file of a package (sources, tests, benches, examples), sorted, as paths
/// relative to the package root with `/` separators; nested packages and `target`
/// directories are skipped.
pub fn rust_files(root: &Path) -> Vec<String> {
    fn walk(root: &Path, dir: &Path, out: &mut Vec<String>) {
        let Ok(entries) = std::fs::read_dir(dir) else {
            return;
        };
        let mut entries: Vec<_> = entries.filter_map(Result::ok).map(|e| e.path()).collect();
        entries.sort();
        for path in entries {
            let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("");
            if path.is_dir() {
                if name == "target" || name.starts_with('.') || path.join("Cargo.toml").is_file() {
                    continue;
                }
                walk(root, &path, out);
            } else if name.ends_with(".rs")
                && let Ok(rel) = path.strip_prefix(root)
            {
                let parts: Vec<String> = rel
                    .components()
                    .map(|c| c.as_os_str().to_string_lossy().into_owned())
                    .collect();
                out.push(parts.join("/"));
            }
        }
    }
    let mut out = Vec::new();
    walk(root, root, &mut out);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn target_dir_is_read_from_cargo_arguments() {
        let args = |a: &[&str]| a.iter().map(|s| s.to_string()).collect::<Vec<_>>();
        assert_eq!(target_dir_arg(&args(&["--target-dir", "x"])), Some("x".into()));
        assert_eq!(
            target_dir_arg(&args(&["-p", "a", "--target-dir=y/z"])),
            Some("y/z".into())
        );
        assert_eq!(target_dir_arg(&args(&["--", "--target-dir", "x"])), None);
        assert_eq!(target_dir_arg(&args(&["--target-dir"])), None);
    }
}
