//! Changes of the independent variable and the Schrödinger form.
//!
//! For z = g(x): y_xx + (p(g)·g' − g''/g') y_x + q(g)·g'² y = 0, whose normal
//! form is Q̃(x) = g'² Q(g) + ½{g, x} with the Schwarzian
//! {g, x} = g'''/g' − (3/2)(g''/g')² (DESIGN.md; zero for Möbius maps).
//! For a new variable x with dx/dz = h(z): φ = h^(1/2) ψ solves
//! φ_xx + W φ = 0 with W = (Q − ½{x, z})/h², and V = ω² − W.

use super::normal::normal_q;
use crate::algebra::{Field, Rat, RatFunc};
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
