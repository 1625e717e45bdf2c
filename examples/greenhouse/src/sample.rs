//! Invented sensor traffic for the demo: slowly drifting temperatures, and a few readings
//! resent by their sensor right after the original (as a flaky radio link does).

use crate::Reading;

/// `n` readings from `sensors` sensors, deterministic for a given `seed`; every 97th
/// reading is resent once, immediately after the one that follows it.
pub fn readings(sensors: u16, n: usize, seed: u64) -> Vec<Reading> {
    let sensors = sensors.max(1);
    let mut state = seed ^ 0x9e37_79b9_7f4a_7c15;
    let mut next = move || {
        // xorshift64*: small, deterministic, good enough for invented data
        state ^= state >> 12;
        state ^= state << 25;
        state ^= state >> 27;
        state.wrapping_mul(0x2545_f491_4f6c_dd1d)
    };
    let mut temp: Vec<i64> = (0..sensors).map(|i| 1800 + 37 * i as i64).collect();
    let mut seq = vec![0u32; sensors as usize];
    let mut out = Vec::with_capacity(n + n / 97 + 1);
    let mut pending: Option<Reading> = None;
    for i in 0..n {
        let s = (next() % sensors as u64) as u16;
        temp[s as usize] += (next() % 41) as i64 - 20;
        let r = Reading {
            sensor: s,
            seq: seq[s as usize],
            centi_celsius: temp[s as usize],
        };
        seq[s as usize] += 1;
        out.push(r);
        if let Some(p) = pending.take() {
            out.push(p);
        }
        if i % 97 == 0 {
            pending = Some(r);
        }
    }
    out
}
