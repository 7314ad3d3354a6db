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

/// Runs `canonode ARGS…` in process on a thread with a large stack (as the
/// binary does) and returns what it printed; `None` when it did not finish
/// within `bound` (a hang detector, not a timing assertion: the bound is
/// generous). A panic is re-raised with the arguments.
pub fn run_bounded(args: &[&str], bound: std::time::Duration) -> Option<canonode::command::Captured> {
    let mut argv: Vec<std::ffi::OsString> = vec!["canonode".into()];
    argv.extend(args.iter().map(|a| std::ffi::OsString::from(*a)));
    let (tx, rx) = std::sync::mpsc::channel();
    let handle = std::thread::Builder::new()
        .stack_size(256 << 20)
        .spawn(move || {
            let _ = tx.send(canonode::command::run_captured(argv));
        })
        .expect("a worker thread");
    match rx.recv_timeout(bound) {
        Ok(c) => {
            let _ = handle.join();
            Some(c)
        }
        Err(std::sync::mpsc::RecvTimeoutError::Timeout) => None,
        Err(std::sync::mpsc::RecvTimeoutError::Disconnected) => {
            let msg = match handle.join() {
                Err(p) => p.downcast_ref::<String>().cloned().or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string())).unwrap_or_default(),
                Ok(()) => String::new(),
            };
            panic!("PANIC {msg:?} in canonode {args:?}")
        }
    }
}

/// The first non-finite number printed in `text` (`NaN`, `inf`, `-inf`,
/// `inf` as the imaginary part `…+infi`), with its context; prose words such
/// as "infinity" or "inferred" do not count.
pub fn non_finite(text: &str) -> Option<String> {
    let b = text.as_bytes();
    let alpha = |i: usize| b.get(i).is_some_and(|c| c.is_ascii_alphabetic());
    for (i, _) in text.match_indices("NaN").chain(text.match_indices("nan")).chain(text.match_indices("inf")) {
        let len = 3;
        let before = i > 0 && alpha(i - 1);
        // `infi` (an infinite imaginary part) counts; `infinity`, `infinite`, `inferred` do not.
        let after = alpha(i + len) && (b.get(i + len) != Some(&b'i') || alpha(i + len + 1));
        if !before && !after {
            let lo = text.floor_char_boundary(i.saturating_sub(60));
            let hi = text.ceil_char_boundary((i + 60).min(text.len()));
            return Some(text[lo..hi].to_string());
        }
    }
    None
}
