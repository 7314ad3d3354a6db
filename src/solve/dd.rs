//! Double-double arithmetic: a number held as an unevaluated sum hi + lo of
//! two doubles with |lo| ≤ ½ ulp(hi), about 32 significant digits, built on
//! the error-free sum (Knuth) and product (Dekker's split) of two doubles
//! (common practice; T. J. Dekker, Numer. Math. 18 (1971) 224).
//!
//! Used where a recurrence's solution loses many digits to cancellation: a
//! numeric series whose other singular points all crowd just outside the
//! unit disc (a cosmological horizon far from a black hole's) has a
//! recurrence whose characteristic roots nearly coincide, and solving it in
//! doubles leaves the mode's condition with only seven or eight digits.

use num_complex::Complex64;
use std::ops::{Add, Div, Mul, Neg, Sub};

/// A real double-double number hi + lo.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Dd {
    hi: f64,
    lo: f64,
}

/// s + e = a + b exactly, for any a, b.
fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    (s, (a - (s - bb)) + (b - bb))
}

/// s + e = a + b exactly, for |a| ≥ |b|.
fn quick_two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    (s, b - (s - a))
}

/// hi + lo = a with hi holding the upper 26 bits (Dekker's split).
fn split(a: f64) -> (f64, f64) {
    let t = 134_217_729.0 * a; // 2²⁷ + 1
    let hi = t - (t - a);
    (hi, a - hi)
}

/// p + e = a·b exactly (Dekker's product, for |a|, |b| below 2⁹⁹⁶: no fused
/// multiply-add, which the baseline x86-64 target would call in software).
fn two_prod(a: f64, b: f64) -> (f64, f64) {
    let p = a * b;
    let ((ah, al), (bh, bl)) = (split(a), split(b));
    (p, ((ah * bh - p) + ah * bl + al * bh) + al * bl)
}

impl Dd {
    /// The double x.
    pub fn from_f64(x: f64) -> Dd {
        Dd { hi: x, lo: 0.0 }
    }

    /// The nearest double.
    pub fn to_f64(self) -> f64 {
        self.hi + self.lo
    }

    fn norm(hi: f64, lo: f64) -> Dd {
        let (h, l) = quick_two_sum(hi, lo);
        Dd { hi: h, lo: l }
    }
}

impl Add for Dd {
    type Output = Dd;
    fn add(self, o: Dd) -> Dd {
        let (s, e) = two_sum(self.hi, o.hi);
        let (t, f) = two_sum(self.lo, o.lo);
        let (s, e) = quick_two_sum(s, e + t);
        Dd::norm(s, e + f)
    }
}

impl Neg for Dd {
    type Output = Dd;
    fn neg(self) -> Dd {
        Dd { hi: -self.hi, lo: -self.lo }
    }
}

impl Sub for Dd {
    type Output = Dd;
    fn sub(self, o: Dd) -> Dd {
        self + (-o)
    }
}

impl Mul for Dd {
    type Output = Dd;
    fn mul(self, o: Dd) -> Dd {
        let (p, e) = two_prod(self.hi, o.hi);
        Dd::norm(p, e + (self.hi * o.lo + self.lo * o.hi))
    }
}

impl Div for Dd {
    type Output = Dd;
    fn div(self, o: Dd) -> Dd {
        // Two quotient digits: about 2⁻¹⁰⁴ relative, double-double's own.
        let q1 = self.hi / o.hi;
        let r = self - o * Dd::from_f64(q1);
        let q2 = r.hi / o.hi;
        Dd::norm(q1, q2)
    }
}

/// A complex double-double number.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Cdd {
    re: Dd,
    im: Dd,
}

impl Add for Cdd {
    type Output = Cdd;
    fn add(self, o: Cdd) -> Cdd {
        Cdd { re: self.re + o.re, im: self.im + o.im }
    }
}

impl Sub for Cdd {
    type Output = Cdd;
    fn sub(self, o: Cdd) -> Cdd {
        Cdd { re: self.re - o.re, im: self.im - o.im }
    }
}

impl Neg for Cdd {
    type Output = Cdd;
    fn neg(self) -> Cdd {
        Cdd { re: -self.re, im: -self.im }
    }
}

impl Mul for Cdd {
    type Output = Cdd;
    fn mul(self, o: Cdd) -> Cdd {
        Cdd { re: self.re * o.re - self.im * o.im, im: self.re * o.im + self.im * o.re }
    }
}

impl Div for Cdd {
    type Output = Cdd;
    fn div(self, o: Cdd) -> Cdd {
        // Scaled by the larger part of the divisor so that |o|² cannot
        // overflow or underflow.
        let big = o.re.hi.abs().max(o.im.hi.abs());
        let s = Dd::from_f64(if big > 0.0 { 1.0 / big } else { 1.0 });
        let (a, b) = (o.re * s, o.im * s);
        let inv = s / (a * a + b * b);
        Cdd { re: (self.re * a + self.im * b) * inv, im: (self.im * a - self.re * b) * inv }
    }
}

/// The numbers a recurrence can be solved in: complex doubles, or complex
/// double-doubles where the doubles' rounding would be amplified.
pub trait Scalar: Copy + Add<Output = Self> + Sub<Output = Self> + Mul<Output = Self> + Div<Output = Self> + Neg<Output = Self> {
    /// The complex double z.
    fn from_c(z: Complex64) -> Self;
    /// The nearest complex double.
    fn to_c(self) -> Complex64;
    /// Whether it is exactly zero.
    fn is_zero(self) -> bool;
    /// Σᵢ pᵢ nⁱ at an integer n (at most 2¹⁷, the deepest truncation, so
    /// that its powers up to the third, a recurrence's degree in n, are
    /// exact doubles).
    fn poly_at(p: &[Complex64], n: f64) -> Self;
}

impl Scalar for Complex64 {
    fn from_c(z: Complex64) -> Self {
        z
    }
    fn to_c(self) -> Complex64 {
        self
    }
    fn is_zero(self) -> bool {
        self.re == 0.0 && self.im == 0.0
    }
    fn poly_at(p: &[Complex64], n: f64) -> Self {
        p.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, c| acc * n + c)
    }
}

impl Scalar for Cdd {
    fn from_c(z: Complex64) -> Self {
        Cdd { re: Dd::from_f64(z.re), im: Dd::from_f64(z.im) }
    }
    fn to_c(self) -> Complex64 {
        Complex64::new(self.re.to_f64(), self.im.to_f64())
    }
    fn is_zero(self) -> bool {
        self.re.hi == 0.0 && self.im.hi == 0.0
    }
    fn poly_at(p: &[Complex64], n: f64) -> Self {
        // Each pᵢ nⁱ exactly (nⁱ is an exact double, the products error-free),
        // summed in double-double.
        let (mut re, mut im) = (Dd::default(), Dd::default());
        let mut power = 1.0;
        for c in p {
            let (a, e) = two_prod(c.re, power);
            re = re + Dd::norm(a, e);
            let (a, e) = two_prod(c.im, power);
            im = im + Dd::norm(a, e);
            power *= n;
        }
        Cdd { re, im }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_third_to_thirty_digits() {
        // 1/3 − 0.333…(16 digits as a double) = 1/3 − hi: the low part holds
        // the remainder a double cannot (exact arithmetic).
        let third = Dd::from_f64(1.0) / Dd::from_f64(3.0);
        let back = third * Dd::from_f64(3.0) - Dd::from_f64(1.0);
        assert!(back.to_f64().abs() < 1e-31, "{back:?}");
        assert!(third.lo != 0.0);
    }

    #[test]
    fn cancellation_a_double_loses_is_kept() {
        // (1 + 2⁻⁶⁰) − 1 = 2⁻⁶⁰ exactly; a double rounds 1 + 2⁻⁶⁰ to 1.
        let tiny = 2f64.powi(-60);
        let x = (Dd::from_f64(1.0) + Dd::from_f64(tiny)) - Dd::from_f64(1.0);
        assert_eq!(x.to_f64(), tiny);
    }

    #[test]
    fn complex_division_inverts_multiplication() {
        let a = Cdd::from_c(Complex64::new(0.3, -1.7));
        let b = Cdd::from_c(Complex64::new(-2.5e200, 4.0e199));
        let back = (a * b) / b - a;
        assert!(back.to_c().norm() < 1e-30, "{back:?}");
        let small = Cdd::from_c(Complex64::new(3e-200, -1e-201));
        assert!(((a / small) * small - a).to_c().norm() < 1e-30);
    }
}
