//! Helpers shared by the integration tests (each test file that needs them
//! says `mod common;`). Not every test file uses every helper.
#![allow(dead_code)]

/// xorshift64* (S. Vigna, ACM TOMS 42 (2016) 1; common practice): a small,
/// seeded, deterministic generator, enough for test-case generation.
pub struct Rng(u64);

impl Rng {
    /// A generator from `seed` (0 is replaced by 1: the state must be nonzero).
    pub fn new(seed: u64) -> Rng {
        Rng(seed.max(1))
    }
    /// The next 64 random bits.
    pub fn next(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    /// Uniform in 0..n (n > 0).
    pub fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
    /// Uniform in lo..=hi.
    pub fn range(&mut self, lo: i64, hi: i64) -> i64 {
        lo + (self.next() % (hi - lo + 1) as u64) as i64
    }
    /// Uniform in lo..=hi without 0.
    pub fn nonzero(&mut self, lo: i64, hi: i64) -> i64 {
        loop {
            let v = self.range(lo, hi);
            if v != 0 {
                return v;
            }
        }
    }
    /// True with probability num/den.
    pub fn chance(&mut self, num: u64, den: u64) -> bool {
        self.next() % den < num
    }
    /// One of `items`, uniformly.
    pub fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len())]
    }
}
