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
    /// A rational function free of the variable, evaluated; `None` at a
    /// pole or where the value is beyond double precision.
    pub fn ratfunc(&self, r: &RatFunc) -> Option<Complex64> {
        let v = r.eval(&self.point)?;
        let (re, im) = v.to_f64();
        (re.is_finite() && im.is_finite()).then_some(Complex64::new(re, im))
    }
    /// A polynomial in θ with coefficients free of the variable, at θ.
    pub fn upoly(&self, u: &UPoly, theta: Complex64) -> Option<Complex64> {
        let mut acc = Complex64::new(0.0, 0.0);
        for c in u.coeffs.iter().rev() {
            acc = acc * theta + self.ratfunc(c)?;
        }
        (acc.re.is_finite() && acc.im.is_finite()).then_some(acc)
    }
    /// The roots of a polynomial in the variable at these parameter values.
    pub fn roots(&self, f: &Poly) -> Option<Vec<Complex64>> {
        let u = UPoly::from_poly(f);
        let c: Vec<Complex64> = u.coeffs.iter().map(|x| self.ratfunc(x)).collect::<Option<_>>()?;
        try_roots(&c).ok()
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
        let v = c + 0.5 * e.sign as f64 * s;
        (v.re.is_finite() && v.im.is_finite()).then_some(v)
    }
}

/// Why a polynomial root search gave no roots.
#[derive(Clone, Debug, PartialEq)]
pub enum RootsStop {
    /// No coefficients, or the leading coefficient is zero.
    ZeroLeading,
    /// A coefficient is not finite.
    NotFinite,
    /// Neither the QR iteration on the companion matrix nor the simultaneous
    /// (Aberth–Ehrlich) iteration converged within its limit.
    IterationLimit {
        /// The QR iterations spent.
        qr: usize,
        /// The simultaneous iterations spent.
        simultaneous: usize,
    },
}

impl std::fmt::Display for RootsStop {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            RootsStop::ZeroLeading => write!(f, "the leading coefficient vanishes"),
            RootsStop::NotFinite => write!(f, "a coefficient is not finite"),
            RootsStop::IterationLimit { qr, simultaneous } => write!(
                f,
                "no convergence within {qr} QR iterations on the companion matrix nor {simultaneous} simultaneous (Aberth–Ehrlich) iterations"
            ),
        }
    }
}

/// The QR iteration budget of an n × n eigenvalue problem: 40 iterations
/// per eigenvalue, more than the 30 a converging Francis iteration needs
/// (common practice, as in LAPACK's xHSEQR).
pub(crate) fn qr_limit(n: usize) -> usize {
    40 * n.max(1)
}

/// The eigenvalues of a square complex matrix by nalgebra's Schur
/// decomposition with an iteration limit (its unlimited form cycles on some
/// matrices, e.g. companion matrices with roots of equal modulus); when the
/// limit is reached the transpose (same eigenvalues, different iteration)
/// is tried once. `None` when both stop at the limit.
pub(crate) fn try_eigenvalues(m: &DMatrix<Complex64>) -> Option<Vec<Complex64>> {
    let limit = qr_limit(m.nrows());
    let eig = |a: DMatrix<Complex64>| a.try_schur(f64::EPSILON, limit).and_then(|s| s.eigenvalues());
    let v = eig(m.clone()).or_else(|| eig(m.transpose()))?;
    Some(v.iter().copied().collect())
}

/// Roots of Σ c_k z^k (low degree first): companion-matrix eigenvalues
/// (QR with an iteration limit), falling back to the Aberth–Ehrlich
/// simultaneous iteration (O. Aberth, Math. Comp. 27 (1973) 339) with its
/// own limit, then polished by Newton's method. The error says why no
/// roots were found.
pub fn try_roots(c: &[Complex64]) -> Result<Vec<Complex64>, RootsStop> {
    let n = c.len().checked_sub(1).ok_or(RootsStop::ZeroLeading)?;
    if c.iter().any(|x| !(x.re.is_finite() && x.im.is_finite())) {
        return Err(RootsStop::NotFinite);
    }
    if n == 0 {
        return Ok(Vec::new());
    }
    let lead = c[n];
    if lead.norm() == 0.0 {
        return Err(RootsStop::ZeroLeading);
    }
    if n == 1 {
        // A line: its root directly (no companion matrix).
        return Ok(vec![-c[0] / lead]);
    }
    let mut m = DMatrix::<Complex64>::zeros(n, n);
    for i in 1..n {
        m[(i, i - 1)] = Complex64::new(1.0, 0.0);
    }
    for i in 0..n {
        m[(i, n - 1)] = -c[i] / lead;
    }
    let eval = |z: Complex64| -> (Complex64, Complex64) {
        let mut p = Complex64::new(0.0, 0.0);
        let mut d = Complex64::new(0.0, 0.0);
        for k in (0..=n).rev() {
            d = d * z + p;
            p = p * z + c[k];
        }
        (p, d)
    };
    let eig = match try_eigenvalues(&m) {
        Some(e) => e,
        None => aberth(c, &eval).ok_or(RootsStop::IterationLimit { qr: 2 * qr_limit(n), simultaneous: ABERTH_LIMIT })?,
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
                if !(step.re.is_finite() && step.im.is_finite()) {
                    break;
                }
                z -= step;
                if step.norm() <= 1e-16 * z.norm().max(1.0) {
                    break;
                }
            }
            z
        })
        .collect();
    if roots.iter().any(|z| !(z.re.is_finite() && z.im.is_finite())) {
        return Err(RootsStop::NotFinite);
    }
    // Deterministic order: by real part, then imaginary part.
    roots.sort_by(|a, b| {
        a.re.partial_cmp(&b.re).unwrap_or(std::cmp::Ordering::Equal).then(a.im.partial_cmp(&b.im).unwrap_or(std::cmp::Ordering::Equal))
    });
    Ok(roots)
}

/// The iteration limit of [`aberth`].
const ABERTH_LIMIT: usize = 500;

/// The Aberth–Ehrlich simultaneous iteration for all roots of Σ c_k z^k,
/// started on a circle of the Fujiwara radius; `None` when the corrections
/// do not fall below 4 ulp of every root (or the residual below
/// the rounding bound) within [`ABERTH_LIMIT`] sweeps.
fn aberth(c: &[Complex64], eval: &dyn Fn(Complex64) -> (Complex64, Complex64)) -> Option<Vec<Complex64>> {
    let n = c.len() - 1;
    let lead = c[n].norm();
    let radius = (0..n).map(|k| 2.0 * (c[k].norm() / lead).powf(1.0 / (n - k) as f64)).fold(0.0, f64::max).max(1e-3);
    if !radius.is_finite() {
        return None;
    }
    let mut z: Vec<Complex64> = (0..n).map(|k| Complex64::from_polar(radius, std::f64::consts::TAU * k as f64 / n as f64 + 0.4)).collect();
    for _ in 0..ABERTH_LIMIT {
        let mut done = true;
        for i in 0..n {
            let (p, d) = eval(z[i]);
            // Converged to rounding: |p(z)| within the backward-error bound
            // of Horner's rule (common practice for polynomial roots).
            let r = z[i].norm();
            let bound = c.iter().rev().fold(0.0, |acc, x| acc * r + x.norm()) * 8.0 * (n as f64 + 1.0) * f64::EPSILON;
            if p.norm() <= bound {
                continue;
            }
            let ratio = p / d;
            let sum: Complex64 = (0..n).filter(|&j| j != i).map(|j| 1.0 / (z[i] - z[j])).sum();
            let w = ratio / (1.0 - ratio * sum);
            if !(w.re.is_finite() && w.im.is_finite()) {
                return None;
            }
            z[i] -= w;
            if w.norm() > 4.0 * f64::EPSILON * z[i].norm().max(f64::MIN_POSITIVE) {
                done = false;
            }
        }
        if done {
            return Some(z);
        }
    }
    None
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
