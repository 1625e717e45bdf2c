//! Deeply nested input gets a located error instead of overflowing the stack: each case
//! runs on a thread with the 8 MiB stack the compiler runs proc macros on (rustc's main
//! thread, from memory), through the same passes as the macro and the plugin.

use heddle_syntax::nesting::{MAX_NESTING, MAX_OPERATORS};
use heddle_syntax::{Context, Defaults, expand, find::analyse_source};

/// Runs `f` on a thread with the compiler's stack size; an overflow aborts the test
/// process, which fails the test.
fn on_compiler_stack<T: Send + 'static>(f: impl FnOnce() -> T + Send + 'static) -> T {
    std::thread::Builder::new()
        .stack_size(8 << 20)
        .spawn(f)
        .expect("a thread can be started")
        .join()
        .expect("the case does not panic")
}

/// The error messages `analyse_source` gives for a file with one annotated function.
fn errors(src: String) -> Vec<String> {
    on_compiler_stack(move || match analyse_source(&src, &Defaults::default()) {
        Err(e) => e.into_iter().map(|e| e.to_string()).collect(),
        Ok(found) => found
            .into_iter()
            .flat_map(|f| match f.spec {
                Ok(_) => vec![],
                Err(e) => e.into_iter().map(|e| e.to_string()).collect(),
            })
            .collect(),
    })
}

fn parens(n: usize, inner: &str) -> String {
    format!("{}{inner}{}", "(".repeat(n), ")".repeat(n))
}

const PARAMS: &str = "#[levels(0, 1)] a: u8, #[levels(0, 1)] b: u8";

#[test]
fn a_deep_exclude_is_refused_where_it_goes_too_deep() {
    let src = format!(
        "#[cover(exclude({}))]\nfn f({PARAMS}) {{}}",
        parens(600, "a == 1")
    );
    let errs = errors(src);
    assert_eq!(errs.len(), 1, "{errs:#?}");
    assert_eq!(
        errs[0],
        format!(
            "`#[cover(…)]` nests deeper than {MAX_NESTING} levels of brackets and operators\n\
             hint: write each condition as an `exclude(…)` of its own, without redundant parentheses"
        )
    );
    let nots = format!(
        "#[cover(exclude({}a == 1))]\nfn f({PARAMS}) {{}}",
        "!".repeat(20_000)
    );
    assert!(errors(nots)[0].contains("nests deeper than"));
}

#[test]
fn a_deep_level_list_is_refused_and_the_rest_still_checked() {
    let src = format!(
        "#[cover(strength = 0)]\nfn f(#[levels({})] a: u8, #[levels(0, 1)] b: u8) {{}}",
        parens(1000, "1")
    );
    let errs = errors(src);
    assert_eq!(errs.len(), 2, "{errs:#?}");
    assert!(
        errs.iter()
            .any(|e| e.starts_with(&format!("`#[levels(…)]` nests deeper than {MAX_NESTING} levels")))
    );
}

#[test]
fn a_long_chain_is_refused_at_the_engine_limit_or_the_operator_limit() {
    let chain = |n: usize| vec!["a == 1"; n].join(" && ");
    // 1024 comparisons nest exactly as deep as the engine reads
    let ok = format!("#[cover(exclude({}))]\nfn f({PARAMS}) {{}}", chain(1024));
    assert_eq!(errors(ok), Vec::<String>::new());
    let deep = format!("#[cover(exclude({}))]\nfn f({PARAMS}) {{}}", chain(1025));
    let errs = errors(deep);
    assert!(
        errs[0].starts_with("`exclude(…)` nests deeper than 1024 operators\nhint: split it"),
        "{errs:#?}"
    );
    let long = format!("#[cover(exclude({}))]\nfn f({PARAMS}) {{}}", chain(10_000));
    let errs = errors(long);
    assert!(
        errs[0].starts_with(&format!(
            "`#[cover(…)]` holds more than {MAX_OPERATORS} operators"
        )),
        "{errs:#?}"
    );
}

#[test]
fn the_deepest_accepted_input_is_read_on_the_compilers_stack() {
    // inside `exclude(…)`, 125 groups and the run `==` make 128 levels
    let src = format!(
        "#[cover(exclude({}))]\nfn f(#[levels({}, 1)] a: u8, #[levels(0, 1)] b: u8) {{}}",
        parens(MAX_NESTING - 3, "a == 1"),
        parens(MAX_NESTING, "0")
    );
    assert_eq!(errors(src), Vec::<String>::new());
    let src = format!(
        "#[cover(exclude({}))]\nfn f({PARAMS}) {{}}",
        parens(MAX_NESTING - 2, "a == 1"),
    );
    assert_eq!(errors(src).len(), 1);
}

#[test]
fn a_deep_function_body_is_handed_back_with_an_error() {
    let item = format!("fn f({PARAMS}) {{ let _x = {}; }}", parens(2000, "1"));
    let out = on_compiler_stack(move || {
        let item: proc_macro2::TokenStream = item.parse().expect("valid tokens");
        expand(proc_macro2::TokenStream::new(), item, &Context::detached()).to_string()
    });
    assert!(out.starts_with(":: core :: compile_error !"), "{}", &out[..200]);
    assert!(out.contains("the function nests deeper than"));
    // and so is a whole file read by the plugin
    let file = format!("#[cover]\nfn f({PARAMS}) {{ let _x = {}; }}", parens(2000, "1"));
    let errs = errors(file);
    assert!(errs[0].starts_with("the file nests deeper than"), "{errs:#?}");
}
