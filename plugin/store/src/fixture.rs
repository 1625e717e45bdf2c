//! Records made by hand, for tests and benchmarks of whatever reads the store: one
//! builder, so a new record field touches this file and not every test.
//!
//! The defaults describe a suite `f` in the integration test `t` of package `demo`;
//! every derived field (module path, suite path, row names, labels of row records) is
//! kept consistent with what is set, as the runtime would write it.
//!
//! ```
//! use heddle_store::fixture::{SpecBuilder, row};
//! use heddle_test::record::Outcome;
//! let spec = SpecBuilder::new("roundtrip")
//!     .factor("batch", &["1", "8"])
//!     .factor("checksum", &["true", "false"])
//!     .rows(vec![vec![0, 0], vec![1, 1]])
//!     .build();
//! let r = row(&spec, 1, Outcome::Failed);
//! assert_eq!(r.test, "roundtrip::row_01");
//! assert_eq!(r.labels, ["8", "false"]);
//! ```

use heddle_test::record::{FactorSpec, FocusSpec, Outcome, RowRecord, SpecRecord, StartRecord};

/// Builds a [`SpecRecord`] field by field.
#[derive(Clone, Debug)]
pub struct SpecBuilder {
    rec: SpecRecord,
}

impl SpecBuilder {
    /// A suite for the function `function` with no factors and no rows yet, strength 1,
    /// λ = 1, seed 1, run `r1`.
    pub fn new(function: &str) -> SpecBuilder {
        let mut b = SpecBuilder {
            rec: SpecRecord {
                run: "r1".into(),
                krate: "demo".into(),
                target: String::new(),
                selector: String::new(),
                file: String::new(),
                function: function.into(),
                module: String::new(),
                suite: String::new(),
                factors: Vec::new(),
                strength: 1,
                lambda: 1,
                seed: 1,
                excludes: Vec::new(),
                rows: Vec::new(),
                row_names: Vec::new(),
                fingerprint: "00000000000000fp".into(),
                pinned: false,
                should_panic: false,
                budget: None,
                followups: 0,
                focus: Vec::new(),
                time: "2026-01-01T00:00:00.000000Z".into(),
            },
        };
        b = b.test_target("t");
        b
    }

    /// The integration-test target the suite lives in (file `tests/NAME.rs`).
    pub fn test_target(mut self, name: &str) -> SpecBuilder {
        let r = &mut self.rec;
        r.target = name.replace('-', "_");
        r.selector = format!("--test {name}");
        r.file = format!("tests/{name}.rs");
        r.module = format!("{}::{}", r.target, r.function);
        r.suite = r.function.clone();
        self
    }

    /// The package name.
    pub fn krate(mut self, name: &str) -> SpecBuilder {
        self.rec.krate = name.into();
        self
    }

    /// Adds a factor with these level labels.
    pub fn factor(mut self, name: &str, labels: &[&str]) -> SpecBuilder {
        self.rec.factors.push(FactorSpec {
            name: name.into(),
            labels: labels.iter().map(|l| l.to_string()).collect(),
        });
        self
    }

    /// Adds factors `f0`, `f1`, … with these level counts, labelled `0`, `1`, ….
    pub fn numbered(mut self, levels: &[usize]) -> SpecBuilder {
        let start = self.rec.factors.len();
        for (i, &v) in levels.iter().enumerate() {
            self.rec.factors.push(FactorSpec {
                name: format!("f{}", start + i),
                labels: (0..v).map(|l| l.to_string()).collect(),
            });
        }
        self
    }

    /// The rows (level indices), named `row_00`, `row_01`, … as the expansion names them.
    pub fn rows(mut self, rows: Vec<Vec<u8>>) -> SpecBuilder {
        let width = rows.len().saturating_sub(1).to_string().len().max(2);
        self.rec.row_names = (0..rows.len()).map(|i| format!("row_{i:0width$}")).collect();
        self.rec.rows = rows;
        self
    }

    /// Follow-up rows after the design's, named `row_followup_00`, … as the expansion
    /// names them.
    pub fn followup_rows(mut self, rows: Vec<Vec<u8>>) -> SpecBuilder {
        let width = rows.len().saturating_sub(1).to_string().len().max(2);
        let names = (0..rows.len()).map(|i| format!("row_followup_{i:0width$}"));
        self.rec.row_names.extend(names);
        self.rec.followups += rows.len() as u32;
        self.rec.rows.extend(rows);
        self
    }

    /// The rows the row budget let run (the first `rows`).
    pub fn budget(mut self, rows: u32) -> SpecBuilder {
        self.rec.budget = Some(rows);
        self
    }

    /// Adds a focus set: these factor indices at their own strength and index.
    pub fn focus(mut self, factors: &[u32], strength: u32, lambda: u32) -> SpecBuilder {
        self.rec.focus.push(FocusSpec {
            factors: factors.to_vec(),
            strength,
            lambda,
        });
        self
    }

    /// Strength t.
    pub fn strength(mut self, t: u32) -> SpecBuilder {
        self.rec.strength = t;
        self
    }

    /// Index λ.
    pub fn lambda(mut self, lambda: u32) -> SpecBuilder {
        self.rec.lambda = lambda;
        self
    }

    /// The seed.
    pub fn seed(mut self, seed: u64) -> SpecBuilder {
        self.rec.seed = seed;
        self
    }

    /// Excludes, as engine formulas over level indices.
    pub fn excludes(mut self, formulas: &[&str]) -> SpecBuilder {
        self.rec.excludes = formulas.iter().map(|f| f.to_string()).collect();
        self
    }

    /// The run id.
    pub fn run(mut self, run: &str) -> SpecBuilder {
        self.rec.run = run.into();
        self
    }

    /// The spec fingerprint.
    pub fn fingerprint(mut self, fingerprint: &str) -> SpecBuilder {
        self.rec.fingerprint = fingerprint.into();
        self
    }

    /// Whether the rows came from the pins file.
    pub fn pinned(mut self, pinned: bool) -> SpecBuilder {
        self.rec.pinned = pinned;
        self
    }

    /// Whether the function carries `#[should_panic]`.
    pub fn should_panic(mut self, should_panic: bool) -> SpecBuilder {
        self.rec.should_panic = should_panic;
        self
    }

    /// The record.
    pub fn build(self) -> SpecRecord {
        self.rec
    }
}

/// The record of one run of row `row` of `spec` in the spec's run, with its test name and
/// labels as the runtime writes them and a message when it failed.
pub fn row(spec: &SpecRecord, row: usize, outcome: Outcome) -> RowRecord {
    let mut rec = start(spec, row).finished(
        outcome,
        (!outcome.is_pass()).then(|| format!("row {row} failed")),
        1_000,
    );
    rec.time = "2026-01-01T00:00:01.000000Z".into();
    rec
}

/// The start line of row `row` of `spec`, as the runtime writes it before the row runs
/// (outside nextest: no attempt).
pub fn start(spec: &SpecRecord, row: usize) -> StartRecord {
    StartRecord {
        run: spec.run.clone(),
        krate: spec.krate.clone(),
        target: spec.target.clone(),
        test: spec.row_test_name(row).unwrap_or_default(),
        fingerprint: spec.fingerprint.clone(),
        row: u32::try_from(row).unwrap_or(u32::MAX),
        labels: spec
            .row_labels(row)
            .unwrap_or_default()
            .into_iter()
            .map(str::to_string)
            .collect(),
        time: "2026-01-01T00:00:00.500000Z".into(),
        attempt: None,
        build: None,
    }
}

/// OA(9; 2, 4, 3) from the linear (Rao-Hamming) construction (a, b, a+b, a+2b) mod 3:
/// the four column vectors (1,0), (0,1), (1,1), (1,2) are pairwise linearly independent
/// over GF(3), so every pair of columns shows each of the 9 level pairs exactly once
/// (Hedayat, Sloane & Stufken 1999, "Orthogonal Arrays", Theorem 3.20, numbering from
/// memory): a design whose tallies and aliases are known in advance.
pub fn oa9() -> Vec<Vec<u8>> {
    let mut rows = Vec::new();
    for a in 0..3u8 {
        for b in 0..3u8 {
            rows.push(vec![a, b, (a + b) % 3, (a + 2 * b) % 3]);
        }
    }
    rows
}
