//! Index λ by stacking: rows of arrays of indices μ₁, μ₂, … placed one after another cover
//! every interaction Σμᵢ times, so the cheapest multiset of offered arrays whose indices
//! sum to at least λ is a knapsack, solved exactly by dynamic programming over 0 … λ.
//! This is where "λ copies of an index-1 array" competes with "one array of index λ"
//! (and with mixtures, e.g. Hadamard orders 12 and 16 stacked when 4λ is not an order).

/// One array on offer: its index at the wanted strength and its row count.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Offer {
    /// Times every interaction is covered.
    pub index: u32,
    /// Rows.
    pub rows: usize,
}

/// How many of each offer to stack for index λ with the fewest rows, and that total;
/// `None` without offers. Ties go to the earlier offer.
pub fn cheapest(offers: &[Offer], lambda: u32) -> Option<(usize, Vec<usize>)> {
    if offers.is_empty() || offers.iter().any(|o| o.index == 0) {
        return None;
    }
    let lambda = lambda as usize;
    // best[j]: fewest rows reaching index ≥ j, and the offer used last
    let mut best: Vec<(usize, usize)> = vec![(0, usize::MAX); lambda + 1];
    for j in 1..=lambda {
        best[j] = offers
            .iter()
            .enumerate()
            .map(|(i, o)| {
                (
                    best[j.saturating_sub(o.index as usize)].0.saturating_add(o.rows),
                    i,
                )
            })
            .min()
            .unwrap_or((usize::MAX, usize::MAX));
    }
    let mut counts = vec![0; offers.len()];
    let mut j = lambda;
    while j > 0 {
        let i = best[j].1;
        counts[i] += 1;
        j = j.saturating_sub(offers[i].index as usize);
    }
    Some((best[lambda].0, counts))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Exhaustive minimum over all multiplicity vectors (bounded), independent of the DP.
    fn brute(offers: &[Offer], lambda: u32) -> usize {
        fn go(offers: &[Offer], need: i64, at: usize) -> usize {
            if need <= 0 {
                return 0;
            }
            if at == offers.len() {
                return usize::MAX / 2;
            }
            let o = offers[at];
            (0..=(need + o.index as i64 - 1) / o.index as i64)
                .map(|c| c as usize * o.rows + go(offers, need - c * o.index as i64, at + 1))
                .min()
                .unwrap_or(usize::MAX / 2)
        }
        go(offers, lambda as i64, 0)
    }

    #[test]
    fn dp_matches_exhaustive_search() {
        let sets = [
            vec![
                Offer { index: 1, rows: 7 },
                Offer { index: 3, rows: 12 },
                Offer { index: 4, rows: 16 },
            ],
            vec![Offer { index: 1, rows: 9 }],
            vec![
                Offer { index: 3, rows: 27 },
                Offer { index: 9, rows: 81 },
                Offer { index: 1, rows: 13 },
            ],
            vec![Offer { index: 5, rows: 20 }, Offer { index: 2, rows: 9 }],
        ];
        for offers in &sets {
            for lambda in 1..=25 {
                let (rows, counts) = cheapest(offers, lambda).unwrap();
                assert_eq!(rows, brute(offers, lambda), "{offers:?} λ={lambda}");
                let idx: u32 = counts.iter().zip(offers).map(|(c, o)| *c as u32 * o.index).sum();
                let total: usize = counts.iter().zip(offers).map(|(c, o)| c * o.rows).sum();
                assert!(idx >= lambda);
                assert_eq!(total, rows);
            }
        }
        assert_eq!(cheapest(&[], 3), None);
    }
}
