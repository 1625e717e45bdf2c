//! The build-time advice to pin: a spec the engine marks `pin_advised` builds with a
//! warning on the function's name that says so and names the pin command; an ordinary
//! spec in the same file builds without one.

use heddle_e2e::scratch::{CrateDef, Scratch};

const FILE: &str = "tests/wide.rs";

/// 40 two-level factors at strength 3 (the engine advises pinning it: its fast-mode work
/// passes the threshold, see the expansion tests) and a small spec.
fn source() -> String {
    let params: Vec<String> = (0..40)
        .map(|i| format!("#[levels(false, true)] p{i}: bool"))
        .collect();
    format!(
        "use heddle_test::cover;\n\n#[cover(strength = 3)]\nfn wide({}) {{}}\n\n#[cover]\nfn small(#[levels(1, 2)] a: u8, #[levels(3, 4)] b: u8) {{}}\n",
        params.join(", ")
    )
}

#[test]
fn a_costly_spec_warns_when_the_tests_build() {
    let text = source();
    let krate = Scratch::create(&CrateDef {
        name: "e2e_pin_advice",
        files: &[(FILE, text.as_str())],
        ..CrateDef::default()
    })
    .unwrap_or_else(|e| panic!("{e}"));
    let run = krate.cargo(&["test", "--no-run"], None, &[]);
    run.assert_compiled();
    let warnings: Vec<&str> = run
        .stderr
        .split("\nwarning")
        .filter(|w| w.contains("costly to generate"))
        .collect();
    assert_eq!(warnings.len(), 1, "{}", run.stderr);
    let w = warnings[0];
    assert!(
        w.contains("the rows of `wide` are costly to generate on every build"),
        "{w}"
    );
    assert!(w.contains("run `cargo heddle pin`"), "{w}");
    assert!(w.contains(FILE), "the warning points into the test file: {w}");
    assert!(!run.stderr.contains("the rows of `small`"), "{}", run.stderr);
}
