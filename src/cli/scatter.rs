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
//! `cross_section_term`, `error`}. With `--couple`, each point with a value
//! adds `linked`: {the angular eigenvalue's name and each radial link
//! target's name: [re, im]} at that frequency (with `--sum-l`, each partial
//! term has its own `linked`: the multipole l is the angular eigenvalue
//! numbered `--angular-index` + (l − A)).
//! CSV: `omega,transmission,reflection,flux_error,matching_change,wkb_transmission,error`
//! (and `cross_section` before `error` with `--sum-l`; the partial terms as
//! `T_l` columns).

use super::values::parse_assignments;
use super::{emit, run_command, Failure, InputArgs};
use crate::algebra::Rat;
use crate::emit::scatter::{footer, header, row_text};
use crate::emit::DocFormat;
use crate::error::{Error, ErrorKind};
use crate::solve::scatter::{row_cross_section, scatter_setup, ScatterRequest, ScatterRow, Scattering};
use clap::Args;
use rayon::prelude::*;
use std::io::IsTerminal;

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
    /// Sum the absorption cross-section over the multipole range A..B (inclusive); with --couple the
    /// multipole l is the angular eigenvalue numbered --angular-index + (l − A).
    #[arg(long = "sum-l", value_name = "A..B")]
    sum_l: Option<String>,
    /// The multipole parameter summed by --sum-l.
    #[arg(long = "multipole", value_name = "NAME", default_value = "l")]
    multipole: String,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: DocFormat,
    /// The WKB order of the second method (the barrier-top transmission formula; 1..=80).
    #[arg(long = "wkb-order", value_name = "N", default_value_t = 6)]
    wkb_order: usize,
    /// Write a plot (|T|² and |R|², or σ with --sum-l, against ω), SVG or PNG by the extension.
    #[arg(long = "plot", value_name = "FILE.svg|FILE.png")]
    plot: Option<String>,
    #[command(flatten)]
    couple: super::spectrum::CoupleArgs,
}

fn usage(msg: impl Into<String>, option: &str, len: usize) -> Failure {
    Error::new(ErrorKind::Usage, msg).at(crate::syntax::Span::new(0, len.max(1))).in_named(option).into()
}

pub(crate) fn run(a: &ScatterArgs) -> u8 {
    let mut extra = vec![("--at".to_string(), a.at.clone()), ("--omega".to_string(), a.omega.clone())];
    extra.extend(a.sum_l.iter().map(|s| ("--sum-l".to_string(), s.clone())));
    extra.extend(a.plot.iter().map(|s| ("--plot".to_string(), s.clone())));
    extra.extend(a.couple.option_texts());
    run_command(&a.input, &extra, |src| compute(a, src))
}

/// Frequencies computed (in parallel) before each block is written.
const BLOCK: usize = 32;

fn compute(a: &ScatterArgs, src: &super::Source) -> Result<String, Failure> {
    if let Some(path) = &a.plot {
        let lower = path.to_ascii_lowercase();
        if !(lower.ends_with(".svg") || lower.ends_with(".png")) {
            return Err(usage("the plot is written as SVG or PNG: give FILE.svg or FILE.png", "--plot", path.len()));
        }
    }
    let red = crate::ode::reduce(&src.input(), &a.input.options())?;
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
            let Some((l0, l1)) = r else {
                return Err(usage("expected a multipole range A..B with 0 ≤ A ≤ B (at most 200 terms)", "--sum-l", t.len()));
            };
            Some((a.multipole.clone(), l0, l1))
        }
    };
    super::options::angular_index(a.couple.angular_index)?;
    let angular_guess = super::values::parse_seed(a.couple.angular_guess.as_deref(), "--angular-guess")?;
    let couple = a.couple.request(&red.field, angular_guess)?.map(|(_, c)| c);
    let req = ScatterRequest { frequency: a.input.frequency_name(), values: parse_assignments(&a.at, "--at")?, sum, wkb_order: a.wkb_order, couple };
    let setup = scatter_setup(&red, &req).map_err(|e| match &e.origin {
        // An option error without a place points at the whole option.
        _ if e.span.is_none() && super::origin_flag(&e.origin).as_deref() == Some("--at") => usage(e.message.clone(), "--at", a.at.len()),
        _ if e.span.is_none() && super::origin_flag(&e.origin).as_deref() == Some("--sum-l") => {
            usage(e.message.clone(), "--sum-l", a.sum_l.as_deref().unwrap_or("").len())
        }
        _ => Failure::from(e),
    })?;
    let format = a.format;
    let ls = setup.multipoles();
    let freqs: Vec<f64> = grid.iter().map(|r| r.to_f64()).collect();
    let bar =
        if std::io::stderr().is_terminal() && freqs.len() * ls.len() > 200 { Some(indicatif::ProgressBar::new(freqs.len() as u64)) } else { None };
    let summed = setup.sum.is_some();
    // Header, then blocks as they finish.
    emit(&header(format, &setup.frequency, &setup.near, &setup.far, setup.sum.as_ref(), &ls))?;
    let mut rows: Vec<ScatterRow> = Vec::with_capacity(freqs.len());
    let np = setup.len();
    for (bi, block) in freqs.chunks(BLOCK).enumerate() {
        let jobs: Vec<(usize, usize)> = (0..block.len()).flat_map(|i| (0..np).map(move |j| (i, j))).collect();
        let results: Vec<Result<Scattering, String>> = jobs.par_iter().map(|&(i, j)| setup.at(j, block[i])).collect();
        let mut text = String::new();
        for (i, &w) in block.iter().enumerate() {
            let per: Vec<(i64, Result<Scattering, String>)> = (0..np).map(|j| (ls[j], results[i * np + j].clone())).collect();
            let first = bi == 0 && i == 0;
            text.push_str(&row_text(format, w, &per, summed, first));
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
    let mut tail = footer(format, &rows, summed);
    if let Some(path) = &a.plot {
        let curves: Vec<(String, Vec<(f64, f64)>)> = if summed {
            vec![("σ".to_string(), rows.iter().filter_map(|(w, per)| row_cross_section(*w, per).map(|s| (*w, s))).collect())]
        } else {
            let pick = |f: &dyn Fn(&Scattering) -> f64| -> Vec<(f64, f64)> {
                rows.iter().filter_map(|(w, per)| per[0].1.as_ref().ok().map(|s| (*w, f(s)))).collect()
            };
            vec![("|T|²".to_string(), pick(&|s| s.transmission)), ("|R|²".to_string(), pick(&|s| s.reflection))]
        };
        let (title, ylabel) = if summed { ("absorption cross-section", "σ") } else { ("transmission and reflection", "|T|², |R|²") };
        crate::solve::scatter::plot(std::path::Path::new(path), &format!("{title} ({})", src.name), ylabel, &curves)
            .map_err(|e| Failure::Plain(format!("error: cannot write the plot {path}: {e}"), 1))?;
        if format == DocFormat::Text {
            tail.push_str(&format!("plot written to {path}\n"));
        }
    }
    Ok(tail)
}
