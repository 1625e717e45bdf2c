//! Helpers shared by the integration tests: run the macro's passes on source text.

#![allow(dead_code)]

use heddle_syntax::args::Args;
use heddle_syntax::ast::CoverFn;
use heddle_syntax::{CoverSpec, Defaults, validate};
use proc_macro2::Span;

/// Validates `#[cover(attr)] item` with `defaults`: the spec, or every error message.
pub fn check_with(attr: &str, item: &str, defaults: &Defaults) -> Result<CoverSpec, Vec<String>> {
    let tokens = attr.parse().expect("test attribute is valid token text");
    let args = Args::parse_tokens(tokens, Span::call_site()).map_err(|e| messages(&e))?;
    let f: syn::ItemFn = syn::parse_str(item).expect("test item is a function");
    validate(CoverFn::new(&args, &f, None), defaults)
        .map(|c| c.spec)
        .map_err(|e| messages(&e))
}

/// Validates with no crate defaults.
pub fn check(attr: &str, item: &str) -> Result<CoverSpec, Vec<String>> {
    check_with(attr, item, &Defaults::default())
}

/// The error messages, one per located error.
pub fn messages(e: &syn::Error) -> Vec<String> {
    e.clone().into_iter().map(|e| e.to_string()).collect()
}

/// Asserts the single error starts with `prefix` and carries a hint.
pub fn assert_one_error(result: Result<CoverSpec, Vec<String>>, prefix: &str) {
    let errs = result.expect_err("the input is invalid");
    assert_eq!(errs.len(), 1, "{errs:#?}");
    assert!(errs[0].starts_with(prefix), "expected `{prefix}…`, got {errs:#?}");
    assert!(errs[0].contains("\nhint: "), "{errs:#?}");
}

/// The fingerprint of the codec example (`#[cover(lambda = 2, seed = 11, exclude(codec ==
/// Codec::Delta && batch == 1))]` over batch 1/8/64, three codecs and a checksum flag, at
/// the default strength 2), encoded here byte by byte from the layout documented in
/// `fingerprint.rs` — written apart from the code under test, so a test comparing with it
/// checks that code rather than itself — and hashed with FNV-1a 64, whose published test
/// vectors `hash.rs` checks.
pub fn codec_example_fingerprint(engine_version: u64) -> u64 {
    let mut bytes: Vec<u8> = Vec::new();
    let num = |b: &mut Vec<u8>, v: u64| b.extend_from_slice(&v.to_le_bytes());
    let text = |b: &mut Vec<u8>, s: &str| {
        b.extend_from_slice(&(s.len() as u64).to_le_bytes());
        b.extend_from_slice(s.as_bytes());
    };
    text(&mut bytes, "heddle-spec-fingerprint/1");
    num(&mut bytes, engine_version);
    num(&mut bytes, 3);
    for (name, levels) in [
        ("batch", &["1", "8", "64"][..]),
        ("codec", &["Codec::Plain", "Codec::Rle", "Codec::Delta"][..]),
        ("checksum", &["true", "false"][..]),
    ] {
        text(&mut bytes, name);
        num(&mut bytes, levels.len() as u64);
        for l in levels {
            text(&mut bytes, l);
        }
    }
    num(&mut bytes, 2); // strength
    num(&mut bytes, 2); // λ
    num(&mut bytes, 11); // seed
    num(&mut bytes, 1); // one exclude: A(I(codec = Delta), I(batch = 1)), prefix order
    bytes.push(b'A');
    for (factor, level) in [(1, 2), (0, 0)] {
        bytes.push(b'I');
        num(&mut bytes, factor);
        num(&mut bytes, level);
    }
    num(&mut bytes, 0); // no required rows
    heddle_syntax::hash::fnv1a64(&bytes)
}

/// Every file of `tests/corpus/<dir>`, as (path, text), sorted by path.
pub fn corpus(dir: &str) -> Vec<(String, String)> {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
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

/// The runner of the fuzz targets: `cases` inputs from a fixed seed, so every run tries
/// the same ones, and nothing written to disk on failure (proptest prints the case).
pub fn fuzz_runner(cases: u32) -> proptest::test_runner::TestRunner {
    use proptest::test_runner::{Config, RngSeed, TestRunner};
    TestRunner::new(Config {
        cases,
        rng_seed: RngSeed::Fixed(0x6865_6464_6c65),
        failure_persistence: None,
        ..Config::default()
    })
}
