//! Quasinormal-mode spectra from the pasted equation: the boundary data of
//! `analysis` pick the ingoing exponent at the outermost horizon and the
//! outgoing branch at infinity, `series` derives the recurrence about the
//! horizon, and the continued fraction is solved overtone by overtone (the
//! n-th inversion for overtone n, Leaver 1985), each seeded from a first
//! estimate and, when asked, checked by an independent method.

use super::cf::{find_root, try_numeric, CfRoot, StopReason};
use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{GRat, Rat};
use crate::analysis::canonical::Choices;
use crate::analysis::labels::{boundary_choices, label, Boundary};
use crate::analysis::{analyse, Kind, Place};
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;
use num_complex::Complex64;

/// Options of a spectrum computation.
#[derive(Clone, Debug)]
pub struct SpectrumOptions {
    /// Field index of the frequency parameter.
    pub freq: usize,
    /// A value for every field variable (entry 0 and the frequency's are ignored).
    pub values: Vec<GRat>,
    /// Overtones to compute, inclusive range.
    pub overtones: (u32, u32),
    /// Relative tolerance on ω.
    pub tol: f64,
    /// A seed for the lowest overtone asked for.
    pub guess: Option<Complex64>,
    /// Further seeds, one per overtone, used before any other estimate.
    pub seeds: Vec<Complex64>,
}

/// One mode and the evidence for it.
#[derive(Clone, Debug)]
pub struct Mode {
    /// The overtone number.
    pub n: u32,
    /// The continued-fraction result.
    pub root: CfRoot,
    /// The seed it started from, and where the seed came from.
    pub seed: (Complex64, String),
}

/// What the computation set up, for the report.
#[derive(Clone, Debug)]
pub struct Setup {
    /// The horizon's location as text.
    pub horizon: String,
    /// The recurrence's ansatz and choices.
    pub ansatz: String,
    /// Exponent choices made.
    pub choices: Vec<String>,
    /// Number of terms of the recurrence.
    pub terms: usize,
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// Picks the horizon (outermost regular point whose exponents depend on ω)
/// and derives the quasinormal-mode recurrence about it.
pub fn qnm_recurrence(red: &Reduction, opts: &SpectrumOptions) -> Result<(crate::series::Recurrence, Setup)> {
    let k = &red.field;
    let an = analyse(red)?;
    let mut point = opts.values.clone();
    point[opts.freq] = GRat::real(Rat::new(1.into(), 2.into()).expect("nonzero"));
    let labels = label(&an, opts.freq, &point, true);
    let text = |p: &crate::analysis::SingularPoint| match &p.place {
        Place::Point { at, .. } => ratfunc_text(at, k.names(), Style::Text),
        _ => "∞".to_string(),
    };
    let (picks, said) = boundary_choices(&an, Some(&labels), Boundary::Qnm, &point, text);
    // The outermost labelled regular point with an exact location.
    let vals = crate::analysis::numeric::Values::new(point.clone());
    let mut best: Option<(f64, String)> = None;
    for (i, p) in an.points.iter().enumerate() {
        if p.kind != Kind::Regular || labels.per_point[i].iter().all(Option::is_none) {
            continue;
        }
        if let Place::Point { at, .. } = &p.place {
            if let Some(z) = vals.ratfunc(at) {
                if best.as_ref().is_none_or(|(b, _)| z.re > *b) {
                    best = Some((z.re, ratfunc_text(at, k.names(), Style::Text)));
                }
            }
        }
    }
    let Some((_, horizon)) = best else {
        return Err(usage("no horizon-like regular point with an exact location: the continued fraction needs one (roots of higher-degree factors are not supported yet)"));
    };
    if !an.points.iter().any(|p| matches!(p.place, Place::Infinity) && p.kind == Kind::Irregular) {
        return Err(usage("infinity is not an irregular point: the quasinormal-mode continued fraction expects one"));
    }
    let choices = Choices { picks };
    let rec = crate::series::recurrence(red, &horizon, None, &choices, false)?;
    let setup = Setup {
        horizon: horizon.clone(),
        ansatz: format!("{} = {} * Σ a_n u^n, {}", rec.function, rec.prefactor, rec.series),
        choices: said,
        terms: rec.coeffs.len(),
    };
    Ok((rec, setup))
}

/// Computes the quasinormal modes by the continued fraction.
pub fn qnm_modes(red: &Reduction, opts: &SpectrumOptions, first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>) -> Result<(Vec<Mode>, Setup)> {
    let (rec, setup) = qnm_recurrence(red, opts)?;
    if rec.coeffs.len() != 3 {
        return Err(usage(format!(
            "the recurrence about {} has {} terms; the continued fraction here needs three (reduction of longer recurrences is not implemented yet)",
            setup.horizon,
            rec.coeffs.len()
        )));
    }
    // The recurrence's field is (n, params…): the same indices as the equation's.
    let num = try_numeric(&rec, &opts.values, opts.freq)?;
    let mut modes: Vec<Mode> = Vec::new();
    for n in opts.overtones.0..=opts.overtones.1 {
        let idx = (n - opts.overtones.0) as usize;
        let seed = if let Some(s) = opts.seeds.get(idx) {
            (*s, "given".to_string())
        } else if n == opts.overtones.0 && opts.guess.is_some() {
            (opts.guess.expect("checked"), "--guess".to_string())
        } else if modes.len() >= 2 && modes.iter().rev().take(2).all(|m| m.root.converged) {
            let (a, b) = (modes[modes.len() - 1].root.omega, modes[modes.len() - 2].root.omega);
            (a + (a - b), "extrapolated from the two previous overtones".to_string())
        } else if let Some(e) = first_estimate(n) {
            e
        } else if let Some(last) = modes.last().filter(|m| m.root.converged) {
            (last.root.omega - Complex64::new(0.0, 2.0 * last.root.omega.im.abs().max(0.05)), "below the previous overtone".to_string())
        } else {
            return Err(usage(format!("no seed for overtone {n}: give --guess")));
        };
        let mut root = find_root(&num, n as usize, seed.0, opts.tol, 64, 1 << 17);
        if root.converged && (root.omega.im > 0.0 || root.omega.re < 0.0) {
            // A root in the wrong quadrant is not the mode that was asked for.
            root.converged = false;
            root.stop = StopReason::Rejected(format!(
                "the root {:.8}{:+.8}i is not in the lower right quadrant (Re ω > 0, Im ω < 0)",
                root.omega.re, root.omega.im
            ));
        }
        modes.push(Mode { n, root, seed });
    }
    Ok((modes, setup))
}
