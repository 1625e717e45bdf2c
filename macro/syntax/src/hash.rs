//! A stable 64-bit hash for default seeds and spec fingerprints.
//!
//! Both end up in committed files and in test names' reproducibility, so they must be the
//! same on every platform, compiler and release: `std`'s `Hasher`s promise none of that.
//! FNV-1a is tiny, specified by its constants alone, and good enough for telling specs
//! apart (nothing here is adversarial).

/// FNV-1a 64-bit offset basis (Fowler, Noll and Vo; IETF draft-eastlake-fnv).
const OFFSET: u64 = 0xcbf2_9ce4_8422_2325;
/// FNV-1a 64-bit prime, 2^40 + 2^8 + 0xb3 (same source).
const PRIME: u64 = 0x0000_0100_0000_01b3;

/// An FNV-1a 64 hasher fed with length-prefixed fields, so that field boundaries count
/// (`"ab","c"` and `"a","bc"` hash differently).
#[derive(Clone, Debug)]
pub struct Fnv64(u64);

impl Default for Fnv64 {
    fn default() -> Self {
        Fnv64(OFFSET)
    }
}

impl Fnv64 {
    /// A fresh hasher.
    pub fn new() -> Self {
        Self::default()
    }

    /// Feeds raw bytes.
    pub fn bytes(&mut self, data: &[u8]) -> &mut Self {
        for &b in data {
            self.0 ^= u64::from(b);
            self.0 = self.0.wrapping_mul(PRIME);
        }
        self
    }

    /// Feeds an integer as 8 little-endian bytes.
    pub fn u64(&mut self, v: u64) -> &mut Self {
        self.bytes(&v.to_le_bytes())
    }

    /// Feeds a string, prefixed by its length.
    pub fn str(&mut self, s: &str) -> &mut Self {
        self.u64(s.len() as u64).bytes(s.as_bytes())
    }

    /// The hash so far.
    pub fn finish(&self) -> u64 {
        self.0
    }
}

/// FNV-1a 64 of `data`, no framing.
pub fn fnv1a64(data: &[u8]) -> u64 {
    Fnv64::new().bytes(data).finish()
}

/// The seed a function gets when neither the attribute nor the crate sets one: a hash of
/// its name, so two tests never share an array by accident yet a rebuild never moves it.
pub fn default_seed(function: &str) -> u64 {
    fnv1a64(function.as_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;

    // Test vectors of FNV-1a 64 (Fowler/Noll/Vo reference test suite; from memory).
    #[test]
    fn published_vectors() {
        assert_eq!(fnv1a64(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a64(b"a"), 0xaf63_dc4c_8601_ec8c);
        assert_eq!(fnv1a64(b"foobar"), 0x8594_4171_f739_67e8);
    }

    #[test]
    fn framing_separates_fields() {
        let a = Fnv64::new().str("ab").str("c").finish();
        let b = Fnv64::new().str("a").str("bc").finish();
        assert_ne!(a, b);
    }

    #[test]
    fn default_seed_is_the_name_hash() {
        assert_eq!(default_seed("foobar"), 0x8594_4171_f739_67e8);
        assert_ne!(default_seed("roundtrip"), default_seed("roundtrip2"));
    }
}
