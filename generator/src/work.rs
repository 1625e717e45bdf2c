//! The fast mode's bound on work: a count of elementary steps (reading or updating one
//! interaction's counter, scoring one level against one t-set), never wall time, so the
//! same spec gives the same rows on every machine, loaded or idle, debug or release.
//!
//! [`crate::Effort::Fast`] is what the macro runs inside a user's build, where the engine
//! is compiled without optimisation; the bound keeps any spec within a few seconds there
//! (see `examples/build_cost.rs` for the figures). Methods ask how much is left and scale
//! down (fewer candidate rows, a shorter search) or are skipped when even their cheapest
//! form would not fit, and the design reports that it was cut short so that a front end
//! can advise pinning.

/// Steps a fast run may spend on its budgeted methods (the greedy's level choices and
/// the local search); in an unoptimised build one step costs some tens of nanoseconds.
pub const FAST_WORK: u64 = 30_000_000;

/// Steps after which a design is worth pinning whatever was cut: generating it again on
/// every build costs seconds.
pub const PIN_WORK: u64 = 20_000_000;

/// A budget of steps and what was spent of it.
#[derive(Clone, Debug)]
pub struct Work {
    limit: u64,
    spent: u64,
    /// Whether some method was scaled down or skipped for lack of steps.
    pub cut: bool,
}

impl Work {
    /// A budget of `limit` steps (`u64::MAX`: unbounded).
    pub fn new(limit: u64) -> Self {
        Work {
            limit,
            spent: 0,
            cut: false,
        }
    }

    /// Whether the budget is unbounded.
    pub fn unbounded(&self) -> bool {
        self.limit == u64::MAX
    }

    /// Records `n` steps.
    pub fn spend(&mut self, n: u64) {
        self.spent = self.spent.saturating_add(n);
    }

    /// Steps spent so far.
    pub fn spent(&self) -> u64 {
        self.spent
    }

    /// Steps left.
    pub fn left(&self) -> u64 {
        self.limit.saturating_sub(self.spent)
    }

    /// A budget of `num/den` of the steps left (unbounded stays unbounded), for one
    /// method; [`Work::absorb`] adds what it spent back.
    pub fn share(&self, num: u64, den: u64) -> Work {
        Work::new(if self.unbounded() {
            u64::MAX
        } else {
            (self.left() as u128 * num as u128 / den.max(1) as u128) as u64
        })
    }

    /// Counts what a share spent, and whether it was cut.
    pub fn absorb(&mut self, share: &Work) {
        self.spend(share.spent);
        self.cut |= share.cut;
    }
}
