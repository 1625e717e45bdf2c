//! `cargo heddle pin`, `check` and `show` end to end: the built binary against temporary
//! crates. These commands only read sources and run `cargo metadata --no-deps`, so the
//! temporary crates have no dependencies and are never built.
//!
//! Rows are judged with the engine's independent checker (`heddle_generator::verify`) on
//! specs written out here by hand from the test sources (labels are the level
//! expressions' text), not with the spec the program computed.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::time::{Duration, SystemTime};

mod common;

use common::csv_rows;
use heddle_generator::{Expr, Factor, Spec, verify};
use heddle_syntax::{PinKey, PinsFile};

/// A temporary crate named `demo` with no dependencies.
struct Crate {
    dir: tempfile::TempDir,
}

impl Crate {
    fn new(files: &[(&str, &str)]) -> Crate {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let c = Crate { dir };
        c.write(
            "Cargo.toml",
            "[package]\nname = \"demo\"\nversion = \"0.1.0\"\nedition = \"2024\"\n\n[workspace]\n",
        );
        c.write("src/lib.rs", "");
        for (path, text) in files {
            c.write(path, text);
        }
        c
    }

    fn root(&self) -> &Path {
        self.dir.path()
    }

    fn path(&self, rel: &str) -> PathBuf {
        self.root().join(rel)
    }

    fn write(&self, rel: &str, text: &str) {
        let p = self.path(rel);
        std::fs::create_dir_all(p.parent().unwrap()).unwrap();
        std::fs::write(p, text).unwrap();
    }

    fn read(&self, rel: &str) -> String {
        std::fs::read_to_string(self.path(rel)).unwrap()
    }

    fn heddle(&self, args: &[&str]) -> Run {
        let out = Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
            .arg("heddle")
            .args(args)
            .current_dir(self.root())
            .output()
            .expect("the binary runs");
        Run(out)
    }

    fn pins(&self) -> PinsFile {
        PinsFile::parse(&self.read("heddle-pins.toml")).expect("the pins file parses")
    }

    fn rows(&self, file: &str, function: &str) -> Vec<Vec<u8>> {
        self.pins()
            .get(&PinKey::new(file, function))
            .unwrap_or_else(|| panic!("a pin for {function}"))
            .rows
            .clone()
    }
}

struct Run(Output);

impl Run {
    fn code(&self) -> i32 {
        self.0.status.code().expect("an exit code")
    }
    fn stdout(&self) -> String {
        String::from_utf8(self.0.stdout.clone()).unwrap()
    }
    fn stderr(&self) -> String {
        String::from_utf8(self.0.stderr.clone()).unwrap()
    }
    #[track_caller]
    fn ok(&self) -> &Self {
        assert_eq!(
            self.code(),
            0,
            "stdout:\n{}\nstderr:\n{}",
            self.stdout(),
            self.stderr()
        );
        self
    }
    #[track_caller]
    fn fails(&self, code: i32) -> &Self {
        assert_eq!(
            self.code(),
            code,
            "stdout:\n{}\nstderr:\n{}",
            self.stdout(),
            self.stderr()
        );
        self
    }
}

const CODEC: &str = "\
use heddle_test::cover;

#[cover(strength = 2, lambda = 2, seed = 11)]
fn roundtrip(
    #[levels(1, 8, 64)] batch: usize,
    #[levels(Codec::Plain, Codec::Rle, Codec::Delta)] codec: Codec,
    #[levels(true, false)] checksum: bool,
) {
}

mod inner {
    #[cover]
    fn small(#[levels(1, 2)] a: u8, #[levels(3, 4)] b: u8) {}
}
";

fn roundtrip_factors(batch: &[&str]) -> Vec<Factor> {
    vec![
        Factor::new("batch", batch.iter().copied()),
        Factor::new("codec", ["Codec::Plain", "Codec::Rle", "Codec::Delta"]),
        Factor::new("checksum", ["true", "false"]),
    ]
}

fn small_factors() -> Vec<Factor> {
    vec![Factor::new("a", ["1", "2"]), Factor::new("b", ["3", "4"])]
}

#[test]
fn pin_then_check_passes() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    // no pins file: the crate does not pin, the build generates; check passes
    let r = c.heddle(&["check"]);
    r.ok();
    assert!(
        r.stdout()
            .contains("2 annotated functions ok (0 pinned, 2 generated"),
        "{}",
        r.stdout()
    );

    let r = c.heddle(&["pin"]);
    r.ok();
    let out = r.stdout();
    assert!(out.contains("tests/codec.rs:3 roundtrip: new, "), "{out}");
    assert!(out.contains("tests/codec.rs:12 small: new, 4 rows"), "{out}");
    assert!(out.contains("heddle-pins.toml: wrote 2 pins"), "{out}");
    // not on a terminal: no progress bar, and nothing went wrong
    assert_eq!(r.stderr(), "");

    let spec = Spec::new(roundtrip_factors(&["1", "8", "64"])).lambda(2);
    let rows = c.rows("tests/codec.rs", "roundtrip");
    verify(&spec, &rows).expect("the pinned rows cover every pair twice");
    // Kleitman & Spencer 1973: CAN(2, 2, 2) = 4, reached by all four pairs
    assert_eq!(c.rows("tests/codec.rs", "small").len(), 4);
    verify(&Spec::new(small_factors()), &c.rows("tests/codec.rs", "small")).unwrap();

    let r = c.heddle(&["check"]);
    r.ok();
    assert_eq!(
        r.stdout().trim(),
        "heddle check: 2 annotated functions ok (2 pinned, 0 generated at build time; 1 package)"
    );
}

#[test]
fn pin_is_deterministic_and_idempotent() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    let first = c.read("heddle-pins.toml");
    std::fs::remove_file(c.path("heddle-pins.toml")).unwrap();
    c.heddle(&["pin"]).ok();
    assert_eq!(c.read("heddle-pins.toml"), first, "two runs from scratch differ");
    let r = c.heddle(&["pin"]);
    r.ok();
    assert!(r.stdout().contains("roundtrip: up to date"), "{}", r.stdout());
    assert!(
        r.stdout().contains("heddle-pins.toml: up to date, 2 pins"),
        "{}",
        r.stdout()
    );
    assert_eq!(c.read("heddle-pins.toml"), first);
}

#[test]
fn pin_touches_the_test_files_it_pinned() {
    let c = Crate::new(&[("tests/codec.rs", CODEC), ("tests/other.rs", "fn plain() {}\n")]);
    let old = SystemTime::UNIX_EPOCH + Duration::from_secs(1_000_000_000);
    for f in ["tests/codec.rs", "tests/other.rs"] {
        std::fs::File::options()
            .write(true)
            .open(c.path(f))
            .unwrap()
            .set_modified(old)
            .unwrap();
    }
    let r = c.heddle(&["pin"]);
    r.ok();
    assert!(r.stdout().contains("touched 1 test file"), "{}", r.stdout());
    let mtime = |f: &str| std::fs::metadata(c.path(f)).unwrap().modified().unwrap();
    assert!(mtime("tests/codec.rs") > old);
    assert_eq!(mtime("tests/other.rs"), old, "a file without pins is left alone");
    assert_eq!(
        c.read("tests/codec.rs"),
        CODEC,
        "touching does not change the contents"
    );
}

/// `rows` restricted to the columns `cols` (positions in each row).
fn project(rows: &[Vec<u8>], cols: &[usize]) -> Vec<Vec<u8>> {
    rows.iter()
        .map(|r| cols.iter().map(|&c| r[c]).collect())
        .collect()
}

#[test]
fn spec_changes_fail_check_and_pin_keeps_the_old_rows() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    let old_round = c.rows("tests/codec.rs", "roundtrip");
    let old_small = c.rows("tests/codec.rs", "small");

    // a level added and lambda raised on one function, a factor added on the other
    let changed = CODEC
        .replace("lambda = 2", "lambda = 3")
        .replace("#[levels(1, 8, 64)]", "#[levels(1, 8, 64, 512)]")
        .replace(
            "#[levels(3, 4)] b: u8)",
            "#[levels(3, 4)] b: u8, #[levels(5, 6, 7)] c: u8)",
        );
    c.write("tests/codec.rs", &changed);

    let r = c.heddle(&["check"]);
    r.fails(1);
    let err = r.stderr();
    assert!(
        err.contains("tests/codec.rs:3: the pin of `roundtrip` is stale: level `512` of `batch` added; lambda raised from 2 to 3"),
        "{err}"
    );
    assert!(
        err.contains("tests/codec.rs:12: the pin of `small` is stale: factor `c` added"),
        "{err}"
    );
    assert!(err.contains("2 of 2 annotated functions fail the check"), "{err}");

    let r = c.heddle(&["pin"]);
    r.ok();
    let out = r.stdout();
    let new_round = c.rows("tests/codec.rs", "roundtrip");
    let new_small = c.rows("tests/codec.rs", "small");
    // every old row is kept, first and in order; labels kept their indices
    assert_eq!(&new_round[..old_round.len()], &old_round[..]);
    assert_eq!(project(&new_small[..old_small.len()], &[0, 1]), old_small);
    let kept = format!(
        "roundtrip: kept {}, added {}, dropped 0, {} rows",
        old_round.len(),
        new_round.len() - old_round.len(),
        new_round.len()
    );
    assert!(out.contains(&kept), "{out}");
    assert!(
        out.contains(&format!("small: kept {}, added", old_small.len())),
        "{out}"
    );

    let round = Spec::new(roundtrip_factors(&["1", "8", "64", "512"])).lambda(3);
    verify(&round, &new_round).expect("the new roundtrip rows cover every pair three times");
    let mut small = small_factors();
    small.push(Factor::new("c", ["5", "6", "7"]));
    verify(&Spec::new(small), &new_small).expect("the new small rows cover every pair");
    c.heddle(&["check"]).ok();
}

#[test]
fn removed_levels_and_functions_drop_their_rows() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    let old = c.rows("tests/codec.rs", "roundtrip");
    // `Codec::Rle` goes, and `small` with its module
    let cut = CODEC.find("mod inner").unwrap();
    let changed = CODEC[..cut].replace(
        "Codec::Plain, Codec::Rle, Codec::Delta",
        "Codec::Plain, Codec::Delta",
    );
    c.write("tests/codec.rs", &changed);
    let r = c.heddle(&["pin"]);
    r.ok();
    let out = r.stdout();
    assert!(
        out.contains("tests/codec.rs small: removed, the function no longer exists"),
        "{out}"
    );
    assert!(c.pins().get(&PinKey::new("tests/codec.rs", "small")).is_none());

    // old rows not using Rle (index 1), with Delta renumbered from 2 to 1, in order
    let survivors: Vec<Vec<u8>> = old
        .iter()
        .filter(|r| r[1] != 1)
        .map(|r| vec![r[0], if r[1] == 2 { 1 } else { 0 }, r[2]])
        .collect();
    assert!(survivors.len() < old.len());
    let new = c.rows("tests/codec.rs", "roundtrip");
    let line = out
        .lines()
        .find(|l| l.contains("roundtrip: kept "))
        .expect("a kept line");
    let number = |after: &str| -> usize {
        let rest = &line[line.find(after).unwrap() + after.len()..];
        rest.split(|ch: char| !ch.is_ascii_digit())
            .next()
            .unwrap()
            .parse()
            .unwrap()
    };
    let (kept, dropped) = (number("kept "), number("dropped "));
    assert_eq!(kept + dropped, old.len());
    assert!(line.contains("use a removed level"), "{line}");
    // the kept rows lead the new ones and are survivors, in their old order (the
    // survivors left out added nothing the earlier ones had not covered)
    let mut rest = survivors.iter();
    for row in &new[..kept] {
        assert!(rest.any(|s| s == row), "{row:?} is not a survivor in order");
    }
    let spec = Spec::new(vec![
        Factor::new("batch", ["1", "8", "64"]),
        Factor::new("codec", ["Codec::Plain", "Codec::Delta"]),
        Factor::new("checksum", ["true", "false"]),
    ])
    .lambda(2);
    verify(&spec, &new).unwrap();
}

#[test]
fn new_excludes_drop_the_rows_they_rule_out() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    let old = c.rows("tests/codec.rs", "roundtrip");
    c.write(
        "tests/codec.rs",
        &CODEC.replace(
            "seed = 11)",
            "seed = 11, exclude(batch == 1 && codec == Codec::Delta))",
        ),
    );
    c.heddle(&["check"]).fails(1);
    let r = c.heddle(&["pin"]);
    r.ok();
    let new = c.rows("tests/codec.rs", "roundtrip");
    let excluded = old.iter().filter(|r| r[0] == 0 && r[1] == 2).count();
    assert!(excluded > 0);
    assert!(
        r.stdout().contains(&format!("{excluded} now excluded")),
        "{}",
        r.stdout()
    );
    let ex = Expr::is(0, 0).and(Expr::is(1, 2));
    let spec = Spec::new(roundtrip_factors(&["1", "8", "64"]))
        .lambda(2)
        .exclude(ex);
    let cov = verify(&spec, &new).expect("no row excluded, every possible pair twice");
    assert_eq!(
        cov.impossible, 1,
        "only (batch = 1, codec = Codec::Delta) is impossible"
    );
}

#[test]
fn a_pin_that_does_not_cover_fails_check_with_the_first_uncovered_interaction() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    // drop the row holding (a = 2, b = 4) from `small`'s four: that pair alone is lost
    let text = c.read("heddle-pins.toml");
    let start = text.find("[pins.\"tests/codec.rs\".small]").unwrap();
    let (head, tail) = text.split_at(start);
    assert!(tail.contains("    [1, 1],\n"));
    c.write(
        "heddle-pins.toml",
        &format!("{head}{}", tail.replace("    [1, 1],\n", "")),
    );

    let r = c.heddle(&["check"]);
    r.fails(1);
    let err = r.stderr();
    assert!(
        err.contains(
            "tests/codec.rs:12: the rows of `small` do not cover its spec: \
             interaction (a = 2, b = 4) is covered 0 times, needs 1"
        ),
        "{err}"
    );
    assert!(
        err.contains("1 of 2 annotated functions fails the check"),
        "{err}"
    );

    // pin repairs it: the three remaining rows are kept and the lost one added
    let r = c.heddle(&["pin"]);
    r.ok();
    assert!(
        r.stdout().contains("small: kept 3, added 1, dropped 0, 4 rows"),
        "{}",
        r.stdout()
    );
    c.heddle(&["check"]).ok();
}

#[test]
fn a_missing_pin_fails_check_only_in_a_crate_that_pins() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    c.write(
        "tests/more.rs",
        "#[heddle_test::cover]\nfn extra(#[levels(1, 2)] x: u8, #[levels(3, 4)] y: u8) {}\n",
    );
    let r = c.heddle(&["check"]);
    r.fails(1);
    assert!(
        r.stderr()
            .contains("tests/more.rs:1: `extra` has no pin in `heddle-pins.toml`"),
        "{}",
        r.stderr()
    );
    // without a pins file the same function is fine: the build generates its rows
    std::fs::remove_file(c.path("heddle-pins.toml")).unwrap();
    c.heddle(&["check"]).ok();
}

#[test]
fn a_pins_file_with_a_syntax_error_is_a_located_usage_error() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    let text = c.read("heddle-pins.toml");
    // break the first row of the first pin with a bare word, a TOML syntax error whose
    // place is certain: the `x` at column 12 of that line
    let rows_at = text.find("rows = [\n").unwrap();
    let line = text[..rows_at].matches('\n').count() + 2; // 1-based line of the first row
    let row_start = rows_at + "rows = [\n".len();
    let row_end = row_start + text[row_start..].find('\n').unwrap();
    let broken = format!("{}    [0, 0, x],{}", &text[..row_start], &text[row_end..]);
    c.write("heddle-pins.toml", &broken);
    for cmd in ["check", "pin"] {
        let r = c.heddle(&[cmd]);
        r.fails(2);
        let err = r.stderr();
        assert!(
            err.starts_with(&format!("error: heddle-pins.toml:{line}:12: ")),
            "{cmd}: {err}"
        );
        assert!(err.contains("hint: "), "{err}");
    }
    assert_eq!(
        c.read("heddle-pins.toml"),
        broken,
        "pin does not overwrite a broken file"
    );
}

#[test]
fn duplicate_names_in_one_file_are_refused_and_keep_their_pins() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    let before = c.rows("tests/codec.rs", "small");
    let dup = format!("{CODEC}\nmod again {{\n    #[cover]\n    fn small(#[levels(5, 6)] x: u8) {{}}\n}}\n");
    c.write("tests/codec.rs", &dup);
    let second = dup
        .lines()
        .enumerate()
        .filter(|(_, l)| l.trim() == "#[cover]")
        .nth(1)
        .unwrap()
        .0
        + 1;
    for cmd in ["check", "pin"] {
        let r = c.heddle(&[cmd]);
        r.fails(1);
        let err = r.stderr();
        assert!(
            err.contains(&format!(
                "tests/codec.rs:{second}: `small` is annotated with `#[cover]` a second time in this file (first at line 12)"
            )),
            "{cmd}: {err}"
        );
    }
    // pin neither removed nor changed the pin the two now contend for
    assert_eq!(c.rows("tests/codec.rs", "small"), before);
}

#[test]
fn sources_that_do_not_parse_are_located_and_protect_their_pins() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    let broken = format!("{}\nfn oops( {{\n", CODEC);
    c.write("tests/codec.rs", &broken);
    let r = c.heddle(&["check"]);
    r.fails(1);
    assert!(r.stderr().contains("error: tests/codec.rs:"), "{}", r.stderr());
    assert!(r.stderr().contains("does not parse as Rust"), "{}", r.stderr());
    assert!(r.stderr().contains("1 file does not parse"), "{}", r.stderr());
    c.heddle(&["pin"]).fails(1);
    // the pins of the unreadable file were not taken for deleted functions
    assert_eq!(c.pins().pins.len(), 2);
}

#[test]
fn invalid_attributes_are_reported_at_their_tokens() {
    let src = "#[cover(lambda = 0)]\nfn bad(#[levels(1, 2)] a: u8, #[levels(3, 4)] b: u8) {}\n";
    let c = Crate::new(&[("tests/bad.rs", src)]);
    let r = c.heddle(&["check"]);
    r.fails(1);
    // `0` is on line 1 at column 18
    assert!(
        r.stderr()
            .contains("error: tests/bad.rs:1:18: in `bad`: `lambda = 0`"),
        "{}",
        r.stderr()
    );
    assert!(
        r.stderr().contains("1 of 1 annotated function fail"),
        "{}",
        r.stderr()
    );
}

#[test]
fn unknown_package_and_bad_flags_are_usage_errors() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    for cmd in ["pin", "check"] {
        let r = c.heddle(&[cmd, "-p", "nope"]);
        r.fails(2);
        assert!(
            r.stderr().contains("package `nope` is not in this workspace"),
            "{}",
            r.stderr()
        );
    }
    let r = c.heddle(&["show", "roundtrip", "-p", "nope"]);
    r.fails(2);
    let r = c.heddle(&["pin", "--budget", "10"]);
    r.fails(2);
    assert!(
        r.stderr().contains("`--budget` applies to `--effort tight` only"),
        "{}",
        r.stderr()
    );
    assert!(!c.path("heddle-pins.toml").exists());
    // the row budget of `test` is refused before anything runs
    for (bad, says) in [
        ("0", "a budget of `0` rows runs nothing"),
        ("150%", "is not a share between 1% and 100%"),
    ] {
        let r = c.heddle(&["test", "--budget", bad]);
        r.fails(2);
        assert!(r.stderr().contains(says), "{}", r.stderr());
        assert!(!r.stderr().contains("heddle: run "), "{}", r.stderr());
    }
    // no rounds is refused before anything runs, with a hint
    let r = c.heddle(&["test", "--repeat", "0"]);
    r.fails(2);
    assert!(
        r.stderr().contains("`--repeat` must be at least 1\n  hint: "),
        "{}",
        r.stderr()
    );
    // the selection flags reach the project from elsewhere too
    let manifest = c.path("Cargo.toml");
    let r = Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
        .args(["heddle", "check", "--manifest-path"])
        .arg(&manifest)
        .current_dir(std::env::temp_dir())
        .output()
        .unwrap();
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
}

#[test]
fn outside_any_package_every_command_says_where_to_run_it() {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let above: Vec<PathBuf> = dir
        .path()
        .ancestors()
        .map(|d| d.join("Cargo.toml"))
        .filter(|m| m.is_file())
        .collect();
    assert!(
        above.is_empty(),
        "the temporary directory must lie outside any package: {above:?}"
    );
    let missing = dir.path().join("nope/Cargo.toml");
    let missing = missing.to_str().expect("a UTF-8 temporary path");
    for args in [
        &["pin"][..],
        &["check"],
        &["show", "f"],
        &["test"],
        &["report"],
        &["probe"],
        &["runs"],
        &["check", "--manifest-path", missing],
    ] {
        let out = Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
            .arg("heddle")
            .args(args)
            .current_dir(dir.path())
            .output()
            .expect("the binary runs");
        let r = Run(out);
        r.fails(2);
        let err = r.stderr();
        // cargo's reason once, with no `error: error:`, then a hint on a line of its own
        assert!(
            err.starts_with("error: ") && !err.contains("error: error:"),
            "{args:?}: {err}"
        );
        assert!(err.contains("\n  hint: "), "{args:?}: {err}");
    }
}

/// Test names and rerun commands print a raw identifier as `r#match`, so `show` and
/// `probe` take that form as well as the plain one.
#[test]
fn show_takes_a_raw_name_as_the_test_runner_prints_it() {
    let src = "use heddle_test::cover;\n\nmod r#in {\n    #[cover]\n    fn r#match(#[levels(1, 2)] a: u8, #[levels(3, 4)] b: u8) {}\n}\n";
    let c = Crate::new(&[("tests/names.rs", src)]);
    for name in [
        "r#match",
        "match",
        "r#in::r#match",
        "in::match",
        "tests/names.rs::r#match",
    ] {
        let r = c.heddle(&["show", name, "--format", "csv"]);
        r.ok();
        assert_eq!(r.stdout().lines().next(), Some("a,b"), "{name}");
    }
}

/// A round that fails before any row runs (here, a test that does not compile) would
/// fail the same way each time, so `--repeat` stops after it instead of rebuilding.
#[test]
fn repeat_stops_after_a_round_that_ran_nothing() {
    let c = Crate::new(&[("tests/broken.rs", "fn oops( {\n")]);
    let r = c.heddle(&["test", "--repeat", "3", "--quiet"]);
    assert_ne!(r.code(), 0, "{}", r.stderr());
    let err = r.stderr();
    assert!(err.contains("(round 1 of 3)"), "{err}");
    assert!(!err.contains("round 2 of 3"), "{err}");
    assert!(err.contains("so the 2 rounds left are skipped"), "{err}");
    assert!(err.contains("recorded nothing"), "{err}");
}

#[test]
fn the_pin_summary_counts_in_words() {
    let src = "#[cover]\nfn lone(#[levels(1, 2)] a: u8, #[levels(3, 4)] b: u8) {}\n";
    let c = Crate::new(&[("tests/lone.rs", src)]);
    let r = c.heddle(&["pin"]);
    r.ok();
    assert!(
        r.stdout().contains("heddle-pins.toml: wrote 1 pin (1 new, "),
        "{}",
        r.stdout()
    );
}

#[test]
fn show_unknown_names_list_near_matches() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    let r = c.heddle(&["show", "roundtirp"]);
    r.fails(2);
    let err = r.stderr();
    assert!(err.contains("no annotated function matches `roundtirp`"), "{err}");
    assert!(err.contains("did you mean `tests/codec.rs::roundtrip`?"), "{err}");
    assert_eq!(r.stdout(), "");
    let r = c.heddle(&["show", "zzzzzzzz"]);
    r.fails(2);
    assert!(
        r.stderr()
            .contains("`tests/codec.rs::roundtrip`, `tests/codec.rs::small`"),
        "{}",
        r.stderr()
    );
}

#[test]
fn show_csv_prints_exactly_the_rows() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    // unpinned: the rows the build would generate
    let r = c.heddle(&["show", "roundtrip", "--format", "csv"]);
    r.ok();
    let factors = roundtrip_factors(&["1", "8", "64"]);
    let generated = csv_rows(&r.stdout(), &factors);
    verify(&Spec::new(factors.clone()).lambda(2), &generated).unwrap();
    assert!(r.stderr().contains("generated by the engine"), "{}", r.stderr());
    // pinned: the pin's rows, in order
    c.heddle(&["pin"]).ok();
    let r = c.heddle(&["show", "tests/codec.rs::roundtrip", "--format", "csv"]);
    r.ok();
    assert_eq!(
        csv_rows(&r.stdout(), &factors),
        c.rows("tests/codec.rs", "roundtrip")
    );
    assert!(
        r.stderr().contains("pinned in `heddle-pins.toml`"),
        "{}",
        r.stderr()
    );
}

#[test]
fn show_table_has_labels_row_names_statistics_and_bounds() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    // a module path suffix names the function too
    let r = c.heddle(&["show", "inner::small"]);
    r.ok();
    let out = r.stdout();
    assert!(
        out.starts_with("small (tests/codec.rs:12, test path `inner::small`)\n"),
        "{out}"
    );
    let rows = c.rows("tests/codec.rs", "small");
    let labels = [["1", "2"], ["3", "4"]];
    for (i, row) in rows.iter().enumerate() {
        let want = format!(
            "row_{i:02}  {}  {}",
            labels[0][row[0] as usize], labels[1][row[1] as usize]
        );
        assert!(out.lines().any(|l| l.trim_end() == want), "{want} in\n{out}");
    }
    // one 2-set of columns with 2 x 2 combinations (counting); lower bound
    // λ·v1·v2 = 4 (the counting bound, e.g. Colbourn 2004, "Combinatorial aspects of
    // covering arrays"); expected-value bound: 4·(3/4)^N < 1 first at N = 5
    assert!(
        out.contains("4 rows; lower bound 4, expected-value bound 5"),
        "{out}"
    );
    assert!(
        out.contains("coverage: 4 interactions, 0 impossible, each possible one covered at least 1 times"),
        "{out}"
    );

    let r = c.heddle(&["show", "roundtrip"]);
    r.ok();
    let out = r.stdout();
    assert!(
        out.contains("strength 2, lambda 2, seed 11; rows pinned"),
        "{out}"
    );
    // 3·3 + 3·2 + 3·2 = 21 pairs; lower bound 2·3·3 = 18
    assert!(out.contains("lower bound 18"), "{out}");
    assert!(
        out.contains("coverage: 21 interactions, 0 impossible, each possible one covered at least 2"),
        "{out}"
    );
    let header = out.lines().find(|l| l.starts_with("row ")).unwrap();
    let cols: Vec<&str> = header.split_whitespace().collect();
    assert_eq!(cols, ["row", "batch", "codec", "checksum"]);
}

#[test]
fn show_of_an_ambiguous_name_asks_for_the_file() {
    let c = Crate::new(&[("tests/codec.rs", CODEC), ("tests/again.rs", CODEC)]);
    let r = c.heddle(&["show", "small"]);
    r.fails(2);
    assert!(
        r.stderr().contains("`small` names 2 annotated functions"),
        "{}",
        r.stderr()
    );
    c.heddle(&["show", "tests/again.rs::small"]).ok();
}

#[test]
fn workspaces_pin_each_member_in_its_own_file() {
    let dir = tempfile::tempdir().unwrap();
    let write = |rel: &str, text: &str| {
        let p = dir.path().join(rel);
        std::fs::create_dir_all(p.parent().unwrap()).unwrap();
        std::fs::write(p, text).unwrap();
    };
    write(
        "Cargo.toml",
        "[workspace]\nresolver = \"3\"\nmembers = [\"crates/a\", \"crates/b\"]\n",
    );
    for name in ["a", "b"] {
        write(
            &format!("crates/{name}/Cargo.toml"),
            &format!("[package]\nname = \"{name}\"\nversion = \"0.1.0\"\nedition = \"2024\"\n"),
        );
        write(&format!("crates/{name}/src/lib.rs"), "");
        write(&format!("crates/{name}/tests/t.rs"), CODEC);
    }
    let heddle = |args: &[&str]| {
        Run(Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
            .arg("heddle")
            .args(args)
            .current_dir(dir.path())
            .output()
            .unwrap())
    };
    let r = heddle(&["pin", "-p", "b"]);
    r.ok();
    assert!(
        r.stdout().contains("crates/b/tests/t.rs:3 roundtrip: new"),
        "{}",
        r.stdout()
    );
    assert!(
        r.stdout().contains("crates/b/heddle-pins.toml: wrote 2 pins"),
        "{}",
        r.stdout()
    );
    assert!(!dir.path().join("crates/a/heddle-pins.toml").exists());
    // a pins only where it was asked to; the workspace as a whole passes check (a
    // generates at build time), and keys stay relative to each crate's root
    let r = heddle(&["check", "--workspace"]);
    r.ok();
    assert!(
        r.stdout()
            .contains("4 annotated functions ok (2 pinned, 2 generated at build time; 2 packages)")
    );
    let text = std::fs::read_to_string(dir.path().join("crates/b/heddle-pins.toml")).unwrap();
    assert!(text.contains("[pins.\"tests/t.rs\".roundtrip]"), "{text}");
    // the same name in two packages needs the file to tell them apart
    heddle(&["show", "roundtrip"]).fails(2);
    heddle(&["show", "crates/a/tests/t.rs::roundtrip"]).ok();
}

#[test]
fn check_warns_about_pins_without_a_function_and_show_refuses_stale_pins() {
    let c = Crate::new(&[("tests/codec.rs", CODEC), ("tests/gone.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    std::fs::remove_file(c.path("tests/gone.rs")).unwrap();
    let text = c.read("heddle-pins.toml");
    let header = text.find("[pins.\"tests/gone.rs\".roundtrip]").unwrap();
    let line = text[..header].matches('\n').count() + 1;
    let r = c.heddle(&["check"]);
    r.ok();
    let want = format!(
        "warning: heddle-pins.toml:{line}: the pin of `roundtrip` in `tests/gone.rs` belongs to no function"
    );
    assert!(r.stderr().contains(&want), "{want} in\n{}", r.stderr());
    let r = c.heddle(&["pin"]);
    r.ok();
    assert!(
        r.stdout().contains("tests/gone.rs roundtrip: removed"),
        "{}",
        r.stdout()
    );
    assert!(
        r.stdout().contains("(0 new, 0 changed, 2 up to date, 2 removed)"),
        "{}",
        r.stdout()
    );

    c.write("tests/codec.rs", &CODEC.replace("lambda = 2", "lambda = 3"));
    let r = c.heddle(&["show", "roundtrip"]);
    r.fails(1);
    assert!(
        r.stderr().contains("tests/codec.rs:3: the pin of `roundtrip`"),
        "{}",
        r.stderr()
    );
    assert!(r.stderr().contains("is stale"), "{}", r.stderr());
    assert_eq!(r.stdout(), "");
}

#[test]
fn a_required_row_makes_the_pin_stale_and_comes_first_when_repinned() {
    let c = Crate::new(&[("tests/codec.rs", CODEC)]);
    c.heddle(&["pin"]).ok();
    let old = c.rows("tests/codec.rs", "roundtrip");
    // a configuration the old rows lack: batch 64 with Delta, checksum left to the engine
    let (b, k) = (2u8, 2u8);
    let already = old.iter().position(|r| r[0] == b && r[1] == k);
    let changed = CODEC.replace(
        "seed = 11)]",
        "seed = 11, require(codec = Codec::Delta, batch = 64))]",
    );
    c.write("tests/codec.rs", &changed);
    let r = c.heddle(&["check"]);
    r.fails(1);
    match already {
        // the old first row is another one: the change is named
        Some(i) if i != 0 => assert!(
            r.stderr()
                .contains("the pin of `roundtrip` is stale: the required rows changed"),
            "{}",
            r.stderr()
        ),
        _ => assert!(
            r.stderr().contains("the pin of `roundtrip` is stale"),
            "{}",
            r.stderr()
        ),
    }
    c.heddle(&["pin"]).ok();
    let new = c.rows("tests/codec.rs", "roundtrip");
    assert_eq!((new[0][0], new[0][1]), (b, k), "{new:?}");
    let mut spec = Spec::new(roundtrip_factors(&["1", "8", "64"])).lambda(2);
    spec.required = vec![vec![b, k, heddle_generator::UNSET]];
    verify(&spec, &new).expect("the repinned rows start with the required row and cover every pair twice");
    c.heddle(&["check"]).ok();
    let shown = c.heddle(&["show", "roundtrip"]);
    shown.ok();
    assert!(
        shown
            .stdout()
            .contains("\nrequire(codec = Codec::Delta, batch = 64)\n"),
        "{}",
        shown.stdout()
    );
}

#[test]
fn show_states_what_the_budget_reaches() {
    let source = CODEC.replace("seed = 11)]", "seed = 11, budget(4))]");
    let c = Crate::new(&[("tests/codec.rs", &source)]);
    let r = c.heddle(&["show", "roundtrip"]);
    r.ok();
    let out = r.stdout();
    let n = out.lines().filter(|l| l.starts_with("row_")).count();
    assert!(
        out.contains(&format!(
            "\nbudget: 4 of {n} rows run, the rest are ignored; they cover strength 2: "
        )),
        "{out}"
    );
    assert!(out.contains("at least lambda = 2 times; strength 1: "), "{out}");
    assert!(out.contains(" (`budget(4)`)\n"), "{out}");
    // HEDDLE_BUDGET overrides the attribute, as it does in a build
    let run = |value: &str| {
        let o = Command::new(env!("CARGO_BIN_EXE_cargo-heddle"))
            .args(["heddle", "show", "roundtrip"])
            .env("HEDDLE_BUDGET", value)
            .current_dir(c.root())
            .output()
            .unwrap();
        Run(o)
    };
    let o = run("all");
    o.ok();
    assert!(!o.stdout().contains("budget:"), "{}", o.stdout());
    let o = run("50%");
    o.ok();
    assert!(
        o.stdout()
            .contains(&format!("budget: {} of {n} rows run", n.div_ceil(2))),
        "{}",
        o.stdout()
    );
    assert!(o.stdout().contains("(`HEDDLE_BUDGET=50%`)"), "{}", o.stdout());
    let o = run("half");
    o.fails(2);
    assert!(
        o.stderr()
            .contains("`HEDDLE_BUDGET` is invalid: `half` is not a row budget"),
        "{}",
        o.stderr()
    );
}

/// Four factors of three levels at λ = 1: the engine makes the orthogonal array OA(9;
/// 2, 4, 3), in which no two rows share a pair (Bose 1938; the engine's construction),
/// so a failing row's six pairs are all aliases of one another.
const ALIASED: &str = "\
use heddle_test::cover;

#[cover(seed = 1)]
fn f(
    #[levels(0, 1, 2)] a: u8,
    #[levels(0, 1, 2)] b: u8,
    #[levels(0, 1, 2)] c: u8,
    #[levels(0, 1, 2)] d: u8,
) {
}
";

/// The planted fault: `a = 1` with `c = 2`.
fn planted_ac(row: &[u8]) -> bool {
    row[0] == 1 && row[2] == 2
}

/// Writes a run of `f` (design rows then follow-up rows) into the crate's store, each
/// row failing exactly when it holds the planted pair.
fn write_aliased_run(c: &Crate, run: &str, ms: u64, design: &[Vec<u8>], followups: &[Vec<u8>]) {
    use heddle_store::fixture::{self, SpecBuilder};
    use heddle_test::record::{Line, Outcome};
    let found = heddle_syntax::find::analyse_source(ALIASED, &heddle_syntax::Defaults::default()).unwrap();
    let spec = found[0].spec.as_ref().unwrap();
    let mut b = SpecBuilder::new("f")
        .test_target("codec")
        .run(run)
        .strength(2)
        .lambda(1)
        .seed(spec.spec.seed)
        .fingerprint(&spec.fingerprint.to_string());
    for name in ["a", "b", "c", "d"] {
        b = b.factor(name, &["0", "1", "2"]);
    }
    let rec = b.rows(design.to_vec()).followup_rows(followups.to_vec()).build();
    let mut lines = vec![Line::Spec(rec.clone()).to_json_line()];
    for (r, row) in rec.rows.iter().enumerate() {
        let o = if planted_ac(row) {
            Outcome::Failed
        } else {
            Outcome::Passed
        };
        lines.push(Line::Row(fixture::row(&rec, r, o)).to_json_line());
    }
    let dir = c.path(&format!("target/heddle/runs/{run}"));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join(format!("{ms}-1-0000000000000001.jsonl")), lines.join("")).unwrap();
}

#[test]
fn probe_proposes_follow_up_rows_that_name_an_aliased_pair() {
    let c = Crate::new(&[("tests/codec.rs", ALIASED)]);
    let show = c.heddle(&["show", "f", "--format", "csv"]);
    show.ok();
    let factors: Vec<Factor> = ["a", "b", "c", "d"]
        .iter()
        .map(|n| Factor::new(*n, ["0", "1", "2"]))
        .collect();
    let design = csv_rows(&show.stdout(), &factors);
    assert_eq!(design.iter().filter(|r| planted_ac(r)).count(), 1, "{design:?}");
    write_aliased_run(&c, "run-1", 1_700_000_000_000, &design, &[]);

    // the report cannot tell the failing row's pairs apart
    let report = c.heddle(&["report", "--format", "json"]);
    report.ok();
    let v: serde_json::Value = serde_json::from_str(&report.stdout()).unwrap();
    let always = v["suites"][0]["suspects"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|s| s["always"] == true)
        .count();
    assert!(always > 1, "{}", report.stdout());

    // a dry run prints and writes nothing
    let dry = c.heddle(&["probe", "--dry-run"]);
    dry.ok();
    assert!(dry.stdout().contains("tests/codec.rs:3 f: "), "{}", dry.stdout());
    assert!(!c.path("heddle-pins.toml").exists());

    let probe = c.heddle(&["probe", "f"]);
    probe.ok();
    let out = probe.stdout();
    assert!(out.contains("follow-up rows to tell apart `"), "{out}");
    assert!(out.contains("from the failing row `f::row_"), "{out}");
    assert!(out.contains("wrote "), "{out}");
    let pins = c.pins();
    let fu = pins
        .followup(&PinKey::new("tests/codec.rs", "f"))
        .expect("follow-up rows written")
        .clone();
    assert!(pins.pins.is_empty(), "probe pins nothing");
    // every follow-up row is one the spec allows, and at most one per factor is proposed
    let distinct: std::collections::BTreeSet<&Vec<u8>> = fu.rows.iter().collect();
    assert!(!distinct.is_empty() && distinct.len() <= 4, "{:?}", fu.rows);
    // a file holding only follow-up rows does not make the crate one that pins
    c.heddle(&["check"]).ok();
    let shown = c.heddle(&["show", "f"]);
    shown.ok();
    assert!(
        shown.stdout().contains("\nrow_followup_00  "),
        "{}",
        shown.stdout()
    );
    assert!(
        shown.stdout().contains("from `cargo heddle probe`"),
        "{}",
        shown.stdout()
    );
    // before they ran, another probe refuses to stack more rows on them
    let again = c.heddle(&["probe"]);
    again.ok();
    assert!(again.stdout().contains("have not run yet"), "{}", again.stdout());

    // the next run holds them; the report now names the planted pair alone
    write_aliased_run(&c, "run-2", 1_700_000_100_000, &design, &fu.rows);
    let report = c.heddle(&["report", "--format", "json"]);
    report.ok();
    let v: serde_json::Value = serde_json::from_str(&report.stdout()).unwrap();
    let s = &v["suites"][0];
    assert_eq!(s["followups"].as_u64(), Some(fu.rows.len() as u64));
    let named: Vec<&serde_json::Value> = s["suspects"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|x| x["explains"].as_u64() > Some(0))
        .collect();
    assert_eq!(named.len(), 1, "{}", report.stdout());
    assert_eq!(named[0]["levels"], serde_json::json!({"a": "1", "c": "2"}));
    assert_eq!(named[0]["always"], true);
    let done = c.heddle(&["probe"]);
    done.ok();
    assert!(
        done.stdout()
            .contains("no follow-up rows needed, the report names `a = 1, c = 2`"),
        "{}",
        done.stdout()
    );

    // a changed spec makes them stale: `check` fails, `pin` drops them
    c.write("tests/codec.rs", &ALIASED.replace("seed = 1", "seed = 2"));
    let r = c.heddle(&["check"]);
    r.fails(1);
    assert!(
        r.stderr().contains("the follow-up rows of `f` are stale"),
        "{}",
        r.stderr()
    );
    let r = c.heddle(&["pin"]);
    r.ok();
    assert!(
        r.stdout().contains("dropped its follow-up rows"),
        "{}",
        r.stdout()
    );
    assert!(c.pins().followups.is_empty());
    c.heddle(&["check"]).ok();

    // `--clear` removes them
    c.write("tests/codec.rs", ALIASED);
    let mut pins = c.pins();
    pins.set_followup(PinKey::new("tests/codec.rs", "f"), Some(fu));
    c.write("heddle-pins.toml", &pins.to_toml());
    let r = c.heddle(&["probe", "--clear", "f"]);
    r.ok();
    assert!(
        r.stdout()
            .contains("tests/codec.rs f: removed its follow-up rows"),
        "{}",
        r.stdout()
    );
    assert!(c.pins().followups.is_empty());
}
