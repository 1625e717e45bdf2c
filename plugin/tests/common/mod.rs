#![allow(dead_code)] // each test binary uses some of these
//! Helpers shared by the plugin's end-to-end tests.

use heddle_generator::Factor;

/// A CSV field without its RFC 4180 quoting.
pub fn unquote(cell: &str) -> String {
    match cell.strip_prefix('"').and_then(|c| c.strip_suffix('"')) {
        Some(inner) => inner.replace("\"\"", "\""),
        None => cell.to_string(),
    }
}

/// Reads CSV rows (a header of factor names, then labels) back into level indices,
/// checking the header and every label on the way. Labels here never hold commas.
pub fn csv_rows(csv: &str, factors: &[Factor]) -> Vec<Vec<u8>> {
    let mut lines = csv.lines();
    let header: Vec<String> = lines.next().expect("a header").split(',').map(unquote).collect();
    let names: Vec<&str> = factors.iter().map(|f| f.name.as_str()).collect();
    assert_eq!(header, names);
    lines
        .map(|l| {
            l.split(',')
                .zip(factors)
                .map(|(cell, f)| {
                    let label = unquote(cell);
                    f.level_index(&label)
                        .unwrap_or_else(|| panic!("`{label}` is not a level of `{}`", f.name))
                })
                .collect()
        })
        .collect()
}

/// Validates JUnit XML against the Jenkins schema shipped in `tests/data` with `xmllint`
/// (Debian's `libxml2-utils`). Returns `Ok(false)` when `xmllint` is missing outside CI
/// (the caller's check is skipped, with a note); in CI (`CI` set) a missing `xmllint`
/// is an error, since `.ci/run` installs it.
pub fn validate_junit(xml: &str) -> Result<bool, String> {
    let schema = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/jenkins-junit-10.xsd");
    let present = std::process::Command::new("xmllint")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success());
    if !present {
        if std::env::var_os("CI").is_some_and(|v| !v.is_empty()) {
            return Err("xmllint is missing on CI: `.ci/run` installs libxml2-utils".into());
        }
        eprintln!(
            "SKIPPED JUnit schema validation: xmllint is not installed (apt-get install libxml2-utils)"
        );
        return Ok(false);
    }
    let dir = tempfile::tempdir().map_err(|e| e.to_string())?;
    let file = dir.path().join("report.xml");
    std::fs::write(&file, xml).map_err(|e| e.to_string())?;
    let out = std::process::Command::new("xmllint")
        .arg("--noout")
        .arg("--schema")
        .arg(&schema)
        .arg(&file)
        .output()
        .map_err(|e| e.to_string())?;
    if out.status.success() {
        Ok(true)
    } else {
        Err(format!(
            "the JUnit report does not validate against {}:\n{}\n{xml}",
            schema.display(),
            String::from_utf8_lossy(&out.stderr)
        ))
    }
}
