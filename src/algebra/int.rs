//! Exact integers with a fast path: values that fit in an `i64` are kept
//! inline and only spill to a heap `BigInt` when an operation overflows.
//! Almost every coefficient met in physics equations is small, so this keeps
//! polynomial arithmetic allocation-free in the common case.

use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{Signed, ToPrimitive, Zero};
use std::cmp::Ordering;
use std::fmt;

/// An exact integer. Invariant: `Big` holds only values outside the `i64` range.
#[derive(Clone, PartialEq, Eq, Hash)]
pub enum Int {
    /// A value that fits in an `i64`.
    Small(i64),
    /// A value that does not.
    Big(Box<BigInt>),
}

impl Int {
    /// Zero.
    pub const ZERO: Int = Int::Small(0);
    /// One.
    pub const ONE: Int = Int::Small(1);

    /// Normalises a `BigInt` into the invariant form.
    pub fn from_big(b: BigInt) -> Int {
        match b.to_i64() {
            Some(v) => Int::Small(v),
            None => Int::Big(Box::new(b)),
        }
    }
    /// The value as a `BigInt`.
    pub fn to_big(&self) -> BigInt {
        match self {
            Int::Small(v) => BigInt::from(*v),
            Int::Big(b) => (**b).clone(),
        }
    }
    /// True for zero.
    pub fn is_zero(&self) -> bool {
        matches!(self, Int::Small(0))
    }
    /// True for one.
    pub fn is_one(&self) -> bool {
        matches!(self, Int::Small(1))
    }
    /// True for a negative value.
    pub fn is_negative(&self) -> bool {
        match self {
            Int::Small(v) => *v < 0,
            Int::Big(b) => b.is_negative(),
        }
    }
    /// −1, 0 or 1.
    pub fn signum(&self) -> i32 {
        match self {
            Int::Small(v) => v.signum() as i32,
            Int::Big(b) => {
                if b.is_negative() {
                    -1
                } else {
                    1
                }
            }
        }
    }
    /// The sum.
    pub fn add(&self, o: &Int) -> Int {
        if let (Int::Small(a), Int::Small(b)) = (self, o) {
            if let Some(c) = a.checked_add(*b) {
                return Int::Small(c);
            }
        }
        Int::from_big(self.to_big() + o.to_big())
    }
    /// The difference.
    pub fn sub(&self, o: &Int) -> Int {
        if let (Int::Small(a), Int::Small(b)) = (self, o) {
            if let Some(c) = a.checked_sub(*b) {
                return Int::Small(c);
            }
        }
        Int::from_big(self.to_big() - o.to_big())
    }
    /// The product.
    pub fn mul(&self, o: &Int) -> Int {
        if let (Int::Small(a), Int::Small(b)) = (self, o) {
            if let Some(c) = a.checked_mul(*b) {
                return Int::Small(c);
            }
        }
        Int::from_big(self.to_big() * o.to_big())
    }
    /// The negation.
    pub fn neg(&self) -> Int {
        match self {
            Int::Small(v) => match v.checked_neg() {
                Some(c) => Int::Small(c),
                None => Int::from_big(-BigInt::from(*v)),
            },
            Int::Big(b) => Int::from_big(-(**b).clone()),
        }
    }
    /// The absolute value.
    pub fn abs(&self) -> Int {
        if self.is_negative() {
            self.neg()
        } else {
            self.clone()
        }
    }
    /// Quotient and remainder, truncating toward zero; `None` for a zero divisor.
    pub fn div_rem(&self, o: &Int) -> Option<(Int, Int)> {
        if o.is_zero() {
            return None;
        }
        if let (Int::Small(a), Int::Small(b)) = (self, o) {
            if let (Some(q), Some(r)) = (a.checked_div(*b), a.checked_rem(*b)) {
                return Some((Int::Small(q), Int::Small(r)));
            }
        }
        let (q, r) = self.to_big().div_rem(&o.to_big());
        Some((Int::from_big(q), Int::from_big(r)))
    }
    /// `self / o` when `o` divides `self` exactly, else `None`.
    pub fn div_exact(&self, o: &Int) -> Option<Int> {
        let (q, r) = self.div_rem(o)?;
        if r.is_zero() {
            Some(q)
        } else {
            None
        }
    }
    /// The non-negative greatest common divisor.
    pub fn gcd(&self, o: &Int) -> Int {
        if let (Int::Small(a), Int::Small(b)) = (self, o) {
            let (mut x, mut y) = (a.unsigned_abs(), b.unsigned_abs());
            while y != 0 {
                let t = x % y;
                x = y;
                y = t;
            }
            if x <= i64::MAX as u64 {
                return Int::Small(x as i64);
            }
        }
        // num-bigint's gcd (Stein's algorithm) removes only a few bits of the
        // larger operand per step, which is quadratic when the operands differ
        // much in size: gcd(1, 10^99999) took seconds. Euclidean steps first
        // bring the two to within a word of each other.
        let (mut a, mut b) = (self.to_big().abs(), o.to_big().abs());
        loop {
            if a < b {
                std::mem::swap(&mut a, &mut b);
            }
            if b.is_zero() || a.bits() <= b.bits() + 64 {
                break;
            }
            a %= &b;
        }
        Int::from_big(a.gcd(&b))
    }
    /// `self` to a non-negative integer power.
    pub fn pow(&self, e: u32) -> Int {
        // Repeated squaring: a loop of e multiplications is quadratic in the
        // result's size and took seconds for literals such as 1e-99999.
        if let Int::Small(v) = self {
            if let Some(c) = v.checked_pow(e) {
                return Int::Small(c);
            }
        }
        Int::from_big(num_traits::Pow::pow(self.to_big(), e))
    }
    /// The exact square root of a non-negative perfect square.
    pub fn sqrt_exact(&self) -> Option<Int> {
        if self.is_negative() {
            return None;
        }
        let b = self.to_big();
        let r = b.sqrt();
        if &r * &r == b {
            Some(Int::from_big(r))
        } else {
            None
        }
    }
    /// Number of bits of the magnitude.
    pub fn bits(&self) -> u64 {
        match self {
            Int::Small(v) => 64 - v.unsigned_abs().leading_zeros() as u64,
            Int::Big(b) => b.bits(),
        }
    }
    /// The nearest `f64` (may be infinite for huge values).
    pub fn to_f64(&self) -> f64 {
        match self {
            Int::Small(v) => *v as f64,
            Int::Big(b) => b.to_f64().unwrap_or(f64::INFINITY),
        }
    }
    /// From a machine integer.
    /// The value as an `i64`, when it fits (the exact conversion: no float on the way).
    pub fn to_i64(&self) -> Option<i64> {
        match self {
            Int::Small(v) => Some(*v),
            Int::Big(_) => None,
        }
    }
    /// The value from an `i64`.
    pub fn from_i64(v: i64) -> Int {
        Int::Small(v)
    }
}

impl From<i64> for Int {
    fn from(v: i64) -> Int {
        Int::Small(v)
    }
}

impl From<BigInt> for Int {
    fn from(b: BigInt) -> Int {
        Int::from_big(b)
    }
}

impl PartialOrd for Int {
    fn partial_cmp(&self, o: &Int) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}

impl Ord for Int {
    fn cmp(&self, o: &Int) -> Ordering {
        match (self, o) {
            (Int::Small(a), Int::Small(b)) => a.cmp(b),
            _ => self.to_big().cmp(&o.to_big()),
        }
    }
}

impl fmt::Display for Int {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Int::Small(v) => write!(f, "{v}"),
            Int::Big(b) => write!(f, "{b}"),
        }
    }
}

impl fmt::Debug for Int {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Display::fmt(self, f)
    }
}

/// Converts a ratio of big integers to the nearest `f64`, also when both are
/// far outside the `f64` range (the quotient is formed on 64-bit mantissas).
pub(crate) fn ratio_to_f64(n: &BigInt, d: &BigInt) -> f64 {
    if n.is_zero() {
        return 0.0;
    }
    let nb = n.bits() as i64;
    let db = d.bits() as i64;
    // Scale so that the integer quotient has about 64 significant bits.
    let shift = 64 - (nb - db);
    let q = if shift >= 0 { (n << (shift as usize)) / d } else { n / (d << ((-shift) as usize)) };
    ldexp(q.to_f64().unwrap_or(f64::NAN), -shift)
}

/// `x · 2^e` without overflowing the intermediate power of two.
fn ldexp(mut x: f64, mut e: i64) -> f64 {
    while e > 1000 {
        x *= 2f64.powi(1000);
        e -= 1000;
    }
    while e < -1000 {
        x *= 2f64.powi(-1000);
        e += 1000;
    }
    x * 2f64.powi(e as i32)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn overflow_spills_to_big_and_back() {
        let a = Int::Small(i64::MAX);
        let b = a.add(&Int::ONE);
        assert!(matches!(b, Int::Big(_)));
        assert_eq!(b.sub(&Int::ONE), a);
        assert_eq!(Int::Small(i64::MIN).neg().to_big(), -BigInt::from(i64::MIN));
    }

    #[test]
    fn gcd_and_division() {
        assert_eq!(Int::from(12).gcd(&Int::from(-18)), Int::from(6));
        assert_eq!(Int::from(12).div_exact(&Int::from(5)), None);
        assert_eq!(Int::from(-12).div_exact(&Int::from(4)), Some(Int::from(-3)));
        assert_eq!(Int::from(49).sqrt_exact(), Some(Int::from(7)));
        assert_eq!(Int::from(50).sqrt_exact(), None);
    }

    #[test]
    fn ratio_conversion_is_accurate() {
        let n = BigInt::from(1) << 2000usize;
        let d = (BigInt::from(3)) << 2000usize;
        assert!((ratio_to_f64(&n, &d) - 1.0 / 3.0).abs() < 1e-16);
        assert_eq!(ratio_to_f64(&BigInt::from(1), &BigInt::from(4)), 0.25);
    }
}
