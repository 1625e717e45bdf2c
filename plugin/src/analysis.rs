//! From per-interaction tallies to a verdict: which interactions explain the failures
//! (suspects), which of them fail only sometimes (flaky, with a Wilson score interval on
//! the pass rate), and how large λ must be to see a flake of a given rate.
//!
//! Suspects come from a greedy explanation of the failing rows: repeatedly take the
//! interaction that accounts for the most still-unexplained failures, preferring the
//! purest (share of its runs that failed) and then the simplest (fewest factors), until
//! every failing row is accounted for. The interactions weighed are those of every
//! arity up to the strength and, with focus sets, each focus set's at its own strength
//! (variable strength: a fault of the focused factors is found at the strength asked of
//! them). An interaction whose every run failed is a strong
//! suspect; one that also passed is weaker. Equally good explanations are all reported,
//! since the rows cannot tell them apart.
//!
//! Flakiness is a property of a row, not of an interaction: only a row that both passed
//! and failed (repeated with `--repeat`, retried by nextest, or run again in a later run
//! of the same build) shows that the same configuration gives different outcomes. The
//! store reader leaves out a row's executions in earlier runs by another build of the
//! test executable (`heddle_store::Records`), so a fix between runs is not flakiness. An interaction that
//! passed in some of its rows and failed in others, with no row of both kinds, may as
//! well be part of a fault of more factors than the strength (a higher-order fault):
//! its verdict is [`Verdict::SomeRows`], and only an interaction whose failing rows
//! include one that also passed is [`Verdict::Flaky`].

use std::cmp::Ordering;

use heddle_store::{Count, Tallies, Tally};

/// An interaction that explains failures.
#[derive(Clone, Debug, PartialEq)]
pub struct Suspect {
    /// Index of the interaction in [`Tallies::item`] (a focus interaction past the entries).
    pub interaction: usize,
    /// Between 0 and 1, in the order suspects are ranked: above 0.5 for an interaction
    /// every run of which failed (0.5 + half the share of all failures it explains);
    /// below 0.5 for one that also passed (half the share of failures it explains times
    /// the share of its own unexplained runs that failed); 0 for one whose failures are
    /// already explained by others.
    pub score: f64,
    /// True when every run containing it failed ("fails always").
    pub always: bool,
    /// What kind of failure it is.
    pub verdict: Verdict,
    /// Failures it explains that nothing ranked above it explains.
    pub explains: u64,
    /// Why it is suspected, in words.
    pub reason: String,
}

/// The verdict on one suspect.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Verdict {
    /// Every run of every row containing it failed.
    Always,
    /// Some row containing it both passed and failed: the same configuration gave both
    /// outcomes.
    Flaky,
    /// Some of its rows failed and others passed, but no row both passed and failed: a
    /// fault of more factors than the strength, or a flake not yet seen twice in one
    /// row; repeating the rows (`--repeat`) tells the two apart.
    SomeRows,
}

impl Verdict {
    /// The verdict on an interaction with these runs and rows (`None` when it never
    /// failed): every run failed, some row both passed and failed, or neither.
    pub fn of(count: &Count, split: &RowSplit) -> Option<Verdict> {
        if count.failures == 0 {
            None
        } else if count.passes == 0 {
            Some(Verdict::Always)
        } else if split.mixed > 0 {
            Some(Verdict::Flaky)
        } else {
            Some(Verdict::SomeRows)
        }
    }

    /// The words the reports use.
    pub fn words(self) -> &'static str {
        match self {
            Verdict::Always => "fails always",
            Verdict::Flaky => "flaky",
            Verdict::SomeRows => "fails in some of its rows",
        }
    }

    /// The name in the JSON report.
    pub fn key(self) -> &'static str {
        match self {
            Verdict::Always => "always",
            Verdict::Flaky => "flaky",
            Verdict::SomeRows => "some-rows",
        }
    }
}

/// How the rows containing one interaction ran.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct RowSplit {
    /// Rows containing it that ran at least once.
    pub ran: u64,
    /// Of those, rows that only failed.
    pub failed: u64,
    /// Rows that both passed and failed.
    pub mixed: u64,
    /// Rows that only passed.
    pub passed: u64,
}

/// Counts the rows of one interaction by how they ran: distinct rows, not executions, so
/// retries and repeats of one row count once.
pub fn row_split(tallies: &Tallies, interaction: usize) -> RowSplit {
    split_of(tallies, tallies.item(interaction))
}

/// [`row_split`] of any tally of the suite (a focus interaction's too).
pub fn split_of(tallies: &Tallies, tally: &Tally) -> RowSplit {
    let mut s = RowSplit::default();
    for &r in &tally.rows {
        let c = &tallies.rows[r as usize];
        if c.runs == 0 {
            continue;
        }
        s.ran += 1;
        match (c.passes > 0, c.failures > 0) {
            (true, true) => s.mixed += 1,
            (false, true) => s.failed += 1,
            _ => s.passed += 1,
        }
    }
    s
}

/// An interaction some row of which both passed and failed, and which explains failures.
#[derive(Clone, Debug, PartialEq)]
pub struct Flaky {
    /// Index of the interaction in [`Tallies::item`] (a focus interaction past the entries).
    pub interaction: usize,
    /// Executions.
    pub runs: u64,
    /// Passes.
    pub passes: u64,
    /// Lower end of the 95% Wilson score interval of the pass rate.
    pub low: f64,
    /// Upper end.
    pub high: f64,
}

/// The verdict on one suite.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Analysis {
    /// Best first.
    pub suspects: Vec<Suspect>,
    /// In the order of `suspects`.
    pub flaky: Vec<Flaky>,
    /// Failures recorded in all.
    pub failures: u64,
}

/// z for a two-sided 95% interval (the 0.975 quantile of the standard normal).
pub const Z95: f64 = 1.959_963_984_540_054;

/// Wilson (1927) score interval for a proportion of `k` successes in `n` trials.
/// Returns `(0, 1)` when `n` is 0.
///
/// ```
/// use cargo_heddle::analysis::{wilson, Z95};
/// let (low, high) = wilson(2, 4, Z95); // passed 2 of 4 runs
/// assert!((low - 0.150).abs() < 1e-3 && (high - 0.850).abs() < 1e-3);
/// ```
pub fn wilson(k: u64, n: u64, z: f64) -> (f64, f64) {
    if n == 0 {
        return (0.0, 1.0);
    }
    let n = n as f64;
    let p = k as f64 / n;
    let z2 = z * z;
    let denom = 1.0 + z2 / n;
    let centre = (p + z2 / (2.0 * n)) / denom;
    let half = z * (p * (1.0 - p) / n + z2 / (4.0 * n * n)).sqrt() / denom;
    ((centre - half).max(0.0), (centre + half).min(1.0))
}

/// The least λ at which an interaction failing with probability `p` on each run is seen
/// failing at least once with probability at least `confidence`: 1 − (1 − p)^λ ≥ c.
/// `None` when p is not in (0, 1] or c is not in (0, 1).
///
/// ```
/// // a flake failing half the time is seen within 5 runs with 95% confidence
/// assert_eq!(cargo_heddle::analysis::lambda_for(0.5, 0.95), Some(5));
/// ```
pub fn lambda_for(p: f64, confidence: f64) -> Option<u32> {
    if !(p > 0.0 && p <= 1.0 && confidence > 0.0 && confidence < 1.0) {
        return None;
    }
    if p == 1.0 {
        return Some(1);
    }
    let l = ((1.0 - confidence).ln() / (1.0 - p).ln()).ceil();
    // guard against rounding just above an integer
    let mut l = l.max(1.0) as u32;
    while l > 1 && 1.0 - (1.0 - p).powi(l as i32 - 1) >= confidence {
        l -= 1;
    }
    Some(l)
}

/// The smallest failure probability that λ runs catch with probability `confidence`.
///
/// ```
/// let p = cargo_heddle::analysis::detectable_rate(3, 0.95);
/// assert!((p - 0.6316).abs() < 1e-4); // 1 − 0.05^(1/3)
/// ```
pub fn detectable_rate(lambda: u32, confidence: f64) -> f64 {
    1.0 - (1.0 - confidence).powf(1.0 / lambda as f64)
}

/// The rows of an interaction in words, counting distinct rows (a row retried or repeated
/// counts once), with the executions when there were more than rows.
fn split_words(s: &RowSplit, runs: u64, failures: u64) -> String {
    let plural = |n: u64| if n == 1 { "" } else { "s" };
    if s.passed == 0 && s.mixed == 0 {
        let executions = if runs > s.ran {
            format!(" ({failures} of {runs} runs failed)")
        } else {
            String::new()
        };
        return format!("failed in all {} of its rows{executions}", s.ran);
    }
    let mut text = format!(
        "failed in {} of its {} row{}",
        s.failed + s.mixed,
        s.ran,
        plural(s.ran)
    );
    if s.mixed > 0 {
        text.push_str(&format!(", {} of which also passed: flaky evidence", s.mixed));
    } else {
        text.push_str(", and no row both passed and failed");
    }
    if runs > s.ran {
        text.push_str(&format!("; {failures} of {runs} runs failed"));
    }
    text
}

/// How much lower (natural log) an explanation's likelihood may be than the best one's
/// and still be reported beside it: a likelihood ratio of e^1.5 ≈ 4.5. Tuned with the
/// localisation benchmark (`plugin/benches/localise.rs`): lower values miss planted flaky
/// interactions, higher ones let alternatives crowd out later explanations.
const PLAUSIBLE: f64 = 1.5;

/// Log-likelihood of `g` failures in `n` runs at the failure rate that fits them best
/// (g/n), binomial coefficient left out as it is the same for every explanation.
pub(crate) fn log_likelihood(g: u64, n: u64) -> f64 {
    let (g, n) = (g as f64, n.max(1) as f64);
    let p = (g / n).min(1.0);
    let term = |k: f64, q: f64| if k > 0.0 { k * q.ln() } else { 0.0 };
    term(g, p) + term(n - g, 1.0 - p)
}

/// Names the interactions that explain the failures of a suite.
pub fn analyse(tallies: &Tallies) -> Analysis {
    let row_failures: Vec<u64> = tallies.rows.iter().map(|c| c.failures).collect();
    let failures: u64 = row_failures.iter().sum();
    if failures == 0 {
        return Analysis::default();
    }
    // every interaction counted, a focus set's at its own strength too
    let entries: Vec<&Tally> = tallies.items().collect();
    // candidates: interactions with failures, with the failing rows containing them
    let cands: Vec<(usize, Vec<usize>)> = entries
        .iter()
        .enumerate()
        .filter(|(_, e)| e.count.failures > 0)
        .map(|(i, e)| {
            (
                i,
                e.rows
                    .iter()
                    .map(|&r| r as usize)
                    .filter(|&r| row_failures[r] > 0)
                    .collect(),
            )
        })
        .collect();
    let mut explained = vec![false; tallies.rows.len()];
    // (candidate position, failures it explains, its runs not explained by earlier picks)
    let mut picked: Vec<(usize, u64, u64)> = Vec::new();
    loop {
        let interaction = |c: usize| &entries[cands[c].0].interaction;
        let always = |c: usize| entries[cands[c].0].count.passes == 0;
        // a candidate's evidence: the failures no earlier pick explains (g), among its
        // runs that no earlier pick explains (open); it is worth g · g/open — failures
        // explained times the precision of the explanation — compared exactly
        let evidence = |c: usize| {
            let (i, rows) = &cands[c];
            let (mut g, mut done) = (0u64, 0u64);
            for &r in rows {
                if explained[r] {
                    done += row_failures[r]
                } else {
                    g += row_failures[r]
                }
            }
            (g, entries[*i].count.runs.saturating_sub(done).max(1))
        };
        let mut best: Vec<(usize, u64, u64)> = Vec::new();
        for c in 0..cands.len() {
            let (g, open) = evidence(c);
            if g == 0 {
                continue;
            }
            let ord = match best.first() {
                None => Ordering::Greater,
                // an interaction every run of which failed is the stronger suspect
                Some(&(b, bg, bopen)) => always(c)
                    .cmp(&always(b))
                    .then(
                        ((g as u128 * g as u128) * bopen as u128)
                            .cmp(&((bg as u128 * bg as u128) * open as u128)),
                    )
                    .then(g.cmp(&bg))
                    .then(interaction(b).arity().cmp(&interaction(c).arity())),
            };
            match ord {
                Ordering::Greater => best = vec![(c, g, open)],
                Ordering::Equal => best.push((c, g, open)),
                Ordering::Less => {}
            }
        }
        if best.is_empty() {
            break;
        }
        // an explanation that contains another equally good one adds nothing
        let group: Vec<(usize, u64, u64)> = best
            .iter()
            .copied()
            .filter(|&(c, _, _)| {
                !best
                    .iter()
                    .any(|&(d, _, _)| d != c && interaction(c).contains(interaction(d)))
            })
            .collect();
        // when the best explanation is itself only partial (its runs also passed), the
        // rows cannot single it out: keep every explanation of as many failures whose
        // likelihood is close to the best one's (a plausible set, not one guess)
        let mut group = group;
        let (_, bg, bopen) = group[0];
        if bg < bopen {
            let best_ll = log_likelihood(bg, bopen);
            for c in 0..cands.len() {
                let (g, open) = evidence(c);
                if g == bg
                    && !group.iter().any(|&(d, _, _)| d == c)
                    && best_ll - log_likelihood(g, open) <= PLAUSIBLE
                    && !group
                        .iter()
                        .any(|&(d, _, _)| interaction(c).contains(interaction(d)))
                {
                    group.push((c, g, open));
                }
            }
        }
        for &(c, g, open) in &group {
            picked.push((c, g, open));
            for &r in &cands[c].1 {
                explained[r] = true;
            }
        }
    }
    let suspect = |i: usize, g: u64, open: u64| {
        let c = &entries[i].count;
        let always = c.passes == 0;
        let split = row_split(tallies, i);
        let verdict = Verdict::of(c, &split).unwrap_or(Verdict::SomeRows);
        let share = g as f64 / failures as f64;
        let reason = format!(
            "{}; explains {g} of {failures} failures",
            split_words(&split, c.runs, c.failures)
        );
        Suspect {
            interaction: i,
            score: if always {
                0.5 + 0.5 * share
            } else {
                0.5 * share * (g as f64 / open as f64).min(1.0)
            },
            always,
            verdict,
            explains: g,
            reason,
        }
    };
    let mut suspects: Vec<Suspect> = picked
        .iter()
        .map(|&(c, g, open)| suspect(cands[c].0, g, open))
        .collect();
    // strong suspects the explanation did not need: every run failed, but their failures
    // are already explained by something simpler or broader
    for (c, (i, _)) in cands.iter().enumerate() {
        let tally = &entries[*i].count;
        if tally.passes == 0 && !picked.iter().any(|&(p, _, _)| p == c) {
            let split = row_split(tallies, *i);
            suspects.push(Suspect {
                interaction: *i,
                score: 0.0,
                always: true,
                verdict: Verdict::Always,
                explains: 0,
                reason: format!(
                    "{}, but a higher-ranked suspect already explains those failures",
                    split_words(&split, tally.runs, tally.failures)
                ),
            });
        }
    }
    // explanations first, the ones that always failed before the others, then the
    // redundant strong suspects
    suspects.sort_by(|a, b| {
        (b.explains > 0)
            .cmp(&(a.explains > 0))
            .then(b.always.cmp(&a.always))
            .then(b.score.total_cmp(&a.score))
            .then(b.explains.cmp(&a.explains))
            .then(
                entries[b.interaction]
                    .count
                    .failures
                    .cmp(&entries[a.interaction].count.failures),
            )
            .then(
                entries[a.interaction]
                    .interaction
                    .arity()
                    .cmp(&entries[b.interaction].interaction.arity()),
            )
            .then(a.interaction.cmp(&b.interaction))
    });
    let flaky = suspects
        .iter()
        .filter(|s| s.verdict == Verdict::Flaky && s.explains > 0)
        .map(|s| {
            let c = &entries[s.interaction].count;
            let (low, high) = wilson(c.passes, c.runs, Z95);
            Flaky {
                interaction: s.interaction,
                runs: c.runs,
                passes: c.passes,
                low,
                high,
            }
        })
        .collect();
    Analysis {
        suspects,
        flaky,
        failures,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    use heddle_store::fixture::SpecBuilder;
    use heddle_test::record::{Outcome, SpecRecord};

    /// OA(9; 2, 4, 3) (Bose 1938 over GF(3)) twice, second copy with the levels of each
    /// column shifted: λ = 2, every pair in exactly two rows.
    fn rows() -> Vec<Vec<u8>> {
        let oa = [
            [0, 0, 0, 0],
            [0, 1, 1, 2],
            [0, 2, 2, 1],
            [1, 0, 1, 1],
            [1, 1, 2, 0],
            [1, 2, 0, 2],
            [2, 0, 2, 2],
            [2, 1, 0, 1],
            [2, 2, 1, 0],
        ];
        let mut out: Vec<Vec<u8>> = oa.iter().map(|r| r.to_vec()).collect();
        out.extend(oa.iter().map(|r| {
            r.iter()
                .enumerate()
                .map(|(c, &l)| ((l as usize + c) % 3) as u8)
                .collect()
        }));
        out
    }

    fn spec() -> SpecRecord {
        let mut b = SpecBuilder::new("f").strength(2).lambda(2).rows(rows());
        for i in 0..4 {
            b = b.factor(&format!("p{i}"), &["a", "b", "c"]);
        }
        b.build()
    }

    #[test]
    fn an_always_failing_pair_outranks_a_broader_flaky_one() {
        // (p0 = a, p1 = a) always fails; over six rounds, (p2 = c, p3 = c) fails in one of
        // its two rows every other round and in the other in the first four; more
        // failures come from the flaky pair
        let sp = spec();
        let det = |r: &[u8]| r[0] == 0 && r[1] == 0;
        let flaky_rows: Vec<usize> = (0..18)
            .filter(|&i| sp.rows[i][2] == 2 && sp.rows[i][3] == 2)
            .collect();
        assert_eq!(flaky_rows.len(), 2);
        let mut outcomes = Vec::new();
        for round in 0..6 {
            for (i, r) in sp.rows.iter().enumerate() {
                let fail =
                    det(r) || (i == flaky_rows[0] && round % 2 == 0) || (i == flaky_rows[1] && round < 4);
                outcomes.push((i, if fail { Outcome::Failed } else { Outcome::Passed }));
            }
        }
        let t = heddle_store::tally(&sp, outcomes).unwrap();
        let a = analyse(&t);
        let name = |s: &Suspect| t.entries[s.interaction].interaction.clone();
        assert_eq!(name(&a.suspects[0]).levels, vec![0, 0]);
        assert_eq!(name(&a.suspects[0]).factors, vec![0, 1]);
        assert!(a.suspects[0].always && a.suspects[0].score > 0.5);
        let flaky: Vec<_> = a
            .flaky
            .iter()
            .map(|f| t.entries[f.interaction].interaction.clone())
            .collect();
        assert!(
            flaky
                .iter()
                .any(|i| i.factors == vec![2, 3] && i.levels == vec![2, 2]),
            "{flaky:?}"
        );
        // scores fall with the rank
        for w in a.suspects.windows(2) {
            assert!(w[0].score >= w[1].score, "{:?}", a.suspects);
        }
    }

    #[test]
    fn a_focus_interaction_is_a_suspect_at_its_own_strength() {
        // the full factorial 3^3 (27 rows) at strength 2 with {p0, p1, p2} as a focus set
        // at strength 3: each triple is in one row, each pair in three (common
        // practice). The triple (b, b, b) fails: its pairs failed in one of their three
        // rows, so only the triple failed in all of its rows and explains the failure
        let rows: Vec<Vec<u8>> = (0..27u8).map(|x| vec![x / 9, x / 3 % 3, x % 3]).collect();
        let mut b = SpecBuilder::new("f")
            .strength(2)
            .focus(&[0, 1, 2], 3, 1)
            .rows(rows.clone());
        for i in 0..3 {
            b = b.factor(&format!("p{i}"), &["a", "b", "c"]);
        }
        let sp = b.build();
        let outcomes = rows.iter().enumerate().map(|(i, r)| {
            let fail = r == &[1, 1, 1];
            (i, if fail { Outcome::Failed } else { Outcome::Passed })
        });
        let t = heddle_store::tally(&sp, outcomes).unwrap();
        let a = analyse(&t);
        let top = &a.suspects[0];
        let it = &t.item(top.interaction).interaction;
        assert_eq!(
            (it.factors.clone(), it.levels.clone()),
            (vec![0, 1, 2], vec![1, 1, 1])
        );
        assert!(top.interaction >= t.entries.len(), "a focus interaction");
        assert_eq!((top.verdict, top.explains), (Verdict::Always, 1));
        assert_eq!(
            a.suspects.iter().filter(|s| s.explains > 0).count(),
            1,
            "{:?}",
            a.suspects
        );
    }

    #[test]
    fn wilson_matches_published_examples() {
        // Newcombe (1998), "Two-sided confidence intervals for the single proportion",
        // Statistics in Medicine 17:857-872, Table I, method 3 (score interval without
        // continuity correction); values from memory, to 4 decimals.
        for (k, n, lo, hi) in [
            (81, 263, 0.2553, 0.3662),
            (15, 148, 0.0624, 0.1605),
            (0, 20, 0.0, 0.1611),
            (1, 29, 0.0061, 0.1718),
        ] {
            let (l, h) = wilson(k, n, Z95);
            assert!((l - lo).abs() < 1e-4 && (h - hi).abs() < 1e-4, "{k}/{n}: {l} {h}");
        }
    }

    #[test]
    fn wilson_bounds_solve_the_score_equation() {
        // Wilson (1927): the bounds are the p with |p̂ − p| = z·sqrt(p(1−p)/n)
        for (k, n) in [(3u64, 10u64), (7, 9), (50, 100), (1, 1000)] {
            let (l, h) = wilson(k, n, Z95);
            let phat = k as f64 / n as f64;
            for p in [l, h] {
                let lhs = (phat - p).abs();
                let rhs = Z95 * (p * (1.0 - p) / n as f64).sqrt();
                assert!((lhs - rhs).abs() < 1e-12, "{k}/{n} at {p}");
            }
        }
    }

    #[test]
    fn lambda_advice_is_least() {
        // 1 − (1 − p)^λ ≥ c; p = 0.5, c = 0.95: 0.5^4 = 0.0625 > 0.05, 0.5^5 = 0.03125
        assert_eq!(lambda_for(0.5, 0.95), Some(5));
        assert_eq!(lambda_for(1.0, 0.99), Some(1));
        assert_eq!(lambda_for(0.0, 0.95), None);
        for p in [0.01, 0.1, 0.3, 0.77] {
            for c in [0.5, 0.9, 0.99] {
                let l = lambda_for(p, c).unwrap();
                assert!(1.0 - (1.0 - p).powi(l as i32) >= c);
                assert!(l == 1 || 1.0 - (1.0 - p).powi(l as i32 - 1) < c);
            }
        }
        let p = detectable_rate(4, 0.95);
        assert_eq!(lambda_for(p + 1e-9, 0.95), Some(4));
    }
}
