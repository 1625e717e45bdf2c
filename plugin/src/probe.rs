//! `cargo heddle probe [TEST]`: follow-up rows for the suites whose last run the report
//! cannot pin on one interaction ([`crate::followup`] chooses them), written to the
//! crate's pins file as the function's follow-up rows. The next build runs them after the
//! design's rows as ordinary row tests (`row_followup_00`, …), recorded and reported
//! with the rest, so the next `cargo heddle test` ranks the suspects with them; when it
//! still cannot tell some apart, `probe` proposes another round, appended to the first.
//! `probe --clear` removes them; so does `cargo heddle pin` once the spec changes.

use std::fmt::Write as _;
use std::process::ExitCode;

use clap::Args;
use heddle_store::{SuiteRecords, engine_spec, tally};
use heddle_syntax::pins::{PINS_FILE, PROBE_COMMAND};
use heddle_syntax::{FollowUp, PinsFile};

use crate::analysis::analyse;
use crate::failure::{Diagnostic, Failure, found, usage};
use crate::followup::{Proposal, propose};
use crate::pinfile;
use crate::report::{self, Format, ReportArgs, levels_text};
use crate::sources::{self, Function, Scanned};
use crate::workspace::{self, Selection};
use heddle_store::words::plural;

/// Arguments of `probe`.
#[derive(Args, Debug)]
pub struct ProbeArgs {
    #[command(flatten)]
    selection: Selection,
    /// The function: its name, a suffix of its module path, or `FILE::NAME`; without
    /// it, every function whose run needs follow-up rows.
    #[arg(value_name = "TEST")]
    test: Option<String>,
    /// The run whose outcomes the rows follow up: `latest` or a run id.
    #[arg(long, value_name = "latest|ID", default_value = "latest")]
    run: String,
    /// Most new follow-up rows per function in this round (default: its number of
    /// parameters); rows that ran already may be proposed again besides.
    #[arg(long, value_name = "N")]
    max_rows: Option<usize>,
    /// Print the rows without writing them.
    #[arg(long)]
    dry_run: bool,
    /// Remove the follow-up rows (of TEST, or of every function) instead.
    #[arg(long, conflicts_with_all = ["dry_run", "max_rows"])]
    clear: bool,
}

/// Runs `probe`.
pub fn run(args: ProbeArgs) -> Result<ExitCode, Failure> {
    if args.max_rows == Some(0) {
        return Err(usage(
            Diagnostic::new("`--max-rows 0` proposes nothing").hint("give at least 1, or leave it out"),
        ));
    }
    let project = workspace::load(&args.selection)?;
    let scanned = sources::scan(&project);
    let named = match &args.test {
        Some(test) => Some(crate::show::resolve(&scanned, test)?),
        None => None,
    };
    if args.clear {
        return clear(&scanned, named);
    }
    let rargs = ReportArgs {
        selection: args.selection.clone(),
        run: args.run.clone(),
        runs: None,
        all: false,
        format: Format::Table,
        store: Vec::new(),
        // the report's default; reading does not use it
        confidence: 0.95,
        output: None,
        color: None,
        fail_on: Vec::new(),
    };
    let (store, packages) = report::open_store(&rargs)?;
    let (records, _) = report::read(&store, &rargs, &packages)?;
    let mut wrote = 0usize;
    let mut considered = 0usize;
    for suite in &records.suites {
        let Some((pkg, f)) = source_of(&scanned, suite) else {
            continue;
        };
        if named.is_some_and(|(p, g)| p.package.name != pkg.package.name || g.key() != f.key()) {
            continue;
        }
        considered += 1;
        match follow_up(pkg, f, suite, &args)? {
            Some(n) => wrote += n,
            None => continue,
        }
    }
    if let (Some((pkg, f)), 0) = (named, considered) {
        return Err(found(
            Diagnostic::new(format!(
                "run {} holds no records of `{}::{}`",
                records.runs.first().map_or("?", |r| r.id.as_str()),
                pkg.display(&f.file),
                f.function
            ))
            .hint("run its tests first, e.g. `cargo heddle test`"),
        ));
    }
    if wrote == 0 {
        say!(
            "heddle: no follow-up rows proposed for run {}",
            records.runs.last().map_or("?", |r| r.id.as_str())
        );
    } else if !args.dry_run {
        say!(
            "heddle: run the tests again (`cargo heddle test`): the report ranks the suspects with the follow-up rows; `{PROBE_COMMAND}` proposes more if they are still needed"
        );
    }
    Ok(ExitCode::SUCCESS)
}

/// The annotated function a suite's records belong to.
fn source_of<'a>(scanned: &'a [Scanned], suite: &SuiteRecords) -> Option<(&'a Scanned, &'a Function)> {
    let spec = &suite.spec;
    scanned
        .iter()
        .filter(|p| p.package.name == spec.krate)
        .find_map(|p| {
            p.functions
                .iter()
                .find(|f| f.file == spec.file && f.function == spec.function)
                .map(|f| (p, f))
        })
}

/// Proposes and writes the follow-up rows of one function: how many rows it wrote, or
/// `None` when it needs none (said why).
fn follow_up(
    pkg: &Scanned,
    f: &Function,
    suite: &SuiteRecords,
    args: &ProbeArgs,
) -> Result<Option<usize>, Failure> {
    let spec = &suite.spec;
    let place = format!("{}:{} {}", pkg.display(&f.file), f.line, f.function);
    if f.spec.fingerprint.to_string() != spec.fingerprint {
        say!("{place}: skipped, its spec changed since the run; run its tests again first");
        return Ok(None);
    }
    let mut pins = pinfile::load(pkg)?.unwrap_or_default();
    let key = f.key();
    let recorded = &spec.rows[spec.design_rows()..];
    let pending = pins.followup(&key).map_or(&[][..], |x| x.rows.as_slice());
    if pending != recorded {
        say!(
            "{place}: skipped, its follow-up rows in `{}` have not run yet; run its tests first",
            pkg.display(PINS_FILE)
        );
        return Ok(None);
    }
    let tallies = tally(spec, suite.outcomes()).map_err(|e| found(format!("{place}: {e}")))?;
    let analysis = analyse(&tallies);
    if analysis.failures == 0 {
        return Ok(None);
    }
    let engine = engine_spec(spec).map_err(|e| found(format!("{place}: {e}")))?;
    let max = args.max_rows.unwrap_or(engine.factors.len());
    let Some(p) = propose(&engine, &spec.rows, &tallies, &analysis, max) else {
        let named = analysis
            .suspects
            .first()
            .map(|s| levels_text(&report::described(spec, &tallies.item(s.interaction).interaction)))
            .unwrap_or_default();
        say!("{place}: no follow-up rows needed, the report names `{named}`");
        return Ok(None);
    };
    say!("{}", describe(&place, suite, &p));
    let added: Vec<Vec<u8>> = p
        .rows
        .iter()
        .flat_map(|(row, repeat)| std::iter::repeat_n(row.clone(), *repeat as usize))
        .collect();
    let n = added.len();
    if args.dry_run {
        return Ok(Some(n));
    }
    let mut rows = pending.to_vec();
    rows.extend(added);
    pins.set_followup(
        key,
        Some(FollowUp {
            fingerprint: f.spec.fingerprint,
            rows,
        }),
    );
    write(pkg, &pins, &f.file)?;
    say!(
        "  wrote {} to `{}`",
        plural(n, "follow-up row", "follow-up rows"),
        pkg.display(PINS_FILE)
    );
    Ok(Some(n))
}

/// What a proposal is about and its rows, with their labels and how often each runs.
fn describe(place: &str, suite: &SuiteRecords, p: &Proposal) -> String {
    let spec = &suite.spec;
    let named: Vec<String> = p
        .candidates
        .iter()
        .take(6)
        .map(|i| format!("`{}`", levels_text(&report::described(spec, i))))
        .collect();
    let more = p.candidates.len().saturating_sub(named.len());
    let more = if more > 0 {
        format!(" and {more} more")
    } else {
        String::new()
    };
    let mut out = format!(
        "{place}: {} to tell apart {}{more} (from the failing row `{}`)",
        plural(p.rows.len(), "follow-up row", "follow-up rows"),
        named.join(", "),
        spec.row_test_name(p.base).unwrap_or_default()
    );
    for (row, repeat) in &p.rows {
        let pairs: Vec<(&str, &str)> = row
            .iter()
            .zip(&spec.factors)
            .map(|(&l, f)| {
                (
                    f.name.as_str(),
                    f.labels.get(usize::from(l)).map_or("?", String::as_str),
                )
            })
            .collect();
        let again = if spec.rows.contains(row) {
            ", a row that ran already"
        } else {
            ""
        };
        let times = if *repeat > 1 {
            format!("  (runs {repeat} times{again}: the suspects it holds also passed)")
        } else if !again.is_empty() {
            format!("  (runs once more{again})")
        } else {
            String::new()
        };
        let _ = write!(out, "\n    {}{times}", levels_text(&pairs));
    }
    if !p.separates_all {
        out.push_str("\n  these rows cannot tell every suspect apart (too few rows, or the excludes); another round may follow");
    }
    out
}

/// Writes a package's pins file and touches the test file, so cargo rebuilds it even
/// when the pins file is new.
fn write(pkg: &Scanned, pins: &PinsFile, file: &str) -> Result<(), Failure> {
    pinfile::save(pkg, pins)?;
    if let Err(e) = pinfile::touch(&pkg.package.root.join(file)) {
        say_err!(
            "warning: could not touch {}: {e}; touch it so that cargo rebuilds it",
            pkg.display(file)
        );
    }
    Ok(())
}

/// `--clear`: removes the follow-up rows of one function, or of every function.
fn clear(scanned: &[Scanned], named: Option<(&Scanned, &Function)>) -> Result<ExitCode, Failure> {
    let mut removed = 0usize;
    for pkg in scanned {
        if named.is_some_and(|(p, _)| p.package.name != pkg.package.name) {
            continue;
        }
        let Some(mut pins) = pinfile::load(pkg)? else {
            continue;
        };
        let keys: Vec<_> = pins
            .followups
            .keys()
            .filter(|k| named.is_none_or(|(_, f)| f.key() == **k))
            .cloned()
            .collect();
        for key in &keys {
            pins.set_followup(key.clone(), None);
            say!(
                "{} {}: removed its follow-up rows",
                pkg.display(&key.file),
                key.function
            );
        }
        if let Some(first) = keys.first() {
            write(pkg, &pins, &first.file)?;
            for key in &keys[1..] {
                let _ = pinfile::touch(&pkg.package.root.join(&key.file));
            }
            removed += keys.len();
        }
    }
    if removed == 0 {
        say!("heddle: no follow-up rows to remove");
    }
    Ok(ExitCode::SUCCESS)
}
