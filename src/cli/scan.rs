//! `canonode scan`: quasinormal modes over a grid of one parameter, in
//! parallel, with continuation, a progress bar, shards and a plot.

use super::values::parse_assignments;
use super::{run_command, Failure, InputArgs};
use crate::algebra::{GRat, Rat};
use crate::error::{Error, ErrorKind};
use crate::solve::scan::{grid, plot, scan, shard};
use crate::solve::spectrum::SpectrumOptions;
use clap::{Args, ValueEnum};
use std::io::IsTerminal;

/// Output formats of `scan`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum ScanFormat {
    /// One line per grid point and overtone.
    Csv,
    /// JSON: `points` [{`index`, `value`, `error`, `modes` [{`n`, `omega`, `converged`, `reason`, `check`}]}].
    Json,
}

/// Arguments of `scan`.
#[derive(Args, Debug)]
pub(crate) struct ScanArgs {
    #[command(flatten)]
    input: InputArgs,
    /// The parameter and its grid, NAME=START:STOP:STEP (exact decimals), e.g. 'q=0:0.9:0.05'.
    #[arg(long = "vary", value_name = "NAME=A:B:STEP")]
    vary: String,
    /// Values of the other parameters (not the frequency, not the varied one).
    #[arg(long = "at", value_name = "NAME=VALUE,...", default_value = "")]
    at: String,
    /// Overtones, 'A..B' or one number.
    #[arg(long = "overtones", value_name = "A..B", default_value = "0")]
    overtones: String,
    /// Only part K of N of the grid (contiguous blocks), e.g. '2/4'.
    #[arg(long = "shard", value_name = "K/N")]
    shard: Option<String>,
    /// Write a plot of the scanned modes, SVG or PNG by the extension.
    #[arg(long = "plot", value_name = "FILE.svg|FILE.png")]
    plot: Option<String>,
    /// Skip the direct-integration check at every point.
    #[arg(long = "no-check")]
    no_check: bool,
    /// Relative tolerance on ω.
    #[arg(long = "tol", default_value_t = 1e-10)]
    tol: f64,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "csv")]
    format: ScanFormat,
}

pub(crate) fn run(a: &ScanArgs) -> u8 {
    let mut extra = vec![("--vary".to_string(), a.vary.clone()), ("--at".to_string(), a.at.clone())];
    extra.extend(a.shard.iter().map(|s| ("--shard".to_string(), s.clone())));
    run_command(&a.input, &extra, |src| compute(a, src))
}

fn usage(msg: impl Into<String>, option: &str, len: usize) -> Failure {
    Error::new(ErrorKind::Usage, msg).at(crate::syntax::Span::new(0, len.max(1))).in_option(option).into()
}

fn compute(a: &ScanArgs, src: &super::Source) -> Result<String, Failure> {
    // Checked before any work, so that a long scan is never lost to a bad file name.
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
    let Some((vname, spec)) = a.vary.split_once('=') else { return Err(usage("expected NAME=A:B:STEP", "--vary", a.vary.len())) };
    let vname = vname.trim();
    let Some(vary) = names.iter().skip(1).position(|n| n == vname).map(|i| i + 1) else {
        return Err(usage(format!("'{vname}' is not a parameter of the equation"), "--vary", a.vary.len()));
    };
    let parts: Vec<Option<Rat>> = spec
        .split(':')
        .map(|t| Rat::parse_decimal(t.trim()).or_else(|| Rat::parse_decimal(t.trim().trim_start_matches('-')).map(|r| r.neg())))
        .collect();
    let (Some(Some(x0)), Some(Some(x1)), Some(Some(dx))) = (parts.first(), parts.get(1), parts.get(2)) else {
        return Err(usage("expected NAME=A:B:STEP with exact decimals", "--vary", a.vary.len()));
    };
    let Some(g) = grid(x0, x1, dx) else { return Err(usage("the grid is empty, too long or has a non-positive step", "--vary", a.vary.len())) };
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    given[0] = true;
    given[freq] = true;
    given[vary] = true;
    for (n, v, span) in parse_assignments(&a.at, "--at")? {
        match names.iter().skip(1).position(|x| *x == n) {
            Some(i) if i + 1 != freq && i + 1 != vary => {
                point[i + 1] = v;
                given[i + 1] = true;
            }
            _ => return Err(Error::new(ErrorKind::Usage, format!("'{n}' is not a parameter to fix here")).at(span).in_option("--at").into()),
        }
    }
    let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
    if !missing.is_empty() {
        return Err(usage(format!("no value given for {}", missing.join(", ")), "--at", a.at.len()));
    }
    let overtones = match a.overtones.split_once("..") {
        Some((x, y)) => (x.trim().parse().ok(), y.trim().parse().ok()),
        None => (a.overtones.trim().parse().ok(), a.overtones.trim().parse().ok()),
    };
    let (Some(o0), Some(o1)) = overtones else { return Err(usage("expected an overtone number or A..B", "--overtones", a.overtones.len())) };
    if o0 > o1 || o1 - o0 > 50 {
        return Err(usage("expected an overtone range A..B with A ≤ B", "--overtones", a.overtones.len()));
    }
    let range = match &a.shard {
        None => 0..g.len(),
        Some(s) => {
            let kn: Vec<Option<usize>> = s.split('/').map(|t| t.trim().parse().ok()).collect();
            match kn.as_slice() {
                [Some(k), Some(n)] if *k >= 1 && *k <= *n && *n <= g.len().max(1) => shard(g.len(), *k, *n),
                _ => return Err(usage("expected K/N with 1 ≤ K ≤ N ≤ the number of grid points", "--shard", s.len())),
            }
        }
    };
    let base = SpectrumOptions { freq, values: point, overtones: (o0, o1), tol: a.tol, guess: None, seeds: Vec::new() };
    let total = range.len() as u64;
    let bar = if std::io::stderr().is_terminal() { Some(indicatif::ProgressBar::new(total)) } else { None };
    let tick = || {
        if let Some(b) = &bar {
            b.inc(1);
        }
    };
    let opts = a.input.options();
    let make = || crate::ode::reduce(&src.input(), &opts);
    let points = scan(&make, &base, vary, &g, range, !a.no_check, &tick);
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    if let Some(path) = &a.plot {
        plot(std::path::Path::new(path), &points, vname, &fname)
            .map_err(|e| Failure::Plain(format!("error: cannot write the plot {path}: {e}"), 1))?;
    }
    Ok(match a.format {
        ScanFormat::Csv => {
            let mut o = format!("{vname},n,re,im,converged,check_re,check_im,reason\n");
            for p in &points {
                if let Some(e) = &p.error {
                    o.push_str(&format!("{},,,,false,,,\"{}\"\n", p.value, e.replace('"', "'")));
                }
                for (m, c) in &p.modes {
                    let r = &m.root;
                    let (cre, cim) = c.map(|c| (format!("{:.17e}", c.re), format!("{:.17e}", c.im))).unwrap_or_default();
                    if r.converged {
                        o.push_str(&format!("{},{},{:.17e},{:.17e},true,{cre},{cim},\n", p.value, m.n, r.omega.re, r.omega.im));
                    } else {
                        o.push_str(&format!("{},{},,,false,,,\"{}\"\n", p.value, m.n, r.stop.text().replace('"', "'")));
                    }
                }
            }
            o
        }
        ScanFormat::Json => {
            let pts: Vec<serde_json::Value> = points
                .iter()
                .map(|p| {
                    let ms: Vec<serde_json::Value> = p
                        .modes
                        .iter()
                        .map(|(m, c)| {
                            serde_json::json!({
                                "n": m.n,
                                "omega": if m.root.converged { serde_json::json!([m.root.omega.re, m.root.omega.im]) } else { serde_json::Value::Null },
                                "converged": m.root.converged,
                                "reason": if m.root.converged { serde_json::Value::Null } else { serde_json::Value::String(m.root.stop.text()) },
                                "check": c.map(|c| serde_json::json!({"method": "integrate", "omega": [c.re, c.im]})),
                            })
                        })
                        .collect();
                    serde_json::json!({"index": p.index, "value": p.value, "error": p.error, "modes": ms})
                })
                .collect();
            format!(
                "{}\n",
                serde_json::to_string_pretty(&serde_json::json!({"parameter": vname, "frequency": fname, "points": pts})).unwrap_or_default()
            )
        }
    })
}
