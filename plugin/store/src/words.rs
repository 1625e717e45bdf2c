//! Small pieces of wording shared by everything that talks about the store, so a count
//! reads the same in a note, a report and a command's summary.

/// `1 row`, `2 rows`: a count with the word that agrees with it.
///
/// ```
/// use heddle_store::words::plural;
/// assert_eq!(plural(1, "row", "rows"), "1 row");
/// assert_eq!(plural(0, "row", "rows"), "0 rows");
/// ```
pub fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// The plural ending alone (`""` or `"s"`), for words whose plural adds an `s`.
pub fn s(n: usize) -> &'static str {
    if n == 1 { "" } else { "s" }
}
