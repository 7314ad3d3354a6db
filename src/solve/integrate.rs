//! Direct integration of the equation between its two ends: the check of a
//! quasinormal mode that involves no recurrence. At a frequency ω the
//! solution that is the Frobenius series with the chosen (ingoing) exponent
//! at the horizon is summed at a matching point on the real axis near the
//! horizon; the solution given by the chosen (outgoing) asymptotic series at
//! infinity is evaluated far out on a ray into the complex plane, where it is
//! recessive, and continued inwards to the same point. Their normalised
//! Wronskian there vanishes exactly at a mode. Continuation is by local
//! Taylor series generated from the equation itself (analytic continuation,
//! common practice), roots are found with Muller's method (D. E. Muller,
//! Math. Tables Aids Comput. 10 (1956) 208), and every root is found twice,
//! with standard and with refined integration parameters, so that the change
//! between the two is part of the evidence.

use crate::analysis::numeric::try_roots;
use crate::solve::NumOde;
use num_complex::Complex64;
use std::f64::consts::PI;

const ZERO: Complex64 = Complex64::new(0.0, 0.0);
const ONE: Complex64 = Complex64::new(1.0, 0.0);

/// Relative size below which a series term counts as negligible.
const TERM_EPS: f64 = 1e-17;
/// The mismatch carries rounding near 1e-15, so a root cannot be located more
/// finely than this (relative); smaller tolerances are raised to it.
const TOL_FLOOR: f64 = 1e-13;
/// A converged root must make the normalised mismatch (of order one away
/// from modes) at least this small.
const RESIDUAL_MAX: f64 = 1e-6;
/// Muller iterations per search.
pub(super) const MAX_ITER: usize = 100;
/// Taylor steps per evaluation of the mismatch (one integration stops
/// with an error past it).
pub const MAX_STEPS: usize = 20_000;

/// What is known about the two ends, as functions of ω (built by the caller
/// from the exact analysis).
pub struct Ends<'a> {
    /// The horizon z_h: a real zero of A that is a regular singular point,
    /// the largest real singular point of the equation.
    pub horizon: f64,
    /// The chosen (ingoing) exponent ρ_h(ω) of the unknown at the horizon:
    /// y ~ (z − z_h)^ρ_h.
    pub rho_h: &'a dyn Fn(Complex64) -> Complex64,
    /// μ(ω) of the chosen (outgoing) branch at z = ∞ (irregular, rank 1):
    /// y ~ exp(μ z) z^ν (1 + Σ d_k z^(−k)).
    pub mu: &'a dyn Fn(Complex64) -> Complex64,
    /// ν(ω) of the same branch. It is checked against the equation; the
    /// branch of z^ν only fixes a constant factor, which the normalised
    /// mismatch does not see.
    pub nu: &'a dyn Fn(Complex64) -> Complex64,
}

/// How a root that is not a plain simple zero of the mismatch was settled,
/// in words for its reader (a closed set: the renderers match on it).
#[derive(Clone, Debug, PartialEq)]
pub enum Settled {
    /// Taken at a resonance of a horizon's exponents, towards which the
    /// mismatch falls like a power of the distance (`ends`).
    AtResonance(String),
    /// The limit of the modes of nearby problems (`solve::nearby`); the
    /// root's `change` and `residual` are the limit's error estimate.
    Limit(String),
    /// A double root, settled as the zero of the mismatch's derivative
    /// (`ends`).
    DoubleRoot(String),
}

impl Settled {
    /// The words.
    pub fn text(&self) -> &str {
        match self {
            Settled::AtResonance(t) | Settled::Limit(t) | Settled::DoubleRoot(t) => t,
        }
    }
}

/// Evidence of one integration root.
#[derive(Clone, Debug)]
pub struct IntRoot {
    /// The frequency found (the last iterate when not converged).
    pub omega: Complex64,
    /// True when the Muller steps fell below the tolerance with standard and
    /// with refined integration, the two roots agree to the tolerance, and
    /// the normalised mismatch at the root is small.
    pub converged: bool,
    /// |mismatch| at `omega` (refined integration when available; NaN when
    /// it could not be evaluated).
    pub residual: f64,
    /// Muller iterations, both passes together.
    pub iterations: usize,
    /// Taylor steps of the last evaluation of the mismatch.
    pub steps: usize,
    /// |ω(refined) − ω(standard)| (NaN when the second pass did not run).
    pub change: f64,
    /// Why the search stopped, in words.
    pub reason: String,
    /// What a reader of a converged root must know about how it was
    /// settled (a root taken at a resonance of the exponents), if anything.
    pub note: Option<Settled>,
}

/// The mismatch function: the Wronskian y_h y_∞' − y_h' y_∞ between the
/// solution that is the Frobenius series at the horizon with exponent ρ_h and
/// the solution given by the asymptotic series at infinity, at the matching
/// point z_h + d/3 on the real axis (d the distance from the horizon to the
/// nearest other zero of A), divided by |y_h||y_∞'| + |y_h'||y_∞| so that it
/// is free of both normalisations (|mismatch| ≤ 1). Zero at a mode. `None`
/// where it cannot be evaluated: the ends do not fit the equation at this ω
/// (ρ_h not an exponent, μ or ν not those of a branch, a resonant exponent
/// difference), a zero of A lies between the complex path and the real axis,
/// or a series did not converge.
#[cfg(test)]
fn mismatch(ode: &NumOde, ends: &Ends, w: Complex64) -> Option<Complex64> {
    evaluate(ode, ends, w, &STANDARD).ok().map(|(v, _)| v)
}

/// Muller's root of the normalised mismatch from `seed` to relative tolerance `tol`
/// (raised to 1e-13 when smaller, since the mismatch carries rounding near
/// 1e-15). The search runs twice — with the standard integration parameters,
/// then from that root with refined ones (matching point at z_h + 0.4 d,
/// shorter steps, farther end point) — and converges only when both passes do, they agree
/// to `tol`, and the normalised mismatch at the root is below 1e-6.
pub fn find_root(ode: &NumOde, ends: &Ends, seed: Complex64, tol: f64) -> IntRoot {
    find_root_with(ode, ends, seed, tol, MAX_ITER)
}

/// [`find_root`] with an explicit Muller iteration limit per pass.
fn find_root_with(ode: &NumOde, ends: &Ends, seed: Complex64, tol: f64, max_iter: usize) -> IntRoot {
    find_root_by(&|w, p| evaluate(ode, ends, w, p), seed, tol, max_iter)
}

/// One evaluation of a normalised mismatch at a trial value with the given
/// discretisation: the value and the Taylor steps it took, or why there is none.
pub(super) type Evaluator<'f> = &'f dyn Fn(Complex64, &Params) -> Result<(Complex64, usize), String>;

/// The two-pass Muller search of [`find_root`] on any normalised mismatch
/// (the quasinormal one here, the bound-state one of `shoot`).
pub(super) fn find_root_by(eval: Evaluator, seed: Complex64, tol: f64, max_iter: usize) -> IntRoot {
    find_root_spread(eval, seed, super::roots::SPREAD, tol, max_iter)
}

/// [`find_root_by`] with Muller's first points ± `spread`·|seed| about the seed.
pub(super) fn find_root_spread(eval: Evaluator, seed: Complex64, spread: f64, tol: f64, max_iter: usize) -> IntRoot {
    find_root_passes(eval, seed, spread, tol, max_iter, [&STANDARD, &REFINED], "standard and refined integration")
}

/// The search of [`find_root_by`] with Muller's first points ± `spread`·|seed|
/// about the seed (and about the first pass's root in the second pass) and
/// the discretisations of its two passes given (`named` names the pair in
/// the reasons). Where roots lie closer together than `roots::SPREAD` (levels
/// crowding below a continuum edge), a spread below their spacing keeps
/// the quadratic model from straddling a neighbour.
pub(super) fn find_root_passes(
    eval: Evaluator,
    seed: Complex64,
    spread: f64,
    tol: f64,
    max_iter: usize,
    passes: [&Params; 2],
    named: &str,
) -> IntRoot {
    let [first, second] = passes;
    let tol = if tol.is_finite() && tol > TOL_FLOOR { tol } else { TOL_FLOOR };
    let fail = |omega: Complex64, iterations: usize, change: f64, reason: String| {
        let (residual, steps) = match eval(omega, first) {
            Ok((v, s)) => (v.norm(), s),
            Err(_) => (f64::NAN, 0),
        };
        IntRoot { omega, converged: false, residual, iterations, steps, change, reason, note: None }
    };
    let standard = |w: Complex64| eval(w, first).map(|e| e.0);
    let (r1, it1, stop1) = super::roots::muller(&standard, seed, spread, tol, max_iter);
    if let Err(e) = stop1 {
        return fail(r1, it1, f64::NAN, e);
    }
    // The second pass changes every discretisation choice at once; the
    // root's movement bounds the integration error actually committed.
    let refined = |w: Complex64| eval(w, second).map(|e| e.0);
    let (r2, it2, stop2) = super::roots::muller(&refined, r1, spread, tol, max_iter);
    if let Err(e) = stop2 {
        return fail(r2, it1 + it2, f64::NAN, format!("in the second pass of {named}: {e}"));
    }
    let change = (r2 - r1).norm();
    let (residual, steps) = match eval(r2, second) {
        Ok((v, s)) => (v.norm(), s),
        Err(e) => return fail(r2, it1 + it2, change, format!("the mismatch cannot be evaluated at the root: {e}")),
    };
    let rel = change / r2.norm().max(f64::MIN_POSITIVE);
    let agree = change <= tol * r2.norm().max(super::roots::ABSOLUTE_BELOW);
    let small = residual <= RESIDUAL_MAX;
    let reason = if agree && small {
        format!("converged: Muller steps below {tol:.1e} (relative); {named} agree to {rel:.1e}; normalised mismatch {residual:.1e}")
    } else if !agree {
        format!("the root moved by {rel:.1e} (relative) between {named}, more than the tolerance {tol:.1e}")
    } else {
        format!("the normalised mismatch at the root is {residual:.1e}, above {RESIDUAL_MAX:.0e}: not a zero of the mismatch")
    };
    IntRoot { omega: r2, converged: agree && small, residual, iterations: it1 + it2, steps, change, reason, note: None }
}

/// The discretisation choices of one evaluation of the mismatch.
pub(super) struct Params {
    /// Offset of the start and matching point from the horizon, as a
    /// fraction of the distance to the nearest other zero of A (the
    /// Frobenius series' radius).
    pub(super) start_fraction: f64,
    /// Taylor step as a fraction of the distance to the nearest zero of A.
    pub(super) step_fraction: f64,
    /// Taylor step at most this many units of 1/|μ − μ'|, the length over
    /// which the two branches at infinity change by a factor e relative to
    /// each other.
    pub(super) phase_step: f64,
    /// Wanted size of the other branch's contamination, carried from the far
    /// point to the matching point.
    pub(super) far_target: f64,
}

pub(super) const STANDARD: Params = Params { start_fraction: 1.0 / 3.0, step_fraction: 0.5, phase_step: 4.0, far_target: 1e-17 };
pub(super) const REFINED: Params = Params { start_fraction: 0.4, step_fraction: 0.3, phase_step: 2.0, far_target: 1e-20 };
/// [`STANDARD`] and [`REFINED`] with the horizon's Frobenius series summed
/// farther out (0.6 and 0.7 of its radius). Near a horizon the wanted
/// (ingoing) solution of a damped mode exceeds the other one by a factor
/// that grows with the overtone, and the rounding of the value where its
/// series is summed is an admixture of the other solution of that relative
/// size: the mode condition is resolved only as finely as the other
/// solution has grown where the series starts. Starting farther out
/// resolves higher overtones, at the cost of a slower series.
pub(super) const FAR_STANDARD: Params = Params { start_fraction: 0.6, ..STANDARD };
/// The second pass of [`FAR_STANDARD`].
pub(super) const FAR_REFINED: Params = Params { start_fraction: 0.7, ..REFINED };

/// How much the normalised mismatch changes at ω per unit relative change
/// of ω (from a step of 1e-6 |ω|), with the discretisation `p`: a root
/// cannot be located more finely than the rounding of the mismatch (near
/// 1e-15) divided by this.
pub(super) fn mismatch_slope(eval: Evaluator, w: Complex64, p: &Params) -> Option<f64> {
    let h = 1e-6;
    let (a, _) = eval(w, p).ok()?;
    let (b, _) = eval(w * (1.0 + h), p).ok()?;
    let slope = (b - a).norm() / h;
    slope.is_finite().then_some(slope)
}

/// A, B, C at one ω, low degree first, exact trailing zeros removed.
pub(super) struct Coeffs {
    pub(super) a: Vec<Complex64>,
    pub(super) b: Vec<Complex64>,
    pub(super) c: Vec<Complex64>,
}

impl Coeffs {
    pub(super) fn at(ode: &NumOde, w: Complex64) -> Result<Coeffs, String> {
        let trim = |mut v: Vec<Complex64>| {
            while v.last() == Some(&ZERO) {
                v.pop();
            }
            v
        };
        let k = Coeffs { a: trim(ode.a.at_omega(w)), b: trim(ode.b.at_omega(w)), c: trim(ode.c.at_omega(w)) };
        if k.a.is_empty() {
            return Err(format!("the coefficient of y'' vanishes identically at ω = {w}"));
        }
        if k.a.iter().chain(&k.b).chain(&k.c).any(|x| !finite(*x)) {
            return Err(format!("the coefficients are not finite at ω = {w}"));
        }
        Ok(k)
    }
}

impl Coeffs {
    /// A, B and C at the point z.
    pub(super) fn values(&self, z: Complex64) -> [Complex64; 3] {
        [horner(&self.a, z), horner(&self.b, z), horner(&self.c, z)]
    }
}

/// Horner's rule: the polynomial with coefficients `c` (lowest first) at x.
pub(super) fn horner(c: &[Complex64], x: Complex64) -> Complex64 {
    c.iter().rev().fold(ZERO, |acc, a| acc * x + a)
}

fn finite(x: Complex64) -> bool {
    x.re.is_finite() && x.im.is_finite()
}

/// Coefficients of p(z₀ + t) in powers of t by repeated synthetic division
/// (the Taylor shift, common practice).
pub(super) fn shift(p: &[Complex64], z0: Complex64) -> Vec<Complex64> {
    let mut q = p.to_vec();
    let n = q.len();
    for i in 0..n {
        for j in (i..n.saturating_sub(1)).rev() {
            let next = q[j + 1];
            q[j] += z0 * next;
        }
    }
    q
}

/// A bound on the size of each shifted coefficient's terms (the shift of
/// |p| by |z₀|): a computed coefficient far below it is zero up to rounding.
fn shift_bound(p: &[Complex64], z0: f64) -> Vec<f64> {
    let abs: Vec<Complex64> = p.iter().map(|x| Complex64::new(x.norm(), 0.0)).collect();
    shift(&abs, Complex64::new(z0.abs(), 0.0)).iter().map(|x| x.re).collect()
}

/// v[j] with zero outside the stored range.
fn get(v: &[Complex64], j: isize) -> Complex64 {
    if j >= 0 && (j as usize) < v.len() {
        v[j as usize]
    } else {
        ZERO
    }
}

/// The equation's local structure at a regular singular point on the real
/// axis (the horizon of a quasinormal problem, a finite end of a bound-state one).
pub(super) struct Horizon {
    pub(super) z: f64,
    /// Order of the zero of A at the horizon.
    m: usize,
    /// A, B, C in powers of t = z − z_h, with the coefficients that a regular
    /// singular point requires to vanish set to exactly zero.
    a: Vec<Complex64>,
    b: Vec<Complex64>,
    c: Vec<Complex64>,
    /// The other zeros of A.
    pub(super) others: Vec<Complex64>,
    /// Distance from the horizon to the nearest other zero of A (∞ when none).
    pub(super) d: f64,
}

pub(super) fn horizon(k: &Coeffs, zh: f64) -> Result<Horizon, String> {
    if !zh.is_finite() {
        return Err("the horizon is not a finite number".into());
    }
    let z0 = Complex64::new(zh, 0.0);
    let (mut a, mut b, mut c) = (shift(&k.a, z0), shift(&k.b, z0), shift(&k.c, z0));
    let (ea, eb, ec) = (shift_bound(&k.a, zh), shift_bound(&k.b, zh), shift_bound(&k.c, zh));
    // The horizon is exact in the analysis but reaches us in floating point:
    // a coefficient that is a tiny fraction of its own terms is a zero.
    let zero = |x: Complex64, bound: f64| x.norm() <= 1e-9 * bound;
    let m = (0..a.len()).find(|&j| !zero(a[j], ea[j])).ok_or("A vanishes at every point")?;
    // m = 0 is an ordinary point given as an end (a centre where the
    // solutions are analytic, exponents 0 and 1); otherwise a regular
    // singular point: B vanishes to order m − 1 and C to order m − 2 at least.
    for (v, e, order, name) in [(&mut b, &eb, m.saturating_sub(1), "B"), (&mut c, &ec, m.saturating_sub(2), "C")] {
        for j in 0..order.min(v.len()) {
            if !zero(v[j], e[j]) {
                return Err(format!("the horizon z = {zh} is not a regular singular point ({name} does not vanish to order {order})"));
            }
            v[j] = ZERO;
        }
    }
    for x in a.iter_mut().take(m) {
        *x = ZERO;
    }
    // Deflating by t^m leaves the other zeros, free of the splitting a
    // multiple root suffers in a companion matrix.
    let others: Vec<Complex64> =
        try_roots(&a[m..]).map_err(|e| format!("the zeros of A cannot be computed: {e}"))?.into_iter().map(|t| t + z0).collect();
    let d = others.iter().map(|r| (r - z0).norm()).fold(f64::INFINITY, f64::min);
    if d == 0.0 {
        return Err("another zero of A coincides with the horizon".into());
    }
    Ok(Horizon { z: zh, m, a, b, c, others, d })
}

impl Horizon {
    /// The two roots of the indicial polynomial A_m ρ(ρ − 1) + B_{m−1} ρ + C_{m−2}
    /// (principal square root of the discriminant; callers choose by their condition).
    pub(super) fn exponents(&self) -> [Complex64; 2] {
        let m = self.m as isize;
        let (a, b, c) = (get(&self.a, m), get(&self.b, m - 1), get(&self.c, m - 2));
        // a ρ² + (b − a) ρ + c = 0.
        let s = ((b - a) * (b - a) - 4.0 * a * c).sqrt();
        [(a - b + s) / (2.0 * a), (a - b - s) / (2.0 * a)]
    }

    /// The root of the indicial polynomial A_m ρ(ρ − 1) + B_{m−1} ρ + C_{m−2}
    /// with the larger real part: the exponent of the solution that is
    /// smallest at the point (the normalisable one at a bound-state end). Its
    /// series never meets the other root, so it is always unique.
    pub(super) fn larger_exponent(&self) -> Complex64 {
        let [r1, r2] = self.exponents();
        if r1.re >= r2.re {
            r1
        } else {
            r2
        }
    }
}

/// y and y' of t^ρ Σ c_k t^k (c₀ = 1, t = z − z_h) at t = δ ≠ 0, summed until
/// the terms fall below 1e-17 of the sum. For δ < 0 (a point left of z_h)
/// the factor t^ρ is taken as |t|^ρ: the constant e^{iπρ} between the two is
/// a normalisation, which the normalised mismatch does not see.
pub(super) fn frobenius(h: &Horizon, rho: Complex64, delta: f64) -> Result<(Complex64, Complex64), String> {
    // |δ|^ρ = exp(ρ ln|δ|) with a real logarithm needs no branch choice.
    frobenius_at(h, rho, Complex64::new(delta, 0.0), Complex64::new(delta.abs().ln(), 0.0))
}

/// [`frobenius`] at a complex t = δ ≠ 0, with the leading factor taken as
/// exp(ρ ℓ) for the caller's logarithm ℓ of the distance to the end (ln t
/// on the principal branch from the right of the end, ln(−t) from its
/// left: the continuation of the real-axis solution along an arc about
/// the end that turns less than π, within the series' disc).
pub(super) fn frobenius_at(h: &Horizon, rho: Complex64, delta: Complex64, log_dist: Complex64) -> Result<(Complex64, Complex64), String> {
    frobenius_sum(h, rho, delta, log_dist).map(|(y, dy, _)| (y, dy))
}

/// [`frobenius_at`] and the cancellation in its sum: the largest term over
/// the sum (1 or below when nothing cancels; its size is the factor by
/// which rounding is magnified in y).
pub(super) fn frobenius_sum(h: &Horizon, rho: Complex64, delta: Complex64, log_dist: Complex64) -> Result<(Complex64, Complex64, f64), String> {
    let m = h.m as isize;
    // Scaled to τ = t/δ: coefficients become those of Â = A(δτ), B̂ = δ B(δτ),
    // Ĉ = δ² C(δτ), and c_k δ^k stay of order one or below.
    let scale = |v: &[Complex64], extra: i32| -> Vec<Complex64> { v.iter().enumerate().map(|(i, x)| x * delta.powi(i as i32 + extra)).collect() };
    let (sa, sb, sc) = (scale(&h.a, 0), scale(&h.b, 1), scale(&h.c, 2));
    // Substituting t^(ρ+k) into A y'' + B y' + C y collects, at t^(ρ+n+m−2),
    // Σ_k e_k T(n, k) = 0 with T(n, k) built from the shifted coefficients.
    let t = |n: usize, k: usize| {
        let j = (n - k) as isize;
        let s = rho + k as f64;
        get(&sa, j + m) * s * (s - 1.0) + get(&sb, j + m - 1) * s + get(&sc, j + m - 2)
    };
    let size = |n: usize| {
        let s = (rho + n as f64).norm();
        get(&sa, m).norm() * s * (s + 1.0) + get(&sb, m - 1).norm() * s + get(&sc, m - 2).norm()
    };
    // The indicial polynomial must vanish at ρ_h, or the caller's exponent
    // belongs to another function than this equation's unknown.
    let p0 = t(0, 0);
    if p0.norm() > 1e-8 * size(0) {
        return Err(format!("ρ_h = {rho} is not an exponent at the horizon (indicial polynomial {:.1e} relative)", p0.norm() / size(0)));
    }
    let span = (sa.len() as isize - m).max(sb.len() as isize - m + 1).max(sc.len() as isize - m + 2).max(1) as usize;
    let mut e = vec![ONE];
    let (mut s, mut ds) = (ONE, rho);
    let mut quiet = 0;
    // The largest term, for the cancellation.
    let mut big = 1.0f64;
    for n in 1..4000 {
        let diag = t(n, n);
        let mut acc = ZERO;
        for (k, ek) in e.iter().enumerate().skip(n.saturating_sub(span)) {
            acc += ek * t(n, k);
        }
        // A root of the indicial polynomial at ρ_h + n: with a nonzero
        // remainder the solution with ρ_h has a logarithm, and this series
        // does not exist; with none the coefficient is free, and is set to
        // zero (no part along the other exponent's leading power: at an
        // ordinary point, ψ = 1 + O(t²) for ρ_h = 0, so ψ' = 0 there).
        let en = if diag.norm() <= 1e-12 * size(n) {
            let scale_acc = e.iter().enumerate().skip(n.saturating_sub(span)).map(|(k, ek)| (ek * t(n, k)).norm()).fold(0.0, f64::max);
            if acc.norm() > 1e-10 * scale_acc.max(f64::MIN_POSITIVE) {
                return Err(format!(
                    "the exponents at this end differ by the integer {n} and the solution with exponent {rho} there has a logarithm: no Frobenius series starts it, and a condition that picks this exponent is not defined by its leading power alone"
                ));
            }
            ZERO
        } else {
            -acc / diag
        };
        if !finite(en) {
            return Err("the Frobenius coefficients overflow".into());
        }
        e.push(en);
        big = big.max(en.norm());
        s += en;
        ds += en * (rho + n as f64);
        let term = en.norm() * (1.0 + (rho + n as f64).norm());
        // `span` quiet terms in a row: the recursion cannot revive after that many zeros.
        quiet = if term <= TERM_EPS * (s.norm() + ds.norm()) { quiet + 1 } else { 0 };
        if quiet >= span {
            let f = (rho * log_dist).exp();
            return Ok((f * s, f * ds / delta, big / s.norm()));
        }
    }
    Err(format!("the Frobenius series at the horizon did not converge at t = {delta}"))
}

/// The asymptotic series of the chosen branch at infinity.
pub(super) struct Far {
    pub(super) mu: Complex64,
    pub(super) nu: Complex64,
    /// The other branch exp(μ' z) z^ν' (for the contamination estimate, and
    /// the second branch of a scattering decomposition).
    pub(super) mu2: Complex64,
    pub(super) nu2: Complex64,
    /// With y = e^{μz} u the equation reads A u'' + F u' + E u = 0, where
    /// F = 2μA + B and E = μ²A + μB + C (coefficients of z^j).
    e: Vec<Complex64>,
    f: Vec<Complex64>,
    a: Vec<Complex64>,
    /// deg A.
    n: usize,
}

impl Far {
    pub(super) fn new(k: &Coeffs, mu: Complex64, nu: Complex64) -> Result<Far, String> {
        let n = k.a.len() - 1;
        if k.b.len() > n + 1 || k.c.len() > n + 1 {
            return Err("z = ∞ is not of the rank-1 form the asymptotic series needs (deg B or deg C exceeds deg A)".into());
        }
        let g = |v: &[Complex64], j: usize| v.get(j).copied().unwrap_or(ZERO);
        let (an, bn, cn) = (k.a[n], g(&k.b, n), g(&k.c, n));
        // The leading order of e^{μz} z^ν in the equation: a_N μ² + b_N μ + c_N = 0.
        let chr = an * mu * mu + bn * mu + cn;
        if chr.norm() > 1e-9 * (an.norm() * mu.norm_sqr() + bn.norm() * mu.norm() + cn.norm()) {
            return Err(format!("μ = {mu} is not a root of the characteristic equation at infinity"));
        }
        let mu2 = -bn / an - mu;
        if (mu - mu2).norm() <= 1e-9 * (mu.norm() + mu2.norm()) {
            return Err(format!("the two exponential factors at infinity coincide (μ = {mu}): z = ∞ is not of rank 1 at this ω"));
        }
        let build = |mu: Complex64| {
            let mut e: Vec<Complex64> = (0..=n).map(|j| mu * mu * g(&k.a, j) + mu * g(&k.b, j) + g(&k.c, j)).collect();
            // Zero by the characteristic equation (checked above); exact zero keeps the recursion triangular.
            e[n] = ZERO;
            let f: Vec<Complex64> = (0..=n).map(|j| 2.0 * mu * g(&k.a, j) + g(&k.b, j)).collect();
            (e, f)
        };
        let (e, f) = build(mu);
        // The next order fixes ν: E_{N−1} + F_N ν = 0.
        let e1 = get(&e, n as isize - 1);
        if (e1 + f[n] * nu).norm() > 1e-8 * (e1.norm() + f[n].norm() * (1.0 + nu.norm())) {
            return Err(format!("ν = {nu} is not the power of z of the branch with μ = {mu} (expected {})", -e1 / f[n]));
        }
        let (e2, f2) = build(mu2);
        let nu2 = -get(&e2, n as isize - 1) / f2[n];
        Ok(Far { mu, nu, mu2, nu2, e, f, a: k.a.clone(), n })
    }

    /// y / (e^{μz} z^ν) and y' / (e^{μz} z^ν) at z by optimal truncation
    /// (stop at the smallest term), with the relative truncation error. The
    /// common factor e^{μz} z^ν is left out: the normalised mismatch does not
    /// see it, and leaving it out keeps far values free of overflow.
    fn eval(&self, z: Complex64) -> (Complex64, Complex64, f64) {
        let n = self.n as isize;
        let zi = 1.0 / z;
        // d_n (E_{N−1} + F_N (ν − n)) = −Σ_{k<n} d_k T(n, k), j = n − k, with
        // T = E_{N−1−j} + F_{N−j} (ν − k) + A_{N+1−j} (ν − k)(ν − k − 1);
        // terms t_k = d_k z^(−k) are built directly so nothing overflows.
        let span = self.n + 1;
        let mut zp = vec![ONE];
        for j in 1..=span {
            let prev = zp[j - 1];
            zp.push(prev * zi);
        }
        let mut terms = vec![ONE];
        // |t_k|, each taken once (the window below reads them again and again).
        let mut sizes = vec![1.0f64];
        let mut sum = ONE;
        let mut best = 1.0f64;
        for m in 1..600usize {
            let nu_m = self.nu - m as f64;
            let den = get(&self.e, n - 1) + get(&self.f, n) * nu_m;
            if den.norm() == 0.0 {
                break;
            }
            let mut acc = ZERO;
            for (k, tk) in terms.iter().enumerate().skip(m.saturating_sub(span)) {
                let j = (m - k) as isize;
                let s = self.nu - k as f64;
                let tt = get(&self.e, n - 1 - j) + get(&self.f, n - j) * s + get(&self.a, n + 1 - j) * s * (s - 1.0);
                acc += tk * zp[m - k] * tt;
            }
            let tm = -acc / den;
            if !finite(tm) {
                break;
            }
            terms.push(tm);
            let size = tm.norm();
            sizes.push(size);
            sum += tm;
            // The smallest term is judged by windows of `span` terms, as the
            // cut below is: a term that nearly vanishes by accident at this ω
            // (a factor of the recursion passing through zero) is not the
            // turn of the series, and stopping there would leave the
            // truncation error of the terms after it unseen.
            let window = sizes[sizes.len().saturating_sub(span)..].iter().copied().fold(0.0, f64::max);
            best = best.min(window);
            // Converged outright (a whole window negligible: one zero term
            // of a recursion of several terms is not the end of the series),
            // or clearly past the smallest term.
            if window <= TERM_EPS * sum.norm() || size > 1e3 * best {
                break;
            }
        }
        // Truncate before the window of terms whose largest member is smallest:
        // one accidentally tiny term must not pass for the optimal cut.
        let (cut, err) = optimal_cut(&terms, 1..terms.len(), span);
        let (mut y, mut dy) = (ZERO, ZERO);
        for (k, tk) in terms.iter().enumerate().take(cut) {
            y += tk;
            dy += tk * (self.mu + (self.nu - k as f64) * zi);
        }
        let rel = if y.norm() > 0.0 { err / y.norm() } else { f64::INFINITY };
        (y, dy, rel)
    }
}

/// One Taylor step of A y'' + B y' + C y = 0 from z₀ to z₀ + h; `None` when
/// the series does not settle within the term limit (the step is too long).
fn taylor_step(k: &Coeffs, z0: Complex64, h: Complex64, y: Complex64, dy: Complex64) -> Option<(Complex64, Complex64)> {
    // In τ with z = z₀ + hτ: Â(τ) Y'' + h B̂ Y' + h² Ĉ Y = 0 with u_k = y_k h^k.
    let scale = |v: &[Complex64], extra: i32| -> Vec<Complex64> {
        let s = shift(v, z0);
        let mut p = h.powi(extra);
        s.iter()
            .map(|x| {
                let out = x * p;
                p *= h;
                out
            })
            .collect()
    };
    let (sa, sb, sc) = (scale(&k.a, 0), scale(&k.b, 1), scale(&k.c, 2));
    let a0 = *sa.first()?;
    if a0.norm() == 0.0 {
        return None;
    }
    let span = sa.len().max(sb.len() + 1).max(sc.len() + 2);
    // Sizes by the 1-norm |re| + |im| (within √2 of the modulus; no square
    // root in the innermost loop), and one complex division per step.
    let size = |x: Complex64| x.re.abs() + x.im.abs();
    let minus_inv_a0 = -1.0 / a0;
    let mut u = Vec::with_capacity(64);
    u.extend([y, h * dy]);
    let (mut s, mut ds) = (u[0] + u[1], u[1]);
    let mut big = size(u[0]).max(2.0 * size(u[1]));
    let mut quiet = 0;
    for n in 0..250usize {
        // Coefficient of τ^n: Σ_i Â_i (n−i+2)(n−i+1) u_{n−i+2} + B̂_i (n−i+1) u_{n−i+1} + Ĉ_i u_{n−i} = 0.
        let mut acc = ZERO;
        for (i, ai) in sa.iter().enumerate().skip(1).take(n + 1) {
            let j = n + 2 - i;
            acc += ai * ((j * (j - 1)) as f64) * u[j];
        }
        for (i, bi) in sb.iter().enumerate().take(n + 1) {
            let j = n + 1 - i;
            acc += bi * (j as f64) * u[j];
        }
        for (i, ci) in sc.iter().enumerate().take(n + 1) {
            acc += ci * u[n - i];
        }
        let next = acc * minus_inv_a0 / (((n + 2) * (n + 1)) as f64);
        if !finite(next) {
            return None;
        }
        u.push(next);
        let kf = (n + 2) as f64;
        s += next;
        ds += next * kf;
        let term = size(next) * (kf + 1.0);
        big = big.max(term);
        quiet = if term <= TERM_EPS * big { quiet + 1 } else { 0 };
        if quiet >= span {
            return Some((s, ds / h));
        }
    }
    None
}

/// The largest |λ| of the characteristic roots A λ² + B λ + C = 0 at z: the
/// rate at which solutions change there (for a fast wave, its wave number).
fn local_rate(k: &Coeffs, z: Complex64) -> f64 {
    let [a, b, c] = k.values(z);
    let an = a.norm();
    if an == 0.0 {
        return 0.0;
    }
    let r = ((b.norm() + (b * b - 4.0 * a * c).sqrt().norm()) / (2.0 * an)).max(0.0);
    if r.is_finite() {
        r
    } else {
        0.0
    }
}

/// Continues (y, y') along the straight segment `from` → `to` by Taylor
/// steps, each a fraction of the distance to the nearest zero of A (so well
/// inside the series' disc of convergence) and at most `hcap` long.
#[allow(clippy::too_many_arguments)]
pub(super) fn continue_along(
    k: &Coeffs,
    roots: &[Complex64],
    from: Complex64,
    to: Complex64,
    y: Complex64,
    dy: Complex64,
    p: &Params,
    hcap: f64,
    steps: &mut usize,
) -> Result<(Complex64, Complex64), String> {
    let mut peak = 0.0;
    continue_along_peak(k, roots, from, to, y, dy, p, hcap, steps, &mut peak)
}

/// [`continue_along`], raising `peak` to the largest size √(|y|² + |y'|²)
/// met at the start of a step or at the end.
#[allow(clippy::too_many_arguments)]
pub(super) fn continue_along_peak(
    k: &Coeffs,
    roots: &[Complex64],
    from: Complex64,
    to: Complex64,
    mut y: Complex64,
    mut dy: Complex64,
    p: &Params,
    hcap: f64,
    steps: &mut usize,
    peak: &mut f64,
) -> Result<(Complex64, Complex64), String> {
    let size = |y: Complex64, dy: Complex64| (y.norm_sqr() + dy.norm_sqr()).sqrt();
    *peak = peak.max(size(y, dy));
    let total = (to - from).norm();
    if total == 0.0 {
        return Ok((y, dy));
    }
    let dir = (to - from) / total;
    let mut done = 0.0;
    while done < total {
        let z = from + dir * done;
        let dist = roots.iter().map(|r| (z - r).norm()).fold(f64::INFINITY, f64::min);
        if dist == 0.0 {
            return Err(format!("the path meets a zero of A at {z}"));
        }
        // Within a step the solutions change by at most e^(phase_step): a
        // longer step sums a Taylor series whose terms cancel (a decaying
        // or oscillating solution from terms as large as e^(|λ| h)), which
        // loses those digits to rounding.
        let rate = local_rate(k, z);
        let len_rate = if rate > 0.0 { p.phase_step / rate } else { f64::INFINITY };
        let mut len = (p.step_fraction * dist).min(hcap).min(len_rate);
        let mut halvings = 0;
        loop {
            // A remainder of a few ulps is not a step of its own.
            let last = len >= (total - done) * (1.0 - 1e-9);
            // The last step lands on `to` exactly, not on an accumulated sum.
            let h = if last { to - z } else { dir * len };
            if h.norm() == 0.0 {
                done = total;
                break;
            }
            if let Some((y1, dy1)) = taylor_step(k, z, h, y, dy) {
                y = y1;
                dy = dy1;
                done = if last { total } else { done + len };
                break;
            }
            halvings += 1;
            len = len.min(total - done) / 2.0;
            if halvings > 30 {
                return Err(format!("the Taylor series does not converge near z = {z}"));
            }
        }
        *steps += 1;
        if *steps > MAX_STEPS {
            return Err(format!("more than {MAX_STEPS} Taylor steps"));
        }
        if !finite(y) || !finite(dy) {
            return Err(format!("the solution overflowed near z = {z}"));
        }
        *peak = peak.max(size(y, dy));
    }
    Ok((y, dy))
}

/// The normalised Wronskian at ω with the given discretisation, and the
/// number of Taylor steps it took.
fn evaluate(ode: &NumOde, ends: &Ends, w: Complex64, p: &Params) -> Result<(Complex64, usize), String> {
    if !finite(w) {
        return Err("ω is not finite".into());
    }
    let k = Coeffs::at(ode, w)?;
    let (rho, mu, nu) = ((ends.rho_h)(w), (ends.mu)(w), (ends.nu)(w));
    if !finite(rho) || !finite(mu) || !finite(nu) {
        return Err(format!("the exponents are not finite at ω = {w}"));
    }
    let hz = horizon(&k, ends.horizon)?;
    let far = Far::new(&k, mu, nu)?;
    let zh = hz.z;
    // The length scale of the finite singular structure.
    let d = if hz.d.is_finite() { hz.d } else { 1.0 + zh.abs() };
    // The matching point is the Frobenius start point itself: the horizon
    // solution there is a convergent series, with no integration. Its place
    // decides the conditioning: beyond the potential barrier every solution
    // aligns with the outgoing branch as Im ω < 0 grows, nearer the horizon
    // with the ingoing one, and the mismatch of a non-mode shrinks like
    // e^(−2|Im ω| Δr*) on either side. A third of the way to the nearest
    // other zero of A sits in the balanced region for the Schwarzschild
    // family (r = 8M/3, just inside the barrier at 3M): the mismatch beside
    // the l = 2 overtones n = 0…7 stays between 0.1 and 0.4, where a match at
    // 6M falls to 1e-11 by n = 7.
    let z_m = Complex64::new(zh + p.start_fraction * d, 0.0);
    let ray = recessive_ray(&far, &hz.others, z_m)?;
    let dmu = far.mu - far.mu2;
    let mut roots = hz.others.clone();
    roots.push(Complex64::new(zh, 0.0));
    let mut steps = 0;

    let (yh, dyh) = frobenius(&hz, rho, z_m.re - zh)?;

    let (yi, dyi) = from_infinity(&k, &Asymptote::Series(&far), &roots, z_m, ray, (4.0 / dmu.norm()).max(d), z_m, p, &mut steps)?;

    // Matching near the horizon rather than at z_f: at z_f the horizon
    // solution is dominated by the other branch unless the mode condition
    // holds to roundoff, so a normalisation there would hide the zero.
    Ok((normalised_wronskian((yh, dyh), (yi, dyi), Norm::Products)?, steps))
}

/// The ray from z_m along which the branch of `far` is most recessive:
/// Re((μ − μ') e^{iθ}) = −|μ − μ'|. Relative recessiveness, not the decay
/// of e^{μz} alone, is what singles the branch out. For a QNM (Im ω < 0)
/// the outgoing branch grows along the real axis, so θ leaves it; |θ| is
/// kept below 0.85π so the ray never turns back onto the singular points.
/// The branch is defined by its behaviour on the real axis; turning the
/// path to the ray is harmless only if none of the zeros `others` of A lies
/// in the wedge between them (which includes the real axis beyond z_m).
pub(super) fn recessive_ray(far: &Far, others: &[Complex64], z_m: Complex64) -> Result<Complex64, String> {
    let dmu = far.mu - far.mu2;
    let mut theta = PI - dmu.arg();
    if theta > PI {
        theta -= 2.0 * PI;
    }
    let theta = theta.clamp(-0.85 * PI, 0.85 * PI);
    for r in others {
        let v = r - z_m;
        let ang = v.arg();
        let in_wedge = if theta >= 0.0 { ang >= -1e-9 && ang <= theta + 1e-9 } else { ang <= 1e-9 && ang >= theta - 1e-9 };
        if v.norm() == 0.0 || in_wedge {
            return Err(format!("the zero {r} of A lies between the integration path and the real axis beyond the horizon"));
        }
    }
    Ok(Complex64::from_polar(1.0, theta))
}

/// How a Wronskian is made free of the solutions' normalisations.
#[derive(Clone, Copy)]
pub(super) enum Norm {
    /// By |y₁||y₂'| + |y₁'||y₂|: what the quasinormal search uses.
    Products,
    /// By |(y₁, y₁')| |(y₂, y₂')|: the sine of the angle between the two
    /// vectors. For real solutions the product norm is exactly ±1 wherever
    /// the two logarithmic derivatives differ in sign, a plateau on which
    /// Muller cannot move; the sine varies smoothly with the trial value.
    Vectors,
}

/// The Wronskian y₁ y₂' − y₁' y₂ divided by the chosen norm: free of both
/// normalisations, at most 1 in size, zero when the two solutions are
/// proportional.
pub(super) fn normalised_wronskian(one: (Complex64, Complex64), two: (Complex64, Complex64), by: Norm) -> Result<Complex64, String> {
    let ((y1, d1), (y2, d2)) = (one, two);
    let wr = y1 * d2 - d1 * y2;
    let norm = match by {
        Norm::Products => y1.norm() * d2.norm() + d1.norm() * y2.norm(),
        Norm::Vectors => (y1.norm_sqr() + d1.norm_sqr()).sqrt() * (y2.norm_sqr() + d2.norm_sqr()).sqrt(),
    };
    if !(norm > 0.0 && norm.is_finite() && finite(wr)) {
        return Err("the Wronskian cannot be normalised at the matching point".into());
    }
    Ok(wr / norm)
}

/// The start data of the recessive branch far out: the full asymptotic
/// series at a rank-1 point, or the Riccati expansion's logarithmic
/// derivative at a point of higher rank.
pub(super) enum Asymptote<'a> {
    /// The series of [`Far`].
    Series(&'a Far),
    /// The logarithmic derivative of [`Leading`].
    Leading(&'a Leading),
}

impl Asymptote<'_> {
    /// y, y' (up to a common factor) at z and the relative size of the
    /// other branch they carry.
    fn eval(&self, z: Complex64) -> (Complex64, Complex64, f64) {
        match self {
            Asymptote::Series(f) => f.eval(z),
            Asymptote::Leading(l) => l.eval(z),
        }
    }

    /// |u − u'| at z: the rate at which the two branches part. A Taylor
    /// step is at most `phase_step` units of its inverse long.
    fn gap(&self, z: Complex64) -> f64 {
        match self {
            Asymptote::Series(f) => (f.mu - f.mu2).norm(),
            Asymptote::Leading(l) => l.gap(z),
        }
    }

    /// ln of the factor by which an admixture of the other branch at z_f
    /// shrinks, relative to the chosen one, on the way in to z_r.
    fn damping(&self, zf: Complex64, zr: Complex64) -> f64 {
        // ln(z_f/z_r) on the principal branch is the change of ln z along the
        // straight path, which subtends less than π at the origin.
        match self {
            Asymptote::Series(f) => ((f.mu - f.mu2) * (zf - zr)).re + ((f.nu - f.nu2) * (zf / zr).ln()).re,
            Asymptote::Leading(l) => {
                let r = l.rank;
                let gap = |z: Complex64| -> Complex64 { (0..r).map(|j| (l.u[j] - l.other[j]) * z.powi((r - j) as i32) / (r - j) as f64).sum() };
                (gap(zf) - gap(zr) + (l.u[r] - l.other[r]) * (zf / zr).ln()).re
            }
        }
    }
}

/// The recessive solution at z_m, started on the ray z_m + r·`ray` from the
/// asymptotic data and continued inwards. The far point is where the start
/// data's own error, carried inwards to `z_ref`, has been damped below the
/// target (the search starts at r = `r0`); Taylor steps are at most
/// `phase_step` units of 1/|u − u'| at z_f long. Integrating inwards is the stable
/// direction for a recessive solution: any admixture of the other branch at
/// z_f shrinks by |(y_out/y_in)(z_f) / (y_out/y_in)(z_ref)|.
#[allow(clippy::too_many_arguments)]
pub(super) fn from_infinity(
    k: &Coeffs,
    asym: &Asymptote,
    roots: &[Complex64],
    z_m: Complex64,
    ray: Complex64,
    r0: f64,
    z_ref: Complex64,
    p: &Params,
    steps: &mut usize,
) -> Result<(Complex64, Complex64), String> {
    from_infinity_started(k, asym, roots, z_m, ray, r0, z_ref, p, steps).map(|(y, dy, _)| (y, dy))
}

/// [`from_infinity`] with the far point z_f where it started: the solution
/// there is the asymptotic series divided by its leading factor (for a
/// rank-1 point, e^(μ z_f) z_f^ν), so that factor puts back the
/// normalisation at infinity itself, the same at every ω.
#[allow(clippy::too_many_arguments)]
pub(super) fn from_infinity_started(
    k: &Coeffs,
    asym: &Asymptote,
    roots: &[Complex64],
    z_m: Complex64,
    ray: Complex64,
    r0: f64,
    z_ref: Complex64,
    p: &Params,
    steps: &mut usize,
) -> Result<(Complex64, Complex64, Complex64), String> {
    let mut r = r0;
    for _ in 0..120 {
        let zf = z_m + ray * r;
        let (y, dy, err) = asym.eval(zf);
        if err <= 1e-6 && err.ln() + asym.damping(zf, z_ref) <= p.far_target.ln() {
            let (y, dy) = continue_along(k, roots, zf, z_m, y, dy, p, p.phase_step / asym.gap(zf), steps)?;
            return Ok((y, dy, zf));
        }
        r *= 1.25;
    }
    Err("the asymptotic series at infinity does not reach the wanted accuracy on the ray".into())
}

/// Terms kept of the Riccati expansion at infinity.
const LEADING_TERMS: usize = 24;

/// The Riccati expansion at z = ∞ of a normal form A ψ'' + C ψ = 0 (no ψ'
/// term) whose point at infinity has integer Poincaré rank R ≥ 1:
/// u = ψ'/ψ = Σ_j u_j z^(R−1−j), solved order by order from
/// u' + u² + C/A = 0 (common practice), for the branch that decays along the
/// real direction asked for and for the other one. ψ ~ exp(Σ_{j<R} u_j
/// z^(R−j)/(R−j)) z^(u_R), so at rank 1 u₀ = μ and u₁ = ν of [`Far`].
pub(super) struct Leading {
    /// The Poincaré rank R.
    pub(super) rank: usize,
    u: Vec<Complex64>,
    other: Vec<Complex64>,
}

impl Leading {
    /// The decaying branch along `dir` (+1 towards +∞, −1 towards −∞).
    pub(super) fn new(k: &Coeffs, dir: f64) -> Result<Leading, String> {
        if !k.b.is_empty() {
            return Err("the Riccati expansion at infinity is written for the normal form (no y' term)".into());
        }
        let n = k.a.len() - 1;
        let m = k.c.len().checked_sub(1).ok_or("the equation has no y term: z = ∞ is not irregular")?;
        if m < n || (m - n) % 2 == 1 {
            // Twice the rank is deg C − deg A + 2 (negative: a regular or ordinary point).
            let twice = m as i64 - n as i64 + 2;
            let rank = if twice % 2 == 0 { (twice / 2).to_string() } else { format!("{twice}/2") };
            return Err(format!("z = ∞ has Poincaré rank {rank}; the asymptotic start needs an integer rank ≥ 1"));
        }
        let rank = (m - n) / 2 + 1;
        // C/A = Σ_j q_j z^(2R−2−j), by division from the leading terms down.
        let mut q: Vec<Complex64> = Vec::with_capacity(LEADING_TERMS);
        for j in 0..LEADING_TERMS {
            let mut v = if j <= m { k.c[m - j] } else { ZERO };
            for i in 1..=j.min(n) {
                v -= k.a[n - i] * q[j - i];
            }
            q.push(v / k.a[n]);
        }
        let u0 = (-q[0]).sqrt();
        // The exponent's leading term u₀ z^R / R decays along dir when Re(u₀ dir^R) < 0.
        let lead = if rank % 2 == 1 { u0 * dir } else { u0 };
        if lead.re.abs() <= 1e-9 * u0.norm() {
            return Err("neither branch at infinity decays along the real axis at this value (the continuum)".into());
        }
        let u0 = if lead.re < 0.0 { u0 } else { -u0 };
        // The coefficient of z^(2R−2−j): Σ_{i+l=j} u_i u_l + (2R−1−j) u_{j−R} + q_j = 0.
        let solve = |u0: Complex64| {
            let mut u = vec![u0];
            for j in 1..LEADING_TERMS {
                let mut acc = q[j];
                if j >= rank {
                    acc += u[j - rank] * (2.0 * rank as f64 - 1.0 - j as f64);
                }
                for i in 1..j {
                    acc += u[i] * u[j - i];
                }
                u.push(-acc / (2.0 * u0));
            }
            u
        };
        Ok(Leading { rank, u: solve(u0), other: solve(-u0) })
    }

    /// μ and ν of the chosen branch (rank 1: ψ ~ exp(μz) z^ν).
    pub(super) fn mu_nu(&self) -> (Complex64, Complex64) {
        (self.u[0], self.u[1])
    }

    /// |u − u'| at z from the leading terms: the rate at which the two branches part.
    pub(super) fn gap(&self, z: Complex64) -> f64 {
        ((self.u[0] - self.other[0]) * z.powi(self.rank as i32 - 1)).norm()
    }

    /// (1, u(z)) truncated before its smallest term beyond z^(−1), and that
    /// term's size over |u − u'|: the admixture of the other branch the start
    /// data carry.
    fn eval(&self, z: Complex64) -> (Complex64, Complex64, f64) {
        let r = self.rank as i32;
        let terms: Vec<Complex64> = self.u.iter().enumerate().map(|(j, c)| c * z.powi(r - 1 - j as i32)).collect();
        // Terms of one parity may vanish (an even Q), so the window spans R
        // terms, and only windows of terms actually computed count.
        let (cut, err) = optimal_cut(&terms, (self.rank + 1)..(terms.len() + 1).saturating_sub(self.rank), self.rank);
        let sum: Complex64 = terms[..cut].iter().sum();
        (ONE, sum, err / self.gap(z))
    }
}

/// Where to truncate an asymptotic series of `terms` (at an index in
/// `range`): before the window of `w` terms whose largest member is smallest,
/// so that one accidentally tiny term does not pass for the optimal cut;
/// with that largest size as the error.
fn optimal_cut(terms: &[Complex64], range: std::ops::Range<usize>, w: usize) -> (usize, f64) {
    let w = w.clamp(1, terms.len().max(1));
    let mut cut = terms.len() - 1;
    let mut err = f64::INFINITY;
    let sizes: Vec<f64> = terms.iter().map(|x| x.norm()).collect();
    for i in range {
        let hi = sizes[i..(i + w).min(sizes.len())].iter().copied().fold(0.0, f64::max);
        if hi < err {
            err = hi;
            cut = i;
        }
    }
    (cut, err)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::algebra::{GRat, Rat};
    use crate::ode::{reduce, Input, ReduceOptions};

    /// The Regge–Wheeler equation (spin s, multipole l) with M = 1, from the
    /// sample text the continued-fraction tests use.
    fn rw(s: i64, l: i64) -> NumOde {
        let src = "var r\nparam M, omega, l, s\nlet f = 1 - 2*M/r\node f*(f*y')' + (omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y = 0\n";
        let red = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
        let g = |x: i64| GRat::real(Rat::int(x.into()));
        crate::solve::try_num_ode(&red.field, &red.p, &red.q, &[g(0), g(1), g(0), g(l), g(s)], 2).unwrap()
    }

    // Schwarzschild ends with M = 1 (textbook): the surface gravity is
    // κ = 1/(4M), so ingoing y ~ e^{−iωr*} ~ (r − 2M)^(−2iMω) at the horizon;
    // r* = r + 2M ln(r/2M − 1), so outgoing y ~ e^{iωr*} ~ e^{iωr} r^(2iMω).
    fn rho_h(w: Complex64) -> Complex64 {
        Complex64::new(0.0, -2.0) * w
    }
    fn mu(w: Complex64) -> Complex64 {
        Complex64::i() * w
    }
    fn nu(w: Complex64) -> Complex64 {
        Complex64::new(0.0, 2.0) * w
    }
    fn ends() -> Ends<'static> {
        Ends { horizon: 2.0, rho_h: &rho_h, mu: &mu, nu: &nu }
    }

    #[test]
    fn schwarzschild_modes_by_integration_leaver_1985() {
        // Leaver, Proc. R. Soc. Lond. A 402 (1985) 285; Berti, Cardoso &
        // Starinets, Class. Quantum Grav. 26 (2009) 163001 tables (M = 1).
        for (s, l, want) in [
            (2, 2, Complex64::new(0.37367168, -0.08896232)),
            (2, 2, Complex64::new(0.34671100, -0.27391488)),
            (0, 0, Complex64::new(0.11045494, -0.10489572)),
            (2, 3, Complex64::new(0.59944329, -0.09270305)),
        ] {
            let ode = rw(s, l);
            // Seeded 2% away, off the ray through the mode.
            let seed = want * (ONE + Complex64::from_polar(0.02, 0.7));
            let root = find_root(&ode, &ends(), seed, 1e-11);
            assert!(root.converged, "s={s} l={l} {want}: {root:?}");
            let rel = (root.omega - want).norm() / want.norm();
            assert!(rel <= 1e-6, "s={s} l={l}: got {} want {want}", root.omega);
            // The tables carry 8 decimals: agreement to half a unit in the last place.
            assert!((root.omega.re - want.re).abs() <= 5.1e-9 && (root.omega.im - want.im).abs() <= 5.1e-9, "s={s} l={l}: {}", root.omega);
        }
    }

    #[test]
    fn agrees_with_the_continued_fraction_on_overtones() {
        // Two methods that share nothing after the exact reduction: the
        // Leaver continued fraction of the cf module (on the recurrence at the
        // horizon) and this integration. Regge–Wheeler s = 2, l = 2, n = 0…7.
        let src = "var r\nparam M, omega, l, s\nlet f = 1 - 2*M/r\node f*(f*y')' + (omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y = 0\n";
        let red = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
        let rec = crate::series::about_written(&red, "2*M", &[("2*M", 2), ("inf", 1)]);
        let g = |x: i64| GRat::real(Rat::int(x.into()));
        let rec = crate::solve::cf::try_numeric(&rec, &[g(0), g(1), g(0), g(2), g(2)], 2).unwrap();
        let ode = rw(2, 2);
        // Seeds for the continued fraction step down the overtone ladder (spacing ≈ −i/(4M)·…).
        let mut seed = Complex64::new(0.37, -0.09);
        for n in 0..8 {
            let cf = crate::solve::cf::find_root(&rec, n, seed, 1e-12, 40, 1 << 16);
            assert!(cf.converged, "n={n}: {cf:?}");
            seed = cf.omega + Complex64::new(-0.03, -0.24);
            let root = find_root(&ode, &ends(), cf.omega * (ONE + Complex64::from_polar(0.02, 0.7)), 1e-11);
            assert!(root.converged, "n={n}: {root:?}");
            let rel = (root.omega - cf.omega).norm() / cf.omega.norm();
            assert!(rel <= 1e-10, "n={n}: cf {} integration {}", cf.omega, root.omega);
        }
    }

    #[test]
    fn mismatch_vanishes_at_the_mode_and_not_beside_it() {
        // s = 2, l = 2, n = 0 (Leaver 1985).
        let ode = rw(2, 2);
        let root = find_root(&ode, &ends(), Complex64::new(0.37, -0.09), 1e-11);
        assert!(root.converged, "{root:?}");
        let at = mismatch(&ode, &ends(), root.omega).unwrap();
        let beside = mismatch(&ode, &ends(), root.omega * 1.02).unwrap();
        assert!(at.norm() <= 1e-10, "{at}");
        assert!(beside.norm() >= 1e-3, "{beside}");
    }

    #[test]
    fn far_seeds_do_not_panic_and_report_honestly() {
        let ode = rw(2, 2);
        for seed in [Complex64::new(3.0, -3.0), Complex64::new(0.01, -5.0), Complex64::new(20.0, 0.1), Complex64::new(-0.5, 2.0)] {
            let root = find_root(&ode, &ends(), seed, 1e-10);
            assert!(!root.reason.is_empty());
            if root.converged {
                // A claimed root must be a zero of the mismatch on its own evaluation.
                let m = mismatch(&ode, &ends(), root.omega).expect("evaluable at a converged root");
                assert!(m.norm() <= 1e-8 && root.residual <= RESIDUAL_MAX, "seed {seed}: {root:?}");
            }
        }
    }

    #[test]
    fn unconverged_searches_say_so() {
        let ode = rw(2, 2);
        // At ω = 0 both branches at infinity have μ = 0: nothing to match.
        let root = find_root(&ode, &ends(), Complex64::new(0.0, 0.0), 1e-10);
        assert!(!root.converged);
        assert!(root.reason.contains("coincide"), "{}", root.reason);
        // One Muller iteration cannot reach 1e-10 from a seed 2% away.
        let root = find_root_with(&ode, &ends(), Complex64::new(0.38, -0.09), 1e-10, 1);
        assert!(!root.converged);
        assert!(root.reason.contains("Muller iterations"), "{}", root.reason);
    }

    #[test]
    fn ends_that_do_not_fit_the_equation_are_refused() {
        let ode = rw(2, 2);
        let w = Complex64::new(0.37, -0.09);
        let wrong_nu = |w: Complex64| Complex64::new(0.0, 1.0) * w;
        let wrong_rho = |_: Complex64| Complex64::new(0.3, 0.0);
        // The outgoing exponent at the horizon is an exponent too (a different solution), so it is accepted.
        let out_rho = |w: Complex64| Complex64::new(0.0, 2.0) * w;
        assert!(mismatch(&ode, &Ends { nu: &wrong_nu, ..ends() }, w).is_none());
        assert!(mismatch(&ode, &Ends { rho_h: &wrong_rho, ..ends() }, w).is_none());
        assert!(mismatch(&ode, &Ends { horizon: 3.0, ..ends() }, w).is_none());
        assert!(mismatch(&ode, &Ends { rho_h: &out_rho, ..ends() }, w).is_some());
    }
}
