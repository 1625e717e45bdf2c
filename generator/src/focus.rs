//! Focus sets: subsets of factors covered at a higher strength than the rest, a
//! variable-strength covering array (Cohen, Colbourn, Collofello, Gibbons and Mugridge
//! 2003, "Variable strength interaction testing of components"): every t-set of all
//! factors at the base strength and index, and every s-set of each focus set's factors at
//! its own strength s and index.

use std::collections::BTreeMap;

use crate::error::Error;
use crate::interactions::for_each_subset;
use crate::limits::{MAX_FOCUS_SETS, check_lambda, check_strength};

/// A subset of factors whose interactions are covered at a higher strength than the
/// spec's: every `strength`-way combination of levels of these factors appears in at
/// least `lambda` rows.
///
/// ```
/// use heddle_generator::{generate, Effort, Focus, Spec};
/// // every pair of 3^6, and every triple of the first three factors
/// let spec = Spec::numbered(&[3; 6]).focus(Focus::new(vec![0, 1, 2], 3));
/// let d = generate(&spec, Effort::Fast).unwrap();
/// assert!(d.rows.len() >= 27);
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Focus {
    /// Factor indices, in the order the front end named them.
    pub factors: Vec<usize>,
    /// Strength over these factors: above the spec's, at most their number.
    pub strength: usize,
    /// Index over these factors.
    pub lambda: u32,
}

impl Focus {
    /// A focus set at this strength, λ = 1.
    pub fn new(factors: Vec<usize>, strength: usize) -> Self {
        Focus {
            factors,
            strength,
            lambda: 1,
        }
    }

    /// Sets the index λ over the focus set.
    pub fn lambda(mut self, lambda: u32) -> Self {
        self.lambda = lambda;
        self
    }

    /// The factor indices, sorted.
    pub fn sorted(&self) -> Vec<usize> {
        let mut f = self.factors.clone();
        f.sort_unstable();
        f
    }

    /// Checks the focus set at position `at` against a spec of `names` factors at base
    /// strength `base` ([`crate::Spec::validate`] checks every focus set so; a reader of
    /// recorded specs asks the same question here).
    pub fn validate(&self, at: usize, names: &[&str], base: usize) -> Result<(), Error> {
        let mut seen = vec![false; names.len()];
        for &f in &self.factors {
            let Some(slot) = seen.get_mut(f) else {
                return Err(Error::FocusUnknownFactor { focus: at, factor: f });
            };
            if std::mem::replace(slot, true) {
                return Err(Error::FocusRepeatedFactor {
                    focus: at,
                    factor: names[f].to_string(),
                });
            }
        }
        check_strength(self.strength as u64)?;
        check_lambda(u64::from(self.lambda))?;
        if self.strength <= base {
            return Err(Error::FocusStrengthNotAbove {
                focus: at,
                strength: self.strength,
                base,
            });
        }
        if self.strength > self.factors.len() {
            return Err(Error::FocusStrengthAboveSize {
                focus: at,
                strength: self.strength,
                size: self.factors.len(),
            });
        }
        Ok(())
    }
}

/// Checks how many focus sets a spec has.
pub(crate) fn check_count(count: usize) -> Result<(), Error> {
    if count > MAX_FOCUS_SETS {
        return Err(Error::TooManyFocusSets {
            count,
            limit: MAX_FOCUS_SETS,
        });
    }
    Ok(())
}

/// The column sets focus sets ask for beyond the base t-sets, sorted, each with its
/// index: every `strength`-subset of each focus set, listed once (with the largest index
/// asked of it) in lexicographic order. The engine and every reader that counts focus
/// interactions (the store's tallies) list them through this one function; the caller
/// has validated the focus sets (so the listing is bounded by the interaction limit).
///
/// ```
/// use heddle_generator::{Focus, focus_sets};
/// let sets = focus_sets(&[Focus::new(vec![3, 0, 1], 2), Focus::new(vec![0, 1], 2).lambda(2)]);
/// assert_eq!(sets, [(vec![0, 1], 2), (vec![0, 3], 1), (vec![1, 3], 1)]);
/// ```
pub fn column_sets(focus: &[Focus]) -> Vec<(Vec<usize>, u32)> {
    let mut sets: BTreeMap<Vec<usize>, u32> = BTreeMap::new();
    for f in focus {
        for_each_subset(&f.sorted(), f.strength, |s| {
            let lambda = sets.entry(s.to_vec()).or_insert(0);
            *lambda = (*lambda).max(f.lambda);
        });
    }
    sets.into_iter().collect()
}

/// Interactions the focus sets add, at most (a column set two focus sets share counts
/// twice): Σ over their column sets of the product of level counts. Closed form, so a
/// spec whose focus sets have too many column sets to list is refused before listing.
pub(crate) fn count(focus: &[Focus], levels: &[usize]) -> u128 {
    let mut total = 0u128;
    for f in focus {
        let sub: Vec<usize> = f.factors.iter().filter_map(|&c| levels.get(c).copied()).collect();
        total = total.saturating_add(crate::interactions::count(&sub, f.strength));
    }
    total
}

/// The counting bound of the focus sets alone: λ times the product of the `strength`
/// largest level counts of each focus set (a row shows one combination of each set).
pub(crate) fn lower_bound(focus: &[Focus], levels: &[usize]) -> u128 {
    focus
        .iter()
        .map(|f| {
            let mut sub: Vec<usize> = f.factors.iter().filter_map(|&c| levels.get(c).copied()).collect();
            sub.sort_unstable_by(|a, b| b.cmp(a));
            let product = sub
                .iter()
                .take(f.strength)
                .fold(1u128, |p, &v| p.saturating_mul(v as u128));
            product.saturating_mul(u128::from(f.lambda))
        })
        .max()
        .unwrap_or(0)
}
