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
    /// What those rows cover, strength 1 first, then each focus set.
    pub reach: Vec<Reach>,
    /// The factors of each focus set by name, in the spec's order (what a focus set's
    /// reach is called).
    pub focus: Vec<Vec<String>>,
}

impl BudgetReach {
    /// The coverage in words, the design's own strength first, then each focus set at
    /// its own: `strength 2: 78% of 84 interactions covered, 41% at least λ = 2 times;
    /// strength 1: …; focus set `a, b, c` at strength 3: …`.
    pub fn coverage_text(&self) -> String {
        let base = self.reach.iter().filter(|r| r.focus.is_none()).rev();
        let focus = self.reach.iter().filter(|r| r.focus.is_some());
        base.chain(focus)
            .map(|r| {
                let what = match r.focus.and_then(|i| self.focus.get(i)) {
                    Some(names) => format!("focus set `{}` at strength {}", names.join(", "), r.strength),
                    None => format!("strength {}", r.strength),
                };
                let mut s = format!(
                    "{what}: {} of {} interactions covered",
                    pct(r.share_once()),
                    r.interactions
                );
                if r.index > 1 {
                    s.push_str(&format!(
                        ", {} at least lambda = {} times",
                        pct(r.share_lambda()),
                        r.index
                    ));
                }
                s
            })
            .collect::<Vec<_>>()
            .join("; ")
    }

    /// `budget: 7 of 27 rows run; they cover …`, the line `show` and the table print.
    pub fn line(&self) -> String {
        format!(
            "budget: {} of {} rows run, the rest are ignored; they cover {}",
            self.rows,
            self.of,
            self.coverage_text()
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
        let reach = |strength, focus, index, interactions, once, lambda| Reach {
            strength,
            focus,
            index,
            interactions,
            once,
            lambda,
        };
        let mut b = BudgetReach {
            rows: 7,
            of: 27,
            reach: vec![reach(1, None, 2, 20, 20, 18), reach(2, None, 2, 1000, 999, 410)],
            focus: Vec::new(),
        };
        assert_eq!(
            b.line(),
            "budget: 7 of 27 rows run, the rest are ignored; they cover strength 2: >99% of 1000 \
             interactions covered, 41% at least lambda = 2 times; strength 1: 100% of 20 \
             interactions covered, 90% at least lambda = 2 times"
        );
        for r in &mut b.reach {
            r.index = 1;
        }
        assert_eq!(
            b.coverage_text(),
            "strength 2: >99% of 1000 interactions covered; strength 1: 100% of 20 interactions covered"
        );
        // a focus set is named by its factors, at its own strength and index
        b.reach.push(reach(3, Some(0), 2, 27, 9, 0));
        b.focus = vec![vec!["codec".into(), "unit".into(), "workers".into()]];
        assert!(
            b.coverage_text().ends_with(
                "; focus set `codec, unit, workers` at strength 3: 33% of 27 interactions covered, \
                 0% at least lambda = 2 times"
            ),
            "{}",
            b.coverage_text()
        );
    }
}
