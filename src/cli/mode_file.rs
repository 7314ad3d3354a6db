//! The file written by `spectrum --mode-functions FILE` (each mode's
//! function sampled on the real axis, CSV or JSON by the file's extension)
//! and the picture of `--mode-plot FILE`.
//!
//! Where two methods ran, both functions are written: the mode's own
//! method's (its value, its construction) and the second method's (bound
//! states: the collocation eigenvector interpolated to the same samples;
//! quasinormal modes: the same construction at the direct-integration
//! frequency), normalised alike, with their largest difference.
//!
//! CSV: `n,method,omega_re,omega_im,z,re,im` (one line per sample, the first
//! method's lines then the second's; a function that could not be built
//! gets one line with empty z, re, im). JSON (stable): `variable`,
//! `normalisation` (words) and `modes` [{`n`, `method` ("cf",
//! "terminating", "integrate" or "shooting"), `omega` [re, im], `error` (null, or why there is
//! no function), `points` [[z, re, im], …], `check` (null, or the second
//! method's function: {`method` ("integrate" or "collocation"), `omega`,
//! `error`, `points`}), `largest_difference` (max |ψ₁ − ψ₂| over the
//! samples relative to max |ψ₁|, or null)}].

use super::Failure;
use crate::solve::request::{MethodFunction, ModeFunction};
use serde_json::{json, Value};

/// Checks the extension before any work.
pub(crate) fn check_path(path: &str) -> Result<(), Failure> {
    let lower = path.to_ascii_lowercase();
    if lower.ends_with(".csv") || lower.ends_with(".json") {
        Ok(())
    } else {
        Err(crate::error::Error::new(crate::error::ErrorKind::Usage, "the mode functions are written as CSV or JSON: give FILE.csv or FILE.json")
            .in_named("--mode-functions")
            .into())
    }
}

fn function_json(f: &MethodFunction) -> Value {
    let (error, points) = match &f.samples {
        Ok(s) => (Value::Null, s.iter().map(|(z, y, _)| json!([z, y.re, y.im])).collect::<Vec<_>>()),
        Err(e) => (json!(e), Vec::new()),
    };
    json!({"method": f.method.tag(), "omega": [f.value.re, f.value.im], "error": error, "points": points})
}

fn function_csv(o: &mut String, n: u32, f: &MethodFunction) {
    let (m, w) = (f.method.tag(), f.value);
    match &f.samples {
        Ok(s) => {
            for (z, y, _) in s {
                o.push_str(&format!("{n},{m},{:.17e},{:.17e},{z:.17e},{:.17e},{:.17e}\n", w.re, w.im, y.re, y.im));
            }
        }
        Err(_) => o.push_str(&format!("{n},{m},{:.17e},{:.17e},,,\n", w.re, w.im)),
    }
}

/// Writes the file.
pub(crate) fn write(path: &str, var: &str, normalisation: &str, modes: &[ModeFunction]) -> Result<(), Failure> {
    let text = if path.to_ascii_lowercase().ends_with(".json") {
        let ms: Vec<Value> = modes
            .iter()
            .map(|m| {
                let mut v = function_json(&m.first);
                v["n"] = json!(m.n);
                v["check"] = m.second.as_ref().map_or(Value::Null, function_json);
                v["largest_difference"] = m.difference.map_or(Value::Null, |d| json!(d));
                v
            })
            .collect();
        format!("{}\n", serde_json::to_string(&json!({"variable": var, "normalisation": normalisation, "modes": ms})).unwrap_or_default())
    } else {
        let mut o = String::from("n,method,omega_re,omega_im,z,re,im\n");
        for m in modes {
            function_csv(&mut o, m.n, &m.first);
            if let Some(s) = &m.second {
                function_csv(&mut o, m.n, s);
            }
        }
        o
    };
    std::fs::write(path, text).map_err(|e| Failure::Plain(format!("error: cannot write the mode functions {path}: {e}"), 1))
}

/// Draws the picture: Re ψ (and Im ψ in a second panel where it is not
/// negligible) against the variable, one colour per overtone, the first
/// method as a line and the second as points on it.
pub(crate) fn plot(path: &str, var: &str, title: &str, modes: &[ModeFunction]) -> Result<(), Failure> {
    use crate::solve::plot::{plot_functions, Curve};
    let curve = |n: u32, f: &MethodFunction, marks: bool| -> Option<Curve> {
        let s = f.samples.as_ref().ok()?;
        Some(Curve {
            label: format!("n = {n} ({})", crate::emit::spectrum::method_words(f.method)),
            colour: n as usize,
            marks,
            points: s.iter().map(|(z, y, _)| (*z, y.re, y.im)).collect(),
        })
    };
    let curves: Vec<Curve> =
        modes.iter().flat_map(|m| [curve(m.n, &m.first, false), m.second.as_ref().and_then(|s| curve(m.n, s, true))]).flatten().collect();
    plot_functions(std::path::Path::new(path), var, title, &curves)
        .map_err(|e| Failure::Plain(format!("error: cannot write the plot {path}: {e}"), 1))
}
