//! The greenhouse demo, run the way a newcomer should see it: built, run five times under
//! one run id, the report printed and the HTML page written — and a zero exit status,
//! because failing tests are the point of the demo, not a crash. The rounds and the
//! report are the plugin's own (`test_cmd::run_rounds`, `report::build`/`render`), so
//! what the demo shows is what `cargo heddle test --repeat 5` shows.

use std::path::{Path, PathBuf};

use cargo_heddle::failure::{Diagnostic, Failure, found};
use cargo_heddle::report::{self, Format};
use cargo_heddle::test_cmd::{self, TestArgs};
use cargo_heddle::workspace::Selection;
use clap::Parser;

use crate::browser::Browser;

/// Rounds of the demo's suite: enough runs of each row for the race to show both
/// outcomes, so the report can tell it apart from the deterministic defect.
pub const ROUNDS: u32 = 5;

/// The size of the README's screenshot, CSS pixels.
pub const SCREENSHOT: (u32, u32) = (1280, 1500);

/// Arguments of the demo runner.
#[derive(Parser, Debug, Default)]
#[command(
    name = "heddle-demo",
    about = "Runs heddle's greenhouse demo and writes its HTML report"
)]
pub struct DemoArgs {
    /// Where to write the HTML report [default: heddle-report.html in the demo's target
    /// directory].
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Also take a screenshot of the report with headless Chromium (how the README's
    /// picture is made: `--screenshot docs/report.png`).
    #[arg(long, value_name = "PNG")]
    pub screenshot: Option<PathBuf>,
}

/// The demo crate's manifest, in this repository.
pub fn greenhouse_manifest() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../greenhouse/Cargo.toml")
}

/// A path as the user should read it: relative to the current directory when below it.
fn shown(path: &Path) -> String {
    let abs = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
    let normal: PathBuf = abs.components().fold(PathBuf::new(), |mut p, c| {
        match c {
            std::path::Component::ParentDir => {
                p.pop();
            }
            std::path::Component::CurDir => {}
            c => p.push(c),
        }
        p
    });
    std::env::current_dir()
        .ok()
        .and_then(|cwd| normal.strip_prefix(cwd).ok().map(Path::to_path_buf))
        .unwrap_or(normal)
        .to_string_lossy()
        .replace('\\', "/")
}

/// Runs the demo and reports on it.
pub fn run(args: &DemoArgs) -> Result<(), Failure> {
    let manifest = greenhouse_manifest();
    eprintln!(
        "heddle-demo: building the greenhouse demo ({}) and running its suite {ROUNDS} times; the first build takes a minute or two",
        shown(&manifest)
    );
    let test = TestArgs {
        selection: Selection {
            manifest_path: Some(manifest.clone()),
            package: Vec::new(),
            workspace: false,
        },
        nextest: false,
        repeat: ROUNDS,
        format: Format::Table,
        all: false,
        confidence: 0.95,
        fail_on: Vec::new(),
        output: None,
        color: None,
        quiet: true,
        budget: None,
        cargo_args: Vec::new(),
    };
    let rounds = test_cmd::run_rounds(&test)?;
    let cannot_run = |what: &str| {
        found(
            Diagnostic::new(format!("the greenhouse demo {what}")).hint(format!(
                "run `cargo test --manifest-path {}` to see why",
                shown(&manifest)
            )),
        )
    };
    let Some(records) = &rounds.records else {
        return Err(found(rounds.nothing_recorded()));
    };
    let report = report::build(records, &[], test.confidence, false);
    if report.suites.is_empty() {
        return Err(cannot_run("recorded no `#[cover]` suite"));
    }
    for n in &report.notes {
        eprintln!("note: {n}");
    }
    let table = report::render(&report, Format::Table, cargo_heddle::style::color_stdout(None));
    let page_path = args
        .output
        .clone()
        .unwrap_or_else(|| rounds.target_dir.join("heddle-report.html"));
    report::write_to(&page_path, &report::render(&report, Format::Html, false))?;
    println!("{table}");
    if rounds.status != 0 {
        println!(
            "The demo's tests fail on purpose: the hub has two planted defects, and the report above names them. \
             (`cargo heddle test` exits with the test run's status instead, {} here, as CI needs.)",
            rounds.status
        );
    }
    println!("The HTML report: {}", shown(&page_path));
    if let Some(shot) = &args.screenshot {
        let browser =
            Browser::find()?.map_err(|why| found(Diagnostic::new("cannot take the screenshot").hint(why)))?;
        browser.screenshot(&page_path, shot, SCREENSHOT.0, SCREENSHOT.1)?;
        println!("The screenshot: {}", shown(shot));
    }
    Ok(())
}
