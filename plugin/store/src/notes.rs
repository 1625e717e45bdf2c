//! What reading found and left out, counted so the report can say what it skipped.

use std::collections::BTreeMap;
use std::path::PathBuf;

use heddle_test::record::{FORMAT_VERSION, OLDEST_READ_VERSION};

use heddle_generator::Diagnostic;

use crate::words::plural;

/// Where a skipped line was.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LineRef {
    /// The file.
    pub path: PathBuf,
    /// 1-based line number.
    pub line: usize,
}

/// What reading found and what it skipped.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct ReadStats {
    /// Files read.
    pub files: usize,
    /// Non-empty lines seen.
    pub lines: usize,
    /// Spec lines accepted (one per process per suite).
    pub spec_lines: usize,
    /// Row lines accepted.
    pub row_lines: usize,
    /// Lines that are not a record of any known version (truncated, damaged, foreign).
    pub corrupt: usize,
    /// The first few corrupt lines, for the message.
    pub corrupt_examples: Vec<LineRef>,
    /// Well-formed lines of another format version, counted by version.
    pub other_versions: BTreeMap<u32, usize>,
    /// Spec lines refused by [`crate::spec::check`] for anything but an exclude.
    pub invalid_specs: usize,
    /// Spec lines refused because an exclude cannot be read as a formula (damaged, or
    /// nested deeper than the engine reads).
    pub unreadable_excludes: usize,
    /// Why the first of them was refused, for the note.
    pub unreadable_exclude_example: Option<String>,
    /// Distinct spec contents beyond the first for one key (a writer bug; the first, in
    /// file order, is kept).
    pub conflicting_specs: usize,
    /// Row lines whose spec was never read (its line lost or corrupt).
    pub orphan_rows: usize,
    /// Row lines whose row index or labels disagree with their spec.
    pub mismatched_rows: usize,
    /// Row lines left out because a later run ran the same row in another build of the
    /// test executable: the code changed in between, and the later outcome stands.
    pub superseded_rows: usize,
    /// Rows whose latest execution, in the same store, was in an earlier run by a build
    /// of the test executable that the latest run did not use: a rebuilt test ran only
    /// some rows, and these rows' outcomes come from the code before.
    pub earlier_build_rows: usize,
    /// Suites (by libtest path) left out because a later run recorded the same
    /// function under another spec fingerprint (levels, strength, λ, seed or excludes
    /// changed): one entry per spec left out.
    pub superseded_specs: Vec<String>,
    /// Row lines of those specs.
    pub superseded_spec_rows: usize,
    /// nextest attempts counted as failed without a row line: the attempt's start line
    /// had no finish (nextest runs one test per process, so the row ended it), or a
    /// later attempt of the row was recorded (nextest retries only failures) while this
    /// one left nothing.
    pub unfinished_attempts: usize,
    /// Executions that started and did not finish in a process that ran several rows:
    /// not counted as outcomes, as any row in flight may have ended the process.
    pub did_not_finish: usize,
    /// Files left out as copies of a file in another root.
    pub duplicate_files: usize,
    /// Files or directories that could not be read.
    pub unreadable: Vec<PathBuf>,
}

impl ReadStats {
    /// One diagnostic per kind of thing left out, for the report to print (empty when
    /// nothing was).
    pub fn notes(&self) -> Vec<Diagnostic> {
        let mut out = Vec::new();
        if self.corrupt > 0 {
            let at: Vec<String> = self
                .corrupt_examples
                .iter()
                .map(|l| format!("`{}:{}`", l.path.display(), l.line))
                .collect();
            out.push(
                Diagnostic::new(format!(
                    "skipped {} (at {}{})",
                    plural(
                        self.corrupt,
                        "corrupt or truncated record line",
                        "corrupt or truncated record lines"
                    ),
                    at.join(", "),
                    if self.corrupt > at.len() { ", …" } else { "" }
                ))
                .hint("a test process was killed while writing, or the file was damaged"),
            );
        }
        for (v, n) in &self.other_versions {
            let age = if *v < FORMAT_VERSION { "older" } else { "newer" };
            out.push(
                Diagnostic::new(format!(
                    "skipped {} of {age} format version {v} (this build reads versions {OLDEST_READ_VERSION} to {FORMAT_VERSION})",
                    plural(*n, "record line", "record lines"),
                ))
                .hint("rerun the tests with this heddle, or report with the heddle that wrote them"),
            );
        }
        if self.unreadable_excludes > 0 {
            let why = self.unreadable_exclude_example.as_deref().unwrap_or("unreadable");
            out.push(
                Diagnostic::new(format!(
                    "skipped {} ({why})",
                    plural(
                        self.unreadable_excludes,
                        "spec line whose exclude cannot be read",
                        "spec lines whose excludes cannot be read"
                    )
                ))
                .hint("the store is damaged, or was written by a build that is not heddle's"),
            );
        }
        let others = [
            (
                self.invalid_specs,
                "inconsistent spec line",
                "inconsistent spec lines",
            ),
            (
                self.conflicting_specs,
                "spec line that contradicts another with its fingerprint",
                "spec lines that contradict another with their fingerprint",
            ),
            (
                self.orphan_rows,
                "row line whose spec line is missing",
                "row lines whose spec line is missing",
            ),
            (
                self.mismatched_rows,
                "row line whose row or labels disagree with its spec",
                "row lines whose row or labels disagree with their spec",
            ),
        ];
        for (n, one, many) in others {
            if n > 0 {
                out.push(
                    Diagnostic::new(format!("skipped {}", plural(n, one, many))).hint("the store is damaged"),
                );
            }
        }
        if self.superseded_rows > 0 {
            out.push(
                Diagnostic::new(format!(
                    "left out {} of earlier runs of another build: a later build ran those rows again, and its outcomes stand",
                    plural(self.superseded_rows, "row record", "row records")
                ))
                .hint("a row that failed before a rebuild and passed after it was changed, not flaky; runs of one build are merged whole"),
            );
        }
        if self.earlier_build_rows > 0 {
            out.push(
                Diagnostic::new(format!(
                    "{} last ran under an earlier build than the latest run's: their outcomes are from code that may have changed since",
                    plural(self.earlier_build_rows, "row", "rows")
                ))
                .hint("the latest run ran only some rows after a rebuild; run the whole suite again (`cargo heddle test`) for verdicts on the latest build alone"),
            );
        }
        if !self.superseded_specs.is_empty() {
            let mut names: Vec<String> = self.superseded_specs.iter().map(|s| format!("`{s}`")).collect();
            names.dedup();
            out.push(
                Diagnostic::new(format!(
                    "left out {} of {} ({}): a later run recorded the same function under a changed spec",
                    plural(self.superseded_specs.len(), "earlier spec", "earlier specs"),
                    names.join(", "),
                    plural(self.superseded_spec_rows, "row record", "row records")
                ))
                .hint("their rows and verdicts belong to a spec the code no longer has; `--run ID` reports an earlier run alone"),
            );
        }
        if self.unfinished_attempts > 0 {
            out.push(
                Diagnostic::new(format!(
                    "counted {} that did not finish as failed: nextest runs one test per process, and the process ended while the row ran",
                    plural(self.unfinished_attempts, "nextest attempt", "nextest attempts")
                ))
                .hint("a crash, an abort, a kill or a timeout; the failing row's message names the attempt; a report taken while nextest still runs counts the rows in flight this way too: report again once it ends"),
            );
        }
        if self.duplicate_files > 0 {
            out.push(Diagnostic::new(format!(
                "read {} found in several stores once",
                plural(self.duplicate_files, "file", "files")
            )));
        }
        if !self.unreadable.is_empty() {
            out.push(
                Diagnostic::new(format!(
                    "could not read {} (first `{}`)",
                    plural(self.unreadable.len(), "file", "files"),
                    self.unreadable[0].display()
                ))
                .hint("check permissions"),
            );
        }
        out
    }

    /// Number of lines left out for any reason.
    pub fn skipped(&self) -> usize {
        self.corrupt
            + self.other_versions.values().sum::<usize>()
            + self.invalid_specs
            + self.unreadable_excludes
            + self.conflicting_specs
            + self.orphan_rows
            + self.mismatched_rows
    }
}

/// How many corrupt lines [`ReadStats::corrupt_examples`] keeps.
pub(crate) const CORRUPT_EXAMPLES: usize = 5;

impl ReadStats {
    /// Adds the counts of a later slice of files.
    pub(crate) fn absorb(&mut self, other: ReadStats) {
        self.files += other.files;
        self.lines += other.lines;
        self.spec_lines += other.spec_lines;
        self.row_lines += other.row_lines;
        self.corrupt += other.corrupt;
        let room = CORRUPT_EXAMPLES.saturating_sub(self.corrupt_examples.len());
        self.corrupt_examples
            .extend(other.corrupt_examples.into_iter().take(room));
        for (v, n) in other.other_versions {
            *self.other_versions.entry(v).or_default() += n;
        }
        self.invalid_specs += other.invalid_specs;
        self.unreadable_excludes += other.unreadable_excludes;
        if self.unreadable_exclude_example.is_none() {
            self.unreadable_exclude_example = other.unreadable_exclude_example;
        }
        self.conflicting_specs += other.conflicting_specs;
        self.orphan_rows += other.orphan_rows;
        self.mismatched_rows += other.mismatched_rows;
        self.superseded_rows += other.superseded_rows;
        self.earlier_build_rows += other.earlier_build_rows;
        self.superseded_specs.extend(other.superseded_specs);
        self.superseded_spec_rows += other.superseded_spec_rows;
        self.unfinished_attempts += other.unfinished_attempts;
        self.did_not_finish += other.did_not_finish;
        self.duplicate_files += other.duplicate_files;
        self.unreadable.extend(other.unreadable);
    }
}
