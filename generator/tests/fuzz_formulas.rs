//! Fuzzing both formula parsers, bounded so that it runs in every test run: a fixed
//! number of generated inputs from a fixed seed (the same inputs on every run), then
//! every file of `tests/corpus/exclude` (the human syntax `--exclude` reads) and
//! `tests/corpus/formula` (the index syntax records store) replayed. A parser may refuse
//! an input, but never panic or overflow the stack, an error must point inside the
//! input, and whatever it accepts must read back the same after rendering.
//!
//! A failing generated case is printed by proptest; add it to the corpus as a file.

use std::path::Path;

use heddle_generator::{Expr, Factor};
use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed, TestRunner};

/// Generated cases per strategy: a few seconds in all.
const CASES: u32 = 800;

fn runner() -> TestRunner {
    TestRunner::new(Config {
        cases: CASES,
        rng_seed: RngSeed::Fixed(0x6865_6464_6c65),
        failure_persistence: None,
        ..Config::default()
    })
}

fn factors() -> Vec<Factor> {
    vec![
        Factor::new("f1", ["a", "b", "é"]),
        Factor::numbered("f2", 2),
        Factor::new("f3", ["x y", "it's", "it's \"q\"", "(p)", "''"]),
    ]
}

const LEVELS: [usize; 3] = [3, 2, 5];

fn check_human(src: &str, factors: &[Factor]) {
    match Expr::parse(src, factors) {
        Ok(e) => {
            let shown = e.display(factors).to_string();
            assert_eq!(
                Expr::parse(&shown, factors).as_ref(),
                Ok(&e),
                "`{src}` shown as `{shown}`"
            );
            assert_eq!(Expr::parse_formula(&e.to_formula(), &LEVELS), Ok(e));
        }
        Err(err) => {
            assert!(
                err.offset <= src.len() && src.is_char_boundary(err.offset),
                "{err:?}"
            );
            assert!(!err.message.is_empty() && !err.hint.is_empty());
            let _ = err.render(src);
        }
    }
}

fn check_formula(text: &str) {
    match Expr::parse_formula(text, &LEVELS) {
        // only the canonical text is accepted, so it is what rendering gives back
        Ok(e) => assert_eq!(e.to_formula(), text),
        Err(err) => assert!(err.offset <= text.len(), "{err:?}"),
    }
}

/// Inputs built from the syntax's own pieces, so most of them get far into the parser.
fn pieces() -> impl Strategy<Value = String> {
    let piece = prop_oneof![
        Just("f1".to_string()),
        Just("f3".to_string()),
        Just("==".to_string()),
        Just("!=".to_string()),
        Just(" && ".to_string()),
        Just(" || ".to_string()),
        Just("!".to_string()),
        Just("(".to_string()),
        Just(")".to_string()),
        Just(" ".to_string()),
        Just("'".to_string()),
        Just("\"".to_string()),
        Just("a".to_string()),
        Just("'it''s \"q\"'".to_string()),
        Just("é".to_string()),
        "[0-9]{1,3}",
        "[=&|!()]{1,3}",
        any::<char>().prop_map(String::from),
    ];
    proptest::collection::vec(piece, 0..40).prop_map(|v| v.concat())
}

/// Nesting far past the limit in every shape the grammar has.
fn deep() -> impl Strategy<Value = String> {
    (0usize..4000, 0usize..4, any::<bool>()).prop_map(|(n, shape, closed)| {
        let close = if closed { ")".repeat(n) } else { String::new() };
        match shape {
            0 => format!("{}f1 == a{close}", "(".repeat(n)),
            1 => format!("{}f1 == a", "!".repeat(n)),
            2 => format!("{}f1 == a{close}", "!(".repeat(n)),
            _ => vec!["f1 == a"; n.max(1)].join(" && "),
        }
    })
}

fn formula_pieces() -> impl Strategy<Value = String> {
    let piece = prop_oneof![
        "[0-9]{1,2}=[0-9]{1,2}",
        Just("&".to_string()),
        Just("|".to_string()),
        Just("!".to_string()),
        Just("(".to_string()),
        Just(")".to_string()),
        "[0-9=&|!() ]",
    ];
    proptest::collection::vec(piece, 0..40).prop_map(|v| v.concat())
}

#[test]
fn the_human_syntax_never_panics_and_round_trips() {
    let factors = factors();
    for strategy in [pieces().boxed(), deep().boxed(), any::<String>().boxed()] {
        runner()
            .run(&strategy, |src| {
                check_human(&src, &factors);
                Ok(())
            })
            .unwrap();
    }
}

#[test]
fn the_index_syntax_never_panics_and_is_canonical() {
    for strategy in [
        formula_pieces().boxed(),
        deep()
            .prop_map(|s| s.replace("f1 == a", "0=0").replace(" && ", "&"))
            .boxed(),
    ] {
        runner()
            .run(&strategy, |text| {
                check_formula(&text);
                Ok(())
            })
            .unwrap();
    }
}

/// Every file of a corpus directory, by name.
fn corpus(dir: &str) -> Vec<(String, String)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/corpus")
        .join(dir);
    let mut out: Vec<(String, String)> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("the corpus `{}` is readable: {e}", dir.display()))
        .map(|entry| {
            let path = entry.expect("a corpus entry").path();
            let text = std::fs::read_to_string(&path).expect("corpus files are UTF-8");
            (path.display().to_string(), text)
        })
        .collect();
    out.sort();
    assert!(!out.is_empty(), "the corpus `{}` is empty", dir.display());
    out
}

#[test]
fn the_corpus_replays() {
    let factors = factors();
    for (name, src) in corpus("exclude") {
        eprintln!("replaying {name}");
        check_human(&src, &factors);
    }
    for (name, text) in corpus("formula") {
        eprintln!("replaying {name}");
        check_formula(&text);
    }
}
