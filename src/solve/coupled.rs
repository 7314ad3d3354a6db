//! Coupled separated equations: a radial equation whose separation constant
//! is fixed by the eigenvalue of an angular equation that itself depends on
//! the frequency (Kerr: the Teukolsky radial equation and the spin-weighted
//! spheroidal equation, E. W. Leaver, Proc. R. Soc. Lond. A 402 (1985) 285).
//!
//! The user names the coupling with links `NAME = EXPR`: a link whose target
//! is a parameter of the angular equation (the spheroidicity `c = a*omega`)
//! is evaluated from the radial parameters and the frequency; a link whose
//! target is a parameter of the radial equation (the separation constant
//! `lam = A + a^2*omega^2 - 2*a*m*omega`) may also use the angular
//! eigenvalue. The one angular parameter left without a value is the
//! eigenvalue. At every trial frequency the angular eigenvalue is found by
//! its own continued fraction (a series about one regular end with the
//! regular exponents at both ends, the n-th inversion for the n-th
//! eigenvalue), then the radial continued fraction is evaluated with the
//! linked separation constant: one complex function of ω whose root is the
//! mode, as in Leaver 1985.

use super::cf::{find_root, find_root_by, inversion, try_numeric_at, CfRoot};
use super::spectrum::{Mode, Setup, SpectrumOptions};
use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{Field, GRat, RatFunc};
use crate::analysis::canonical::Choices;
use crate::analysis::labels::{boundary_choices, Boundary};
use crate::analysis::{analyse, Kind, Place, PointId};
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;
use crate::series::Recurrence;
use num_complex::Complex64;
use std::cell::RefCell;

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// One link `target = expr`, the expression in the joint field.
#[derive(Clone, Debug)]
pub struct Link {
    /// The parameter the link sets.
    pub target: String,
    /// Its expression over the joint names (index 0 is unused).
    pub expr: RatFunc,
    /// True when the target is a parameter of the angular equation.
    pub angular: bool,
    /// The target's index among the joint names.
    pub slot: usize,
}

/// The angular eigenvalue problem: its exact recurrence about one regular
/// end, and how to evaluate it numerically.
#[derive(Debug)]
pub struct Angular {
    /// The recurrence (field (n, angular params…)).
    pub rec: Recurrence,
    /// Field index of the eigenvalue in the angular equation's field.
    pub eigen: usize,
    /// The eigenvalue's name.
    pub eigen_name: String,
    /// Which eigenvalue (the inversion of the continued fraction): 0 is the lowest.
    pub index: usize,
    /// The interval's ends, as text.
    pub ends: (String, String),
    /// Sentences saying which exponents were chosen.
    pub choices: Vec<String>,
    /// For each angular parameter: its joint index (the eigenvalue and
    /// fixed ones included).
    pub joint_of: Vec<usize>,
    /// A first value of the eigenvalue where every linked angular parameter
    /// is 0, or given by the user.
    pub seed: Option<(Complex64, String)>,
}

/// Everything a coupled solve needs besides the radial recurrence.
#[derive(Debug)]
pub struct Coupling {
    /// The joint names: the radial variable, the radial parameters, then
    /// the angular parameters the radial equation does not have.
    pub names: Vec<String>,
    /// The links, in the order given.
    pub links: Vec<Link>,
    /// The angular problem.
    pub angular: Angular,
    /// Numeric values of every joint name that has a fixed value.
    pub fixed: Vec<Option<Complex64>>,
    /// Joint index of the radial frequency.
    pub freq: usize,
}

/// The angular evidence of one mode.
#[derive(Clone, Debug)]
pub struct CoupledValue {
    /// The eigenvalue's name.
    pub eigen_name: String,
    /// The angular continued-fraction root at the mode's frequency.
    pub root: CfRoot,
    /// The value of every link's target at the mode's frequency.
    pub links: Vec<(String, Complex64)>,
}

/// The joint names of a radial and an angular equation.
pub fn joint_names(radial: &Field, angular: &Field) -> Vec<String> {
    let mut names = radial.names().to_vec();
    for n in angular.names().iter().skip(1) {
        if !names[1..].contains(n) {
            names.push(n.clone());
        }
    }
    names
}

/// Sets up the angular eigenvalue problem: known parameters substituted
/// exactly, linked ones and the eigenvalue kept, the regular exponents at
/// both ends of the interval between the two real regular points, the first
/// branch at an irregular infinity, and the series about the lower end.
pub fn try_angular(red: &Reduction, known: &[Option<GRat>], linked: &[usize], index: usize, joint_of: Vec<usize>) -> Result<Angular> {
    let k = &red.field;
    let free: Vec<usize> = (1..k.names().len()).filter(|i| known[*i].is_none() && !linked.contains(i)).collect();
    let eigen = match free.as_slice() {
        [e] => *e,
        [] => return Err(usage("every parameter of the angular equation has a value: one must be left free as its eigenvalue")),
        many => {
            let names: Vec<&str> = many.iter().map(|i| k.names()[*i].as_str()).collect();
            return Err(usage(format!(
                "the angular equation has {} parameters without a value ({}): give all but its eigenvalue with {opt_at} or {opt_link}",
                many.len(),
                names.join(", "),
                opt_at = RequestInput::At.mention(),
                opt_link = RequestInput::Link(0).mention()
            )));
        }
    };
    let mut values: Vec<GRat> = known.iter().map(|v| v.clone().unwrap_or_else(GRat::zero)).collect();
    let mut keep = linked.to_vec();
    keep.push(eigen);
    let red = super::spectrum::substitute_keeping(red, &values, &keep)?;
    let k = &red.field;
    let an = analyse(&red)?;
    // Exponent choices do not depend on the kept parameters once the known
    // ones are in; decide them at a generic value of the kept ones.
    for (j, i) in keep.iter().enumerate() {
        values[*i] = GRat::real(crate::algebra::Rat::new((j as i64 + 3).into(), 7.into()).expect("nonzero"));
    }
    let crate::analysis::labels::ExponentPicks { picks, said } = boundary_choices(k, &an, None, Boundary::Bound, &values)?;
    let vals = crate::analysis::numeric::Values::new(values.clone());
    let mut ends: Vec<(f64, String, crate::algebra::RatFunc)> = an
        .points
        .iter()
        .filter(|p| p.kind == Kind::Regular)
        .filter_map(|p| match &p.place {
            Place::Point { at, .. } => {
                vals.ratfunc(at).filter(|z| z.im.abs() < 1e-12).map(|z| (z.re, ratfunc_text(at, k.names(), Style::Text), at.clone()))
            }
            _ => None,
        })
        .collect();
    ends.sort_by(|a, b| a.0.partial_cmp(&b.0).unwrap_or(std::cmp::Ordering::Equal));
    if ends.len() != 2 {
        return Err(usage(format!(
            "the angular equation has {} real regular singular points: the angular eigenvalue needs exactly two, the ends of its interval",
            ends.len()
        )));
    }
    let mut picks: Vec<(PointId, usize)> = picks.into_iter().filter(|(id, _)| ends.iter().any(|(_, _, at)| *id == PointId::At(at.clone()))).collect();
    let mut choices = said.into_iter().filter(|c| ends.iter().any(|(_, t, _)| c.starts_with(&format!("at {t}:")))).collect::<Vec<_>>();
    if an.points.iter().any(|p| matches!(p.place, Place::Infinity) && p.kind == Kind::Irregular) {
        // Either exponential branch gives a series convergent at the far end
        // when it is the minimal solution; the first is Leaver's e^(+cx).
        picks.push((PointId::Infinity, 1));
        choices.push("at ∞: the first exponential branch (the series decides the behaviour at the far end)".into());
    }
    let (lo, hi) = (ends[0].1.clone(), ends[1].1.clone());
    let rec = crate::series::recurrence_at(&red, &ends[0].2, &crate::series::SeriesMap::Shift, &Choices { picks, values: Vec::new() }, false)?;
    if rec.coeffs.len() < 3 {
        return Err(usage(format!("the angular recurrence about {lo} has {} terms: no continued fraction for its eigenvalue", rec.coeffs.len())));
    }
    let eigen_name = k.names()[eigen].clone();
    let mut ang = Angular { rec, eigen, eigen_name, index, ends: (lo, hi), choices, joint_of, seed: None };
    // Where every linked parameter is 0 the recurrence often terminates (the
    // spheroidal equation at c = 0 has polynomial eigenfunctions): the
    // eigenvalue is then the root of c₁(index; λ) = 0.
    let mut base: Vec<Complex64> = known.iter().map(|v| v.as_ref().map(to_c).unwrap_or_default()).collect();
    for i in linked {
        base[*i] = Complex64::new(0.0, 0.0);
    }
    let num = try_numeric_at(&ang.rec, &base, eigen)?;
    let vanishes = num.terms[2..].iter().all(|t| t.c.iter().flatten().all(|c| c.norm() == 0.0));
    if vanishes {
        let c1 = &num.terms[1];
        let nb = c1.c.iter().map(|r| r.len()).max().unwrap_or(0);
        let mut coeffs = vec![Complex64::new(0.0, 0.0); nb];
        for (a, row) in c1.c.iter().enumerate() {
            for (b, c) in row.iter().enumerate() {
                coeffs[b] += c * (index as f64).powi(a as i32);
            }
        }
        while coeffs.last().is_some_and(|c| c.norm() == 0.0) {
            coeffs.pop();
        }
        if coeffs.len() == 2 {
            ang.seed = Some((-coeffs[0] / coeffs[1], "the terminating series where the linked parameters vanish".into()));
        }
    }
    Ok(ang)
}

impl Angular {
    /// The eigenvalue by the continued fraction (inversion `index`) with the
    /// angular parameters at `values` (indexed like the angular equation's
    /// field; the eigenvalue's entry is ignored), from `seed`.
    pub fn eigenvalue_at(&self, values: &[Complex64], seed: Complex64, tol: f64) -> CfRoot {
        match try_numeric_at(&self.rec, values, self.eigen) {
            Ok(num) => find_root(&num, self.index, seed, tol, 16, 1 << 14),
            Err(e) => CfRoot::failed(seed, self.index, super::cf::StopReason::Rejected(e.message)),
        }
    }
}

fn to_c(g: &GRat) -> Complex64 {
    let (re, im) = g.to_f64();
    Complex64::new(re, im)
}

/// The angular eigenvalue along trial frequencies: the joint values at ω
/// with the angular eigenvalue solved (continued from the last value, or
/// from the seed where the linked parameters vanish) and the radial links
/// filled in. A fresh track at each ω gives values independent of the order
/// the frequencies are visited in.
pub struct AngularTrack<'a> {
    coupling: &'a Coupling,
    last: RefCell<Option<(Vec<Complex64>, Complex64)>>,
    tol: f64,
}

impl<'a> AngularTrack<'a> {
    /// A track with nothing solved yet; `tol` is the radial tolerance (the
    /// angular one is a thousandth of it, at least 1e-13).
    pub fn new(coupling: &'a Coupling, tol: f64) -> AngularTrack<'a> {
        AngularTrack { coupling, last: RefCell::new(None), tol }
    }

    /// The joint values at ω before the angular solve: fixed values, ω and
    /// the angular links.
    fn joint_at(&self, w: Complex64) -> std::result::Result<Vec<Complex64>, String> {
        let c = self.coupling;
        let mut v: Vec<Complex64> = c.fixed.iter().map(|x| x.unwrap_or_default()).collect();
        v[c.freq] = w;
        for l in c.links.iter().filter(|l| l.angular) {
            let x = super::eval_at(&l.expr, &v).ok_or_else(|| format!("the link for {} has a zero denominator at ω = {w}", l.target))?;
            v[l.slot] = x;
        }
        Ok(v)
    }

    /// The angular eigenvalue with the linked parameters at `joint`,
    /// continued from the last value found (or from the seed where the
    /// linked parameters vanish) in steps small enough to stay on one branch.
    fn eigenvalue(&self, joint: &[Complex64]) -> CfRoot {
        let ang = &self.coupling.angular;
        let targets: Vec<Complex64> = ang.joint_of.iter().map(|j| joint[*j]).collect();
        let start: (Vec<Complex64>, Complex64) = match self.last.borrow().clone() {
            Some(s) => s,
            None => {
                let Some((seed, _)) = &ang.seed else {
                    let why = format!(
                        "no first value of the angular eigenvalue {}: give {opt_angular_guess}",
                        ang.eigen_name,
                        opt_angular_guess = RequestInput::AngularGuess.mention()
                    );
                    return CfRoot::failed(Complex64::new(f64::NAN, f64::NAN), ang.index, super::cf::StopReason::Rejected(why));
                };
                let mut zero = targets.clone();
                for (a, j) in zero.iter_mut().zip(&ang.joint_of) {
                    if *j == self.coupling.freq || self.coupling.links.iter().any(|l| l.angular && l.slot == *j) {
                        *a = Complex64::new(0.0, 0.0);
                    }
                }
                (zero, *seed)
            }
        };
        // Steps of at most 0.25 in every linked parameter.
        let dist = start.0.iter().zip(&targets).map(|(a, b)| (a - b).norm()).fold(0.0, f64::max);
        let steps = ((dist / 0.25).ceil() as usize).clamp(1, 400);
        let mut a = start.1;
        let mut root = None;
        for s in 1..=steps {
            let t = s as f64 / steps as f64;
            let at: Vec<Complex64> = start.0.iter().zip(&targets).map(|(x, y)| x + (y - x) * t).collect();
            let r = self.angular_root(&at, a);
            if !r.converged {
                return r;
            }
            a = r.omega;
            root = Some(r);
        }
        let root = root.expect("at least one step");
        *self.last.borrow_mut() = Some((targets, root.omega));
        root
    }

    fn angular_root(&self, angular_values: &[Complex64], seed: Complex64) -> CfRoot {
        self.coupling.angular.eigenvalue_at(angular_values, seed, (self.tol * 1e-3).max(1e-13))
    }

    /// The joint values at ω after the angular solve (the eigenvalue and the
    /// radial links filled in), with the angular root.
    pub fn values_at(&self, w: Complex64) -> std::result::Result<(Vec<Complex64>, CfRoot), String> {
        let c = self.coupling;
        let mut v = self.joint_at(w)?;
        let root = self.eigenvalue(&v);
        if !root.converged {
            return Err(format!("the angular eigenvalue {} did not converge at ω = {w}: {}", c.angular.eigen_name, root.stop.text()));
        }
        v[c.angular.joint_of[c.angular.eigen]] = root.omega;
        for l in c.links.iter().filter(|l| !l.angular) {
            let x = super::eval_at(&l.expr, &v).ok_or_else(|| format!("the link for {} has a zero denominator at ω = {w}", l.target))?;
            v[l.slot] = x;
        }
        Ok((v, root))
    }
}

/// The numeric evaluation of a coupled system at trial frequencies, with
/// the last angular eigenvalue kept for continuation.
pub struct Evaluator<'a> {
    coupling: &'a Coupling,
    /// The radial recurrence and its base values (θ appended).
    rec: &'a Recurrence,
    radial_values: Vec<Complex64>,
    radial_freq: usize,
    /// Joint index → radial field index, for the radial link targets.
    radial_of: Vec<Option<usize>>,
    track: AngularTrack<'a>,
}

impl<'a> Evaluator<'a> {
    /// An evaluator for the radial recurrence `rec` (derived with the
    /// separation constant symbolic) and the radial values of `opts`.
    pub fn new(coupling: &'a Coupling, rec: &'a Recurrence, setup: &Setup, opts: &SpectrumOptions, radial: &Field) -> Evaluator<'a> {
        let radial_values: Vec<Complex64> = super::spectrum::recurrence_values(setup, opts).iter().map(to_c).collect();
        let radial_of = coupling.names.iter().map(|n| radial.names().iter().skip(1).position(|x| x == n).map(|i| i + 1)).collect();
        Evaluator { coupling, rec, radial_values, radial_freq: opts.freq, radial_of, track: AngularTrack::new(coupling, opts.tol) }
    }

    /// The joint values at ω after the angular solve, with the angular root ([`AngularTrack::values_at`]).
    pub fn values_at(&self, w: Complex64) -> std::result::Result<(Vec<Complex64>, CfRoot), String> {
        self.track.values_at(w)
    }

    /// The radial continued fraction's k-th inversion at ω with the linked
    /// separation constant, with β_k (as [`inversion`]).
    pub fn radial(&self, w: Complex64, k: usize, depth: usize) -> std::result::Result<(Complex64, Complex64), String> {
        let (v, _) = self.values_at(w)?;
        let mut vals = self.radial_values.clone();
        for (j, r) in self.radial_of.iter().enumerate() {
            if let Some(r) = r {
                if *r != self.radial_freq && self.coupling.fixed[j].is_none() {
                    vals[*r] = v[j];
                }
            }
        }
        let num = try_numeric_at(self.rec, &vals, self.radial_freq).map_err(|e| e.message)?;
        inversion(&num, w, k, depth).ok_or_else(|| "a zero denominator in the continued fraction".to_string())
    }

    /// The evidence at a mode: the angular root and every link's value.
    pub fn evidence(&self, w: Complex64) -> Option<CoupledValue> {
        let (v, root) = self.values_at(w).ok()?;
        let links = self.coupling.links.iter().map(|l| (l.target.clone(), v[l.slot])).collect();
        Some(CoupledValue { eigen_name: self.coupling.angular.eigen_name.clone(), root, links })
    }
}

/// The coupled modes, overtone by overtone: the radial continued fraction's
/// root with the separation constant linked to the angular eigenvalue at
/// every trial frequency.
pub fn coupled_modes(
    coupling: &Coupling,
    rec: &Recurrence,
    setup: &Setup,
    opts: &SpectrumOptions,
    radial: &Field,
    first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
) -> Result<Vec<(Mode, Option<CoupledValue>)>> {
    if rec.coeffs.len() < 3 {
        return Err(usage(format!("the radial recurrence about {} has {} terms: no continued fraction", setup.horizon, rec.coeffs.len())));
    }
    let ev = Evaluator::new(coupling, rec, setup, opts, radial);
    let modes = super::spectrum::overtones(opts, first_estimate, &|n, seed| {
        find_root_by(&|w, depth| ev.radial(w, n as usize, depth), n as usize, seed, opts.tol, 64, 1 << 17)
    })?;
    Ok(modes
        .into_iter()
        .map(|m| {
            let e = if m.root.converged { ev.evidence(m.root.omega) } else { None };
            (m, e)
        })
        .collect())
}

/// The coupling at given parameter values: `values` are the fixed values of
/// either equation's parameters (`--at`), `freq` the radial frequency's
/// index in `radial`, `index` which angular eigenvalue, `guess` a first
/// value of it (else the terminating series where the linked parameters
/// vanish).
pub fn try_coupling(
    radial: &Field,
    angular: &Reduction,
    links: &[Link],
    values: &[(String, GRat)],
    freq: usize,
    index: usize,
    guess: Option<Complex64>,
) -> Result<Coupling> {
    let names = joint_names(radial, &angular.field);
    let mut fixed: Vec<Option<Complex64>> = vec![None; names.len()];
    for (n, v) in values {
        if let Some(i) = names.iter().position(|x| x == n) {
            fixed[i] = Some(to_c(v));
        }
    }
    let an = angular.field.names();
    let known: Vec<Option<GRat>> = an.iter().map(|n| values.iter().find(|(x, _)| x == n).map(|(_, v)| v.clone())).collect();
    // Linked: set by a link, or the radial frequency itself written into the
    // angular equation (aω as printed, rather than c = aω): its value at
    // every trial frequency is that frequency.
    let linked: Vec<usize> = (1..an.len()).filter(|i| links.iter().any(|l| l.angular && l.target == an[*i]) || an[*i] == names[freq]).collect();
    let joint_of: Vec<usize> = an.iter().map(|n| names.iter().position(|x| x == n).unwrap_or(0)).collect();
    let mut ang = try_angular(angular, &known, &linked, index, joint_of)?;
    if let Some(g) = guess {
        ang.seed = Some((g, RequestInput::AngularGuess.mention()));
    }
    if !links.iter().any(|l| !l.angular) {
        return Err(usage(format!(
            "no {opt_link} sets a parameter of the radial equation: the separation constant must be linked",
            opt_link = RequestInput::Link(0).mention()
        )));
    }
    Ok(Coupling { names, links: links.to_vec(), angular: ang, fixed, freq })
}

/// The radial reduction with the known values substituted exactly (the
/// linked parameters and the frequency kept), and its quasinormal-mode
/// recurrence with the set-up.
pub fn radial_recurrence(red: &Reduction, coupling: &Coupling, opts: &SpectrumOptions) -> Result<(Reduction, (Recurrence, Setup))> {
    let k = &red.field;
    let mut keep: Vec<usize> = coupling.links.iter().filter(|l| !l.angular).filter_map(|l| k.names().iter().position(|x| *x == l.target)).collect();
    keep.push(opts.freq);
    let red = super::spectrum::substitute_keeping(red, &opts.values, &keep)?;
    let rs = super::spectrum::qnm_recurrence(&red, opts)?;
    Ok((red, rs))
}

/// One mode of a coupled solve with its evidence.
#[derive(Clone, Debug)]
pub struct CoupledMode {
    /// The radial root.
    pub mode: Mode,
    /// The angular eigenvalue and the links' values at the mode.
    pub angular: Option<CoupledValue>,
    /// Direct integration of the radial equation with the linked values held fixed.
    pub check: Option<super::integrate::IntRoot>,
}

/// The coupled spectrum from the radial reduction (parameters symbolic):
/// the known values substituted exactly, the linked ones kept, the
/// recurrence derived, the modes solved, and (with `check`) each checked by
/// direct integration at its linked values.
pub fn coupled_spectrum(
    red: &Reduction,
    coupling: &Coupling,
    opts: &SpectrumOptions,
    check: bool,
    first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
) -> Result<(Setup, Vec<CoupledMode>)> {
    let (red, (rec, setup)) = radial_recurrence(red, coupling, opts)?;
    let out = coupled_solve(&red, &rec, &setup, coupling, opts, check, first_estimate)?;
    Ok((setup, out))
}

/// [`coupled_spectrum`] on a radial reduction (`red`, substituted as far as
/// it is) and its recurrence already derived.
pub fn coupled_solve(
    red: &Reduction,
    rec: &Recurrence,
    setup: &Setup,
    coupling: &Coupling,
    opts: &SpectrumOptions,
    check: bool,
    first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
) -> Result<Vec<CoupledMode>> {
    let k = &red.field;
    let pairs = coupled_modes(coupling, rec, setup, opts, &red.field, first_estimate)?;
    let mut out = Vec::new();
    for (mode, angular) in pairs {
        let check = match (&angular, check && mode.root.converged) {
            (Some(e), true) => {
                let mut o = opts.clone();
                for (n, v) in &e.links {
                    if let Some(i) = k.names().iter().position(|x| x == n) {
                        o.values[i] = GRat { re: super::spectrum::exact_double(v.re).re, im: super::spectrum::exact_double(v.im).re };
                    }
                }
                super::spectrum::integration_check(red, &o, setup).ok().map(|f| f(super::spectrum::check_seed(mode.root.omega)))
            }
            _ => None,
        };
        out.push(CoupledMode { mode, angular, check });
    }
    Ok(out)
}
