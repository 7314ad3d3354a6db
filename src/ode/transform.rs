//! Changes of the independent variable and the Schrödinger form.
//!
//! For z = g(x): y_xx + (p(g)·g' − g''/g') y_x + q(g)·g'² y = 0, whose normal
//! form is Q̃(x) = g'² Q(g) + ½{g, x} with the Schwarzian
//! {g, x} = g'''/g' − (3/2)(g''/g')² (DESIGN.md; zero for Möbius maps).
//! For a new variable x with dx/dz = h(z): φ = h^(1/2) ψ solves
//! φ_xx + W φ = 0 with W = (Q − ½{x, z})/h², and V = ω² − W.

use super::normal::normal_q;
use crate::algebra::{Field, Poly, Rat, RatFunc};
use crate::error::{Error, ErrorKind, Result};

/// p and q of the equation in the new variable x, for z = g(x).
/// `p` and `q` are in the old variable (index 0); `g` and the result in the new one.
pub fn change_variable(k: &Field, p: &RatFunc, q: &RatFunc, g: &RatFunc) -> Result<(RatFunc, RatFunc)> {
    let g1 = k.deriv(g, 0)?;
    if g1.is_zero() {
        return Err(Error::new(ErrorKind::Usage, "the change of variable is constant: its derivative vanishes"));
    }
    let g2 = k.deriv(&g1, 0)?;
    let pg = k.compose(p, 0, g)?;
    let qg = k.compose(q, 0, g)?;
    let pt = k.sub(&k.mul(&pg, &g1)?, &k.div(&g2, &g1)?)?;
    let qt = k.mul(&qg, &k.mul(&g1, &g1)?)?;
    Ok((pt, qt))
}

/// The Schwarzian derivative {g, x} = g'''/g' − (3/2)(g''/g')².
pub fn schwarzian(k: &Field, g: &RatFunc) -> Result<RatFunc> {
    let g1 = k.deriv(g, 0)?;
    let g2 = k.deriv(&g1, 0)?;
    let g3 = k.deriv(&g2, 0)?;
    let a = k.div(&g3, &g1)?;
    let b = k.div(&g2, &g1)?;
    let three_halves = RatFunc::rat(&Rat::new(3.into(), 2.into()).expect("nonzero"));
    k.sub(&a, &k.mul(&three_halves, &k.mul(&b, &b)?)?)
}

/// Q̃ = g'² Q(g) + ½{g, x}: the normal form transformed directly (a check on
/// `change_variable` followed by the normal form).
pub fn transform_q(k: &Field, q_normal: &RatFunc, g: &RatFunc) -> Result<RatFunc> {
    let g1 = k.deriv(g, 0)?;
    let qg = k.compose(q_normal, 0, g)?;
    let half = RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero"));
    k.add(&k.mul(&k.mul(&g1, &g1)?, &qg)?, &k.mul(&half, &schwarzian(k, g)?)?)
}

/// The Schrödinger form for dx/dz = h: returns (W, V) with φ_xx + W φ = 0 and
/// V = ω² − W, ω being variable `freq` (when given; otherwise V = −W).
pub fn schrodinger(k: &Field, p: &RatFunc, q: &RatFunc, h: &RatFunc, freq: Option<usize>) -> Result<(RatFunc, RatFunc)> {
    if h.is_zero() {
        return Err(Error::new(ErrorKind::Usage, "dx/dz is identically zero"));
    }
    let qn = normal_q(k, p, q)?;
    // {x, z} = h''/h − (3/2)(h'/h)² with x' = h.
    let h1 = k.deriv(h, 0)?;
    let h2 = k.deriv(&h1, 0)?;
    let a = k.div(&h2, h)?;
    let b = k.div(&h1, h)?;
    let three_halves = RatFunc::rat(&Rat::new(3.into(), 2.into()).expect("nonzero"));
    let schw = k.sub(&a, &k.mul(&three_halves, &k.mul(&b, &b)?)?)?;
    let half = RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero"));
    let w = k.div(&k.sub(&qn, &k.mul(&half, &schw)?)?, &k.mul(h, h)?)?;
    let v = match freq {
        Some(i) => {
            let om = k.var(i);
            k.sub(&k.mul(&om, &om)?, &w)?
        }
        None => k.neg(&w),
    };
    Ok((w, v))
}

/// f(ζ) invariant under ζ → 1/ζ written as F(x), x = (ζ + 1/ζ)/2 = cos θ
/// for ζ = e^(iθ), in `kx` (the parameters at the same places as in f's
/// field, variable 0 now x); `None` when f is not invariant. With f = N/D,
/// f = N(ζ)D(1/ζ) / D(ζ)D(1/ζ): both are symmetric Laurent polynomials
/// Σ cₑ ζᵉ (c₋ₑ = cₑ), and ζᵉ + ζ⁻ᵉ = 2Tₑ(x) (Chebyshev, DLMF 18.5.1).
pub fn in_cosine(kx: &Field, f: &RatFunc) -> Result<Option<RatFunc>> {
    if !f.uses_var(0) {
        return Ok(Some(f.clone()));
    }
    let den = f.den_expanded();
    let d = den.degree(0) as usize;
    let mut rev = den.to_univariate(0);
    rev.resize(d + 1, Poly::zero());
    rev.reverse();
    let den_rev = Poly::from_univariate(0, &rev);
    let (Some(top), Some(bottom)) = (symmetric_in_x(&f.num().mul(&den_rev), d), symmetric_in_x(&den.mul(&den_rev), d)) else {
        return Ok(None);
    };
    let scale = RatFunc::rat(&Rat::int(f.scale().clone()));
    let bottom = kx.mul(&RatFunc::from_poly(bottom), &scale)?;
    Ok(Some(kx.div(&RatFunc::from_poly(top), &bottom)?))
}

/// ζ^(−shift)·p(ζ) as a polynomial in x = (ζ + 1/ζ)/2 when it is a
/// symmetric Laurent polynomial.
fn symmetric_in_x(p: &Poly, shift: usize) -> Option<Poly> {
    let c = p.to_univariate(0);
    let at = |j: isize| if j < 0 { Poly::zero() } else { c.get(j as usize).cloned().unwrap_or_else(Poly::zero) };
    let top = c.len() as isize - 1;
    if top > 2 * shift as isize || (0..=top).any(|j| at(j) != at(2 * shift as isize - j)) {
        return None;
    }
    let x = Poly::var(0);
    let two = Poly::int(2);
    let (mut t_prev, mut t) = (Poly::int(1), x.clone());
    let mut out = at(shift as isize);
    for e in 1..=shift {
        out = out.add(&at((shift + e) as isize).mul(&two).mul(&t));
        let next = two.mul(&x).mul(&t).sub(&t_prev);
        t_prev = std::mem::replace(&mut t, next);
    }
    Some(out)
}
