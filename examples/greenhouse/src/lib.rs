//! `greenhouse`: the sensor hub of a (fictional) greenhouse controller, heddle's demo.
//!
//! Soil and air sensors send temperature readings in hundredths of a degree Celsius. The
//! hub cuts the stream into batches, converts them to the display unit, encodes each
//! batch into a frame (optionally checksummed), hands the frames to a pool of worker
//! threads that decode them, drop resent duplicates and keep per-sensor statistics, and
//! merges the workers' statistics into one summary.
//!
//! Eight knobs shape that path ([`Config`]), and the demo suite covers their pairs three
//! times each. Two defects are planted on purpose, each visible for one pair of levels
//! only — exactly the kind of bug that per-knob tests miss:
//!
//! 1. **Deterministic** — `codec = Delta` with `unit = Fahrenheit`: the delta codec takes
//!    its deltas in Celsius and scales each one on decoding with integer division, so the
//!    rounding error accumulates along a batch (see [`codec::decode`]). Every row with
//!    that pair fails, every time.
//! 2. **Race** — `workers = 4` with `flush = OnClose`: at close, each worker merges its
//!    statistics into a copy of the summary and writes the copy back, taking the lock
//!    separately for the read and for the write (see [`hub`]'s `publish_on_close`), so
//!    when two workers close at the same moment one overwrites the other's statistics.
//!    It fails only when the threads interleave badly: sometimes.
//!
//! Both are marked `PLANTED DEFECT` in the source.

pub mod codec;
pub mod hub;
pub mod reference;
pub mod sample;

pub use hub::Hub;

/// Display unit of the summary.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Unit {
    /// Hundredths of a degree Celsius (the sensors' own unit).
    Celsius,
    /// Hundredths of a degree Fahrenheit.
    Fahrenheit,
    /// Hundredths of a kelvin.
    Kelvin,
}

impl Unit {
    /// Converts one reading from hundredths of a degree Celsius.
    pub fn from_centi_celsius(self, c: i64) -> i64 {
        match self {
            Unit::Celsius => c,
            Unit::Fahrenheit => c * 9 / 5 + 3200,
            Unit::Kelvin => c + 27315,
        }
    }
}

/// How a batch is encoded into a frame.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Codec {
    /// Eight little-endian bytes per value.
    Plain,
    /// The first value, then zig-zag varint deltas (small for slowly changing readings).
    Delta,
    /// Zig-zag varint of every value.
    Varint,
}

/// When workers merge their statistics into the summary.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Flush {
    /// After every frame.
    EveryFrame,
    /// Once, when the worker has drained its queue.
    OnClose,
}

/// The hub's knobs.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Config {
    /// Readings per batch (and so per frame).
    pub batch: usize,
    /// Frame encoding.
    pub codec: Codec,
    /// Append and verify a checksum per frame.
    pub checksum: bool,
    /// Worker threads decoding frames.
    pub workers: usize,
    /// Display unit.
    pub unit: Unit,
    /// Drop readings a sensor resent (same sensor and sequence number).
    pub dedupe: bool,
    /// When statistics are merged.
    pub flush: Flush,
    /// Number of sensors feeding the hub.
    pub sensors: u16,
}

/// One temperature reading.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Reading {
    /// Sensor id.
    pub sensor: u16,
    /// Sensor's sequence number; a resent reading repeats it.
    pub seq: u32,
    /// Hundredths of a degree Celsius.
    pub centi_celsius: i64,
}

/// Per-sensor statistics, in hundredths of the display unit.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Stats {
    /// Readings counted.
    pub count: u64,
    /// Lowest value.
    pub min: i64,
    /// Highest value.
    pub max: i64,
    /// Sum of values.
    pub sum: i64,
}

impl Stats {
    /// Adds one value.
    pub fn add(&mut self, v: i64) {
        if self.count == 0 {
            self.min = v;
            self.max = v;
        } else {
            self.min = self.min.min(v);
            self.max = self.max.max(v);
        }
        self.count += 1;
        self.sum += v;
    }

    /// Merges another sensor summary into this one.
    pub fn merge(&mut self, other: &Stats) {
        if other.count == 0 {
            return;
        }
        if self.count == 0 {
            *self = *other;
            return;
        }
        self.min = self.min.min(other.min);
        self.max = self.max.max(other.max);
        self.count += other.count;
        self.sum += other.sum;
    }
}

/// Summary of a run: statistics per sensor id.
pub type Summary = std::collections::BTreeMap<u16, Stats>;

/// Why the hub rejected input.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum HubError {
    /// A frame's checksum did not match.
    Checksum {
        /// Frame number.
        frame: usize,
    },
    /// A frame ended early.
    Truncated {
        /// Frame number.
        frame: usize,
    },
    /// The configuration is unusable.
    Config(&'static str),
}

impl std::fmt::Display for HubError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            HubError::Checksum { frame } => write!(f, "frame {frame}: checksum mismatch"),
            HubError::Truncated { frame } => write!(f, "frame {frame}: truncated"),
            HubError::Config(m) => write!(f, "bad configuration: {m}"),
        }
    }
}

impl std::error::Error for HubError {}
