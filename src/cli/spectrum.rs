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
//! - quasinormal modes add `estimate` ({`method`: "wkb3", `omega`} or null)
//!   and `coupled` (null, or for `--couple`: `eigenvalue` (its name),
//!   `value` [re, im], `depth`, `change_on_doubling`, and `links`, each
//!   linked parameter's value [re, im] at the mode).
//!
//! Quasinormal-mode documents from the continued fraction also carry
//! `horizon`, `ansatz`, `choices` and `recurrence_terms`; coupled ones a
//! `coupling` object (`angular` file, `eigenvalue`, `index`, `about`,
//! `choices`, `links`); bound-state documents `domain` and `continuum` (the
//! edge, or null on a finite interval).

use super::values::{fmt_complex, parse_assignments};
use super::{run_command, Failure, InputArgs};
use crate::algebra::GRat;
use crate::error::{Error, ErrorKind};
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

/// Methods.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub(crate) enum Method {
    /// The continued fraction when the recurrence allows it.
    Auto,
    /// Leaver's continued fraction.
    Cf,
    /// Direct integration between the ends (Frobenius series, asymptotic series, Taylor continuation).
    Integrate,
    /// Third-order WKB estimates (Iyer & Will 1987).
    Wkb,
    /// The eikonal (first-order) estimate from the peak of the potential.
    Eikonal,
    /// Chebyshev collocation (bound states; the default there), each eigenvalue checked by shooting.
    Collocation,
}

/// Arguments of `spectrum`.
#[derive(Args, Debug)]
pub(crate) struct SpectrumArgs {
    #[command(flatten)]
    input: InputArgs,
    /// The boundary problem.
    #[arg(long = "boundary", value_enum, default_value = "qnm")]
    boundary: super::classify::BoundaryArg,
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
    let red = crate::ode::reduce(&src.input(), &a.input.options())?;
    let k = &red.field;
    let names = k.names();
    let defaults: &[&str] = if a.boundary == super::classify::BoundaryArg::Bound { &["E", "omega", "ω", "w"] } else { &["omega", "ω", "w"] };
    let fname = a.input_frequency().or_else(|| defaults.iter().find(|n| names.iter().any(|p| p == *n)).map(|s| s.to_string()));
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
    // Exact values for every other parameter: horizons often become rational points.
    let red = crate::solve::spectrum::substitute(&red, &point, freq)?;
    if a.boundary == super::classify::BoundaryArg::Bound {
        return bound_states(a, &red, &fname, freq, point, overtones, src);
    }
    if a.method == Method::Collocation {
        return Err(Error::new(
            ErrorKind::Usage,
            "--method collocation computes bound states (with --boundary bound); quasinormal modes use auto, cf, integrate, wkb or eikonal",
        )
        .in_option("--method")
        .into());
    }
    let opts = SpectrumOptions { freq, values: point, overtones, tol: a.tol, guess, seeds: Vec::new() };
    let (rec, setup0) = crate::solve::spectrum::qnm_recurrence(&red, &opts)?;
    let estimates = crate::solve::spectrum::barrier_estimates(&red, &opts, setup0.horizon_value).ok();
    if matches!(a.method, Method::Wkb | Method::Eikonal) {
        let Some(est) = &estimates else {
            return Err(Error::new(
                ErrorKind::Usage,
                "no potential barrier could be built for WKB: the equation has no rational tortoise coordinate",
            )
            .into());
        };
        return Ok(estimate_report(a, &fname, src, overtones, est));
    }
    let estimate = |n: u32| -> Option<(Complex64, String)> {
        estimates.as_ref().and_then(|e| e(n)).map(|(_, w3)| (w3, "third-order WKB (Iyer & Will 1987)".to_string()))
    };
    let (mut modes, setup) = crate::solve::spectrum::qnm_modes_from(&rec, setup0.clone(), &opts, &estimate)?;
    let wkb = |n: u32| estimates.as_ref().and_then(|e| e(n)).map(|(_, w3)| w3);
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
    Ok(render(a, &fname, src, &red.var, &setup, &modes, &checks, &wkb, &[]))
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
                            Some(w) => serde_json::json!({"method": "wkb3", "omega": [w.re, w.im]}),
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
                    o.push_str(&format!("     estimate: third-order WKB {}\n", fmt_complex(w.re, w.im)));
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

fn estimate_report(
    a: &SpectrumArgs,
    fname: &str,
    src: &super::Source,
    overtones: (u32, u32),
    est: &dyn Fn(u32) -> Option<(Complex64, Complex64)>,
) -> String {
    let wkb = a.method == Method::Wkb;
    let name = if wkb {
        "third-order WKB (Schutz & Will 1985; Iyer & Will 1987)"
    } else {
        "eikonal estimate √V₀ − i(n + ½)√(−V₀''/(2V₀)) (Schutz & Will 1985)"
    };
    let rows: Vec<(u32, Option<Complex64>)> = (overtones.0..=overtones.1).map(|n| (n, est(n).map(|(e, w)| if wkb { w } else { e }))).collect();
    match a.format {
        SpecFormat::Json => {
            let ms: Vec<serde_json::Value> = rows
                .iter()
                .map(|(n, w)| {
                    serde_json::json!({
                        "n": n,
                        "omega": w.map(|w| serde_json::json!([w.re, w.im])).unwrap_or(serde_json::Value::Null),
                        "converged": w.is_some(),
                        "reason": if w.is_some() { serde_json::Value::Null } else { serde_json::Value::String("no barrier estimate".into()) },
                        "method": if wkb { "wkb" } else { "eikonal" },
                        "evidence": {"note": "an analytic approximation from the peak of the potential, not an iterated eigenvalue"},
                        "check": serde_json::Value::Null,
                    })
                })
                .collect();
            format!(
                "{}\n",
                serde_json::to_string_pretty(&serde_json::json!({"frequency": fname, "boundary": "qnm", "method": name, "modes": ms}))
                    .unwrap_or_default()
            )
        }
        SpecFormat::Csv => {
            let mut o = String::from("n,re,im,converged,method\n");
            for (n, w) in rows {
                match w {
                    Some(w) => o.push_str(&format!("{n},{:.17e},{:.17e},true,{}\n", w.re, w.im, if wkb { "wkb" } else { "eikonal" })),
                    None => o.push_str(&format!("{n},,,false,{}\n", if wkb { "wkb" } else { "eikonal" })),
                }
            }
            o
        }
        SpecFormat::Text => {
            let mut o =
                format!("estimates of the quasinormal modes of {} ({fname}): {name}\n  approximations, not converged eigenvalues\n\n", src.name);
            for (n, w) in rows {
                match w {
                    Some(w) => o.push_str(&format!("  {n:<2} {}\n", fmt_complex(w.re, w.im))),
                    None => o.push_str(&format!("  {n:<2} no estimate (no barrier peak found)\n")),
                }
            }
            o
        }
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
