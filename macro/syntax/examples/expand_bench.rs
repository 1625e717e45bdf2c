//! Benchmark: what `#[cover]` costs the compiler, per annotated function.
//!
//! Calls the expansion exactly as the proc macro does (tokens in, tokens out, no pins
//! file so the engine runs in fast mode) and prints wall-clock figures; it asserts
//! nothing. Run it in the profile proc macros are built with:
//!
//! ```text
//! cargo run -p heddle-syntax --example expand_bench            # dev: opt-level 0
//! cargo run -p heddle-syntax --example expand_bench --config 'profile.dev.opt-level=3'
//! ```
//!
//! The second line is what `[profile.dev.build-override] opt-level = 3` gives a crate's
//! debug build: proc macros and their dependencies (syn, the engine) optimised. Outside
//! the compiler `proc-macro2` uses its own token implementation instead of the
//! compiler's, so the token-handling part is an approximation; the engine part is exact.
//! Compiling the generated row tests is rustc's work and not included.

use std::time::{Duration, Instant};

use heddle_syntax::args::Args;
use heddle_syntax::ast::CoverFn;
use heddle_syntax::expand::{Context, expand};
use heddle_syntax::{Defaults, rows_for, validate};
use proc_macro2::{Span, TokenStream};

struct Case {
    name: &'static str,
    levels: Vec<usize>,
    strength: usize,
    lambda: u32,
}

fn source(case: &Case) -> (String, String) {
    let params: Vec<String> = case
        .levels
        .iter()
        .enumerate()
        .map(|(i, &n)| {
            let levels: Vec<String> = (0..n).map(|l| format!("Mode::M{l}")).collect();
            format!("#[levels({})] p{i}: Mode", levels.join(", "))
        })
        .collect();
    (
        format!("strength = {}, lambda = {}", case.strength, case.lambda),
        format!("fn bench_target({}) {{}}", params.join(", ")),
    )
}

fn ts(s: &str) -> TokenStream {
    // the benchmark's own sources are valid token text
    s.parse().expect("generated source tokenizes")
}

fn time<T>(runs: usize, mut f: impl FnMut() -> T) -> (Duration, Duration, T) {
    let mut times = Vec::with_capacity(runs);
    let mut last = None;
    for _ in 0..runs {
        let t = Instant::now();
        last = Some(f());
        times.push(t.elapsed());
    }
    times.sort();
    // runs >= 1, so there is a last result
    (times[0], times[times.len() / 2], last.expect("at least one run"))
}

fn ms(d: Duration) -> String {
    format!("{:9.3} ms", d.as_secs_f64() * 1e3)
}

fn main() {
    let profile = if cfg!(debug_assertions) {
        "dev (debug assertions on)"
    } else {
        "optimised"
    };
    println!("expansion cost per annotated function, {profile}");
    println!(
        "{:<34} {:>5} {:>12} {:>12} {:>12} {:>12} {:>12}",
        "spec", "rows", "parse+check", "engine", "expand min", "expand med", "output kB"
    );
    let cases = [
        Case {
            name: "8 factors x 3 levels, t=2, λ=2",
            levels: vec![3; 8],
            strength: 2,
            lambda: 2,
        },
        Case {
            name: "8 factors x 4 levels, t=2, λ=2",
            levels: vec![4; 8],
            strength: 2,
            lambda: 2,
        },
        Case {
            name: "8 factors 2..6 levels, t=2, λ=2",
            levels: vec![6, 5, 4, 4, 3, 3, 2, 2],
            strength: 2,
            lambda: 2,
        },
        Case {
            name: "8 factors x 4 levels, t=3, λ=2",
            levels: vec![4; 8],
            strength: 3,
            lambda: 2,
        },
        Case {
            name: "12 factors x 5 levels, t=3, λ=2",
            levels: vec![5; 12],
            strength: 3,
            lambda: 2,
        },
        Case {
            name: "20 factors x 6 levels, t=2, λ=3",
            levels: vec![6; 20],
            strength: 2,
            lambda: 3,
        },
        Case {
            name: "10 factors x 4 levels, t=4, λ=1",
            levels: vec![4; 10],
            strength: 4,
            lambda: 1,
        },
    ];
    let ctx = Context::detached();
    for case in &cases {
        let (attr, item) = source(case);
        let runs = if case.strength >= 3 { 3 } else { 10 };
        let (_, check_med, spec) = time(runs, || {
            let args = Args::parse_tokens(ts(&attr), Span::call_site()).expect("valid attribute");
            let f: syn::ItemFn = syn::parse_str(&item).expect("valid item");
            validate(CoverFn::new(&args, &f, None), &Defaults::default())
                .expect("valid spec")
                .spec
        });
        let (_, engine_med, rows) = time(runs, || {
            rows_for(&spec, None, None).expect("the engine accepts it")
        });
        let (min, med, out) = time(runs, || expand(ts(&attr), ts(&item), &ctx));
        let kb = out.to_string().len() as f64 / 1024.0;
        println!(
            "{:<34} {:>5} {} {} {} {} {:>9.1} kB",
            case.name,
            rows.rows.len(),
            ms(check_med),
            ms(engine_med),
            ms(min),
            ms(med),
            kb
        );
    }
}
