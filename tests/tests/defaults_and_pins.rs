//! Crate defaults from `[package.metadata.heddle]` and the pins file, in one temporary
//! crate built four times: with its defaults, with a pin written through
//! heddle-syntax's writer (and the test file touched, as documented), with a default
//! edited in `Cargo.toml`, and with the pin made stale.

use heddle_e2e::coverage::{all_rows, check_by_definition, engine_spec, verify_recorded};
use heddle_e2e::ensure;
use heddle_e2e::fixtures::{self, KNOBS, KNOBS_FILE, KNOBS_METADATA};
use heddle_e2e::output;
use heddle_e2e::records::check_suite;
use heddle_e2e::scratch::{CrateDef, Scratch};
use heddle_e2e::steps::{Steps, read_store, suite};
use heddle_store::Records;
use heddle_syntax::find::{Found, analyse_source};
use heddle_syntax::{Defaults, Fingerprint, Pin, PinKey, PinsFile};
use heddle_test::record::SpecRecord;

const KRATE: &str = "e2e_knobs";
const PINNED_FN: &str = "overridden";

fn test_args() -> Vec<&'static str> {
    vec!["test", "--test", "knobs"]
}

/// The plugin's reading of the test file, with the crate's own defaults.
fn found(krate: &Scratch) -> Result<Vec<Found>, String> {
    let defaults = Defaults::load(krate.root()).map_err(|e| e.to_string())?;
    analyse_source(KNOBS, &defaults).map_err(|e| e.to_string())
}

fn found_fn<'a>(found: &'a [Found], function: &str) -> Result<&'a Found, String> {
    found
        .iter()
        .find(|f| f.function == function)
        .ok_or_else(|| format!("`{function}` not found in the source"))
}

/// Runs the tests into a fresh store; every suite must pass and its rows must form a
/// covering array of its recorded strength and λ.
fn run_and_read(krate: &Scratch, label: &str) -> Result<Records, String> {
    let store = krate.store_dir(label);
    let run = krate.cargo(&test_args(), Some(&store), &[]);
    ensure!(
        run.succeeded(),
        "`{}` failed:\n{}\n{}",
        run.command,
        run.stderr,
        run.stdout
    );
    let records = read_store(&store)?;
    let tests = output::libtest_results(&run.stdout);
    for s in &records.suites {
        check_suite(s, &tests, &fixtures::never)?;
        verify_recorded(&s.spec)?;
        check_by_definition(&s.spec, &fixtures::always)?;
    }
    ensure!(
        records.suites.len() == 4,
        "{} suites recorded",
        records.suites.len()
    );
    ensure!(
        records.stats.skipped() == 0,
        "skipped: {:?}",
        records.stats.notes()
    );
    Ok(records)
}

fn spec_of<'a>(records: &'a Records, function: &str) -> Result<&'a SpecRecord, String> {
    suite(records, function).map(|s| &s.spec)
}

#[test]
fn crate_defaults_and_pins() {
    let krate = Scratch::create(&CrateDef {
        name: KRATE,
        metadata: Some(KNOBS_METADATA),
        files: &[(KNOBS_FILE, KNOBS)],
        ..CrateDef::default()
    })
    .unwrap_or_else(|e| panic!("{e}"));
    let mut steps = Steps::new();
    let mut first: Option<Records> = None;
    steps.run("defaults apply, the attribute overrides them", || {
        let records = run_and_read(&krate, "defaults")?;
        // [package.metadata.heddle] says strength 3, lambda 2, seed 4242
        for (function, want) in [
            ("defaulted", (3, 2, 4242)),
            ("overridden", (2, 1, 5)),
            ("partly", (3, 1, 4242)),
            // strength 3 capped at the two parameters
            ("capped", (2, 2, 4242)),
        ] {
            let rec = spec_of(&records, function)?;
            let got = (rec.strength, rec.lambda, rec.seed);
            ensure!(
                got == want,
                "`{function}`: (t, λ, seed) = {got:?}, expected {want:?}"
            );
        }
        // the plugin, given the same defaults, computes the fingerprints the build used;
        // without them, another one (defaults are part of the spec)
        let found = found(&krate)?;
        let bare = analyse_source(KNOBS, &Defaults::default()).map_err(|e| e.to_string())?;
        for f in &found {
            let rec = spec_of(&records, &f.function)?;
            let cover = f.spec.as_ref().map_err(|e| e.to_string())?;
            ensure!(
                rec.fingerprint == cover.fingerprint.to_string()
                    && rec.fingerprint == heddle_syntax::fingerprint(&engine_spec(rec)?).to_string(),
                "`{}`: fingerprint {} but the source gives {}",
                f.function,
                rec.fingerprint,
                cover.fingerprint
            );
            let plain = found_fn(&bare, &f.function)?
                .spec
                .as_ref()
                .map_err(|e| e.to_string())?;
            // `overridden` sets every key itself, so the crate's defaults do not matter
            ensure!(
                (plain.fingerprint == cover.fingerprint) == (f.function == PINNED_FN),
                "`{}`: with and without the crate's defaults, fingerprints {} and {}",
                f.function,
                cover.fingerprint,
                plain.fingerprint
            );
        }
        first = Some(records);
        Ok(())
    });

    // rows chosen here, unlike anything the engine makes: the full factorial of
    // `overridden` (2 × 2 × 3 × 2 = 24 rows), last row first
    let levels = [2, 2, 3, 2];
    let mut chosen = all_rows(&levels);
    chosen.reverse();
    let mut pin_fp = None;
    steps.run("a matching pin is used verbatim", || {
        let found = found(&krate)?;
        let f = found_fn(&found, PINNED_FN)?;
        let cover = f.spec.as_ref().map_err(|e| e.to_string())?;
        let mut pins = PinsFile::default();
        pins.insert(
            PinKey::new(KNOBS_FILE, PINNED_FN),
            Pin {
                fingerprint: cover.fingerprint,
                factors: cover.spec.factors.iter().map(|f| f.name.clone()).collect(),
                rows: chosen.clone(),
            },
        );
        pin_fp = Some(cover.fingerprint);
        krate.write(heddle_syntax::pins::PINS_FILE, &pins.to_toml());
        // creating the pins file is not noticed by a build made without it: touch
        krate.touch(KNOBS_FILE);
        let records = run_and_read(&krate, "pinned")?;
        let rec = spec_of(&records, PINNED_FN)?;
        ensure!(rec.pinned, "`{PINNED_FN}` is not marked pinned");
        ensure!(
            rec.rows == chosen,
            "`{PINNED_FN}`: rows {:?}, pinned {chosen:?}",
            rec.rows
        );
        ensure!(
            rec.fingerprint == cover.fingerprint.to_string(),
            "the fingerprint moved"
        );
        let first = first.as_ref().ok_or("the first build failed")?;
        for s in &records.suites {
            if s.spec.function == PINNED_FN {
                continue;
            }
            let before = spec_of(first, &s.spec.function)?;
            ensure!(
                s.spec.same_spec(before) && !s.spec.pinned,
                "`{}`: another function's pin changed its rows",
                s.spec.function
            );
        }
        Ok(())
    });

    steps.run("an edited default rebuilds without a touch", || {
        let manifest = krate.read("Cargo.toml");
        ensure!(
            manifest.contains("\nlambda = 2\n"),
            "unexpected manifest:\n{manifest}"
        );
        krate.write(
            "Cargo.toml",
            &manifest.replace("\nlambda = 2\n", "\nlambda = 3\n"),
        );
        let records = run_and_read(&krate, "lambda3")?;
        for (function, want) in [("defaulted", (3, 3)), ("capped", (2, 3)), ("partly", (3, 1))] {
            let rec = spec_of(&records, function)?;
            ensure!(
                (rec.strength, rec.lambda) == want,
                "`{function}`: (t, λ) = {:?}, expected {want:?}",
                (rec.strength, rec.lambda)
            );
        }
        // `overridden` sets every key itself: its fingerprint, so its pin, still holds
        let rec = spec_of(&records, PINNED_FN)?;
        ensure!(rec.pinned && rec.rows == chosen, "`{PINNED_FN}` lost its pin");
        Ok(())
    });

    steps.run("a stale pin is a compile error naming `cargo heddle pin`", || {
        let fp = pin_fp.ok_or("no pin was written")?;
        let found = found(&krate)?;
        let f = found_fn(&found, PINNED_FN)?;
        let mut pins = PinsFile::default();
        pins.insert(
            PinKey::new(KNOBS_FILE, PINNED_FN),
            Pin {
                // the pin of another spec
                fingerprint: Fingerprint(fp.0 ^ 1),
                factors: vec![],
                rows: chosen.clone(),
            },
        );
        // no touch: edits of an existing pins file are tracked by the build
        krate.write(heddle_syntax::pins::PINS_FILE, &pins.to_toml());
        let store = krate.store_dir("stale");
        let run = krate.cargo(&test_args(), Some(&store), &[]);
        ensure!(
            !run.compiled() && !run.succeeded(),
            "a stale pin compiled:\n{}",
            run.stderr
        );
        let at = format!("--> {KNOBS_FILE}:{}:", f.line);
        for needle in [
            "error: the pin of `overridden` in `heddle-pins.toml`",
            "is stale",
            "`cargo heddle pin`",
            at.as_str(),
        ] {
            ensure!(run.stderr.contains(needle), "no `{needle}` in\n{}", run.stderr);
        }
        // one error for the one stale pin and cargo's own line: no follow-on errors,
        // since the plain function is still emitted
        let errors: Vec<&str> = run.stderr.lines().filter(|l| l.starts_with("error")).collect();
        ensure!(
            errors.len() == 2
                && errors[0].contains("is stale")
                && errors[1].starts_with("error: could not compile"),
            "errors: {errors:?}"
        );
        Ok(())
    });
    steps.finish();
}
