//! Fuzzing the pins file reader, bounded so that it runs in every test run: a fixed
//! number of mutations of the files of `tests/corpus/pins` from a fixed seed, then the
//! corpus itself replayed. The reader may refuse a file, with a message, but never
//! panic or overflow the stack (the macro reads the file inside the compiler), and a
//! file it accepts writes back to one that reads and writes the same.
//!
//! A failing generated case is printed by proptest; add it to the corpus as a file.

mod common;

use heddle_syntax::PinsFile;
use proptest::prelude::*;

/// Generated cases: a few seconds in all.
const CASES: u32 = 2000;

fn check(text: &str) {
    match PinsFile::parse(text) {
        Ok(pins) => {
            // entries remember their line, which the writer's layout moves: compare texts
            let written = pins.to_toml();
            let again = PinsFile::parse(&written).expect("a written file reads back");
            assert_eq!(again.to_toml(), written);
        }
        Err(e) => assert!(!e.to_string().is_empty()),
    }
}

/// One edit of a text: bytes replaced, inserted or removed at some place, or a cut.
#[derive(Clone, Debug)]
enum Edit {
    Replace(usize, String),
    Insert(usize, String),
    Remove(usize, usize),
    Cut(usize),
}

fn apply(text: &str, edits: &[Edit]) -> String {
    let mut s = text.to_string();
    for edit in edits {
        let at = |i: usize, s: &str| {
            let mut i = i % (s.len() + 1);
            while !s.is_char_boundary(i) {
                i -= 1;
            }
            i
        };
        match edit {
            Edit::Replace(i, with) if !s.is_empty() => {
                let i = at(*i, &s);
                let end = s[i..].chars().next().map_or(i, |c| i + c.len_utf8());
                s.replace_range(i..end, with);
            }
            Edit::Replace(..) => {}
            Edit::Insert(i, what) => {
                let i = at(*i, &s);
                s.insert_str(i, what);
            }
            Edit::Remove(i, n) => {
                let i = at(*i, &s);
                let end = at(i + n, &s).max(i);
                s.replace_range(i..end, "");
            }
            Edit::Cut(i) => {
                let i = at(*i, &s);
                s.truncate(i);
            }
        }
    }
    s
}

fn edits() -> impl Strategy<Value = Vec<Edit>> {
    let snippet = prop_oneof![
        Just("[".to_string()),
        Just("]".to_string()),
        Just("\"".to_string()),
        Just("=".to_string()),
        Just(",".to_string()),
        Just("\n".to_string()),
        Just("[pins.\"a\".b]\n".to_string()),
        Just("rows = [[0]]\n".to_string()),
        Just("-1".to_string()),
        Just("99999999999999999999".to_string()),
        Just("{ a = 1 }".to_string()),
        "[a-z0-9 ]{1,4}",
        any::<char>().prop_map(String::from),
    ];
    let edit = prop_oneof![
        (any::<usize>(), snippet.clone()).prop_map(|(i, s)| Edit::Replace(i, s)),
        (any::<usize>(), snippet).prop_map(|(i, s)| Edit::Insert(i, s)),
        (any::<usize>(), 0usize..20).prop_map(|(i, n)| Edit::Remove(i, n)),
        any::<usize>().prop_map(Edit::Cut),
    ];
    proptest::collection::vec(edit, 1..6)
}

#[test]
fn edited_pins_files_never_panic_and_round_trip() {
    let corpus = common::corpus("pins");
    let mut runner = common::fuzz_runner(CASES);
    let strategy = (0..corpus.len(), edits());
    runner
        .run(&strategy, |(which, edits)| {
            check(&apply(&corpus[which].1, &edits));
            Ok(())
        })
        .unwrap();
}

#[test]
fn the_corpus_replays() {
    for (name, text) in common::corpus("pins") {
        eprintln!("replaying {name}");
        check(&text);
    }
    let valid = PinsFile::parse(
        &common::corpus("pins")
            .into_iter()
            .find(|(n, _)| n.ends_with("valid.toml"))
            .expect("the corpus has a valid file")
            .1,
    );
    assert!(valid.is_ok(), "{valid:?}");
}
