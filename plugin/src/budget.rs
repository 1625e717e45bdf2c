//! The row budget as the command line reports it: how many rows of a design it lets run
//! and the coverage they reach (computed by `heddle_store::reach`), in the words `show`
//! and every report format use.

use heddle_store::Reach;

/// What a budget leaves of one design.
#[derive(Clone, Debug, PartialEq)]
pub struct BudgetReach {
    /// Rows the budget lets run (the first ones).
    pub rows: usize,
    /// Rows of the whole design.
    pub of: usize,
    /// What those rows cover, strength 1 first.
    pub reach: Vec<Reach>,
}

impl BudgetReach {
    /// The coverage in words, the design's own strength first: `strength 2: 78% of 84
    /// interactions covered, 41% at least λ = 2 times; strength 1: …`.
    pub fn coverage_text(&self, lambda: u32) -> String {
        self.reach
            .iter()
            .rev()
            .map(|r| {
                let mut s = format!(
                    "strength {}: {} of {} interactions covered",
                    r.strength,
                    pct(r.share_once()),
                    r.interactions
                );
                if lambda > 1 {
                    s.push_str(&format!(
                        ", {} at least lambda = {lambda} times",
                        pct(r.share_lambda())
                    ));
                }
                s
            })
            .collect::<Vec<_>>()
            .join("; ")
    }

    /// `budget: 7 of 27 rows run; they cover …`, the line `show` and the table print.
    pub fn line(&self, lambda: u32) -> String {
        format!(
            "budget: {} of {} rows run, the rest are ignored; they cover {}",
            self.rows,
            self.of,
            self.coverage_text(lambda)
        )
    }
}

/// A share as a whole percentage, never rounded up to 100% unless it is complete (a
/// budget that misses one interaction must not read as complete).
pub fn pct(x: f64) -> String {
    let p = (x * 100.0).round();
    if p >= 100.0 && x < 1.0 {
        return ">99%".to_string();
    }
    format!("{p:.0}%")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_of_a_reach() {
        let b = BudgetReach {
            rows: 7,
            of: 27,
            reach: vec![
                Reach {
                    strength: 1,
                    interactions: 20,
                    once: 20,
                    lambda: 18,
                },
                Reach {
                    strength: 2,
                    interactions: 1000,
                    once: 999,
                    lambda: 410,
                },
            ],
        };
        assert_eq!(
            b.line(2),
            "budget: 7 of 27 rows run, the rest are ignored; they cover strength 2: >99% of 1000 \
             interactions covered, 41% at least lambda = 2 times; strength 1: 100% of 20 \
             interactions covered, 90% at least lambda = 2 times"
        );
        assert_eq!(
            b.coverage_text(1),
            "strength 2: >99% of 1000 interactions covered; strength 1: 100% of 20 interactions covered"
        );
    }
}
