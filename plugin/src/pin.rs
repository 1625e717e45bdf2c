//! `cargo heddle pin`: fix the rows of every annotated function in the crate's pins file,
//! so builds use them verbatim instead of generating. A function whose spec changed keeps
//! the old rows that are still valid ([`crate::carry`]) and the engine adds only what is
//! missing; functions that are gone lose their pins; unchanged ones are left alone.

use std::collections::BTreeSet;
use std::io::IsTerminal;
use std::process::ExitCode;
use std::time::Duration;

use clap::Args;
use heddle_generator::{Effort, Row, Spec, UNSET, generate};
use heddle_syntax::keywords as kw;
use heddle_syntax::{Origin, Pin, PinKey, PinsFile};
use indicatif::{ProgressBar, ProgressStyle};

use crate::carry::{Carried, carry_over, describe_change};
use crate::effort::EffortArg;
use crate::failure::{Diagnostic, Failure, found};
use crate::pinfile;
use crate::sources::{self, Function, Scanned};
use crate::status::{Status, status};
use crate::workspace::{self, Selection};
use heddle_store::words::plural;

/// Arguments of `pin`.
#[derive(Args, Debug)]
pub struct PinArgs {
    #[command(flatten)]
    selection: Selection,
    /// `fast` (constructions and greedy) or `tight` (adds local search).
    #[arg(long, value_enum, default_value_t = EffortArg::Fast)]
    effort: EffortArg,
    /// Move budget of the local search (with `--effort tight`).
    #[arg(long, value_name = "N")]
    budget: Option<u64>,
}

/// What happens to one function's pin.
enum Plan<'a> {
    UpToDate(&'a Function, usize),
    New(&'a Function),
    Changed(&'a Function, Carried, Vec<String>),
}

/// Runs `pin`.
pub fn run(args: PinArgs) -> Result<ExitCode, Failure> {
    let effort = args.effort.with_budget(args.budget)?;
    let project = workspace::load(&args.selection)?;
    let scanned = sources::scan(&project);
    // every pins file is read before anything is written: a broken one stops it all
    let mut files = Vec::with_capacity(scanned.len());
    for pkg in &scanned {
        files.push(pinfile::load_upgrading(pkg)?);
    }
    // follow-up rows of a changed or removed function go before the pins are planned
    for (pkg, pins) in scanned.iter().zip(&mut files) {
        if let Some(pins) = pins {
            for line in drop_stale_followups(pkg, pins) {
                say!("{line}");
            }
        }
    }
    let mut problems = 0usize;
    for p in scanned.iter().flat_map(|s| &s.problems) {
        say_err!("error: {p}");
        problems += 1;
    }

    let plans: Vec<Vec<Plan>> = scanned
        .iter()
        .zip(&files)
        .map(|(pkg, pins)| plan(pkg, pins.as_ref()))
        .collect();
    let work = plans
        .iter()
        .flatten()
        .filter(|p| !matches!(p, Plan::UpToDate(..)))
        .count() as u64;
    let bar = progress(work);

    for ((pkg, old), plans) in scanned.iter().zip(files).zip(plans) {
        let mut out = Package {
            had_file: old.is_some(),
            pins: old.unwrap_or_default(),
            ..Package::default()
        };
        for p in plans {
            match apply(pkg, p, effort, &mut out, &bar) {
                Ok(line) => bar.suspend(|| say!("{line}")),
                Err(e) => {
                    problems += 1;
                    bar.suspend(|| say_err!("error: {e}"));
                }
            }
        }
        let gone = remove_gone(pkg, &mut out.pins, &bar);
        write(pkg, &out, gone, &bar)?;
    }
    bar.finish_and_clear();
    if problems > 0 {
        return Err(found(
            Diagnostic::new(format!(
                "{} above; the functions they concern keep their pins as they were",
                plural(problems, "problem", "problems")
            ))
            .hint(format!(
                "fix them and run `{}` again",
                heddle_syntax::pins::PIN_COMMAND
            )),
        ));
    }
    Ok(ExitCode::SUCCESS)
}

/// One package's pins as `pin` rewrites them, and what it did to them.
#[derive(Default)]
struct Package {
    pins: PinsFile,
    had_file: bool,
    /// Test files whose pins changed, to touch so cargo rebuilds them.
    touched: BTreeSet<String>,
    new: usize,
    changed: usize,
    same: usize,
}

/// Carries out one function's plan: the line `pin` prints for it, or why it failed.
fn apply(
    pkg: &Scanned,
    p: Plan<'_>,
    effort: Effort,
    out: &mut Package,
    bar: &ProgressBar,
) -> Result<String, Diagnostic> {
    let (f, carried, changes) = match p {
        Plan::UpToDate(f, rows) => {
            out.same += 1;
            return Ok(format!("{}: up to date, {rows} rows", place(pkg, f)));
        }
        Plan::New(f) => (f, None, Vec::new()),
        Plan::Changed(f, carried, changes) => (f, Some(carried), changes),
    };
    bar.set_message(f.function.clone());
    let required = carried.as_ref().map(|c| c.rows.clone()).unwrap_or_default();
    let kept = required.len();
    let result = make(f, required, effort);
    bar.inc(1);
    let rows = result.map_err(|e| e.at(place(pkg, f)))?;
    let n = rows.len();
    store(&mut out.pins, f, rows);
    out.touched.insert(f.file.clone());
    let Some(carried) = carried else {
        out.new += 1;
        return Ok(format!("{}: new, {n} rows", place(pkg, f)));
    };
    out.changed += 1;
    let mut line = format!(
        "{}: kept {kept}, added {}, dropped {}, {n} rows",
        place(pkg, f),
        n.saturating_sub(kept),
        carried.dropped()
    );
    let why = carried.why_dropped();
    let mut notes: Vec<String> = changes;
    if !why.is_empty() {
        notes.push(format!("dropped: {why}"));
    }
    if !notes.is_empty() {
        line.push_str(&format!(" ({})", notes.join("; ")));
    }
    Ok(line)
}

/// Removes the pins whose function is gone (never those of functions that could not be
/// read); returns how many.
fn remove_gone(pkg: &Scanned, pins: &mut PinsFile, bar: &ProgressBar) -> usize {
    let live: BTreeSet<_> = pkg.functions.iter().map(Function::key).collect();
    let gone: Vec<_> = pins
        .pins
        .keys()
        .filter(|k| !live.contains(k) && !pkg.protects(k))
        .cloned()
        .collect();
    for key in &gone {
        pins.remove(key);
        bar.suspend(|| {
            say!(
                "{} {}: removed, the function no longer exists",
                pkg.display(&key.file),
                key.function
            )
        });
    }
    gone.len()
}

/// Removes follow-up rows proposed for another spec than their function's (they could
/// not run) or for a function that is gone; one line for each.
fn drop_stale_followups(pkg: &Scanned, pins: &mut PinsFile) -> Vec<String> {
    let stale: Vec<(PinKey, String)> = pins
        .followups
        .iter()
        .filter_map(|(key, f)| match pkg.functions.iter().find(|g| g.key() == *key) {
            Some(g) if g.spec.fingerprint != f.fingerprint => Some((
                key.clone(),
                format!(
                    "{}: dropped its follow-up rows, proposed for the spec before it changed",
                    place(pkg, g)
                ),
            )),
            Some(_) => None,
            None if !pkg.protects(key) => Some((
                key.clone(),
                format!(
                    "{} {}: removed its follow-up rows, the function no longer exists",
                    pkg.display(&key.file),
                    key.function
                ),
            )),
            None => None,
        })
        .collect();
    stale
        .into_iter()
        .map(|(key, line)| {
            pins.set_followup(key, None);
            line
        })
        .collect()
}

/// Writes the package's pins file when it changed, touches the test files whose pins
/// changed, and prints the package's summary.
fn write(pkg: &Scanned, out: &Package, gone: usize, bar: &ProgressBar) -> Result<(), Failure> {
    let pins = &out.pins;
    let file = pkg.display(heddle_syntax::pins::PINS_FILE);
    if !out.had_file && pins.pins.is_empty() {
        if pkg.functions.is_empty() && pkg.problems.is_empty() {
            bar.suspend(|| {
                say!(
                    "package `{}` has no `#[{}]` functions",
                    pkg.package.name,
                    kw::COVER
                )
            });
        }
        return Ok(());
    }
    let text = pins.to_toml();
    let on_disk = std::fs::read_to_string(PinsFile::path(&pkg.package.root)).ok();
    if on_disk.as_deref() == Some(text.as_str()) {
        bar.suspend(|| say!("{file}: up to date, {} pins", pins.pins.len()));
        return Ok(());
    }
    pinfile::save(pkg, pins)?;
    let mut touch_failed = Vec::new();
    for f in &out.touched {
        if let Err(e) = pinfile::touch(&pkg.package.root.join(f)) {
            touch_failed.push(format!("{}: {e}", pkg.display(f)));
        }
    }
    let mut summary = format!(
        "{file}: wrote {} ({} new, {} changed, {} up to date, {gone} removed)",
        plural(pins.pins.len(), "pin", "pins"),
        out.new,
        out.changed,
        out.same
    );
    if !out.touched.is_empty() {
        summary.push_str(&format!(
            ", touched {}",
            plural(out.touched.len(), "test file", "test files")
        ));
    }
    bar.suspend(|| {
        say!("{summary}");
        for t in &touch_failed {
            say_err!("warning: could not touch {t}; touch it so that cargo rebuilds it");
        }
    });
    Ok(())
}

/// `file:line name`, as every line of `pin` names a function.
fn place(pkg: &Scanned, f: &Function) -> String {
    format!("{}:{} {}", pkg.display(&f.file), f.line, f.function)
}

fn plan<'a>(pkg: &'a Scanned, pins: Option<&PinsFile>) -> Vec<Plan<'a>> {
    pkg.functions
        .iter()
        .map(|f| {
            let key = f.key();
            let Some(old) = pins.and_then(|p| p.get(&key)) else {
                return Plan::New(f);
            };
            if let Status::Pinned(_) = status(f, pins) {
                return Plan::UpToDate(f, old.rows.len());
            }
            let origin = pins.and_then(|p| p.origin(&key));
            let spec = &f.spec.spec;
            let changes = if old.fingerprint == f.spec.fingerprint {
                // same spec, rows that do not fit or cover: a hand edit to repair
                vec!["the pinned rows did not cover the spec".to_string()]
            } else {
                describe_change(old, origin, spec)
            };
            Plan::Changed(f, carry_over(old, origin, spec), changes)
        })
        .collect()
}

/// Rows for `f`: its own required rows (`require(…)`), then the `carried` rows, then
/// what the engine adds.
fn make(f: &Function, carried: Vec<Vec<u8>>, effort: Effort) -> Result<Vec<Vec<u8>>, Diagnostic> {
    let spec = Spec {
        required: with_carried(&f.spec.spec.required, carried),
        ..f.spec.spec.clone()
    };
    generate(&spec, effort)
        .map(|d| d.rows)
        .map_err(|e| Diagnostic::new(format!("the engine refuses this spec: {e}")).hint(e.hint()))
}

/// The function's required rows followed by the carried ones. A carried row that fills
/// in a required row (the old pin's completion of it, which carrying keeps) takes that
/// row's place, so the completion stays as pinned instead of appearing twice.
fn with_carried(required: &[Row], mut carried: Vec<Row>) -> Vec<Row> {
    let mut out = Vec::with_capacity(required.len() + carried.len());
    for req in required {
        let fills =
            |row: &Row| row.len() == req.len() && row.iter().zip(req).all(|(&a, &b)| b == UNSET || a == b);
        match carried.iter().position(fills) {
            Some(i) => out.push(carried.remove(i)),
            None => out.push(req.clone()),
        }
    }
    out.extend(carried);
    out
}

fn store(pins: &mut PinsFile, f: &Function, rows: Vec<Vec<u8>>) {
    let spec = &f.spec.spec;
    let pin = Pin {
        fingerprint: f.spec.fingerprint,
        factors: spec.factors.iter().map(|x| x.name.clone()).collect(),
        rows,
    };
    pins.insert_with_origin(f.key(), pin, Origin::of(spec));
}

/// A progress bar on stderr when it is a terminal and there is work; hidden otherwise.
fn progress(work: u64) -> ProgressBar {
    if work == 0 || !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(work);
    if let Ok(style) =
        ProgressStyle::with_template("{spinner} pinning {pos}/{len} [{bar:30}] {elapsed} {msg}")
    {
        bar.set_style(style.progress_chars("=> "));
    }
    bar.enable_steady_tick(Duration::from_millis(120));
    bar
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn carried_completions_take_the_place_of_their_required_rows() {
        let required = vec![vec![1, UNSET, 0], vec![0, 0, 0]];
        let carried = vec![vec![0, 1, 1], vec![1, 1, 0], vec![0, 0, 0], vec![1, 0, 1]];
        assert_eq!(
            with_carried(&required, carried),
            vec![vec![1, 1, 0], vec![0, 0, 0], vec![0, 1, 1], vec![1, 0, 1]]
        );
        // nothing carried fills a new required row: it stays open for the engine
        assert_eq!(
            with_carried(&[vec![UNSET, 1]], vec![vec![0, 0]]),
            vec![vec![UNSET, 1], vec![0, 0]]
        );
    }
}
