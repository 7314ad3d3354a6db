//! Polynomials in the variable (variable 0) with coefficients in the
//! parameter field Q(i)(parameters): the arithmetic of partial fractions,
//! Taylor shifts and local expansions.

use super::poly::Poly;
use super::ratfunc::{Field, RatFunc};
use crate::error::Result;

/// A dense univariate polynomial, low degree first, no trailing zeros;
/// coefficients are free of variable 0.
#[derive(Clone, Debug, PartialEq)]
pub struct UPoly {
    /// Coefficients, entry `k` multiplying `z^k`.
    pub coeffs: Vec<RatFunc>,
}

impl UPoly {
    /// The zero polynomial.
    pub fn zero() -> UPoly {
        UPoly { coeffs: Vec::new() }
    }
    /// From a multivariate polynomial, collecting powers of variable 0.
    pub fn from_poly(p: &Poly) -> UPoly {
        let mut u = UPoly { coeffs: p.to_univariate(0).into_iter().map(RatFunc::from_poly).collect() };
        u.trim();
        u
    }
    /// A constant.
    pub fn constant(c: RatFunc) -> UPoly {
        let mut u = UPoly { coeffs: vec![c] };
        u.trim();
        u
    }
    fn trim(&mut self) {
        while matches!(self.coeffs.last(), Some(c) if c.is_zero()) {
            self.coeffs.pop();
        }
    }
    /// Degree (`None` for zero).
    pub fn degree(&self) -> Option<usize> {
        self.coeffs.len().checked_sub(1)
    }
    /// True for zero.
    pub fn is_zero(&self) -> bool {
        self.coeffs.is_empty()
    }
    /// Coefficient of `z^k` (zero past the degree).
    pub fn coeff(&self, k: usize) -> RatFunc {
        self.coeffs.get(k).cloned().unwrap_or_else(RatFunc::zero)
    }
    /// As a rational function of all variables.
    pub fn to_ratfunc(&self, k: &Field) -> Result<RatFunc> {
        let z = k.var(0);
        let mut acc = RatFunc::zero();
        for c in self.coeffs.iter().rev() {
            acc = k.add(&k.mul(&acc, &z)?, c)?;
        }
        Ok(acc)
    }
    /// Sum.
    pub fn add(&self, k: &Field, o: &UPoly) -> Result<UPoly> {
        let n = self.coeffs.len().max(o.coeffs.len());
        let mut c = Vec::with_capacity(n);
        for i in 0..n {
            c.push(k.add(&self.coeff(i), &o.coeff(i))?);
        }
        let mut u = UPoly { coeffs: c };
        u.trim();
        Ok(u)
    }
    /// Product.
    pub fn mul(&self, k: &Field, o: &UPoly) -> Result<UPoly> {
        if self.is_zero() || o.is_zero() {
            return Ok(UPoly::zero());
        }
        let mut c = vec![RatFunc::zero(); self.coeffs.len() + o.coeffs.len() - 1];
        for (i, a) in self.coeffs.iter().enumerate() {
            for (j, b) in o.coeffs.iter().enumerate() {
                c[i + j] = k.add(&c[i + j], &k.mul(a, b)?)?;
            }
        }
        let mut u = UPoly { coeffs: c };
        u.trim();
        Ok(u)
    }
    /// Product with a coefficient.
    pub fn scale(&self, k: &Field, s: &RatFunc) -> Result<UPoly> {
        let mut c = Vec::with_capacity(self.coeffs.len());
        for a in &self.coeffs {
            c.push(k.mul(a, s)?);
        }
        let mut u = UPoly { coeffs: c };
        u.trim();
        Ok(u)
    }
    /// Quotient and remainder; `None` when dividing by zero.
    pub fn divrem(&self, k: &Field, d: &UPoly) -> Result<Option<(UPoly, UPoly)>> {
        let Some(dd) = d.degree() else {
            return Ok(None);
        };
        let lead_inv = k.inv(&d.coeffs[dd])?;
        let mut r = self.clone();
        let mut q = vec![RatFunc::zero(); self.coeffs.len().saturating_sub(dd)];
        while let Some(rd) = r.degree() {
            if rd < dd {
                break;
            }
            let c = k.mul(&r.coeffs[rd], &lead_inv)?;
            let shift = rd - dd;
            for (j, dj) in d.coeffs.iter().enumerate() {
                r.coeffs[j + shift] = k.sub(&r.coeffs[j + shift], &k.mul(&c, dj)?)?;
            }
            q[shift] = c;
            r.trim();
        }
        let mut q = UPoly { coeffs: q };
        q.trim();
        Ok(Some((q, r)))
    }
    /// `u` with `u·self ≡ 1 (mod m)`, when `self` is invertible modulo `m`.
    pub fn inverse_mod(&self, k: &Field, m: &UPoly) -> Result<Option<UPoly>> {
        // Extended Euclid on (m, self), tracking the coefficient of self.
        let (mut r0, mut r1) = (
            m.clone(),
            match self.divrem(k, m)? {
                Some((_, r)) => r,
                None => return Ok(None),
            },
        );
        let (mut t0, mut t1) = (UPoly::zero(), UPoly::constant(RatFunc::one()));
        while !r1.is_zero() {
            let Some((q, r)) = r0.divrem(k, &r1)? else {
                return Ok(None);
            };
            let t = t0.add(k, &q.mul(k, &t1)?.scale(k, &k.neg(&RatFunc::one()))?)?;
            r0 = r1;
            r1 = r;
            t0 = t1;
            t1 = t;
        }
        if r0.degree() != Some(0) {
            return Ok(None);
        }
        let inv = k.inv(&r0.coeffs[0])?;
        let t = t0.scale(k, &inv)?;
        Ok(t.divrem(k, m)?.map(|(_, r)| r))
    }
    /// The polynomial in `t` equal to `self(z0 + t)`.
    pub fn taylor_shift(&self, k: &Field, z0: &RatFunc) -> Result<UPoly> {
        let mut acc = UPoly::zero();
        for c in self.coeffs.iter().rev() {
            // acc ← acc·(t + z0) + c
            let mut next = vec![RatFunc::zero(); acc.coeffs.len() + 1];
            for (i, a) in acc.coeffs.iter().enumerate() {
                next[i + 1] = k.add(&next[i + 1], a)?;
                next[i] = k.add(&next[i], &k.mul(a, z0)?)?;
            }
            next[0] = k.add(&next[0], c)?;
            acc = UPoly { coeffs: next };
            acc.trim();
        }
        Ok(acc)
    }
    /// Derivative in the variable.
    pub fn derivative(&self, k: &Field) -> Result<UPoly> {
        let mut c = Vec::new();
        for (i, a) in self.coeffs.iter().enumerate().skip(1) {
            c.push(k.mul(a, &RatFunc::from_poly(Poly::int(i as i64)))?);
        }
        let mut u = UPoly { coeffs: c };
        u.trim();
        Ok(u)
    }
    /// The first `n` Taylor coefficients at 0 of `self / d`, where `d(0) ≠ 0`.
    pub fn series_div(&self, k: &Field, d: &UPoly, n: usize) -> Result<Option<Vec<RatFunc>>> {
        let d0 = d.coeff(0);
        if d0.is_zero() {
            return Ok(None);
        }
        let d0inv = k.inv(&d0)?;
        let mut out: Vec<RatFunc> = Vec::with_capacity(n);
        // Only the coefficients of d up to its degree contribute.
        let deg = d.coeffs.len().saturating_sub(1);
        for j in 0..n {
            let mut s = self.coeff(j);
            for (i, o) in out.iter().enumerate().skip(j.saturating_sub(deg)) {
                let dj = d.coeff(j - i);
                if !dj.is_zero() {
                    s = k.sub(&s, &k.mul(o, &dj)?)?;
                }
            }
            out.push(k.mul(&s, &d0inv)?);
        }
        Ok(Some(out))
    }
}
