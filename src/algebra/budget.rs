//! The work budget of one exact derivation: every polynomial product and
//! every gcd step on this thread charges its term products, weighted by
//! the machine words of the coefficients multiplied, to it while a
//! budget is open ([`with_budget`]), and an operation that would exceed it
//! fails with a limit error instead of running on. Without an open budget
//! (worker threads of a scan, library callers that set none) only the
//! per-operation limits of [`super::Limits`] and of the gcd apply.

use std::cell::Cell;

thread_local! {
    /// (spent, budget) of the open budget on this thread.
    static OPEN: Cell<Option<(u64, u64)>> = const { Cell::new(None) };
}

/// The default budget of one command's exact work, in weighted term
/// products: about a second of arithmetic (measured: the Teukolsky
/// sample's record, the largest derivation of the samples, spends 6·10⁶
/// units in 0.5 s; big-integer work runs at about 15 ns a unit).
pub const DEFAULT_BUDGET: u64 = 15_000_000;

/// Runs `f` with a budget of `units` term products for the exact work on
/// this thread; nested calls keep the outer budget. Returns `f`'s value.
pub fn with_budget<T>(units: u64, f: impl FnOnce() -> T) -> T {
    let outer = OPEN.with(|o| o.get());
    if outer.is_none() {
        OPEN.with(|o| o.set(Some((0, units))));
    }
    // Closed again even when `f` panics, so that later work on this thread is not limited.
    struct Close(bool);
    impl Drop for Close {
        fn drop(&mut self) {
            if self.0 {
                let _ = OPEN.try_with(|o| o.set(None));
            }
        }
    }
    let _close = Close(outer.is_none());
    f()
}

/// The cost of one product of coefficients of `a` and `b` bits, in
/// machine-word products (schoolbook, big integers weighed more), at least 1.
pub(crate) fn words(a: u64, b: u64) -> u64 {
    // A coefficient past the machine-word fast path of `Int` costs an
    // allocation and a big-integer product: weigh it as four words more.
    let w = |bits: u64| if bits <= 62 { 1 } else { 4 + bits.div_ceil(64) };
    w(a).saturating_mul(w(b))
}

/// Charges `n` term products; false once the open budget is spent (always
/// true without one).
pub(crate) fn charge(n: u64) -> bool {
    OPEN.with(|o| match o.get() {
        None => true,
        Some((spent, budget)) => {
            let s = spent.saturating_add(n);
            o.set(Some((s, budget)));
            s <= budget
        }
    })
}

/// The work spent in the open budget so far (0 without one).
#[cfg(test)]
fn spent() -> u64 {
    OPEN.with(|o| o.get().map_or(0, |(s, _)| s))
}

/// The error of a spent budget.
pub(crate) fn exceeded() -> crate::error::Error {
    let budget = OPEN.with(|o| o.get().map_or(DEFAULT_BUDGET, |(_, b)| b));
    crate::error::Error::new(
        crate::error::ErrorKind::Limit,
        format!("the exact derivation exceeded its work limit of {budget} term products (the expressions grow too large)"),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_budget_is_spent_and_closed() {
        assert!(charge(u64::MAX));
        let over = with_budget(10, || {
            assert!(charge(6));
            assert_eq!(spent(), 6);
            // A nested budget keeps the outer one.
            with_budget(1000, || charge(6))
        });
        assert!(!over);
        assert_eq!(spent(), 0);
        assert!(charge(u64::MAX));
    }
}
