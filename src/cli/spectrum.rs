//! `canonode spectrum`: quasinormal modes by the continued fraction (alone
//! or coupled to an angular equation), bound states by collocation, with
//! convergence evidence and a second method for every value.
//!
//! JSON output (stable; tests read it). Every document has `frequency` (the
//! parameter solved for), `boundary` ("qnm" or "bound"), `method` (words)
//! and `modes`, a list of objects with:
//! - `n` — overtone (or level) number;
//! - `omega` — [re, im], or null when not converged;
//! - `converged` — bool; `reason` — why not (null when converged);
//! - `method` — "cf", "terminating", "integrate", "wkb", "eikonal" or
//!   "collocation";
//! - `evidence` — for "cf": `inversion`, `depth`, `change_on_doubling`,
//!   `residual`, `iterations`, `seed` [re, im], `seed_from`; for
//!   "collocation": `points`, `change_on_doubling`, `domain`; for the
//!   estimates: `note`;
//! - `check` — the second method, or null: {`method`: "integrate" or
//!   "shooting", `omega` [re, im] or null with `reason`, `agreement`
//!   (relative), `residual`, and for shooting `change_on_refinement`};
//!   bound states add `no_check` (why no second method ran, or null);
//! - quasinormal modes add `estimate` ({`method`: "wkb", `order`, `omega`} or null)
//!   and `coupled` (null, or for `--couple`: `eigenvalue` (its name),
//!   `value` [re, im], `depth`, `change_on_doubling`, and `links`, each
//!   linked parameter's value [re, im] at the mode).
//!
//! Quasinormal-mode documents from the continued fraction also carry
//! `horizon`, `ansatz`, `choices` and `recurrence_terms`; coupled ones a
//! `coupling` object (`angular` file, `eigenvalue`, `index`, `about`,
//! `choices`, `links`); bound-state documents `domain` and `continuum` (the
//! edge, or null on a finite interval).
//!
//! Documents of direct integration between the ends of a boundary problem
//! (`solve::boundary`, `solve::ends`: de Sitter, anti-de Sitter, massive
//! fields, `--ends`) have `boundary` "qnm" or "quasi-bound", `ends` (two
//! objects: `at` — the location, a number or "inf" —, `found` — how the end
//! was located, in words —, `condition` — "into", "out-of", "outgoing",
//! "decaying", "normalisable" or "slower"), `notes` (every choice made, in
//! words), `method`, and `modes` with `method` "integrate", `evidence`
//! {`change_on_refinement` (null when not run), `residual` (null when not
//! evaluated), `iterations`, `seed`, `seed_from`} and `check` null (no
//! second method on these problems yet).
//!
//! Every text and JSON document (not CSV) also carries the closed form of
//! `solve::closed` (rendered in `closed_report.rs`): `closed_form` — null
//! when there is none, with the reason in `closed_form_note` (a Heun-class
//! problem says so) — or {`route` (the connection formula and the maps, in
//! words), `families`: [{`family` (the exponent choices and root, in
//! words), `expression` (the spectral parameter as text in the input
//! language, in `n` and the parameters), `latex`, `n_range` {`first`,
//! `last` (null: unbounded; −1: no member at these values), `bound` ("n <
//! EXPR" when the branch ends the family, or null), `branch` (the branch
//! condition, or null)}, `values`: [{`n`, `omega` [re, im], `method`
//! "exact", `check` (null, or the numeric mode of the same run at this
//! value: {`method`, `n`, `omega`, `agreement` (relative)})}]}]}. With
//! `--method exact` the document holds only the closed form: `modes` are its
//! values (`method` "exact", `family` the family's number from 1, `check`
//! null).

use super::values::{fmt_complex, parse_assignments};
use super::{run_command, Failure, InputArgs};
use crate::algebra::GRat;
use crate::error::{Error, ErrorKind};
use crate::solve::boundary::{Condition, Location, SpectrumKind};
use crate::solve::spectrum::SpectrumOptions;
use clap::{Args, ValueEnum};
use num_complex::Complex64;

/// Output formats of `spectrum`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum SpecFormat {
    /// A table with the evidence.
    Text,
    /// JSON (schema in `src/cli/spectrum.rs`).
    Json,
    /// One line per mode.
    Csv,
}

/// Kinds of spectrum.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum ProblemArg {
    /// Quasinormal modes: the wave leaves the domain through both ends (ingoing at horizons, outgoing at an irregular infinity, normalisable at a regular boundary).
    Qnm,
    /// Bound states: normalisable at both ends (real eigenvalues).
    Bound,
    /// Quasi-bound states: ingoing at the horizon, decaying at an irregular infinity (massive fields).
    QuasiBound,
}

/// Methods.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum Method {
    /// The continued fraction when the recurrence allows it.
    Auto,
    /// Leaver's continued fraction.
    Cf,
    /// Direct integration between the ends (Frobenius series, asymptotic series, Taylor continuation).
    Integrate,
    /// WKB estimates to the order of --wkb-order, with Padé resummation.
    Wkb,
    /// The eikonal (first-order) estimate from the peak of the potential.
    Eikonal,
    /// Chebyshev collocation (bound states; the default there), each eigenvalue checked by shooting.
    Collocation,
    /// The closed form alone (hypergeometric and confluent hypergeometric problems): exact expressions and their values, no numeric check.
    Exact,
}

/// Arguments of `spectrum`.
#[derive(Args, Debug)]
pub(crate) struct SpectrumArgs {
    #[command(flatten)]
    input: InputArgs,
    /// The boundary problem.
    #[arg(long = "boundary", value_enum, default_value = "qnm")]
    boundary: ProblemArg,
    /// The two ends of the domain and their conditions, 'LEFT..RIGHT', each end
    /// a number (a real singular point, matched numerically) or 'inf', with an
    /// optional ':CONDITION' (into, out-of, outgoing, decaying, normalisable,
    /// slower); default: from the outermost horizon to the next singular end outward.
    #[arg(long = "ends", value_name = "LEFT..RIGHT", allow_hyphen_values = true)]
    ends: Option<String>,
    /// Values of every parameter except the frequency, e.g. 'M=1,l=2,s=2'.
    #[arg(long = "at", value_name = "NAME=VALUE,...")]
    at: String,
    /// Overtones, a range 'A..B' (inclusive) or one number (numbers up to 200, at most 51 in one run).
    #[arg(long = "overtones", value_name = "A..B", default_value = "0")]
    overtones: String,
    /// The method.
    #[arg(long = "method", value_enum, default_value = "auto")]
    method: Method,
    /// A seed for the lowest overtone, e.g. '0.37-0.09i'.
    #[arg(long = "guess", value_name = "VALUE", allow_hyphen_values = true)]
    guess: Option<String>,
    /// Relative tolerance on ω.
    #[arg(long = "tol", default_value_t = 1e-10)]
    tol: f64,
    /// Output format.
    #[arg(long = "format", value_enum, default_value = "text")]
    format: SpecFormat,
    #[command(flatten)]
    couple: CoupleArgs,
    /// The WKB order of the barrier-top estimates (1..=80; orders 1–3 are the Schutz–Will and Iyer–Will formulas).
    #[arg(long = "wkb-order", value_name = "N", default_value_t = 6)]
    pub(crate) wkb_order: usize,
    /// With --method eikonal: the parameter whose large values give the eikonal limit (e.g. the multipole index l):
    /// Ω_c and λ from the part of V growing like its square.
    #[arg(long = "eikonal-param", value_name = "NAME")]
    pub(crate) eikonal_param: Option<String>,
    /// Write every converged mode's function to FILE.csv or FILE.json: bound states normalised
    /// (∫|ψ|² = 1), quasinormal modes with unit leading coefficient at the horizon.
    #[arg(long = "mode-functions", value_name = "FILE")]
    pub(crate) mode_functions: Option<String>,
    /// With --mode-functions for quasinormal modes: how far from the horizon to sample (default 20 times its distance to the next singular point).
    #[arg(long = "mode-reach", value_name = "DISTANCE")]
    pub(crate) mode_reach: Option<f64>,
}

/// A second equation sharing a separation constant (shared by `spectrum` and `scan`).
#[derive(Args, Debug)]
pub(crate) struct CoupleArgs {
    /// An angular equation sharing the separation constant (e.g. the spin-weighted spheroidal equation for Kerr).
    #[arg(long = "couple", value_name = "ANGULAR_FILE")]
    pub(crate) couple: Option<String>,
    /// A link between the equations, 'NAME = EXPR' (repeatable), e.g. 'lam = A + c^2 - 2*a*m*omega' and 'c = a*omega'.
    #[arg(long = "link", value_name = "NAME = EXPR", requires = "couple")]
    pub(crate) link: Vec<String>,
    /// Which angular eigenvalue: 0 is the lowest (for the spin-weighted spheroidal equation l − max(|m|, |s|)); at most 100.
    #[arg(long = "angular-index", value_name = "J", default_value_t = 0, requires = "couple")]
    pub(crate) angular_index: usize,
    /// A first value of the angular eigenvalue (default: from the terminating series where the linked parameters vanish).
    #[arg(long = "angular-guess", value_name = "VALUE", allow_hyphen_values = true, requires = "couple")]
    pub(crate) angular_guess: Option<String>,
}

impl CoupleArgs {
    /// The option values a coupled solve's errors may point into.
    pub(crate) fn option_texts(&self) -> Vec<(String, String)> {
        let mut extra: Vec<(String, String)> = self.angular_guess.iter().map(|g| ("--angular-guess".to_string(), g.clone())).collect();
        // A failing link is reported against its own text.
        extra.extend(self.link.iter().enumerate().map(|(i, l)| (link_option(i), l.clone())));
        extra
    }

    /// The angular equation and the parsed links, when `--couple` is given.
    pub(crate) fn read(
        &self,
        radial: &crate::algebra::Field,
    ) -> Result<Option<(super::Source, crate::ode::Reduction, Vec<crate::solve::coupled::Link>)>, Failure> {
        let Some(path) = &self.couple else { return Ok(None) };
        let (asrc, ared) = read_angular(path)?;
        let links = parse_links(self, radial, &ared.field)?;
        Ok(Some((asrc, ared, links)))
    }
}

fn usage(msg: impl Into<String>, option: &str, len: usize) -> Failure {
    Error::new(ErrorKind::Usage, msg).at(crate::syntax::Span::new(0, len)).in_option(option).into()
}

pub(crate) fn run(a: &SpectrumArgs) -> u8 {
    let mut extra = vec![("--at".to_string(), a.at.clone()), ("--overtones".to_string(), a.overtones.clone())];
    extra.extend(a.guess.iter().map(|g| ("--guess".to_string(), g.clone())));
    extra.extend(a.couple.option_texts());
    run_command(&a.input, &extra, |src| compute(a, src))
}

fn compute(a: &SpectrumArgs, src: &super::Source) -> Result<String, Failure> {
    // Options are checked before any work (the same rules as in `scan`).
    super::options::tolerance(a.tol)?;
    let overtones = super::options::overtones(&a.overtones)?;
    super::options::angular_index(a.couple.angular_index)?;
    let guess = super::values::parse_seed(a.guess.as_deref(), "--guess")?;
    super::values::parse_seed(a.couple.angular_guess.as_deref(), "--angular-guess")?;
    if let Some(p) = &a.mode_functions {
        super::mode_file::check_path(p)?;
    }
    let red = a.input.reduce(src)?;
    let k = &red.field;
    let names = k.names();
    let defaults: &[&str] = if a.boundary == ProblemArg::Bound { &["E", "omega", "ω", "w"] } else { &["omega", "ω", "w"] };
    // The spectral parameter: named by --frequency, or the one parameter
    // without a value in --at (any name), or a conventional name.
    let inferred = if a.couple.couple.is_none() {
        let given: Vec<String> = parse_assignments(&a.at, "--at")?.into_iter().map(|(n, _, _)| n).collect();
        let open: Vec<&String> = names.iter().skip(1).filter(|n| !given.contains(n)).collect();
        (open.len() == 1).then(|| open[0].clone())
    } else {
        None
    };
    let fname = a.input_frequency().or(inferred).or_else(|| defaults.iter().find(|n| names.iter().any(|p| p == *n)).map(|s| s.to_string()));
    let Some(fname) = fname else {
        return Err(Error::new(ErrorKind::Usage, "no frequency parameter: name it with --frequency").into());
    };
    let Some(freq) = names.iter().skip(1).position(|n| *n == fname).map(|i| i + 1) else {
        return Err(Error::new(ErrorKind::Usage, format!("'{fname}' is not a parameter of the equation")).in_option("--frequency").into());
    };
    let values = parse_assignments(&a.at, "--at")?;
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    given[0] = true;
    given[freq] = true;
    let coupled_input = a.couple.read(k)?;
    let links = coupled_input.as_ref().map(|c| c.2.clone()).unwrap_or_default();
    let angular = coupled_input.as_ref().map(|c| (&c.0, &c.1));
    for i in linked_radial(&links, names, &[freq], "the frequency being solved for")? {
        given[i] = true;
    }
    for (n, v, span) in &values {
        if for_angular_only(n, *span, &links, names, angular.map(|(_, ared)| ared.field.names()))? {
            continue;
        }
        match names.iter().skip(1).position(|x| x == n) {
            Some(i) if i + 1 == freq => {
                return Err(Error::new(ErrorKind::Usage, format!("'{n}' is the frequency being solved for; give a seed with --guess instead"))
                    .at(*span)
                    .in_option("--at")
                    .into())
            }
            Some(i) => {
                point[i + 1] = v.clone();
                given[i + 1] = true;
            }
            None => return Err(Error::new(ErrorKind::Usage, format!("'{n}' is not a parameter of the equation")).at(*span).in_option("--at").into()),
        }
    }
    let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
    if !missing.is_empty() {
        return Err(usage(format!("no value given for {}", missing.join(", ")), "--at", a.at.len()));
    }
    if let Some((asrc, ared)) = angular {
        let opts = SpectrumOptions { freq, values: point.clone(), overtones, tol: a.tol, guess, seeds: Vec::new() };
        return coupled(a, src, &red, opts, &fname, &values, &links, asrc, ared);
    }
    // The eikonal limit keeps its large parameter symbolic.
    let eikonal = super::wkb_report::eikonal_reduction(a.method == Method::Eikonal, a.eikonal_param.as_deref(), &red, &point, freq)?;
    // Exact values for every other parameter: horizons often become rational points.
    let symbolic = red;
    let red = crate::solve::spectrum::substitute(&symbolic, &point, freq)?;
    let values = point.clone();
    let mut closed = super::closed_report::ClosedRequest { field: &symbolic.field, q: &symbolic.normal.q, freq, point: &values, ends: None, overtones };
    if a.boundary == ProblemArg::Bound {
        closed.ends = crate::solve::collocation::bound_problem(&red, freq, &point).ok().and_then(|(d, _)| super::closed_report::bound_ends(d));
        if a.method == Method::Exact {
            return super::closed_report::exact_only(&closed, a.format, &fname, "bound");
        }
        return bound_states(a, &red, &fname, freq, point, overtones, src).map(|out| super::closed_report::attach(&closed, a.format, out));
    }
    if a.method == Method::Collocation {
        return Err(Error::new(
            ErrorKind::Usage,
            "--method collocation computes bound states (with --boundary bound); quasinormal modes use auto, cf, integrate, wkb or eikonal",
        )
        .in_option("--method")
        .into());
    }
    let kind = if a.boundary == ProblemArg::QuasiBound { SpectrumKind::QuasiBound } else { SpectrumKind::Quasinormal };
    let given_ends = match &a.ends {
        Some(t) => Some(parse_ends(t)?),
        None => None,
    };
    let problem = crate::solve::boundary::try_problem(&red.field, &red.normal.q, &red.q, &point, freq, kind, given_ends);
    closed.ends = problem.as_ref().ok().map(super::closed_report::problem_ends);
    if a.method == Method::Exact {
        return super::closed_report::exact_only(&closed, a.format, &fname, if kind == SpectrumKind::QuasiBound { "quasi-bound" } else { "qnm" });
    }
    let closed = &closed;
    // The exact recurrence route (continued fraction or terminating series)
    // covers problems from a horizon that do not end at a regular infinity,
    // with the default conditions; every other problem (and one the exact
    // route cannot set up) goes to direct integration between its ends.
    let classic = kind == SpectrumKind::Quasinormal
        && a.ends.is_none()
        && problem.as_ref().map_or(true, |bp| {
            use crate::solve::boundary::Nature;
            bp.ends[0].nature == Nature::Horizon && !(bp.ends[1].location == Location::Infinity && bp.ends[1].nature == Nature::Regular)
        });
    let opts = SpectrumOptions { freq, values: point, overtones, tol: a.tol, guess, seeds: Vec::new() };
    if classic {
        match classic_qnm(a, src, &red, &opts, &fname, eikonal) {
            Err(Failure::Lib(e)) if e.kind == ErrorKind::Usage && problem.is_ok() && a.method == Method::Auto => {
                let bp = problem?;
                let note = format!("the continued fraction could not be set up ({}); direct integration between the ends instead", e.message);
                return Ok(super::closed_report::attach(closed, a.format, between_ends(a, src, &red.var, &bp, &opts, &fname, Some(note))));
            }
            other => return other.map(|out| super::closed_report::attach(closed, a.format, out)),
        }
    }
    if !matches!(a.method, Method::Auto | Method::Integrate) {
        return Err(Error::new(
            ErrorKind::Usage,
            "this boundary problem is solved by direct integration between its ends: use --method auto or integrate",
        )
        .in_option("--method")
        .into());
    }
    let bp = problem?;
    Ok(super::closed_report::attach(closed, a.format, between_ends(a, src, &red.var, &bp, &opts, &fname, None)))
}

/// Reads `--ends 'LEFT[:COND]..RIGHT[:COND]'`.
fn parse_ends(text: &str) -> Result<[(Location, Option<Condition>); 2], Failure> {
    let bad = |msg: String| -> Failure { usage(msg, "--ends", text.len()) };
    let Some((l, r)) = text.split_once("..") else {
        return Err(bad("expected LEFT..RIGHT, e.g. '2..inf:outgoing'".into()));
    };
    let one = |part: &str| -> Result<(Location, Option<Condition>), Failure> {
        let (place, cond) = match part.split_once(':') {
            Some((p, c)) => (p.trim(), Some(c.trim())),
            None => (part.trim(), None),
        };
        let location = match place {
            "inf" | "infinity" | "∞" => Location::Infinity,
            _ => {
                let v = super::values::parse_complex(place).ok_or_else(|| bad(format!("'{place}' is not a number or 'inf'")))?;
                let (re, im) = v.to_f64();
                if im != 0.0 || !re.is_finite() {
                    return Err(bad(format!("'{place}' is not a finite real number")));
                }
                Location::At(re)
            }
        };
        let condition = match cond {
            Some(c) => Some(
                Condition::from_name(c)
                    .ok_or_else(|| bad(format!("'{c}' is not a condition (into, out-of, outgoing, decaying, normalisable, slower)")))?,
            ),
            None => None,
        };
        Ok((location, condition))
    };
    Ok([one(l)?, one(r)?])
}

/// Modes by direct integration between the ends of a boundary problem.
#[allow(clippy::too_many_arguments)]
fn between_ends(
    a: &SpectrumArgs,
    src: &super::Source,
    var: &str,
    bp: &crate::solve::boundary::BoundaryProblem,
    opts: &SpectrumOptions,
    fname: &str,
    note: Option<String>,
) -> String {
    let modes = crate::solve::ends::modes(bp, opts.overtones, opts.guess, opts.tol);
    let what = match (bp.ends[1].condition, a.boundary) {
        (Condition::Decaying, _) | (_, ProblemArg::QuasiBound) => "quasi-bound states",
        _ => "quasinormal modes",
    };
    let method = "direct integration between the ends (Frobenius series at regular ends, asymptotic series at an irregular infinity, Taylor continuation; Muller roots)";
    let end_text = |e: &crate::solve::boundary::End| {
        format!("{} = {} ({}); condition: {}", var, crate::solve::boundary::location_text(e.location), e.found, e.condition.words())
    };
    let numbering = if opts.guess.is_none() && bp.ends[1].condition != Condition::Decaying {
        Some("no --guess: the modes are the distinct roots reached from a scan of the complex plane, numbered by |Im ω|; a mode the scan missed would shift the numbering")
    } else {
        None
    };
    match a.format {
        SpecFormat::Json => {
            let ms: Vec<serde_json::Value> = modes
                .iter()
                .map(|m| {
                    let r = &m.root;
                    serde_json::json!({
                        "n": m.n,
                        "omega": if r.converged { serde_json::json!([r.omega.re, r.omega.im]) } else { serde_json::Value::Null },
                        "converged": r.converged,
                        "reason": if r.converged { serde_json::Value::Null } else { serde_json::Value::String(r.reason.clone()) },
                        "method": "integrate",
                        "evidence": {
                            "change_on_refinement": if r.change.is_finite() { serde_json::json!(r.change) } else { serde_json::Value::Null },
                            "residual": if r.residual.is_finite() { serde_json::json!(r.residual) } else { serde_json::Value::Null },
                            "iterations": r.iterations,
                            "seed": [m.seed.omega.re, m.seed.omega.im],
                            "seed_from": m.seed.from,
                        },
                        "check": serde_json::Value::Null,
                    })
                })
                .collect();
            let ends: Vec<serde_json::Value> = bp
                .ends
                .iter()
                .map(|e| {
                    serde_json::json!({
                        "at": match e.location { Location::At(z) => serde_json::json!(z), Location::Infinity => serde_json::json!("inf") },
                        "found": e.found,
                        "condition": e.condition.name(),
                    })
                })
                .collect();
            let v = serde_json::json!({
                "frequency": fname,
                "boundary": if what == "quasi-bound states" { "quasi-bound" } else { "qnm" },
                "ends": ends,
                "notes": bp.notes.iter().cloned().chain(note.clone()).chain(numbering.map(String::from)).collect::<Vec<_>>(),
                "method": method,
                "modes": ms,
            });
            format!("{}\n", serde_json::to_string_pretty(&v).unwrap_or_default())
        }
        SpecFormat::Csv => {
            let mut o = String::from("n,re,im,converged,method,change_on_refinement,residual,reason\n");
            for m in &modes {
                let r = &m.root;
                if r.converged {
                    o.push_str(&format!("{},{:.17e},{:.17e},true,integrate,{:.3e},{:.3e},\n", m.n, r.omega.re, r.omega.im, r.change, r.residual));
                } else {
                    o.push_str(&format!("{},,,false,integrate,,,\"{}\"\n", m.n, r.reason.replace('"', "'")));
                }
            }
            o
        }
        SpecFormat::Text => {
            let mut o = String::new();
            o.push_str(&format!("{what} of {} ({fname}), time dependence e^(-i*{fname}*t)\n", src.name));
            o.push_str(&format!("  left end:  {}\n", end_text(&bp.ends[0])));
            o.push_str(&format!("  right end: {}\n", end_text(&bp.ends[1])));
            for n in bp.notes.iter().chain(note.iter()) {
                o.push_str(&format!("  note: {n}\n"));
            }
            if let Some(n) = numbering {
                o.push_str(&format!("  note: {n}\n"));
            }
            o.push_str(&format!("  method: {method}\n"));
            o.push_str("  no second method runs on this boundary problem yet: the evidence is the agreement of standard and refined integration\n\n");
            o.push_str("  n  omega                                        evidence\n");
            for m in &modes {
                let r = &m.root;
                if r.converged {
                    o.push_str(&format!(
                        "  {:<2} {:<44} [integrate] change on refinement {:.1e}, residual {:.1e}\n",
                        m.n,
                        fmt_complex(r.omega.re, r.omega.im),
                        r.change,
                        r.residual
                    ));
                } else {
                    o.push_str(&format!("  {:<2} NOT CONVERGED: {} (seed from {})\n", m.n, r.reason, m.seed.from));
                }
            }
            o
        }
    }
}

/// Quasinormal modes by the exact recurrence's continued fraction, checked
/// by direct integration (a horizon and an irregular infinity).
fn classic_qnm(
    a: &SpectrumArgs,
    src: &super::Source,
    red: &crate::ode::Reduction,
    opts: &SpectrumOptions,
    fname: &str,
    eikonal: Option<(&str, usize, crate::ode::Reduction)>,
) -> Result<String, Failure> {
    let opts = opts.clone();
    let overtones = opts.overtones;
    let (rec, setup0) = crate::solve::spectrum::qnm_recurrence(red, &opts)?;
    if !(1..=crate::solve::wkb::MAX_ORDER).contains(&a.wkb_order) {
        return Err(Error::new(ErrorKind::Usage, format!("the WKB order must lie in 1..={}", crate::solve::wkb::MAX_ORDER))
            .in_option("--wkb-order")
            .into());
    }
    let estimates = crate::solve::spectrum::barrier_estimates(red, &opts, setup0.horizon_value, a.wkb_order).ok();
    if matches!(a.method, Method::Wkb | Method::Eikonal) {
        let Some(est) = &estimates else {
            return Err(Error::new(
                ErrorKind::Usage,
                "no potential barrier could be built for WKB: the equation has no rational tortoise coordinate",
            )
            .into());
        };
        let q = super::wkb_report::WkbRequest { wkb: a.method == Method::Wkb, format: a.format, order: a.wkb_order, overtones, eikonal };
        return super::wkb_report::render(&q, &fname, src, &opts, setup0.horizon_value, est);
    }
    // Seeds only from estimates in the lower half-plane (wkb.rs: WkbSeries::seed).
    let estimate = |n: u32| -> Option<(Complex64, String)> { estimates.as_ref().and_then(|e| e(n)).and_then(|b| b.series.seed()) };
    let (mut modes, setup) = crate::solve::spectrum::qnm_modes_from(&rec, setup0.clone(), &opts, &estimate)?;
    let wkb = |n: u32| estimates.as_ref().and_then(|e| e(n)).map(|b| b.series.omega());
    // The independent check: direct integration, seeded 1e-4 away from the
    // continued-fraction root (or, with --method integrate, from the seed).
    let integ = crate::solve::spectrum::integration_check(&red, &opts, &setup).ok();
    let mut checks: Vec<Option<crate::solve::integrate::IntRoot>> = Vec::new();
    for m in modes.iter_mut() {
        let Some(f) = &integ else {
            checks.push(None);
            continue;
        };
        if m.method != "cf" {
            checks.push(None);
            continue;
        }
        if a.method == Method::Integrate {
            let r = f(m.seed.0);
            m.root.omega = r.omega;
            m.root.converged = r.converged;
            m.root.residual = r.residual;
            m.root.iterations = r.iterations;
            m.root.depth = 0;
            m.root.depth_change = f64::NAN;
            if !r.converged {
                m.root.stop = crate::solve::cf::StopReason::Rejected(r.reason.clone());
            }
            m.method = "integrate";
            checks.push(None);
        } else if m.root.converged {
            checks.push(Some(f(m.root.omega * Complex64::new(1.0 + 1e-4, 1e-4))));
        } else {
            checks.push(None);
        }
    }
    if let Some(path) = &a.mode_functions {
        // The unknown itself, from the horizon's Frobenius series with unit leading coefficient.
        let pb = crate::solve::scatter::problem(red, &opts, &setup)?;
        let fs: Vec<super::mode_file::ModeFunction> = modes
            .iter()
            .filter(|m| m.root.converged)
            .map(|m| {
                let w = m.root.omega;
                let rho = pb.rho_at(w);
                (m.n, w, crate::solve::modefn::horizon_mode_function(&pb.ode, pb.near, rho, w, a.mode_reach, 400))
            })
            .collect();
        super::mode_file::write(path, &red.var, "the unknown, with unit leading coefficient of its Frobenius series at the horizon", &fs)?;
    }
    Ok(render(a, fname, src, &red.var, &setup, &modes, &checks, &wkb, &[]))
}

/// A JSON number, or null when it is not finite.
fn finite_or_null(x: f64) -> serde_json::Value {
    if x.is_finite() {
        serde_json::json!(x)
    } else {
        serde_json::Value::Null
    }
}

/// The report of quasinormal modes in the chosen format; `coupled` holds
/// the angular evidence of each mode of a coupled solve (empty otherwise).
#[allow(clippy::too_many_arguments)]
fn render(
    a: &SpectrumArgs,
    fname: &str,
    src: &super::Source,
    var: &str,
    setup: &crate::solve::spectrum::Setup,
    modes: &[crate::solve::spectrum::Mode],
    checks: &[Option<crate::solve::integrate::IntRoot>],
    wkb: &dyn Fn(u32) -> Option<Complex64>,
    coupled: &[Option<crate::solve::coupled::CoupledValue>],
) -> String {
    let check = |i: usize| checks.get(i).and_then(|c| c.as_ref());
    let method = if modes.iter().any(|m| m.method == "terminating") {
        "exact termination of the series (the recurrence has two terms)"
    } else if !modes.is_empty() && modes.iter().all(|m| m.method == "integrate") {
        "direct integration (Frobenius series at the horizon, asymptotic series at the far end, Taylor continuation), seeded by the continued fraction's estimates"
    } else {
        "continued fraction (Leaver 1985; tail after Nollert 1993)"
    };
    match a.format {
        SpecFormat::Json => {
            let ms: Vec<serde_json::Value> = modes
                .iter()
                .enumerate()
                .map(|(i, m)| {
                    let r = &m.root;
                    serde_json::json!({
                        "n": m.n,
                        "omega": if r.converged { serde_json::json!([r.omega.re, r.omega.im]) } else { serde_json::Value::Null },
                        "converged": r.converged,
                        "reason": if r.converged { serde_json::Value::Null } else { serde_json::Value::String(r.stop.text()) },
                        "method": m.method,
                        "evidence": {
                            "inversion": r.inversion,
                            "depth": r.depth,
                            "change_on_doubling": finite_or_null(r.depth_change),
                            "residual": finite_or_null(r.residual),
                            "iterations": r.iterations,
                            "seed": [m.seed.0.re, m.seed.0.im],
                            "seed_from": m.seed.1,
                        },
                        "check": match check(i) {
                            Some(c) if c.converged => serde_json::json!({
                                "method": "integrate",
                                "omega": [c.omega.re, c.omega.im],
                                "agreement": (c.omega - r.omega).norm() / r.omega.norm(),
                                "residual": c.residual,
                            }),
                            Some(c) => serde_json::json!({"method": "integrate", "omega": serde_json::Value::Null, "reason": c.reason}),
                            None => serde_json::Value::Null,
                        },
                        "estimate": match wkb(m.n) {
                            Some(w) => serde_json::json!({"method": "wkb", "order": a.wkb_order, "omega": [w.re, w.im]}),
                            None => serde_json::Value::Null,
                        },
                        "coupled": match coupled.get(i).and_then(|c| c.as_ref()) {
                            Some(c) => serde_json::json!({
                                "eigenvalue": c.eigen_name,
                                "value": [c.root.omega.re, c.root.omega.im],
                                "depth": c.root.depth,
                                "change_on_doubling": c.root.depth_change,
                                "links": c.links.iter().map(|(n, v)| (n.clone(), serde_json::json!([v.re, v.im]))).collect::<serde_json::Map<_, _>>(),
                            }),
                            None => serde_json::Value::Null,
                        },
                    })
                })
                .collect();
            let v = serde_json::json!({
                "frequency": fname,
                "boundary": "qnm",
                "horizon": setup.horizon,
                "ansatz": setup.ansatz,
                "choices": setup.choices,
                "recurrence_terms": setup.terms,
                "method": method,
                "modes": ms,
            });
            format!("{}\n", serde_json::to_string_pretty(&v).unwrap_or_default())
        }
        SpecFormat::Csv => {
            let mut o = String::from("n,re,im,converged,method,depth,change_on_doubling,residual,reason\n");
            let num = |x: f64| if x.is_finite() { format!("{x:.3e}") } else { String::new() };
            for m in modes {
                let r = &m.root;
                // Direct integration has no depth: its columns stay empty.
                let depth = if m.method == "integrate" { String::new() } else { r.depth.to_string() };
                if r.converged {
                    o.push_str(&format!(
                        "{},{:.17e},{:.17e},true,{},{depth},{},{},\n",
                        m.n,
                        r.omega.re,
                        r.omega.im,
                        m.method,
                        num(r.depth_change),
                        num(r.residual)
                    ));
                } else {
                    o.push_str(&format!("{},,,false,{},{depth},,,\"{}\"\n", m.n, m.method, r.stop.text().replace('"', "'")));
                }
            }
            o
        }
        SpecFormat::Text => {
            let mut o = String::new();
            o.push_str(&format!("quasinormal modes of {} ({fname}), time dependence e^(-i*{fname}*t)\n", src.name));
            o.push_str(&format!("  series about {} = {}: {}\n", var, setup.horizon, setup.ansatz));
            for c in &setup.choices {
                o.push_str(&format!("  choice: {c}\n"));
            }
            o.push_str(&format!("  method: {method}, {}-term recurrence, n-th inversion for overtone n\n\n", setup.terms));
            o.push_str("  n  omega                                        evidence\n");
            for (i, m) in modes.iter().enumerate() {
                let r = &m.root;
                if r.converged && m.method == "terminating" {
                    o.push_str(&format!(
                        "  {:<2} {:<44} exact condition c1(n, ω) = 0, residual {:.1e}\n",
                        m.n,
                        fmt_complex(r.omega.re, r.omega.im),
                        r.residual
                    ));
                } else if r.converged && m.method == "integrate" {
                    o.push_str(&format!("  {:<2} {:<44} [integrate] residual {:.1e}\n", m.n, fmt_complex(r.omega.re, r.omega.im), r.residual));
                } else if r.converged {
                    o.push_str(&format!(
                        "  {:<2} {:<44} [{}] depth {}, change on doubling {:.1e}, residual {:.1e}\n",
                        m.n,
                        fmt_complex(r.omega.re, r.omega.im),
                        m.method,
                        r.depth,
                        r.depth_change,
                        r.residual
                    ));
                } else {
                    o.push_str(&format!(
                        "  {:<2} NOT CONVERGED: {} (seed {} from {})\n",
                        m.n,
                        r.stop.text(),
                        fmt_complex(m.seed.0.re, m.seed.0.im),
                        m.seed.1
                    ));
                }
                match check(i) {
                    Some(c) if c.converged => o.push_str(&format!(
                        "     check: direct integration {}, agreement {:.1e}\n",
                        fmt_complex(c.omega.re, c.omega.im),
                        (c.omega - r.omega).norm() / r.omega.norm()
                    )),
                    Some(c) => o.push_str(&format!("     check: direct integration did not converge: {}\n", c.reason)),
                    None => {}
                }
                if let Some(c) = coupled.get(i).and_then(|c| c.as_ref()) {
                    let links: Vec<String> = c.links.iter().map(|(n, v)| format!("{n} = {}", fmt_complex(v.re, v.im))).collect();
                    o.push_str(&format!(
                        "     angular: {} = {} (continued fraction, depth {}, change on doubling {:.1e}); {}\n",
                        c.eigen_name,
                        fmt_complex(c.root.omega.re, c.root.omega.im),
                        c.root.depth,
                        c.root.depth_change,
                        links.join(", ")
                    ));
                }
                if let (true, Some(w)) = (r.converged, wkb(m.n)) {
                    let warn = if w.im >= 0.0 {
                        " (upper half-plane: not a decaying mode; the WKB series has failed here and the value was not used)"
                    } else {
                        ""
                    };
                    o.push_str(&format!("     estimate: WKB order {} {}{warn}\n", a.wkb_order, fmt_complex(w.re, w.im)));
                }
            }
            o
        }
    }
}

impl SpectrumArgs {
    fn input_frequency(&self) -> Option<String> {
        self.input.frequency_name()
    }
}

/// Bound states by collocation on the interval between the real singular
/// points (or the half line / line when infinity is the only other end),
/// each converged eigenvalue refined by shooting as its check.
fn bound_states(
    a: &SpectrumArgs,
    red: &crate::ode::Reduction,
    fname: &str,
    freq: usize,
    point: Vec<GRat>,
    overtones: (u32, u32),
    src: &super::Source,
) -> Result<String, Failure> {
    use crate::solve::collocation::{bound_problem, try_bound_states, Domain};
    use crate::solve::shoot::{refine, try_bound_ode, BoundCheck};
    if !matches!(a.method, Method::Auto | Method::Collocation) {
        let name = a.method.to_possible_value().map(|v| v.get_name().to_string()).unwrap_or_default();
        return Err(Error::new(
            ErrorKind::Usage,
            format!("--boundary bound computes bound states by collocation (--method auto or collocation), not by '{name}'; shooting runs as the check of every eigenvalue"),
        )
        .in_option("--method")
        .into());
    }
    let k = &red.field;
    let (domain, threshold) = bound_problem(red, freq, &point)?;
    let scale = 4.0;
    let count = overtones.1 as usize + 1;
    let states = try_bound_states(k, &red.normal.q, freq, &point, domain, scale, count, a.tol.max(1e-13), threshold)?;
    let dom_text = match domain {
        Domain::Finite(x, y) => format!("({x}, {y})"),
        Domain::HalfLine(x) => format!("({x}, ∞)"),
        Domain::Line => "(−∞, ∞)".to_string(),
    };
    let rows: Vec<&crate::solve::collocation::BoundState> = states.iter().filter(|s| s.n >= overtones.0).collect();
    // The second method: Muller on the shooting mismatch, seeded by each
    // converged collocation value (the value itself stays primary).
    let ode = try_bound_ode(k, &red.normal.q, &point, freq);
    let checks: Vec<Option<BoundCheck>> = rows
        .iter()
        .map(|s| {
            s.converged.then(|| match &ode {
                Ok(o) => refine(o, domain, s, a.tol.max(1e-12)),
                Err(e) => BoundCheck::Unavailable(e.to_string()),
            })
        })
        .collect();
    if let (Some(path), Ok(o)) = (&a.mode_functions, &ode) {
        // The normal form's ψ at the refined (shooting) value where it agrees, else the collocation value.
        let fs: Vec<super::mode_file::ModeFunction> = rows
            .iter()
            .zip(&checks)
            .filter(|(s, _)| s.converged)
            .map(|(s, c)| {
                let e = match c {
                    Some(BoundCheck::Agrees(r)) => r.omega,
                    _ => s.value,
                };
                (s.n, e, crate::solve::modefn::bound_mode_function(o, domain, e, 24))
            })
            .collect();
        super::mode_file::write(
            path,
            &red.var,
            "the normal form's psi, with the integral of |psi|^2 equal to 1, real and positive next to the first end",
            &fs,
        )?;
    }
    let agreement = |r: &crate::solve::integrate::IntRoot, s: &crate::solve::collocation::BoundState| {
        (r.omega - s.value).norm() / s.value.norm().max(f64::MIN_POSITIVE)
    };
    let elsewhere = |r: &crate::solve::integrate::IntRoot, v: &Complex64| {
        format!(
            "the refinement converged on {}, nearer the neighbouring collocation eigenvalue {} than its seed: another state",
            fmt_complex(r.omega.re, r.omega.im),
            fmt_complex(v.re, v.im)
        )
    };
    Ok(match a.format {
        SpecFormat::Json => {
            let ms: Vec<serde_json::Value> = rows
                .iter()
                .zip(&checks)
                .map(|(s, c)| {
                    let check = match c {
                        Some(BoundCheck::Agrees(r)) => serde_json::json!({
                            "method": "shooting",
                            "omega": [r.omega.re, r.omega.im],
                            "agreement": agreement(r, s),
                            "residual": r.residual,
                            "change_on_refinement": r.change,
                        }),
                        Some(BoundCheck::Unconverged(r)) => {
                            serde_json::json!({"method": "shooting", "omega": serde_json::Value::Null, "agreement": serde_json::Value::Null, "reason": r.reason})
                        }
                        Some(BoundCheck::Elsewhere(r, v)) => serde_json::json!({
                            "method": "shooting",
                            "omega": serde_json::Value::Null,
                            "agreement": serde_json::Value::Null,
                            "reason": elsewhere(r, v),
                            "landed": [r.omega.re, r.omega.im],
                        }),
                        Some(BoundCheck::Unavailable(_)) | None => serde_json::Value::Null,
                    };
                    let no_check = match c {
                        Some(BoundCheck::Unavailable(why)) => serde_json::Value::String(format!("no second method for this end type: {why}")),
                        _ => serde_json::Value::Null,
                    };
                    serde_json::json!({
                        "n": s.n,
                        "omega": if s.converged { serde_json::json!([s.value.re, s.value.im]) } else { serde_json::Value::Null },
                        "converged": s.converged,
                        "reason": if s.converged { serde_json::Value::Null } else { serde_json::Value::String(s.reason.clone().unwrap_or_default()) },
                        "method": "collocation",
                        "evidence": {"points": s.points, "change_on_doubling": s.change, "domain": dom_text},
                        "check": check,
                        "no_check": no_check,
                    })
                })
                .collect();
            format!("{}\n", serde_json::to_string_pretty(&serde_json::json!({"frequency": fname, "boundary": "bound", "domain": dom_text, "continuum": if threshold.is_finite() { serde_json::json!(threshold) } else { serde_json::Value::Null }, "method": "Chebyshev collocation (Boyd 2001)", "modes": ms})).unwrap_or_default())
        }
        SpecFormat::Csv => {
            let mut o = String::from("n,re,im,converged,method,points,change_on_doubling,check_re,check_im,agreement,reason\n");
            for (s, c) in rows.iter().zip(&checks) {
                let check = match c {
                    Some(BoundCheck::Agrees(r)) => format!("{:.17e},{:.17e},{:.3e}", r.omega.re, r.omega.im, agreement(r, s)),
                    _ => ",,".to_string(),
                };
                if s.converged {
                    o.push_str(&format!("{},{:.17e},{:.17e},true,collocation,{},{:.3e},{check},\n", s.n, s.value.re, s.value.im, s.points, s.change));
                } else {
                    let why = s.reason.as_deref().unwrap_or_default().replace('"', "'");
                    o.push_str(&format!("{},,,false,collocation,{},,{check},\"{why}\"\n", s.n, s.points));
                }
            }
            o
        }
        SpecFormat::Text => {
            let mut o = format!("bound states of {} in {fname} on {dom_text}: Chebyshev collocation with ψ = 0 at both ends (Boyd 2001)\n", src.name);
            if threshold.is_finite() {
                o.push_str(&format!("  continuum above {fname} = {threshold}\n"));
            }
            o.push_str("  check: shooting from both ends (Frobenius / asymptotic series, Taylor continuation), Muller seeded by each eigenvalue\n");
            o.push('\n');
            for (s, c) in rows.iter().zip(&checks) {
                if s.converged {
                    o.push_str(&format!(
                        "  {:<2} {:<44} points {}, change on doubling {:.1e}\n",
                        s.n,
                        fmt_complex(s.value.re, s.value.im),
                        s.points,
                        s.change
                    ));
                } else {
                    o.push_str(&format!("  {:<2} NOT CONVERGED: {}\n", s.n, s.reason.as_deref().unwrap_or_default()));
                }
                match c {
                    Some(BoundCheck::Agrees(r)) => {
                        o.push_str(&format!("     check: shooting {}, agreement {:.1e}\n", fmt_complex(r.omega.re, r.omega.im), agreement(r, s)))
                    }
                    Some(BoundCheck::Unconverged(r)) => o.push_str(&format!("     check: shooting did not converge: {}\n", r.reason)),
                    Some(BoundCheck::Elsewhere(r, v)) => o.push_str(&format!("     check: NOT A CHECK: {}\n", elsewhere(r, v))),
                    Some(BoundCheck::Unavailable(why)) => o.push_str(&format!("     check: no second method for this end type ({why})\n")),
                    None => {}
                }
            }
            o
        }
    })
}

/// The radial parameters that links set; a link may not set one of
/// `solved` (`what` says what they are).
pub(crate) fn linked_radial(links: &[crate::solve::coupled::Link], names: &[String], solved: &[usize], what: &str) -> Result<Vec<usize>, Failure> {
    let mut out = Vec::new();
    for (j, l) in links.iter().enumerate().filter(|(_, l)| !l.angular) {
        if let Some(i) = names.iter().position(|x| *x == l.target) {
            if solved.contains(&i) {
                return Err(Error::new(ErrorKind::Usage, format!("'{}' is {what}: it cannot be linked", l.target))
                    .at(crate::syntax::Span::new(0, l.target.len()))
                    .in_option(&link_option(j))
                    .into());
            }
            out.push(i);
        }
    }
    Ok(out)
}

/// True when an `--at` name is a parameter of the angular equation only
/// (its value goes there); an error when a link sets it.
pub(crate) fn for_angular_only(
    n: &str,
    span: crate::syntax::Span,
    links: &[crate::solve::coupled::Link],
    names: &[String],
    angular_names: Option<&[String]>,
) -> Result<bool, Failure> {
    if links.iter().any(|l| l.target == n) {
        return Err(Error::new(ErrorKind::Usage, format!("'{n}' is set by a --link; it cannot also have a value")).at(span).in_option("--at").into());
    }
    let n = n.to_string();
    Ok(angular_names.is_some_and(|a| a[1..].contains(&n)) && !names[1..].contains(&n))
}

/// The option name a link's errors are rendered against.
pub(crate) fn link_option(i: usize) -> String {
    if i == 0 {
        "--link".to_string()
    } else {
        format!("--link #{}", i + 1)
    }
}

/// Reads and reduces the angular equation of `--couple`; its errors are
/// rendered against its own text.
fn read_angular(path: &str) -> Result<(super::Source, crate::ode::Reduction), Failure> {
    let src = super::read_source(path)?;
    match crate::ode::reduce(&src.input(), &crate::ode::ReduceOptions::default()) {
        Ok(r) => Ok((src, r)),
        Err(e) => {
            let (msg, code) = super::report(&Failure::Lib(e), Some(&src), None, &[]);
            Err(Failure::Plain(msg, code))
        }
    }
}

/// Parses every `--link` over the joint names of the two equations.
fn parse_links(a: &CoupleArgs, radial: &crate::algebra::Field, angular: &crate::algebra::Field) -> Result<Vec<crate::solve::coupled::Link>, Failure> {
    if a.link.is_empty() {
        return Err(Error::new(ErrorKind::Usage, "--couple needs at least one --link tying the separation constant to the angular eigenvalue").into());
    }
    let names = crate::solve::coupled::joint_names(radial, angular);
    let joint = crate::algebra::Field::new(names, radial.limits().clone())?;
    let mut out: Vec<crate::solve::coupled::Link> = Vec::new();
    for (i, text) in a.link.iter().enumerate() {
        let l = crate::solve::coupled::try_link(text, &joint, radial, angular).map_err(|e| e.in_option(&link_option(i)))?;
        if out.iter().any(|o| o.target == l.target) {
            return Err(Error::new(ErrorKind::Usage, format!("'{}' is linked twice", l.target)).in_option(&link_option(i)).into());
        }
        out.push(l);
    }
    Ok(out)
}

/// Quasinormal modes of a radial equation coupled to an angular one.
#[allow(clippy::too_many_arguments)]
fn coupled(
    a: &SpectrumArgs,
    src: &super::Source,
    red: &crate::ode::Reduction,
    opts: SpectrumOptions,
    fname: &str,
    values: &[(String, GRat, crate::syntax::Span)],
    links: &[crate::solve::coupled::Link],
    asrc: &super::Source,
    ared: &crate::ode::Reduction,
) -> Result<String, Failure> {
    if !matches!(a.method, Method::Auto | Method::Cf) {
        return Err(Error::new(
            ErrorKind::Usage,
            "a coupled solve uses the continued fraction (--method auto or cf); direct integration runs as its check",
        )
        .in_option("--method")
        .into());
    }
    let guess = super::values::parse_seed(a.couple.angular_guess.as_deref(), "--angular-guess")?;
    let fixed: Vec<(String, GRat)> = values.iter().map(|(n, v, _)| (n.clone(), v.clone())).collect();
    let coupling = crate::solve::coupled::try_coupling(&red.field, ared, links, &fixed, opts.freq, a.couple.angular_index, guess)
        .map_err(|e| angular_failure(e, asrc))?;
    let none = |_: u32| None;
    let (setup, found) = crate::solve::coupled::coupled_spectrum(red, &coupling, &opts, true, &none)?;
    let modes: Vec<_> = found.iter().map(|c| c.mode.clone()).collect();
    let checks: Vec<_> = found.iter().map(|c| c.check.clone()).collect();
    let evidence: Vec<_> = found.iter().map(|c| c.angular.clone()).collect();
    let nowkb = |_: u32| None;
    let text = render(a, fname, src, &red.var, &setup, &modes, &checks, &nowkb, &evidence);
    let ang = &coupling.angular;
    let link_text: Vec<String> = a.couple.link.iter().map(|l| l.trim().to_string()).collect();
    let about = format!(
        "angular eigenvalue {} of {} on ({}, {}): continued fraction about {}, inversion {} (eigenvalue number {} from the lowest), links: {}",
        ang.eigen_name,
        asrc.name,
        ang.ends.0,
        ang.ends.1,
        ang.ends.0,
        ang.index,
        ang.index,
        link_text.join("; ")
    );
    Ok(match a.format {
        SpecFormat::Text => {
            let (first, rest) = text.split_once('\n').unwrap_or((&text, ""));
            let mut o = format!("{first}\n  coupled: {about}\n");
            for c in &ang.choices {
                o.push_str(&format!("  angular choice: {c}\n"));
            }
            if let Some((_, from)) = &ang.seed {
                o.push_str(&format!("  angular seed: {from}\n"));
            }
            o.push_str(rest);
            o
        }
        SpecFormat::Json => match serde_json::from_str::<serde_json::Value>(&text) {
            Ok(serde_json::Value::Object(mut m)) => {
                m.insert(
                    "coupling".into(),
                    serde_json::json!({"angular": asrc.name, "eigenvalue": ang.eigen_name, "index": ang.index, "about": ang.ends.0, "choices": ang.choices, "links": link_text}),
                );
                format!("{}\n", serde_json::to_string_pretty(&serde_json::Value::Object(m)).unwrap_or_default())
            }
            _ => text,
        },
        SpecFormat::Csv => text,
    })
}

/// An error of the angular equation, rendered against its own text.
pub(crate) fn angular_failure(e: Error, asrc: &super::Source) -> Failure {
    let (msg, code) = super::report(&Failure::Lib(e), Some(asrc), None, &[]);
    Failure::Plain(msg, code)
}
