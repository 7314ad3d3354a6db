//! Spectra and scans for the Python package: the workflow of `canonode
//! spectrum` / `canonode scan` on the library's `solve` functions, giving
//! the same JSON documents (schemas in `src/cli/spectrum.rs` and
//! `src/cli/scan.rs` of the root crate) as values, never as text.
//!
//! A radial equation coupled to an angular one (`couple=`, `link=`) is
//! solved as `canonode spectrum --couple … --link …` solves it.

use crate::{fail, point_from, read_values, usage, Fail, Spec, Values};
use canonode::numeric::{Link, SpectrumOptions};
use canonode::{Error, ErrorKind, GRat, Origin, Rat};
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
    /// "qnm", "bound", "quasi-bound" or "periodic"; None: periodic when the
    /// coefficients are trigonometric in the real variable, else "qnm".
    pub boundary: Option<String>,
    /// A seed for the lowest overtone (exact decimal parts).
    pub guess: Option<(String, String)>,
    /// Relative tolerance on ω.
    pub tol: f64,
    /// An angular equation sharing the separation constant.
    pub couple: Option<Couple>,
    /// The two ends and their conditions, `LEFT[:COND]..RIGHT[:COND]`.
    pub ends: Option<String>,
    /// Every mode in the rectangle (Re from, to, Im from, to) and the global method's grid.
    pub region: Option<((f64, f64, f64, f64), usize)>,
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
        None => Err(fail(
            &Error::new(ErrorKind::Usage, format!("'{fname}' is not a parameter of the equation")).in_option(canonode::RequestInput::Frequency),
            spec,
            &[],
        )),
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
    check_numbers(spec, req)?;
    Ok(SpectrumOptions::new(freq, p.values, req.overtones, req.tol, seed(spec, &req.guess, "guess")?))
}

/// The checks of the numeric keywords shared by spectrum and scan.
fn check_numbers(spec: &Spec, req: &Request) -> Result<(), Fail> {
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
    Ok(())
}

/// A spectrum: the document of `canonode spectrum --format json`, from the
/// same library call (`solve::request::spectrum`) and the same renderer.
pub fn spectrum(spec: &Spec, req: &Request) -> Result<Value, Fail> {
    use canonode::numeric::{Method, Problem, SpectrumRequest, ANGULAR_ORIGIN};
    let lib = |e: Error| fail(&e, spec, &[]);
    let red = canonode::reduce(&spec.input(), &spec.options()).map_err(lib)?;
    let problem = match req.boundary.as_deref() {
        None => Problem::natural(&red),
        Some("qnm") => Problem::Quasinormal,
        Some("bound") => Problem::Bound,
        Some("quasi-bound" | "quasi_bound") => Problem::QuasiBound,
        Some("periodic") => Problem::Periodic,
        Some(b) => {
            return Err(usage(
                format!("'{b}' is not a boundary problem: use 'qnm', 'bound', 'quasi-bound' or 'periodic'"),
                "boundary",
                spec,
                &[("boundary".into(), b.into())],
                None,
            ))
        }
    };
    let method = match req.method.as_str() {
        "auto" => Method::Auto,
        "cf" => Method::Cf,
        "integrate" => Method::Integrate,
        "wkb" => Method::Wkb,
        "eikonal" => Method::Eikonal,
        "collocation" => Method::Collocation,
        "exact" => Method::Exact,
        m => {
            return Err(usage(
                format!("'{m}' is not a method: use auto, cf, integrate, wkb, eikonal, collocation or exact"),
                "method",
                spec,
                &[("method".into(), m.into())],
                None,
            ))
        }
    };
    check_numbers(spec, req)?;
    let (at_text, values) = read_values(&req.at, "at", spec)?;
    let ends = match &req.ends {
        Some(t) => Some(
            canonode::command::read_ends(t).map_err(|e| fail(&e.in_option(canonode::RequestInput::Ends), spec, &[("ends".into(), t.clone())]))?,
        ),
        None => None,
    };
    let (aspec, couple) = match &req.couple {
        Some(c) => {
            let (aspec, cr) = couple_request(spec, &red, c)?;
            (Some(aspec), Some(cr))
        }
        None => (None, None),
    };
    let lreq = SpectrumRequest {
        problem,
        ends,
        frequency: spec.frequency.clone(),
        values,
        overtones: req.overtones,
        method,
        guess: seed(spec, &req.guess, "guess")?,
        tol: req.tol,
        wkb_order: WKB_ORDER,
        eikonal_param: None,
        mode_functions: None,
        couple,
        closed_form: true,
        polynomial: None,
    };
    if let Some(((r0, r1, i0, i1), grid)) = req.region {
        if !(r0 < r1 && i0 < i1 && [r0, r1, i0, i1].iter().all(|x| x.is_finite())) {
            return Err(usage("region= is (re_from, re_to, im_from, im_to) with finite numbers, each range non-empty", "region", spec, &[], None));
        }
        let region = canonode::numeric::Region { re: (r0, r1), im: (i0, i1) };
        let report = canonode::numeric::region_modes(&red, &lreq, region, grid).map_err(|e| fail(&e, spec, &[("at".into(), at_text.clone())]))?;
        return Ok(canonode::region_json(&report));
    }
    let report = canonode::numeric::spectrum(&red, &lreq).map_err(|e| match (&e.origin, &aspec) {
        // Errors of the angular equation point into its own text.
        (Origin::Option(o), Some(aspec)) if *o == ANGULAR_ORIGIN => {
            let mut e = e;
            e.origin = Origin::Input;
            fail(&e, aspec, &[])
        }
        // An error about the values without a place points at all of them.
        (Origin::Option(canonode::RequestInput::At), _) if e.span.is_none() => {
            usage(e.message.clone(), "at", spec, &[("at".into(), at_text.clone())], None)
        }
        _ => fail(&e, spec, &[("at".into(), at_text.clone())]),
    })?;
    Ok(canonode::spectrum_json(&report))
}

/// The WKB order of seeds and estimates (the command line's default).
const WKB_ORDER: usize = 6;

/// A scan over the values of `vary`: the document of `canonode scan --format json`.
pub fn scan(spec: &Spec, req: &Request, vary: &str, values: &Values, check: bool, cancel: &AtomicBool) -> Result<Value, Fail> {
    let lib = |e: Error| fail(&e, spec, &[]);
    let red = canonode::reduce(&spec.input(), &spec.options()).map_err(lib)?;
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
    let make = || -> canonode::Result<canonode::numeric::PointSolver<'_>> {
        let red = canonode::reduce(&spec.input(), &opts)?;
        // The command line's own point solver, so that the digits are its.
        let solve = canonode::numeric::survey_solver(red, &[vi], false);
        Ok(Box::new(move |o: &SpectrumOptions, check: bool| {
            if cancel.load(Ordering::SeqCst) {
                return Err(Error::new(ErrorKind::Usage, "interrupted"));
            }
            solve(o, check)
        }))
    };
    let len = grid.len();
    let mut base = base;
    base.values[vi] = GRat::real(grid[0].clone());
    let points = canonode::numeric::scan(&make, &base, vi, &grid, 0..len, check, &|| {});
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

/// The angular side of a coupled solve as the library's request: the
/// angular equation (its errors point into its own text) and the links
/// (errors of a link point into that link, keyword `link[i]`).
fn couple_request(spec: &Spec, red: &canonode::Reduction, c: &Couple) -> Result<(Spec, canonode::numeric::CoupleRequest), Fail> {
    let lib = |e: Error| fail(&e, spec, &[]);
    let aspec = Spec::program(c.text.clone(), c.name.clone());
    let ared = canonode::reduce(&aspec.input(), &aspec.options()).map_err(|e| fail(&e, &aspec, &[]))?;
    if c.links.is_empty() {
        return Err(usage("couple= needs at least one link= tying the separation constant to the angular eigenvalue", "link", spec, &[], None));
    }
    let joint_names = canonode::numeric::joint_names(&red.field, &ared.field);
    let joint = canonode::Field::new(joint_names, red.field.limits().clone()).map_err(lib)?;
    let mut links: Vec<Link> = Vec::new();
    for (i, text) in c.links.iter().enumerate() {
        let kw = format!("link[{i}]");
        let extra = [(kw.clone(), text.clone())];
        let l = canonode::command::read_link(text, &joint, &red.field, &ared.field).map_err(|e| fail(&e.in_named(&kw), spec, &extra))?;
        if links.iter().any(|o| o.target == l.target) {
            return Err(usage(format!("'{}' is linked twice", l.target), &kw, spec, &extra, None));
        }
        links.push(l);
    }
    let guess = seed(spec, &c.guess, "angular_guess")?;
    let req = canonode::numeric::CoupleRequest { angular: ared, name: c.name.clone(), links, link_texts: c.links.clone(), index: c.index, guess };
    Ok((aspec, req))
}

/// Scattering data at real frequencies: the document of `canonode scatter
/// --format json`, from the same library set-up (`solve::scatter`) and the
/// same renderer (`emit::scatter`). `omega` is (start, stop, step) as exact
/// decimal text; Ctrl-C stops it before the next frequency.
pub fn scatter(
    spec: &Spec,
    at: &Values,
    omega: &(String, String, String),
    sum: Option<(String, i64, i64)>,
    wkb_order: usize,
    couple: Option<&Couple>,
    cancel: &AtomicBool,
) -> Result<Value, Fail> {
    let lib = |e: Error| fail(&e, spec, &[]);
    let red = canonode::reduce(&spec.input(), &spec.options()).map_err(lib)?;
    let shown = format!("{}:{}:{}", omega.0, omega.1, omega.2);
    let bad_grid = |m: &str| usage(m, "omega", spec, &[("omega".into(), shown.clone())], None);
    let parts: Vec<Option<Rat>> = [&omega.0, &omega.1, &omega.2].iter().map(|t| Rat::parse_decimal(t.trim())).collect();
    let (Some(w0), Some(w1), Some(dw)) = (&parts[0], &parts[1], &parts[2]) else {
        return Err(bad_grid("expected (start, stop, step) with exact non-negative decimals"));
    };
    let grid = match canonode::numeric::grid(w0, w1, dw) {
        Some(g) if !g.is_empty() => g,
        _ => return Err(bad_grid("the frequency grid is empty, too long or has a non-positive step")),
    };
    let (at_text, values) = read_values(at, "at", spec)?;
    let (aspec, couple) = match couple {
        Some(c) => {
            let (aspec, cr) = couple_request(spec, &red, c)?;
            (Some(aspec), Some(cr))
        }
        None => (None, None),
    };
    let req = canonode::numeric::ScatterRequest { frequency: spec.frequency.clone(), values, sum, wkb_order, couple };
    let setup = canonode::numeric::scatter_setup(&red, &req).map_err(|e| match &e.origin {
        // Errors of the angular equation point into its own text.
        Origin::Option(o) if *o == canonode::numeric::ANGULAR_ORIGIN && aspec.is_some() => {
            let mut e = e;
            e.origin = Origin::Input;
            fail(&e, aspec.as_ref().expect("checked"), &[])
        }
        Origin::Option(canonode::RequestInput::At) if e.span.is_none() => {
            usage(e.message.clone(), "at", spec, &[("at".into(), at_text.clone())], None)
        }
        _ => fail(&e, spec, &[("at".into(), at_text.clone())]),
    })?;
    let mut points = Vec::with_capacity(grid.len());
    for w in grid.iter().map(|r| r.to_f64()) {
        if cancel.load(Ordering::SeqCst) {
            return Err(lib(Error::new(ErrorKind::Usage, "interrupted")));
        }
        let (w, per) = setup.row(w);
        points.push(canonode::scatter_point_json(w, &per, setup.sum.is_some()));
    }
    let mut doc = canonode::scatter_head_json(&setup.frequency, &setup.near, &setup.far, setup.sum.as_ref());
    doc["points"] = Value::Array(points);
    Ok(doc)
}
