//! Coupled problems with no seed: continuation from the uncoupled limit.
//!
//! The coupling parameter is found from the links: the one parameter with a
//! value whose zero makes every link that sets an angular parameter vanish
//! identically (for `c = a*omega`, the spin `a`). There the angular
//! eigenvalue is the exact one of the terminating series
//! ([`super::coupled::try_angular`]) and the radial equation no longer feels
//! the angular one, so its modes come from the seeds of the uncoupled
//! problem (WKB at a barrier, else the global spectral method). The modes
//! are then followed along p(t) = t·p* for t from 0 to 1 in steps of
//! dyadic length (so that every point is an exact rational), each step
//! seeded by extrapolating the last accepted points (polynomial in t through
//! up to three of them) and polished by the coupled root finder. A step is
//! accepted when every overtone converged and moved from its prediction by
//! at most [`MAX_CORRECTION`] of its size; the step then grows (doubles when
//! the correction was small), else it is halved and tried again. The loop
//! is bounded by [`MAX_ATTEMPTS`] solves and a smallest step of 2^−[`MIN_STEP_LOG2`], and the report
//! says why it stopped.

use super::cf::{CfRoot, StopReason};
use super::coupled::{coupled_spectrum, CoupledMode, Coupling};
use super::spectrum::{exact_double, Mode, ModeMethod, Setup, SpectrumOptions};
use crate::algebra::{GRat, Int, Rat};
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;
use crate::series::Recurrence;
use num_complex::Complex64;

/// At most this many coupled solves along one path.
pub const MAX_ATTEMPTS: usize = 48;
/// The shortest step in t (2⁻¹²): a path that needs shorter ones stops.
pub const MIN_STEP_LOG2: u32 = 12;
/// The first step in t.
const FIRST_STEP_LOG2: u32 = 2;
/// A step is accepted when every overtone lands within this fraction of
/// its size from the prediction (well inside the spacing of overtones,
/// so that the root finder cannot have changed mode).
pub const MAX_CORRECTION: f64 = 0.04;

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// Why the continuation stopped.
#[derive(Clone, Debug, PartialEq)]
pub enum PathStop {
    /// The requested value was reached.
    Reached,
    /// [`MAX_ATTEMPTS`] solves were spent first.
    AttemptLimit,
    /// The step fell below 2^−[`MIN_STEP_LOG2`] at this value of t.
    StepTooShort(f64),
    /// The uncoupled limit gave no mode to start from, with the reason.
    NoStart(String),
}

impl PathStop {
    /// The reason in words.
    pub fn text(&self) -> String {
        match self {
            PathStop::Reached => "reached the requested value".into(),
            PathStop::AttemptLimit => format!("stopped after {MAX_ATTEMPTS} solves (the limit) before the requested value"),
            PathStop::StepTooShort(t) => {
                format!("stopped at {:.4} of the way: a step shorter than 2^-{MIN_STEP_LOG2} of the path would be needed (the modes move too fast or a root finder failed)", t)
            }
            PathStop::NoStart(why) => format!("no start in the uncoupled limit: {why}"),
        }
    }
}

/// The path from the uncoupled limit to the requested value, for the report.
#[derive(Clone, Debug)]
pub struct Path {
    /// The coupling parameter's name.
    pub parameter: String,
    /// Its requested value.
    pub target: Complex64,
    /// How far the path got, as a fraction t of the way (1 when reached).
    pub reached: f64,
    /// Steps accepted.
    pub accepted: usize,
    /// Steps rejected (and tried again shorter).
    pub rejected: usize,
    /// Σ |Δω| along the accepted steps, per overtone.
    pub length: Vec<f64>,
    /// The modes in the uncoupled limit (p = 0), per overtone, when found.
    pub start: Vec<Option<Complex64>>,
    /// Where the seeds in the uncoupled limit came from.
    pub start_from: String,
    /// Why the path stopped.
    pub stop: PathStop,
}

/// The joint index of the coupling parameter: a parameter with a value
/// (not the frequency, not a link's target, not a parameter of the angular
/// equation) whose zero makes every angular link vanish identically. The
/// first such one in the joint order when there are several (one whose
/// value is already zero first: the problem is then uncoupled as given).
pub fn coupling_parameter(c: &Coupling) -> Result<usize> {
    let angular_links: Vec<_> = c.links.iter().filter(|l| l.angular).collect();
    if angular_links.is_empty() && c.angular.joint_of.contains(&c.freq) {
        return Err(usage(format!(
            "the angular equation holds the frequency {} itself: no linked parameter switches the coupling off for a start without a seed; give {opt_guess} (or write the angular equation in c = aω and link it, {opt_link} 'c = a*omega')",
            c.names[c.freq],
            opt_link = RequestInput::Link(0).mention(),
            opt_guess = RequestInput::Guess.mention()
        )));
    }
    if angular_links.is_empty() {
        return Err(usage(format!(
            "no {opt_link} sets a parameter of the angular equation: there is no coupling to switch off; give {opt_guess}",
            opt_link = RequestInput::Link(0).mention(),
            opt_guess = RequestInput::Guess.mention()
        )));
    }
    let candidates: Vec<usize> = (1..c.names.len())
        .filter(|i| *i != c.freq && c.fixed[*i].is_some())
        .filter(|i| !c.links.iter().any(|l| l.slot == *i) && !c.angular.joint_of.contains(i))
        .filter(|i| angular_links.iter().all(|l| !l.expr.is_zero() && l.expr.num().terms().iter().all(|(m, _)| m.exp(*i) >= 1)))
        .collect();
    let zero_first = candidates.iter().copied().find(|i| c.fixed[*i].is_some_and(|v| v.norm() == 0.0));
    zero_first.or(candidates.first().copied()).ok_or_else(|| {
        let targets: Vec<&str> = angular_links.iter().map(|l| l.target.as_str()).collect();
        usage(format!(
            "no parameter switches the coupling off: none with a value makes every angular link ({}) vanish when it is 0; give {opt_guess}",
            targets.join(", "),
            opt_guess = RequestInput::Guess.mention()
        ))
    })
}

/// Seeds for the overtones of a radial problem with every parameter given
/// (`sub`, substituted except the frequency): the WKB estimates at a
/// barrier when every overtone has one, else the global spectral method's
/// eigenvalues. Empty when neither gives any.
pub fn uncoupled_seeds(sub: &Reduction, opts: &SpectrumOptions) -> (Vec<Complex64>, String) {
    use super::boundary::{try_problem, Location, SpectrumKind};
    let Ok(bp) = try_problem(sub, &opts.values, opts.freq, SpectrumKind::Quasinormal, None) else {
        return (Vec::new(), "no boundary problem could be set up".into());
    };
    if let Location::At(h) = bp.ends[0].location {
        if let Ok(est) = super::spectrum::barrier_estimates(sub, opts, h, super::wkb::SEED_ORDER) {
            let wkb: Option<Vec<Complex64>> =
                (opts.overtones.0..=opts.overtones.1).map(|n| est(n).and_then(|b| b.series.seed()).map(|s| s.0)).collect();
            if let Some(w) = wkb {
                return (w, format!("WKB order {} at the barrier top", super::wkb::SEED_ORDER));
            }
        }
    }
    (super::global::seeds(&bp, opts.overtones), "the global spectral method (eigenvalues two Chebyshev grids agree on)".into())
}

/// The values along the path at t: the coupling parameter (joint index `p`,
/// radial field index `radial`) at t·target.
fn at_t(coupling: &mut Coupling, opts: &SpectrumOptions, p: usize, radial: Option<usize>, value: &GRat) -> SpectrumOptions {
    let (re, im) = value.to_f64();
    coupling.fixed[p] = Some(Complex64::new(re, im));
    let mut o = opts.clone();
    if let Some(r) = radial {
        o.values[r] = value.clone();
    }
    o.guess = None;
    o
}

/// The extrapolation in t through the last (up to three) accepted points.
fn predict(hist: &[(f64, Vec<Complex64>)], t: f64) -> Vec<Complex64> {
    let pts = &hist[hist.len().saturating_sub(3)..];
    let n = pts[0].1.len();
    (0..n)
        .map(|k| {
            pts.iter()
                .enumerate()
                .map(|(i, (ti, w))| {
                    let l: f64 = pts.iter().enumerate().filter(|(j, _)| *j != i).map(|(_, (tj, _))| (t - tj) / (ti - tj)).product();
                    w[k] * l
                })
                .sum()
        })
        .collect()
}

/// The converged values of a solve, when every overtone converged.
fn all_converged(found: &[CoupledMode]) -> Option<Vec<Complex64>> {
    found.iter().map(|c| c.mode.root.converged.then_some(c.mode.root.omega)).collect()
}

/// The radial recurrence for the whole path, derived once with the
/// coupling parameter (radial field index `pr`) kept symbolic besides the
/// linked parameters and the frequency; `None` when it cannot be derived
/// (each step then derives its own at its exact point).
fn path_recurrence(red: &Reduction, coupling: &Coupling, opts: &SpectrumOptions, pr: Option<usize>) -> Option<(Reduction, Recurrence, Setup)> {
    let k = &red.field;
    let mut keep: Vec<usize> = coupling.links.iter().filter(|l| !l.angular).filter_map(|l| k.names().iter().position(|x| *x == l.target)).collect();
    keep.push(opts.freq);
    keep.extend(pr);
    let sym = super::spectrum::substitute_keeping(red, &opts.values, &keep).ok()?;
    let (rec, setup) = super::spectrum::qnm_recurrence(&sym, opts).ok()?;
    (rec.coeffs.len() >= 3).then_some((sym, rec, setup))
}

/// The modes of every overtone at the options' values (the coupling
/// parameter in them) from `seeds`, when all converged: on the path's own
/// recurrence (the horizon root θ found again at the values, the one
/// nearest its last value), else by a full coupled solve.
fn step_modes(
    red: &Reduction,
    coupling: &Coupling,
    path_rec: &mut Option<(Reduction, Recurrence, Setup)>,
    o: &SpectrumOptions,
) -> Option<Vec<Complex64>> {
    let none = |_: u32| None;
    match path_rec {
        Some((sym, rec, setup)) => {
            if let Some((f, zr, _)) = &mut setup.theta {
                let roots = crate::analysis::numeric::Values::new(o.values.clone()).roots(f)?;
                let near = roots
                    .iter()
                    .filter(|z| z.im.abs() < 1e-10 * z.re.abs().max(1.0))
                    .min_by(|a, b| (a.re - *zr).abs().total_cmp(&(b.re - *zr).abs()))?;
                *zr = near.re;
            }
            let found = super::coupled::coupled_modes(coupling, rec, setup, o, &sym.field, &none).ok()?;
            found.iter().map(|(m, _)| m.root.converged.then_some(m.root.omega)).collect()
        }
        None => {
            let (_, found) = coupled_spectrum(red, coupling, o, false, &none).ok()?;
            all_converged(&found)
        }
    }
}

/// The coupled modes at the requested values with no seed: from the
/// uncoupled limit of the coupling parameter, continued to its value, then
/// polished there by the coupled solve of the exact point (with `check`,
/// checked by direct integration). The modes are unconverged, with the
/// reason, when the path did not get there.
pub fn continued_spectrum(red: &Reduction, coupling: &mut Coupling, opts: &SpectrumOptions, check: bool) -> Result<(Setup, Vec<CoupledMode>, Path)> {
    let p = coupling_parameter(coupling)?;
    let pname = coupling.names[p].clone();
    let radial = red.field.names().iter().position(|n| *n == pname).filter(|i| *i > 0);
    let target = match radial {
        Some(r) => opts.values[r].clone(),
        None => {
            let v = coupling.fixed[p].unwrap_or_default();
            GRat { re: exact_double(v.re).re, im: exact_double(v.im).re }
        }
    };
    let (tre, tim) = target.to_f64();
    let none = |_: u32| None;
    let mut path = Path {
        parameter: pname.clone(),
        target: Complex64::new(tre, tim),
        reached: 0.0,
        accepted: 0,
        rejected: 0,
        length: vec![0.0; (opts.overtones.1 - opts.overtones.0 + 1) as usize],
        start: Vec::new(),
        start_from: String::new(),
        stop: PathStop::Reached,
    };
    // The uncoupled limit: seeds of the radial problem with the linked
    // radial parameters at their values there.
    let zero = GRat::zero();
    let o0 = at_t(coupling, opts, p, radial, &zero);
    let (seeds, from) = match limit_values(red, coupling, &o0) {
        Ok(values) => {
            let lim = SpectrumOptions { values, ..o0.clone() };
            let sub = super::spectrum::substitute(red, &lim.values, lim.freq)?;
            uncoupled_seeds(&sub, &lim)
        }
        Err(e) => (Vec::new(), e.message),
    };
    path.start_from = from.clone();
    if seeds.is_empty() {
        path.stop = PathStop::NoStart(format!("no seed for the uncoupled radial problem ({from})"));
        return unreached(red, coupling, opts, p, radial, &target, path);
    }
    let at_zero = target.is_zero();
    let (setup, found) = coupled_spectrum(red, coupling, &SpectrumOptions { seeds, ..o0.clone() }, check && at_zero, &none)?;
    path.start = found.iter().map(|c| c.mode.root.converged.then_some(c.mode.root.omega)).collect();
    let Some(first) = all_converged(&found) else {
        let why = found.iter().find(|c| !c.mode.root.converged).map(|c| c.mode.root.stop.text()).unwrap_or_default();
        path.stop = PathStop::NoStart(format!("the coupled root finder did not converge at {pname} = 0 ({why})"));
        return unreached(red, coupling, opts, p, radial, &target, path);
    };
    if at_zero {
        path.reached = 1.0;
        return Ok((setup, relabel(found, &path), path));
    }
    let mut path_rec = path_recurrence(red, coupling, opts, radial);
    // t = k / 2^j, exact.
    let mut hist: Vec<(f64, Vec<Complex64>)> = vec![(0.0, first)];
    let (mut k, mut j) = (0u64, FIRST_STEP_LOG2);
    let mut step = 1u64; // in units of 2^-j
    let mut attempts = 0usize;
    while k < 1u64 << j {
        if attempts >= MAX_ATTEMPTS {
            path.stop = PathStop::AttemptLimit;
            return unreached(red, coupling, opts, p, radial, &target, path);
        }
        attempts += 1;
        let next = (k + step).min(1u64 << j);
        let t = Rat::new(Int::from(next as i64), Int::from(2).pow(j)).expect("nonzero");
        let tf = t.to_f64();
        let value = target.mul(&GRat::real(t));
        let o = at_t(coupling, opts, p, radial, &value);
        let pred = predict(&hist, tf);
        let last = hist.last().map(|h| h.1.clone()).unwrap_or_default();
        let verdict = step_modes(
            red,
            coupling,
            &mut path_rec,
            &SpectrumOptions { seeds: pred.clone(), seeds_from: super::spectrum::SeedSource::Neighbour, ..o },
        )
        .map(|w| {
            let worst = w.iter().zip(&pred).zip(&last).map(|((w, q), l)| (w - q).norm() / w.norm().max(l.norm()).max(1e-300)).fold(0.0, f64::max);
            (w, worst)
        });
        match verdict {
            Some((w, worst)) if worst <= MAX_CORRECTION => {
                for (len, (a, b)) in path.length.iter_mut().zip(w.iter().zip(&last)) {
                    *len += (a - b).norm();
                }
                path.accepted += 1;
                path.reached = tf;
                k = next;
                hist.push((tf, w));
                // Grow: double when the prediction was good.
                if worst <= MAX_CORRECTION / 4.0 {
                    step *= 2;
                }
                // Keep k/2^j in lowest terms of the step size.
                while step.is_multiple_of(2) && k.is_multiple_of(2) && j > 0 {
                    step /= 2;
                    k /= 2;
                    j -= 1;
                }
            }
            _ => {
                path.rejected += 1;
                if step > 1 {
                    step /= 2;
                } else if j < MIN_STEP_LOG2 {
                    j += 1;
                    k *= 2;
                } else {
                    path.stop = PathStop::StepTooShort(path.reached);
                    return unreached(red, coupling, opts, p, radial, &target, path);
                }
            }
        }
    }
    // The polish at the requested point, from the path's end (on the
    // path's recurrence, at the values: the same numbers as the exact
    // point's, whose horizon is a numeric root too).
    let o = at_t(coupling, opts, p, radial, &target);
    let seeds = hist.last().map(|h| h.1.clone()).unwrap_or_default();
    let o = SpectrumOptions { seeds, ..o };
    let (setup, found) = match &path_rec {
        Some((sym, rec, setup)) => (setup.clone(), super::coupled::coupled_solve(sym, rec, setup, coupling, &o, check, &none)?),
        None => coupled_spectrum(red, coupling, &o, check, &none)?,
    };
    Ok((setup, relabel(found, &path), path))
}

/// The values of the radial equation in the uncoupled limit: the linked
/// radial parameters at their values there (the angular eigenvalue exact);
/// an error when a link still depends on the frequency there.
fn limit_values(red: &Reduction, coupling: &Coupling, o: &SpectrumOptions) -> Result<Vec<GRat>> {
    let ang = &coupling.angular;
    let Some((a0, _)) = &ang.seed else {
        return Err(usage(format!("no exact value of the angular eigenvalue {} where the coupling vanishes", ang.eigen_name)));
    };
    let mut values = o.values.clone();
    for l in coupling.links.iter().filter(|l| !l.angular) {
        let at = |w: Complex64| {
            let mut v: Vec<Complex64> = coupling.fixed.iter().map(|x| x.unwrap_or_default()).collect();
            v[coupling.freq] = w;
            for a in coupling.links.iter().filter(|a| a.angular) {
                v[a.slot] = Complex64::new(0.0, 0.0);
            }
            v[ang.joint_of[ang.eigen]] = *a0;
            super::eval_at(&l.expr, &v)
        };
        let (Some(x), Some(y)) = (at(Complex64::new(0.3, -0.1)), at(Complex64::new(0.7, -0.4))) else {
            return Err(usage(format!("the link for {} has a zero denominator in the uncoupled limit", l.target)));
        };
        if (x - y).norm() > 1e-12 * x.norm().max(1.0) {
            return Err(usage(format!("the link for {} still depends on the frequency where the coupling vanishes", l.target)));
        }
        if let Some(i) = red.field.names().iter().position(|n| *n == l.target).filter(|i| *i > 0) {
            // A seed only: a short exact value (2^-30) keeps the exact work small.
            let round = |v: f64| (v * (1u64 << 30) as f64).round() / (1u64 << 30) as f64;
            values[i] = GRat { re: exact_double(round(x.re)).re, im: exact_double(round(x.im)).re };
        }
    }
    Ok(values)
}

/// Every mode's seed named after the path that gave it.
fn relabel(found: Vec<CoupledMode>, path: &Path) -> Vec<CoupledMode> {
    found
        .into_iter()
        .map(|mut c| {
            c.mode.seed.1 = format!(
                "continued in {} from 0 ({} steps accepted, {} rejected; start from {})",
                path.parameter, path.accepted, path.rejected, path.start_from
            );
            c
        })
        .collect()
}

/// The report of a path that did not reach the requested value: the
/// set-up there, and every overtone unconverged with the reason.
#[allow(clippy::too_many_arguments)]
fn unreached(
    red: &Reduction,
    coupling: &mut Coupling,
    opts: &SpectrumOptions,
    p: usize,
    radial: Option<usize>,
    target: &GRat,
    path: Path,
) -> Result<(Setup, Vec<CoupledMode>, Path)> {
    let o = at_t(coupling, opts, p, radial, target);
    let (_, (_, setup)) = super::coupled::radial_recurrence(red, coupling, &o)?;
    let why = format!(
        "no seed: the continuation in {} from 0 {}; give {opt_guess}",
        path.parameter,
        path.stop.text(),
        opt_guess = RequestInput::Guess.mention()
    );
    let modes = (opts.overtones.0..=opts.overtones.1)
        .map(|n| {
            let root = CfRoot::failed(Complex64::new(f64::NAN, f64::NAN), n as usize, StopReason::Rejected(why.clone()));
            let mode = Mode { n, root, seed: (Complex64::new(f64::NAN, f64::NAN), "none".into()), method: ModeMethod::ContinuedFraction };
            CoupledMode { mode, angular: None, check: None }
        })
        .collect();
    Ok((setup, modes, path))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn extrapolation_is_exact_for_quadratics() {
        let f = |t: f64| vec![Complex64::new(1.0 + 2.0 * t - 3.0 * t * t, t)];
        let hist: Vec<(f64, Vec<Complex64>)> = [0.0, 0.25, 0.5].iter().map(|t| (*t, f(*t))).collect();
        let p = predict(&hist, 0.875);
        assert!((p[0] - f(0.875)[0]).norm() < 1e-12);
        // One point: constant.
        assert_eq!(predict(&hist[..1], 0.5), f(0.0));
    }
}
