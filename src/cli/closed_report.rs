//! The closed-form part of `spectrum`'s output: the families of
//! `solve::closed` with their exact expressions, the values evaluated from
//! them (method "exact") and, for each, the numeric mode of the same run
//! nearest to it as its check. Added to the document the numeric route
//! printed: a `closed_form` key in JSON (schema at the top of
//! `spectrum.rs`), a section after the table in text; CSV is unchanged.

use super::spectrum::SpecFormat;
use super::values::fmt_complex;
use crate::algebra::{Field, GRat, RatFunc};
use crate::solve::boundary::{Condition, Location};
use crate::solve::closed::{derive, ClosedForm, EndPick, Outcome};
use num_complex::Complex64;
use serde_json::{json, Value};

/// How near a numeric mode must lie to an exact value to count as its check.
const CHECK_NEAR: f64 = 1e-6;

/// What the closed form is derived from: the exact normal form with every
/// parameter symbolic, and the ends the numeric route used.
pub(crate) struct ClosedRequest<'a> {
    /// The field of the unsubstituted reduction.
    pub field: &'a Field,
    /// Its normal form Q.
    pub q: &'a RatFunc,
    /// The spectral parameter's index.
    pub freq: usize,
    /// The parameter values (the spectral one is ignored).
    pub point: &'a [GRat],
    /// The ends (None: the numeric route had none the derivation can use).
    pub ends: Option<[EndPick; 2]>,
    /// The overtones asked for.
    pub overtones: (u32, u32),
}

/// The document of `--method exact`: the closed form alone, its values as the modes.
pub(crate) fn exact_only(req: &ClosedRequest, format: SpecFormat, fname: &str, boundary: &str) -> Result<String, super::Failure> {
    let outcome = match req.ends {
        None => Outcome::NotClosed("the domain is the whole line (both ends at the same point at infinity)".into()),
        Some(ends) => derive(req.field, req.q, req.freq, req.point, &ends)?,
    };
    let c = match outcome {
        Outcome::Closed(c) => c,
        Outcome::NotClosed(why) => {
            return Err(crate::error::Error::new(crate::error::ErrorKind::Usage, format!("no closed form for this problem: {why}"))
                .in_option("--method")
                .into())
        }
    };
    let mut modes = Vec::new();
    for (i, f) in c.families.iter().enumerate() {
        for (n, w) in values_of(&c, f, req) {
            modes.push((i + 1, n, w));
        }
    }
    Ok(match format {
        SpecFormat::Json => {
            let ms: Vec<Value> = modes.iter().map(|(fam, n, w)| json!({"n": n, "family": fam, "omega": [w.re, w.im], "converged": true, "reason": Value::Null, "method": "exact", "evidence": Value::Null, "check": Value::Null})).collect();
            let doc = json!({"frequency": fname, "boundary": boundary, "method": "exact", "modes": ms, "closed_form": families_json(&c, req, &[]), "closed_form_note": Value::Null});
            format!("{}\n", serde_json::to_string_pretty(&doc).unwrap_or_default())
        }
        SpecFormat::Csv => {
            let mut s = "n,family,re,im,method\n".to_string();
            for (fam, n, w) in &modes {
                s.push_str(&format!("{n},{fam},{:?},{:?},exact\n", w.re, w.im));
            }
            s
        }
        SpecFormat::Text => {
            let what = match boundary {
                "bound" => "bound states",
                "quasi-bound" => "quasi-bound states",
                _ => "quasinormal modes",
            };
            format!("{what} in {fname} from the closed form alone (--method exact: no numeric check)\n{}", families_text(&c, req))
        }
    })
}

/// The ends of a bound-state domain: normalisable (decaying) at both.
pub(crate) fn bound_ends(domain: crate::solve::collocation::Domain) -> Option<[EndPick; 2]> {
    use crate::solve::collocation::Domain;
    let pick = |location| EndPick { location, condition: Condition::Normalisable };
    match domain {
        Domain::Finite(a, b) => Some([pick(Location::At(a)), pick(Location::At(b))]),
        Domain::HalfLine(a) => Some([pick(Location::At(a)), pick(Location::Infinity)]),
        Domain::Line => None,
    }
}

/// The ends of a boundary problem.
pub(crate) fn problem_ends(bp: &crate::solve::boundary::BoundaryProblem) -> [EndPick; 2] {
    bp.ends.clone().map(|e| EndPick { location: e.location, condition: e.condition })
}

/// `out` (the document of the numeric route) with the closed form added.
pub(crate) fn attach(req: &ClosedRequest, format: SpecFormat, out: String) -> String {
    if format == SpecFormat::Csv {
        return out;
    }
    let outcome = match req.ends {
        None => Ok(Outcome::NotClosed("the domain is the whole line (both ends at the same point at infinity)".into())),
        Some(ends) => derive(req.field, req.q, req.freq, req.point, &ends),
    };
    let outcome = outcome.unwrap_or_else(|e| Outcome::NotClosed(format!("the derivation stopped: {}", e.message)));
    if format == SpecFormat::Json {
        {
            let Ok(mut v) = serde_json::from_str::<Value>(&out) else { return out };
            let numeric = numeric_modes(&v);
            let (cf, note) = match &outcome {
                Outcome::Closed(c) => (families_json(c, req, &numeric), Value::Null),
                Outcome::NotClosed(why) => (Value::Null, json!(why)),
            };
            if let Value::Object(m) = &mut v {
                m.insert("closed_form".into(), cf);
                m.insert("closed_form_note".into(), note);
            }
            return format!("{}\n", serde_json::to_string_pretty(&v).unwrap_or_default());
        }
    }
    let mut s = out;
    match &outcome {
        Outcome::Closed(c) => s.push_str(&families_text(c, req)),
        Outcome::NotClosed(why) => s.push_str(&format!("\nclosed form: none ({why})\n")),
    }
    s
}

/// The converged modes of the document: (n, ω, method).
fn numeric_modes(v: &Value) -> Vec<(u64, Complex64, String)> {
    let mut out = Vec::new();
    for m in v["modes"].as_array().into_iter().flatten() {
        let (Some(re), Some(im)) = (m["omega"][0].as_f64(), m["omega"][1].as_f64()) else { continue };
        out.push((m["n"].as_u64().unwrap_or(0), Complex64::new(re, im), m["method"].as_str().unwrap_or("").to_string()));
    }
    out
}

fn n_range_json(c: &ClosedForm, f: &crate::solve::closed::Family) -> Value {
    let _ = c;
    let last = match f.range.last {
        Some(u32::MAX) => json!(-1),
        Some(l) => json!(l),
        None => Value::Null,
    };
    json!({
        "first": 0,
        "last": last,
        "bound": f.range.bound.as_ref().map(|(t, _)| format!("n < {t}")),
        "branch": if f.range.branch.is_empty() { Value::Null } else { json!(f.range.branch) },
    })
}

fn values_of(c: &ClosedForm, f: &crate::solve::closed::Family, req: &ClosedRequest) -> Vec<(u32, Complex64)> {
    (req.overtones.0..=req.overtones.1).filter_map(|n| c.value(f, req.point, n).map(|w| (n, w))).collect()
}

fn nearest(w: Complex64, numeric: &[(u64, Complex64, String)]) -> Option<&(u64, Complex64, String)> {
    numeric.iter().min_by(|a, b| (a.1 - w).norm().total_cmp(&(b.1 - w).norm()))
}

fn families_json(c: &ClosedForm, req: &ClosedRequest, numeric: &[(u64, Complex64, String)]) -> Value {
    let fams: Vec<Value> = c
        .families
        .iter()
        .map(|f| {
            let values: Vec<Value> = values_of(c, f, req)
                .into_iter()
                .map(|(n, w)| {
                    // The numeric mode of this run at this value, if any (relative distance ≤ 1e-6).
                    let check = nearest(w, numeric).filter(|(_, mw, _)| (mw - w).norm() <= CHECK_NEAR * w.norm().max(1.0)).map_or(Value::Null, |(mn, mw, method)| {
                        json!({"method": method, "n": mn, "omega": [mw.re, mw.im], "agreement": (mw - w).norm() / w.norm().max(1e-300)})
                    });
                    json!({"n": n, "omega": [w.re, w.im], "method": "exact", "check": check})
                })
                .collect();
            json!({
                "family": f.label,
                "expression": f.value.text(&c.names),
                "latex": f.value.latex(&c.names),
                "n_range": n_range_json(c, f),
                "values": values,
            })
        })
        .collect();
    json!({"route": c.route, "families": fams})
}

fn families_text(c: &ClosedForm, req: &ClosedRequest) -> String {
    let mut s = format!("\nclosed form ({})\n", c.route);
    let fname = &req.field.names()[req.freq];
    for (i, f) in c.families.iter().enumerate() {
        s.push_str(&format!("  family {}: {}\n", i + 1, f.label));
        s.push_str(&format!("    {fname} = {}\n", f.value.text(&c.names)));
        let range = match (f.range.last, &f.range.bound) {
            (Some(u32::MAX), _) => "no member at these values".to_string(),
            (Some(l), Some((b, _))) => format!("0 <= n < {b}  (n <= {l} at these values)"),
            (Some(l), None) => format!("0 <= n <= {l} at these values"),
            (None, _) => "n = 0, 1, 2, ...".to_string(),
        };
        s.push_str(&format!("    n: {range}\n"));
        if !f.range.branch.is_empty() {
            s.push_str(&format!("    branch: {}\n", f.range.branch));
        }
        for (n, w) in values_of(c, f, req) {
            s.push_str(&format!("    n = {n}: {}  (exact)\n", fmt_complex(w.re, w.im)));
        }
    }
    s
}
