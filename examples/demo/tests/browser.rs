//! The HTML report in a real browser (Debian's Chromium, headless): a suite of strength 3
//! with an exclude read over three runs, a suite with focus sets, and the greenhouse demo
//! as the quick start runs it. Each page is loaded, its DOM and console read, and screenshots taken; the
//! suspects' outlines must show up as pixels. In CI (`CI` set) a missing browser fails
//! the test; elsewhere the test says why it skipped the browser's part.

use std::io::BufReader;
use std::path::{Path, PathBuf};
use std::process::Command;

use cargo_heddle::report::{self, Format};
use heddle_demo::browser::{Browser, Loaded};
use heddle_generator::{Effort, Expr, Factor, Spec, generate};
use heddle_store::Store;
use heddle_store::fixture::{self, SpecBuilder};
use heddle_test::record::layout::{RUNS_DIR, STORE_DIR, process_file_name};
use heddle_test::record::{Line, Outcome};

/// The suspect outline's colour (vermillion, Wong 2011), as the report draws it.
const VERMILLION: (u8, u8, u8) = (0xd5, 0x5e, 0x00);

/// The browser, or `None` with the reason printed; in CI a missing browser is a failure.
fn browser() -> Option<Browser> {
    match Browser::find().unwrap_or_else(|e| panic!("{e}")) {
        Ok(b) => Some(b),
        Err(why) if std::env::var_os("CI").is_some_and(|v| !v.is_empty()) => {
            panic!("CI needs the browser for this test: {why}")
        }
        Err(why) => {
            eprintln!("skipped the browser checks: {why}");
            None
        }
    }
}

/// Pixels of a PNG within `tol` of a colour on every channel.
fn pixels_near(png_path: &Path, colour: (u8, u8, u8), tol: u8) -> usize {
    let file = std::fs::File::open(png_path).unwrap();
    let mut reader = png::Decoder::new(BufReader::new(file)).read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    let step = info.color_type.samples();
    assert!(step >= 3 && info.bit_depth == png::BitDepth::Eight, "{info:?}");
    buf[..info.buffer_size()]
        .chunks(step)
        .filter(|p| {
            p[0].abs_diff(colour.0) <= tol && p[1].abs_diff(colour.1) <= tol && p[2].abs_diff(colour.2) <= tol
        })
        .count()
}

/// The value of attribute `name` in one tag's text.
fn attr<'a>(tag: &'a str, name: &str) -> Option<&'a str> {
    let start = tag.find(&format!(" {name}=\""))? + name.len() + 3;
    Some(&tag[start..start + tag[start..].find('"')?])
}

/// The opening tags of the suspect outlines in a page.
fn outline_tags(html: &str) -> Vec<&str> {
    html.match_indices("<rect class=\"suspect\"")
        .map(|(i, _)| &html[i..i + html[i..].find('>').unwrap()])
        .collect()
}

/// The page without its suspect outlines (everything else, and so the layout, unchanged).
fn without_outlines(html: &str) -> String {
    let mut out = html.to_string();
    while let Some(i) = out.find("<rect class=\"suspect\"") {
        let end = i + out[i..].find("</rect>").unwrap() + "</rect>".len();
        out.replace_range(i..end, "");
    }
    out
}

/// Loads a page in the browser and checks what every report page must satisfy: no
/// console message, no script, the generator tag, a suspect cell, and outlines that
/// actually paint — the page with them shows at least half the stroke area they should
/// cover more vermillion pixels than the same page without them.
fn judge(browser: &Browser, page: &Path, dir: &Path) -> Loaded {
    let (with, without) = (dir.join("with.png"), dir.join("without.png"));
    let loaded = browser.load_and_screenshot(page, &with, 1280, 4000).unwrap();
    assert!(
        loaded.console.is_empty(),
        "console messages: {:#?}",
        loaded.console
    );
    let dom = &loaded.dom;
    assert!(
        dom.contains("<meta name=\"generator\" content=\"cargo-heddle "),
        "{dom}"
    );
    assert!(!dom.to_lowercase().contains("<script"));
    let outlines = outline_tags(dom);
    assert!(!outlines.is_empty(), "no suspect outline in the DOM");
    // the stroke is 3 px wide on the rectangle's edge; a dashed one paints 5 of every 8
    let expected: f64 = outlines
        .iter()
        .map(|t| {
            let w: f64 = attr(t, "width").unwrap().parse().unwrap();
            let h: f64 = attr(t, "height").unwrap().parse().unwrap();
            let share = if attr(t, "stroke-dasharray").is_some() {
                5.0 / 8.0
            } else {
                1.0
            };
            2.0 * (w + h) * 3.0 * share
        })
        .sum();
    let html = std::fs::read_to_string(page).unwrap();
    let bare = dir.join("without-outlines.html");
    std::fs::write(&bare, without_outlines(&html)).unwrap();
    browser.screenshot(&bare, &without, 1280, 4000).unwrap();
    let gained = pixels_near(&with, VERMILLION, 8) as f64 - pixels_near(&without, VERMILLION, 8) as f64;
    assert!(
        gained >= 0.5 * expected,
        "the outlines painted {gained} vermillion pixels, expected about {expected}"
    );
    loaded
}

/// Writes one run of a suite: its spec line and a row line per outcome.
fn write_run(dir: &Path, spec: &heddle_test::record::SpecRecord, ms: u64, outcomes: &[(usize, Outcome)]) {
    let d = dir.join(STORE_DIR).join(RUNS_DIR).join(&spec.run);
    std::fs::create_dir_all(&d).unwrap();
    let mut text = Line::Spec(spec.clone()).to_json_line();
    for &(r, o) in outcomes {
        text.push_str(&Line::Row(fixture::row(spec, r, o)).to_json_line());
    }
    std::fs::write(d.join(process_file_name(ms, 7, ms)), text).unwrap();
}

#[test]
fn a_strength_three_suite_with_an_exclude_renders() {
    // five factors, strength 3, pairs (f0 = 0, f1 = 2) excluded; rows from the engine
    let levels = [3usize, 3, 2, 3, 2];
    let factors: Vec<Factor> = levels
        .iter()
        .enumerate()
        .map(|(i, &v)| Factor::numbered(format!("f{i}"), v))
        .collect();
    let exclude = Expr::parse("f0 == 0 && f1 == 2", &factors).unwrap();
    let spec = Spec::new(factors).strength(3).exclude(exclude.clone());
    let rows = generate(&spec, Effort::Fast).unwrap().rows;
    // a three-way fault that always fails, and a pair that fails in some runs only
    let always = |r: &[u8]| r[0] == 1 && r[2] == 0 && r[3] == 2;
    let flaky = |r: &[u8]| r[1] == 0 && r[4] == 1;
    let dir = tempfile::tempdir().unwrap();
    for run in 0..3usize {
        let rec = SpecBuilder::new("three_way")
            .numbered(&levels)
            .strength(3)
            .run(&format!("r{run}"))
            .rows(rows.clone())
            .excludes(&[&exclude.to_formula()])
            .build();
        let outcomes: Vec<(usize, Outcome)> = rows
            .iter()
            .enumerate()
            .map(|(i, r)| {
                let fails = always(r) || (flaky(r) && (i + run) % 3 != 0);
                (i, if fails { Outcome::Failed } else { Outcome::Passed })
            })
            .collect();
        write_run(dir.path(), &rec, 1_000 + run as u64, &outcomes);
    }
    let records = Store::open(dir.path()).unwrap().read_last(3).unwrap();
    let report = report::build(&records, &[], 0.95, false);
    let s = &report.suites[0];
    let top = &s.tallies.item(s.analysis.suspects[0].interaction).interaction;
    assert_eq!(
        (top.factors.clone(), top.levels.clone()),
        (vec![0, 2, 3], vec![1, 0, 2])
    );
    assert!(!s.analysis.flaky.is_empty());
    let html = report::render(&report, Format::Html, false);
    // the three pair cells inside the three-way suspect are outlined (dashed); the
    // excluded pair is crossed out; three runs give a history
    assert_eq!(
        html.matches("<g class=\"cell\" data-suspect=\"1\"").count(),
        3,
        "{html}"
    );
    assert!(
        outline_tags(&html)
            .iter()
            .filter(|t| attr(t, "stroke-dasharray").is_some())
            .count()
            >= 3
    );
    assert!(html.contains("<title>f0 = 0, f1 = 2: excluded: no allowed row has these levels</title>"));
    assert!(html.contains("History over 3 runs"));
    let page = dir.path().join("report.html");
    std::fs::write(&page, &html).unwrap();
    let Some(browser) = browser() else { return };
    let loaded = judge(&browser, &page, dir.path());
    assert!(loaded.dom.contains("f0 = 1, f2 = 0, f3 = 2"));
}

#[test]
fn focus_sets_get_a_section_with_their_interactions() {
    // five factors at strength 2; f0, f1, f2 and f2, f3, f4 also at strength 3; rows from
    // the engine; the triple f0 = 1, f1 = 0, f2 = 1 fails every run
    let levels = [2usize, 2, 2, 2, 2];
    let spec = Spec::numbered(&levels)
        .focus(heddle_generator::Focus::new(vec![0, 1, 2], 3))
        .focus(heddle_generator::Focus::new(vec![2, 3, 4], 3));
    let rows = generate(&spec, Effort::Fast).unwrap().rows;
    let fails = |r: &[u8]| r[0] == 1 && r[1] == 0 && r[2] == 1;
    let dir = tempfile::tempdir().unwrap();
    let rec = SpecBuilder::new("focused")
        .numbered(&levels)
        .strength(2)
        .run("r0")
        .focus(&[0, 1, 2], 3, 1)
        .focus(&[2, 3, 4], 3, 1)
        .rows(rows.clone())
        .build();
    let outcomes: Vec<(usize, Outcome)> = rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            (
                i,
                if fails(r) {
                    Outcome::Failed
                } else {
                    Outcome::Passed
                },
            )
        })
        .collect();
    write_run(dir.path(), &rec, 1_000, &outcomes);
    let records = Store::open(dir.path()).unwrap().read_last(1).unwrap();
    let report = report::build(&records, &[], 0.95, false);
    let html = report::render(&report, Format::Html, false);
    // each focus set has its section, every one of its 8 triples a cell (2^3 levels, and
    // a design covering them at strength 3 holds each), the failing triple marked
    assert!(
        html.contains("<h3 id=\"suite-1-focus\">Focus sets</h3>"),
        "{html}"
    );
    for n in 1..=2 {
        assert!(html.contains(&format!("data-focus=\"{n}\"")), "focus set {n}");
    }
    assert_eq!(html.matches("<g class=\"focus-cell\"").count(), 16, "{html}");
    let at = |n: usize| html.find(&format!("data-focus=\"{n}\"")).unwrap();
    let (first, second) = (&html[at(1)..at(2)], &html[at(2)..]);
    // in the first set only the fault's triple failed, in every run
    assert_eq!(
        first
            .matches("<g class=\"focus-cell\" data-verdict=\"always\"")
            .count(),
        1
    );
    assert_eq!(
        first
            .matches("<g class=\"focus-cell\" data-verdict=\"none\"")
            .count(),
        7
    );
    assert!(
        first.contains("<title>f0 = 1, f1 = 0, f2 = 1: fails always"),
        "{first}"
    );
    assert!(first.contains("<code>f0, f1, f2</code> at strength 3, λ 1"));
    assert!(first.contains("8 of 8 interactions ran in at least 1 row; <strong>1 failed</strong>"));
    // the second set's triples in the failing rows failed with it: never all clear
    assert!(second.contains("<code>f2, f3, f4</code> at strength 3, λ 1"));
    assert!(!second.contains("all clear"));
    let page = dir.path().join("report.html");
    std::fs::write(&page, &html).unwrap();
    let Some(browser) = browser() else { return };
    let loaded = judge(&browser, &page, dir.path());
    assert!(loaded.dom.contains("Focus sets"));
}

/// The workspace root (this package lives in `<root>/examples/demo`).
fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../..")
        .canonicalize()
        .unwrap()
}

/// The commands of the README's quick start block.
fn quick_start() -> Vec<String> {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let section = &readme[readme.find("## Quick start").unwrap()..];
    let block = &section[section.find("```sh\n").unwrap() + 6..];
    block[..block.find("```").unwrap()]
        .lines()
        .filter(|l| !l.trim().is_empty())
        .map(str::to_string)
        .collect()
}

#[test]
fn the_quick_start_has_two_commands_and_the_first_is_the_demo() {
    assert_eq!(
        quick_start(),
        ["cargo run -p heddle-demo", "cargo test --workspace"]
    );
}

// named to sort first: libtest starts tests in the order of their names, and this, the
// longest (the demo's rounds, then the browser), should not wait for the others
#[test]
fn a_first_command_exits_zero_names_both_defects_and_writes_a_page() {
    // the quick start's first command, run as written from the repository's root
    let first = quick_start().remove(0);
    let words: Vec<&str> = first.split_whitespace().collect();
    let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    let out = Command::new(cargo)
        .args(&words[1..])
        .current_dir(root())
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{stdout}\n{stderr}");
    // the deterministic defect fails always, the race is flaky
    let after = |what: &str| {
        &stdout[stdout
            .find(what)
            .unwrap_or_else(|| panic!("no `{what}` in {stdout}"))..]
    };
    assert!(
        after("codec = Codec::Delta, unit = Unit::Fahrenheit\n")
            .lines()
            .nth(1)
            .unwrap()
            .contains("fails always"),
        "{stdout}"
    );
    assert!(
        after("workers = 4, flush = Flush::OnClose\n")
            .lines()
            .nth(1)
            .unwrap()
            .contains("flaky"),
        "{stdout}"
    );
    assert!(
        stdout.contains(
            "flaky: a row of it both passed and failed\n    workers = 4, flush = Flush::OnClose: passed"
        ),
        "{stdout}"
    );
    let page = root().join(
        after("The HTML report: ")
            .lines()
            .next()
            .unwrap()
            .trim_start_matches("The HTML report: "),
    );
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(
        html.contains("codec = Codec::Delta, unit = Unit::Fahrenheit: passed 0 of 15 runs (0%)"),
        "{html}"
    );
    let Some(browser) = browser() else { return };
    let dir = tempfile::tempdir().unwrap();
    let loaded = judge(&browser, &page, dir.path());
    let suspect_cell = loaded
        .dom
        .split("<g class=\"cell\" data-suspect=")
        .skip(1)
        .any(|c| c.contains("codec = Codec::Delta, unit = Unit::Fahrenheit: passed 0 of"));
    assert!(suspect_cell, "no outlined cell for the deterministic defect");
}

#[test]
fn the_console_check_sees_what_a_page_should_not_do() {
    // the control for `judge`: a page that tries to fetch an image, which the report's
    // own policy forbids, must leave a console message, or an empty console proves nothing
    let Some(browser) = browser() else { return };
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("fetches.html");
    std::fs::write(
        &page,
        "<!DOCTYPE html><html><head><meta charset=\"utf-8\">\
         <meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'\">\
         <title>t</title></head><body><img src=\"http://127.0.0.1:9/x.png\" alt=\"x\"></body></html>",
    )
    .unwrap();
    let loaded = browser.load(&page).unwrap();
    assert!(
        loaded
            .console
            .iter()
            .any(|l| l.contains("Content Security Policy")),
        "{:?}",
        loaded.console
    );
}
