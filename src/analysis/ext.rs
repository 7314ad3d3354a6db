//! Arithmetic in Q(i)(params)[θ]/(F(θ)): the exact local data at a root θ of
//! an irreducible factor F of higher degree, as polynomials in θ of degree
//! below deg F. Square roots are taken in the base field, or for quadratic F
//! in the extension itself by norm and trace.

use crate::algebra::{Field, Poly, Rat, RatFunc, UPoly};
use crate::error::Result;

/// A root θ of `f` (degree ≥ 1 in the variable) and arithmetic modulo `f`.
#[derive(Clone, Debug)]
pub(crate) struct Ext {
    pub f: UPoly,
}

impl Ext {
    pub fn new(f: &Poly) -> Ext {
        Ext { f: UPoly::from_poly(f) }
    }
    pub fn degree(&self) -> usize {
        self.f.degree().unwrap_or(0)
    }
    pub fn reduce(&self, k: &Field, a: &UPoly) -> Result<UPoly> {
        Ok(a.divrem(k, &self.f)?.map(|(_, r)| r).unwrap_or_else(UPoly::zero))
    }
    /// The value at θ of a polynomial in the variable and parameters.
    pub fn of_poly(&self, k: &Field, p: &Poly) -> Result<UPoly> {
        self.reduce(k, &UPoly::from_poly(p))
    }
    pub fn mul(&self, k: &Field, a: &UPoly, b: &UPoly) -> Result<UPoly> {
        self.reduce(k, &a.mul(k, b)?)
    }
    pub fn inv(&self, k: &Field, a: &UPoly) -> Result<Option<UPoly>> {
        a.inverse_mod(k, &self.f)
    }
    pub fn div(&self, k: &Field, a: &UPoly, b: &UPoly) -> Result<Option<UPoly>> {
        Ok(match self.inv(k, b)? {
            Some(ib) => Some(self.mul(k, a, &ib)?),
            None => None,
        })
    }
    /// An element of the base field, when `a` is free of θ.
    pub fn as_base(a: &UPoly) -> Option<RatFunc> {
        match a.degree() {
            None => Some(RatFunc::zero()),
            Some(0) => Some(a.coeff(0)),
            _ => None,
        }
    }
    /// The exact square root of `a`, when it exists in the base field or
    /// (for quadratic F) in the extension: β = (α + n)/t with n² = N(α),
    /// t² = Tr(α) + 2n.
    pub fn sqrt(&self, k: &Field, a: &UPoly) -> Result<Option<UPoly>> {
        if let Some(b) = Ext::as_base(a) {
            if let Some(r) = k.sqrt_exact(&b)? {
                return Ok(Some(UPoly::constant(r)));
            }
        }
        if self.degree() != 2 {
            return Ok(None);
        }
        // θ² = u θ + v with u = −f1/f2, v = −f0/f2.
        let f2 = self.f.coeff(2);
        let u = k.neg(&k.div(&self.f.coeff(1), &f2)?);
        let v = k.neg(&k.div(&self.f.coeff(0), &f2)?);
        let (x, y) = (a.coeff(0), a.coeff(1));
        // For α = x + yθ: Tr α = 2x + y u, N α = x² + x y u − y² v.
        let tr = k.add(&k.mul(&RatFunc::rat(&Rat::int(2.into())), &x)?, &k.mul(&y, &u)?)?;
        let norm = k.sub(&k.add(&k.mul(&x, &x)?, &k.mul(&k.mul(&x, &y)?, &u)?)?, &k.mul(&k.mul(&y, &y)?, &v)?)?;
        let Some(n) = k.sqrt_exact(&norm)? else {
            return Ok(None);
        };
        for n in [n.clone(), k.neg(&n)] {
            let t2 = k.add(&tr, &k.mul(&RatFunc::rat(&Rat::int(2.into())), &n)?)?;
            if t2.is_zero() {
                continue;
            }
            if let Some(t) = k.sqrt_exact(&t2)? {
                let num = a.add(k, &UPoly::constant(n.clone()))?;
                let beta = num.scale(k, &k.inv(&t)?)?;
                // Verify β² = α exactly before returning it.
                if self.mul(k, &beta, &beta)? == self.reduce(k, a)? {
                    return Ok(Some(beta));
                }
            }
        }
        Ok(None)
    }
}
