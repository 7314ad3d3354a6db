//! `canonode scan`: quasinormal modes over a grid of one parameter, in
//! parallel, with continuation, a progress bar, shards and a plot.

use super::values::parse_assignments;
use super::{run_command, Failure, InputArgs};
use crate::algebra::GRat;
use crate::error::{Error, ErrorKind};
use crate::solve::scan::{plot, scan, shard, single_point, PointSolver};
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
    /// A seed for the lowest overtone at the first grid point, e.g. '0.37-0.09i' (later points follow their neighbour).
    #[arg(long = "guess", value_name = "VALUE", allow_hyphen_values = true)]
    guess: Option<String>,
    #[command(flatten)]
    couple: super::spectrum::CoupleArgs,
}

pub(crate) fn run(a: &ScanArgs) -> u8 {
    let mut extra = vec![("--vary".to_string(), a.vary.clone()), ("--at".to_string(), a.at.clone())];
    extra.extend(a.shard.iter().map(|s| ("--shard".to_string(), s.clone())));
    extra.extend(a.guess.iter().map(|g| ("--guess".to_string(), g.clone())));
    extra.extend(a.couple.option_texts());
    run_command(&a.input, &extra, |src| compute(a, src))
}

fn usage(msg: impl Into<String>, option: &str, len: usize) -> Failure {
    Error::new(ErrorKind::Usage, msg).at(crate::syntax::Span::new(0, len.max(1))).in_option(option).into()
}

fn compute(a: &ScanArgs, src: &super::Source) -> Result<String, Failure> {
    // Checked before any work (the same rules as in `spectrum`), so that a
    // long scan is never lost to a bad option or file name.
    if let Some(path) = &a.plot {
        let lower = path.to_ascii_lowercase();
        if !(lower.ends_with(".svg") || lower.ends_with(".png")) {
            return Err(usage("the plot is written as SVG or PNG: give FILE.svg or FILE.png", "--plot", path.len()));
        }
        super::options::writable(path, "--plot")?;
    }
    let tol = super::options::tolerance(a.tol)?;
    let (o0, o1) = super::options::overtones(&a.overtones)?;
    let index = super::options::angular_index(a.couple.angular_index)?;
    let guess = super::values::parse_seed(a.guess.as_deref(), "--guess")?;
    let angular_guess = super::values::parse_seed(a.couple.angular_guess.as_deref(), "--angular-guess")?;
    let red = a.input.reduce(src)?;
    let names = red.field.names().to_vec();
    let fname = a.input.frequency_name().or_else(|| ["omega", "ω", "w"].iter().find(|n| names.iter().any(|p| p == *n)).map(|s| s.to_string()));
    let Some(fname) = fname else { return Err(Error::new(ErrorKind::Usage, "no frequency parameter: name it with --frequency").into()) };
    let Some(freq) = names.iter().skip(1).position(|n| *n == fname).map(|i| i + 1) else {
        return Err(Error::new(ErrorKind::Usage, format!("'{fname}' is not a parameter")).in_option("--frequency").into());
    };
    let (vname, vary, g) = super::options::vary(&a.vary, &names, freq)?;
    let vname = vname.as_str();
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    given[0] = true;
    given[freq] = true;
    given[vary] = true;
    let coupled = a.couple.read(&red.field)?;
    let links = coupled.as_ref().map(|c| c.2.clone()).unwrap_or_default();
    for i in super::spectrum::linked_radial(&links, &names, &[freq, vary], "solved for or varied")? {
        given[i] = true;
    }
    // Values of the angular equation's own parameters (not the radial one's).
    let mut angular_at: Vec<(String, GRat)> = Vec::new();
    for (n, v, span) in parse_assignments(&a.at, "--at")? {
        if super::spectrum::for_angular_only(&n, span, &links, &names, coupled.as_ref().map(|c| c.1.field.names()))? {
            angular_at.push((n, v));
            continue;
        }
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
    let base = SpectrumOptions { freq, values: point, overtones: (o0, o1), tol, guess, seeds: Vec::new() };
    // A coupled scan sets its angular problem up at the first point here, so
    // that a bad angular equation is reported against its own text before
    // any work starts.
    if let Some((asrc, ared, _)) = &coupled {
        let mut first = base.clone();
        first.values[vary] = GRat::real(g[range.start].clone());
        crate::solve::coupled::try_coupling(
            &red.field,
            ared,
            &links,
            &fixed_values(&names, &first, &angular_at, &links),
            freq,
            a.couple.angular_index,
            angular_guess,
        )
        .map_err(|e| super::spectrum::angular_failure(e, asrc))?;
    }
    let total = range.len() as u64;
    let bar = if std::io::stderr().is_terminal() && !super::capturing() { Some(indicatif::ProgressBar::new(total)) } else { None };
    let tick = || {
        if let Some(b) = &bar {
            b.inc(1);
        }
    };
    let opts = a.input.options();
    let angular_text = coupled.as_ref().map(|c| c.0.text.clone());
    let make = || -> crate::error::Result<PointSolver<'_>> {
        let red = crate::ode::reduce(&src.input(), &opts)?;
        match &angular_text {
            None => Ok(Box::new(move |o: &SpectrumOptions, check: bool| single_point(&red, o, check))),
            Some(text) => {
                let ared = crate::ode::reduce(&crate::ode::Input::Program(text), &crate::ode::ReduceOptions::default())?;
                let (names, links, at) = (names.clone(), links.clone(), angular_at.clone());
                Ok(Box::new(move |o: &SpectrumOptions, check: bool| {
                    let c = crate::solve::coupled::try_coupling(
                        &red.field,
                        &ared,
                        &links,
                        &fixed_values(&names, o, &at, &links),
                        o.freq,
                        index,
                        angular_guess,
                    )?;
                    let none = |_: u32| None;
                    let (_, modes) = crate::solve::coupled::coupled_spectrum(&red, &c, o, check, &none)?;
                    Ok(modes.into_iter().map(|m| (m.mode, m.check.filter(|c| c.converged).map(|c| c.omega))).collect())
                }))
            }
        }
    };
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

/// The fixed values of a coupled point: the radial parameters at the
/// point's values (not the frequency, not the linked ones) and the angular
/// equation's own.
fn fixed_values(names: &[String], o: &SpectrumOptions, angular_at: &[(String, GRat)], links: &[crate::solve::coupled::Link]) -> Vec<(String, GRat)> {
    let mut out: Vec<(String, GRat)> = names
        .iter()
        .enumerate()
        .skip(1)
        .filter(|(i, n)| *i != o.freq && !links.iter().any(|l| l.target == **n))
        .map(|(i, n)| (n.clone(), o.values[i].clone()))
        .collect();
    out.extend(angular_at.iter().cloned());
    out
}
