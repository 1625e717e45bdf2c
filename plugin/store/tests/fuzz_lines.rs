//! Fuzzing the store reader on damaged record lines, bounded so that it runs in every
//! test run: a fixed number of edits of the files of `tests/corpus/lines` from a fixed
//! seed, each read as a run of a store, tallied and described in notes, then the corpus
//! itself replayed. Reading may skip lines (and count them), but never fail, panic or
//! overflow the stack.
//!
//! A failing generated case is printed by proptest; add it to the corpus as a file.

use std::path::Path;

use heddle_store::{Store, tally};
use heddle_test::record::layout::{RUNS_DIR, STORE_DIR};
use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed, TestRunner};

/// Generated cases: a few seconds in all.
const CASES: u32 = 300;

/// Reads `bytes` as the one file of a run and does with it what a report does.
fn read_as_a_run(bytes: &[u8]) {
    let tmp = tempfile::tempdir().expect("a temporary directory");
    let dir = tmp.path().join(STORE_DIR).join(RUNS_DIR).join("r1");
    std::fs::create_dir_all(&dir).expect("the run directory can be made");
    std::fs::write(dir.join("0000000000001-1-0000000000000001.jsonl"), bytes).expect("written");
    let store = Store::open(tmp.path()).expect("the store exists");
    let records = store
        .read_all()
        .expect("a run with a file reads, whatever it holds");
    let notes = records.stats.notes();
    assert!(notes.iter().all(|n| !n.one_line().is_empty()));
    assert!(records.stats.skipped() <= records.stats.lines);
    for suite in &records.suites {
        if let Ok(t) = tally(&suite.spec, suite.outcomes()) {
            assert!(t.strength <= suite.spec.strength as usize);
        }
    }
}

fn corpus() -> Vec<(String, Vec<u8>)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/corpus/lines");
    let mut out: Vec<(String, Vec<u8>)> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("the corpus `{}` is readable: {e}", dir.display()))
        .map(|entry| {
            let path = entry.expect("a corpus entry").path();
            let bytes = std::fs::read(&path).expect("a corpus file reads");
            (path.display().to_string(), bytes)
        })
        .collect();
    out.sort();
    assert!(!out.is_empty(), "the corpus `{}` is empty", dir.display());
    out
}

/// Bytes replaced, inserted or removed at some place: JSON punctuation, digits and
/// words of the format, so that edits land inside values as often as between them.
fn edits() -> impl Strategy<Value = Vec<(usize, usize, Vec<u8>)>> {
    let snippet = prop_oneof![
        Just(b"[".to_vec()),
        Just(b"]".to_vec()),
        Just(b"{".to_vec()),
        Just(b"\"".to_vec()),
        Just(b",".to_vec()),
        Just(b"\n".to_vec()),
        Just(b"-1".to_vec()),
        Just(b"99999999999999999999".to_vec()),
        Just(b"\"kind\":\"row\",".to_vec()),
        Just(b"\"kind\":\"start\",".to_vec()),
        Just(b"\"attempt\":1,".to_vec()),
        Just(b"!(".to_vec()),
        Just(b"0=1&".to_vec()),
        proptest::collection::vec(any::<u8>(), 0..4),
    ];
    proptest::collection::vec((any::<usize>(), 0usize..8, snippet), 1..6)
}

fn apply(bytes: &[u8], edits: &[(usize, usize, Vec<u8>)]) -> Vec<u8> {
    let mut out = bytes.to_vec();
    for (at, remove, insert) in edits {
        let at = at % (out.len() + 1);
        let end = (at + remove).min(out.len());
        out.splice(at..end, insert.iter().copied());
    }
    out
}

#[test]
fn edited_record_files_are_read_without_failing() {
    // the wide corpus files cost a full tally budget each: replayed, not edited
    let sources: Vec<Vec<u8>> = corpus()
        .into_iter()
        .filter(|(name, _)| !name.contains("wide"))
        .map(|(_, bytes)| bytes)
        .collect();
    let mut runner = TestRunner::new(Config {
        cases: CASES,
        rng_seed: RngSeed::Fixed(0x6865_6464_6c65),
        failure_persistence: None,
        ..Config::default()
    });
    runner
        .run(&(0..sources.len(), edits()), |(which, edits)| {
            read_as_a_run(&apply(&sources[which], &edits));
            Ok(())
        })
        .unwrap();
}

#[test]
fn the_corpus_replays() {
    for (name, bytes) in corpus() {
        eprintln!("replaying {name}");
        read_as_a_run(&bytes);
    }
}
