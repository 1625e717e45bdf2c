//! A package's pins file on disk: read with a located error, written whole or not at
//! all (a build reading it halfway through a write must never see half a file), and the
//! touch that makes cargo rebuild tests compiled before the file existed. The format
//! itself belongs to `heddle-syntax`; this module only moves its text.

use std::fs::File;
use std::io::Write;
use std::path::Path;
use std::time::SystemTime;

use heddle_syntax::PinsFile;

use crate::failure::{Diagnostic, Failure, found, usage};
use crate::sources::Scanned;

/// The package's pins file, `None` when it has none. A file that cannot be read is a
/// usage error (exit code 2) placed at `path:line:col`.
pub fn load(pkg: &Scanned) -> Result<Option<PinsFile>, Failure> {
    located(pkg, PinsFile::load(&pkg.package.root))
}

/// [`load`] that also reads the previous format, for `pin`, which rewrites it.
pub fn load_upgrading(pkg: &Scanned) -> Result<Option<PinsFile>, Failure> {
    located(pkg, PinsFile::load_upgrading(&pkg.package.root))
}

fn located(
    pkg: &Scanned,
    read: Result<Option<PinsFile>, heddle_syntax::pins::PinsError>,
) -> Result<Option<PinsFile>, Failure> {
    read.map_err(|e| {
        let place = match (e.line, e.column) {
            (Some(l), Some(c)) => format!("{}:{l}:{c}", pkg.display(heddle_syntax::pins::PINS_FILE)),
            (Some(l), None) => format!("{}:{l}", pkg.display(heddle_syntax::pins::PINS_FILE)),
            _ => pkg.display(heddle_syntax::pins::PINS_FILE),
        };
        usage(e.diagnostic.at(place))
    })
}

/// Writes `text` to `path` through a temporary file in the same directory and a rename,
/// so readers see the old file or the new one, never a mix.
pub fn write_atomically(path: &Path, text: &str) -> std::io::Result<()> {
    let dir = path.parent().unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        let mut f = File::create(&tmp)?;
        f.write_all(text.as_bytes())?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// Sets a file's modification time to now, so cargo rebuilds the target holding it.
pub fn touch(path: &Path) -> std::io::Result<()> {
    File::options()
        .write(true)
        .open(path)?
        .set_modified(SystemTime::now())
}

/// Writes a package's pins file, as an error in the house style when that fails.
pub fn save(pkg: &Scanned, pins: &PinsFile) -> Result<(), Failure> {
    let path = PinsFile::path(&pkg.package.root);
    write_atomically(&path, &pins.to_toml()).map_err(|e| {
        found(
            Diagnostic::new(format!(
                "cannot write `{}`: {e}",
                pkg.display(heddle_syntax::pins::PINS_FILE)
            ))
            .hint("check that the directory is writable"),
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn atomic_write_replaces_and_leaves_no_temporary() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("heddle-pins.toml");
        write_atomically(&path, "one").unwrap();
        write_atomically(&path, "two").unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "two");
        let names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names.len(), 1, "{names:?}");
    }

    #[test]
    fn touch_moves_the_modification_time_forward() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("a.rs");
        std::fs::write(&path, "fn main() {}").unwrap();
        let old = SystemTime::UNIX_EPOCH + std::time::Duration::from_secs(1_000_000);
        File::options()
            .write(true)
            .open(&path)
            .unwrap()
            .set_modified(old)
            .unwrap();
        touch(&path).unwrap();
        let now = std::fs::metadata(&path).unwrap().modified().unwrap();
        assert!(now > old);
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "fn main() {}");
    }
}
