//! `cargo heddle show TEST`: the rows of one annotated function with their labels and
//! row names, exactly those a build uses (its pin when it has one, else generated as the
//! macro does, through the same `rows_for`), with coverage figures from the independent
//! checker and the two bounds beside the row count.

use std::fmt::Write as _;
use std::process::ExitCode;

use clap::{Args, ValueEnum};
use heddle_generator::{bounds, verify};
use heddle_syntax::expand::{followup_name, row_name};
use heddle_syntax::keywords as kw;
use heddle_syntax::rows_for;

use crate::budget::BudgetReach;
use crate::design::field;
use crate::failure::{Diagnostic, Failure, found, usage};
use crate::pinfile;
use crate::sources::{self, Function, Scanned};
use crate::workspace::{self, Selection};
use heddle_syntax::CoverSpec;
use heddle_syntax::budget::{BUDGET_VAR, Budget};

/// Arguments of `show`.
#[derive(Args, Debug)]
pub struct ShowArgs {
    #[command(flatten)]
    selection: Selection,
    /// The function: its name, a suffix of its module path (`tests::roundtrip`), or
    /// `FILE::NAME` with the file relative to the crate or workspace root.
    #[arg(value_name = "TEST")]
    test: String,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    format: Format,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
enum Format {
    /// Aligned columns with a heading and statistics.
    Table,
    /// A header of factor names and one line of labels per row, nothing else (figures
    /// go to stderr).
    Csv,
}

/// Whether `f` (of `pkg`) is what `test` names.
fn matches(pkg: &Scanned, f: &Function, test: &str) -> bool {
    if let Some((file, name)) = test.rsplit_once("::").filter(|(file, _)| file.ends_with(".rs")) {
        let file = file.trim_start_matches("./");
        let shown = pkg.display(&f.file);
        return f.function == plain(name)
            && (f.file == file || shown == file || shown.ends_with(&format!("/{file}")));
    }
    let want: Vec<&str> = test.split("::").map(plain).collect();
    let path = f.test_path();
    let have: Vec<&str> = path.split("::").map(plain).collect();
    have.ends_with(&want)
}

/// A path segment without its `r#`: libtest and the rerun commands print `r#match`,
/// the scan keeps the name as `match`.
fn plain(segment: &str) -> &str {
    segment.strip_prefix("r#").unwrap_or(segment)
}

/// Edit distance (Levenshtein 1966), for suggesting names close to a misspelt one.
fn distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, &cb) in b.iter().enumerate() {
            cur[j + 1] = (prev[j] + usize::from(ca != cb))
                .min(prev[j + 1] + 1)
                .min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// `FILE::NAME`, in backticks, as the hints list functions.
fn full_name(pkg: &Scanned, f: &Function) -> String {
    format!("`{}::{}`", pkg.display(&f.file), f.function)
}

/// The one function `test` names, or a usage error listing near matches or the
/// candidates it cannot tell apart.
pub(crate) fn resolve<'a>(
    scanned: &'a [Scanned],
    test: &str,
) -> Result<(&'a Scanned, &'a Function), Failure> {
    let all: Vec<(&Scanned, &Function)> = scanned
        .iter()
        .flat_map(|p| p.functions.iter().map(move |f| (p, f)))
        .collect();
    let hits: Vec<_> = all.iter().filter(|(p, f)| matches(p, f, test)).copied().collect();
    match hits.as_slice() {
        [one] => return Ok(*one),
        [] => {}
        many => {
            let names: Vec<String> = many.iter().map(|(p, f)| full_name(p, f)).collect();
            return Err(usage(
                Diagnostic::new(format!(
                    "`{test}` names {} annotated functions: {}",
                    many.len(),
                    names.join(", ")
                ))
                .hint(format!("name one as `FILE::NAME`, e.g. {}", names[0])),
            ));
        }
    }
    // a function that exists but cannot be read is not "unknown"
    let last = test.rsplit("::").next().unwrap_or(test);
    for p in scanned {
        if let Some(key) = p.broken_keys.iter().find(|k| k.function == last) {
            return Err(found(
                Diagnostic::new(format!(
                    "`{}::{}` has problems that keep heddle from reading it, so it has no rows",
                    p.display(&key.file),
                    key.function
                ))
                .hint("run `cargo heddle check` to see them"),
            ));
        }
    }
    if all.is_empty() {
        return Err(usage(
            Diagnostic::new(format!(
                "no annotated function matches `{test}`: the selected packages have none"
            ))
            .hint(format!(
                "annotate a test with `#[{}]`, or select another package with `-p`",
                kw::COVER
            )),
        ));
    }
    let mut near: Vec<(usize, String)> = all
        .iter()
        .map(|(p, f)| (distance(last, &f.function), full_name(p, f)))
        .filter(|(d, name)| *d <= (last.chars().count() / 3).max(2) || name.contains(last))
        .collect();
    near.sort();
    let hint = if near.is_empty() {
        let mut names: Vec<String> = all.iter().map(|(p, f)| full_name(p, f)).collect();
        let more = names.len().saturating_sub(8);
        names.truncate(8);
        let tail = if more > 0 {
            format!(" and {more} more")
        } else {
            String::new()
        };
        format!("the annotated functions are {}{tail}", names.join(", "))
    } else {
        let names: Vec<String> = near.into_iter().take(5).map(|(_, n)| n).collect();
        format!("did you mean {}?", names.join(", "))
    };
    let broken: Vec<String> = scanned
        .iter()
        .flat_map(|p| p.broken_files.iter().map(move |f| format!("`{}`", p.display(f))))
        .collect();
    let unread = if broken.is_empty() {
        String::new()
    } else {
        format!("\n  note: some files could not be parsed: {}", broken.join(", "))
    };
    Err(usage(
        Diagnostic::new(format!("no annotated function matches `{test}`")).hint(format!("{hint}{unread}")),
    ))
}

/// Runs `show`.
pub fn run(args: ShowArgs) -> Result<ExitCode, Failure> {
    let project = workspace::load(&args.selection)?;
    let scanned = sources::scan(&project);
    let (pkg, f) = resolve(&scanned, &args.test)?;
    let pins = pinfile::load(pkg)?;
    let place = format!("{}:{}", pkg.display(&f.file), f.line);
    let rows = rows_for(&f.spec, Some(&f.key()), pins.as_ref())
        .map_err(|e| found(e.diagnostic().at(place.clone())))?;
    let spec = &f.spec.spec;
    let lower = bounds::spec_lower_bound(spec);
    let expected = bounds::spec_expected_bound(spec);
    let coverage = verify(spec, &rows.rows);
    let source = if rows.pinned {
        format!("pinned in `{}`", pkg.display(heddle_syntax::pins::PINS_FILE))
    } else {
        "generated by the engine (fast), as the build does".to_string()
    };
    let n = rows.rows.len();
    // both bounds count every combination as needed; excludes can make fewer rows enough
    let caveat = if spec.excludes.is_empty() {
        ""
    } else {
        " (both ignoring excludes)"
    };
    let bounds_line = format!("{n} rows; lower bound {lower}, expected-value bound {expected}{caveat}");
    let coverage_line = match &coverage {
        Ok(c) => format!(
            "coverage: {} interactions, {} impossible, each possible one covered at least {} times (lambda {}){}",
            c.interactions,
            c.impossible,
            c.min_count,
            spec.lambda,
            if spec.focus.is_empty() {
                ""
            } else {
                "; focus sets at their own strength and lambda"
            }
        ),
        Err(v) => format!("coverage: the rows do not cover the spec: {v}"),
    };
    let budget = show_budget(&f.spec, &rows.rows)?;
    let labels = |row: &[u8]| -> Vec<String> {
        row.iter()
            .zip(&spec.factors)
            .map(|(&l, x)| x.levels.get(usize::from(l)).cloned().unwrap_or_default())
            .collect()
    };
    let mut out = String::new();
    match args.format {
        Format::Csv => {
            let header: Vec<String> = spec.factors.iter().map(|x| field(&x.name)).collect();
            let _ = writeln!(out, "{}", header.join(","));
            for row in &rows.rows {
                let cells: Vec<String> = labels(row).iter().map(|l| field(l)).collect();
                let _ = writeln!(out, "{}", cells.join(","));
            }
        }
        Format::Table => {
            let _ = writeln!(out, "{} ({place}, test path `{}`)", f.function, f.test_path());
            let _ = writeln!(
                out,
                "strength {}, lambda {}, seed {}; rows {source}",
                spec.strength, spec.lambda, spec.seed
            );
            for e in &f.spec.excludes {
                let _ = writeln!(out, "{}({e})", kw::EXCLUDE);
            }
            for r in &f.spec.required {
                let _ = writeln!(out, "{}({r})", kw::REQUIRE);
            }
            for x in &spec.focus {
                let shown = heddle_syntax::focus::text(x, &spec.factors, spec.strength, spec.lambda);
                let _ = writeln!(out, "{shown}");
            }
            out.push('\n');
            let mut table: Vec<Vec<String>> = Vec::with_capacity(n + 1);
            let mut head = vec!["row".to_string()];
            head.extend(spec.factors.iter().map(|x| x.name.clone()));
            table.push(head);
            for (i, row) in rows.rows.iter().enumerate() {
                let mut line = vec![row_name(i, n)];
                line.extend(labels(row));
                table.push(line);
            }
            let extra = rows.followups.len();
            for (i, row) in rows.followups.iter().enumerate() {
                let mut line = vec![followup_name(i, extra)];
                line.extend(labels(row));
                table.push(line);
            }
            let cols = table[0].len();
            let width: Vec<usize> = (0..cols)
                .map(|c| table.iter().map(|r| r[c].chars().count()).max().unwrap_or(0))
                .collect();
            for r in &table {
                let mut line = String::new();
                for (c, cell) in r.iter().enumerate() {
                    line.push_str(cell);
                    if c + 1 < cols {
                        line.extend(std::iter::repeat_n(' ', width[c] - cell.chars().count() + 2));
                    }
                }
                let _ = writeln!(out, "{line}");
            }
            out.push('\n');
            let _ = writeln!(out, "{bounds_line}");
            if !rows.followups.is_empty() {
                let _ = writeln!(out, "{}", followup_line(rows.followups.len()));
            }
            let _ = writeln!(out, "{coverage_line}");
            if let Some((b, source)) = &budget {
                let _ = writeln!(out, "{} ({source})", b.line());
            }
        }
    }
    {
        use std::io::Write;
        let mut stdout = std::io::stdout().lock();
        // a closed pipe (e.g. `| head`) is not an error worth reporting
        let _ = stdout.write_all(out.as_bytes()).and_then(|_| stdout.flush());
    }
    if args.format == Format::Csv {
        let followups = if rows.followups.is_empty() {
            String::new()
        } else {
            format!("; {} (not in the csv)", followup_line(rows.followups.len()))
        };
        let budget = budget
            .map(|(b, source)| format!("; {} ({source})", b.line()))
            .unwrap_or_default();
        say_err!(
            "heddle: {} ({place}), rows {source}; {bounds_line}; {coverage_line}{budget}{followups}",
            f.function
        );
    }
    match coverage {
        Ok(_) => Ok(ExitCode::SUCCESS),
        Err(v) => Err(found(
            Diagnostic::new(format!(
                "{place}: the rows of `{}` do not cover its spec: {v}",
                f.function
            ))
            .hint(format!("run `{}`", heddle_syntax::pins::PIN_COMMAND)),
        )),
    }
}

/// The line about a function's follow-up rows.
fn followup_line(n: usize) -> String {
    format!(
        "plus {} after the design's, from `{}` (not counted above)",
        heddle_store::words::plural(n, "follow-up row", "follow-up rows"),
        heddle_syntax::pins::PROBE_COMMAND
    )
}

/// The budget a build would use for this function (`HEDDLE_BUDGET`, else the attribute's)
/// when it leaves rows out: what its rows reach, and where it comes from.
fn show_budget(spec: &CoverSpec, rows: &[Vec<u8>]) -> Result<Option<(BudgetReach, String)>, Failure> {
    let env = Budget::from_env(std::env::var_os(BUDGET_VAR)).map_err(usage)?;
    let Some(b) = Budget::effective(env, spec.budget) else {
        return Ok(None);
    };
    let n = rows.len();
    let runs = b.rows(n);
    if runs >= n {
        return Ok(None);
    }
    let source = match env {
        Some(_) => format!("`{BUDGET_VAR}={b}`"),
        None => format!("`{}({b})`", kw::BUDGET),
    };
    let s = &spec.spec;
    let reach = heddle_store::reach(rows, s.factors.len(), s.strength, s.lambda, &s.focus, runs);
    let name = |c: usize| s.factors.get(c).map_or_else(String::new, |f| f.name.clone());
    Ok(Some((
        BudgetReach {
            rows: runs,
            of: n,
            reach,
            focus: s
                .focus
                .iter()
                .map(|f| f.factors.iter().map(|&c| name(c)).collect())
                .collect(),
        },
        source,
    )))
}

#[cfg(test)]
mod tests {
    use super::distance;

    // Levenshtein distances of textbook pairs (e.g. "kitten"/"sitting" = 3; common
    // practice in descriptions of the algorithm)
    #[test]
    fn edit_distance() {
        assert_eq!(distance("kitten", "sitting"), 3);
        assert_eq!(distance("", "abc"), 3);
        assert_eq!(distance("roundtrip", "roundtrip"), 0);
        assert_eq!(distance("roundtirp", "roundtrip"), 2);
    }
}
