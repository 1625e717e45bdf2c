//! The oracle: what the hub must compute, written the plain sequential way.

use std::collections::HashSet;

use crate::{Config, Reading, Summary};

/// The summary the hub should return for these readings.
pub fn summarize(config: &Config, readings: &[Reading]) -> Summary {
    let mut out = Summary::new();
    let mut seen = HashSet::new();
    for r in readings {
        if config.dedupe && !seen.insert((r.sensor, r.seq)) {
            continue;
        }
        out.entry(r.sensor)
            .or_default()
            .add(config.unit.from_centi_celsius(r.centi_celsius));
    }
    out
}
