//! Every mode in a rectangle of the complex plane (`spectrum --region`):
//! found with no seed by the global spectral method (`global::modes_in`),
//! each polished by the continued fraction (where the recurrence allows it)
//! or by direct integration, and checked by the other; numbered by |Im ω|
//! within each family, a mirror −ω̄ beside its partner. Rendered by
//! `emit::region`.

use super::boundary::End;
use super::global::{self, Region, SpectralValue};
use super::plot::PlaneMode;
use super::request::{region_setup, SpectrumRequest, CONFIRMED};
use crate::error::RequestInput;
use crate::error::Result;
use crate::ode::Reduction;
use num_complex::Complex64;

/// How a mode relates to the others in the report.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ModeFamily {
    /// Re ω > 0.
    Oscillating,
    /// Re ω = 0 (to the polish's accuracy).
    PurelyImaginary,
    /// Re ω < 0 with no partner at −ω̄ (the equation is not mirror symmetric).
    NegativeFrequency,
}

impl ModeFamily {
    /// The family's name in reports.
    pub fn name(self) -> &'static str {
        match self {
            ModeFamily::Oscillating => "oscillating",
            ModeFamily::PurelyImaginary => "purely imaginary",
            ModeFamily::NegativeFrequency => "negative frequency",
        }
    }
}

/// One reported mode.
#[derive(Clone, Debug)]
pub struct RegionRow {
    /// Its family.
    pub family: ModeFamily,
    /// Its number within the family (a mirror has its partner's).
    pub n: u32,
    /// The partner's number when this is its mirror −ω̄.
    pub mirror_of: Option<u32>,
    /// The polished value.
    pub omega: Complex64,
    /// The spectral eigenvalue it was polished from.
    pub spectral: SpectralValue,
    /// Which method polished it: "cf" or "integrate".
    pub polished_by: &'static str,
    /// The other method's root from the same seed, when it ran and converged.
    pub check: Option<(&'static str, Complex64)>,
    /// Why there is no check, when there is none.
    pub check_note: Option<String>,
}

/// What the region search found.
#[derive(Clone, Debug)]
pub struct RegionReport {
    /// The spectral parameter's name.
    pub frequency: String,
    /// The equation's variable.
    pub var: String,
    /// The rectangle searched.
    pub region: Region,
    /// The boundary problem's ends.
    pub ends: [End; 2],
    /// The boundary problem's choices, in words.
    pub problem_notes: Vec<String>,
    /// The method, in words.
    pub method: String,
    /// Notes on numbering and reach, in words.
    pub notes: Vec<String>,
    /// The modes, partners first, each mirror after its partner.
    pub rows: Vec<RegionRow>,
    /// Spectral values that were not confirmed, with the reason.
    pub rejected: Vec<(Complex64, String)>,
    /// The frequency scale of the problem.
    pub scale: f64,
}

impl RegionReport {
    /// The modes for a picture of the complex plane: each labelled by its
    /// number (a mirror and a purely imaginary mode say so), confirmed when
    /// the other method agreed.
    pub fn plane_modes(&self) -> Vec<PlaneMode> {
        self.rows
            .iter()
            .map(|r| {
                let label = match (r.mirror_of, r.family) {
                    (Some(m), _) => format!("n={m} (mirror)"),
                    (None, ModeFamily::PurelyImaginary) => format!("n={} (imaginary)", r.n),
                    (None, ModeFamily::NegativeFrequency) => format!("n={} (Re<0)", r.n),
                    (None, ModeFamily::Oscillating) => format!("n={}", r.n),
                };
                let confirmed = r.check.is_some_and(|(_, w)| (w - r.omega).norm() <= CONFIRMED * r.omega.norm().max(self.scale));
                PlaneMode { label, omega: r.omega, confirmed }
            })
            .collect()
    }
}

/// Every mode of the request's boundary problem in `region`, with `grid`
/// intervals on the global method's coarser grid.
pub fn region_modes(red: &Reduction, req: &SpectrumRequest, region: Region, grid: usize) -> Result<RegionReport> {
    let setup = region_setup(red, req)?;
    let (red, bp, opts, classic) = (&setup.red, &setup.problem, &setup.opts, setup.classic);
    let fname = setup.frequency.as_str();
    let (sp, found, rejected) = global::modes_in(bp, region, grid, opts.tol)?;
    let cf = if classic { super::spectrum::cf_polisher(red, opts).ok() } else { None };
    let scale = bp.scale;
    let zero_re = |w: Complex64| w.re.abs() <= 1e-7 * w.norm().max(scale);
    // Numbering: by |Im ω| within each family; a mirror takes its partner's number.
    let mut sorted: Vec<&global::Found> = found.iter().collect();
    // Re ω ≥ 0 first, so that each mirror finds its partner already numbered.
    sorted.sort_by(|p, q| {
        let (a, b) = (p.polished.omega, q.polished.omega);
        (a.re < 0.0 && !zero_re(a)).cmp(&(b.re < 0.0 && !zero_re(b))).then(a.im.abs().total_cmp(&b.im.abs()))
    });
    let mut rows: Vec<RegionRow> = Vec::new();
    let mut counts = [0u32; 3];
    for f in &sorted {
        let w = f.polished.omega;
        let family = if zero_re(w) {
            ModeFamily::PurelyImaginary
        } else if w.re > 0.0 {
            ModeFamily::Oscillating
        } else {
            ModeFamily::NegativeFrequency
        };
        let mirror_of = if family == ModeFamily::NegativeFrequency {
            rows.iter().find(|r| r.family == ModeFamily::Oscillating && (r.omega + w.conj()).norm() <= 1e-7 * w.norm().max(scale)).map(|r| r.n)
        } else {
            None
        };
        let idx = match family {
            ModeFamily::Oscillating => 0,
            ModeFamily::PurelyImaginary => 1,
            ModeFamily::NegativeFrequency => 2,
        };
        let n = match mirror_of {
            Some(m) => m,
            None => {
                counts[idx] += 1;
                counts[idx] - 1
            }
        };
        // Polish by the continued fraction (overtone n's inversion) where it
        // exists and lands near the spectral value; direct integration checks it.
        let reach = 100.0 * sp.tol * w.norm().max(scale);
        let by_cf = match (&cf, family) {
            (Some(solve), ModeFamily::Oscillating | ModeFamily::PurelyImaginary) => {
                let r = solve(n, f.spectral.omega);
                (r.converged && (r.omega - f.spectral.omega).norm() <= reach).then_some(r.omega)
            }
            _ => None,
        };
        let (omega, polished_by, check, check_note) = match by_cf {
            Some(c) => (c, "cf", Some(("integrate", w)), None),
            None => {
                let note = if cf.is_none() {
                    "no recurrence with a continued fraction on this problem: the evidence is the agreement of the spectral value, and of standard and refined integration"
                } else if family == ModeFamily::NegativeFrequency {
                    "the continued fraction is set up for Re ω ≥ 0: a mode with Re ω < 0 is polished by direct integration only"
                } else {
                    "the continued fraction from this value did not converge near it"
                };
                (w, "integrate", None, Some(note.to_string()))
            }
        };
        let family = if mirror_of.is_some() { ModeFamily::Oscillating } else { family };
        rows.push(RegionRow { family, n, mirror_of, omega, spectral: f.spectral, polished_by, check, check_note });
    }
    // Partners first, each mirror right after its partner.
    rows.sort_by(|p, q| {
        let key = |r: &RegionRow| (r.family as u8, r.n, r.mirror_of.is_some() as u8);
        key(p).cmp(&key(q))
    });
    let method = format!(
        "the global spectral method: Chebyshev collocation on {} and {} intervals, {}; the polynomial eigenvalue problem (degree {} in {fname}) by companion linearisation, shift and invert; an eigenvalue is kept when both grids agree to {:.0e} × max(|{fname}|, {:.3e}) ({} eigenvalues of the finer grid dropped as spurious)",
        sp.grids.0,
        sp.grids.1,
        sp.factors.map,
        sp.degree,
        sp.tol,
        scale,
        sp.dropped
    );
    let method = if bp.ends[1].nature == super::boundary::Nature::IrregularRank1 {
        format!("{method}; for the lower half-plane the ray to the irregular infinity is turned by ±{:.2}π into the complex plane (complex scaling), so that the outgoing solution is the recessive one along it", global::TURN / std::f64::consts::PI)
    } else {
        method
    };
    let mirror_note = "a mode with Re ω < 0 at −ω̄ of another is its mirror image: listed right after its partner, with the partner's number";
    let depth_note = format!("in double precision the discretised problem is very non-normal and only the least damped modes persist on both grids: a region reaching deep into the lower half-plane may hold further, more damped modes that are not listed (ask for them with {opt_overtones})", opt_overtones = RequestInput::Overtones.mention());
    Ok(RegionReport {
        frequency: fname.to_string(),
        var: red.var.clone(),
        region,
        ends: bp.ends.clone(),
        problem_notes: bp.notes.clone(),
        method,
        notes: vec![mirror_note.to_string(), depth_note.to_string()],
        rows,
        rejected,
        scale,
    })
}
