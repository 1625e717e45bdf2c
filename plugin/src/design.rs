//! `cargo heddle design`: the engine on factors from the command line, for scripts and CI.

use std::io::Write;
use std::process::ExitCode;
use std::time::Instant;

use clap::{Args, ValueEnum};
use heddle_generator::{Design, Effort, Expr, Spec, bounds, generate};
use serde::Serialize;

use crate::effort::{EffortArg, with_spinner};
use crate::failure::{Diagnostic, Failure, found, usage};
use crate::say;
use crate::spec_args::{parse_focus, parse_required, parse_specs};
use heddle_syntax::require::{Blocked, blocked};

/// Arguments of `design`.
#[derive(Args, Debug)]
pub struct DesignArgs {
    /// Factors: `V^N` (N factors of V levels, named f1, f2, … by position) or
    /// `NAME=L1,L2,…`.
    #[arg(value_name = "SPEC", required = true)]
    specs: Vec<String>,
    /// Strength t: every t-way combination of levels is covered.
    #[arg(long, short = 't', default_value_t = 2)]
    strength: usize,
    /// Index λ: how many rows must cover each combination.
    #[arg(long, short = 'l', default_value_t = 1)]
    lambda: u32,
    /// Seed of the engine's random choices.
    #[arg(long, short = 's', default_value_t = 0)]
    seed: u64,
    /// Exclude rows where this holds, e.g. 'f1 == 0 && f2 == 1' (repeatable).
    #[arg(long, value_name = "EXPR")]
    exclude: Vec<String>,
    /// A row the design must contain, by labels, e.g. 'os=mac,f1=0'; factors left out
    /// are chosen by the engine (repeatable; such rows come first and count toward
    /// coverage).
    #[arg(long, value_name = "NAME=LEVEL,…")]
    require: Vec<String>,
    /// Factors covered at a higher strength than the rest, e.g. 'codec,unit,workers'
    /// (at the strength + 1) or 'codec,unit,workers,strength=3,lambda=2' (repeatable).
    #[arg(long, value_name = "NAME,…[,strength=S][,lambda=L]")]
    focus: Vec<String>,
    /// `fast` (constructions and greedy) or `tight` (adds local search).
    #[arg(long, value_enum, default_value_t = EffortArg::Fast)]
    effort: EffortArg,
    /// Move budget of the local search (with `--effort tight`).
    #[arg(long, value_name = "N")]
    budget: Option<u64>,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t = Format::Csv)]
    format: Format,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
enum Format {
    Csv,
    Json,
}

/// Runs `design`.
pub fn run(args: DesignArgs) -> Result<ExitCode, Failure> {
    let factors = parse_specs(&args.specs)?;
    let mut excludes = Vec::new();
    for src in &args.exclude {
        let e = Expr::parse(src, &factors).map_err(|e| {
            usage(
                Diagnostic::new(format!("{}\n  {src}\n  {}", e.message, e.caret(src)))
                    .hint(e.hint.clone())
                    .at(format!("`--exclude` column {}", e.column)),
            )
        })?;
        // a condition no row meets leaves nothing out: most likely a mistyped exclude
        if !Spec::new(factors.clone()).exclude(e.clone().not()).any_allowed() {
            say::err(format!(
                "warning: {}",
                Diagnostic::new(format!(
                    "`--exclude '{src}'` can never hold, so it excludes nothing"
                ))
                .hint("check the levels it names: a factor has one level per row")
            ));
        }
        excludes.push(e);
    }
    let mut spec = Spec::new(factors)
        .strength(args.strength)
        .lambda(args.lambda)
        .seed(args.seed);
    spec.excludes = excludes;
    for text in &args.require {
        let row = parse_required(text, &spec.factors)?;
        match blocked(&spec, &row) {
            None => spec.required.push(row),
            Some(why) => {
                let message = match why {
                    Blocked::Exclude(e) => format!(
                        "`--require {text}` is ruled out by `--exclude {}`",
                        args.exclude[e]
                    ),
                    Blocked::NoCompletion => format!(
                        "`--require {text}` has no allowed row: the excludes rule out every way to fill in the other factors"
                    ),
                };
                return Err(usage(
                    Diagnostic::new(message)
                        .hint("change a level of the required row, or loosen the excludes"),
                ));
            }
        }
    }
    for text in &args.focus {
        let f = parse_focus(text, &spec.factors, spec.strength, spec.lambda)?;
        spec.focus.push(f);
    }
    let effort = args.effort.with_budget(args.budget)?;
    let started = Instant::now();
    let generated = match effort {
        Effort::Tight { budget } => {
            with_spinner(&format!("searching for fewer rows ({budget} moves)"), || {
                generate(&spec, effort)
            })
        }
        Effort::Fast => generate(&spec, effort),
    };
    let design = generated.map_err(|e| match e {
        heddle_generator::Error::Internal(m) => found(m),
        other => usage(Diagnostic::from(&other)),
    })?;
    let elapsed = started.elapsed();
    // the engine's bound counts every interaction; with excludes some need no row
    let lower_bound = u64::try_from(bounds::possible_lower_bound(&spec)).unwrap_or(u64::MAX);
    let out = match args.format {
        Format::Csv => csv(&spec, &design),
        Format::Json => json(&spec, &design, &args, lower_bound, elapsed.as_secs_f64()),
    };
    let mut stdout = std::io::stdout().lock();
    // a closed pipe (e.g. `| head`) is not an error worth reporting
    let _ = stdout.write_all(out.as_bytes()).and_then(|_| stdout.flush());
    let possible = if spec.excludes.is_empty() {
        String::new()
    } else {
        format!(
            " for the {} interactions the excludes leave possible",
            design.stats.interactions - design.stats.impossible
        )
    };
    say::err(format!(
        "heddle: {} rows ({}), lower bound {lower_bound}{possible}, expected-value bound {}, {:.1} ms",
        design.rows.len(),
        design.stats.method,
        design.stats.expected_bound,
        elapsed.as_secs_f64() * 1e3
    ));
    Ok(ExitCode::SUCCESS)
}

/// A CSV field, quoted when it holds a comma, quote or line break (RFC 4180).
pub(crate) fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn csv(spec: &Spec, design: &Design) -> String {
    let mut out = String::new();
    let header: Vec<String> = spec.factors.iter().map(|f| field(&f.name)).collect();
    out.push_str(&header.join(","));
    out.push('\n');
    for row in &design.rows {
        let cells: Vec<String> = row
            .iter()
            .zip(&spec.factors)
            .map(|(&l, f)| field(&f.levels[l as usize]))
            .collect();
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    out
}

/// Version of the JSON document `design --format json` prints (2: the seed is a decimal
/// string, as in every heddle output).
const DESIGN_JSON_FORMAT: u32 = 2;

#[derive(Serialize)]
struct JsonDesign<'a> {
    format: u32,
    engine_version: u32,
    factors: Vec<JsonFactor<'a>>,
    parameters: JsonParameters<'a>,
    rows: Vec<Vec<&'a str>>,
    statistics: JsonStatistics<'a>,
}

#[derive(Serialize)]
struct JsonFactor<'a> {
    name: &'a str,
    levels: &'a [String],
}

#[derive(Serialize)]
struct JsonParameters<'a> {
    strength: usize,
    lambda: u32,
    /// Decimal string: JSON readers that hold numbers as doubles corrupt seeds above 2^53.
    seed: String,
    effort: &'static str,
    excludes: Vec<String>,
    required: Vec<Vec<Option<&'a str>>>,
    /// Focus sets as factor names, strength and λ; absent when none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    focus: Vec<JsonFocus<'a>>,
}

#[derive(Serialize)]
struct JsonFocus<'a> {
    factors: Vec<&'a str>,
    strength: usize,
    lambda: u32,
}

#[derive(Serialize)]
struct JsonStatistics<'a> {
    rows: usize,
    method: &'a str,
    lower_bound: u64,
    expected_bound: u64,
    interactions: u64,
    impossible: u64,
    coverage_curve: &'a [f64],
    seconds: f64,
}

fn json(spec: &Spec, design: &Design, args: &DesignArgs, lower_bound: u64, seconds: f64) -> String {
    let doc = JsonDesign {
        format: DESIGN_JSON_FORMAT,
        engine_version: design.stats.engine_version,
        factors: spec
            .factors
            .iter()
            .map(|f| JsonFactor {
                name: &f.name,
                levels: &f.levels,
            })
            .collect(),
        parameters: JsonParameters {
            strength: spec.strength,
            lambda: spec.lambda,
            seed: spec.seed.to_string(),
            effort: match args.effort {
                EffortArg::Fast => "fast",
                EffortArg::Tight => "tight",
            },
            excludes: spec
                .excludes
                .iter()
                .map(|e| e.display(&spec.factors).to_string())
                .collect(),
            // a cell left to the engine is `null`
            required: spec
                .required
                .iter()
                .map(|r| {
                    r.iter()
                        .zip(&spec.factors)
                        .map(|(&l, f)| f.levels.get(usize::from(l)).map(String::as_str))
                        .collect()
                })
                .collect(),
            focus: spec
                .focus
                .iter()
                .map(|f| JsonFocus {
                    factors: f.factors.iter().map(|&c| spec.factors[c].name.as_str()).collect(),
                    strength: f.strength,
                    lambda: f.lambda,
                })
                .collect(),
        },
        rows: design
            .rows
            .iter()
            .map(|r| {
                r.iter()
                    .zip(&spec.factors)
                    .map(|(&l, f)| f.levels[l as usize].as_str())
                    .collect()
            })
            .collect(),
        statistics: JsonStatistics {
            rows: design.rows.len(),
            method: &design.stats.method,
            lower_bound,
            expected_bound: design.stats.expected_bound,
            interactions: design.stats.interactions,
            impossible: design.stats.impossible,
            coverage_curve: &design.stats.coverage_curve,
            seconds,
        },
    };
    let mut s = serde_json::to_string_pretty(&doc).unwrap_or_default();
    s.push('\n');
    s
}
