//! The `solve` stage: numbers from the exact derivation — continued
//! fractions on the derived recurrences, first estimates from the
//! Schrödinger potential. Floating point lives here and never flows back
//! into the exact layer.

pub mod cf;
pub mod collocation;
pub mod coupled;
pub mod dd;
pub mod wkb;

pub mod boundary;
pub mod closed;
pub mod continuation;
pub mod ends;
pub mod global;
pub mod integrate;
pub mod levels;
pub mod mobius;
pub mod modefn;
pub mod nearby;
pub mod periodic;
pub mod physical;
pub mod plot;
pub mod polynomial;
pub mod region;
pub mod request;
pub mod roots;
pub mod route;
pub mod scan;
pub mod scatter;
pub mod shoot;
pub mod spectrum;

use crate::algebra::{Field, GRat, Poly, RatFunc};
use crate::error::{Error, ErrorKind, Result};
pub use cf::NPoly;

/// The equation A(z) y'' + B(z) y' + C(z) y = 0 with A, B, C polynomials in z
/// whose coefficients are polynomials in the frequency ω (an [`NPoly`] in
/// (z, ω): `c[i][j]` multiplies zⁱ ωʲ), every other parameter substituted.
#[derive(Clone, Debug)]
pub struct NumOde {
    /// Coefficient of y''.
    pub a: NPoly,
    /// Coefficient of y'.
    pub b: NPoly,
    /// Coefficient of y.
    pub c: NPoly,
}

impl NPoly {
    /// The value at (x, ω).
    pub fn eval(&self, x: num_complex::Complex64, w: num_complex::Complex64) -> num_complex::Complex64 {
        let mut acc = num_complex::Complex64::new(0.0, 0.0);
        for c in self.at_omega(w).iter().rev() {
            acc = acc * x + c;
        }
        acc
    }
}

/// A polynomial (in all variables, coefficients in Q(i)) as an [`NPoly`] in
/// (variable 0, variable `freq`) with the other variables at `values`.
pub fn try_npoly(p: &Poly, scale: f64, values: &[GRat], freq: usize) -> NPoly {
    let vals: Vec<num_complex::Complex64> = values
        .iter()
        .map(|x| {
            let (re, im) = x.to_f64();
            num_complex::Complex64::new(re, im)
        })
        .collect();
    npoly_at(p, scale, &vals, freq)
}

/// [`try_npoly`] with the other variables at complex double values (as a
/// coupled solve needs, where a separation constant is known only numerically).
pub fn npoly_at(p: &Poly, scale: f64, values: &[num_complex::Complex64], freq: usize) -> NPoly {
    use num_complex::Complex64;
    let mut out = NPoly::default();
    for (m, coeff) in p.terms() {
        let mut v = Complex64::new(coeff.re.to_f64(), coeff.im.to_f64()) / scale;
        for (i, x) in values.iter().enumerate() {
            if i == 0 || i == freq {
                continue;
            }
            let e = m.exp(i);
            if e > 0 {
                v *= x.powu(e);
            }
        }
        let (a, b) = (m.exp(0) as usize, m.exp(freq) as usize);
        if out.c.len() <= a {
            out.c.resize(a + 1, Vec::new());
        }
        if out.c[a].len() <= b {
            out.c[a].resize(b + 1, Complex64::new(0.0, 0.0));
        }
        out.c[a][b] += v;
    }
    out
}

/// The value of a rational function with every variable at a complex
/// double; `None` where the denominator vanishes.
pub fn eval_at(r: &RatFunc, values: &[num_complex::Complex64]) -> Option<num_complex::Complex64> {
    let poly = |p: &Poly| {
        let mut acc = num_complex::Complex64::new(0.0, 0.0);
        for (m, c) in p.terms() {
            let mut v = num_complex::Complex64::new(c.re.to_f64(), c.im.to_f64());
            for (i, x) in values.iter().enumerate() {
                let e = m.exp(i);
                if e > 0 {
                    v *= x.powu(e);
                }
            }
            acc += v;
        }
        acc
    };
    let den = poly(&r.den_expanded()) * r.scale().to_f64();
    (den.norm() > 0.0).then(|| poly(r.num()) / den)
}

/// y'' + p y' + q y = 0 cleared of denominators and made numeric except in ω.
/// Denominator factors may depend on ω only through a constant factor.
pub fn try_num_ode(k: &Field, p: &RatFunc, q: &RatFunc, values: &[GRat], freq: usize) -> Result<NumOde> {
    // A = lcm of the denominators of p and q (factor lists are coprime within each).
    let mut a = Poly::int(1);
    for r in [p, q] {
        let d = r.den_expanded();
        let g = crate::algebra::gcd(&a, &d).ok_or_else(|| Error::new(ErrorKind::Limit, "a gcd grew too large"))?;
        a = a.mul(&d.div_exact(&g).ok_or_else(|| Error::new(ErrorKind::Internal, "gcd does not divide"))?);
    }
    let ar = RatFunc::from_poly(a.clone());
    let pb = k.mul(p, &ar)?;
    let qc = k.mul(q, &ar)?;
    for r in [&pb, &qc] {
        if !r.den_factors().is_empty() {
            return Err(Error::new(ErrorKind::Internal, "clearing denominators left a denominator"));
        }
    }
    Ok(NumOde {
        a: try_npoly(&a, 1.0, values, freq),
        b: try_npoly(pb.num(), pb.scale().to_f64(), values, freq),
        c: try_npoly(qc.num(), qc.scale().to_f64(), values, freq),
    })
}
