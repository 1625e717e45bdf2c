//! `cargo heddle check`: the CI gate. Fails (exit code 1) naming each annotated function
//! whose rows a build would refuse or that do not do their job: a pin missing from a
//! crate that pins, a stale pin, a pin that does not fit or does not cover its spec, a
//! spec the engine refuses, and every source problem the macro would report.

use std::collections::BTreeSet;
use std::process::ExitCode;

use clap::Args;

use crate::failure::{Diagnostic, Failure, found};
use crate::pinfile;
use crate::sources::{self, Function, Scanned};
use crate::status::{Status, status};
use crate::workspace::{self, Selection};
use heddle_store::words::plural;

/// Arguments of `check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    #[command(flatten)]
    selection: Selection,
}

/// Why one function fails, in words (house style).
pub fn explain(f: &Function, s: &Status) -> Option<Diagnostic> {
    let name = &f.function;
    let pin = heddle_syntax::pins::PIN_COMMAND;
    Some(match s {
        Status::Pinned(_) | Status::Generated(_) => return None,
        Status::Missing => Diagnostic::new(format!(
            "`{name}` has no pin in `{}`",
            heddle_syntax::pins::PINS_FILE
        ))
        .hint(format!("run `{pin}`")),
        Status::Stale(changes) => {
            let what = if changes.is_empty() {
                "the spec changed since it was pinned".to_string()
            } else {
                changes.join("; ")
            };
            Diagnostic::new(format!("the pin of `{name}` is stale: {what}"))
                .hint(format!("run `{pin}` to carry its rows over to the new spec"))
        }
        Status::Misfit(reason) => {
            Diagnostic::new(format!("the pin of `{name}` does not fit the function: {reason}"))
                .hint(format!("run `{pin}` to repair it"))
        }
        Status::Uncovered(v) => Diagnostic::new(format!("the rows of `{name}` do not cover its spec: {v}"))
            .hint(format!("run `{pin}` to add the missing rows")),
        Status::Engine(e) => Diagnostic::new(format!("the engine refuses the spec of `{name}`: {e}"))
            .hint("lower the strength, lambda or the number of levels"),
        Status::StaleFollowUp => Diagnostic::new(format!(
            "the follow-up rows of `{name}` are stale: the spec changed since they were proposed"
        ))
        .hint(format!(
            "run `{} --clear {name}` or `{pin}` to drop them",
            heddle_syntax::pins::PROBE_COMMAND
        )),
    })
}

/// Runs `check`.
pub fn run(args: CheckArgs) -> Result<ExitCode, Failure> {
    let project = workspace::load(&args.selection)?;
    let scanned = sources::scan(&project);
    let mut files = Vec::with_capacity(scanned.len());
    for pkg in &scanned {
        files.push(pinfile::load(pkg)?);
    }
    let (mut total, mut failing, mut pinned, mut generated) = (0usize, 0, 0, 0);
    let (mut unparsed, mut manifests) = (0usize, 0usize);
    for (pkg, pins) in scanned.iter().zip(&files) {
        for p in &pkg.problems {
            say_err!("error: {p}");
        }
        total += pkg.functions.len() + pkg.broken_keys.len();
        failing += pkg.broken_keys.len();
        unparsed += pkg.broken_files.len();
        manifests += usize::from(!pkg.defaults_ok);
        if pkg.pinned && pins.is_none() && !pkg.functions.is_empty() {
            say_err!(
                "error: {}",
                Diagnostic::new(format!(
                    "`{}` declares `{} = true` but has no `{}`",
                    pkg.package.name,
                    heddle_syntax::defaults::PINNED_KEY,
                    heddle_syntax::pins::PINS_FILE
                ))
                .hint(format!(
                    "run `{}` and commit the file, or drop the key",
                    heddle_syntax::pins::PIN_COMMAND
                ))
                .at(pkg.display(heddle_syntax::defaults::MANIFEST_FILE))
            );
        }
        for f in &pkg.functions {
            let mut s = status(f, pins.as_ref());
            // a crate that pins: a function generated at build time lacks its pin
            if pkg.pinned && matches!(s, Status::Generated(_)) {
                s = Status::Missing;
            }
            match &s {
                Status::Pinned(_) => pinned += 1,
                Status::Generated(_) => generated += 1,
                _ => {}
            }
            if let Some(why) = explain(f, &s) {
                failing += 1;
                say_err!(
                    "error: {}",
                    why.at(format!("{}:{}", pkg.display(&f.file), f.line))
                );
            }
        }
        if let Some(pins) = pins {
            warn_orphans(pkg, pins);
        }
    }
    let packages = plural(scanned.len(), "package", "packages");
    if failing > 0 || unparsed > 0 || manifests > 0 {
        let mut msg = format!(
            "{failing} of {} {} the check",
            plural(total, "annotated function", "annotated functions"),
            if failing == 1 { "fails" } else { "fail" }
        );
        if unparsed > 0 {
            msg.push_str(&format!(
                ", {} not parse",
                plural(unparsed, "file does", "files do")
            ));
        }
        if manifests > 0 {
            msg.push_str(&format!(
                ", {} not be read",
                plural(manifests, "manifest could", "manifests could")
            ));
        }
        msg.push_str(&format!(" ({packages})"));
        return Err(found(Diagnostic::new(msg).hint(format!(
            "`{}` fixes missing, stale and non-covering pins; source problems need an edit",
            heddle_syntax::pins::PIN_COMMAND
        ))));
    }
    let summary = if total == 0 {
        format!("heddle check: no annotated functions ({packages})")
    } else {
        format!(
            "heddle check: {} ok ({pinned} pinned, {generated} generated at build time; {packages})",
            plural(total, "annotated function", "annotated functions")
        )
    };
    say!("{summary}");
    Ok(ExitCode::SUCCESS)
}

/// Pins no function claims: harmless to a build, so only a warning.
fn warn_orphans(pkg: &Scanned, pins: &heddle_syntax::PinsFile) {
    let live: BTreeSet<_> = pkg.functions.iter().map(Function::key).collect();
    for key in pins.pins.keys() {
        if live.contains(key) || pkg.protects(key) {
            continue;
        }
        let place = match pins.line_of(key) {
            Some(l) => format!("{}:{l}", pkg.display(heddle_syntax::pins::PINS_FILE)),
            None => pkg.display(heddle_syntax::pins::PINS_FILE),
        };
        let d = Diagnostic::new(format!(
            "the pin of `{}` in `{}` belongs to no function",
            key.function, key.file
        ))
        .hint(format!("run `{}` to remove it", heddle_syntax::pins::PIN_COMMAND))
        .at(place);
        say_err!("warning: {d}");
    }
}
