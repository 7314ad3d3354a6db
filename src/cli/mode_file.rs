//! The file written by `spectrum --mode-functions FILE`: each mode's function
//! sampled on the real axis, CSV or JSON by the file's extension.
//!
//! CSV: `n,omega_re,omega_im,z,re,im` (one line per sample; a mode without
//! a function gets one line with empty z, re, im and is named on stderr-free
//! terms in the JSON only). JSON (stable): `variable`, `normalisation`
//! (words) and `modes` [{`n`, `omega` [re, im], `error` (null, or why there is
//! no function), `points` [[z, re, im], …]}].

use super::Failure;
use crate::solve::modefn::Samples;
use num_complex::Complex64;
use serde_json::{json, Value};

/// One mode: overtone, eigenvalue and its sampled function (or why there is none).
pub(crate) type ModeFunction = (u32, Complex64, Result<Samples, String>);

/// Checks the extension before any work.
pub(crate) fn check_path(path: &str) -> Result<(), Failure> {
    let lower = path.to_ascii_lowercase();
    if lower.ends_with(".csv") || lower.ends_with(".json") {
        Ok(())
    } else {
        Err(crate::error::Error::new(crate::error::ErrorKind::Usage, "the mode functions are written as CSV or JSON: give FILE.csv or FILE.json")
            .in_option("--mode-functions")
            .into())
    }
}

/// Writes the file.
pub(crate) fn write(path: &str, var: &str, normalisation: &str, modes: &[ModeFunction]) -> Result<(), Failure> {
    let text = if path.to_ascii_lowercase().ends_with(".json") {
        let ms: Vec<Value> = modes
            .iter()
            .map(|(n, w, f)| match f {
                Ok(s) => json!({"n": n, "omega": [w.re, w.im], "error": Value::Null,
                    "points": s.iter().map(|(z, y, _)| json!([z, y.re, y.im])).collect::<Vec<_>>()}),
                Err(e) => json!({"n": n, "omega": [w.re, w.im], "error": e, "points": []}),
            })
            .collect();
        format!("{}\n", serde_json::to_string(&json!({"variable": var, "normalisation": normalisation, "modes": ms})).unwrap_or_default())
    } else {
        let mut o = String::from("n,omega_re,omega_im,z,re,im\n");
        for (n, w, f) in modes {
            match f {
                Ok(s) => {
                    for (z, y, _) in s {
                        o.push_str(&format!("{n},{:.17e},{:.17e},{z:.17e},{:.17e},{:.17e}\n", w.re, w.im, y.re, y.im));
                    }
                }
                Err(_) => o.push_str(&format!("{n},{:.17e},{:.17e},,,\n", w.re, w.im)),
            }
        }
        o
    };
    std::fs::write(path, text).map_err(|e| Failure::Plain(format!("error: cannot write the mode functions {path}: {e}"), 1))
}
