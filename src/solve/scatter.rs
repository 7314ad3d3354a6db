//! Scattering at real frequencies: transmission and reflection coefficients
//! (greybody factors) of a potential barrier between two ends of the
//! equation, and the absorption cross-section summed over a multipole index.
//!
//! The ends are those of the quasinormal-mode problem (`spectrum.rs` picks
//! them from the analysis): the near end is a regular singular point (a
//! horizon, or a regular end) where the solution is the Frobenius series with
//! the ingoing exponent; the far end is either z = ∞ of Poincaré rank 1, with
//! the branches exp(μz) z^ν (1 + Σ d_k z^(−k)) (asymptotic series), or a
//! second regular singular point with its two Frobenius branches. The branch
//! picked there for the modes (leaving the barrier) is the reflected wave, the
//! other one the incident wave. At a real ω the near solution y_h is summed
//! near its end and continued by Taylor steps to a matching point z_m beyond
//! the barrier (past the outermost point where the normal form's Q < 0 at a
//! regular-infinity end; the far branches' own start point at a regular far
//! end), so that it crosses the barrier in the stable direction; each far
//! branch is started where it is recessive (at ∞: on the ray where it is
//! smallest relative to the other, as in `integrate.rs`) and continued to
//! z_m; there y_h = a·u_in + b·u_out by a 2 × 2 solve.
//!
//! Fluxes. For real coefficients the conjugate of a solution is a solution,
//! and `J[y]` = Im(ȳ y') e^{∫B/A} is constant (the Wronskian of y and ȳ, common
//! practice). All fluxes are taken at z_m, where the weight e^{∫B/A} is one
//! common factor, so it cancels from the ratios:
//! transmission |T|² = `J[y_h] / (|a|² J[u_in])` (the transmitted over the
//! incident flux: the greybody factor), reflection |R|² =
//! `|b|² |J[u_out]| / (|a|² |J[u_in]|)`. Neither depends on how the branches are normalised.
//! Since the two far branches are computed independently, the identity
//! |R|² + |T|² = 1 holds only as far as they are truly each other's complex
//! conjugates (the cross term of J vanishes); `flux_error` = |R|² + |T|² − 1
//! is its measure. For a rotating background the horizon's ingoing wave
//! carries the flux of e^{−i(ω − mΩ_H)r*}, so this transmission is
//! ((ω − mΩ_H)/ω) times the amplitude ratio |1/A_in|²: the generalised
//! identity needs no Ω_H, and a negative transmission (|R|² > 1) is
//! superradiance, reported as a result. The whole evaluation is repeated
//! with the matching point moved and finer steps (the refined parameters of
//! `integrate.rs`); the change of |T|² is `matching_change`.

use super::integrate::{continue_along, frobenius, from_infinity, horizon, recessive_ray, Asymptote, Coeffs, Far, Params, REFINED, STANDARD};
use super::spectrum::{eval_in_omega, in_omega, Setup, SpectrumOptions};
use super::{NPoly, NumOde};
use crate::algebra::{GRat, Rat, RatFunc};
use crate::analysis::{Place, PointId};
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;
use num_complex::Complex64;
use std::f64::consts::PI;

/// A function of ω alone: numerator and denominator.
type InOmega = (NPoly, NPoly);

/// The far end of the scattering problem.
#[derive(Clone, Debug)]
pub enum FarEnd {
    /// z = ∞ of rank 1: μ(ω), ν(ω) of the reflected branch (the incident one follows from the equation).
    Infinity {
        /// μ of the reflected branch.
        mu: InOmega,
        /// ν of the reflected branch.
        nu: InOmega,
    },
    /// A regular singular point: its place and the exponents of the reflected and the incident branch.
    Point {
        /// The point.
        at: f64,
        /// Exponent of the reflected branch (the one picked for the modes).
        out: InOmega,
        /// Exponent of the incident branch (the other one).
        inc: InOmega,
    },
}

/// Everything a frequency needs, numeric only (shared by the worker threads).
#[derive(Clone, Debug)]
pub struct Problem {
    /// The equation A y'' + B y' + C y = 0 with the parameters substituted.
    pub ode: NumOde,
    /// The near end (regular singular) and its ingoing exponent.
    pub near: f64,
    /// ρ(ω) of the ingoing solution at the near end.
    pub rho: InOmega,
    /// The far end.
    pub far: FarEnd,
    /// The near end's label, as text.
    pub near_label: String,
    /// The far end's label, as text.
    pub far_label: String,
}

impl Problem {
    /// ρ(ω) of the ingoing solution at the near end.
    pub fn rho_at(&self, w: Complex64) -> Complex64 {
        eval_in_omega(&self.rho, w)
    }
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// The exact exponent picked (or, with `other`, not picked) at the finite point `id`.
fn point_exponent(red: &Reduction, setup: &Setup, id: &PointId, other: bool) -> Result<(RatFunc, RatFunc)> {
    let k = &red.field;
    let label = id.text(k.names());
    let (at, pt) = match (id, setup.analysis.point(id)) {
        (PointId::At(at), Some(p)) => (at.clone(), p),
        _ => return Err(usage(format!("the end {label} is not a singular point of a linear factor"))),
    };
    let pick = setup.picks.iter().find(|(p, _)| p == id).map(|(_, c)| c - 1).ok_or_else(|| usage(format!("no exponent was picked at {label}")))?;
    if pt.unknown_exponents.len() != 2 {
        return Err(usage(format!("the end {label} does not have two exponents")));
    }
    let i = if other { 1 - pick.min(1) } else { pick };
    let e = pt.unknown_exponents[i].exact_value(k).ok_or_else(|| usage(format!("the exponent at {label} is not exact in the parameters")))?;
    Ok((at, e))
}

/// Builds the scattering problem from the quasinormal-mode choices (`setup`)
/// of an equation whose parameters other than ω are substituted (`red`).
pub fn problem(red: &Reduction, opts: &SpectrumOptions, setup: &Setup) -> Result<Problem> {
    let k = &red.field;
    if setup.theta.is_some() {
        return Err(usage("the horizon is a root of an irreducible quadratic factor: scattering needs it at a rational point"));
    }
    let ode = super::try_num_ode(k, &red.p, &red.q, &opts.values, opts.freq)?;
    let (_, rho) = point_exponent(red, setup, &setup.place, false)?;
    // Infinity when it is an end of the problem, else the other picked point
    // (a pick inside the horizon, such as an inner horizon, is not an end).
    let others: Vec<&PointId> = setup.picks.iter().map(|(p, _)| p).filter(|p| **p != setup.place).collect();
    let far_id = others
        .iter()
        .find(|p| ***p == PointId::Infinity)
        .or_else(|| others.first())
        .map(|p| (*p).clone())
        .ok_or_else(|| usage("the problem has only one end: no far end to scatter to"))?;
    let far_label = far_id.text(k.names());
    let vals: Vec<Complex64> = opts.values.iter().map(|g| g.to_f64()).map(|(re, im)| Complex64::new(re, im)).collect();
    let far = if far_id == PointId::Infinity {
        let an = &setup.analysis;
        let inf = an.points.iter().find(|p| matches!(p.place, Place::Infinity)).ok_or_else(|| usage("infinity is not listed"))?;
        let bi =
            setup.picks.iter().find(|(p, _)| *p == PointId::Infinity).map(|(_, c)| c - 1).ok_or_else(|| usage("no branch was picked at infinity"))?;
        let f = inf.formal.get(bi).ok_or_else(|| usage("no formal solution at infinity"))?;
        if f.exponent.len() != 1 {
            return Err(usage("infinity is not of rank 1: scattering needs the branches exp(μz) z^ν"));
        }
        let mu = f.exponent.iter().find(|(pw, _)| pw.is_integer() && pw.numer().is_one()).map(|(_, c)| c.clone());
        let mu = mu.ok_or_else(|| usage("infinity is not of rank 1"))?;
        let p1 = crate::analysis::p_at_infinity_pub(k, &red.p)?;
        // ν of the unknown = ρ of ψ − p₁/2 (the prefactor's power at infinity).
        let nu = k.sub(&f.rho, &k.mul(&RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero")), &p1)?)?;
        FarEnd::Infinity { mu: in_omega(&mu, opts), nu: in_omega(&nu, opts) }
    } else {
        let (at, out) = point_exponent(red, setup, &far_id, false)?;
        let (_, inc) = point_exponent(red, setup, &far_id, true)?;
        let at = super::eval_at(&at, &vals)
            .filter(|z| z.im == 0.0 && z.re.is_finite())
            .ok_or_else(|| usage(format!("the end {far_label} is not real")))?;
        FarEnd::Point { at: at.re, out: in_omega(&out, opts), inc: in_omega(&inc, opts) }
    };
    Ok(Problem { ode, near: setup.horizon_value, rho: in_omega(&rho, opts), far, near_label: setup.horizon.clone(), far_label })
}

/// An affine function of ω as a rational function of ω alone.
fn affine_in_omega(a: super::global::Affine) -> InOmega {
    (NPoly { c: vec![vec![a.c0, a.c1]] }, NPoly { c: vec![vec![Complex64::new(1.0, 0.0)]] })
}

/// The scattering problem on the typed boundary problem of the normal form
/// (`boundary::try_problem`: ends located numerically as roots of factors of
/// any degree, exponents fitted affine in ω), for horizons the exact route
/// cannot place at a rational point (e.g. Kerr's r₊ = M + √(M² − a²)). ψ of
/// the normal form scatters as the unknown does: the fluxes are compared at
/// one point.
fn problem_between_ends(red: &Reduction, opts: &SpectrumOptions) -> Result<Problem> {
    use super::boundary::{location_text, Condition, Location, Nature, SpectrumKind};
    let bp = super::boundary::try_problem(red, &opts.values, opts.freq, SpectrumKind::Quasinormal, None)?;
    let [near, far] = &bp.ends;
    let Location::At(z0) = near.location else { return Err(usage("the near end must be a finite point")) };
    if near.condition != Condition::IntoHorizon {
        return Err(usage("the near end is not a horizon: scattering needs the ingoing solution there"));
    }
    let rho = super::global::end_exponent(&bp, z0, Condition::IntoHorizon)?;
    let far_end = match (far.location, far.nature) {
        (Location::Infinity, Nature::IrregularRank1) => {
            let f = super::global::factors(&bp).map_err(|e| {
                if e.message.contains("not affine") {
                    usage("the wave number at infinity is not linear in ω (a massive field's √(ω² − μ²)): scattering is set up for waves e^(±iωr) at infinity, not yet for massive fields (their quasinormal modes and quasi-bound states are solved by spectrum)")
                } else {
                    e
                }
            })?;
            let mu = f.exp_rate.ok_or_else(|| usage("no exponential rate at infinity"))?;
            FarEnd::Infinity { mu: affine_in_omega(mu), nu: affine_in_omega(f.right) }
        }
        (Location::At(z1), Nature::Horizon) => FarEnd::Point {
            at: z1,
            out: affine_in_omega(super::global::end_exponent(&bp, z1, Condition::IntoHorizon)?),
            inc: affine_in_omega(super::global::end_exponent(&bp, z1, Condition::OutOfHorizon)?),
        },
        _ => return Err(usage("the far end is neither an irregular infinity nor a horizon: no incident and reflected waves there")),
    };
    Ok(Problem {
        ode: bp.ode.clone(),
        near: z0,
        rho: affine_in_omega(rho),
        far: far_end,
        near_label: format!("{} ({})", location_text(near.location), near.found),
        far_label: location_text(far.location),
    })
}

/// The scattering data at one real frequency.
#[derive(Clone, Debug, PartialEq)]
pub struct Scattering {
    /// The frequency.
    pub omega: f64,
    /// |T|²: transmitted over incident flux (the greybody factor; negative under superradiance).
    pub transmission: f64,
    /// |R|²: reflected over incident flux.
    pub reflection: f64,
    /// |R|² + |T|² − 1.
    pub flux_error: f64,
    /// |Δ|T|²| when the matching point is moved and the steps refined.
    pub matching_change: f64,
    /// Where the matching point was (refined evaluation).
    pub matching_point: f64,
    /// Taylor steps of the refined evaluation.
    pub steps: usize,
    /// The second method where it applies: the WKB transmission at the barrier
    /// (`wkb::wkb_transmission`), meaningful near and above the barrier top; `None` when not computed.
    pub wkb_transmission: Option<f64>,
    /// With a coupled angular equation: the angular eigenvalue, then each
    /// radial link's target (the separation constant) at this frequency.
    pub linked: Vec<(String, Complex64)>,
}

/// (|T|², |R|², flux error, matching point, steps) at ω with one set of discretisation parameters.
fn evaluate(pb: &Problem, w: f64, p: &Params) -> std::result::Result<(f64, f64, f64, f64, usize), String> {
    if !(w.is_finite() && w != 0.0) {
        return Err("the frequency must be finite and non-zero".into());
    }
    let wc = Complex64::new(w, 0.0);
    let k = Coeffs::at(&pb.ode, wc)?;
    // Flux conservation needs real coefficients.
    let big = k.a.iter().chain(&k.b).chain(&k.c).map(|x| x.norm()).fold(0.0, f64::max);
    if k.a.iter().chain(&k.b).chain(&k.c).any(|x| x.im.abs() > 1e-14 * big) {
        return Err("the equation is not real at this frequency: its fluxes are not conserved".into());
    }
    let rho = eval_in_omega(&pb.rho, wc);
    let hz = horizon(&k, pb.near)?;
    let mut roots = hz.others.clone();
    roots.push(Complex64::new(pb.near, 0.0));
    let mut steps = 0;
    let (z_m, (yh, dyh), u_out, u_in) = match &pb.far {
        FarEnd::Infinity { mu, nu } => {
            let far = Far::new(&k, eval_in_omega(mu, wc), eval_in_omega(nu, wc))?;
            let inc = Far::new(&k, far.mu2, far.nu2)?;
            let d = if hz.d.is_finite() { hz.d } else { 1.0 + pb.near.abs() };
            // Match beyond the barrier, where both far branches oscillate: continuing them
            // inwards through a forbidden region would leave both dominated by one solution.
            let s1 = pb.near + p.start_fraction * d;
            let z_m = match outermost_forbidden(&k, s1, d) {
                Some(zf) => pb.near + (zf - pb.near) * (1.0 + 1.5 * p.start_fraction),
                None => s1,
            };
            let z_m = Complex64::new(z_m, 0.0);
            let y1 = frobenius(&hz, rho, s1 - pb.near)?;
            let yh = continue_along(&k, &roots, Complex64::new(s1, 0.0), z_m, y1.0, y1.1, p, d, &mut steps)?;
            let mut branch = |f: &Far| -> std::result::Result<(Complex64, Complex64), String> {
                let ray = recessive_ray(f, &hz.others, z_m)?;
                from_infinity(&k, &Asymptote::Series(f), &roots, z_m, ray, (4.0 / (f.mu - f.mu2).norm()).max(d), z_m, p, &mut steps)
            };
            let u_out = branch(&far)?;
            let u_in = branch(&inc)?;
            (z_m.re, yh, u_out, u_in)
        }
        FarEnd::Point { at, out, inc } => {
            let hf = horizon(&k, *at)?;
            let len = (at - pb.near).abs();
            let dir = (at - pb.near).signum();
            // Start each series well inside its disc, match at a point between them.
            let s1 = pb.near + dir * p.start_fraction * hz.d.min(len);
            let s2 = at - dir * p.start_fraction * hf.d.min(len);
            // Matching where the far branches start: y_h is carried across the
            // barrier in the stable direction, the far branches not at all.
            let z_m = s2;
            let hcap = len / 8.0;
            let zc = |x: f64| Complex64::new(x, 0.0);
            let y1 = frobenius(&hz, rho, s1 - pb.near)?;
            let yh = continue_along(&k, &roots, zc(s1), zc(z_m), y1.0, y1.1, p, hcap, &mut steps)?;
            let mut at_far = |e: &InOmega| -> std::result::Result<(Complex64, Complex64), String> {
                let y = frobenius(&hf, eval_in_omega(e, wc), s2 - at)?;
                continue_along(&k, &roots, zc(s2), zc(z_m), y.0, y.1, p, hcap, &mut steps)
            };
            let u_out = at_far(out)?;
            let u_in = at_far(inc)?;
            (z_m, yh, u_out, u_in)
        }
    };
    let wr = |a: (Complex64, Complex64), b: (Complex64, Complex64)| a.0 * b.1 - a.1 * b.0;
    let w0 = wr(u_in, u_out);
    if w0.norm() == 0.0 || !(w0.re.is_finite() && w0.im.is_finite()) {
        return Err("the two far branches are not independent at the matching point".into());
    }
    let y = (yh, dyh);
    let a = wr(y, u_out) / w0;
    let b = wr(u_in, y) / w0;
    let flux = |u: (Complex64, Complex64)| (u.0.conj() * u.1).im;
    let (jh, jin, jout) = (flux(y), flux(u_in), flux(u_out));
    if jin == 0.0 || !jin.is_finite() {
        return Err("the incident branch carries no flux at this frequency".into());
    }
    let t2 = jh / (a.norm_sqr() * jin);
    let r2 = -b.norm_sqr() * jout / (a.norm_sqr() * jin);
    let err = t2 + r2 - 1.0;
    if !(t2.is_finite() && r2.is_finite()) {
        return Err("the transmission or reflection coefficient is not finite".into());
    }
    Ok((t2, r2, err, z_m, steps))
}

/// Q = C/A − (B/A)²/4 − (B/A)'/2 of the normal form at a real z (its real part).
fn normal_q(k: &Coeffs, z: f64) -> f64 {
    let zc = Complex64::new(z, 0.0);
    let ev = |p: &[Complex64]| p.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, c| acc * zc + c);
    let dv = |p: &[Complex64]| p.iter().enumerate().skip(1).rev().fold(Complex64::new(0.0, 0.0), |acc, (i, c)| acc * zc + c * i as f64);
    let (a, b, c, da, db) = (ev(&k.a), ev(&k.b), ev(&k.c), dv(&k.a), dv(&k.b));
    let pp = b / a;
    let dp = (db * a - b * da) / (a * a);
    (c / a - pp * pp / 4.0 - dp / 2.0).re
}

/// The outermost point of a geometric scan outwards from `s1` (ratio 1.1 in the
/// distance from it, out to 10⁶ d) where Q < 0: the far edge of the barrier
/// at this frequency; `None` when Q ≥ 0 on the whole scan or still negative at its end.
fn outermost_forbidden(k: &Coeffs, s1: f64, d: f64) -> Option<f64> {
    let mut last = None;
    let mut r = 0.0;
    let mut step = d / 16.0;
    let mut negative_at_end = false;
    while r <= 1e6 * d {
        let z = s1 + r;
        let q = normal_q(k, z);
        negative_at_end = q.is_finite() && q < 0.0;
        if negative_at_end {
            last = Some(z);
        }
        r += step;
        step *= 1.1;
    }
    if negative_at_end {
        None
    } else {
        last
    }
}

/// The scattering data at ω: both discretisations, the refined values reported.
pub fn scatter_at(pb: &Problem, w: f64) -> std::result::Result<Scattering, String> {
    let (t1, ..) = evaluate(pb, w, &STANDARD)?;
    let (t2, r2, err, z_m, steps) = evaluate(pb, w, &REFINED)?;
    Ok(Scattering {
        omega: w,
        transmission: t2,
        reflection: r2,
        flux_error: err,
        matching_change: (t2 - t1).abs(),
        matching_point: z_m,
        steps,
        wkb_transmission: None,
        linked: Vec::new(),
    })
}

/// σ = Σ_l (2l + 1) π T_l / ω² (the absorption cross-section of a scalar
/// wave, common practice), from the transmission of each multipole.
pub fn cross_section(omega: f64, terms: &[(i64, f64)]) -> f64 {
    terms.iter().map(|(l, t)| (2 * l + 1) as f64 * PI * t / (omega * omega)).sum()
}

/// Writes a plot, SVG or PNG by the file's extension: each curve (name,
/// points (ω, value)) against ω.
pub fn plot(path: &std::path::Path, title: &str, ylabel: &str, curves: &[(String, Vec<(f64, f64)>)]) -> std::result::Result<(), String> {
    super::plot::plot_curves(path, title, "ω", ylabel, curves)
}

/// What a scattering computation is asked for besides the equation.
#[derive(Debug)]
pub struct ScatterRequest {
    /// The frequency's name when given; else a conventional name.
    pub frequency: Option<String>,
    /// Values of the other parameters (name, exact value, span in the caller's text).
    pub values: Vec<(String, GRat, crate::syntax::Span)>,
    /// The multipole parameter summed for the cross-section, and its range (inclusive).
    pub sum: Option<(String, i64, i64)>,
    /// The WKB order of the second method.
    pub wkb_order: usize,
    /// An angular equation sharing the separation constant, solved at every frequency.
    pub couple: Option<super::request::CoupleRequest>,
}

/// The problems of a scattering computation, set up once: one per
/// multipole (one alone without a sum), with the barrier's Taylor series for
/// the WKB transmission where there is a barrier.
#[derive(Debug)]
pub struct ScatterSetup {
    /// The frequency's name.
    pub frequency: String,
    /// The near end (a horizon or regular end), as text.
    pub near: String,
    /// The far end, as text.
    pub far: String,
    /// The summed multipole parameter's name and range, when summing.
    pub sum: Option<(String, i64, i64)>,
    /// Multipole value (0 without a sum), problem, barrier Taylor series.
    problems: Vec<(i64, Problem, Option<Vec<Complex64>>)>,
    wkb_order: usize,
    /// With a coupled angular equation: what each frequency's problem is
    /// built from, one per multipole (each behind a lock: the exact layer's
    /// caches are not shared between threads, so the frequencies of one
    /// multipole run one at a time).
    coupled: Vec<std::sync::Mutex<CoupledScatter>>,
}

/// A scattering problem whose separation constant comes from an angular
/// equation at each frequency (Kerr: the spheroidal eigenvalue at c = aω).
#[derive(Debug)]
struct CoupledScatter {
    coupling: super::coupled::Coupling,
    /// The radial reduction with every fixed value substituted (the frequency and the linked parameters kept).
    red: Reduction,
    /// The exact point (the linked parameters are filled in at each frequency).
    point: Vec<GRat>,
    /// (joint index, radial field index) of each radial link target.
    slots: Vec<(usize, usize)>,
    freq: usize,
}

/// The scattering problem of a (substituted) reduction: the exact route's
/// ends and exponents, else the typed boundary problem's.
fn problem_at(r: &Reduction, opts: &SpectrumOptions) -> Result<Problem> {
    let exact = super::spectrum::qnm_recurrence(r, opts).and_then(|(_, setup)| problem(r, opts, &setup));
    match exact {
        Ok(pb) => Ok(pb),
        // The exact route cannot place the horizon (or set up at all): the typed boundary problem can.
        Err(e) => problem_between_ends(r, opts).map_err(|e2| {
            // A massive field: the reason is the far end's, said alone.
            if e2.message.contains("massive") {
                e2
            } else {
                Error::new(e.kind, format!("{}; between the located ends: {}", e.message, e2.message))
            }
        }),
    }
}

impl CoupledScatter {
    /// The scattering data at ω with the linked parameters from the angular
    /// eigenvalue there (solved afresh from the uncoupled value, so every
    /// frequency's result is independent of the others).
    fn at(&self, w: f64) -> std::result::Result<Scattering, String> {
        let track = super::coupled::AngularTrack::new(&self.coupling, 1e-10);
        let (v, root) = track.values_at(Complex64::new(w, 0.0))?;
        let mut values = self.point.clone();
        let mut linked = vec![(self.coupling.angular.eigen_name.clone(), root.omega)];
        for &(j, i) in &self.slots {
            let x = v[j];
            values[i] = GRat { re: super::spectrum::exact_double(x.re).re, im: super::spectrum::exact_double(x.im).re };
            linked.push((self.coupling.names[j].clone(), x));
        }
        let opts = SpectrumOptions::new(self.freq, values, (0, 0), 1e-10, None);
        let r = super::spectrum::substitute(&self.red, &opts.values, self.freq).map_err(|e| e.message)?;
        let pb = problem_at(&r, &opts).map_err(|e| e.message)?;
        let mut s = scatter_at(&pb, w)?;
        s.linked = linked;
        Ok(s)
    }
}

/// One frequency's results: one entry per multipole.
pub type ScatterRow = (f64, Vec<(i64, std::result::Result<Scattering, String>)>);

/// Sets up the scattering problems of a request (the ends and exponents
/// from the exact analysis, every parameter substituted).
///
/// After a change of variable the set-up is the physical equation's, whose
/// ends and roles (horizon, infinity) decide the scattering problem
/// (`solve::physical`).
pub fn scatter_setup(red: &Reduction, req: &ScatterRequest) -> Result<ScatterSetup> {
    if let Some((phys, _)) = super::physical::physical(red)? {
        return scatter_setup(&phys, req);
    }
    let usage = |m: String| Error::new(ErrorKind::Usage, m);
    let names = red.field.names().to_vec();
    let valued: Vec<&str> = req.values.iter().map(|(n, _, _)| n.as_str()).collect();
    let (freq, fname) = super::request::spectral_parameter(&names, req.frequency.as_deref(), &valued, req.couple.is_none(), false)?;
    if !(1..=super::wkb::MAX_ORDER).contains(&req.wkb_order) {
        return Err(usage(format!("the WKB order must lie in 1..={}", super::wkb::MAX_ORDER)).in_option(RequestInput::WkbOrder));
    }
    // The summed multipole's index among the radial parameters; with a
    // coupled angular equation it need not be one (it counts the angular
    // eigenvalues instead).
    let sum = match &req.sum {
        None => None,
        Some((name, l0, l1)) => {
            if !(0 <= *l0 && l0 <= l1 && l1 - l0 <= 200) {
                return Err(usage("expected a multipole range A..B with 0 ≤ A ≤ B (at most 200 terms)".into()).in_option(RequestInput::SumL));
            }
            let li = names.iter().skip(1).position(|n| n == name).map(|i| i + 1);
            if li == Some(freq) {
                return Err(usage(format!("'{name}' is the frequency: it cannot be summed")).in_option(RequestInput::Multipole));
            }
            if li.is_none() && req.couple.is_none() {
                return Err(usage(format!("'{name}' is not a parameter of the equation other than the frequency")).in_option(RequestInput::Multipole));
            }
            Some((li, *l0, *l1))
        }
    };
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    given[0] = true;
    given[freq] = true;
    if let Some((Some(li), ..)) = sum {
        given[li] = true;
    }
    let links: &[super::coupled::Link] = req.couple.as_ref().map_or(&[], |c| &c.links);
    let linked = super::request::linked_radial(links, &names, &[freq], "the frequency")?;
    for &i in &linked {
        given[i] = true;
    }
    let angular_names = req.couple.as_ref().map(|c| c.angular.field.names());
    for (n, v, span) in &req.values {
        if super::request::for_angular_only(n, *span, links, &names, angular_names)? {
            continue;
        }
        match names.iter().skip(1).position(|x| x == n).map(|i| i + 1) {
            Some(i) if i == freq => {
                return Err(usage(format!("'{n}' is the frequency: give it with {opt_omega}", opt_omega = RequestInput::Omega.mention()))
                    .at(*span)
                    .in_option(RequestInput::At))
            }
            Some(i) if sum.is_some_and(|s| s.0 == Some(i)) => {
                return Err(usage(format!("'{n}' is summed by {opt_sum_l}", opt_sum_l = RequestInput::SumL.mention()))
                    .at(*span)
                    .in_option(RequestInput::At))
            }
            Some(i) => {
                point[i] = v.clone();
                given[i] = true;
            }
            None => return Err(usage(format!("'{n}' is not a parameter of the equation")).at(*span).in_option(RequestInput::At)),
        }
    }
    let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
    if !missing.is_empty() {
        // No span: the caller points at the whole of its value list.
        return Err(usage(format!("no value given for {}", missing.join(", "))).in_option(RequestInput::At));
    }
    // Spatial infinity written at a finite point (x = 2M/r): scattered in
    // the variable where it is at infinity, as `spectrum` solves it.
    if req.couple.is_none() {
        if let Some((moved, _)) = super::physical::irregular_to_infinity(red, &point, freq)? {
            return scatter_setup(&moved, req);
        }
    }
    let ls: Vec<i64> = match sum {
        Some((_, l0, l1)) => (l0..=l1).collect(),
        None => vec![0],
    };
    // With a coupled angular equation, one coupling per multipole: the
    // multipole l of the sum A..B is the angular eigenvalue numbered
    // `index` + (l − A) (with the default index 0, l = A is the lowest), and
    // l is also given to whichever equation has it as a parameter.
    let mut coupled = Vec::new();
    if let Some(c) = &req.couple {
        for &l in &ls {
            let mut given_values: Vec<(String, GRat)> = req.values.iter().map(|(n, v, _)| (n.clone(), v.clone())).collect();
            let mut at = point.clone();
            let mut index = c.index;
            if let (Some((name, l0, _)), Some((li, ..))) = (&req.sum, sum) {
                given_values.push((name.clone(), GRat::real(Rat::int(l.into()))));
                if let Some(li) = li {
                    at[li] = GRat::real(Rat::int(l.into()));
                }
                index += (l - l0) as usize;
            }
            if index > 100 {
                return Err(
                    usage(format!("the multipole {l} needs the angular eigenvalue numbered {index}: at most 100")).in_option(RequestInput::SumL)
                );
            }
            let coupling = super::coupled::try_coupling(&red.field, &c.angular, &c.links, &given_values, freq, index, c.guess)?;
            let mut keep = linked.clone();
            keep.push(freq);
            let kept = super::spectrum::substitute_keeping(red, &at, &keep)?;
            let slots = linked.iter().filter_map(|&i| coupling.names.iter().position(|n| *n == names[i]).map(|j| (j, i))).collect();
            coupled.push(std::sync::Mutex::new(CoupledScatter { coupling, red: kept, point: at, slots, freq }));
        }
    }
    let mut problems = Vec::new();
    for &l in &ls {
        let mut values = point.clone();
        if let Some((Some(li), ..)) = sum {
            values[li] = GRat::real(Rat::int(l.into()));
        }
        let opts = SpectrumOptions::new(freq, values, (0, 0), 1e-10, None);
        // With a coupling the linked parameters stand at 0 here: the ends and their names do not depend on them.
        let r = super::spectrum::substitute(red, &opts.values, freq)?;
        let pb = problem_at(&r, &opts)?;
        let est = super::spectrum::barrier_estimates(&r, &opts, pb.near, req.wkb_order).ok();
        problems.push((l, pb, est.and_then(|e| e(0)).map(|b| b.taylor)));
    }
    let (near, far) = (problems[0].1.near_label.clone(), problems[0].1.far_label.clone());
    Ok(ScatterSetup { frequency: fname, near, far, sum: req.sum.clone(), problems, wkb_order: req.wkb_order, coupled })
}

impl ScatterSetup {
    /// The multipoles (0 alone without a sum).
    pub fn multipoles(&self) -> Vec<i64> {
        self.problems.iter().map(|p| p.0).collect()
    }

    /// The number of problems (one per multipole).
    pub fn len(&self) -> usize {
        self.problems.len()
    }

    /// True when there is no problem (never, after a successful set-up).
    pub fn is_empty(&self) -> bool {
        self.problems.is_empty()
    }

    /// The scattering data of problem `j` at the real frequency `w`, with the
    /// WKB transmission beside it where there is a barrier.
    pub fn at(&self, j: usize, w: f64) -> std::result::Result<Scattering, String> {
        if let Some(c) = self.coupled.get(j) {
            return c.lock().map_err(|_| "a coupled frequency failed on another thread".to_string())?.at(w);
        }
        let (_, pb, barrier) = &self.problems[j];
        let wkb = barrier.as_ref().and_then(|t| super::wkb::wkb_transmission(t, w * w, self.wkb_order));
        scatter_at(pb, w).map(|s| Scattering { wkb_transmission: wkb, ..s })
    }

    /// Every multipole at `w`.
    pub fn row(&self, w: f64) -> ScatterRow {
        (w, (0..self.problems.len()).map(|j| (self.problems[j].0, self.at(j, w))).collect())
    }
}

/// σ at ω when every multipole has a value.
pub fn row_cross_section(w: f64, per: &[(i64, std::result::Result<Scattering, String>)]) -> Option<f64> {
    let terms: Option<Vec<(i64, f64)>> = per.iter().map(|(l, r)| r.as_ref().ok().map(|s| (*l, s.transmission))).collect();
    terms.map(|t| cross_section(w, &t))
}
