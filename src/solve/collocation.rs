//! Bound states by spectral collocation: the normal form ψ'' + Q ψ = 0 with
//! Q = Q₀ + E·Q₁ linear in the spectral parameter E becomes
//! −ψ'' − Q₀ψ = E Q₁ ψ on Chebyshev points of a mapped interval, with ψ = 0
//! at both ends (the normalisable solutions vanish there), and nalgebra's
//! eigenvalues give the spectrum (J. P. Boyd, Chebyshev and Fourier Spectral
//! Methods, 2001; L. N. Trefethen, Spectral Methods in MATLAB, 2000, for the
//! differentiation matrix). Each eigenvalue is accepted when it changes by
//! less than the tolerance between N and 2N points.

use crate::algebra::{Field, GRat, RatFunc};
use crate::error::{Error, ErrorKind, Result};
use nalgebra::DMatrix;
use num_complex::Complex64;

/// The interval of the variable.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Domain {
    /// (a, b), both finite.
    Finite(f64, f64),
    /// (a, ∞).
    HalfLine(f64),
    /// (−∞, ∞).
    Line,
}

/// One bound state.
#[derive(Clone, Debug)]
pub struct BoundState {
    /// Its number, from the lowest.
    pub n: u32,
    /// The eigenvalue E.
    pub value: Complex64,
    /// True when it changed by less than the tolerance on doubling the points.
    pub converged: bool,
    /// |E(2N) − E(N)|.
    pub change: f64,
    /// Collocation points of the final grid.
    pub points: usize,
    /// The eigenvalues just below and just above this one on the final grid
    /// (converged or not): where a refinement by another method would have
    /// landed on a different state.
    pub neighbours: Vec<Complex64>,
    /// Why it did not converge (None when it did).
    pub reason: Option<String>,
}

/// The largest collocation grid: a dense complex eigenvalue problem of this
/// size takes about a second; the samples' levels converge on 96 or 192.
pub const MAX_POINTS: usize = 384;

/// The reason of an eigenvalue that kept changing.
const KEPT_CHANGING: &str =
    "the eigenvalue kept changing when the points were doubled up to the largest grid (or fewer bound states exist below the continuum)";

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// Chebyshev points x_j = cos(πj/N) and the differentiation matrix (Trefethen 2000, `cheb`).
pub(super) fn cheb(n: usize) -> (Vec<f64>, DMatrix<f64>) {
    let x: Vec<f64> = (0..=n).map(|j| (std::f64::consts::PI * j as f64 / n as f64).cos()).collect();
    let c = |j: usize| if j == 0 || j == n { 2.0 } else { 1.0 } * if j.is_multiple_of(2) { 1.0 } else { -1.0 };
    let mut d = DMatrix::<f64>::zeros(n + 1, n + 1);
    for i in 0..=n {
        for j in 0..=n {
            if i != j {
                d[(i, j)] = c(i) / c(j) / (x[i] - x[j]);
            }
        }
    }
    for i in 0..=n {
        let s: f64 = (0..=n).filter(|&j| j != i).map(|j| d[(i, j)]).sum();
        d[(i, i)] = -s;
    }
    (x, d)
}

/// z = g(x) on (−1, 1) with g' and g''.
fn map(domain: Domain, scale: f64, x: f64) -> (f64, f64, f64) {
    match domain {
        Domain::Finite(a, b) => ((a + b) / 2.0 + (b - a) / 2.0 * x, (b - a) / 2.0, 0.0),
        // z = a + L (1 + x)/(1 − x)
        Domain::HalfLine(a) => {
            let d = 1.0 - x;
            (a + scale * (1.0 + x) / d, 2.0 * scale / (d * d), 4.0 * scale / (d * d * d))
        }
        // z = L x / √(1 − x²)
        Domain::Line => {
            let s = 1.0 - x * x;
            (scale * x / s.sqrt(), scale / s.powf(1.5), 3.0 * scale * x / s.powf(2.5))
        }
    }
}

/// Evaluates a rational function of (z, parameters) at z with every other
/// variable at `values` (exact coefficients, double evaluation).
struct Eval {
    num: super::NPoly,
    den: super::NPoly,
}

impl Eval {
    fn new(r: &RatFunc, values: &[GRat], eig: usize) -> Eval {
        Eval { num: super::try_npoly(r.num(), r.scale().to_f64(), values, eig), den: super::try_npoly(&r.den_expanded(), 1.0, values, eig) }
    }
    fn at(&self, z: f64) -> Complex64 {
        let zc = Complex64::new(z, 0.0);
        let w = Complex64::new(0.0, 0.0);
        self.num.eval(zc, w) / self.den.eval(zc, w)
    }
}

/// Why the eigenvalues of one collocation grid are missing.
#[derive(Clone, Debug, PartialEq)]
enum GridStop {
    /// The weight Q₁ vanishes or is not finite at a collocation point.
    Weight,
    /// The QR iteration reached its limit.
    IterationLimit(usize),
}

impl GridStop {
    fn text(&self) -> String {
        match self {
            GridStop::Weight => "the collocation matrix could not be formed (a weight vanishes inside the interval)".into(),
            GridStop::IterationLimit(k) => format!("the eigenvalue iteration did not converge within {k} QR iterations"),
        }
    }
}

/// The Chebyshev points of a grid of n intervals and the collocation matrix
/// (−∂²_z − Q₀)/Q₁ on the interior points (ψ = 0 at x = ±1).
fn matrix(q0: &Eval, q1: &Eval, domain: Domain, scale: f64, n: usize) -> std::result::Result<(Vec<f64>, DMatrix<Complex64>), GridStop> {
    let (x, d) = cheb(n);
    let d2 = &d * &d;
    let m = n - 1; // interior points 1..n−1 (ψ = 0 at x = ±1)
    let mut a = DMatrix::<Complex64>::zeros(m, m);
    for i in 1..n {
        let (z, g1, g2) = map(domain, scale, x[i]);
        let w = q1.at(z);
        if w.norm() == 0.0 || !w.re.is_finite() || !w.im.is_finite() {
            return Err(GridStop::Weight);
        }
        let q = q0.at(z);
        for j in 1..n {
            // ψ_zz = (ψ_xx − (g''/g') ψ_x)/g'²
            let dzz = (d2[(i, j)] - g2 / g1 * d[(i, j)]) / (g1 * g1);
            let mut v = Complex64::new(-dzz, 0.0);
            if i == j {
                v -= q;
            }
            a[(i - 1, j - 1)] = v / w;
        }
    }
    Ok((x, a))
}

fn eigenvalues(q0: &Eval, q1: &Eval, domain: Domain, scale: f64, n: usize) -> std::result::Result<Vec<Complex64>, GridStop> {
    let (_, a) = matrix(q0, q1, domain, scale, n)?;
    let m = a.nrows();
    let mut ev = crate::analysis::numeric::try_eigenvalues(&a).ok_or(GridStop::IterationLimit(2 * crate::analysis::numeric::qr_limit(m)))?;
    ev.retain(|e| e.re.is_finite() && e.im.is_finite());
    ev.sort_by(|p, q| p.re.partial_cmp(&q.re).unwrap_or(std::cmp::Ordering::Equal));
    Ok(ev)
}

/// Whether Q is linear in the spectral parameter (Q = Q₀ + E·Q₁), as this
/// collocation needs; otherwise the eigenvalue problem is polynomial and
/// the global spectral method between the ends takes it.
pub fn linear_in(k: &Field, q: &RatFunc, eig: usize) -> Result<bool> {
    Ok(k.deriv(&k.deriv(q, eig)?, eig)?.is_zero())
}

/// Q₀ and Q₁ of Q = Q₀ + E·Q₁ at the given values, as evaluators.
fn split(k: &Field, q: &RatFunc, eig: usize, values: &[GRat]) -> Result<(Eval, Eval)> {
    let q1 = k.deriv(q, eig)?;
    if !linear_in(k, q, eig)? {
        return Err(usage("Q is not linear in the spectral parameter: collocation here needs Q = Q₀ + E·Q₁"));
    }
    if q1.is_zero() {
        return Err(usage("Q does not depend on the spectral parameter"));
    }
    let mut at0 = values.to_vec();
    at0[eig] = GRat::zero();
    let q0 = k.compose(q, eig, &RatFunc::zero())?;
    Ok((Eval::new(&q0, &at0, eig), Eval::new(&q1, &at0, eig)))
}

/// The length scale of the collocation map on infinite intervals.
pub const SCALE: f64 = 4.0;

/// The inverse of `map`: x ∈ [−1, 1] with g(x) = z.
fn unmap(domain: Domain, scale: f64, z: f64) -> f64 {
    let x = match domain {
        Domain::Finite(a, b) => (2.0 * z - a - b) / (b - a),
        Domain::HalfLine(a) => (z - a - scale) / (z - a + scale),
        Domain::Line => z / (scale * scale + z * z).sqrt(),
    };
    x.clamp(-1.0, 1.0)
}

/// The collocation eigenfunction (the normal form's ψ, unnormalised) of the
/// eigenvalue `e` on the grid of `points` Chebyshev points (the grid the
/// eigenvalue converged on), evaluated at each z of `at`: the null vector of
/// the collocation matrix shifted to `e` by inverse iteration (four solves),
/// ψ = 0 at the ends, interpolated by the barycentric formula in the mapped
/// variable (J.-P. Berrut and L. N. Trefethen, SIAM Rev. 46 (2004) 501,
/// eq. 5.4). An independent construction of the function that shooting
/// builds from the ends (`modefn::bound_mode_function`).
#[allow(clippy::too_many_arguments)]
pub fn try_eigenfunction(
    k: &Field,
    q: &RatFunc,
    eig: usize,
    values: &[GRat],
    domain: Domain,
    scale: f64,
    points: usize,
    e: Complex64,
    at: &[f64],
) -> Result<Vec<Complex64>> {
    if !(4..=MAX_POINTS + 1).contains(&points) {
        return Err(usage(format!("a collocation grid of {points} points is outside 4..={}", MAX_POINTS + 1)));
    }
    let (e0, e1) = split(k, q, eig, values)?;
    let n = points - 1;
    let (x, a) = matrix(&e0, &e1, domain, scale, n).map_err(|g| usage(g.text()))?;
    let m = a.nrows();
    // Shifted a little off the eigenvalue so that the solve stays finite.
    let shift = e + Complex64::new(1e-10 * e.norm().max(1.0), 0.0);
    let lu = (a - DMatrix::<Complex64>::identity(m, m) * shift).lu();
    let mut v = nalgebra::DVector::<Complex64>::from_element(m, Complex64::new(1.0, 0.0));
    for _ in 0..4 {
        let next = lu.solve(&v).ok_or_else(|| usage("the shifted collocation matrix is singular"))?;
        let size = next.iter().map(|c| c.norm()).fold(0.0, f64::max);
        if !(size > 0.0 && size.is_finite()) {
            return Err(usage("inverse iteration for the collocation eigenfunction did not stay finite"));
        }
        v = next / Complex64::new(size, 0.0);
    }
    // Values at every Chebyshev point, zero at the ends.
    let f: Vec<Complex64> = (0..=n).map(|j| if j == 0 || j == n { Complex64::new(0.0, 0.0) } else { v[j - 1] }).collect();
    let weight = |j: usize| if j == 0 || j == n { 0.5 } else { 1.0 } * if j.is_multiple_of(2) { 1.0 } else { -1.0 };
    Ok(at
        .iter()
        .map(|&z| {
            let t = unmap(domain, scale, z);
            if let Some(j) = x.iter().position(|xj| *xj == t) {
                return f[j];
            }
            let (mut num, mut den) = (Complex64::new(0.0, 0.0), 0.0);
            for j in 0..=n {
                let c = weight(j) / (t - x[j]);
                num += f[j] * c;
                den += c;
            }
            num / den
        })
        .collect())
}

/// The lowest `count` eigenvalues E of −ψ'' − Q₀ψ = E Q₁ψ below `threshold`
/// (the continuum edge; +∞ when there is none), with convergence evidence.
/// `q` is the normal form's Q, `eig` the field index of E, `scale` the map's
/// length scale for infinite intervals.
#[allow(clippy::too_many_arguments)]
pub fn try_bound_states(
    k: &Field,
    q: &RatFunc,
    eig: usize,
    values: &[GRat],
    domain: Domain,
    scale: f64,
    count: usize,
    tol: f64,
    threshold: f64,
) -> Result<Vec<BoundState>> {
    let (e0, e1) = split(k, q, eig, values)?;
    let below =
        |v: Vec<Complex64>| -> Vec<Complex64> { v.into_iter().filter(|e| e.re < threshold && e.im.abs() <= 1e-6 * e.re.abs().max(1.0)).collect() };
    let mut n = 48usize;
    let mut prev = below(eigenvalues(&e0, &e1, domain, scale, n).map_err(|e| usage(e.text()))?);
    let mut out: Vec<Option<BoundState>> = vec![None; count];
    let mut stop: Option<String> = None;
    while n * 2 <= MAX_POINTS {
        let m = n * 2;
        let next = match eigenvalues(&e0, &e1, domain, scale, m) {
            Ok(v) => below(v),
            Err(e) => {
                stop = Some(e.text());
                break;
            }
        };
        for (i, slot) in out.iter_mut().enumerate() {
            if slot.as_ref().is_some_and(|s| s.converged) {
                continue;
            }
            if let (Some(a), Some(b)) = (prev.get(i), next.get(i)) {
                let change = (a - b).norm();
                let neighbours = [i.checked_sub(1), Some(i + 1)].into_iter().flatten().filter_map(|j| next.get(j).copied()).collect();
                let finite = b.re.is_finite() && b.im.is_finite() && change.is_finite();
                let converged = finite && change <= tol * b.norm().max(1e-300);
                let reason = (!converged).then(|| KEPT_CHANGING.to_string());
                *slot = Some(BoundState { n: i as u32, value: *b, converged, change, points: m + 1, neighbours, reason });
            }
        }
        if out.iter().all(|s| s.as_ref().is_some_and(|s| s.converged)) {
            break;
        }
        prev = next;
        n = m;
    }
    Ok(out
        .into_iter()
        .enumerate()
        .map(|(i, s)| {
            let mut s = s.unwrap_or(BoundState {
                n: i as u32,
                value: Complex64::new(f64::NAN, f64::NAN),
                converged: false,
                change: f64::NAN,
                points: n + 1,
                neighbours: Vec::new(),
                reason: Some(KEPT_CHANGING.to_string()),
            });
            if let (false, Some(why)) = (s.converged, &stop) {
                s.reason = Some(why.clone());
            }
            s
        })
        .collect())
}

/// Under a named map ζ = e^(c·x) with a singular point at ζ = 1 (x = 0, a
/// centre such as r = 0 of a radial equation written with e^(r/a)): the
/// side x > 0, ζ > 1 for c > 0 and 0 < ζ < 1 for c < 0, up to the next
/// real singular point on that side (`ends`: the sorted real ones).
fn exp_side(red: &crate::ode::Reduction, point: &[GRat], ends: &[f64]) -> Option<Domain> {
    let map = red.map.as_ref().filter(|m| m.form == crate::ode::MapForm::Exp)?;
    let c = map.c.eval(point)?.to_f64();
    if c.1 != 0.0 || c.0 == 0.0 || !ends.iter().any(|z| (z - 1.0).abs() <= 1e-12) {
        return None;
    }
    if c.0 > 0.0 {
        Some(match ends.iter().find(|z| **z > 1.0 + 1e-12) {
            Some(b) => Domain::Finite(1.0, *b),
            None => Domain::HalfLine(1.0),
        })
    } else {
        Some(Domain::Finite(ends.iter().rev().find(|z| **z < 1.0 - 1e-12 && **z >= 0.0).copied().unwrap_or(0.0), 1.0))
    }
}

/// The interval of a bound-state problem, its continuum edge and the ends
/// that are singular for the family only (see below): the
/// interval runs between the two largest real singular points, those of the
/// family of equations included (a half line from the only one, the whole
/// line when there is none); at an infinite
/// end the continuum starts at −lim Q₀/Q₁ for Q = Q₀ + E·Q₁ (infinite on a
/// finite interval, or when the limit is not finite).
pub fn bound_problem(red: &crate::ode::Reduction, freq: usize, point: &[GRat]) -> Result<(Domain, f64, Vec<f64>)> {
    use crate::analysis::{Kind, Place};
    let k = &red.field;
    let an = crate::analysis::analyse(red)?;
    let vals = crate::analysis::numeric::Values::new(point.to_vec());
    let mut ends: Vec<f64> = Vec::new();
    for p in &an.points {
        if p.kind == Kind::Ordinary {
            continue;
        }
        if let Place::Point { at, .. } = &p.place {
            if let Some(z) = vals.ratfunc(at) {
                if z.im.abs() < 1e-12 {
                    ends.push(z.re);
                }
            }
        }
    }
    // A point singular for other parameter values (r = 0 of a radial
    // equation at l = 0) still ends the domain; where the points cannot be
    // located numerically, the analysis's points alone decide.
    let family = super::boundary::ordinary_family_points(red, point, freq).unwrap_or_default();
    ends.extend(family.iter().copied());
    ends.sort_by(|x, y| x.partial_cmp(y).unwrap_or(std::cmp::Ordering::Equal));
    let domain = match (exp_side(red, point, &ends), ends.as_slice()) {
        (Some(d), _) => d,
        (None, []) => Domain::Line,
        (None, [a0]) => Domain::HalfLine(*a0),
        (None, [.., x, y]) => Domain::Finite(*x, *y),
    };
    let threshold = match domain {
        Domain::Finite(..) => f64::INFINITY,
        _ => {
            let q1 = k.deriv(&red.normal.q, freq)?;
            let q0 = k.compose(&red.normal.q, freq, &crate::algebra::RatFunc::zero())?;
            // The limit at a large real point, rounded to 6 decimals so that
            // a rational edge prints as itself.
            let mut p = point.to_vec();
            p[0] = GRat::real(crate::algebra::Rat::int(1_000_000_000.into()));
            match (q0.eval(&p), q1.eval(&p)) {
                (Some(x), Some(y)) => {
                    let t = -x.to_f64().0 / y.to_f64().0;
                    if t.abs() > 1e6 {
                        f64::INFINITY
                    } else {
                        (t * 1e6).round() / 1e6 + 0.0
                    }
                }
                _ => f64::INFINITY,
            }
        }
    };
    // The domain's ends that are such points, for the report to name.
    let family_ends = match domain {
        Domain::Finite(a, b) => vec![a, b],
        Domain::HalfLine(a) => vec![a],
        Domain::Line => Vec::new(),
    }
    .into_iter()
    .filter(|z| family.iter().any(|f| (f - z).abs() <= 1e-9 * z.abs().max(1.0)))
    .collect();
    Ok((domain, threshold, family_ends))
}
