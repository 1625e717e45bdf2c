//! Remaining demand per interaction: how many more rows must still cover it.

use crate::interactions::Numbering;

/// Remaining demand, one counter per interaction of a numbering.
#[derive(Clone, Debug)]
pub struct Demand {
    /// Rows still needed per interaction (0 for covered or impossible ones).
    pub need: Vec<u16>,
    /// Σ need.
    pub remaining: u64,
}

impl Demand {
    /// λ for every possible interaction, 0 for the impossible ones.
    pub fn new(possible: &[bool], lambda: u32) -> Self {
        Demand::from_need(
            possible
                .iter()
                .map(|&p| if p { lambda as u16 } else { 0 })
                .collect(),
        )
    }

    /// Demand as given per interaction (0 for covered or impossible ones).
    pub fn from_need(need: Vec<u16>) -> Self {
        let remaining = need.iter().map(|&n| n as u64).sum();
        Demand { need, remaining }
    }

    /// Counts a row toward coverage; returns how much demand it met.
    pub fn cover(&mut self, layout: &impl Numbering, row: &[u8]) -> u64 {
        let mut gained = 0;
        let need = &mut self.need;
        layout.for_each_in_row(row, |i| {
            if need[i] > 0 {
                need[i] -= 1;
                gained += 1;
            }
        });
        self.remaining -= gained;
        gained
    }

    /// How much demand a row would meet.
    pub fn gain(&self, layout: &impl Numbering, row: &[u8]) -> u64 {
        let mut gained = 0;
        layout.for_each_in_row(row, |i| gained += (self.need[i] > 0) as u64);
        gained
    }
}
