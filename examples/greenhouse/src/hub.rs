//! The hub: batches, frames, a worker pool, duplicate filtering and merging.

use std::collections::HashSet;
use std::sync::{Barrier, Mutex};

use crate::codec::{decode, encode};
use crate::{Config, Flush, HubError, Reading, Summary};

/// A configured hub.
#[derive(Clone, Copy, Debug)]
pub struct Hub {
    config: Config,
}

/// Calibration offsets per sensor id modulo 8, in hundredths (all zero on this site: the
/// lookup is kept because real sites have non-zero tables).
const CALIBRATION: [i64; 8] = [0; 8];

impl Hub {
    /// A hub with these knobs.
    pub fn new(config: Config) -> Self {
        Hub { config }
    }

    /// Runs the readings through the hub and returns the per-sensor summary.
    pub fn run(&self, readings: &[Reading]) -> Result<Summary, HubError> {
        let c = self.config;
        if c.batch == 0 {
            return Err(HubError::Config("batch must be at least 1"));
        }
        if c.workers == 0 {
            return Err(HubError::Config("workers must be at least 1"));
        }
        // resent readings are dropped while the stream is cut into batches, before any
        // worker sees them
        let kept: Vec<Reading>;
        let stream = if c.dedupe {
            let mut seen: HashSet<(u16, u32)> = HashSet::new();
            kept = readings
                .iter()
                .copied()
                .filter(|r| seen.insert((r.sensor, r.seq)))
                .collect();
            &kept[..]
        } else {
            readings
        };
        let frames: Vec<Vec<u8>> = stream
            .chunks(c.batch)
            .map(|b| encode(b, c.unit, c.codec, c.checksum))
            .collect();
        let summary: Mutex<Summary> = Mutex::new(Summary::new());
        let errors: Mutex<Vec<HubError>> = Mutex::new(Vec::new());
        // the hub closes its workers together, at the end of the stream
        let closing = Barrier::new(c.workers);
        std::thread::scope(|s| {
            for w in 0..c.workers {
                let (frames, summary, errors, closing) = (&frames, &summary, &errors, &closing);
                s.spawn(move || {
                    let mut local = Summary::new();
                    for (n, frame) in frames.iter().enumerate().skip(w).step_by(c.workers) {
                        let decoded = match decode(frame, n, c.unit, c.codec, c.checksum) {
                            Ok(d) => d,
                            Err(e) => {
                                errors.lock().unwrap_or_else(|p| p.into_inner()).push(e);
                                continue;
                            }
                        };
                        for (sensor, _seq, value) in decoded {
                            local
                                .entry(sensor)
                                .or_default()
                                .add(value + CALIBRATION[sensor as usize % 8]);
                        }
                        if c.flush == Flush::EveryFrame {
                            merge_locked(summary, &mut local);
                        }
                    }
                    closing.wait();
                    if c.flush == Flush::OnClose {
                        publish_on_close(summary, &mut local);
                    }
                });
            }
        });
        let mut errors = errors.into_inner().unwrap_or_else(|p| p.into_inner());
        errors.sort_by_key(|e| match e {
            HubError::Checksum { frame } | HubError::Truncated { frame } => *frame,
            HubError::Config(_) => 0,
        });
        if let Some(e) = errors.into_iter().next() {
            return Err(e);
        }
        Ok(summary.into_inner().unwrap_or_else(|p| p.into_inner()))
    }
}

mod log {
    use std::hash::{BuildHasher, Hasher};
    use std::time::Duration;

    /// Longest pause before a close-time write, so that workers closing together do not
    /// all hit the audit log at once.
    const MAX_JITTER_US: u64 = 6_000;
    /// How long one audit write takes (the site's log is synced on every entry).
    const WRITE_US: u64 = 150;

    /// Waits a random time below [`MAX_JITTER_US`] (fresh entropy from the standard
    /// library's hasher keys).
    pub fn jitter() {
        let r = std::collections::hash_map::RandomState::new()
            .build_hasher()
            .finish();
        std::thread::sleep(Duration::from_micros(r % MAX_JITTER_US));
    }

    /// Writes a summary's entry to the audit log.
    pub fn audit(_summary: &crate::Summary) {
        std::thread::sleep(Duration::from_micros(WRITE_US));
    }
}

/// Merges a worker's statistics into the summary while holding its lock.
fn merge_locked(summary: &Mutex<Summary>, local: &mut Summary) {
    let mut s = summary.lock().unwrap_or_else(|p| p.into_inner());
    for (sensor, stats) in std::mem::take(local) {
        s.entry(sensor).or_default().merge(&stats);
    }
}

/// The close-time merge, which keeps the lock short by merging into a copy.
///
/// PLANTED DEFECT (race, `workers = 4` × `flush = OnClose`): the copy is taken and put
/// back under two separate lock acquisitions, so when two workers close at the same time
/// the later write overwrites the other's statistics (a lost update). With one worker,
/// or with `EveryFrame` (which merges under the lock), nothing is lost.
fn publish_on_close(summary: &Mutex<Summary>, local: &mut Summary) {
    log::jitter();
    let mut merged = summary.lock().unwrap_or_else(|p| p.into_inner()).clone();
    for (sensor, stats) in std::mem::take(local) {
        merged.entry(sensor).or_default().merge(&stats);
    }
    log::audit(&merged);
    *summary.lock().unwrap_or_else(|p| p.into_inner()) = merged;
}
