//! `canonode scatter`: transmission and reflection coefficients (greybody
//! factors) at real frequencies, and with `--sum-l` the absorption
//! cross-section. Frequencies run in parallel (rayon) in blocks; each block
//! is written as soon as it is done, so a killed run keeps what it wrote.
//!
//! JSON output (stable): `frequency` (the parameter), `near` and `far` (the
//! ends, as text), `sum` (null, or {`param`, `from`, `to`}) and `points`, one
//! per frequency, each with `omega`, `transmission` (|T|², the greybody
//! factor: transmitted over incident flux), `reflection` (|R|²),
//! `flux_error` (|R|² + |T|² − 1), `matching_change` (change of |T|² when the
//! matching point is moved), `superradiant` (|R|² > 1), `wkb_transmission`
//! (the second method: the WKB barrier transmission at `--wkb-order`,
//! meaningful near and above the barrier top; null without a barrier) and `error` (null, or
//! why this frequency has no value; the numbers are then null). With
//! `--sum-l`, `transmission`, `reflection`, `flux_error` and
//! `matching_change` are those of the lowest multipole, and each point adds
//! `cross_section` (σ = Σ (2l + 1) π |T_l|²/ω²) and `partial`, a list of
//! {`l`, `transmission`, `reflection`, `flux_error`, `matching_change`,
//! `cross_section_term`, `error`}.
//! CSV: `omega,transmission,reflection,flux_error,matching_change,wkb_transmission,error`
//! (and `cross_section` before `error` with `--sum-l`; the partial terms as
//! `T_l` columns).

use super::values::{fmt_complex, parse_assignments};
use super::{emit, run_command, Failure, InputArgs};
use crate::algebra::{GRat, Rat};
use crate::error::{Error, ErrorKind};
use crate::solve::scatter::{cross_section, problem, scatter_at, Problem, Scattering};
use crate::solve::spectrum::SpectrumOptions;
use clap::{Args, ValueEnum};
use rayon::prelude::*;
use serde_json::{json, Value};
use std::io::IsTerminal;

/// Output formats of `scatter`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum ScatterFormat {
    /// A table.
    Text,
    /// JSON (schema at the top of `src/cli/scatter.rs`), one point per line, streamed.
    Json,
    /// One line per frequency.
    Csv,
}

/// Arguments of `scatter`.
#[derive(Args, Debug)]
pub(crate) struct ScatterArgs {
    #[command(flatten)]
    input: InputArgs,
    /// Values of every parameter except the frequency (and the summed multipole), e.g. 'M=1,l=2,s=0'.
    #[arg(long = "at", value_name = "NAME=VALUE,...", default_value = "")]
    at: String,
    /// Real frequencies START:STOP:STEP (exact decimals), e.g. '0.05:1:0.05'.
    #[arg(long = "omega", value_name = "A:B:STEP")]
    omega: String,
    /// Sum the absorption cross-section over the multipole range A..B (inclusive).
    #[arg(long = "sum-l", value_name = "A..B")]
    sum_l: Option<String>,
    /// The multipole parameter summed by --sum-l.
    #[arg(long = "multipole", value_name = "NAME", default_value = "l")]
    multipole: String,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: ScatterFormat,
    /// The WKB order of the second method (the barrier-top transmission formula; 1..=80).
    #[arg(long = "wkb-order", value_name = "N", default_value_t = 6)]
    wkb_order: usize,
    /// Write a plot (|T|² and |R|², or σ with --sum-l, against ω), SVG or PNG by the extension.
    #[arg(long = "plot", value_name = "FILE.svg|FILE.png")]
    plot: Option<String>,
}

fn usage(msg: impl Into<String>, option: &str, len: usize) -> Failure {
    Error::new(ErrorKind::Usage, msg).at(crate::syntax::Span::new(0, len.max(1))).in_option(option).into()
}

pub(crate) fn run(a: &ScatterArgs) -> u8 {
    let mut extra = vec![("--at".to_string(), a.at.clone()), ("--omega".to_string(), a.omega.clone())];
    extra.extend(a.sum_l.iter().map(|s| ("--sum-l".to_string(), s.clone())));
    extra.extend(a.plot.iter().map(|s| ("--plot".to_string(), s.clone())));
    run_command(&a.input, &extra, |src| compute(a, src))
}

/// Frequencies computed (in parallel) before each block is written.
const BLOCK: usize = 32;

/// One frequency's results: one entry per multipole.
type Row = (f64, Vec<(i64, Result<Scattering, String>)>);

fn compute(a: &ScatterArgs, src: &super::Source) -> Result<String, Failure> {
    if let Some(path) = &a.plot {
        let lower = path.to_ascii_lowercase();
        if !(lower.ends_with(".svg") || lower.ends_with(".png")) {
            return Err(usage("the plot is written as SVG or PNG: give FILE.svg or FILE.png", "--plot", path.len()));
        }
    }
    let red = crate::ode::reduce(&src.input(), &a.input.options())?;
    let names = red.field.names().to_vec();
    let fname = a.input.frequency_name().or_else(|| ["omega", "ω", "w"].iter().find(|n| names.iter().any(|p| p == *n)).map(|s| s.to_string()));
    let Some(fname) = fname else { return Err(Error::new(ErrorKind::Usage, "no frequency parameter: name it with --frequency").into()) };
    let Some(freq) = names.iter().skip(1).position(|n| *n == fname).map(|i| i + 1) else {
        return Err(Error::new(ErrorKind::Usage, format!("'{fname}' is not a parameter")).in_option("--frequency").into());
    };
    // The frequency grid.
    let parts: Vec<Option<Rat>> = a.omega.split(':').map(|t| Rat::parse_decimal(t.trim())).collect();
    let (Some(Some(w0)), Some(Some(w1)), Some(Some(dw)), 3) = (parts.first(), parts.get(1), parts.get(2), parts.len()) else {
        return Err(usage("expected START:STOP:STEP with exact non-negative decimals", "--omega", a.omega.len()));
    };
    let Some(grid) = crate::solve::scan::grid(w0, w1, dw) else {
        return Err(usage("the frequency grid is empty, too long or has a non-positive step", "--omega", a.omega.len()));
    };
    if grid.is_empty() {
        return Err(usage("the frequency grid is empty (START > STOP)", "--omega", a.omega.len()));
    }
    // The multipoles.
    let sum = match &a.sum_l {
        None => None,
        Some(t) => {
            let r = t.split_once("..").and_then(|(x, y)| Some((x.trim().parse::<i64>().ok()?, y.trim().parse::<i64>().ok()?)));
            let Some((l0, l1)) = r.filter(|(x, y)| 0 <= *x && x <= y && y - x <= 200) else {
                return Err(usage("expected a multipole range A..B with 0 ≤ A ≤ B (at most 200 terms)", "--sum-l", t.len()));
            };
            let Some(li) = names.iter().skip(1).position(|n| *n == a.multipole).map(|i| i + 1).filter(|i| *i != freq) else {
                return Err(Error::new(ErrorKind::Usage, format!("'{}' is not a parameter of the equation other than the frequency", a.multipole))
                    .in_option("--multipole")
                    .into());
            };
            Some((li, l0, l1))
        }
    };
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    given[0] = true;
    given[freq] = true;
    if let Some((li, ..)) = sum {
        given[li] = true;
    }
    for (n, v, span) in parse_assignments(&a.at, "--at")? {
        match names.iter().skip(1).position(|x| *x == n).map(|i| i + 1) {
            Some(i) if i == freq => {
                return Err(Error::new(ErrorKind::Usage, format!("'{n}' is the frequency: give it with --omega")).at(span).in_option("--at").into())
            }
            Some(i) if sum.is_some_and(|s| s.0 == i) => {
                return Err(Error::new(ErrorKind::Usage, format!("'{n}' is summed by --sum-l")).at(span).in_option("--at").into())
            }
            Some(i) => {
                point[i] = v;
                given[i] = true;
            }
            None => return Err(Error::new(ErrorKind::Usage, format!("'{n}' is not a parameter of the equation")).at(span).in_option("--at").into()),
        }
    }
    let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
    if !missing.is_empty() {
        return Err(usage(format!("no value given for {}", missing.join(", ")), "--at", a.at.len()));
    }
    // One problem per multipole, set up exactly (the ends and exponents from the analysis).
    let ls: Vec<i64> = match sum {
        Some((_, l0, l1)) => (l0..=l1).collect(),
        None => vec![0],
    };
    if !(1..=crate::solve::wkb::MAX_ORDER).contains(&a.wkb_order) {
        return Err(Error::new(ErrorKind::Usage, format!("the WKB order must lie in 1..={}", crate::solve::wkb::MAX_ORDER))
            .in_option("--wkb-order")
            .into());
    }
    let mut problems: Vec<(i64, Problem)> = Vec::new();
    // The barrier's Taylor series for the WKB transmission, per multipole (None without a barrier).
    let mut barriers: Vec<Option<Vec<num_complex::Complex64>>> = Vec::new();
    for &l in &ls {
        let mut values = point.clone();
        if let Some((li, ..)) = sum {
            values[li] = GRat::real(Rat::int(l.into()));
        }
        let opts = SpectrumOptions { freq, values, overtones: (0, 0), tol: 1e-10, guess: None, seeds: Vec::new() };
        let r = crate::solve::spectrum::substitute(&red, &opts.values, freq)?;
        let (_, setup) = crate::solve::spectrum::qnm_recurrence(&r, &opts)?;
        problems.push((l, problem(&r, &opts, &setup)?));
        let est = crate::solve::spectrum::barrier_estimates(&r, &opts, setup.horizon_value, a.wkb_order).ok();
        barriers.push(est.and_then(|e| e(0)).map(|b| b.taylor));
    }
    let (near, far) = (problems[0].1.near_label.clone(), problems[0].1.far_label.clone());
    let freqs: Vec<f64> = grid.iter().map(|r| r.to_f64()).collect();
    let bar =
        if std::io::stderr().is_terminal() && freqs.len() * ls.len() > 200 { Some(indicatif::ProgressBar::new(freqs.len() as u64)) } else { None };
    let summed = sum.map(|(li, l0, l1)| (names[li].clone(), l0, l1));
    // Header, then blocks as they finish.
    emit(&header(a.format, &fname, &near, &far, summed.as_ref(), &ls))?;
    let mut rows: Vec<Row> = Vec::with_capacity(freqs.len());
    for (bi, block) in freqs.chunks(BLOCK).enumerate() {
        let jobs: Vec<(usize, usize)> = (0..block.len()).flat_map(|i| (0..problems.len()).map(move |j| (i, j))).collect();
        let results: Vec<Result<Scattering, String>> = jobs
            .par_iter()
            .map(|&(i, j)| {
                let wkb = barriers[j].as_ref().and_then(|t| crate::solve::wkb::wkb_transmission(t, block[i] * block[i], a.wkb_order));
                scatter_at(&problems[j].1, block[i]).map(|s| Scattering { wkb_transmission: wkb, ..s })
            })
            .collect();
        let mut text = String::new();
        for (i, &w) in block.iter().enumerate() {
            let per: Vec<(i64, Result<Scattering, String>)> =
                (0..problems.len()).map(|j| (problems[j].0, results[i * problems.len() + j].clone())).collect();
            let first = bi == 0 && i == 0;
            text.push_str(&row_text(a.format, w, &per, summed.is_some(), first));
            rows.push((w, per));
        }
        emit(&text)?;
        if let Some(b) = &bar {
            b.inc(block.len() as u64);
        }
    }
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    let mut tail = footer(a.format, &rows, summed.is_some());
    if let Some(path) = &a.plot {
        let curves: Vec<(String, Vec<(f64, f64)>)> = if summed.is_some() {
            vec![("σ".to_string(), rows.iter().filter_map(|(w, per)| sigma(*w, per).map(|s| (*w, s))).collect())]
        } else {
            let pick = |f: &dyn Fn(&Scattering) -> f64| -> Vec<(f64, f64)> {
                rows.iter().filter_map(|(w, per)| per[0].1.as_ref().ok().map(|s| (*w, f(s)))).collect()
            };
            vec![("|T|²".to_string(), pick(&|s| s.transmission)), ("|R|²".to_string(), pick(&|s| s.reflection))]
        };
        let (title, ylabel) = if summed.is_some() { ("absorption cross-section", "σ") } else { ("transmission and reflection", "|T|², |R|²") };
        crate::solve::scatter::plot(std::path::Path::new(path), &format!("{title} ({})", src.name), ylabel, &curves)
            .map_err(|e| Failure::Plain(format!("error: cannot write the plot {path}: {e}"), 1))?;
        if a.format == ScatterFormat::Text {
            tail.push_str(&format!("plot written to {path}\n"));
        }
    }
    Ok(tail)
}

/// σ at ω when every multipole has a value.
fn sigma(w: f64, per: &[(i64, Result<Scattering, String>)]) -> Option<f64> {
    let terms: Option<Vec<(i64, f64)>> = per.iter().map(|(l, r)| r.as_ref().ok().map(|s| (*l, s.transmission))).collect();
    terms.map(|t| cross_section(w, &t))
}

fn header(f: ScatterFormat, fname: &str, near: &str, far: &str, sum: Option<&(String, i64, i64)>, ls: &[i64]) -> String {
    match f {
        ScatterFormat::Json => {
            let s = sum.map(|(p, a, b)| json!({"param": p, "from": a, "to": b})).unwrap_or(Value::Null);
            let lead = json!({"frequency": fname, "near": near, "far": far, "sum": s}).to_string();
            // The object is left open: the points follow as they are computed.
            format!("{},\n\"points\": [\n", lead.strip_suffix('}').unwrap_or(&lead))
        }
        ScatterFormat::Csv => {
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
        ScatterFormat::Text => {
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

fn fields(r: &Result<Scattering, String>) -> Value {
    match r {
        Ok(s) => json!({"transmission": num(s.transmission), "reflection": num(s.reflection), "flux_error": num(s.flux_error),
            "matching_change": num(s.matching_change), "superradiant": s.reflection > 1.0,
            "wkb_transmission": s.wkb_transmission.map(num).unwrap_or(Value::Null), "error": Value::Null}),
        Err(e) => json!({"transmission": Value::Null, "reflection": Value::Null, "flux_error": Value::Null,
            "matching_change": Value::Null, "superradiant": Value::Null, "wkb_transmission": Value::Null, "error": e}),
    }
}

fn row_text(f: ScatterFormat, w: f64, per: &[(i64, Result<Scattering, String>)], summed: bool, first: bool) -> String {
    match f {
        ScatterFormat::Json => {
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
                    m.insert("cross_section".into(), sigma(w, per).map(num).unwrap_or(Value::Null));
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
            format!("{}{}", if first { "  " } else { ",\n  " }, Value::Object(ordered))
        }
        ScatterFormat::Csv => {
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
                line.push_str(&format!(",{}", sigma(w, per).map(g).unwrap_or_default()));
                for (_, r) in per {
                    line.push_str(&format!(",{}", r.as_ref().map(|s| g(s.transmission)).unwrap_or_default()));
                }
            }
            let errs: Vec<String> =
                per.iter().filter_map(|(l, r)| r.as_ref().err().map(|e| if summed { format!("l={l}: {e}") } else { e.clone() })).collect();
            line.push_str(&format!(",\"{}\"\n", errs.join("; ").replace('"', "'")));
            line
        }
        ScatterFormat::Text => {
            let wt = fmt_complex(w, 0.0);
            if summed {
                let worst = per.iter().filter_map(|(_, r)| r.as_ref().ok().map(|s| s.flux_error.abs())).fold(0.0, f64::max);
                match sigma(w, per) {
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

fn footer(f: ScatterFormat, rows: &[Row], summed: bool) -> String {
    let worst = rows.iter().flat_map(|(_, per)| per.iter().filter_map(|(_, r)| r.as_ref().ok().map(|s| s.flux_error.abs()))).fold(0.0, f64::max);
    let failed = rows.iter().filter(|(_, per)| per.iter().any(|(_, r)| r.is_err())).count();
    match f {
        ScatterFormat::Json => "\n]}\n".to_string(),
        ScatterFormat::Csv => String::new(),
        ScatterFormat::Text => {
            let mut o = format!("\n{} frequencies; largest flux error {worst:.1e}", rows.len());
            if failed > 0 {
                o.push_str(&format!("; {failed} without a value{}", if summed { " for some multipole" } else { "" }));
            }
            o.push('\n');
            o
        }
    }
}
