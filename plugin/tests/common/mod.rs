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
