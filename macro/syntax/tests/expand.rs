//! The expansion, inspected as a syntax tree: shape, rows, pins, fallbacks.

mod common;

use heddle_syntax::expand::default_runtime;
use heddle_syntax::expand::{Context, expand, row_name};
use heddle_syntax::{Fingerprint, Pin, PinKey, PinsFile};
use proc_macro2::TokenStream;
use quote::ToTokens;
use syn::{Item, ItemFn, ItemMod};

const ATTR: &str = "lambda = 2, seed = 11, exclude(codec == Codec::Delta && batch == 1)";
const ITEM: &str = "/// doc stays
fn roundtrip(
    #[levels(1, 8, 64)] batch: usize,
    #[levels(Codec::Plain, Codec::Rle, Codec::Delta)] codec: Codec,
    #[levels(true, false)] checksum: bool,
) {}";

fn run(attr: &str, item: &str, ctx: &Context) -> syn::File {
    let out = expand(ts(attr), ts(item), ctx);
    syn::parse2(out).expect("the expansion parses as items")
}

fn ts(s: &str) -> TokenStream {
    s.parse().expect("test input is valid token text")
}

fn ctx_in(file: &str) -> Context {
    Context {
        file: Some(file.into()),
        ..Context::detached()
    }
}

fn the_fn(f: &syn::File) -> &ItemFn {
    f.items
        .iter()
        .find_map(|i| match i {
            Item::Fn(f) => Some(f),
            _ => None,
        })
        .expect("the function is emitted")
}

fn the_mod(f: &syn::File) -> Option<&ItemMod> {
    f.items.iter().find_map(|i| match i {
        Item::Mod(m) => Some(m),
        _ => None,
    })
}

fn row_fns(m: &ItemMod) -> Vec<&ItemFn> {
    m.content
        .as_ref()
        .map(|(_, items)| {
            items
                .iter()
                .filter_map(|i| match i {
                    Item::Fn(f) => Some(f),
                    _ => None,
                })
                .collect()
        })
        .unwrap_or_default()
}

fn errors(f: &syn::File) -> Vec<String> {
    f.items
        .iter()
        .filter_map(|i| match i {
            Item::Macro(m)
                if m.mac
                    .path
                    .segments
                    .last()
                    .is_some_and(|s| s.ident == "compile_error") =>
            {
                let lit: syn::LitStr = m.mac.parse_body().ok()?;
                Some(lit.value())
            }
            _ => None,
        })
        .collect()
}

fn text(t: &impl ToTokens) -> String {
    t.to_token_stream().to_string()
}

#[test]
fn shape_of_a_valid_expansion() {
    let out = run(ATTR, ITEM, &ctx_in("tests/codec.rs"));
    assert!(errors(&out).is_empty());
    let f = the_fn(&out);
    assert_eq!(f.sig.ident, "roundtrip");
    assert!(f.attrs.iter().any(|a| a.path().is_ident("doc")));
    assert!(text(&f.sig).find("levels").is_none(), "{}", text(&f.sig));
    let m = the_mod(&out).expect("the rows module is emitted");
    assert_eq!(m.ident, "roundtrip");
    let attrs: Vec<String> = m.attrs.iter().map(text).collect();
    assert!(attrs.contains(&"# [cfg (test)]".to_string()), "{attrs:?}");
    let rows = row_fns(m);
    // batch × codec has 3·3 pairs, one excluded; each of the other 8 needs λ = 2 rows of
    // its own, so at least 16 rows (counting argument behind the bound λ·v1·v2; common
    // practice)
    assert!((16..100).contains(&rows.len()), "{}", rows.len());
    for (i, r) in rows.iter().enumerate() {
        // fewer than 100 rows: two digits, zero-padded (the documented naming)
        assert_eq!(r.sig.ident, format!("row_{i:02}"));
        assert!(r.sig.inputs.is_empty());
        let a = text(&r.attrs[0]);
        assert!(a.contains("test"), "{a}");
        let body = text(&r.block);
        assert!(
            body.contains(":: heddle_test :: __private :: run (& __HEDDLE_SUITE"),
            "{body}"
        );
        assert!(body.contains("super :: roundtrip ("), "{body}");
        // the exclude holds: no row calls with Delta and batch 1
        assert!(
            !(body.contains("(1 ,") && body.contains("Codec :: Delta")),
            "{body}"
        );
    }
    let all = text(m);
    assert!(all.contains("file : \"tests/codec.rs\""), "{all}");
    // the names handed to the runtime are the functions' names, in order
    let names: Vec<String> = rows.iter().map(|r| format!("\"{}\"", r.sig.ident)).collect();
    assert!(
        all.contains(&format!("row_names : & [{}]", names.join(" , "))),
        "{all}"
    );
    // `codec == Codec::Delta && batch == 1`: factor 1 at level 2, factor 0 at level 0
    assert!(all.contains("excludes : & [\"1=2&0=0\"]"), "{all}");
    assert!(all.contains("pinned : false"), "{all}");
    assert!(
        all.contains("labels : & [\"Codec::Plain\" , \"Codec::Rle\" , \"Codec::Delta\"]"),
        "{all}"
    );
}

#[test]
fn expansion_is_a_function_of_its_inputs() {
    let a = expand(ts(ATTR), ts(ITEM), &ctx_in("tests/codec.rs")).to_string();
    let b = expand(ts(ATTR), ts(ITEM), &ctx_in("tests/codec.rs")).to_string();
    assert_eq!(a, b);
}

/// A context whose pins file pins `roundtrip`; without `fingerprint`, the pin carries
/// the fingerprint of `ATTR` and `ITEM` worked out apart from the code under test.
fn pinned_ctx(rows: Vec<Vec<u8>>, fingerprint: Option<Fingerprint>) -> Context {
    let documented = Fingerprint(common::codec_example_fingerprint(
        heddle_generator::ENGINE_VERSION.into(),
    ));
    let mut pins = PinsFile::default();
    pins.insert(
        PinKey::new("tests/codec.rs", "roundtrip"),
        Pin {
            fingerprint: fingerprint.unwrap_or(documented),
            factors: vec![],
            rows,
        },
    );
    Context {
        crate_root: Some("/tmp/some-crate".into()),
        pins: Ok(Some(pins)),
        ..ctx_in("tests/codec.rs")
    }
}

#[test]
fn a_matching_pin_is_used_verbatim() {
    let out = run(ATTR, ITEM, &pinned_ctx(vec![vec![2, 0, 1], vec![0, 1, 0]], None));
    assert!(errors(&out).is_empty(), "{:?}", errors(&out));
    let m = the_mod(&out).unwrap();
    let rows = row_fns(m);
    assert_eq!(rows.len(), 2);
    assert!(text(&rows[0].block).contains("super :: roundtrip (64 , Codec :: Plain , false)"));
    assert!(text(&rows[1].block).contains("super :: roundtrip (1 , Codec :: Rle , true)"));
    let all = text(m);
    assert!(all.contains("pinned : true"));
    assert!(all.contains("rows : & [& [2 , 0 , 1] , & [0 , 1 , 0]]"), "{all}");
    assert!(
        all.contains("include_bytes ! (\"/tmp/some-crate/heddle-pins.toml\")"),
        "{all}"
    );
}

#[test]
fn a_stale_or_broken_pin_is_an_error_and_the_fn_stays() {
    let out = run(ATTR, ITEM, &pinned_ctx(vec![vec![0, 0, 0]], Some(Fingerprint(7))));
    let errs = errors(&out);
    assert_eq!(errs.len(), 1);
    assert!(
        errs[0].starts_with("the pin of `roundtrip` in `heddle-pins.toml` is stale"),
        "{errs:?}"
    );
    assert!(errs[0].contains("`cargo heddle pin`"));
    assert!(the_mod(&out).is_none());
    assert_eq!(the_fn(&out).sig.ident, "roundtrip");

    let out = run(ATTR, ITEM, &pinned_ctx(vec![vec![0, 2, 0]], None));
    let errs = errors(&out);
    assert!(errs[0].contains("is ruled out by exclude #1"), "{errs:?}");
}

#[test]
fn invalid_input_gives_every_error_and_the_plain_fn() {
    let out = run(
        "strenght = 2",
        "#[ignore] fn f(#[levels(1, 1)] a: u8, #[levels(2)] b: u8) {}",
        &Context::detached(),
    );
    let errs = errors(&out);
    assert_eq!(errs.len(), 2, "{errs:?}");
    let f = the_fn(&out);
    assert!(!text(f).contains("levels"), "{}", text(f));
    assert_eq!(f.attrs.iter().map(text).collect::<Vec<_>>(), [ALLOW]);
    assert!(the_mod(&out).is_none());
}

#[test]
fn not_a_fn_is_left_alone() {
    let out = run("", "#[derive(Debug)] struct S { a: u8 }", &Context::detached());
    let errs = errors(&out);
    assert!(errs[0].starts_with("`#[cover]` applies to functions, not to a struct"));
    assert!(out.items.iter().any(|i| matches!(i, Item::Struct(_))));
}

/// The one attribute the plain function gains: one parameter per knob is the point.
const ALLOW: &str = "# [allow (clippy :: too_many_arguments)]";

#[test]
fn test_attributes_move_to_the_rows() {
    let out = run(
        "",
        "#[ignore] #[should_panic(expected = \"boom\")] #[cfg(unix)] fn f(#[levels(1, 2)] a: u8) {}",
        &Context::detached(),
    );
    let f = the_fn(&out);
    let kept: Vec<String> = f.attrs.iter().map(text).collect();
    assert_eq!(kept, ["# [cfg (unix)]", ALLOW]);
    let m = the_mod(&out).unwrap();
    assert!(text(&m.attrs[0]).contains("cfg (unix)"));
    assert!(text(m).contains("should_panic : true"));
    // the runtime checks the panic text against it, as libtest does
    assert!(
        text(m).contains("should_panic_expected : :: core :: option :: Option :: Some (\"boom\")"),
        "{}",
        text(m)
    );
    for r in row_fns(m) {
        let attrs: Vec<String> = r.attrs.iter().map(text).collect();
        assert_eq!(
            attrs,
            [
                "# [:: core :: prelude :: v1 :: test]",
                "# [ignore]",
                "# [should_panic (expected = \"boom\")]"
            ]
        );
    }
}

#[test]
fn async_rows_take_the_runtime_attribute() {
    let out = run(
        "",
        "#[tokio::test(flavor = \"current_thread\")] async fn f(#[levels(1, 2)] a: u8) -> Result<(), String> { Ok(()) }",
        &Context::detached(),
    );
    assert!(errors(&out).is_empty(), "{:?}", errors(&out));
    let f = the_fn(&out);
    assert_eq!(f.attrs.iter().map(text).collect::<Vec<_>>(), [ALLOW]);
    assert!(f.sig.asyncness.is_some());
    for r in row_fns(the_mod(&out).unwrap()) {
        assert_eq!(
            text(&r.attrs[0]),
            "# [tokio :: test (flavor = \"current_thread\")]"
        );
        assert!(r.sig.asyncness.is_some());
        assert_eq!(
            text(&r.sig.output),
            "-> :: core :: result :: Result < () , :: heddle_test :: __private :: RowError < String > >"
        );
        let body = text(&r.block);
        assert!(body.contains("run_async_result (& __HEDDLE_SUITE"), "{body}");
        assert!(body.contains("async move { super :: f ("), "{body}");
    }
}

#[test]
fn result_fns_use_run_result() {
    let out = run(
        "",
        "fn f(#[levels(1, 2)] a: u8) -> std::io::Result<()> { Ok(()) }",
        &Context::detached(),
    );
    for r in row_fns(the_mod(&out).unwrap()) {
        assert_eq!(text(&r.sig.output), "-> impl :: std :: process :: Termination");
        assert!(text(&r.block).contains("run_result (& __HEDDLE_SUITE"));
    }
}

#[test]
fn row_names_sort() {
    assert_eq!(row_name(0, 1), "row_00");
    assert_eq!(row_name(9, 10), "row_09");
    assert_eq!(row_name(99, 100), "row_99");
    assert_eq!(row_name(7, 101), "row_007");
    assert_eq!(row_name(100, 101), "row_100");
}

#[test]
fn plugin_finds_annotated_fns_in_modules() {
    let src = "
use heddle_test::cover;
#[cover]
fn a(#[levels(1, 2)] x: u8) {}
mod inner {
    #[heddle_test::cover(strength = 1)]
    fn b(#[levels(1, 2)] x: u8, #[levels(3)] y: u8) {}
    #[cover(bogus = 1)]
    fn c(#[levels(1)] x: u8) {}
    fn not_annotated() {}
}
";
    let found = heddle_syntax::find::analyse_source(src, &heddle_syntax::Defaults::default()).unwrap();
    let names: Vec<&str> = found.iter().map(|f| f.function.as_str()).collect();
    assert_eq!(names, ["a", "b", "c"]);
    assert_eq!(found[0].line, 3);
    assert_eq!(found[1].modules, ["inner"]);
    assert_eq!(found[1].spec.as_ref().unwrap().spec.strength, 1);
    assert!(found[2].spec.is_err());
    assert_eq!(found[1].pin_key("tests/x.rs"), PinKey::new("tests/x.rs", "b"));
}

#[test]
fn generated_code_reaches_the_runtime_by_the_context_path_and_names_the_target() {
    let ctx = Context {
        runtime: syn::parse_quote!(::rt),
        package: Some("demo-pkg".into()),
        crate_name: Some("codec".into()),
        ..ctx_in("tests/codec.rs")
    };
    let out = run(ATTR, ITEM, &ctx);
    let all = text(the_mod(&out).expect("the rows module is emitted"));
    assert!(all.contains(":: rt :: __private :: Suite"), "{all}");
    assert!(!all.contains("heddle_test"), "{all}");
    assert!(all.contains("target : \"--test codec\""), "{all}");
    // no crate name known: no selector rather than a guess
    let out = run(ATTR, ITEM, &ctx_in("tests/codec.rs"));
    let all = text(the_mod(&out).unwrap());
    assert!(all.contains("target : \"\""), "{all}");
    assert_eq!(text(&default_runtime()), ":: heddle_test");
}

/// Whether a row function carries `#[ignore]`, and its reason.
fn ignored(r: &ItemFn) -> Option<String> {
    r.attrs.iter().find(|a| a.path().is_ident("ignore")).map(text)
}

#[test]
fn rows_past_the_budget_are_ignored_and_the_suite_says_how_many_run() {
    use heddle_syntax::budget::Budget;
    let attr = format!("{ATTR}, budget(25%)");
    let out = run(&attr, ITEM, &ctx_in("tests/codec.rs"));
    assert!(errors(&out).is_empty(), "{:?}", errors(&out));
    let m = the_mod(&out).unwrap();
    let rows = row_fns(m);
    let runs = Budget::Percent(25).rows(rows.len());
    assert!(runs < rows.len());
    for (i, r) in rows.iter().enumerate() {
        match ignored(r) {
            None => assert!(i < runs, "row {i} runs"),
            Some(why) => {
                assert!(i >= runs, "row {i} is ignored");
                assert!(
                    why.contains(&format!("`budget(25%)` runs {runs} of {} rows", rows.len())),
                    "{why}"
                );
            }
        }
    }
    let all = text(m);
    assert!(
        all.contains(&format!("budget : :: core :: option :: Option :: Some ({runs})")),
        "{all}"
    );
    // the rows are those of the spec without a budget: a budget is no part of the spec
    let plain = run(ATTR, ITEM, &ctx_in("tests/codec.rs"));
    let plain_rows: Vec<String> = row_fns(the_mod(&plain).unwrap())
        .iter()
        .map(|r| text(&r.block))
        .collect();
    let budget_rows: Vec<String> = rows.iter().map(|r| text(&r.block)).collect();
    assert_eq!(plain_rows, budget_rows);
    assert!(text(the_mod(&plain).unwrap()).contains("budget : :: core :: option :: Option :: None"));
    // every expansion names the variable, so cargo tracks it
    assert!(all.contains("option_env ! (\"HEDDLE_BUDGET\")"), "{all}");
}

#[test]
fn the_env_budget_overrides_the_attribute_and_a_bad_one_is_an_error() {
    use heddle_syntax::budget::Budget;
    let attr = format!("{ATTR}, budget(2)");
    let all = Context {
        budget_env: Ok(Some(Budget::All)),
        ..ctx_in("tests/codec.rs")
    };
    let out = run(&attr, ITEM, &all);
    let m = the_mod(&out).unwrap();
    assert!(row_fns(m).iter().all(|r| ignored(r).is_none()));
    assert!(text(m).contains("budget : :: core :: option :: Option :: None"));

    let three = Context {
        budget_env: Ok(Some(Budget::Rows(3))),
        ..ctx_in("tests/codec.rs")
    };
    let out = run(ATTR, ITEM, &three);
    let rows = row_fns(the_mod(&out).unwrap());
    let ignored_at: Vec<usize> = (0..rows.len()).filter(|&i| ignored(rows[i]).is_some()).collect();
    assert_eq!(ignored_at, (3..rows.len()).collect::<Vec<_>>());
    assert!(ignored(rows[3]).unwrap().contains("`HEDDLE_BUDGET=3` runs 3 of"));

    // a function ignored as a whole keeps its one `#[ignore]`
    let out = run(
        "budget(1)",
        "#[ignore] fn f(#[levels(1, 2)] a: u8) {}",
        &Context::detached(),
    );
    for r in row_fns(the_mod(&out).unwrap()) {
        assert_eq!(r.attrs.iter().filter(|a| a.path().is_ident("ignore")).count(), 1);
    }

    let bad = Context {
        budget_env: heddle_syntax::budget::Budget::from_env(Some("lots".into())),
        ..ctx_in("tests/codec.rs")
    };
    let out = run(ATTR, ITEM, &bad);
    let errs = errors(&out);
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert!(
        errs[0].starts_with("`HEDDLE_BUDGET` is invalid: `lots` is not a row budget\nhint: "),
        "{errs:?}"
    );
    assert!(the_mod(&out).is_none());
}

/// A context whose pins file holds follow-up rows for `roundtrip` (and no pin).
fn followup_ctx(rows: Vec<Vec<u8>>, fingerprint: Option<Fingerprint>) -> Context {
    let mut ctx = pinned_ctx(vec![vec![0, 0, 0]], None);
    let Ok(Some(pins)) = &mut ctx.pins else {
        unreachable!("pinned_ctx has a pins file")
    };
    let key = PinKey::new("tests/codec.rs", "roundtrip");
    let fp = pins.get(&key).unwrap().fingerprint;
    pins.remove(&key);
    pins.set_followup(
        key,
        Some(heddle_syntax::FollowUp {
            fingerprint: fingerprint.unwrap_or(fp),
            rows,
        }),
    );
    ctx
}

#[test]
fn followup_rows_run_after_the_design_and_always() {
    let attr = format!("{ATTR}, budget(2)");
    let plain = run(&attr, ITEM, &ctx_in("tests/codec.rs"));
    let design = row_fns(the_mod(&plain).unwrap()).len();
    let out = run(
        &attr,
        ITEM,
        &followup_ctx(vec![vec![2, 1, 0], vec![2, 1, 0]], None),
    );
    assert!(errors(&out).is_empty(), "{:?}", errors(&out));
    let m = the_mod(&out).unwrap();
    let rows = row_fns(m);
    assert_eq!(rows.len(), design + 2);
    // the design's rows are those without follow-ups, named as before
    let plain_rows = row_fns(the_mod(&plain).unwrap());
    for (a, b) in rows.iter().zip(&plain_rows) {
        assert_eq!((text(&a.sig), text(&a.block)), (text(&b.sig), text(&b.block)));
    }
    for (i, r) in rows[design..].iter().enumerate() {
        assert_eq!(r.sig.ident, format!("row_followup_{i:02}"));
        assert!(text(&r.block).contains("super :: roundtrip (64 , Codec :: Rle , true)"));
        // a budget never holds back a follow-up row
        assert!(ignored(r).is_none());
    }
    let all = text(m);
    assert!(all.contains("followups : 2"), "{all}");
    assert!(
        all.contains("\"row_followup_00\" , \"row_followup_01\"]"),
        "{all}"
    );
    // names sort in row order, so libtest lists the follow-up rows last
    let names: Vec<String> = rows.iter().map(|r| r.sig.ident.to_string()).collect();
    let mut sorted = names.clone();
    sorted.sort();
    assert_eq!(names, sorted);
}

#[test]
fn stale_or_unfit_followup_rows_are_errors() {
    let out = run(
        ATTR,
        ITEM,
        &followup_ctx(vec![vec![0, 0, 0]], Some(Fingerprint(9))),
    );
    let errs = errors(&out);
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert!(
        errs[0].starts_with("the follow-up rows of `roundtrip` in `heddle-pins.toml` are stale"),
        "{errs:?}"
    );
    assert!(
        errs[0].contains("`cargo heddle probe --clear roundtrip`"),
        "{errs:?}"
    );
    assert!(the_mod(&out).is_none());
    // Delta with batch 1 is excluded
    let out = run(ATTR, ITEM, &followup_ctx(vec![vec![0, 2, 0]], None));
    let errs = errors(&out);
    assert!(
        errs[0].contains("row 0 of the follow-up rows is ruled out by exclude #1"),
        "{errs:?}"
    );
}

#[test]
fn a_costly_spec_warns_at_build_time_that_pinning_is_better() {
    // 40 two-level factors at strength 3: the engine's fast mode reports `pin_advised`
    // for it (its work passes the pinning threshold); the expansion turns that into the
    // use of a deprecated item, the one warning a proc macro can raise on stable Rust
    let params: Vec<String> = (0..40)
        .map(|i| format!("#[levels(false, true)] p{i}: bool"))
        .collect();
    let item = format!("fn wide({}) {{}}", params.join(", "));
    let design = heddle_generator::generate(
        &heddle_generator::Spec::numbered(&[2; 40]).strength(3),
        heddle_generator::Effort::Fast,
    )
    .unwrap();
    assert!(design.stats.pin_advised, "{:?}", design.stats.methods);
    let out = run("strength = 3", &item, &ctx_in("tests/wide.rs"));
    assert!(errors(&out).is_empty(), "{:?}", errors(&out));
    let all = text(the_mod(&out).unwrap());
    assert!(all.contains("# [deprecated (note ="), "{all}");
    assert!(all.contains("const _ : () = __HEDDLE_PIN_ADVISED"), "{all}");
    assert!(
        all.contains("the rows of `wide` are costly to generate on every build"),
        "{all}"
    );
    assert!(all.contains("hint: run `cargo heddle pin`"), "{all}");
    // an ordinary spec, and a pinned one, stay silent
    let small = text(the_mod(&run(ATTR, ITEM, &ctx_in("tests/codec.rs"))).unwrap());
    assert!(!small.contains("__HEDDLE_PIN_ADVISED"), "{small}");
    let pinned = run(ATTR, ITEM, &pinned_ctx(vec![vec![2, 0, 1]], None));
    assert!(!text(the_mod(&pinned).unwrap()).contains("__HEDDLE_PIN_ADVISED"));
}
