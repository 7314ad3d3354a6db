//! Numeric values of the exact analysis at given parameter values: the
//! locations of all roots of each factor (eigenvalues of the companion
//! matrix, polished by Newton's method) and the exponents there. Square
//! roots that are not exact are taken on the principal branch (cut along the
//! negative real axis), which the output says.

use super::{Analysis, Exponent, Place};
use crate::algebra::{Field, GRat, Poly, RatFunc, UPoly};
use nalgebra::DMatrix;
use num_complex::Complex64;

/// Parameter values, indexed like the field's variables (entry 0 unused).
pub struct Values {
    point: Vec<GRat>,
}

impl Values {
    /// From values for every parameter (index i + 1 of the field).
    pub fn new(point: Vec<GRat>) -> Values {
        Values { point }
    }
    /// A rational function free of the variable, evaluated; `None` at a pole.
    pub fn ratfunc(&self, r: &RatFunc) -> Option<Complex64> {
        let v = r.eval(&self.point)?;
        let (re, im) = v.to_f64();
        Some(Complex64::new(re, im))
    }
    /// A polynomial in θ with coefficients free of the variable, at θ.
    pub fn upoly(&self, u: &UPoly, theta: Complex64) -> Option<Complex64> {
        let mut acc = Complex64::new(0.0, 0.0);
        for c in u.coeffs.iter().rev() {
            acc = acc * theta + self.ratfunc(c)?;
        }
        Some(acc)
    }
    /// The roots of a polynomial in the variable at these parameter values.
    pub fn roots(&self, f: &Poly) -> Option<Vec<Complex64>> {
        let u = UPoly::from_poly(f);
        let c: Vec<Complex64> = u.coeffs.iter().map(|x| self.ratfunc(x)).collect::<Option<_>>()?;
        try_roots(&c)
    }
    /// An exponent's value at θ.
    pub fn exponent(&self, e: &Exponent, theta: Complex64) -> Option<Complex64> {
        let c = self.upoly(&e.center, theta)?;
        if e.sign == 0 {
            return Some(c);
        }
        let s = match &e.root {
            Some(r) => self.upoly(r, theta)?,
            None => self.upoly(&e.radicand, theta)?.sqrt(),
        };
        Some(c + 0.5 * e.sign as f64 * s)
    }
}

/// Roots of Σ c_k z^k (low degree first) by companion-matrix eigenvalues and Newton polishing.
pub fn try_roots(c: &[Complex64]) -> Option<Vec<Complex64>> {
    let n = c.len().checked_sub(1)?;
    if n == 0 {
        return Some(Vec::new());
    }
    let lead = c[n];
    if lead.norm() == 0.0 {
        return None;
    }
    let mut m = DMatrix::<Complex64>::zeros(n, n);
    for i in 1..n {
        m[(i, i - 1)] = Complex64::new(1.0, 0.0);
    }
    for i in 0..n {
        m[(i, n - 1)] = -c[i] / lead;
    }
    let eig = m.schur().eigenvalues()?;
    let eval = |z: Complex64| -> (Complex64, Complex64) {
        let mut p = Complex64::new(0.0, 0.0);
        let mut d = Complex64::new(0.0, 0.0);
        for k in (0..=n).rev() {
            d = d * z + p;
            p = p * z + c[k];
        }
        (p, d)
    };
    let mut roots: Vec<Complex64> = eig
        .iter()
        .map(|&z0| {
            let mut z = z0;
            for _ in 0..8 {
                let (p, d) = eval(z);
                if d.norm() == 0.0 {
                    break;
                }
                let step = p / d;
                z -= step;
                if step.norm() <= 1e-16 * z.norm().max(1.0) {
                    break;
                }
            }
            z
        })
        .collect();
    // Deterministic order: by real part, then imaginary part.
    roots.sort_by(|a, b| {
        a.re.partial_cmp(&b.re).unwrap_or(std::cmp::Ordering::Equal).then(a.im.partial_cmp(&b.im).unwrap_or(std::cmp::Ordering::Equal))
    });
    Some(roots)
}

/// Numeric data of one point (a linear point, one root of a factor, or infinity).
#[derive(Clone, Debug)]
pub struct NumericPoint {
    /// Index of the exact point in [`Analysis::points`].
    pub index: usize,
    /// The location (None at infinity).
    pub value: Option<Complex64>,
    /// Exponents of ψ.
    pub exponents: Vec<Option<Complex64>>,
    /// Exponents of the unknown.
    pub unknown_exponents: Vec<Option<Complex64>>,
}

/// All numeric points of an analysis at the given values.
pub fn evaluate(a: &Analysis, vals: &Values, k: &Field) -> Vec<NumericPoint> {
    let _ = k;
    let mut out = Vec::new();
    for (index, p) in a.points.iter().enumerate() {
        let thetas: Vec<Option<Complex64>> = match &p.place {
            Place::Point { at, .. } => vec![vals.ratfunc(at)],
            Place::Roots(f) => vals.roots(f).map(|v| v.into_iter().map(Some).collect()).unwrap_or_else(|| vec![None]),
            Place::Infinity => vec![None],
        };
        for t in thetas {
            let th = t.unwrap_or(Complex64::new(0.0, 0.0));
            let ev = |e: &Exponent| {
                if matches!(p.place, Place::Infinity) || t.is_some() {
                    vals.exponent(e, th)
                } else {
                    None
                }
            };
            out.push(NumericPoint {
                index,
                value: t,
                exponents: p.exponents.iter().map(ev).collect(),
                unknown_exponents: p.unknown_exponents.iter().map(ev).collect(),
            });
        }
    }
    out
}
