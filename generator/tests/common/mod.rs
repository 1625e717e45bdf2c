//! What the randomised engine tests share: a stream of choices and the full factorial.

/// splitmix64 (Steele, Lea & Flood 2014): turns one drawn seed into a stream of choices.
pub struct Mix(pub u64);

impl Mix {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    pub fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
}

/// Every complete row, in mixed-radix order.
pub fn all_rows(levels: &[usize]) -> Vec<Vec<u8>> {
    let mut out = vec![vec![]];
    for &v in levels {
        out = out
            .into_iter()
            .flat_map(|r| {
                (0..v as u8).map(move |l| {
                    let mut r = r.clone();
                    r.push(l);
                    r
                })
            })
            .collect();
    }
    out
}
