//! Direct integration on any [`BoundaryProblem`]: the solution obeying the
//! condition at each end is built there — a Frobenius series at a finite
//! regular end, a Frobenius series in t = 1/z at a regular infinity, the
//! asymptotic series of the chosen branch at an irregular infinity of rank 1
//! — and continued by Taylor steps to a common matching point, where their
//! normalised Wronskian vanishes exactly at an eigenvalue. Exponents are
//! chosen at every trial ω from the numeric local data, by the condition:
//! at a horizon the one whose ω-derivative has the more negative imaginary
//! part (the wave leaves the domain, e^(−iωt)), at a regular boundary by the
//! real part, at an irregular infinity by the sign of Im μ or Re μ.
//!
//! Roots come from the two-pass Muller search of `integrate` (standard,
//! then refined discretisation; the change between them is evidence). Seeds
//! come from the caller, from the hydrogen-like estimate at an irregular
//! infinity (quasi-bound states), or from a bounded scan of the mismatch over
//! a window of the complex plane scaled by the horizon's surface gravity.

use super::boundary::{BoundaryProblem, Condition, Location, Nature, SpectrumKind};
use super::integrate::{self, Asymptote, Coeffs, Far, IntRoot, Norm, Params};
use super::route::Route;
use crate::error::RequestInput;
use num_complex::Complex64;

const ZERO: Complex64 = Complex64::new(0.0, 0.0);

/// The exponent at a finite end obeying `cond`, from the local data at ω
/// (and at ω + ε for the horizon conditions).
fn pick_exponent(ode: &super::NumOde, k: &Coeffs, h: &integrate::Horizon, z: f64, cond: Condition, w: Complex64) -> Result<Complex64, String> {
    let [r1, r2] = h.exponents();
    match cond {
        Condition::Normalisable => Ok(if r1.re >= r2.re { r1 } else { r2 }),
        Condition::SlowerFallOff => Ok(if r1.re < r2.re { r1 } else { r2 }),
        Condition::IntoHorizon | Condition::OutOfHorizon => {
            let eps = 1e-6 * w.norm().max(1e-3);
            let k2 = Coeffs::at(ode, w + eps)?;
            let h2 = integrate::horizon(&k2, z)?;
            let [s1, s2] = h2.exponents();
            let (s1, s2) = if (s1 - r1).norm() + (s2 - r2).norm() <= (s2 - r1).norm() + (s1 - r2).norm() { (s1, s2) } else { (s2, s1) };
            let (d1, d2) = ((s1 - r1) / eps, (s2 - r2) / eps);
            let _ = k;
            let into = if d1.im <= d2.im { r1 } else { r2 };
            let out = if d1.im <= d2.im { r2 } else { r1 };
            Ok(if cond == Condition::IntoHorizon { into } else { out })
        }
        Condition::Outgoing | Condition::Decaying => Err("an irregular-infinity condition at a finite end".into()),
        Condition::Mixed(_) => Err("a mixed condition has no single exponent".into()),
    }
}

/// y and dy/dz at the offset `delta` = z − z_end (complex in general) from a
/// finite end or, in t = 1/z, from a regular infinity, obeying `cond`: the
/// Frobenius series of the chosen exponent, or for a mixed condition the
/// slower fall-off's series plus κ times the faster one's, each with unit
/// leading coefficient in the distance to the end; `log_dist` is the
/// logarithm of that distance, which fixes the leading factors' branch
/// (see [`integrate::frobenius_at`]; [`real_offset`] for a real `delta`).
#[allow(clippy::too_many_arguments)]
fn end_start_at(
    ode: &super::NumOde,
    k: &Coeffs,
    h: &integrate::Horizon,
    z: f64,
    cond: Condition,
    w: Complex64,
    delta: Complex64,
    log_dist: Complex64,
) -> Result<(Complex64, Complex64), String> {
    match cond {
        Condition::Mixed(super::boundary::Weight(kappa)) => {
            let [r1, r2] = h.exponents();
            let (slow, fast) = if r1.re <= r2.re { (r1, r2) } else { (r2, r1) };
            let (ys, dys) = integrate::frobenius_at(h, slow, delta, log_dist)?;
            let (yf, dyf) = integrate::frobenius_at(h, fast, delta, log_dist)?;
            Ok((ys + kappa * yf, dys + kappa * dyf))
        }
        _ => {
            let rho = pick_exponent(ode, k, h, z, cond, w)?;
            integrate::frobenius_at(h, rho, delta, log_dist)
        }
    }
}

/// The routes of direct integration between two finite ends for a root
/// search from `seed`, best first ([`route::choose`]): the real one alone unless both ends
/// are finite with a horizon condition at one of them (and no mixed one)
/// and the real route would amplify errors beyond what double precision
/// holds.
pub(super) fn routes_for(bp: &BoundaryProblem, seed: Complex64, fine_only: bool) -> Vec<Route> {
    let [left, right] = &bp.ends;
    let (Location::At(a), Location::At(b)) = (left.location, right.location) else { return vec![Route::REAL] };
    let horizon = |c: Condition| matches!(c, Condition::IntoHorizon | Condition::OutOfHorizon);
    let mixed = |c: Condition| matches!(c, Condition::Mixed(_));
    if !(horizon(left.condition) || horizon(right.condition)) || mixed(left.condition) || mixed(right.condition) {
        return vec![Route::REAL];
    }
    let Ok(k) = Coeffs::at(&bp.ode, seed) else { return vec![Route::REAL] };
    let data = |z: f64, cond: Condition| -> Option<(integrate::Horizon, f64, (Complex64, Complex64))> {
        let h = integrate::horizon(&k, z).ok()?;
        let wanted = pick_exponent(&bp.ode, &k, &h, z, cond, seed).ok()?;
        let [r1, r2] = h.exponents();
        let other = if (r1 - wanted).norm() <= (r2 - wanted).norm() { r2 } else { r1 };
        let d = if h.d.is_finite() { h.d } else { 1.0 + z.abs() };
        Some((h, d, (wanted, other)))
    };
    let (Some((hl, dl, el)), Some((hr, dr, er))) = (data(a, left.condition), data(b, right.condition)) else { return vec![Route::REAL] };
    let p = &integrate::STANDARD;
    let (sl, sr) = start_distances(a, b, dl, dr, p);
    let measure = |route: &Route| -> Option<(f64, f64)> {
        let (zl, zr, zm) = route.points(a, b, sl, sr);
        let (tl, tr) = (zl - a, zr - b);
        let (yl, dyl, cl) = integrate::frobenius_sum(&hl, el.0, tl, tl.ln()).ok()?;
        let (yr, dyr, cr) = integrate::frobenius_sum(&hr, er.0, tr, (-tr).ln()).ok()?;
        // Points along the route from the left start to the right one;
        // between two of them, the peak of each solution over the Taylor
        // steps (the product of the peaks bounds the product's peak).
        const PER_LEG: usize = 12;
        let mut pts: Vec<Complex64> = (0..PER_LEG).map(|j| zl + (zm - zl) * (j as f64 / PER_LEG as f64)).collect();
        pts.extend((0..=PER_LEG).map(|j| zm + (zr - zm) * (j as f64 / PER_LEG as f64)));
        let size = |y: Complex64, dy: Complex64| (y.norm_sqr() + dy.norm_sqr()).sqrt();
        let mut steps = 0;
        let mut left = vec![size(yl, dyl) * cl.max(1.0)];
        let (mut y, mut dy) = (yl, dyl);
        for w in pts.windows(2) {
            let mut peak = 0.0;
            (y, dy) = integrate::continue_along_peak(&k, &bp.zeros, w[0], w[1], y, dy, p, f64::INFINITY, &mut steps, &mut peak).ok()?;
            left.push(peak);
        }
        let mut right = vec![size(yr, dyr) * cr.max(1.0)];
        let (mut y, mut dy) = (yr, dyr);
        for w in pts.windows(2).rev() {
            let mut peak = 0.0;
            (y, dy) = integrate::continue_along_peak(&k, &bp.zeros, w[1], w[0], y, dy, p, f64::INFINITY, &mut steps, &mut peak).ok()?;
            right.push(peak);
        }
        right.reverse();
        // left = [its start (with the cancellation), the peak on piece 0, …];
        // right = [the peak on piece 0, …, its start (with the cancellation)].
        let n = left.len();
        let mut worst = left[0] * right[0];
        worst = worst.max(right[n - 1] * left[n - 1]);
        for i in 0..n - 1 {
            worst = worst.max(left[i + 1] * right[i]);
        }
        // The Wronskian (each solution normalised at its own end) is the
        // same on every route in exact arithmetic: what the standard and
        // refined discretisations disagree on is error. (The rounding of
        // the largest product met, 1e-16 of it, is a bound far above the
        // error actually committed on the better routes.)
        let raw = |p: &Params| -> Option<Complex64> {
            let m = matched(bp, seed, p, route).ok()?;
            let ((y1, d1), (y2, d2)) = (m.left, m.right);
            Some(y1 * d2 - d1 * y2)
        };
        let (w1, w2) = (raw(&integrate::STANDARD)?, raw(&integrate::REFINED)?);
        let error = (w1 - w2).norm();
        (error > 0.0 && error.is_finite() && worst > 0.0 && worst.is_finite()).then(|| (error.ln(), worst.ln()))
    };
    let judge = super::route::Judge { k: &k, fine_only, zeros: &bp.zeros, ends: (a, b), dists: (sl, sr), exps: [el, er], measure: &measure };
    super::route::choose(&judge)
}

/// The distances from the ends a < b at which their series are summed,
/// for the discretisation `p` (radii `dl`, `dr`): the right one at most
/// half way to the left start.
fn start_distances(a: f64, b: f64, dl: f64, dr: f64, p: &Params) -> (f64, f64) {
    let sl = p.start_fraction * dl;
    (sl, (p.start_fraction * dr).min(0.5 * (b - a - sl)))
}

/// A real offset from an end as [`end_start_at`] takes it: the offset and
/// ln |offset| (a real logarithm needs no branch choice).
fn real_offset(delta: f64) -> (Complex64, Complex64) {
    (Complex64::new(delta, 0.0), Complex64::new(delta.abs().ln(), 0.0))
}

/// The equation in t = 1/z: with y(z) = Y(t), A(1/t)(t⁴Y'' + 2t³Y') − B(1/t)t²Y' + C(1/t)Y = 0,
/// cleared by t^D and by the common power of t.
fn at_infinity_chart(k: &Coeffs) -> Coeffs {
    let d = k.a.len().max(k.b.len()).max(k.c.len()).saturating_sub(1);
    let rev = |v: &[Complex64]| -> Vec<Complex64> { (0..=d).map(|j| v.get(d - j).copied().unwrap_or(ZERO)).collect() };
    let (ra, rb, rc) = (rev(&k.a), rev(&k.b), rev(&k.c));
    let mut a = vec![ZERO; d + 5];
    let mut b = vec![ZERO; d + 5];
    let mut c = vec![ZERO; d + 5];
    for j in 0..=d {
        a[j + 4] += ra[j];
        b[j + 3] += 2.0 * ra[j];
        b[j + 2] -= rb[j];
        c[j] += rc[j];
    }
    let order = |v: &[Complex64]| v.iter().position(|x| x.norm() > 0.0).unwrap_or(usize::MAX);
    let s = order(&a).min(order(&b)).min(order(&c));
    let cut = |v: Vec<Complex64>| -> Vec<Complex64> {
        let mut out: Vec<Complex64> = v.into_iter().skip(s).collect();
        while out.last().is_some_and(|x| x.norm() == 0.0) {
            out.pop();
        }
        out
    };
    Coeffs { a: cut(a), b: cut(b), c: cut(c) }
}

/// The branch at an irregular infinity of rank 1 obeying `cond`: (μ, ν)
/// with y ~ e^(μz) z^ν.
pub(super) fn far_branch(k: &Coeffs, cond: Condition, w: Complex64) -> Result<(Complex64, Complex64), String> {
    let n = k.a.len() - 1;
    let g = |v: &[Complex64], j: usize| v.get(j).copied().unwrap_or(ZERO);
    let (an, bn, cn) = (k.a[n], g(&k.b, n), g(&k.c, n));
    let s = (bn * bn - 4.0 * an * cn).sqrt();
    let (m1, m2) = ((-bn + s) / (2.0 * an), (-bn - s) / (2.0 * an));
    let mu = pick_rate(cond, w, m1, m2)?;
    // ν from the next order: E_{N−1} + F_N ν = 0, E = μ²A + μB + C, F = 2μA + B.
    let e1 = mu * mu * g(&k.a, n - 1) + mu * g(&k.b, n - 1) + g(&k.c, n - 1);
    let f = 2.0 * mu * an + bn;
    if f.norm() == 0.0 {
        return Err("the two exponential factors at infinity coincide".into());
    }
    Ok((mu, -e1 / f))
}

/// Of the two rates m₁, m₂ of e^(mz) at an irregular infinity, the one the
/// condition picks at ω: outgoing, Im m of the sign of Re ω (e^(+ikz) with
/// Re k > 0 for Re ω > 0); decaying, the smaller Re m.
pub(super) fn pick_rate(cond: Condition, w: Complex64, m1: Complex64, m2: Complex64) -> Result<Complex64, String> {
    let sign = if w.re < 0.0 { -1.0 } else { 1.0 };
    match cond {
        Condition::Outgoing => Ok(if m1.im * sign >= m2.im * sign { m1 } else { m2 }),
        Condition::Decaying => Ok(if m1.re <= m2.re { m1 } else { m2 }),
        Condition::IntoHorizon | Condition::OutOfHorizon | Condition::Normalisable | Condition::SlowerFallOff | Condition::Mixed(_) => {
            Err("a finite-end condition at an irregular infinity".into())
        }
    }
}

/// The two end solutions (y, y') at the matching point for one ω.
struct Matched {
    left: (Complex64, Complex64),
    right: (Complex64, Complex64),
    /// ln of the factor that gives the right solution its normalisation at
    /// the end itself (e^(μ z_f) z_f^ν at an irregular infinity; 0 where the
    /// solution has it already).
    log_right: Complex64,
    /// How the Wronskian is made free of the normalisations.
    norm: Norm,
    /// Taylor steps taken.
    steps: usize,
}

/// The normalised Wronskian of the two end solutions at ω (on a complex
/// route, their Wronskian divided by the route's fixed scale), and the
/// Taylor steps it took.
fn evaluate(bp: &BoundaryProblem, w: Complex64, p: &Params, route: &Route) -> Result<(Complex64, usize), String> {
    let m = matched(bp, w, p, route)?;
    if route.is_complex() {
        let ((y1, d1), (y2, d2)) = (m.left, m.right);
        let v = (y1 * d2 - d1 * y2) * (-route.scale).exp();
        if !(v.re.is_finite() && v.im.is_finite()) {
            return Err("the Wronskian divided by the route's scale overflows at this ω".into());
        }
        return Ok((v, m.steps));
    }
    Ok((integrate::normalised_wronskian(m.left, m.right, m.norm)?, m.steps))
}

/// The scale of [`analytic`]'s mismatch, fixed at one ω (a seed): the
/// product norm of the two solutions there and the real part of the
/// logarithm of the right one's normalisation.
fn analytic_scale(bp: &BoundaryProblem, w: Complex64) -> Result<(f64, f64), String> {
    let m = matched(bp, w, &integrate::STANDARD, &Route::REAL)?;
    let ((y1, d1), (y2, d2)) = (m.left, m.right);
    let norm = y1.norm() * d2.norm() + d1.norm() * y2.norm();
    if !(norm > 0.0 && norm.is_finite()) {
        return Err("the solutions cannot be normalised at the matching point".into());
    }
    Ok((norm, m.log_right.re))
}

/// The Wronskian of the two end solutions, each normalised at its own end
/// (unit leading coefficient of the Frobenius series; e^(μz) z^ν (1 + …) at
/// an irregular infinity), divided by a `scale` fixed at one ω
/// ([`analytic_scale`]): analytic in ω, and equal in size to
/// [`evaluate`]'s mismatch where the scale was taken. A quasi-bound level
/// decays so slowly that the product norm of [`evaluate`] changes by order
/// one within |Im ω| of it (the solution from infinity nearly vanishes at
/// the horizon there, for every ω within the level's width, with either
/// phase), so Muller sees a step, not a zero, unless started closer than
/// |Im ω|; this Wronskian is nearly linear over the spacing of the levels.
fn analytic(bp: &BoundaryProblem, w: Complex64, p: &Params, scale: (f64, f64)) -> Result<(Complex64, usize), String> {
    let m = matched(bp, w, p, &Route::REAL)?;
    let ((y1, d1), (y2, d2)) = (m.left, m.right);
    let v = (y1 * d2 - d1 * y2) / scale.0 * (m.log_right - scale.1).exp();
    if !(v.re.is_finite() && v.im.is_finite()) {
        return Err("the Wronskian normalised at the ends overflows at this ω".into());
    }
    Ok((v, m.steps))
}

/// The two end solutions at the matching point for ω; between two finite
/// ends, started and matched as `route` says.
fn matched(bp: &BoundaryProblem, w: Complex64, p: &Params, route: &Route) -> Result<Matched, String> {
    if !(w.re.is_finite() && w.im.is_finite()) {
        return Err("ω is not finite".into());
    }
    let k = Coeffs::at(&bp.ode, w)?;
    let [left, right] = &bp.ends;
    let Location::At(a) = left.location else { return Err("the left end must be finite".into()) };
    let hl = integrate::horizon(&k, a)?;
    let dl = if hl.d.is_finite() { hl.d } else { 1.0 + a.abs() };
    let z_l = a + p.start_fraction * dl;
    let (t, log) = real_offset(z_l - a);
    let (yl, dyl) = end_start_at(&bp.ode, &k, &hl, a, left.condition, w, t, log)?;
    let zl = Complex64::new(z_l, 0.0);
    let mut steps = 0;
    let (mut yl, mut dyl) = (yl, dyl);
    // Between two finite ends the match is by the vector norm: with the
    // product norm the mismatch of a mirror-symmetric problem (matched at its
    // centre) is ±1 everywhere and jumps at the eigenvalues instead of
    // passing through zero.
    let mut norm = Norm::Products;
    let mut log_right = ZERO;
    let (yr, dyr) = match (right.location, right.nature) {
        (Location::At(b), _) => {
            let hr = integrate::horizon(&k, b)?;
            let dr = if hr.d.is_finite() { hr.d } else { 1.0 + b.abs() };
            let (sl, sr) = start_distances(a, b, dl, dr, p);
            // Each solution grows towards its own end, so each is carried half
            // way: the match is between the two start points (off the axis,
            // each series started on an arc about its end, when the route says).
            let (from_l, from, zm) = route.points(a, b, sl, sr);
            let (mut zl, t_r) = (zl, from - b);
            if route.left_turn != 0.0 {
                let t = from_l - a;
                (yl, dyl) = end_start_at(&bp.ode, &k, &hl, a, left.condition, w, t, t.ln())?;
                zl = from_l;
            }
            // (b − z)^ρ on the branch continued from the real axis below b.
            let (y, dy) = end_start_at(&bp.ode, &k, &hr, b, right.condition, w, t_r, (-t_r).ln())?;
            (yl, dyl) = integrate::continue_along(&k, &bp.zeros, zl, zm, yl, dyl, p, f64::INFINITY, &mut steps)?;
            norm = Norm::Vectors;
            integrate::continue_along(&k, &bp.zeros, from, zm, y, dy, p, f64::INFINITY, &mut steps)?
        }
        (Location::Infinity, Nature::Regular | Nature::Horizon) => {
            let kt = at_infinity_chart(&k);
            let ht = integrate::horizon(&kt, 0.0)?;
            match right.condition {
                Condition::Normalisable | Condition::SlowerFallOff | Condition::Mixed(_) => {}
                other @ (Condition::IntoHorizon | Condition::OutOfHorizon | Condition::Outgoing | Condition::Decaying) => {
                    return Err(format!("the condition '{}' does not fit a regular infinity", other.name()))
                }
            }
            let dt = if ht.d.is_finite() { ht.d } else { 1.0 };
            // Start where 1/t lies beyond the matching point.
            let delta = (p.start_fraction * dt).min(0.5 / z_l.abs().max(1e-300));
            // In t = 1/z the larger real part is the faster fall-off, as at a finite end.
            let (t, log) = real_offset(delta);
            let (y, dyt) = end_start_at(&bp.ode, &kt, &ht, 0.0, right.condition, w, t, log)?;
            let from = Complex64::new(1.0 / delta, 0.0);
            // dy/dz = −t² dY/dt.
            let dy = -delta * delta * dyt;
            integrate::continue_along(&k, &bp.zeros, from, zl, y, dy, p, f64::INFINITY, &mut steps)?
        }
        (Location::Infinity, Nature::IrregularRank1) => {
            let (mu, nu) = far_branch(&k, right.condition, w)?;
            let far = Far::new(&k, mu, nu)?;
            let ray = integrate::recessive_ray(&far, &bp.zeros, zl)?;
            let d = dl.max(1.0);
            let (y, dy, zf) = integrate::from_infinity_started(
                &k,
                &Asymptote::Series(&far),
                &bp.zeros,
                zl,
                ray,
                (4.0 / (far.mu - far.mu2).norm()).max(d),
                zl,
                p,
                &mut steps,
            )?;
            // ln(z_f) on the principal branch: the ray turns less than π from the real axis.
            log_right = far.mu * zf + far.nu * zf.ln();
            (y, dy)
        }
    };
    Ok(Matched { left: (yl, dyl), right: (yr, dyr), log_right, norm, steps })
}

/// The normalised mismatch at ω with the standard discretisation (zero at
/// an eigenvalue); `None` where it cannot be evaluated.
pub fn mismatch(bp: &BoundaryProblem, w: Complex64) -> Option<Complex64> {
    evaluate(bp, w, &integrate::STANDARD, &Route::REAL).ok().map(|(v, _)| v)
}

/// Words for a value another method gave (`w`) where direct integration's
/// search did not converge, when its mismatch shows no dip there: the size
/// at `w` and 2 % of |w| to either side along Re ω. `None` when the
/// mismatch is smaller at `w` than beside it (a zero the search could not
/// settle) or cannot be evaluated.
pub fn no_dip_at(bp: &BoundaryProblem, w: Complex64) -> Option<String> {
    let h = Complex64::new(0.02 * w.norm().max(bp.scale * 1e-3), 0.0);
    let (at, left, right) = (mismatch(bp, w)?.norm(), mismatch(bp, w - h)?.norm(), mismatch(bp, w + h)?.norm());
    (at > 1e-6 && at >= 0.5 * left.min(right)).then(|| {
        format!(
            "the mismatch of direct integration is {at:.1e} at this value and {left:.1e}, {right:.1e} at 2 % of |ω| to either side: no zero is seen here, so this root is not confirmed and may not be a mode"
        )
    })
}

/// The eigenvalue nearest the seed by the two-pass Muller search. When
/// both passes find a root but they disagree, the search is repeated from
/// that root with the series at the ends summed farther out
/// ([`integrate::FAR_STANDARD`], [`integrate::FAR_REFINED`]), which
/// resolves damped overtones the near start cannot; when that fails too,
/// the reason says how flat the mismatch is at the root, and so how far
/// rounding alone can move it.
pub fn find_root(bp: &BoundaryProblem, seed: Complex64, tol: f64) -> IntRoot {
    find_root_near(bp, seed, super::roots::SPREAD, tol)
}

/// [`find_root`] with Muller's first points ± `spread`·|seed| about the seed:
/// below the spacing of the eigenvalues near it (levels crowding below a
/// continuum edge), so that the search cannot be drawn to a neighbour.
pub fn find_root_near(bp: &BoundaryProblem, seed: Complex64, spread: f64, tol: f64) -> IntRoot {
    // The routes in order until one converges (a route's measure at the
    // seed is an estimate); the first route's failure is the one reported.
    let mut first: Option<IntRoot> = None;
    let mut tried: Vec<Route> = Vec::new();
    // The routes of the descent over both grids, then (where none
    // converged, and the descent ran at all: a complex route among them)
    // those of a descent over the fine grid alone.
    let ranked = routes_for(bp, seed, false);
    let descended = ranked.iter().any(Route::is_complex);
    let fine = std::iter::once_with(|| if descended { routes_for(bp, seed, true) } else { Vec::new() }).flatten();
    let routes = ranked.into_iter().chain(fine);
    for route in routes {
        if tried.contains(&route) {
            continue;
        }
        tried.push(route);
        let r = find_root_on(bp, route, seed, spread, tol);
        match first {
            None if r.converged => return r,
            None => first = Some(r),
            Some(ref f) if r.converged => {
                let reason = format!("{} (a later route; on the route judged best at the seed: {})", r.reason, f.reason);
                return IntRoot { reason, iterations: f.iterations + r.iterations, ..r };
            }
            Some(_) => {}
        }
    }
    first.unwrap_or_else(|| find_root_on(bp, Route::REAL, seed, spread, tol))
}

/// How near (relative) a stalled search must have come to a resonance of a
/// horizon's exponents for the resonance to be tested.
const RESONANCE_NEAR: f64 = 1e-6;

/// How near (relative) the seed of a search that did not stall must lie to
/// a resonance for it to be tested (a check seeded 1e-4 from a root).
const SEED_NEAR: f64 = 1e-3;

/// A search that stalled next to a point where a horizon's exponents differ
/// by a nonzero integer: there the solution with the exponent asked for is
/// defined only as a limit (its series has a logarithm, or a coefficient
/// 0/0), and a mode at that point is a double zero of the mismatch (as at
/// BTZ's k = 0 or for de Sitter's massless field, where the connection
/// coefficient's Gamma-function zeros meet), which Muller's method resolves
/// only to about the square root of the rounding. The resonance is found
/// from the exponents (secant steps on their difference, at most 30) and
/// taken as the root when the stalled search lies within
/// [`RESONANCE_NEAR`] of it (or, when the search wandered off, its seed
/// within [`SEED_NEAR`]) and the mismatch falls towards it like a power
/// of the distance (measured at 1, 2 and 4 × 10⁻⁶ of |ω| along the real and
/// the imaginary direction, in the standard and the refined
/// discretisation, exponents between 0.8 and 2.5, values below 1e-5); the
/// reason says so.
fn at_resonance(bp: &BoundaryProblem, eval: integrate::Evaluator, stalled: &IntRoot, seed: Complex64) -> Option<IntRoot> {
    // Where the search stalled (its two passes close), else its seed (a
    // search that wandered off from a seed next to the resonance).
    let stalled_near = stalled.change <= RESONANCE_NEAR && stalled.omega.re.is_finite() && stalled.omega.im.is_finite();
    let (w0, near) = if stalled_near { (stalled.omega, RESONANCE_NEAR) } else { (seed, SEED_NEAR) };
    for end in &bp.ends {
        let (Location::At(z), Condition::IntoHorizon | Condition::OutOfHorizon) = (end.location, end.condition) else { continue };
        let diff = |w: Complex64| exponent_gap(bp, z, w);
        let d0 = diff(w0)?;
        let n = d0.re.round();
        if n == 0.0 || (d0 - n).norm() > 1e-2 * n.abs() {
            continue;
        }
        // Secant steps on diff(ω) − n (linear in ω at a horizon: one step, in practice).
        let (mut a, mut b) = (w0, w0 * (1.0 + 1e-7));
        let (mut fa, mut fb) = (d0 - n, diff(b)? - n);
        for _ in 0..30 {
            if fb.norm() <= 1e-15 * n.abs() || fb == fa {
                break;
            }
            let c = b - fb * (b - a) / (fb - fa);
            (a, fa, b) = (b, fb, c);
            fb = diff(b)? - n;
        }
        let w = b;
        if fb.norm() > 1e-12 * n.abs() || (w - w0).norm() > near * w.norm() {
            continue;
        }
        // The fall-off towards the resonance.
        let h = 1e-6 * w.norm();
        let mut powers: Vec<f64> = Vec::new();
        let mut largest = 0.0f64;
        for p in [&integrate::STANDARD, &integrate::REFINED] {
            for dir in [Complex64::new(1.0, 0.0), Complex64::new(0.0, 1.0)] {
                let size = |k: f64| eval(w + dir * (h * k), p).ok().map(|(v, _)| v.norm());
                let (f1, f2, f4) = (size(1.0)?, size(2.0)?, size(4.0)?);
                largest = largest.max(f4);
                powers.extend([(f2 / f1).log2(), (f4 / f2).log2()]);
            }
        }
        if largest > 1e-5 || !powers.iter().all(|p| (0.8..=2.5).contains(p)) {
            continue;
        }
        let mean = powers.iter().sum::<f64>() / powers.len() as f64;
        let reason = format!(
            "at a resonance of the exponents at {z} (they differ by the integer {n}), where the solution asked for is a limit and a mode a double zero of the mismatch: the mismatch falls towards it like |ω − ω_res|^{mean:.1} (to {largest:.0e} at {:.0e} away); the value is the resonance point, a mode to within about 1e-6",
            4.0 * h / w.norm()
        );
        let note = format!(
            "taken at a resonance of the horizon's exponents at {z} (a double zero of the mismatch, which the root search does not resolve: {}): the value is the resonance point, a mode to within about 1e-6",
            if stalled_near { format!("it stalled {:.0e} from it", stalled.change) } else { "it did not converge from a seed next to it".to_string() }
        );
        return Some(IntRoot {
            omega: w,
            converged: true,
            residual: largest,
            // How far the resonance lies from where the search stalled (or
            // from its seed): the value's distance from the numeric search.
            change: (w - w0).norm() / w.norm(),
            reason,
            note: Some(integrate::Settled::AtResonance(note)),
            ..stalled.clone()
        });
    }
    None
}

/// The difference of the two exponents at the horizon end z at ω.
fn exponent_gap(bp: &BoundaryProblem, z: f64, w: Complex64) -> Option<Complex64> {
    let k = Coeffs::at(&bp.ode, w).ok()?;
    let [r1, r2] = integrate::horizon(&k, z).ok()?.exponents();
    Some(r1 - r2)
}

/// The horizon end (its point) whose two exponents differ at ω by a
/// nonzero integer to within `near` (absolutely), and that integer: a
/// resonance, where the solution the end's condition asks for is defined
/// only as a limit.
pub fn resonant_horizon(bp: &BoundaryProblem, w: Complex64, near: f64) -> Option<(f64, i64)> {
    bp.ends.iter().find_map(|end| {
        let Location::At(z) = end.location else { return None };
        // A horizon's condition, or a real eigenvalue problem's fall-off at
        // an end whose exponents move with the eigenvalue (±√(−E)).
        let moving = match end.condition {
            Condition::IntoHorizon | Condition::OutOfHorizon => true,
            Condition::Normalisable | Condition::SlowerFallOff => end.nature == Nature::Horizon,
            Condition::Outgoing | Condition::Decaying | Condition::Mixed(_) => false,
        };
        if !moving {
            return None;
        }
        let d = exponent_gap(bp, z, w)?;
        let n = d.re.round();
        (n != 0.0 && (d - n).norm() <= near).then_some((z, n as i64))
    })
}

/// [`find_root_near`] on one route.
fn find_root_on(bp: &BoundaryProblem, route: Route, seed: Complex64, spread: f64, tol: f64) -> IntRoot {
    if route.is_complex() {
        let r = search(&|w: Complex64, p: &Params| evaluate(bp, w, p, &route), seed, spread, tol);
        let reason = format!("{} ({})", r.reason, route.text());
        return IntRoot { reason, ..r };
    }
    let products = |w: Complex64, p: &Params| evaluate(bp, w, p, &route);
    let quasi_bound = bp.ends[1].condition == Condition::Decaying && bp.kind != SpectrumKind::Bound;
    let Some(scale) = quasi_bound.then(|| analytic_scale(bp, seed).ok()).flatten() else {
        let r = search(&products, seed, spread, tol);
        if r.converged {
            return r;
        }
        return at_resonance(bp, &products, &r, seed).unwrap_or(r);
    };
    // Quasi-bound levels: first the Wronskian normalised at the ends,
    // analytic in ω (see `analytic`), scaled at the seed; its size changes
    // fast between levels (the normalisation at infinity), so from a seed
    // far from a strongly damped level the product-normalised mismatch,
    // smooth there, is tried as well.
    let first = search(&|w: Complex64, p: &Params| analytic(bp, w, p, scale), seed, spread, tol);
    if first.converged {
        return first;
    }
    let second = search(&products, seed, spread, tol);
    let iterations = first.iterations + second.iterations;
    if second.converged {
        let reason = format!("{} (on the product-normalised mismatch; on the Wronskian normalised at the ends: {})", second.reason, first.reason);
        return IntRoot { reason, iterations, ..second };
    }
    let reason = format!("on the Wronskian normalised at the ends: {}; on the product-normalised mismatch: {}", first.reason, second.reason);
    IntRoot { reason, iterations, ..first }
}

/// The two-pass search on one mismatch; when its passes disagree, again
/// with the end series summed farther out, and otherwise the reason says
/// how far rounding alone moves the root.
fn search(eval: integrate::Evaluator, seed: Complex64, spread: f64, tol: f64) -> IntRoot {
    let near = integrate::find_root_spread(eval, seed, spread, tol, integrate::MAX_ITER);
    if near.converged {
        return settle_double(eval, near, tol);
    }
    if !near.change.is_finite() {
        return near;
    }
    // Two passes that stopped close together but not within the tolerance:
    // a double root each resolves only to about 1e-8.
    if near.change <= 1e-5 {
        let settled = double_root(eval, near.clone(), tol);
        if settled.converged {
            return settled;
        }
    }
    let named = "the two integrations with the series at the ends summed at 0.6 and 0.7 of their radii";
    let far =
        integrate::find_root_passes(eval, near.omega, spread, tol, integrate::MAX_ITER, [&integrate::FAR_STANDARD, &integrate::FAR_REFINED], named);
    if far.converged {
        let reason = format!("{} (standard and refined integration, with the series summed nearer the ends, disagreed: {})", far.reason, near.reason);
        return settle_double(eval, IntRoot { reason, iterations: near.iterations + far.iterations, ..far }, tol);
    }
    let mut reason = format!("{}; again with the series at the ends summed farther out: {}", near.reason, far.reason);
    if let Some(slope) = integrate::mismatch_slope(eval, far.omega, &integrate::FAR_REFINED) {
        // The mismatch carries rounding near 1e-15 (integrate's tolerance floor).
        let spread = 1e-15 / slope.max(f64::MIN_POSITIVE);
        if spread >= 0.1 * tol {
            reason.push_str(&format!(
                "; the normalised mismatch changes by only {slope:.1e} per unit relative change of ω at the root, so its rounding (near 1e-15) alone moves the root by about {spread:.0e} relative (tolerance {tol:.1e}): this mode is at or past the limit of what direct integration resolves in double precision"
            ));
        }
    }
    IntRoot { reason, iterations: near.iterations + far.iterations, ..near }
}

/// Muller steps (both passes) above which a converged search is tested
/// for a double root: a simple root takes 4 to 8, a double one, where
/// Muller's method converges only linearly, often 15 or more.
const SLOW_SEARCH: usize = 12;

/// The change between the two discretisations (relative) above which a
/// converged search is tested for a double root whatever its steps: each
/// pass stops about √(rounding) from a double root, where they differ by
/// 1e-10 or so, while at a simple root they agree to 1e-13 or better
/// (1e-11 for the hardest paths).
const UNSETTLED_CHANGE: f64 = 1e-12;

/// How many times the tolerance a double root's two discretisations may
/// differ by.
const DOUBLE_ALLOWANCE: f64 = 10.0;

/// [`double_root`] on a converged root that took [`SLOW_SEARCH`] steps or
/// more or whose two discretisations differ by more than
/// [`UNSETTLED_CHANGE`] (the signs of a double root); the root as it was
/// otherwise.
fn settle_double(eval: integrate::Evaluator, r: IntRoot, tol: f64) -> IntRoot {
    if r.iterations >= SLOW_SEARCH || r.change > UNSETTLED_CHANGE {
        double_root(eval, r, tol)
    } else {
        r
    }
}

/// A root about which the mismatch grows like the square of the distance
/// (`roots::growth_order` between 1.7 and 2.4, in the refined
/// discretisation): a double root,
/// where two families of modes meet and Muller's method stops about
/// √(rounding) away. It is then the zero of the mismatch's derivative
/// (`roots::double_root`) in both discretisations, their difference the
/// change reported, and the note says so; otherwise the root as it was.
fn double_root(eval: integrate::Evaluator, r: IntRoot, tol: f64) -> IntRoot {
    let at = |p: &'static Params| move |w: Complex64| eval(w, p).ok().map(|(v, _)| v);
    let refined = at(&integrate::REFINED);
    let Some(order) = super::roots::growth_order(&refined, r.omega).filter(|o| (1.7..=2.4).contains(o)) else { return r };
    let (Some(a), Some(b)) =
        (super::roots::double_root(&at(&integrate::STANDARD), r.omega, 0.1 * tol), super::roots::double_root(&refined, r.omega, 0.1 * tol))
    else {
        return r;
    };
    let change = (a - b).norm() / b.norm().max(super::roots::ABSOLUTE_BELOW);
    // A double root is conditioned like the square root of the rounding:
    // its two discretisations are held to ten times the tolerance.
    let allowed = DOUBLE_ALLOWANCE * tol;
    let note = format!(
        "a double root of the mismatch (it grows like |ω − ω₀|^{order:.1} about it: two modes coincide here), which the root search resolves only to about 1e-8; the value is the zero of the mismatch's derivative, moved by {:.0e} from where the search stopped, its two discretisations held to {allowed:.0e} (ten times the tolerance: a double root is that much less well conditioned)",
        (b - r.omega).norm() / b.norm().max(super::roots::ABSOLUTE_BELOW)
    );
    IntRoot {
        omega: b,
        converged: change <= allowed,
        change,
        residual: refined(b).map_or(r.residual, |v| v.norm()),
        reason: if change <= allowed {
            r.reason.clone()
        } else {
            format!("a double root whose value moved by {change:.1e} (relative) between standard and refined integration, more than {allowed:.1e} (ten times the tolerance)")
        },
        note: Some(integrate::Settled::DoubleRoot(note)),
        ..r
    }
}

/// Where a seed came from.
#[derive(Clone, Debug)]
pub struct Seed {
    /// The value.
    pub omega: Complex64,
    /// Its origin, in words.
    pub from: String,
}

/// Grid size of the seed scan (points along Re ω and along Im ω).
const SCAN_RE: usize = 28;
const SCAN_IM_PER_MODE: usize = 10;

/// The work limit of one seed scan, in Taylor steps: a point whose
/// mismatch cannot be evaluated is charged the most one integration may
/// take ([`integrate::MAX_STEPS`]), so that a problem where integration
/// fails everywhere stops after about fifty such points (seconds),
/// while ordinary scans (a few to a few hundred steps a point) never reach it.
const SCAN_STEP_BUDGET: usize = 1_000_000;

/// Where a seed scan stopped before its grid was done.
#[derive(Clone, Debug, PartialEq)]
pub struct ScanCut {
    /// Points evaluated.
    pub evaluated: usize,
    /// Points of the whole grid.
    pub grid: usize,
    /// Points where the mismatch could not be evaluated.
    pub failed: usize,
    /// Whether the scan stopped at its work limit (else it covered the grid).
    pub stopped: bool,
    /// Why the first point that failed could not be integrated.
    pub why: Option<String>,
}

impl ScanCut {
    /// In words, for a report.
    pub fn text(&self) -> String {
        let why = self.why.as_ref().map(|w| format!(": {w}")).unwrap_or_default();
        if self.stopped {
            format!(
                "the scan of the complex plane stopped at its work limit ({SCAN_STEP_BUDGET} Taylor steps) after {} of its {} points ({} of them could not be integrated{why})",
                self.evaluated, self.grid, self.failed
            )
        } else {
            format!("{} of the scan's {} points could not be integrated{why}", self.failed, self.grid)
        }
    }
}

/// The scan's window for `count` modes: Re ω in [0, the first], Im ω in
/// [the second, 0], scaled by the problem's frequency scale.
fn scan_window(bp: &BoundaryProblem, count: usize) -> (f64, f64) {
    (4.0 * bp.scale, -(2.5 * count as f64 + 1.5) * bp.scale)
}

/// Seeds by a bounded scan of |mismatch| over the window
/// Re ω ∈ (0, 4κ], Im ω ∈ [−(2.5(count)+1)κ, 0) (κ the problem's frequency
/// scale): the local minima of |mismatch| below 0.5, best first. The scan
/// evaluates at most `SCAN_RE × SCAN_IM_PER_MODE × (count + 1)` points and
/// stops at [`SCAN_STEP_BUDGET`] Taylor steps; a stop, or points that
/// could not be integrated, are said with the first reason ([`ScanCut`]).
pub fn scan_seeds(bp: &BoundaryProblem, count: usize) -> (Vec<Seed>, Option<ScanCut>) {
    let ni = SCAN_IM_PER_MODE * (count + 1);
    let (re_max, im_min) = scan_window(bp, count);
    let at = |i: usize, j: usize| Complex64::new(re_max * (i as f64 + 0.5) / SCAN_RE as f64, im_min * (j as f64 + 0.5) / ni as f64);
    let mut vals = vec![vec![f64::INFINITY; ni]; SCAN_RE];
    let (mut spent, mut evaluated, mut failed) = (0usize, 0usize, 0usize);
    let mut stopped = false;
    let mut why: Option<String> = None;
    'grid: for (i, row) in vals.iter_mut().enumerate() {
        for (j, v) in row.iter_mut().enumerate() {
            if spent > SCAN_STEP_BUDGET {
                stopped = true;
                break 'grid;
            }
            evaluated += 1;
            match evaluate(bp, at(i, j), &integrate::STANDARD, &Route::REAL) {
                Ok((m, steps)) => {
                    spent += steps;
                    *v = m.norm();
                }
                Err(e) => {
                    spent += integrate::MAX_STEPS;
                    failed += 1;
                    why.get_or_insert(e);
                }
            }
        }
    }
    let cut = (stopped || failed > 0).then(|| ScanCut { evaluated, grid: SCAN_RE * ni, failed, stopped, why });
    let mut minima: Vec<(f64, Complex64)> = Vec::new();
    for i in 0..SCAN_RE {
        for j in 0..ni {
            let v = vals[i][j];
            if !(v < 0.5) {
                continue;
            }
            let mut lowest = true;
            for di in -1i64..=1 {
                for dj in -1i64..=1 {
                    if di == 0 && dj == 0 {
                        continue;
                    }
                    let (x, y) = (i as i64 + di, j as i64 + dj);
                    if x >= 0 && y >= 0 && (x as usize) < SCAN_RE && (y as usize) < ni && vals[x as usize][y as usize] < v {
                        lowest = false;
                    }
                }
            }
            if lowest {
                minima.push((v, at(i, j)));
            }
        }
    }
    minima.sort_by(|a, b| a.0.total_cmp(&b.0));
    (minima.into_iter().map(|(_, w)| Seed { omega: w, from: "a minimum of the mismatch on a scan of the complex plane".into() }).collect(), cut)
}

/// Points of the real-axis scan of a real eigenvalue problem per round.
const SCAN_REAL: usize = 240;
/// Rounds of the real-axis scan (the half-width grows fourfold each round).
const SCAN_REAL_ROUNDS: usize = 5;

/// Which part of the real axis [`real_axis_roots`] scans.
#[derive(Clone, Copy, PartialEq, Eq)]
enum RealScan {
    /// [−L, L], for eigenvalues bounded below (an energy): a wider round
    /// must add none before the scan stops.
    Line,
    /// [0, L], for normal modes ±ω (ω enters as ω²): the lowest ones lie in
    /// the first rounds, and the scan stops once enough are found.
    HalfLine,
}

/// The lowest real eigenvalues of a real problem ([`SpectrumKind::Bound`],
/// or normal modes with [`RealScan::HalfLine`]): local minima of
/// |mismatch| on a grid over [−L, L] or [0, L] (L = 4κ, 16κ, … up to five
/// rounds, κ the problem's scale), each polished by the two-pass Muller
/// search and kept when it converges to a real value (in [0, ∞) on the
/// half-line); sorted ascending, distinct. Stops when `want` are found and
/// (on the line) a wider round adds none (a level below those found would
/// show there), or the rounds are spent; the second value is the
/// half-width reached.
fn real_axis_roots(bp: &BoundaryProblem, want: usize, tol: f64, part: RealScan) -> (Vec<(IntRoot, Seed)>, f64) {
    let mut found: Vec<(IntRoot, Seed)> = Vec::new();
    let mut half = 4.0 * bp.scale;
    let mut before = usize::MAX;
    for round in 0..SCAN_REAL_ROUNDS {
        if round > 0 {
            half *= 4.0;
        }
        let at = |i: usize| match part {
            RealScan::Line => -half + 2.0 * half * (i as f64 + 0.5) / SCAN_REAL as f64,
            RealScan::HalfLine => half * (i as f64 + 0.5) / SCAN_REAL as f64,
        };
        let values: Vec<Option<Complex64>> = (0..SCAN_REAL).map(|i| mismatch(bp, Complex64::new(at(i), 0.0))).collect();
        let vals: Vec<f64> = values.iter().map(|v| v.map_or(f64::INFINITY, |m| m.norm())).collect();
        let span = match part {
            RealScan::Line => format!("[−{half:.3e}, {half:.3e}]"),
            RealScan::HalfLine => format!("[0, {half:.3e}]"),
        };
        let step = at(1) - at(0);
        // Candidates: minima of |mismatch| below 0.5, and sign changes
        // between neighbours (a real problem's mismatch keeps its phase up
        // to sign; where it is normalised to ±1 away from its zeros, the
        // dip at a zero can be narrower than the grid, the flip cannot).
        let minimum = |i: usize| {
            let left = if i > 0 { vals[i - 1] } else { f64::INFINITY };
            let right = if i + 1 < SCAN_REAL { vals[i + 1] } else { f64::INFINITY };
            vals[i] < 0.5 && vals[i] <= left && vals[i] <= right
        };
        let mut seeds: Vec<(f64, &str)> = Vec::new();
        for i in 0..SCAN_REAL {
            if minimum(i) {
                seeds.push((at(i), "a minimum of the mismatch"));
            }
            // A flip beside a minimum is that minimum's zero.
            if let (Some(Some(u)), Some(Some(v)), false) = (values.get(i), values.get(i + 1), minimum(i) || (i + 1 < SCAN_REAL && minimum(i + 1))) {
                if (u * v.conj()).re < 0.0 {
                    let x = at(i) + step * u.norm() / (u.norm() + v.norm()).max(f64::MIN_POSITIVE);
                    seeds.push((x, "a change of sign of the mismatch"));
                }
            }
        }
        for (x, what) in seeds {
            let seed = Seed { omega: Complex64::new(x, 0.0), from: format!("{what} on a scan of the real axis over {span}") };
            // Muller's first points within the grid step: no jump to a neighbour.
            let spread = (0.5 * step / x.abs().max(f64::MIN_POSITIVE)).min(super::roots::SPREAD);
            let r = find_root_near(bp, seed.omega, spread, tol);
            let below = part == RealScan::HalfLine && r.omega.re < -1e-12 * r.omega.norm().max(1.0);
            if !r.converged || r.omega.im.abs() > 1e-8 * r.omega.norm().max(1.0) || below {
                continue;
            }
            // A real problem's eigenvalue: the imaginary part left by the
            // complex root search is rounding.
            let r = IntRoot { omega: Complex64::new(r.omega.re, 0.0), ..r };
            if found.iter().any(|(f, _)| (f.omega - r.omega).norm() <= 1e-7 * r.omega.norm().max(1e-3)) {
                continue;
            }
            found.push((r, seed));
        }
        // Enough, and this round (wider than the last) added none: a level
        // below the ones found would have shown in it. On the half-line the
        // lowest modes show in the first, finest rounds.
        if found.len() >= want && (found.len() == before || part == RealScan::HalfLine) {
            break;
        }
        before = found.len();
    }
    found.sort_by(|a, b| a.0.omega.re.total_cmp(&b.0.omega.re));
    (found, half)
}

/// Normal modes of a problem between two regular ends (a cavity, global
/// anti-de Sitter with either fall-off), where the spectrum is real: the
/// roots ω ≥ 0 of the real-axis scan ([`real_axis_roots`]), upward, as
/// overtones lo..=hi; `None` when an end is not a regular one or fewer
/// were found.
pub fn normal_modes(bp: &BoundaryProblem, (lo, hi): (u32, u32), tol: f64) -> Option<Vec<EndMode>> {
    if bp.ends.iter().any(|e| e.nature != Nature::Regular) {
        return None;
    }
    let (upward, _) = real_axis_roots(bp, hi as usize + 1, tol, RealScan::HalfLine);
    (upward.len() > hi as usize).then(|| {
        (lo..=hi)
            .map(|n| {
                let (root, seed) = upward[n as usize].clone();
                EndMode { n, root, seed }
            })
            .collect()
    })
}

/// The first three coefficients of C/A = Σ q_j z^(−j) at ∞ at real ω
/// (A₀, A₁, A₂ of Q ≈ A₀ + A₁/z + A₂/z² there).
fn at_infinity(bp: &BoundaryProblem, w: f64) -> Option<[Complex64; 3]> {
    let k = Coeffs::at(&bp.ode, Complex64::new(w, 0.0)).ok()?;
    let na = k.a.len() - 1;
    let g = |v: &[Complex64], j: isize| if j >= 0 { v.get(j as usize).copied().unwrap_or(ZERO) } else { ZERO };
    // C/A = Σ q_j z^(−j): long division from the top.
    let an = k.a[na];
    let mut q = [ZERO; 3];
    let mut rem: Vec<Complex64> = (0..=na).map(|j| g(&k.c, j as isize)).collect();
    for (j, qj) in q.iter_mut().enumerate() {
        let top = na as isize - j as isize;
        if top < 0 {
            break;
        }
        *qj = rem[top as usize] / an;
        for i in 0..=na {
            let idx = i as isize - j as isize;
            if idx >= 0 {
                rem[idx as usize] -= *qj * g(&k.a, i as isize);
            }
        }
    }
    Some(q)
}

/// The continuum edge of a quasi-bound problem: the real ω > 0 where
/// A₀(ω) of Q ≈ A₀ + … at ∞ vanishes, A₀ increasing in ω (A₀ = ω² − μ²);
/// below it the branch at ∞ decays.
pub fn continuum_edge(bp: &BoundaryProblem) -> Option<f64> {
    let a0 = |w: f64| at_infinity(bp, w).map(|q| q[0].re);
    if a0(0.0)? >= 0.0 {
        return None;
    }
    super::roots::first_sign_change(&a0, bp.scale.max(1e-3))
}

/// Seeds for quasi-bound states at an irregular infinity from the
/// hydrogen-like balance of Q ≈ A₀ + A₁/z + A₂/z² there:
/// A₁/(2√(−A₀)) = n + ½ + √(¼ − A₂) (the Coulomb problem, common practice),
/// solved for real ω by bisection on (0, ω_edge) where A₀(ω_edge) = 0.
pub fn hydrogenic_seed(bp: &BoundaryProblem, n: u32) -> Option<Seed> {
    let f = |w: f64| -> Option<f64> {
        let [a0, a1, a2] = at_infinity(bp, w)?;
        let kappa = (-a0).sqrt();
        if kappa.re <= 0.0 {
            return None;
        }
        Some((a1 / (2.0 * kappa)).re - (n as f64 + 0.5 + (0.25 - a2).sqrt().re))
    };
    let edge = continuum_edge(bp)?;
    // f → +∞ at the edge (κ → 0); find where it crosses zero below the edge.
    let (mut a, mut b) = (edge * 1e-3, edge * (1.0 - 1e-12));
    let (fa, fb) = (f(a)?, f(b)?);
    if fa.signum() == fb.signum() {
        return None;
    }
    for _ in 0..200 {
        let m = 0.5 * (a + b);
        let fm = f(m)?;
        if fm.signum() == fa.signum() {
            a = m;
        } else {
            b = m;
        }
    }
    Some(Seed { omega: Complex64::new(0.5 * (a + b), -1e-9 * edge), from: "the hydrogen-like estimate at infinity".into() })
}

/// One eigenvalue of a boundary problem with its evidence.
#[derive(Clone, Debug)]
pub struct EndMode {
    /// The overtone (position in the order of |Im ω| among those found, or
    /// the level for quasi-bound states).
    pub n: u32,
    /// The root and its evidence (two integration passes).
    pub root: IntRoot,
    /// Where its seed came from.
    pub seed: Seed,
}

/// Overtone n with no root to report, and why (no number is attached).
pub(crate) fn unfound(n: u32, reason: String) -> EndMode {
    let root = IntRoot {
        omega: Complex64::new(f64::NAN, f64::NAN),
        converged: false,
        residual: f64::NAN,
        iterations: 0,
        steps: 0,
        change: f64::NAN,
        reason,
        note: None,
    };
    EndMode { n, root, seed: Seed { omega: ZERO, from: "none".into() } }
}

/// Why a mode is not reported as found.
fn reject(mut r: IntRoot, why: String) -> IntRoot {
    r.converged = false;
    r.reason = why;
    r
}

/// Solves the overtones `lo..=hi` of a boundary problem: from `guess` for the
/// lowest one when given (then each next one from the two before it, or from
/// the scan), from the hydrogen-like estimate for quasi-bound states, and
/// otherwise from the global spectral method's eigenvalues and the scan of
/// the mismatch, numbering the distinct roots found in overtone order
/// (`global::overtone_order`). Every loop is bounded (the scan's grid, Muller's
/// iteration limit, at most 4(hi + 1) + 8 seeds tried).
pub fn modes(bp: &BoundaryProblem, (lo, hi): (u32, u32), guess: Option<Complex64>, tol: f64) -> Vec<EndMode> {
    let quasi_bound = bp.ends[1].condition == Condition::Decaying && bp.kind != SpectrumKind::Bound;
    let mut out: Vec<EndMode> = Vec::new();
    if bp.kind == SpectrumKind::Bound && guess.is_none() {
        let (found, half) = real_axis_roots(bp, hi as usize + 1, tol, RealScan::Line);
        for n in lo..=hi {
            match found.get(n as usize) {
                Some((r, s)) => out.push(EndMode { n, root: r.clone(), seed: s.clone() }),
                None => out.push(unfound(
                    n,
                    format!(
                        "only {} distinct real eigenvalues were found in [−{half:.3e}, {half:.3e}]: give {opt_guess}",
                        found.len(),
                        opt_guess = RequestInput::Guess.mention()
                    ),
                )),
            }
        }
        return out;
    }
    if quasi_bound && (guess.is_some() || hydrogenic_seed(bp, lo).is_some()) {
        // The levels crowd below the continuum edge: in order and each once
        // (`levels::in_order`), from level 0, or from the guess as level `lo`.
        let start = super::levels::Start { level: if guess.is_some() { lo } else { 0 }, guess };
        let estimate = |n: u32| hydrogenic_seed(bp, n).map(|s| (s.omega, s.from));
        let solve = |_: u32, w: Complex64, spread: f64| find_root_near(bp, w, spread, tol);
        for (n, placed) in super::levels::in_order(start, hi, tol, continuum_edge(bp), &estimate, &solve) {
            if n < lo {
                continue;
            }
            out.push(match placed {
                Ok((root, (omega, from))) => EndMode { n, root, seed: Seed { omega, from } },
                Err(why) => unfound(n, why),
            });
        }
        return out;
    }
    if quasi_bound && guess.is_none() {
        for n in lo..=hi {
            out.push(unfound(n, format!("no hydrogen-like estimate at infinity: give {opt_guess}", opt_guess = RequestInput::Guess.mention())));
        }
        return out;
    }
    if let Some(g) = guess {
        for n in lo..=hi {
            // A seed below a lone overtone is not paced by two overtones: it
            // can pass over a mode, so the search goes back between afterwards.
            let unpaced = n > lo && bp.kind != SpectrumKind::Bound && !(out.len() >= 2 && out.iter().rev().take(2).all(|m| m.root.converged));
            let mut seed = if n == lo {
                Seed { omega: g, from: "the given guess".into() }
            } else if out.len() >= 2 && out.iter().rev().take(2).all(|m| m.root.converged) {
                let (a, b) = (out[out.len() - 1].root.omega, out[out.len() - 2].root.omega);
                Seed { omega: a + (a - b), from: "extrapolated from the two previous overtones".into() }
            } else if let Some(last) = out.iter().rev().find(|m| m.root.converged) {
                let w = last.root.omega;
                if bp.kind == SpectrumKind::Bound {
                    // Real eigenvalues grow with their number.
                    Seed { omega: w + w.norm().max(bp.scale), from: "above the previous eigenvalue".into() }
                } else {
                    Seed { omega: w - Complex64::new(0.0, 2.0 * w.im.abs().max(0.05 * bp.scale)), from: "below the previous overtone".into() }
                }
            } else {
                Seed { omega: g, from: "the given guess".into() }
            };
            let mut r = find_root(bp, seed.omega, tol);
            if r.converged {
                if let Some(prev) = out.iter().find(|m| m.root.converged && (m.root.omega - r.omega).norm() <= 1e-8 * r.omega.norm()) {
                    let why = format!("the root is overtone {}'s again (the seed led to a mode already found)", prev.n);
                    r = reject(r, why);
                }
            }
            if let Some(prev) = out.last().filter(|m| unpaced && r.converged && m.n + 1 == n && m.root.converged) {
                let from = |mid: Complex64| {
                    let x = find_root(bp, mid, tol);
                    x.converged.then_some((x.omega, x))
                };
                let known = |w: Complex64| out.iter().any(|m| m.root.converged && (m.root.omega - w).norm() <= 1e-8 * w.norm());
                if let Some((mid, _, x)) = super::roots::root_between(prev.root.omega, r.omega, &from, &known) {
                    let why = format!("half way between overtone {} and the root reached from {}", n - 1, seed.from);
                    seed = Seed { omega: mid, from: why };
                    r = x;
                }
            }
            out.push(EndMode { n, root: r, seed });
        }
        return out;
    }
    // No guess: every distinct root reached from the global spectral
    // method's eigenvalues (as many as persisted; they are the least damped)
    // and from the scan's minima.
    let want = hi as usize + 1;
    let (scanned, cut) = scan_seeds(bp, want);
    // The same window as the scan's, part by part of the plane.
    let (re_max, im_min) = scan_window(bp, want);
    let window = super::global::Region { re: (-super::global::REAL_TOL * re_max, re_max), im: (im_min, super::global::REAL_TOL * re_max) };
    // Each grid of the seeding persists a different subset of the damped
    // eigenvalues: the seeds are those of every grid.
    let spectral: Vec<Seed> = super::global::SEED_GRIDS
        .iter()
        .filter_map(|&n| super::global::spectral_in(bp, window, n, super::global::SEED_PERSIST).ok())
        .flat_map(|sp| sp.values)
        .map(|v| Seed { omega: v.omega, from: "the global spectral method".into() })
        .collect();
    let tries = spectral.len() + 4 * want + 8;
    let mut found: Vec<(IntRoot, Seed)> = Vec::new();
    let take = |seed: Seed, found: &mut Vec<(IntRoot, Seed)>| {
        let r = find_root(bp, seed.omega, tol);
        let damped = r.omega.im < 0.0 || super::global::nearly_real(r.omega, bp.scale);
        let new = !found.iter().any(|(f, _)| (f.omega - r.omega).norm() <= 1e-7 * r.omega.norm().max(1e-300));
        if r.converged && damped && r.omega.re >= -super::global::REAL_TOL * r.omega.norm() && new {
            found.push((r, seed));
        }
    };
    for seed in spectral.into_iter().chain(scanned).take(tries) {
        take(seed, &mut found);
    }
    // Families of overtones are nearly evenly spaced: each pair of modes
    // with nearly the same real part seeds the next member below them
    // (a mode the scan passed over between its minima). Bounded: at most
    // three rounds of at most 4·want seeds, inside the scan's window.
    for _ in 0..3 {
        let before = found.len();
        let mut next: Vec<Seed> = Vec::new();
        for (i, (a, _)) in found.iter().enumerate() {
            for (b, _) in found.iter().skip(i + 1) {
                let (hi_w, lo_w) = if a.omega.im > b.omega.im { (a.omega, b.omega) } else { (b.omega, a.omega) };
                let step = lo_w - hi_w;
                let same_family = (step.re).abs() <= 0.1 * step.norm();
                let seed = lo_w + step;
                let fresh = !found.iter().any(|(f, _)| (f.omega - seed).norm() <= 0.25 * step.norm());
                if same_family && fresh && seed.im >= im_min && next.len() < 4 * want {
                    next.push(Seed { omega: seed, from: "extrapolated along a family of overtones".into() });
                }
            }
        }
        for seed in next {
            take(seed, &mut found);
        }
        if found.len() == before {
            break;
        }
    }
    found.sort_by(|a, b| super::global::overtone_order(a.0.omega, b.0.omega, bp.scale));
    for n in lo..=hi {
        match found.get(n as usize) {
            Some((r, s)) => out.push(EndMode { n, root: r.clone(), seed: s.clone() }),
            None => out.push(unfound(
                n,
                format!(
                    "only {} distinct modes were found in the scanned window{}: give {opt_guess}",
                    found.len(),
                    cut.as_ref().map(|c| format!(" ({})", c.text())).unwrap_or_default(),
                    opt_guess = RequestInput::Guess.mention()
                ),
            )),
        }
    }
    out
}
