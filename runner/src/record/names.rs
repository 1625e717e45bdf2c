//! How a row is named and rerun. The expansion chooses each row's function name; these
//! two functions are the only places that join it into a libtest name and a command, for
//! the message a failing row prints and for every report alike.

/// libtest's name of the test `name` in the rows module at `suite` (the module path
/// without the crate root): `roundtrip::row_03`, or just `row_03` at the crate root.
///
/// ```
/// assert_eq!(heddle_test::record::test_path("codec::roundtrip", "row_03"), "codec::roundtrip::row_03");
/// assert_eq!(heddle_test::record::test_path("", "row_03"), "row_03");
/// ```
pub fn test_path(suite: &str, name: &str) -> String {
    if suite.is_empty() {
        name.to_string()
    } else {
        format!("{suite}::{name}")
    }
}

/// The command that reruns exactly the test `test` of target `selector` (`--test hub`;
/// empty when unknown) in package `package`.
///
/// ```
/// assert_eq!(
///     heddle_test::record::rerun_command("demo", "--test hub", "read::row_03"),
///     "cargo test -p demo --test hub read::row_03 -- --exact"
/// );
/// ```
pub fn rerun_command(package: &str, selector: &str, test: &str) -> String {
    let mut cmd = format!("cargo test -p {package}");
    if !selector.is_empty() {
        cmd.push(' ');
        cmd.push_str(selector);
    }
    cmd.push(' ');
    cmd.push_str(test);
    cmd.push_str(" -- --exact");
    cmd
}
