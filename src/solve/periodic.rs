//! Periodic problems: the characteristic values of an equation whose
//! coefficients are periodic in a real variable x (Mathieu, Whittaker–Hill,
//! Ince, Hill's equation with a trigonometric-polynomial potential).
//!
//! After the map ζ = e^(iκx) that made the coefficients rational
//! (`ode::ExpMap`), one period T = 2π/|κ| of x is one turn of ζ about 0, and
//! the equation A y'' + B y' + C y = 0 in ζ has polynomial coefficients with
//! A = a_d ζ^d (singular points at 0 and ∞ only). A solution with
//! y(x + T) = ρ y(x) and ρ = e^(2πiν) is a Laurent series
//! y = Σ_k c_k ζ^(k+ν) (Floquet's theorem, common practice); ν = 0 gives the
//! solutions of period T, ν = ½ those of period 2T (y(x + T) = −y(x)).
//! Inserting the series gives the two-sided recurrence
//! Σ_s T_s(k + d − s + ν) c_(k+d−s) = 0 with
//! T_s(κ) = a_s κ(κ − 1) + b_(s−1) κ + c_(s−2), whose coefficients are
//! polynomials in the spectral parameter λ. Truncated to |k| ≤ K it is a
//! polynomial eigenvalue problem in λ (solved with the global method's
//! pencil solver); a value is kept only when the truncations K and 3K/2
//! agree on it. Where the equation is symmetric under x → −x
//! (k + ν → −(k + ν)), the even and odd solutions are separated exactly by
//! splitting the truncated problem into its two invariant blocks.
//!
//! Second method: the monodromy. The equation is integrated once around
//! ζ = 0 (Taylor steps along a square through ζ = ±1, ±i, homotopic to one
//! period of the real x-axis) from two independent initial values; the
//! characteristic values are the roots in λ of det(M(λ) − ρ), polished from
//! each truncation value by the same two-pass Muller search as direct
//! integration (standard, then refined steps).

use super::global::{pencil_eigenvalues, persisting};
use super::integrate::{continue_along, find_root_by, Coeffs, IntRoot, Params, MAX_ITER};
use super::modefn::Samples;
use super::NumOde;
use crate::error::{Error, ErrorKind, Result};
use nalgebra::DMatrix;
use num_complex::Complex64;

const ZERO: Complex64 = Complex64::new(0.0, 0.0);

/// The smallest truncation |k| ≤ K of the Laurent series.
const MIN_TRUNCATION: usize = 20;

/// The largest coarse truncation (the finer one is half as large again).
const MAX_TRUNCATION: usize = 200;

/// Below this relative imaginary part a value of a real problem is real.
const REAL_SNAP: f64 = 1e-11;

/// The two Floquet multipliers of real periodic problems.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Floquet {
    /// y(x + T) = y(x): ν = 0.
    Periodic,
    /// y(x + T) = −y(x) (period 2T): ν = ½.
    Antiperiodic,
}

impl Floquet {
    /// The Floquet exponent ν of y = Σ c_k ζ^(k+ν).
    pub fn nu(self) -> f64 {
        match self {
            Floquet::Periodic => 0.0,
            Floquet::Antiperiodic => 0.5,
        }
    }
    /// The multiplier ρ = y(x + T)/y(x).
    pub fn multiplier(self) -> f64 {
        match self {
            Floquet::Periodic => 1.0,
            Floquet::Antiperiodic => -1.0,
        }
    }
}

/// Parity of a solution under x → −x, where the equation has that symmetry.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Parity {
    /// y(−x) = y(x) (cosine-like).
    Even,
    /// y(−x) = −y(x) (sine-like).
    Odd,
}

impl Parity {
    /// The word used in reports.
    pub fn tag(self) -> &'static str {
        match self {
            Parity::Even => "even",
            Parity::Odd => "odd",
        }
    }
}

/// One characteristic value.
#[derive(Clone, Debug)]
pub struct PeriodicMode {
    /// Its place in the list: ascending real part (then imaginary part), or by modulus first when the spectral parameter enters as a higher power.
    pub n: u32,
    /// The value from the finer truncation.
    pub value: Complex64,
    /// |value(3K/2) − value(K)|.
    pub change: f64,
    /// The multiplier of its solution.
    pub floquet: Floquet,
    /// The solution's parity, where the equation is symmetric under x → −x.
    pub parity: Option<Parity>,
    /// With a parity: its rank among the values of that parity, in ascending
    /// order, counted from 0 for even and from 1 for odd solutions (for
    /// Mathieu's equation with real q these are the a_n and b_n of DLMF §28.2(vi)).
    pub index: Option<u32>,
    /// The monodromy root polished from `value`.
    pub check: IntRoot,
    /// |check − value| / max(|value|, 10⁻³) (NaN when the check did not converge).
    pub agreement: f64,
}

/// An overtone asked for that has no value, and why.
#[derive(Clone, Debug)]
pub struct Missing {
    /// The place asked for.
    pub n: u32,
    /// Why there is no value.
    pub reason: String,
}

/// What the periodic solver found.
#[derive(Clone, Debug)]
pub struct PeriodicSolution {
    /// The truncations |k| ≤ K of the two solves.
    pub truncation: (usize, usize),
    /// Whether the equation is symmetric under x → −x (parities separated).
    pub symmetric: bool,
    /// The degree of the recurrence's coefficients in the spectral parameter.
    pub degree: usize,
    /// g: the coefficients hold only powers ζ^(g·m), the least period is T/g
    /// (T the period of the map).
    pub step: usize,
    /// The values asked for, ascending.
    pub modes: Vec<PeriodicMode>,
    /// Places asked for beyond the values that persisted.
    pub missing: Vec<Missing>,
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// The coefficients of A, B, C as (ζ power, λ power) tables, and the power d of A = a_d ζ^d.
struct Laurent {
    /// `t[s][e]`: the coefficient of λ^e in T_s, as a polynomial in κ: [c₀, c₁, c₂] (constant, κ, κ²).
    t: Vec<Vec<[Complex64; 3]>>,
    d: usize,
    degree: usize,
    /// The step g of the powers present: the coefficients (in the θ form)
    /// hold only powers ζ^(g·m), so that the least period is T/g.
    step: usize,
    /// Whether every coefficient is real (the values of a real problem are
    /// real or in conjugate pairs).
    real: bool,
}

impl Laurent {
    fn new(ode: &NumOde) -> Result<Laurent> {
        let nonzero = |row: &Vec<Complex64>| row.iter().any(|x| *x != ZERO);
        let powers: Vec<usize> = (0..ode.a.c.len()).filter(|&i| nonzero(&ode.a.c[i])).collect();
        let [d] = powers[..] else {
            return Err(usage(
                "a periodic problem needs coefficients that are trigonometric polynomials: after the map, the coefficient of y'' must be a single power of the new variable (no singular point besides 0 and ∞)",
            ));
        };
        if ode.a.c[d].iter().skip(1).any(|x| *x != ZERO) {
            return Err(usage("the coefficient of y'' depends on the spectral parameter: a periodic problem needs it free of it"));
        }
        let get = |p: &super::NPoly, i: isize, e: usize| -> Complex64 {
            if i < 0 {
                return ZERO;
            }
            p.c.get(i as usize).and_then(|r| r.get(e)).copied().unwrap_or(ZERO)
        };
        let degree = [&ode.a, &ode.b, &ode.c].iter().flat_map(|p| p.c.iter().map(|r| r.len())).max().unwrap_or(1).saturating_sub(1);
        if degree == 0 {
            return Err(usage("the equation does not depend on the spectral parameter"));
        }
        let s_max = (ode.a.c.len().saturating_sub(1)).max(ode.b.c.len()).max(ode.c.c.len() + 1);
        let t = (0..=s_max as isize)
            .map(|s| {
                (0..=degree)
                    .map(|e| {
                        // a_s κ(κ − 1) + b_(s−1) κ + c_(s−2) = a_s κ² + (b_(s−1) − a_s) κ + c_(s−2).
                        let (a, b, c) = (get(&ode.a, s, e), get(&ode.b, s - 1, e), get(&ode.c, s - 2, e));
                        [c, b - a, a]
                    })
                    .collect()
            })
            .collect();
        let real = [&ode.a, &ode.b, &ode.c].iter().all(|p| p.c.iter().flatten().all(|x| x.im == 0.0));
        let t: Vec<Vec<[Complex64; 3]>> = t;
        let step = t.iter().enumerate().filter(|(_, row)| row.iter().flatten().any(|x| *x != ZERO)).map(|(s, _)| s.abs_diff(d)).fold(0, gcd);
        Ok(Laurent { t, d, degree, real, step: step.max(1) })
    }

    /// The order of the report: ascending real part (then imaginary part)
    /// when the parameter enters linearly; by modulus first when it enters
    /// as a higher power (ω² problems: the pairs ±ω together).
    fn order(&self, a: Complex64, b: Complex64) -> std::cmp::Ordering {
        let by_re = a.re.total_cmp(&b.re).then(a.im.total_cmp(&b.im));
        if self.degree == 1 {
            by_re
        } else {
            a.norm().total_cmp(&b.norm()).then(by_re)
        }
    }

    /// A value of a real problem whose real or imaginary part is rounding
    /// (below 10⁻¹¹ of its size; the shift of the pencil is complex) made
    /// exactly zero; values of complex problems unchanged.
    fn snap(&self, w: Complex64) -> Complex64 {
        if !self.real {
            return w;
        }
        let size = w.norm().max(1.0);
        let re = if w.re.abs() <= REAL_SNAP * size { 0.0 } else { w.re };
        let im = if w.im.abs() <= REAL_SNAP * size { 0.0 } else { w.im };
        Complex64::new(re, im)
    }

    /// The matrices M_e of the recurrence truncated to k in `lo..=hi` (rows scaled to unit diagonal growth).
    fn matrices(&self, nu: f64, lo: i64, hi: i64) -> Vec<DMatrix<Complex64>> {
        let size = (hi - lo + 1) as usize;
        let mut m = vec![DMatrix::<Complex64>::zeros(size, size); self.degree + 1];
        for r in 0..size {
            let k = lo + r as i64;
            let scale = 1.0 / (1.0 + (k as f64 + nu).powi(2));
            for col in 0..size {
                let j = lo + col as i64;
                let g = self.step as i64;
                let s = self.d as i64 + g * (k - j);
                if s < 0 || s as usize >= self.t.len() {
                    continue;
                }
                let kappa = (j as f64 + nu) * g as f64;
                for (e, c) in self.t[s as usize].iter().enumerate() {
                    m[e][(r, col)] = (c[0] + c[1] * kappa + c[2] * kappa * kappa) * scale;
                }
            }
        }
        m
    }
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

/// The index range of a truncation: symmetric under k → −k − 2ν.
fn range(k: usize, f: Floquet) -> (i64, i64) {
    match f {
        Floquet::Periodic => (-(k as i64), k as i64),
        Floquet::Antiperiodic => (-(k as i64) - 1, k as i64),
    }
}

/// Whether every matrix commutes with the reflection k → −k − 2ν (rows and
/// columns reversed, as the range is symmetric).
fn symmetric(m: &[DMatrix<Complex64>]) -> bool {
    m.iter().all(|x| {
        let n = x.nrows();
        let top = x.iter().map(|v| v.norm()).fold(0.0, f64::max);
        (0..n).all(|i| (0..n).all(|j| (x[(i, j)] - x[(n - 1 - i, n - 1 - j)]).norm() <= 1e-13 * top))
    })
}

/// The block of each matrix on the even (odd) vectors of the reflection.
fn block(m: &[DMatrix<Complex64>], parity: Parity) -> Vec<DMatrix<Complex64>> {
    let n = m[0].nrows();
    let h = std::f64::consts::FRAC_1_SQRT_2;
    let sign = match parity {
        Parity::Even => 1.0,
        Parity::Odd => -1.0,
    };
    // Basis: (e_i ± e_(n−1−i))/√2 for i < n − 1 − i, and e_mid for the even block.
    let mut basis: Vec<Vec<(usize, f64)>> = (0..n / 2).map(|i| vec![(i, h), (n - 1 - i, sign * h)]).collect();
    if n % 2 == 1 && parity == Parity::Even {
        basis.push(vec![(n / 2, 1.0)]);
    }
    m.iter()
        .map(|x| {
            DMatrix::from_fn(basis.len(), basis.len(), |r, c| {
                let mut acc = ZERO;
                for &(i, u) in &basis[r] {
                    for &(j, v) in &basis[c] {
                        acc += x[(i, j)] * u * v;
                    }
                }
                acc
            })
        })
        .collect()
}

/// A shift for the pencil: off the real axis, where real problems have no value.
const SHIFT: Complex64 = Complex64::new(0.123_456_789, 0.987_654_321);

/// One family's values (a multiplier, a parity or none) at truncation K.
fn family_values(l: &Laurent, k: usize, f: Floquet, parity: Option<Parity>) -> Result<Vec<Complex64>> {
    let (lo, hi) = range(k, f);
    let m = l.matrices(f.nu(), lo, hi);
    let m = match parity {
        Some(p) => block(&m, p),
        None => m,
    };
    pencil_eigenvalues(m, SHIFT).map_err(|why| usage(format!("the truncated problem (|k| ≤ {k}) could not be solved: {why}")))
}

/// The normalised monodromy mismatch det(M − ρ)/(1 + |tr M| + |det M|) (ρ = ±1)
/// at λ over the least period (ζ from 1 to e^(2πi/g), four chords), in the
/// state (y, ζ y') that the rotation ζ → e^(2πi/g) ζ leaves alone, and the
/// Taylor steps it took.
fn monodromy(ode: &NumOde, step: usize, lambda: Complex64, rho: f64, p: &Params) -> std::result::Result<(Complex64, usize), String> {
    let (columns, steps) = monodromy_matrix(ode, step, lambda, p)?;
    let rho = Complex64::new(rho, 0.0);
    let (m00, m10, m01, m11) = (columns[0].0, columns[0].1, columns[1].0, columns[1].1);
    // det(M − ρ) = ρ² − ρ tr M + det M, measured against the size of its
    // terms (a product of entries of M − ρ can vanish at a root when the
    // starting values are a solution of the family, e.g. an even one).
    let (tr, det_m) = (m00 + m11, m00 * m11 - m01 * m10);
    let det = rho * rho - rho * tr + det_m;
    let norm = 1.0 + tr.norm() + det_m.norm();
    if !(norm > 0.0 && norm.is_finite()) {
        return Err(format!("the monodromy matrix is not finite at {lambda}"));
    }
    Ok((det / norm, steps))
}

/// The monodromy over the least period as its two columns: the images of
/// the states (y, ζ y') = (1, 0) and (0, 1) at ζ = 1 after the turn to
/// e^(2πi/g) (four chords), and the Taylor steps it took.
fn monodromy_matrix(ode: &NumOde, step: usize, lambda: Complex64, p: &Params) -> std::result::Result<([(Complex64, Complex64); 2], usize), String> {
    let k = Coeffs::at(ode, lambda)?;
    let roots = [ZERO];
    let turn = 2.0 * std::f64::consts::PI / step as f64;
    let corners: Vec<Complex64> = (0..=4).map(|j| Complex64::from_polar(1.0, turn * j as f64 / 4.0)).collect();
    let end = corners[4];
    let mut steps = 0;
    let mut columns = [(ZERO, ZERO); 2];
    for (start, col) in [(Complex64::new(1.0, 0.0), ZERO), (ZERO, Complex64::new(1.0, 0.0))].into_iter().zip(columns.iter_mut()) {
        let (mut y, mut dy) = start;
        for w in corners.windows(2) {
            (y, dy) = continue_along(&k, &roots, w[0], w[1], y, dy, p, 1.0, &mut steps)?;
        }
        *col = (y, end * dy);
    }
    Ok((columns, steps))
}

/// One characteristic value's solution by both methods, sampled at equally
/// spaced points over one period of the solution (the least period T/g,
/// twice that for y(x + T/g) = −y(x)) in the written variable x of
/// ζ = e^(iκx) (`kappa`; 1 when the equation was given in ζ, x then the
/// angle of ζ), normalised to ∫|y|² dx = 1 over that period (the
/// trapezoidal rule, exact for these trigonometric sums) and turned real and
/// positive at the first sample of appreciable size.
///
/// First: the Laurent series from the null vector of the finer truncation
/// at the value (two steps of inverse iteration), projected on the value's
/// parity. Second: the equation integrated along the unit circle at the
/// monodromy root, from the eigenvector of the monodromy matrix with the
/// value's multiplier (for a parity: y'(0) = 0 or y(0) = 0), sampled at the
/// same points and turned to the first's phase.
pub fn mode_functions(
    ode: &NumOde,
    solution: &PeriodicSolution,
    mode: &PeriodicMode,
    kappa: f64,
    points: usize,
) -> (std::result::Result<Samples, String>, Option<std::result::Result<Samples, String>>) {
    let l = match Laurent::new(ode) {
        Ok(l) => l,
        Err(e) => return (Err(e.message), None),
    };
    let g = l.step as f64;
    let nu = mode.floquet.nu();
    let period = 2.0 * std::f64::consts::PI / (kappa.abs() * g) * if mode.floquet == Floquet::Periodic { 1.0 } else { 2.0 };
    let xs: Vec<f64> = (0..points).map(|i| period * i as f64 / points as f64).collect();
    let weight = period / points as f64;
    let first = laurent_vector(&l, solution.truncation.1, mode).map(|(lo, c)| {
        let v: Vec<Complex64> = xs
            .iter()
            .map(|x| c.iter().enumerate().map(|(i, ci)| ci * Complex64::from_polar(1.0, g * ((lo + i as i64) as f64 + nu) * kappa * x)).sum())
            .collect();
        v
    });
    let first = first.and_then(|v| normalised(&xs, weight, v));
    let second = mode.check.converged.then(|| {
        let v = circle_solution(ode, &l, mode, kappa, &xs)?;
        match &first {
            Ok(one) => super::modefn::normalised_like(one, v),
            Err(_) => normalised(&xs, weight, v),
        }
    });
    (first, second)
}

/// Samples with equal weights, normalised to Σ w |y|² = 1 and turned real and
/// positive at the first sample above 10⁻⁸ of the largest.
fn normalised(xs: &[f64], weight: f64, v: Vec<Complex64>) -> std::result::Result<Samples, String> {
    let norm: f64 = v.iter().map(|y| weight * y.norm_sqr()).sum();
    if !(norm > 0.0 && norm.is_finite()) {
        return Err("the solution has no finite norm over the period".into());
    }
    let big = v.iter().map(|y| y.norm()).fold(0.0, f64::max);
    let first = v.iter().copied().find(|y| y.norm() > 1e-8 * big).unwrap_or(Complex64::new(1.0, 0.0));
    let f = first.conj() / first.norm() / norm.sqrt();
    Ok(xs.iter().zip(v).map(|(x, y)| (*x, y * f, weight)).collect())
}

/// The Laurent coefficients c_k (k from the returned lower index) of the
/// value's solution: the null vector of the truncated matrix at the value
/// by inverse iteration, projected on the value's parity.
fn laurent_vector(l: &Laurent, k: usize, mode: &PeriodicMode) -> std::result::Result<(i64, Vec<Complex64>), String> {
    let (lo, hi) = range(k, mode.floquet);
    let ms = l.matrices(mode.floquet.nu(), lo, hi);
    let n = ms[0].nrows();
    let mut m = DMatrix::<Complex64>::zeros(n, n);
    let mut power = Complex64::new(1.0, 0.0);
    for me in &ms {
        m += me * power;
        power *= mode.value;
    }
    // A tiny shift keeps the factorisation regular when the value is exact.
    let top = m.iter().map(|x| x.norm()).fold(0.0, f64::max).max(f64::MIN_POSITIVE);
    for i in 0..n {
        m[(i, i)] += Complex64::new(1e-14 * top, 0.0);
    }
    let lu = m.lu();
    let mut v = nalgebra::DVector::<Complex64>::from_fn(n, |i, _| Complex64::new(1.0 + 0.1 * i as f64 / n as f64, 0.0));
    for _ in 0..2 {
        v = lu.solve(&v).ok_or("the truncated matrix is singular beyond the shift")?;
        let s = v.norm();
        if !(s > 0.0 && s.is_finite()) {
            return Err("the inverse iteration did not give a finite vector".into());
        }
        v /= Complex64::new(s, 0.0);
    }
    let mut c: Vec<Complex64> = v.iter().copied().collect();
    if let Some(p) = mode.parity {
        // The reflection k → −k − 2ν reverses the symmetric range.
        let sign = if p == Parity::Even { 1.0 } else { -1.0 };
        let rev: Vec<Complex64> = c.iter().rev().copied().collect();
        c = c.iter().zip(rev).map(|(a, b)| (a + b * sign) * 0.5).collect();
        if c.iter().map(|x| x.norm_sqr()).sum::<f64>() < 1e-12 {
            return Err(format!("the null vector has no {} part", p.tag()));
        }
    }
    Ok((lo, c))
}

/// The solution at the monodromy root, integrated along the unit circle
/// through ζ(x) = e^(iκx) at each sample (chords of the circle), from the
/// monodromy matrix's eigenvector with the value's multiplier (for a
/// parity, the state of that parity at x = 0).
fn circle_solution(ode: &NumOde, l: &Laurent, mode: &PeriodicMode, kappa: f64, xs: &[f64]) -> std::result::Result<Vec<Complex64>, String> {
    let p = &super::integrate::STANDARD;
    let lambda = mode.check.omega;
    let one = Complex64::new(1.0, 0.0);
    // The state is (y, ζ y') at ζ = 1: y' in x is iκ ζ y'.
    let start = match mode.parity {
        Some(Parity::Even) => (one, ZERO),
        Some(Parity::Odd) => (ZERO, one),
        None => {
            let (cols, _) = monodromy_matrix(ode, l.step, lambda, p)?;
            let rho = Complex64::new(mode.floquet.multiplier(), 0.0);
            let (m00, m10, m01, m11) = (cols[0].0, cols[0].1, cols[1].0, cols[1].1);
            let (a, b) = ((m01, rho - m00), (rho - m11, m10));
            if a.0.norm() + a.1.norm() >= b.0.norm() + b.1.norm() {
                a
            } else {
                b
            }
        }
    };
    let k = Coeffs::at(ode, lambda)?;
    let roots = [ZERO];
    let mut steps = 0;
    let (mut y, mut dy) = start;
    let mut at = one;
    let mut out = Vec::with_capacity(xs.len());
    for x in xs {
        let z = Complex64::from_polar(1.0, kappa * x);
        (y, dy) = continue_along(&k, &roots, at, z, y, dy, p, 0.25, &mut steps)?;
        at = z;
        out.push(y);
    }
    Ok(out)
}

/// The characteristic values at places `overtones` (inclusive) of the list
/// ascending by real part, each checked by the monodromy, for the equation
/// in ζ (`ode`, numeric except in the spectral parameter) with polynomial
/// coefficients and A a single power of ζ; `tol` is the relative tolerance
/// on the values (the truncations must agree to it, and the check converges to it).
/// Whether the equation can be posed as a periodic problem ([`solve`]): its
/// only singular points are 0 and ∞, with trigonometric-polynomial
/// coefficients on the unit circle (Mathieu's equation in ζ = e^(2ix)).
pub fn poses(ode: &NumOde) -> bool {
    Laurent::new(ode).is_ok()
}

pub fn solve(ode: &NumOde, overtones: (u32, u32), tol: f64) -> Result<PeriodicSolution> {
    let l = Laurent::new(ode)?;
    let tol = tol.max(1e-13);
    let mut k1 = MIN_TRUNCATION + overtones.1 as usize / 2;
    let sym = symmetric(&l.matrices(0.0, -(k1 as i64), k1 as i64)) && symmetric(&l.matrices(0.5, -(k1 as i64) - 1, k1 as i64));
    let parities: Vec<Option<Parity>> = if sym { vec![Some(Parity::Even), Some(Parity::Odd)] } else { vec![None] };
    // Values in order until the first one the two truncations do not agree
    // on: a value left out further down would shift the numbering. The
    // truncation doubles while too few are resolved, up to its bound.
    let (all, k2) = loop {
        let k2 = k1 + k1 / 2;
        let mut fine: Vec<(Complex64, Option<f64>, Floquet, Option<Parity>)> = Vec::new();
        for f in [Floquet::Periodic, Floquet::Antiperiodic] {
            for &p in &parities {
                let coarse = family_values(&l, k1, f, p)?;
                let values = family_values(&l, k2, f, p)?;
                let kept = persisting(&coarse, &values, tol, 1.0);
                fine.extend(values.iter().map(|w| (*w, kept.iter().find(|v| v.omega == *w).map(|v| v.change), f, p)));
            }
        }
        fine.sort_by(|a, b| l.order(a.0, b.0));
        let resolved: Vec<(Complex64, f64, Floquet, Option<Parity>)> =
            fine.iter().map_while(|(w, change, f, p)| change.map(|c| (l.snap(*w), c, *f, *p))).collect();
        if resolved.len() > overtones.1 as usize || 2 * k1 > MAX_TRUNCATION {
            break (resolved, k2);
        }
        k1 *= 2;
    };
    // Rank within each parity: even from 0, odd from 1 (for a parameter
    // entering linearly; a higher power pairs the values and has no rank).
    let mut next = [0u32, 1u32];
    let ranked: Vec<Option<u32>> = all
        .iter()
        .map(|(_, _, _, p)| {
            p.filter(|_| l.degree == 1).map(|p| {
                let slot = &mut next[usize::from(p == Parity::Odd)];
                *slot += 1;
                *slot - 1
            })
        })
        .collect();
    let mut modes = Vec::new();
    let mut missing = Vec::new();
    for n in overtones.0..=overtones.1 {
        let Some(&(value, change, floquet, parity)) = all.get(n as usize) else {
            missing.push(Missing {
                n,
                reason: format!(
                    "the truncations |k| ≤ {k1} and {k2} agree on only the first {} characteristic values (to {tol:.0e}); the truncation is at its bound",
                    all.len()
                ),
            });
            continue;
        };
        let rho = floquet.multiplier();
        let mut check = find_root_by(&|w, p| monodromy(ode, l.step, w, rho, p), value, tol, MAX_ITER);
        check.omega = l.snap(check.omega);
        // A near-degenerate pair (a_n and b_(n+1) at large q, split by
        // e^(−c√q)): the monodromy's entries grow like the inverse of the
        // split, and its root is lost to rounding. Said, not hidden.
        let split = all.iter().map(|(v, ..)| (v - value).norm()).filter(|d| *d > 0.0).fold(f64::INFINITY, f64::min);
        if !check.converged && split <= 1e-5 * value.norm().max(1.0) {
            check.reason = format!(
                "{}; this value and its neighbour {:.1e} away form a near-degenerate pair, which the monodromy over one period cannot resolve in double precision: the truncations' agreement ({change:.1e}) is the only evidence",
                check.reason, split
            );
        }
        let agreement = if check.converged { (check.omega - value).norm() / value.norm().max(super::roots::ABSOLUTE_BELOW) } else { f64::NAN };
        modes.push(PeriodicMode { n, value, change, floquet, parity, index: ranked[n as usize], check, agreement });
    }
    Ok(PeriodicSolution { truncation: (k1, k2), symmetric: sym, degree: l.degree, step: l.step, modes, missing })
}

/// κ of the trigonometric map ζ = e^(iκx) that made the coefficients
/// rational, at parameter values `values` (indexed like the reduction's
/// field; the variable's entry is not read): `Ok(None)` when no map was
/// applied (the equation is in ζ as given), an error when the map's exponent
/// is not imaginary there (the coefficients are not periodic in real x) or
/// the variable was changed again after the map.
pub fn trigonometric_kappa(red: &crate::ode::Reduction, values: &[Complex64]) -> Result<Option<f64>> {
    let Some(map) = &red.map else { return Ok(None) };
    if red.change.is_some() {
        return Err(usage(format!(
            "a periodic problem is posed in the variable of the map {} = e^(c·{}); the equation was carried to another variable after it",
            map.new_var, map.old_var
        )));
    }
    let not_periodic = || {
        usage(format!(
            "the coefficients are not periodic in real {}: the map {} = e^(c·{}) has c not imaginary",
            map.old_var, map.new_var, map.old_var
        ))
    };
    if map.form != crate::ode::MapForm::Exp {
        return Err(not_periodic());
    }
    let c = super::eval_at(&map.c, values).ok_or_else(not_periodic)?;
    if !(c.im.is_finite() && c.im != 0.0) || c.re.abs() > 1e-14 * c.im.abs() {
        return Err(not_periodic());
    }
    Ok(Some(c.im))
}
