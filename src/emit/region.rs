//! The documents of a region search (`solve::region::RegionReport`): JSON
//! (`frequency`, `boundary`, `region`, `method`, `notes`, `limits` — what the
//! search cannot exclude —, `modes`, `unsettled` — overtones sought in the
//! window and not settled, with `degenerate_point` where the recurrence
//! degenerates next to them — and `not_confirmed`; each mode has `family`,
//! `n`, `mirror_of`, `omega`, `found_by` ("spectral", "ladder" or
//! "mirror"), `spectral` and `spectral_change` (null unless found by the
//! spectral method), `seed`, `polished_by`, `polish_distance`, `check`,
//! `check_note`, and also the keys of a spectrum document — `converged`,
//! `reason`, `method`, `evidence` — so one reader serves both), CSV and
//! text. The command line and the Python package both render here.

use super::numbers::fmt_complex;
use crate::solve::region::{Finding, RegionReport};
use serde_json::{json, Value};

/// A number for the region's description.
fn fmt_num(x: f64) -> String {
    let s = format!("{x}");
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// The report as its JSON document.
pub fn json(r: &RegionReport) -> Value {
    let ms: Vec<Value> = r
        .rows
        .iter()
        .map(|m| {
            let sv = m.found.spectral();
            let spectral = sv.map(|v| json!([v.omega.re, v.omega.im]));
            let change = sv.map(|v| v.change);
            let distance = (m.omega - m.seed).norm();
            let seed_from = match &m.found {
                Finding::Spectral(_) => "an eigenvalue of the global spectral method".to_string(),
                Finding::Ladder(from) => from.clone(),
                Finding::Mirror => "the mirror image −ω̄ of its partner".to_string(),
                Finding::SpecialPoint => format!("an algebraically special point of the recurrence, exact (the ladder sought it from {})", fmt_complex(m.seed.re, m.seed.im)),
            };
            json!({
                "family": m.family.name(),
                "n": m.n,
                "mirror_of": m.mirror_of,
                "omega": [m.omega.re, m.omega.im],
                "converged": true,
                "reason": Value::Null,
                "method": m.polished_by.tag(),
                "found_by": m.found.tag(),
                "spectral": spectral,
                "spectral_change": change,
                "seed": [m.seed.re, m.seed.im],
                "polished_by": m.polished_by.tag(),
                "polish_distance": distance,
                "evidence": {"found_by": m.found.tag(), "seed_from": seed_from, "spectral": spectral, "spectral_change": change, "polish_distance": distance},
                "check": m.check.map(|(k, w)| json!({"method": k.tag(), "omega": [w.re, w.im], "difference": (w - m.omega).norm()})),
                "check_note": m.check_note,
            })
        })
        .collect();
    let rej: Vec<Value> = r.rejected.iter().map(|(w, why)| json!({"value": [w.re, w.im], "reason": why})).collect();
    let unsettled: Vec<Value> = r
        .unsettled
        .iter()
        .map(|u| {
            json!({
                "n": u.n,
                "seed": [u.seed.re, u.seed.im],
                "seed_from": u.seed_from,
                "reason": u.reason,
                "degenerate_point": u.degenerate.map(|w| json!([w.re, w.im])),
            })
        })
        .collect();
    json!({
        "frequency": r.frequency,
        "boundary": "qnm",
        "region": {"re": [r.region.re.0, r.region.re.1], "im": [r.region.im.0, r.region.im.1]},
        "method": r.method,
        "notes": r.problem_notes.iter().chain(&r.notes).cloned().collect::<Vec<_>>(),
        "limits": r.limits,
        "modes": ms,
        "unsettled": unsettled,
        "not_confirmed": rej,
    })
}

/// The report as CSV, one line per mode.
pub fn csv(r: &RegionReport) -> String {
    let mut o = String::from("family,n,mirror_of,re,im,found_by,spectral_re,spectral_im,polished_by,polish_distance,check_method,check_difference\n");
    for m in &r.rows {
        let (cm, cd) = match m.check {
            Some((k, w)) => (k.tag().to_string(), format!("{:.3e}", (w - m.omega).norm())),
            None => (String::new(), String::new()),
        };
        o.push_str(&format!(
            "{},{},{},{:.17e},{:.17e},{},{},{},{:.3e},{},{}\n",
            m.family.name(),
            m.n,
            m.mirror_of.map(|x| x.to_string()).unwrap_or_default(),
            m.omega.re,
            m.omega.im,
            m.found.tag(),
            m.found.spectral().map(|v| format!("{:.17e},{:.17e}", v.omega.re, v.omega.im)).unwrap_or_else(|| ",".into()),
            m.polished_by.tag(),
            (m.omega - m.seed).norm(),
            cm,
            cd
        ));
    }
    o
}

/// The report as text; `src_name` names the equation.
pub fn text(r: &RegionReport, src_name: &str) -> String {
    let fname = &r.frequency;
    let region_text = format!(
        "Re {fname} in [{}, {}], Im {fname} in [{}, {}]",
        fmt_num(r.region.re.0),
        fmt_num(r.region.re.1),
        fmt_num(r.region.im.0),
        fmt_num(r.region.im.1)
    );
    let mut o = String::new();
    o.push_str(&format!("modes of {src_name} ({fname}) in the region {region_text}, time dependence e^(-i*{fname}*t)\n"));
    for (side, e) in ["left end: ", "right end:"].iter().zip(r.ends.iter()) {
        o.push_str(&format!(
            "  {side} {} = {} ({}); condition: {}\n",
            r.var,
            crate::solve::boundary::location_text(e.location),
            e.found,
            e.condition.words()
        ));
    }
    for n in &r.problem_notes {
        o.push_str(&format!("  note: {n}\n"));
    }
    o.push_str(&format!("  found by: {}\n", r.method));
    for n in &r.notes {
        o.push_str(&format!("  note: {n}\n"));
    }
    for n in &r.limits {
        o.push_str(&format!("  cannot exclude: {n}\n"));
    }
    o.push('\n');
    if r.rows.is_empty() {
        o.push_str("  no modes in this region\n");
    } else {
        o.push_str("  family            n  omega                                        found by  moved    polished by  check by the other method\n");
        for m in &r.rows {
            let label = match m.mirror_of {
                Some(_) => "  mirror".to_string(),
                None => m.family.name().to_string(),
            };
            let check = match (m.check, &m.check_note) {
                (Some((k, w)), None) => format!("{}: differs by {:.1e}", k.tag(), (w - m.omega).norm()),
                (Some((k, w)), Some(note)) => format!("{}: differs by {:.1e} ({note})", k.tag(), (w - m.omega).norm()),
                (None, Some(note)) => format!("none ({note})"),
                (None, None) => "none".to_string(),
            };
            o.push_str(&format!(
                "  {:<17} {:<2} {:<44} {:<8}  {:.1e}  {:<11}  {}\n",
                label,
                m.n,
                fmt_complex(m.omega.re, m.omega.im),
                m.found.tag(),
                (m.omega - m.seed).norm(),
                m.polished_by.tag(),
                check
            ));
        }
    }
    for u in &r.unsettled {
        let at = match u.degenerate {
            Some(w) => format!("; next to {}, where the recurrence degenerates (see the note)", fmt_complex(w.re, w.im)),
            None => String::new(),
        };
        o.push_str(&format!(
            "  not settled: overtone {}, sought from {} ({}): {}{at}\n",
            u.n,
            fmt_complex(u.seed.re, u.seed.im),
            u.seed_from,
            u.reason
        ));
    }
    for (w, why) in &r.rejected {
        o.push_str(&format!("  not a confirmed mode: {} ({why})\n", fmt_complex(w.re, w.im)));
    }
    o
}
