//! Fuzzing the attribute's tokens through the whole expansion, bounded so that it runs
//! in every test run: a fixed number of generated attributes and functions from a fixed
//! seed, then every file of `tests/corpus/attributes` (the arguments, a line `---`, the
//! item) replayed. The expansion may refuse an input, but never panic or overflow the
//! stack the compiler gives proc macros (8 MiB, rustc's main thread, from memory), and
//! it always hands back tokens.
//!
//! A failing generated case is printed by proptest; add it to the corpus as a file.

mod common;

use heddle_syntax::{Context, expand};
use proc_macro2::TokenStream;
use proptest::prelude::*;

/// Generated cases per strategy: a few seconds in all.
const CASES: u32 = 250;

fn runner() -> proptest::test_runner::TestRunner {
    common::fuzz_runner(CASES)
}

/// Expands `#[cover(attr)] item` when both lex, on the compiler's stack size.
fn expand_text(attr: String, item: String) {
    std::thread::Builder::new()
        .stack_size(8 << 20)
        .spawn(move || {
            let (Ok(attr), Ok(item)) = (attr.parse::<TokenStream>(), item.parse::<TokenStream>()) else {
                return;
            };
            let out = expand(attr, item, &Context::detached());
            assert!(!out.is_empty(), "the expansion always hands back tokens");
        })
        .expect("a thread can be started")
        .join()
        .expect("the expansion does not panic");
}

/// Token text from the attribute's own words and Rust's operators and delimiters.
fn tokens() -> impl Strategy<Value = String> {
    let leaf = prop_oneof![
        Just("strength"),
        Just("lambda"),
        Just("seed"),
        Just("exclude"),
        Just("focus"),
        Just("a"),
        Just("b"),
        Just("Codec"),
        Just("Rle"),
        Just("0"),
        Just("1"),
        Just("2"),
        Just("-1"),
        Just("\"x\""),
        Just("1.5"),
        Just("'c'"),
        Just("="),
        Just("=="),
        Just("!="),
        Just("&&"),
        Just("||"),
        Just("!"),
        Just(","),
        Just("::"),
        Just("<"),
        Just(">"),
        Just("#"),
        Just("|"),
    ]
    .prop_map(String::from);
    leaf.prop_recursive(6, 64, 8, |inner| {
        (proptest::collection::vec(inner, 0..8), 0usize..4).prop_map(|(v, d)| {
            let body = v.join(" ");
            match d {
                0 => format!("({body})"),
                1 => format!("[{body}]"),
                2 => format!("{{{body}}}"),
                _ => body,
            }
        })
    })
}

/// A nesting of `n` of one shape around a comparison, past the limits or near them.
fn deep() -> impl Strategy<Value = String> {
    (0usize..2500, 0usize..4).prop_map(|(n, shape)| match shape {
        0 => format!("exclude({}a == 1{})", "(".repeat(n), ")".repeat(n)),
        1 => format!("exclude({}a == 1)", "!".repeat(n)),
        2 => format!("exclude({})", vec!["a == 1"; n.max(1)].join(" && ")),
        _ => format!("seed = {}1{}", "-(".repeat(n), ")".repeat(n)),
    })
}

fn item(levels_a: String, levels_b: String) -> String {
    format!("fn f(#[levels({levels_a})] a: u8, #[levels({levels_b})] b: bool) {{}}")
}

#[test]
fn generated_attributes_expand_without_panicking() {
    let args = proptest::collection::vec(tokens(), 0..4).prop_map(|v| v.join(", "));
    let strategy = (args, tokens(), tokens());
    runner()
        .run(&strategy, |(attr, la, lb)| {
            expand_text(attr, item(la, lb));
            Ok(())
        })
        .unwrap();
}

#[test]
fn deep_attributes_expand_without_panicking() {
    runner()
        .run(&deep(), |attr| {
            expand_text(attr, item("1, 2".into(), "true, false".into()));
            Ok(())
        })
        .unwrap();
}

#[test]
fn deep_levels_expand_without_panicking() {
    runner()
        .run(&deep(), |level| {
            expand_text(String::new(), item(level.replace("exclude", ""), "true".into()));
            Ok(())
        })
        .unwrap();
}

#[test]
fn the_corpus_replays() {
    for (name, text) in common::corpus("attributes") {
        eprintln!("replaying {name}");
        let (attr, item) = text
            .split_once("\n---\n")
            .unwrap_or_else(|| panic!("`{name}`: the arguments, a line `---`, the item"));
        expand_text(attr.to_string(), item.to_string());
    }
}
