//! What a suite's selected runs actually covered: rows that ran, and t-way interactions
//! that ran at all and in at least λ distinct rows — and, with focus sets, their
//! interactions at their own strength and index. A verdict of "all clear" needs every
//! t-way interaction at λ and every focus interaction at its index, and no execution
//! that did not finish (a process of several rows that crashed); a partial run (one
//! nextest partition, a single row rerun with `--exact`, a filter) says what did not
//! run instead.

use heddle_store::Tallies;

/// Coverage of one suite by the runs read.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Ran {
    /// Rows of the design.
    pub rows: usize,
    /// Rows that ran at least once.
    pub rows_run: usize,
    /// t-way interactions the design contains.
    pub interactions: usize,
    /// t-way interactions in at least one row that ran.
    pub interactions_run: usize,
    /// t-way interactions in at least λ distinct rows that ran.
    pub interactions_at_lambda: usize,
    /// The fewest executions of any t-way interaction (0 when one did not run).
    pub min_runs: u64,
    /// The fewest executions of any row that ran: the rounds every row went through
    /// (`--repeat`, runs merged), 0 when none ran.
    pub min_row_runs: u64,
    /// Interactions of the focus sets (each at its own strength) the design contains.
    pub focus_interactions: usize,
    /// Those in at least their focus set's λ distinct rows that ran.
    pub focus_at_lambda: usize,
    /// Executions that started and did not finish in a process of several rows (set by
    /// the report from the records, not the tallies): a run with one is never complete,
    /// whatever ran besides, since what ended the process is not known.
    pub unfinished: usize,
}

impl Ran {
    /// Measures the tallies of a suite at index `lambda`.
    pub fn measure(tallies: &Tallies, lambda: u32) -> Ran {
        let t_way = tallies.interactions();
        let mut ran = Ran {
            rows: tallies.rows.len(),
            rows_run: tallies.rows.iter().filter(|c| c.runs > 0).count(),
            interactions: t_way.len(),
            min_runs: t_way.iter().map(|t| t.count.runs).min().unwrap_or(0),
            min_row_runs: tallies
                .rows
                .iter()
                .map(|c| c.runs)
                .filter(|&r| r > 0)
                .min()
                .unwrap_or(0),
            ..Ran::default()
        };
        for t in t_way {
            let rows = t
                .rows
                .iter()
                .filter(|&&r| tallies.rows[r as usize].runs > 0)
                .count();
            if rows > 0 {
                ran.interactions_run += 1;
            }
            if rows >= lambda.max(1) as usize {
                ran.interactions_at_lambda += 1;
            }
        }
        ran.focus_interactions = tallies.focus.len();
        ran.focus_at_lambda = tallies
            .focus
            .iter()
            .filter(|f| {
                let rows = f.tally.rows.iter();
                rows.filter(|&&r| tallies.rows[r as usize].runs > 0).count() >= f.lambda.max(1) as usize
            })
            .count();
        ran
    }

    /// Every t-way interaction ran in at least λ rows, and every focus interaction in at
    /// least its focus set's λ, and no execution was left unfinished.
    pub fn complete(&self) -> bool {
        self.interactions_at_lambda == self.interactions
            && self.focus_at_lambda == self.focus_interactions
            && self.unfinished == 0
    }

    /// Rows with no record.
    pub fn rows_not_run(&self) -> usize {
        self.rows - self.rows_run
    }

    /// t-way interactions in no row that ran.
    pub fn interactions_not_run(&self) -> usize {
        self.interactions - self.interactions_run
    }

    /// Share of t-way interactions that ran at all.
    pub fn share_run(&self) -> f64 {
        if self.interactions == 0 {
            1.0
        } else {
            self.interactions_run as f64 / self.interactions as f64
        }
    }
}
