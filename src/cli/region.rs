//! `spectrum --region`: every mode in a rectangle of the complex plane,
//! found with no seed by the global spectral method, each polished by the
//! continued fraction (where the recurrence allows it) or by direct
//! integration, and checked by the other.

use super::spectrum::SpecFormat;
use super::values::fmt_complex;
use super::Failure;
use crate::error::{Error, ErrorKind};
use crate::solve::global::{self, Region};
use crate::solve::scan::PlaneMode;
use num_complex::Complex64;

fn bad(msg: String) -> Failure {
    Error::new(ErrorKind::Usage, msg).in_option("--region").into()
}

/// Reads 'RE0..RE1,IM0..IM1'.
pub(crate) fn parse_region(text: &str) -> Result<Region, Failure> {
    let Some((re, im)) = text.split_once(',') else {
        return Err(bad(format!("expected RE0..RE1,IM0..IM1 (e.g. '0..1,-2..0'), not '{text}'")));
    };
    let range = |part: &str, what: &str| -> Result<(f64, f64), Failure> {
        let Some((lo, hi)) = part.split_once("..") else {
            return Err(bad(format!("the {what} range '{part}' is not LOW..HIGH")));
        };
        let num = |s: &str| -> Result<f64, Failure> {
            s.trim().parse::<f64>().ok().filter(|x| x.is_finite()).ok_or_else(|| bad(format!("'{}' is not a finite number", s.trim())))
        };
        let (lo, hi) = (num(lo)?, num(hi)?);
        if lo >= hi {
            return Err(bad(format!("the {what} range '{part}' is empty (LOW must lie below HIGH)")));
        }
        Ok((lo, hi))
    };
    Ok(Region { re: range(re, "real")?, im: range(im, "imaginary")? })
}

/// How a mode relates to the others in the report.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Family {
    /// Re ω > 0.
    Oscillating,
    /// Re ω = 0 (to the polish's accuracy).
    PurelyImaginary,
    /// Re ω < 0 with no partner at −ω̄ (the equation is not mirror symmetric).
    NegativeFrequency,
}

impl Family {
    fn name(self) -> &'static str {
        match self {
            Family::Oscillating => "oscillating",
            Family::PurelyImaginary => "purely imaginary",
            Family::NegativeFrequency => "negative frequency",
        }
    }
}

/// One reported mode.
struct Row {
    family: Family,
    n: u32,
    /// Index of the partner when this is its mirror −ω̄.
    mirror_of: Option<u32>,
    omega: Complex64,
    spectral: global::SpectralValue,
    polished_by: &'static str,
    /// The other method's root from the same seed, when it ran and converged.
    check: Option<(&'static str, Complex64)>,
    check_note: Option<String>,
}

/// Every mode in the region `text`, as a report.
pub(crate) fn region_modes(
    text: &str,
    grid: usize,
    format: SpecFormat,
    src_name: &str,
    red: &crate::ode::Reduction,
    req: &crate::solve::request::SpectrumRequest,
) -> Result<(String, Vec<PlaneMode>, String), Failure> {
    let region = parse_region(text)?;
    let setup = crate::solve::request::region_setup(red, req)?;
    let (red, bp, opts, classic) = (&setup.red, &setup.problem, &setup.opts, setup.classic);
    let fname = setup.frequency.as_str();
    let (sp, found, rejected) = global::modes_in(bp, region, grid, opts.tol)?;
    let cf = if classic { crate::solve::spectrum::cf_polisher(red, opts).ok() } else { None };
    let scale = bp.scale;
    let zero_re = |w: Complex64| w.re.abs() <= 1e-7 * w.norm().max(scale);
    // Numbering: by |Im ω| within each family; a mirror takes its partner's number.
    let mut sorted: Vec<&global::Found> = found.iter().collect();
    // Re ω ≥ 0 first, so that each mirror finds its partner already numbered.
    sorted.sort_by(|p, q| {
        let (a, b) = (p.polished.omega, q.polished.omega);
        (a.re < 0.0 && !zero_re(a)).cmp(&(b.re < 0.0 && !zero_re(b))).then(a.im.abs().total_cmp(&b.im.abs()))
    });
    let mut rows: Vec<Row> = Vec::new();
    let mut counts = [0u32; 3];
    for f in &sorted {
        let w = f.polished.omega;
        let family = if zero_re(w) {
            Family::PurelyImaginary
        } else if w.re > 0.0 {
            Family::Oscillating
        } else {
            Family::NegativeFrequency
        };
        let mirror_of = if family == Family::NegativeFrequency {
            rows.iter().find(|r| r.family == Family::Oscillating && (r.omega + w.conj()).norm() <= 1e-7 * w.norm().max(scale)).map(|r| r.n)
        } else {
            None
        };
        let idx = match family {
            Family::Oscillating => 0,
            Family::PurelyImaginary => 1,
            Family::NegativeFrequency => 2,
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
            (Some(solve), Family::Oscillating | Family::PurelyImaginary) => {
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
                } else if family == Family::NegativeFrequency {
                    "the continued fraction is set up for Re ω ≥ 0: a mode with Re ω < 0 is polished by direct integration only"
                } else {
                    "the continued fraction from this value did not converge near it"
                };
                (w, "integrate", None, Some(note.to_string()))
            }
        };
        let family = if mirror_of.is_some() { Family::Oscillating } else { family };
        rows.push(Row { family, n, mirror_of, omega, spectral: f.spectral, polished_by, check, check_note });
    }
    // Partners first, each mirror right after its partner.
    rows.sort_by(|p, q| {
        let key = |r: &Row| (r.family as u8, r.n, r.mirror_of.is_some() as u8);
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
    let method = if bp.ends[1].nature == crate::solve::boundary::Nature::IrregularRank1 {
        format!("{method}; for the lower half-plane the ray to the irregular infinity is turned by ±{:.2}π into the complex plane (complex scaling), so that the outgoing solution is the recessive one along it", global::TURN / std::f64::consts::PI)
    } else {
        method
    };
    let mirror_note = "a mode with Re ω < 0 at −ω̄ of another is its mirror image: listed right after its partner, with the partner's number";
    let depth_note = "in double precision the discretised problem is very non-normal and only the least damped modes persist on both grids: a region reaching deep into the lower half-plane may hold further, more damped modes that are not listed (ask for them with --overtones)";
    let re_ = |v: f64| fmt_num(v);
    let region_text =
        format!("Re {fname} in [{}, {}], Im {fname} in [{}, {}]", re_(region.re.0), re_(region.re.1), re_(region.im.0), re_(region.im.1));
    // For --plot: each mode with its number (a mirror and a purely imaginary
    // mode say so), confirmed when the other method agreed.
    let plane: Vec<PlaneMode> = rows
        .iter()
        .map(|r| {
            let label = match (r.mirror_of, r.family) {
                (Some(m), _) => format!("n={m} (mirror)"),
                (None, Family::PurelyImaginary) => format!("n={} (imaginary)", r.n),
                (None, Family::NegativeFrequency) => format!("n={} (Re<0)", r.n),
                (None, Family::Oscillating) => format!("n={}", r.n),
            };
            let confirmed = r.check.is_some_and(|(_, w)| (w - r.omega).norm() <= crate::solve::request::CONFIRMED * r.omega.norm().max(scale));
            PlaneMode { label, omega: r.omega, confirmed }
        })
        .collect();
    let text = match format {
        SpecFormat::Json => {
            let ms: Vec<serde_json::Value> = rows
                .iter()
                .map(|r| {
                    serde_json::json!({
                        "family": r.family.name(),
                        "n": r.n,
                        "mirror_of": r.mirror_of,
                        "omega": [r.omega.re, r.omega.im],
                        "converged": true,
                        "found_by": "spectral",
                        "spectral": [r.spectral.omega.re, r.spectral.omega.im],
                        "spectral_change": r.spectral.change,
                        "polished_by": r.polished_by,
                        "polish_distance": (r.omega - r.spectral.omega).norm(),
                        "check": r.check.map(|(m, w)| serde_json::json!({"method": m, "omega": [w.re, w.im], "difference": (w - r.omega).norm()})),
                        "check_note": r.check_note,
                    })
                })
                .collect();
            let rej: Vec<serde_json::Value> = rejected.iter().map(|(w, why)| serde_json::json!({"spectral": [w.re, w.im], "reason": why})).collect();
            let v = serde_json::json!({
                "frequency": fname,
                "region": {"re": [region.re.0, region.re.1], "im": [region.im.0, region.im.1]},
                "method": method,
                "notes": bp.notes.iter().cloned().chain([mirror_note.to_string(), depth_note.to_string()]).collect::<Vec<_>>(),
                "modes": ms,
                "not_confirmed": rej,
            });
            format!("{}\n", serde_json::to_string_pretty(&v).unwrap_or_default())
        }
        SpecFormat::Csv => {
            let mut o =
                String::from("family,n,mirror_of,re,im,found_by,spectral_re,spectral_im,polished_by,polish_distance,check_method,check_difference\n");
            for r in &rows {
                let (cm, cd) = match r.check {
                    Some((m, w)) => (m.to_string(), format!("{:.3e}", (w - r.omega).norm())),
                    None => (String::new(), String::new()),
                };
                o.push_str(&format!(
                    "{},{},{},{:.17e},{:.17e},spectral,{:.17e},{:.17e},{},{:.3e},{},{}\n",
                    r.family.name(),
                    r.n,
                    r.mirror_of.map(|m| m.to_string()).unwrap_or_default(),
                    r.omega.re,
                    r.omega.im,
                    r.spectral.omega.re,
                    r.spectral.omega.im,
                    r.polished_by,
                    (r.omega - r.spectral.omega).norm(),
                    cm,
                    cd
                ));
            }
            o
        }
        SpecFormat::Text => {
            let mut o = String::new();
            o.push_str(&format!("modes of {src_name} ({fname}) in the region {region_text}, time dependence e^(-i*{fname}*t)\n"));
            for (side, e) in ["left end: ", "right end:"].iter().zip(bp.ends.iter()) {
                o.push_str(&format!(
                    "  {side} {} = {} ({}); condition: {}\n",
                    red.var,
                    crate::solve::boundary::location_text(e.location),
                    e.found,
                    e.condition.words()
                ));
            }
            for n in &bp.notes {
                o.push_str(&format!("  note: {n}\n"));
            }
            o.push_str(&format!("  found by: {method}\n"));
            o.push_str(&format!("  note: {mirror_note}\n"));
            o.push_str(&format!("  note: {depth_note}\n\n"));
            if rows.is_empty() {
                o.push_str("  no modes in this region\n");
            } else {
                o.push_str(
                    "  family            n  omega                                        found (spectral)  polished by  check by the other method\n",
                );
                for r in &rows {
                    let label = match r.mirror_of {
                        Some(_) => "  mirror".to_string(),
                        None => r.family.name().to_string(),
                    };
                    let check = match (r.check, &r.check_note) {
                        (Some((m, w)), _) => format!("{m}: differs by {:.1e}", (w - r.omega).norm()),
                        (None, Some(note)) => format!("none ({note})"),
                        (None, None) => "none".to_string(),
                    };
                    o.push_str(&format!(
                        "  {:<17} {:<2} {:<44} moved {:.1e}  {:<11}  {}\n",
                        label,
                        r.n,
                        fmt_complex(r.omega.re, r.omega.im),
                        (r.omega - r.spectral.omega).norm(),
                        r.polished_by,
                        check
                    ));
                }
            }
            for (w, why) in &rejected {
                o.push_str(&format!("  not a confirmed mode: spectral value {} ({why})\n", fmt_complex(w.re, w.im)));
            }
            o
        }
    };
    Ok((text, plane, fname.to_string()))
}

/// A number for the region's description.
fn fmt_num(x: f64) -> String {
    let s = format!("{x}");
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}
