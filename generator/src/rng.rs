//! The one source of randomness: ChaCha8 seeded from the spec's seed, drawn only as
//! fixed-width integers so results are identical on every platform.

use rand_chacha::ChaCha8Rng;
use rand_chacha::rand_core::{RngCore, SeedableRng};

/// Portable seeded generator.
pub struct Rng(ChaCha8Rng);

impl Rng {
    /// A generator for this seed and stream; different streams give independent
    /// sequences from one seed (one per method, so methods don't disturb each other).
    pub fn new(seed: u64, stream: u64) -> Self {
        let mut r = ChaCha8Rng::seed_from_u64(seed);
        r.set_stream(stream);
        Rng(r)
    }

    /// Uniform 32-bit value.
    pub fn next_u32(&mut self) -> u32 {
        self.0.next_u32()
    }

    /// Uniform in `0..n` (n ≥ 1), by multiply-shift on 64 bits.
    pub fn below(&mut self, n: u32) -> u32 {
        ((self.0.next_u32() as u64 * n as u64) >> 32) as u32
    }

    /// Uniform in `0..n` for a length or index (n ≥ 1, n < 2^32).
    pub fn index(&mut self, n: usize) -> usize {
        self.below(n as u32) as usize
    }

    /// Shuffles in place (Fisher–Yates).
    pub fn shuffle<T>(&mut self, items: &mut [T]) {
        for i in (1..items.len()).rev() {
            let j = self.index(i + 1);
            items.swap(i, j);
        }
    }
}

/// Streams, one per consumer of randomness.
pub mod stream {
    /// The greedy.
    pub const GREEDY: u64 = 1;
    /// The local search.
    pub const TIGHTEN: u64 = 2;
    /// Constructions that randomise (level relabelling, column choice).
    pub const CONSTRUCT: u64 = 3;
    /// The rows added for focus sets, and the search over the whole demand after them.
    pub const FOCUS: u64 = 4;
    /// The search for starters of a group-invariant design.
    pub const INVARIANT: u64 = 5;
}
