//! Physical names of local solutions for a wave equation with time
//! dependence e^(−iωt): at a horizon-like regular point (an exponent
//! difference that depends on ω) the solution (z − z_h)^ρ with Im ∂ρ/∂ω < 0
//! falls into the horizon ("ingoing"); at an irregular point at infinity
//! exp(u₀ z) with Im ∂u₀/∂ω > 0 is "outgoing" (e^{−iω(t − r)}). For bound
//! states the decaying branch at infinity (Re u₀ < 0 on the real axis) and
//! the exponent with the larger real part at a regular point are the
//! normalisable ones. The derivatives are taken numerically at given
//! parameter values, or at a fixed generic point when none are given.

use super::numeric::Values;
use super::{Analysis, Kind, Place};
use crate::algebra::{GRat, Rat};
use num_complex::Complex64;

/// A label for one local solution.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Label {
    /// Falls into a horizon.
    Ingoing,
    /// Leaves towards infinity.
    Outgoing,
    /// Decays (normalisable end).
    Decaying,
    /// Grows.
    Growing,
}

impl Label {
    /// The word used in output.
    pub fn word(&self) -> &'static str {
        match self {
            Label::Ingoing => "ingoing",
            Label::Outgoing => "outgoing",
            Label::Decaying => "decaying",
            Label::Growing => "growing",
        }
    }
}

/// Labels per point: for the unknown's exponents at regular points, and for
/// the formal branches at irregular points; `None` where no label applies.
#[derive(Clone, Debug)]
pub struct Labels {
    /// Indexed like `Analysis::points`; inner vectors like the exponents (regular) or the formal branches (irregular).
    pub per_point: Vec<Vec<Option<Label>>>,
    /// How the labels were decided.
    pub basis: String,
}

/// A generic point: parameter i gets 0.3 + 0.17·i, the frequency 1/2.
pub fn generic_values(nvars: usize, freq: usize) -> Vec<GRat> {
    (0..nvars)
        .map(|i| {
            if i == freq {
                GRat::real(Rat::new(1.into(), 2.into()).expect("nonzero"))
            } else {
                GRat::real(Rat::new((30 + 17 * i as i64).into(), 100.into()).expect("nonzero"))
            }
        })
        .collect()
}

/// Labels for an analysis, with `freq` the field index of ω and `point` the parameter values.
pub fn label(a: &Analysis, freq: usize, point: &[GRat], given: bool) -> Labels {
    let h = Rat::new(1.into(), 1_000_000.into()).expect("nonzero");
    let mut shifted = point.to_vec();
    shifted[freq] = GRat { re: point[freq].re.add(&point[freq].re.mul(&h)), im: point[freq].im.clone() };
    let v0 = Values::new(point.to_vec());
    let v1 = Values::new(shifted.clone());
    let dw = point[freq].re.mul(&h).to_f64();
    let mut per_point = Vec::new();
    for p in &a.points {
        let mut row = Vec::new();
        match p.kind {
            Kind::Regular => {
                let theta = match &p.place {
                    Place::Point { at, .. } => v0.ratfunc(at),
                    Place::Roots(f) => outer_root(&v0, f),
                    Place::Infinity => Some(Complex64::new(0.0, 0.0)),
                };
                let theta1 = match &p.place {
                    Place::Point { at, .. } => v1.ratfunc(at),
                    Place::Roots(f) => outer_root(&v1, f),
                    Place::Infinity => Some(Complex64::new(0.0, 0.0)),
                };
                let ds: Vec<Option<f64>> = p
                    .unknown_exponents
                    .iter()
                    .map(|e| {
                        let a0 = v0.exponent(e, theta?)?;
                        let a1 = v1.exponent(e, theta1?)?;
                        Some(((a1 - a0) / dw).im)
                    })
                    .collect();
                let depends = ds.iter().flatten().any(|d| d.abs() > 1e-6);
                for d in &ds {
                    row.push(match (depends, d) {
                        (true, Some(d)) if *d < 0.0 => Some(Label::Ingoing),
                        (true, Some(_)) => Some(Label::Outgoing),
                        _ => None,
                    });
                }
            }
            Kind::Irregular => {
                for f in &p.formal {
                    let u0 = v0.ratfunc(&f.lead);
                    let u1 = v1.ratfunc(&f.lead);
                    let lab = match (u0, u1, &p.place) {
                        (Some(a0), Some(a1), Place::Infinity) => {
                            let d = ((a1 - a0) / dw).im;
                            if d.abs() > 1e-6 {
                                Some(if d > 0.0 { Label::Outgoing } else { Label::Ingoing })
                            } else if a0.re < 0.0 {
                                Some(Label::Decaying)
                            } else if a0.re > 0.0 {
                                Some(Label::Growing)
                            } else {
                                None
                            }
                        }
                        _ => None,
                    };
                    row.push(lab);
                }
            }
            Kind::Ordinary => {}
        }
        per_point.push(row);
    }
    let basis = if given {
        "decided at the given parameter values".to_string()
    } else {
        "decided at a generic point (parameter i = 0.3 + 0.17·i, frequency 1/2); pass --at to decide at your values".to_string()
    };
    Labels { per_point, basis }
}

/// The boundary problem whose exponents are picked.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Boundary {
    /// Quasinormal modes: ingoing at horizons, outgoing at infinity.
    Qnm,
    /// Bound states: the larger exponent at regular points, decaying at infinity.
    Bound,
}

/// The root of a factor at which a root point's local data are read: the
/// largest real root (the outermost horizon of a horizon polynomial), or the
/// root with the largest real part when none is real.
fn outer_root(v: &Values, f: &crate::algebra::Poly) -> Option<Complex64> {
    let roots = v.roots(f)?;
    let real = |z: &&Complex64| z.im.abs() <= 1e-9 * z.re.abs().max(1.0);
    let pick = |it: &mut dyn Iterator<Item = &Complex64>| it.copied().max_by(|a, b| a.re.total_cmp(&b.re));
    pick(&mut roots.iter().filter(real)).or_else(|| pick(&mut roots.iter()))
}

/// Exponent choices (1-based, by point label as printed) for a boundary
/// problem, and a sentence per point saying what was picked.
pub fn boundary_choices(
    a: &Analysis,
    labels: Option<&Labels>,
    b: Boundary,
    point: &[GRat],
    point_text: impl Fn(&super::SingularPoint) -> String,
) -> (Vec<(String, usize)>, Vec<String>) {
    let v = Values::new(point.to_vec());
    let mut picks = Vec::new();
    let mut said = Vec::new();
    for (i, p) in a.points.iter().enumerate() {
        let row = labels.map(|l| &l.per_point[i]);
        let name = point_text(p);
        match (b, p.kind) {
            (Boundary::Qnm, Kind::Regular) => {
                if let Some(j) = row.and_then(|r| r.iter().position(|x| *x == Some(Label::Ingoing))) {
                    picks.push((name.clone(), j + 1));
                    said.push(format!("at {name}: the ingoing exponent (number {})", j + 1));
                }
            }
            (Boundary::Qnm, Kind::Irregular) => {
                if let Some(j) = row.and_then(|r| r.iter().position(|x| *x == Some(Label::Outgoing))) {
                    picks.push((name.clone(), j + 1));
                    said.push(format!("at {name}: the outgoing branch (number {})", j + 1));
                }
            }
            (Boundary::Bound, Kind::Regular) => {
                let theta = match &p.place {
                    Place::Point { at, .. } => v.ratfunc(at),
                    Place::Roots(f) => outer_root(&v, f),
                    Place::Infinity => Some(Complex64::new(0.0, 0.0)),
                };
                let re: Vec<f64> =
                    p.unknown_exponents.iter().map(|e| theta.and_then(|t| v.exponent(e, t)).map(|z| z.re).unwrap_or(f64::NAN)).collect();
                if re.len() == 2 && re.iter().all(|x| x.is_finite()) {
                    // At infinity the larger exponent in t = 1/z is the decaying solution too.
                    let j = if re[0] >= re[1] { 0 } else { 1 };
                    picks.push((name.clone(), j + 1));
                    said.push(format!("at {name}: the exponent with the larger real part (number {})", j + 1));
                }
            }
            (Boundary::Bound, Kind::Irregular) => {
                if let Some(j) = row.and_then(|r| r.iter().position(|x| *x == Some(Label::Decaying))) {
                    picks.push((name.clone(), j + 1));
                    said.push(format!("at {name}: the decaying branch (number {})", j + 1));
                }
            }
            _ => {}
        }
    }
    (picks, said)
}
