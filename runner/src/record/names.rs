//! How a row is named and rerun. The expansion chooses each row's function name; these
//! functions are the only places that join it into a libtest name and a command, for
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
    rerun_command_as(package, selector, test, &RerunForm::default())
}

/// How a rerun command is written: for the runner the row ran under, and with the
/// manifest path when the command is run from elsewhere (a workspace root above a crate
/// outside the workspace).
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct RerunForm {
    /// The row ran under cargo-nextest: `cargo nextest run … -E 'test(=NAME)'`.
    pub nextest: bool,
    /// `--manifest-path PATH`, as the user gave it.
    pub manifest_path: Option<String>,
}

/// [`rerun_command`] in a given form.
///
/// ```
/// use heddle_test::record::{RerunForm, rerun_command_as};
/// let form = RerunForm { nextest: true, manifest_path: Some("demo/Cargo.toml".into()) };
/// assert_eq!(
///     rerun_command_as("demo", "--test hub", "read::row_03", &form),
///     "cargo nextest run --manifest-path demo/Cargo.toml -p demo --test hub -E 'test(=read::row_03)'"
/// );
/// ```
pub fn rerun_command_as(package: &str, selector: &str, test: &str, form: &RerunForm) -> String {
    let mut cmd = String::from(if form.nextest {
        "cargo nextest run"
    } else {
        "cargo test"
    });
    if let Some(m) = &form.manifest_path {
        cmd.push_str(" --manifest-path ");
        cmd.push_str(m);
    }
    cmd.push_str(" -p ");
    cmd.push_str(package);
    if !selector.is_empty() {
        cmd.push(' ');
        cmd.push_str(selector);
    }
    if form.nextest {
        // nextest's filterset for exactly this test name
        cmd.push_str(&format!(" -E 'test(={test})'"));
    } else {
        cmd.push(' ');
        cmd.push_str(test);
        cmd.push_str(" -- --exact");
    }
    cmd
}
