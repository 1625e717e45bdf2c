//! Compile-error tests: every bad input of the attribute gives located errors, and the
//! fallback (the plain function) compiles, so no follow-on errors appear. Only failing
//! cases live here: their output never touches the runtime crate.

use std::path::{Path, PathBuf};

use heddle_syntax::paths::relative_to_root;
use heddle_syntax::{Defaults, FollowUp, Pin, PinKey, PinsFile};

/// The crate trybuild builds the cases in: `<target>/tests/trybuild/<crate>` (trybuild's
/// own layout). Its root is the `CARGO_MANIFEST_DIR` the macro sees, so the pins file of
/// the `pins/` cases must be written there.
fn trybuild_crate_root() -> PathBuf {
    let tmp = Path::new(env!("CARGO_TARGET_TMPDIR"));
    let target = tmp.parent().expect("CARGO_TARGET_TMPDIR is `<target>/tmp`");
    target.join("tests").join("trybuild").join(env!("CARGO_PKG_NAME"))
}

/// Writes the pins file the `pins/` cases read: a pin with a wrong fingerprint for
/// `stale_pin`, one with the right fingerprint (computed through the plugin's path,
/// so macro and plugin must agree) but rows of the wrong width for `misfit_pin`, and
/// follow-up rows of another spec for `stale_followup`.
fn write_pins() {
    let root = trybuild_crate_root();
    std::fs::create_dir_all(&root).expect("the trybuild directory can be created");
    let here = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut pins = PinsFile::default();

    let stale = here.join("tests/ui/pins/stale.rs");
    pins.insert(
        PinKey::new(relative_to_root(&root, &stale, None), "stale_pin"),
        Pin {
            fingerprint: heddle_syntax::Fingerprint(0x0123_4567_89ab_cdef),
            factors: vec!["a".into(), "b".into()],
            rows: vec![vec![0, 0], vec![1, 1]],
        },
    );

    let misfit = here.join("tests/ui/pins/does_not_fit.rs");
    let src = std::fs::read_to_string(&misfit).expect("the case exists");
    let found = heddle_syntax::find::analyse_source(&src, &Defaults::default()).expect("the case parses");
    let spec = found[0].spec.as_ref().expect("the case's spec is valid");
    pins.insert(
        PinKey::new(relative_to_root(&root, &misfit, None), "misfit_pin"),
        Pin {
            fingerprint: spec.fingerprint,
            factors: vec!["a".into(), "b".into()],
            rows: vec![vec![0, 0], vec![1]],
        },
    );
    // follow-up rows proposed for another spec than `stale_followup`'s
    let followed = here.join("tests/ui/pins/stale_followup.rs");
    pins.set_followup(
        PinKey::new(relative_to_root(&root, &followed, None), "stale_followup"),
        Some(FollowUp {
            fingerprint: heddle_syntax::Fingerprint(0x0fed_cba9_8765_4321),
            rows: vec![vec![1, 0]],
        }),
    );
    std::fs::write(PinsFile::path(&root), pins.to_toml()).expect("the pins file can be written");
}

#[test]
fn ui() {
    write_pins();
    let t = trybuild::TestCases::new();
    for topic in [
        "keys",
        "values",
        "params",
        "levels",
        "excludes",
        "item",
        "signature",
        "accumulated",
        "pins",
        "require",
        "budget",
        "focus",
        "nesting",
    ] {
        t.compile_fail(format!("tests/ui/{topic}/*.rs"));
    }
}
