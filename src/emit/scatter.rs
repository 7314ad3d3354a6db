//! The documents of `scatter`: transmission and reflection per frequency
//! as text, CSV or JSON (schema at the top of `src/cli/scatter.rs`), in
//! pieces so that a long run can be written as it goes (head, one piece per
//! frequency, end). The command line and the Python package render here.

use super::numbers::fmt_complex;
use super::DocFormat;
use crate::solve::scatter::{cross_section, row_cross_section, ScatterRow, Scattering};
use serde_json::{json, Value};

/// The document's head, written before any point.
pub fn header(f: DocFormat, fname: &str, near: &str, far: &str, sum: Option<&(String, i64, i64)>, ls: &[i64]) -> String {
    match f {
        DocFormat::Json => {
            let lead = head_json(fname, near, far, sum).to_string();
            // The object is left open: the points follow as they are computed.
            format!("{},\n\"points\": [\n", lead.strip_suffix('}').unwrap_or(&lead))
        }
        DocFormat::Csv => {
            let mut h = String::from("omega,transmission,reflection,flux_error,matching_change,wkb_transmission");
            if sum.is_some() {
                h.push_str(",cross_section");
                for l in ls {
                    h.push_str(&format!(",T_{l}"));
                }
            }
            h.push_str(",error\n");
            h
        }
        DocFormat::Text => {
            let mut h = format!(
                "scattering from {far} onto the barrier, transmitted into {near} ({fname} real)\n  |T|² transmitted/incident flux (greybody factor), |R|² reflected/incident; flux error |R|² + |T|² − 1; change of |T|² with the matching point moved\n\n"
            );
            match sum {
                Some((p, a, b)) => h.push_str(&format!("  {:<24} {:<24} {}\n", fname, format!("σ (sum {p} = {a}..{b})"), "largest flux error")),
                None => h.push_str(&format!("  {:<24} {:<24} {:<24} {:<10} {}\n", fname, "|T|²", "|R|²", "flux err", "match change")),
            }
            h
        }
    }
}

fn num(x: f64) -> Value {
    if x.is_finite() {
        json!(x)
    } else {
        Value::Null
    }
}

/// One multipole's values as JSON fields.
pub fn fields(r: &Result<Scattering, String>) -> Value {
    match r {
        Ok(s) => {
            let mut v = json!({"transmission": num(s.transmission), "reflection": num(s.reflection), "flux_error": num(s.flux_error),
                "matching_change": num(s.matching_change), "superradiant": s.reflection > 1.0,
                "wkb_transmission": s.wkb_transmission.map(num).unwrap_or(Value::Null), "error": Value::Null});
            if !s.linked.is_empty() {
                let linked: serde_json::Map<String, Value> = s.linked.iter().map(|(n, x)| (n.clone(), json!([x.re, x.im]))).collect();
                v.as_object_mut().map(|m| m.insert("linked".into(), Value::Object(linked)));
            }
            v
        }
        Err(e) => json!({"transmission": Value::Null, "reflection": Value::Null, "flux_error": Value::Null,
            "matching_change": Value::Null, "superradiant": Value::Null, "wkb_transmission": Value::Null, "error": e}),
    }
}

/// One frequency's line(s); `first` for the first point of a JSON document.
pub fn row_text(f: DocFormat, w: f64, per: &[(i64, Result<Scattering, String>)], summed: bool, first: bool) -> String {
    match f {
        DocFormat::Json => format!("{}{}", if first { "  " } else { ",\n  " }, point_json(w, per, summed)),
        DocFormat::Csv => {
            let g = |x: f64| if x.is_finite() { format!("{x:.17e}") } else { String::new() };
            let mut line = match &per[0].1 {
                Ok(s) => format!(
                    "{},{},{},{},{},{}",
                    g(w),
                    g(s.transmission),
                    g(s.reflection),
                    g(s.flux_error),
                    g(s.matching_change),
                    s.wkb_transmission.map(g).unwrap_or_default()
                ),
                Err(_) => format!("{},,,,,", g(w)),
            };
            if summed {
                line.push_str(&format!(",{}", row_cross_section(w, per).map(g).unwrap_or_default()));
                for (_, r) in per {
                    line.push_str(&format!(",{}", r.as_ref().map(|s| g(s.transmission)).unwrap_or_default()));
                }
            }
            let errs: Vec<String> =
                per.iter().filter_map(|(l, r)| r.as_ref().err().map(|e| if summed { format!("l={l}: {e}") } else { e.clone() })).collect();
            line.push_str(&format!(",\"{}\"\n", errs.join("; ").replace('"', "'")));
            line
        }
        DocFormat::Text => {
            let wt = fmt_complex(w, 0.0);
            if summed {
                let worst = per.iter().filter_map(|(_, r)| r.as_ref().ok().map(|s| s.flux_error.abs())).fold(0.0, f64::max);
                match row_cross_section(w, per) {
                    Some(s) => format!("  {wt:<24} {:<24} {worst:.1e}\n", fmt_complex(s, 0.0)),
                    None => {
                        let e: Vec<String> = per.iter().filter_map(|(l, r)| r.as_ref().err().map(|e| format!("l = {l}: {e}"))).collect();
                        format!("  {wt:<24} no value: {}\n", e.join("; "))
                    }
                }
            } else {
                match &per[0].1 {
                    Ok(s) => {
                        let mark = if s.reflection > 1.0 { "  superradiant" } else { "" };
                        format!(
                            "  {wt:<24} {:<24} {:<24} {:<10} {:.1e}{mark}\n",
                            fmt_complex(s.transmission, 0.0),
                            fmt_complex(s.reflection, 0.0),
                            format!("{:.1e}", s.flux_error),
                            s.matching_change
                        )
                    }
                    Err(e) => format!("  {wt:<24} no value: {e}\n"),
                }
            }
        }
    }
}

/// The document's end, with a summary in text.
pub fn footer(f: DocFormat, rows: &[ScatterRow], summed: bool) -> String {
    let worst = rows.iter().flat_map(|(_, per)| per.iter().filter_map(|(_, r)| r.as_ref().ok().map(|s| s.flux_error.abs()))).fold(0.0, f64::max);
    let failed = rows.iter().filter(|(_, per)| per.iter().any(|(_, r)| r.is_err())).count();
    match f {
        DocFormat::Json => "\n]}\n".to_string(),
        DocFormat::Csv => String::new(),
        DocFormat::Text => {
            let mut o = format!("\n{} frequencies; largest flux error {worst:.1e}", rows.len());
            if failed > 0 {
                o.push_str(&format!("; {failed} without a value{}", if summed { " for some multipole" } else { "" }));
            }
            o.push('\n');
            o
        }
    }
}

/// One frequency as the JSON document's point.
pub fn point_json(w: f64, per: &[(i64, Result<Scattering, String>)], summed: bool) -> Value {
    let mut o = fields(&per[0].1);
    o.as_object_mut().map(|m| m.insert("omega".into(), json!(w)));
    if summed {
        let partial: Vec<Value> = per
            .iter()
            .map(|(l, r)| {
                let mut p = fields(r);
                if let Some(m) = p.as_object_mut() {
                    m.insert("l".into(), json!(l));
                    m.insert(
                        "cross_section_term".into(),
                        r.as_ref().ok().map(|s| num(cross_section(w, &[(*l, s.transmission)]))).unwrap_or(Value::Null),
                    );
                }
                p
            })
            .collect();
        if let Some(m) = o.as_object_mut() {
            m.insert("cross_section".into(), row_cross_section(w, per).map(num).unwrap_or(Value::Null));
            m.insert("partial".into(), Value::Array(partial));
        }
    }
    // Keys in a fixed order: omega first.
    let mut ordered = serde_json::Map::new();
    ordered.insert("omega".into(), json!(w));
    if let Some(m) = o.as_object() {
        for (k, v) in m {
            if k != "omega" {
                ordered.insert(k.clone(), v.clone());
            }
        }
    }
    Value::Object(ordered)
}

/// The JSON document's head (everything but the points).
pub fn head_json(fname: &str, near: &str, far: &str, sum: Option<&(String, i64, i64)>) -> Value {
    let s = sum.map(|(p, a, b)| json!({"param": p, "from": a, "to": b})).unwrap_or(Value::Null);
    json!({"frequency": fname, "near": near, "far": far, "sum": s})
}
