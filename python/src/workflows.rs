//! Spectra and scans for the Python package: the workflow of `canonode
//! spectrum` / `canonode scan` on the library's `solve` functions, giving
//! the same JSON documents (schemas in `src/cli/spectrum.rs` and
//! `src/cli/scan.rs` of the root crate) as values, never as text.
//!
//! A radial equation coupled to an angular one (`couple=`, `link=`) is
//! solved as `canonode spectrum --couple … --link …` solves it.

use crate::{fail, point_from, read_values, usage, Fail, Spec, Values};
use canonode::algebra::{GRat, Rat};
use canonode::error::{Error, ErrorKind};
use canonode::solve::cf::StopReason;
use canonode::solve::coupled::{CoupledValue, Link};
use canonode::solve::integrate::IntRoot;
use canonode::solve::spectrum::{Mode, Setup, SpectrumOptions};
use canonode::syntax::Span;
use num_complex::Complex64;
use serde_json::{json, Value};
use std::sync::atomic::{AtomicBool, Ordering};

/// What a spectrum or scan call asks for besides the equation.
pub struct Request {
    /// Values of the parameters other than the frequency: (name, shown, re, im).
    pub at: Values,
    /// Overtones, inclusive.
    pub overtones: (u32, u32),
    /// "auto", "cf", "integrate", "wkb", "eikonal" or "collocation".
    pub method: String,
    /// "qnm" or "bound".
    pub boundary: String,
    /// A seed for the lowest overtone (exact decimal parts).
    pub guess: Option<(String, String)>,
    /// Relative tolerance on ω.
    pub tol: f64,
    /// An angular equation sharing the separation constant.
    pub couple: Option<Couple>,
}

/// The angular side of a coupled solve.
pub struct Couple {
    /// The angular equation (a program) and its display name.
    pub text: String,
    /// Its display name.
    pub name: String,
    /// The links `NAME = EXPR` between the two equations.
    pub links: Vec<String>,
    /// Which angular eigenvalue (0 the lowest).
    pub index: usize,
    /// A first value of the angular eigenvalue (exact decimal parts).
    pub guess: Option<(String, String)>,
}

fn pair(w: Complex64) -> Value {
    json!([w.re, w.im])
}

/// The frequency parameter's field index and name: the one named, else the defaults of the boundary problem.
fn frequency(spec: &Spec, names: &[String], bound: bool) -> Result<(usize, String), Fail> {
    let defaults: &[&str] = if bound { &["E", "omega", "ω", "w"] } else { &["omega", "ω", "w"] };
    let fname = spec.frequency.clone().or_else(|| defaults.iter().find(|n| names.iter().any(|p| p == *n)).map(|s| s.to_string()));
    let Some(fname) = fname else {
        return Err(fail(&Error::new(ErrorKind::Usage, "no frequency parameter: name it with frequency="), spec, &[]));
    };
    match names.iter().skip(1).position(|n| *n == fname) {
        Some(i) => Ok((i + 1, fname)),
        None => Err(fail(&Error::new(ErrorKind::Usage, format!("'{fname}' is not a parameter of the equation")).in_option("--frequency"), spec, &[])),
    }
}

fn seed(spec: &Spec, guess: &Option<(String, String)>, kw: &str) -> Result<Option<Complex64>, Fail> {
    let Some((re, im)) = guess else { return Ok(None) };
    let parse = |t: &str| crate::exact_real(t).map(|r| r.to_f64());
    match (parse(re), parse(im)) {
        (Some(a), Some(b)) => Ok(Some(Complex64::new(a, b))),
        _ => {
            let shown = format!("{re}+{im}i");
            Err(usage(format!("'{shown}' is not a complex number"), kw, spec, &[(kw.into(), shown.clone())], None))
        }
    }
}

/// The options of a spectrum at the given values; the frequency (and the
/// indices in `also`) take no value, names in `elsewhere` (an angular
/// equation's own parameters) are left out.
fn options(spec: &Spec, req: &Request, names: &[String], freq: usize, also: &[usize], elsewhere: &[String]) -> Result<SpectrumOptions, Fail> {
    let (text, vals) = read_values(&req.at, "at", spec)?;
    let vals: Vec<_> = vals.into_iter().filter(|(n, _, _)| !elsewhere.contains(n)).collect();
    let mut skip = vec![freq];
    skip.extend_from_slice(also);
    let not_here = |i: usize| {
        if i == freq {
            Some(format!("'{}' is the frequency being solved for; give a seed with guess= instead", names[i]))
        } else if also.contains(&i) {
            Some(format!("'{}' is the parameter being varied", names[i]))
        } else {
            None
        }
    };
    let p = point_from(names, &vals, &skip, "at", &text, spec, &not_here)?;
    if !p.missing.is_empty() {
        return Err(usage(format!("no value given for {}", p.missing.join(", ")), "at", spec, &[("at".into(), text)], None));
    }
    if req.overtones.0 > req.overtones.1 || req.overtones.1 - req.overtones.0 > 200 {
        let shown = format!("{}..{}", req.overtones.0, req.overtones.1);
        return Err(usage("expected overtones A..B with A ≤ B and at most 200 of them", "overtones", spec, &[("overtones".into(), shown)], None));
    }
    if !(req.tol > 0.0 && req.tol < 1e-2) {
        let shown = format!("{}", req.tol);
        return Err(usage(
            format!("tol={shown} is not a sensible relative tolerance (between 0 and 1e-2)"),
            "tol",
            spec,
            &[("tol".into(), shown.clone())],
            None,
        ));
    }
    Ok(SpectrumOptions { freq, values: p.values, overtones: req.overtones, tol: req.tol, guess: seed(spec, &req.guess, "guess")?, seeds: Vec::new() })
}

/// A spectrum: the document of `canonode spectrum --format json`.
pub fn spectrum(spec: &Spec, req: &Request) -> Result<Value, Fail> {
    let lib = |e: Error| fail(&e, spec, &[]);
    let red = canonode::ode::reduce(&spec.input(), &spec.options()).map_err(lib)?;
    let names = red.field.names().to_vec();
    let bound = match req.boundary.as_str() {
        "qnm" => false,
        "bound" => true,
        b => {
            return Err(usage(
                format!("'{b}' is not a boundary problem: use 'qnm' or 'bound'"),
                "boundary",
                spec,
                &[("boundary".into(), b.into())],
                None,
            ))
        }
    };
    if !["auto", "cf", "integrate", "wkb", "eikonal", "collocation"].contains(&req.method.as_str()) {
        let m = req.method.clone();
        return Err(usage(
            format!("'{m}' is not a method: use auto, cf, integrate, wkb, eikonal or collocation"),
            "method",
            spec,
            &[("method".into(), m.clone())],
            None,
        ));
    }
    let (freq, fname) = frequency(spec, &names, bound)?;
    if let Some(c) = &req.couple {
        if bound || !matches!(req.method.as_str(), "auto" | "cf") {
            return Err(usage(
                "a coupled solve finds quasinormal modes by the continued fraction (method 'auto' or 'cf'); direct integration runs as its check",
                "method",
                spec,
                &[("method".into(), req.method.clone())],
                None,
            ));
        }
        return coupled(spec, req, c, &red, &fname, freq);
    }
    let opts = options(spec, req, &names, freq, &[], &[])?;
    let red = canonode::solve::spectrum::substitute(&red, &opts.values, freq).map_err(lib)?;
    let method_usage = |msg: &str| usage(msg, "method", spec, &[("method".into(), req.method.clone())], None);
    if bound {
        if !matches!(req.method.as_str(), "auto" | "collocation") {
            return Err(method_usage(
                "boundary='bound' computes bound states by collocation (method 'auto' or 'collocation'); shooting runs as the check of every eigenvalue",
            ));
        }
        return bound_states(spec, &red, &fname, &opts);
    }
    if req.method == "collocation" {
        return Err(method_usage(
            "method='collocation' computes bound states (with boundary='bound'); quasinormal modes use auto, cf, integrate, wkb or eikonal",
        ));
    }
    let (rec, setup0) = canonode::solve::spectrum::qnm_recurrence(&red, &opts).map_err(lib)?;
    let estimates = canonode::solve::spectrum::barrier_estimates(&red, &opts, setup0.horizon_value, WKB_ORDER).ok();
    if matches!(req.method.as_str(), "wkb" | "eikonal") {
        let Some(est) = &estimates else {
            return Err(lib(Error::new(
                ErrorKind::Usage,
                "no potential barrier could be built for WKB: the equation has no rational tortoise coordinate",
            )));
        };
        let pairs = |n: u32| est(n).map(|b| (b.eikonal, b.series.omega()));
        return Ok(estimate_doc(req.method == "wkb", &fname, opts.overtones, &pairs));
    }
    // Seeds only from estimates in the lower half-plane (as the command line).
    let estimate = |n: u32| estimates.as_ref().and_then(|e| e(n)).and_then(|b| b.series.seed());
    let (mut modes, setup) = canonode::solve::spectrum::qnm_modes_from(&rec, setup0.clone(), &opts, &estimate).map_err(lib)?;
    let wkb = |n: u32| estimates.as_ref().and_then(|e| e(n)).map(|b| b.series.omega());
    let integ = canonode::solve::spectrum::integration_check(&red, &opts, &setup).ok();
    let mut checks: Vec<Option<IntRoot>> = Vec::new();
    for m in modes.iter_mut() {
        let Some(f) = &integ else {
            checks.push(None);
            continue;
        };
        if m.method != "cf" {
            checks.push(None);
        } else if req.method == "integrate" {
            let r = f(m.seed.0);
            m.root.omega = r.omega;
            m.root.converged = r.converged;
            m.root.residual = r.residual;
            m.root.iterations = r.iterations;
            m.root.depth = 0;
            m.root.depth_change = f64::NAN;
            if !r.converged {
                m.root.stop = StopReason::Rejected(r.reason.clone());
            }
            m.method = "integrate";
            checks.push(None);
        } else if m.root.converged {
            checks.push(Some(f(m.root.omega * Complex64::new(1.0 + 1e-4, 1e-4))));
        } else {
            checks.push(None);
        }
    }
    Ok(qnm_doc(&fname, &setup, &modes, &checks, &wkb, &[]))
}

/// One mode as the command line's JSON writes it.
fn mode_json(m: &Mode, check: Option<&IntRoot>, wkb: Option<Complex64>, coupled: Option<&CoupledValue>) -> Value {
    let r = &m.root;
    json!({
        "n": m.n,
        "omega": if r.converged { pair(r.omega) } else { Value::Null },
        "converged": r.converged,
        "reason": if r.converged { Value::Null } else { Value::String(r.stop.text()) },
        "method": m.method,
        "evidence": {
            "inversion": r.inversion,
            "depth": r.depth,
            "change_on_doubling": r.depth_change,
            "residual": r.residual,
            "iterations": r.iterations,
            "seed": pair(m.seed.0),
            "seed_from": m.seed.1,
        },
        "check": match check {
            Some(c) if c.converged => json!({"method": "integrate", "omega": pair(c.omega), "agreement": (c.omega - r.omega).norm() / r.omega.norm(), "residual": c.residual}),
            Some(c) => json!({"method": "integrate", "omega": Value::Null, "reason": c.reason}),
            None => Value::Null,
        },
        "estimate": match wkb {
            Some(w) => json!({"method": "wkb3", "omega": pair(w)}),
            None => Value::Null,
        },
        "coupled": match coupled {
            Some(c) => json!({
                "eigenvalue": c.eigen_name,
                "value": pair(c.root.omega),
                "depth": c.root.depth,
                "change_on_doubling": c.root.depth_change,
                "links": c.links.iter().map(|(n, v)| (n.clone(), pair(*v))).collect::<serde_json::Map<_, _>>(),
            }),
            None => Value::Null,
        },
    })
}

fn qnm_doc(
    fname: &str,
    setup: &Setup,
    modes: &[Mode],
    checks: &[Option<IntRoot>],
    wkb: &dyn Fn(u32) -> Option<Complex64>,
    coupled: &[Option<CoupledValue>],
) -> Value {
    let method = if modes.iter().any(|m| m.method == "terminating") {
        "exact termination of the series (the recurrence has two terms)"
    } else {
        "continued fraction (Leaver 1985; tail after Nollert 1993)"
    };
    let ms: Vec<Value> = modes
        .iter()
        .enumerate()
        .map(|(i, m)| mode_json(m, checks.get(i).and_then(|c| c.as_ref()), wkb(m.n), coupled.get(i).and_then(|c| c.as_ref())))
        .collect();
    json!({
        "frequency": fname,
        "boundary": "qnm",
        "horizon": setup.horizon,
        "ansatz": setup.ansatz,
        "choices": setup.choices,
        "recurrence_terms": setup.terms,
        "method": method,
        "modes": ms,
    })
}

/// The WKB order of seeds and estimates (the command line's default).
const WKB_ORDER: usize = 6;

fn estimate_doc(wkb: bool, fname: &str, overtones: (u32, u32), est: &dyn Fn(u32) -> Option<(Complex64, Complex64)>) -> Value {
    let name = if wkb {
        "third-order WKB (Schutz & Will 1985; Iyer & Will 1987)"
    } else {
        "eikonal estimate √V₀ − i(n + ½)√(−V₀''/(2V₀)) (Schutz & Will 1985)"
    };
    let ms: Vec<Value> = (overtones.0..=overtones.1)
        .map(|n| {
            let w = est(n).map(|(e, w)| if wkb { w } else { e });
            json!({
                "n": n,
                "omega": w.map(pair).unwrap_or(Value::Null),
                "converged": w.is_some(),
                "reason": if w.is_some() { Value::Null } else { Value::String("no barrier estimate".into()) },
                "method": if wkb { "wkb" } else { "eikonal" },
                "evidence": {"note": "an analytic approximation from the peak of the potential, not an iterated eigenvalue"},
                "check": Value::Null,
            })
        })
        .collect();
    json!({"frequency": fname, "boundary": "qnm", "method": name, "modes": ms})
}

/// Bound states by collocation, each checked by shooting (as `canonode spectrum --boundary bound`).
fn bound_states(spec: &Spec, red: &canonode::ode::Reduction, fname: &str, opts: &SpectrumOptions) -> Result<Value, Fail> {
    use canonode::solve::collocation::{bound_problem, try_bound_states, Domain};
    use canonode::solve::shoot::{refine, try_bound_ode, BoundCheck};
    let lib = |e: Error| fail(&e, spec, &[]);
    let k = &red.field;
    let (domain, threshold) = bound_problem(red, opts.freq, &opts.values).map_err(lib)?;
    let count = opts.overtones.1 as usize + 1;
    let states = try_bound_states(k, &red.normal.q, opts.freq, &opts.values, domain, 4.0, count, opts.tol.max(1e-13), threshold).map_err(lib)?;
    let dom_text = match domain {
        Domain::Finite(x, y) => format!("({x}, {y})"),
        Domain::HalfLine(x) => format!("({x}, ∞)"),
        Domain::Line => "(−∞, ∞)".to_string(),
    };
    let ode = try_bound_ode(k, &red.normal.q, &opts.values, opts.freq);
    let ms: Vec<Value> = states
        .iter()
        .filter(|s| s.n >= opts.overtones.0)
        .map(|s| {
            let c = s.converged.then(|| match &ode {
                Ok(o) => refine(o, domain, s, opts.tol.max(1e-12)),
                Err(e) => BoundCheck::Unavailable(e.to_string()),
            });
            let agreement = |r: &IntRoot| (r.omega - s.value).norm() / s.value.norm().max(f64::MIN_POSITIVE);
            let check = match &c {
                Some(BoundCheck::Agrees(r)) => {
                    json!({"method": "shooting", "omega": pair(r.omega), "agreement": agreement(r), "residual": r.residual, "change_on_refinement": r.change})
                }
                Some(BoundCheck::Unconverged(r)) => json!({"method": "shooting", "omega": Value::Null, "agreement": Value::Null, "reason": r.reason}),
                Some(BoundCheck::Elsewhere(r, v)) => json!({
                    "method": "shooting",
                    "omega": Value::Null,
                    "agreement": Value::Null,
                    "reason": format!(
                        "the refinement converged on {}, nearer the neighbouring collocation eigenvalue {} than its seed: another state",
                        complex_text(r.omega),
                        complex_text(*v)
                    ),
                    "landed": pair(r.omega),
                }),
                Some(BoundCheck::Unavailable(_)) | None => Value::Null,
            };
            let no_check = match &c {
                Some(BoundCheck::Unavailable(why)) => Value::String(format!("no second method for this end type: {why}")),
                _ => Value::Null,
            };
            json!({
                "n": s.n,
                "omega": if s.converged { pair(s.value) } else { Value::Null },
                "converged": s.converged,
                "reason": if s.converged { Value::Null } else { Value::String("the eigenvalue kept changing when the points were doubled (or fewer bound states exist below the continuum)".into()) },
                "method": "collocation",
                "evidence": {"points": s.points, "change_on_doubling": s.change, "domain": dom_text},
                "check": check,
                "no_check": no_check,
            })
        })
        .collect();
    Ok(json!({
        "frequency": fname,
        "boundary": "bound",
        "domain": dom_text,
        "continuum": if threshold.is_finite() { json!(threshold) } else { Value::Null },
        "method": "Chebyshev collocation (Boyd 2001)",
        "modes": ms,
    }))
}

/// A complex number with 17 significant digits, for messages (the command line writes its own the same way).
fn complex_text(w: Complex64) -> String {
    format!("{:.16e}{:+.16e}i", w.re, w.im)
}

/// A scan over the values of `vary`: the document of `canonode scan --format json`.
pub fn scan(spec: &Spec, req: &Request, vary: &str, values: &Values, check: bool, cancel: &AtomicBool) -> Result<Value, Fail> {
    let lib = |e: Error| fail(&e, spec, &[]);
    let red = canonode::ode::reduce(&spec.input(), &spec.options()).map_err(lib)?;
    let names = red.field.names().to_vec();
    let (freq, fname) = frequency(spec, &names, false)?;
    let Some(vi) = names.iter().skip(1).position(|n| n == vary).map(|i| i + 1) else {
        return Err(usage(format!("'{vary}' is not a parameter of the equation"), "vary", spec, &[("vary".into(), vary.to_string())], None));
    };
    if vi == freq {
        return Err(usage(format!("'{vary}' is the frequency being solved for"), "vary", spec, &[("vary".into(), vary.to_string())], None));
    }
    let (vtext, vvals) = read_values(values, "values", spec)?;
    let mut grid: Vec<Rat> = Vec::new();
    for (_, v, span) in &vvals {
        if !v.im.is_zero() {
            return Err(usage("the varied parameter takes real values", "values", spec, &[("values".into(), vtext.clone())], Some(*span)));
        }
        grid.push(v.re.clone());
    }
    if grid.is_empty() || grid.len() > 100_000 {
        return Err(usage("give between 1 and 100000 values", "values", spec, &[("values".into(), vtext)], None));
    }
    let base = options(spec, req, &names, freq, &[vi], &[])?;
    let opts = spec.options();
    let make = || -> canonode::error::Result<canonode::solve::scan::PointSolver<'_>> {
        let red = canonode::ode::reduce(&spec.input(), &opts)?;
        Ok(Box::new(move |o: &SpectrumOptions, check: bool| {
            if cancel.load(Ordering::SeqCst) {
                return Err(Error::new(ErrorKind::Usage, "interrupted"));
            }
            canonode::solve::scan::single_point(&red, o, check)
        }))
    };
    let len = grid.len();
    let mut base = base;
    base.values[vi] = GRat::real(grid[0].clone());
    let points = canonode::solve::scan::scan(&make, &base, vi, &grid, 0..len, check, &|| {});
    let pts: Vec<Value> = points
        .iter()
        .map(|p| {
            let ms: Vec<Value> = p
                .modes
                .iter()
                .map(|(m, c)| {
                    json!({
                        "n": m.n,
                        "omega": if m.root.converged { pair(m.root.omega) } else { Value::Null },
                        "converged": m.root.converged,
                        "reason": if m.root.converged { Value::Null } else { Value::String(m.root.stop.text()) },
                        "check": c.map(|c| json!({"method": "integrate", "omega": pair(c)})),
                    })
                })
                .collect();
            json!({"index": p.index, "value": p.value, "error": p.error, "modes": ms})
        })
        .collect();
    Ok(json!({"parameter": vary, "frequency": fname, "points": pts}))
}

/// Quasinormal modes of a radial equation whose separation constant is
/// linked to an angular eigenvalue (as `canonode spectrum --couple`): the
/// document of the plain solve with each mode's angular evidence and a
/// `coupling` object. Errors of the angular equation point into its text,
/// those of a link into that link (keyword `link[i]`).
fn coupled(spec: &Spec, req: &Request, c: &Couple, red: &canonode::ode::Reduction, fname: &str, freq: usize) -> Result<Value, Fail> {
    let lib = |e: Error| fail(&e, spec, &[]);
    let aspec = Spec::program(c.text.clone(), c.name.clone());
    let ared = canonode::ode::reduce(&aspec.input(), &aspec.options()).map_err(|e| fail(&e, &aspec, &[]))?;
    let names = red.field.names().to_vec();
    if c.links.is_empty() {
        return Err(usage("couple= needs at least one link= tying the separation constant to the angular eigenvalue", "link", spec, &[], None));
    }
    let joint_names = canonode::solve::coupled::joint_names(&red.field, &ared.field);
    let joint = canonode::algebra::Field::new(joint_names, red.field.limits().clone()).map_err(lib)?;
    let mut links: Vec<Link> = Vec::new();
    for (i, text) in c.links.iter().enumerate() {
        let kw = format!("link[{i}]");
        let extra = [(kw.clone(), text.clone())];
        let l = canonode::solve::coupled::try_link(text, &joint, &red.field, &ared.field)
            .map_err(|e| fail(&e.in_option(&format!("--{kw}")), spec, &extra))?;
        if links.iter().any(|o| o.target == l.target) {
            return Err(usage(format!("'{}' is linked twice", l.target), &kw, spec, &extra, None));
        }
        if names.iter().position(|n| *n == l.target) == Some(freq) {
            let span = Span::new(0, l.target.len().max(1));
            return Err(usage(format!("'{}' is the frequency being solved for: it cannot be linked", l.target), &kw, spec, &extra, Some(span)));
        }
        links.push(l);
    }
    let linked: Vec<usize> = links.iter().filter(|l| !l.angular).filter_map(|l| names.iter().position(|n| *n == l.target)).collect();
    let (at_text, vals) = read_values(&req.at, "at", spec)?;
    for (n, _, span) in &vals {
        if links.iter().any(|l| l.target == *n) {
            return Err(usage(
                format!("'{n}' is set by a link; it cannot also have a value"),
                "at",
                spec,
                &[("at".into(), at_text.clone())],
                Some(*span),
            ));
        }
    }
    let angular_only: Vec<String> = ared.field.names()[1..].iter().filter(|n| !names[1..].contains(n)).cloned().collect();
    let opts = options(spec, req, &names, freq, &linked, &angular_only)?;
    let fixed: Vec<(String, GRat)> = vals.iter().map(|(n, v, _)| (n.clone(), v.clone())).collect();
    let guess = seed(spec, &c.guess, "angular_guess")?;
    let coupling =
        canonode::solve::coupled::try_coupling(&red.field, &ared, &links, &fixed, freq, c.index, guess).map_err(|e| fail(&e, &aspec, &[]))?;
    let none = |_: u32| None;
    let (setup, found) = canonode::solve::coupled::coupled_spectrum(red, &coupling, &opts, true, &none).map_err(lib)?;
    let modes: Vec<Mode> = found.iter().map(|f| f.mode.clone()).collect();
    let checks: Vec<Option<IntRoot>> = found.iter().map(|f| f.check.clone()).collect();
    let evidence: Vec<Option<CoupledValue>> = found.iter().map(|f| f.angular.clone()).collect();
    let mut doc = qnm_doc(fname, &setup, &modes, &checks, &|_| None, &evidence);
    let ang = &coupling.angular;
    let link_text: Vec<String> = c.links.iter().map(|l| l.trim().to_string()).collect();
    doc["coupling"] =
        json!({"angular": c.name, "eigenvalue": ang.eigen_name, "index": ang.index, "about": ang.ends.0, "choices": ang.choices, "links": link_text});
    Ok(doc)
}
