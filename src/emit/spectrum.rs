//! The documents of a spectrum computation: a [`SpectrumReport`] as JSON
//! (schema documented in `src/cli/spectrum.rs` and `src/cli/wkb_report.rs`),
//! CSV (one line per mode) and text (a table with the evidence). The command
//! line and the Python package both render reports here.

use super::numbers::{fmt_complex, pi_multiple};
use crate::algebra::print::Style;
use crate::error::RequestInput;
use crate::solve::boundary::{location_text, Condition, End, Location};
use crate::solve::closed::ClosedForm;
use crate::solve::integrate::Settled;
use crate::solve::periodic::{Floquet, PeriodicMode};
use crate::solve::physical::{ChangeReport, WrittenPlace};
use crate::solve::polynomial::PolynomialSolutions;
use crate::solve::request::{
    Body, BoundReport, ClosedSection, EndsReport, EstimateReport, MethodFunction, ModeFunctions, NumericMethod, PeriodicReport, Problem,
    RecurrenceReport, SeriesReport, SpectrumReport,
};
use crate::solve::shoot::BoundCheck;
use crate::solve::spectrum::ModeMethod;
use crate::solve::wkb::in_lower_half_plane;
use num_complex::Complex64;
use serde_json::{json, Value};

fn pair(w: Complex64) -> Value {
    json!([w.re, w.im])
}

fn opt_pair(w: Option<Complex64>) -> Value {
    w.map(pair).unwrap_or(Value::Null)
}

/// A JSON number, or null when it is not finite.
fn finite_or_null(x: f64) -> Value {
    if x.is_finite() {
        json!(x)
    } else {
        Value::Null
    }
}

/// A mode object: `n`, `omega` (null unless the value stands), `converged`,
/// `reason` (null when it stands), `method`, then `rest`'s keys in order —
/// the one place a mode's value and status are written.
fn mode_json(n: u32, value: Result<Complex64, String>, method: &str, rest: Value) -> Value {
    let (omega, converged, reason) = match value {
        Ok(w) => (pair(w), true, Value::Null),
        Err(why) => (Value::Null, false, Value::String(why)),
    };
    let mut m = serde_json::Map::new();
    m.insert("n".into(), json!(n));
    m.insert("omega".into(), omega);
    m.insert("converged".into(), json!(converged));
    m.insert("reason".into(), reason);
    m.insert("method".into(), json!(method));
    if let Value::Object(r) = rest {
        m.extend(r);
    }
    Value::Object(m)
}

fn opt_num(x: Option<f64>) -> Value {
    x.map(finite_or_null).unwrap_or(Value::Null)
}

/// The report as its JSON document.
pub fn json(r: &SpectrumReport) -> Value {
    let mut doc = match &r.body {
        Body::Recurrence(b) => recurrence_json(&r.frequency, r.problem, b),
        Body::Ends(b) => ends_json(&r.frequency, b),
        Body::Bound(b) => bound_json(&r.frequency, b),
        Body::Estimates(b) => estimates_json(&r.frequency, b),
        Body::Exact => exact_json(r),
        Body::Periodic(b) => periodic_json(&r.frequency, b),
    };
    let numeric = r.body.converged();
    if let (Some(c), Value::Object(m)) = (&r.change, &mut doc) {
        m.insert("variable_change".into(), change_json(c));
    }
    if let (Some(f), Value::Object(m)) = (&r.mode_functions, &mut doc) {
        m.insert("mode_functions".into(), mode_functions_json(f));
    }
    if let (Some(p), Value::Object(m)) = (&r.polynomial, &mut doc) {
        let (v, note) = match p {
            Ok(p) => (polynomial_json(p), Value::Null),
            Err(why) => (Value::Null, json!(why)),
        };
        m.insert("polynomial_solutions".into(), v);
        m.insert("polynomial_solutions_note".into(), note);
    }
    let (cf, note) = match &r.closed {
        ClosedSection::Found { form, values } => (closed_json(form, values, &numeric), Value::Null),
        ClosedSection::None(why) => (Value::Null, json!(why)),
        ClosedSection::NotAsked => return doc,
    };
    if let Value::Object(m) = &mut doc {
        m.insert("closed_form".into(), cf);
        m.insert("closed_form_note".into(), note);
    }
    doc
}

/// A place of the chart's report: a number, "inf", or null when undecided.
fn place_json(l: Location) -> Value {
    match l {
        Location::At(x) => finite_or_null(x),
        Location::Infinity => json!("inf"),
    }
}

/// The change of variable: the map, and each end in both variables (the
/// written place null with the reason when it cannot be decided).
fn change_json(c: &ChangeReport) -> Value {
    let ends: Vec<Value> = c
        .ends
        .iter()
        .map(|e| {
            let (written, why) = match &e.written {
                WrittenPlace::At(x) => (finite_or_null(*x), Value::Null),
                WrittenPlace::Infinity => (json!("inf"), Value::Null),
                WrittenPlace::Undecided(why) => (Value::Null, json!(why)),
            };
            json!({"physical": place_json(e.physical), "written": written, "undecided": why})
        })
        .collect();
    json!({"physical_variable": c.physical, "written_variable": c.written, "map": c.map, "ends": ends, "note": c.sentence()})
}

fn polynomial_json(p: &PolynomialSolutions) -> Value {
    let both = |r: &crate::algebra::RatFunc| json!({"expression": p.show(r, Style::Text), "expression_latex": p.show(r, Style::Latex)});
    let roots: Vec<Value> =
        p.roots.as_ref().map_or(Vec::new(), |rs| rs.iter().map(|c| json!({"value": pair(c.value), "residual": opt_num(c.residual)})).collect());
    json!({
        "about": p.about,
        "ansatz": p.ansatz,
        "series": p.series,
        "degree": p.degree,
        "degree_from": p.chosen,
        "termination": {
            "general": both(&p.general),
            "at_degree": p.termination.as_ref().map(|t| both(&t.last)),
            "holds": p.holds(),
        },
        "condition": p.termination.as_ref().map(|t| both(&t.determinant)),
        "condition_note": p.symbolic_note,
        "spectral": p.spectral,
        "at_values": both(&p.at_values),
        "roots": roots,
        "roots_note": p.roots.as_ref().err(),
    })
}

fn polynomial_text(p: &PolynomialSolutions) -> String {
    let t = |r: &crate::algebra::RatFunc| p.show(r, Style::Text);
    let mut s = format!("\npolynomial solutions of degree N = {} ({})\n", p.degree, p.chosen);
    s.push_str(&format!("  ansatz: {}, {}, Taylor series about {}\n", p.ansatz, p.series, p.about));
    s.push_str(&format!("  the series stops at degree N where {} = 0", t(&p.general)));
    s.push_str(if p.holds() { " (holds at these values)\n" } else { " (does not hold at these values)\n" });
    match (&p.termination, &p.symbolic_note) {
        (Some(tm), _) => s.push_str(&format!("  and, at N = {}: {} = 0\n", p.degree, t(&tm.determinant))),
        (None, Some(why)) => s.push_str(&format!("  (the determinant {why})\n")),
        (None, None) => {}
    }
    s.push_str(&format!("  at these values: {} = 0\n", t(&p.at_values)));
    match &p.roots {
        Ok(rs) => {
            for c in rs {
                let check =
                    c.residual.map_or("no check (a leading coefficient vanishes)".to_string(), |r| format!("series stops: last equation {r:.1e}"));
                s.push_str(&format!("  {} = {}  ({check})\n", p.spectral, fmt_complex(c.value.re, c.value.im)));
            }
        }
        Err(why) => s.push_str(&format!("  no roots: {why}\n")),
    }
    s
}

/// The report as CSV, one line per mode.
pub fn csv(r: &SpectrumReport) -> String {
    match &r.body {
        Body::Recurrence(b) => recurrence_csv(b),
        Body::Ends(b) => ends_csv(b),
        Body::Bound(b) => bound_csv(b),
        Body::Estimates(b) => estimates_csv(b),
        Body::Exact => exact_csv(r),
        Body::Periodic(b) => periodic_csv(b),
    }
}

/// The report as a text table with the evidence; `source` names the equation.
pub fn text(r: &SpectrumReport, source: &str) -> String {
    let mut o = match &r.body {
        Body::Recurrence(b) => recurrence_text(&r.frequency, &r.var, source, r.problem, b),
        Body::Ends(b) => ends_text(&r.frequency, &r.var, source, b),
        Body::Bound(b) => bound_text(&r.frequency, source, b),
        Body::Estimates(b) => estimates_text(&r.frequency, source, b),
        Body::Periodic(b) => periodic_text(&r.frequency, source, b),
        Body::Exact if matches!(r.closed, ClosedSection::None(_)) => {
            format!(
                "no closed form in {}: polynomial solutions only ({opt_method} exact)\n",
                r.frequency,
                opt_method = RequestInput::Method.mention()
            )
        }
        Body::Exact => format!(
            "{} in {} from the closed form alone ({opt_method} exact: no numeric check)\n",
            match r.problem {
                Problem::Bound => "bound states",
                Problem::QuasiBound => "quasi-bound states",
                Problem::Quasinormal => "quasinormal modes",
                Problem::Periodic => "characteristic values",
            },
            r.frequency,
            opt_method = RequestInput::Method.mention()
        ),
    };
    if let Some(c) = &r.change {
        // After the heading line: the variable the ends and words refer to.
        let at = o.find('\n').map_or(o.len(), |i| i + 1);
        o.insert_str(at, &format!("  variable: {}\n", c.sentence()));
    }
    match &r.closed {
        ClosedSection::Found { form, values } => o.push_str(&closed_text(&r.frequency, form, values, &r.body.converged())),
        ClosedSection::None(why) => o.push_str(&format!("\nclosed form: none ({why})\n")),
        ClosedSection::NotAsked => {}
    }
    match &r.polynomial {
        Some(Ok(p)) => o.push_str(&polynomial_text(p)),
        Some(Err(why)) => o.push_str(&format!("\npolynomial solutions: none ({why})\n")),
        None => {}
    }
    if let Some(f) = &r.mode_functions {
        o.push_str(&mode_functions_text(&r.frequency, f));
    }
    o
}

/// A mode-function method tag in words.
pub fn method_words(method: NumericMethod) -> &'static str {
    match method {
        NumericMethod::ContinuedFraction => "continued fraction",
        NumericMethod::Terminating => "terminating series",
        NumericMethod::Integrate => "direct integration",
        NumericMethod::Shooting => "shooting",
        NumericMethod::Collocation => "collocation",
        NumericMethod::Spectral => "global spectral method",
        NumericMethod::Laurent | NumericMethod::Truncation => "truncated Laurent series",
        NumericMethod::Monodromy => "integration around the period",
        NumericMethod::SpecialPoint => "exact special point of the recurrence",
    }
}

/// The mode functions' summary (the samples go to their own file): each
/// mode's methods and the largest difference between their functions.
fn mode_functions_json(f: &ModeFunctions) -> Value {
    let one = |m: &MethodFunction| json!({"method": m.method.tag(), "omega": pair(m.value), "error": m.samples.as_ref().err()});
    let modes: Vec<Value> = f
        .modes
        .iter()
        .map(|m| {
            let mut v = one(&m.first);
            v["n"] = json!(m.n);
            v["check"] = m.second.as_ref().map_or(Value::Null, one);
            v["largest_difference"] = opt_num(m.difference);
            v
        })
        .collect();
    json!({"normalisation": f.normalisation, "modes": modes})
}

fn mode_functions_text(freq: &str, f: &ModeFunctions) -> String {
    let mut s = format!("\nmode functions ({}):\n", f.normalisation);
    for m in &f.modes {
        let w = m.first.value;
        s.push_str(&format!("  {:>3}  {} at {freq} = {}", m.n, method_words(m.first.method), fmt_complex(w.re, w.im)));
        match &m.first.samples {
            Ok(p) => s.push_str(&format!(", {} samples\n", p.len())),
            Err(why) => s.push_str(&format!(": NO FUNCTION ({why})\n")),
        }
        match (&m.second, m.difference) {
            (Some(c), Some(d)) => s.push_str(&format!("       {}: largest difference {d:.1e} (relative to max |ψ|)\n", method_words(c.method))),
            (Some(c), None) => match &c.samples {
                Err(why) => s.push_str(&format!("       {}: NO FUNCTION ({why})\n", method_words(c.method))),
                Ok(_) => s.push_str(&format!("       {}: not compared\n", method_words(c.method))),
            },
            (None, _) => s.push_str("       no second method's function\n"),
        }
    }
    s
}

/// How near a numeric mode must lie to an exact value to count as its check (relative).
const CLOSED_CHECK_NEAR: f64 = 1e-6;

/// A family's range of n in words (text reports and derivation records).
pub fn range_text(f: &crate::solve::closed::Family) -> String {
    match (f.range.last, &f.range.bound) {
        (Some(u32::MAX), _) => "no member at these values".to_string(),
        (Some(l), Some((b, _))) => format!("0 <= n < {b}  (n <= {l} at these values)"),
        (Some(l), None) => format!("0 <= n <= {l} at these values"),
        (None, _) => "n = 0, 1, 2, ...".to_string(),
    }
}

/// The values of every family, numbered: (family from 1, n, value).
fn exact_values(r: &SpectrumReport) -> Vec<(usize, u32, Complex64)> {
    let ClosedSection::Found { values, .. } = &r.closed else { return Vec::new() };
    values.iter().enumerate().flat_map(|(i, vs)| vs.iter().map(move |(n, w)| (i + 1, *n, *w))).collect()
}

fn exact_json(r: &SpectrumReport) -> Value {
    let ms: Vec<Value> = exact_values(r)
        .iter()
        .map(|(fam, n, w)| {
            json!({"n": n, "family": fam, "omega": pair(*w), "converged": true, "reason": Value::Null, "method": "exact", "evidence": Value::Null, "check": Value::Null})
        })
        .collect();
    json!({"frequency": r.frequency, "boundary": r.problem.tag(), "method": "exact", "modes": ms})
}

fn exact_csv(r: &SpectrumReport) -> String {
    let mut s = "n,family,re,im,method\n".to_string();
    for (fam, n, w) in exact_values(r) {
        s.push_str(&format!("{n},{fam},{:.17e},{:.17e},exact\n", w.re, w.im));
    }
    s
}

fn closed_range_json(f: &crate::solve::closed::Family) -> Value {
    let last = match f.range.last {
        Some(u32::MAX) => json!(-1),
        Some(l) => json!(l),
        None => Value::Null,
    };
    json!({
        "first": 0,
        "last": last,
        "bound": f.range.bound.as_ref().map(|(t, _)| format!("n < {t}")),
        "branch": if f.range.branch.is_empty() { Value::Null } else { json!(f.range.branch) },
    })
}

fn closed_json(form: &ClosedForm, values: &[Vec<(u32, Complex64)>], numeric: &[(u32, Complex64, NumericMethod)]) -> Value {
    let fams: Vec<Value> = form
        .families
        .iter()
        .zip(values)
        .map(|(f, vs)| {
            let values: Vec<Value> = vs
                .iter()
                .map(|(n, w)| {
                    let check = closed_check(*w, numeric).map_or(Value::Null, |(mn, mw, method)| {
                        json!({"method": method.tag(), "n": mn, "omega": pair(mw), "agreement": (mw - w).norm() / w.norm().max(1e-300)})
                    });
                    let passed = if check.is_null() { crate::solve::request::passed_over(*w, numeric) } else { None };
                    json!({"n": n, "omega": pair(*w), "method": "exact", "check": check, "numeric_passed_over_from": passed})
                })
                .collect();
            json!({
                "family": f.label,
                "expression": f.value.text(&form.names),
                "expression_latex": f.value.latex(&form.names),
                "n_range": closed_range_json(f),
                "values": values,
            })
        })
        .collect();
    json!({"route": form.route, "families": fams})
}

/// The numeric mode of this run at an exact value (within
/// [`CLOSED_CHECK_NEAR`]), if any: its number, value and method.
fn closed_check(w: Complex64, numeric: &[(u32, Complex64, NumericMethod)]) -> Option<(u32, Complex64, NumericMethod)> {
    let near = numeric.iter().min_by(|a, b| (a.1 - w).norm().total_cmp(&(b.1 - w).norm()));
    near.filter(|(_, mw, _)| (mw - w).norm() <= CLOSED_CHECK_NEAR * w.norm().max(1.0)).copied()
}

fn closed_text(fname: &str, form: &ClosedForm, values: &[Vec<(u32, Complex64)>], numeric: &[(u32, Complex64, NumericMethod)]) -> String {
    let mut s = format!("\nclosed form ({})\n", form.route);
    for (i, (f, vs)) in form.families.iter().zip(values).enumerate() {
        s.push_str(&format!("  family {}: {}\n", i + 1, f.label));
        s.push_str(&format!("    {fname} = {}\n", f.value.text(&form.names)));
        s.push_str(&format!("    n: {}\n", range_text(f)));
        if !f.range.branch.is_empty() {
            s.push_str(&format!("    branch: {}\n", f.range.branch));
        }
        for (n, w) in vs {
            // The numeric table's check, and its number when it differs (a
            // numbering that skipped or inserted a mode shows here).
            let check = match closed_check(*w, numeric) {
                Some((mn, mw, _)) => {
                    let agree = (mw - w).norm() / w.norm().max(1e-300);
                    if mn == *n {
                        format!("; the numeric n = {mn} agrees to {agree:.1e}")
                    } else {
                        format!("; the numeric table numbers it n = {mn} (agreement {agree:.1e})")
                    }
                }
                None => match crate::solve::request::passed_over(*w, numeric) {
                    Some(k) => format!(
                        "; the numeric table has no mode here, though its overtones from n = {k} on lie beyond this value: their numbers are short by one for each exact value passed over"
                    ),
                    None => String::new(),
                },
            };
            s.push_str(&format!("    n = {n}: {}  (exact{check})\n", fmt_complex(w.re, w.im)));
        }
    }
    s
}

fn recurrence_method(b: &RecurrenceReport) -> &'static str {
    if b.modes.iter().any(|m| m.method == ModeMethod::Terminating) {
        "exact termination of the series (the recurrence has two terms)"
    } else if !b.modes.is_empty() && b.modes.iter().all(|m| m.method == ModeMethod::Integrate) {
        "direct integration (Frobenius series at the horizon, asymptotic series at the far end, Taylor continuation), seeded by the continued fraction's estimates"
    } else {
        "continued fraction (Leaver 1985; tail after Nollert 1993)"
    }
}

/// The evidence of a continued-fraction root (its inversion, depth, change
/// on doubling, residual, iterations and seed), as JSON.
/// The note under a continued-fraction root that is a double one.
const DOUBLE_CF: &str = "a double root of the continued fraction's inversion (two modes coincide here), which the root search resolves only to about 1e-8: the value is the zero of the inversion's derivative, at the depth reached and at twice it";

fn cf_evidence(m: &crate::solve::spectrum::Mode, settled: Option<&Settled>) -> Value {
    let r = &m.root;
    if let (ModeMethod::Integrate, Some(Settled::Limit(_))) = (m.method, settled) {
        // A limit of nearby problems: its error estimate, not a refinement's change.
        return json!({"limit_error": finite_or_null(r.depth_change), "seed": pair(m.seed.0), "seed_from": m.seed.1});
    }
    if m.method == ModeMethod::Integrate {
        // Direct integration's own evidence where the fraction did not settle.
        return json!({
            "change_on_refinement": finite_or_null(r.depth_change),
            "residual": finite_or_null(r.residual),
            "iterations": r.iterations,
            "seed": pair(m.seed.0),
            "seed_from": m.seed.1,
        });
    }
    let mut e = json!({
        "inversion": r.inversion,
        "depth": r.depth,
        "change_on_doubling": finite_or_null(r.depth_change),
        "residual": finite_or_null(r.residual),
        "iterations": r.iterations,
        "seed": pair(m.seed.0),
        "seed_from": m.seed.1,
    });
    if let (true, Some(o)) = (r.double, e.as_object_mut()) {
        o.insert("note".into(), json!(DOUBLE_CF));
    }
    e
}

/// A check's document with `started` (its relative distance from the value
/// it checks at the start) where that is not the standard one.
fn with_start(mut check: Value, start: Option<f64>) -> Value {
    if let (Some(d), Value::Object(m)) = (start, &mut check) {
        m.insert("started".into(), json!(d));
    }
    check
}

fn recurrence_json(fname: &str, problem: Problem, b: &RecurrenceReport) -> Value {
    let ms: Vec<Value> = b
        .modes
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let r = &m.root;
            let value = if r.converged { Ok(r.omega) } else { Err(r.stop.text()) };
            let rest = json!({
                "evidence": cf_evidence(m, None),
                "check": match b.checks.get(i).and_then(|c| c.as_ref()) {
                    Some(c) if c.converged => with_start(
                        json!({
                            "method": "integrate",
                            "omega": pair(c.omega),
                            "agreement": (c.omega - r.omega).norm() / r.omega.norm(),
                            "residual": c.residual,
                        }),
                        b.check_from.get(i).copied().flatten(),
                    ),
                    Some(c) => with_start(json!({"method": "integrate", "omega": Value::Null, "reason": c.reason}), b.check_from.get(i).copied().flatten()),
                    None if m.method == ModeMethod::SpecialPoint && r.converged => json!({
                        "method": "exact",
                        "leading_coefficient_index": r.inversion,
                        "reason": "c0(k, omega) = 0 and the first k + 1 equations close, in exact arithmetic; no numeric check is possible at this point",
                    }),
                    None => Value::Null,
                },
                "estimate": match b.wkb.get(i).copied().flatten() {
                    Some(w) => json!({"method": "wkb", "order": b.wkb_order, "omega": pair(w)}),
                    None => Value::Null,
                },
                "coupled": match b.coupled.as_ref().and_then(|c| c.values.get(i)).and_then(|c| c.as_ref()) {
                    Some(c) => json!({
                        "eigenvalue": c.eigen_name,
                        "value": pair(c.root.omega),
                        "depth": c.root.depth,
                        "change_on_doubling": c.root.depth_change,
                        "links": c.links.iter().map(|(n, v)| (n.clone(), pair(*v))).collect::<serde_json::Map<_, _>>(),
                    }),
                    None => Value::Null,
                },
            });
            mode_json(m.n, value, m.method.tag(), rest)
        })
        .collect();
    let setup = &b.setup;
    let mut doc = json!({
        "frequency": fname,
        "boundary": problem.tag(),
        "horizon": setup.horizon,
        "ansatz": setup.ansatz,
        "choices": setup.choices,
        "recurrence_terms": setup.terms,
        "notes": b.notes,
        "method": recurrence_method(b),
        "modes": ms,
    });
    if let (Some(c), Value::Object(m)) = (&b.coupled, &mut doc) {
        let ang = &c.angular;
        m.insert(
            "coupling".into(),
            json!({"angular": c.name, "eigenvalue": ang.eigen_name, "index": ang.index, "about": ang.ends.0, "choices": ang.choices, "links": c.links}),
        );
        if let Some(p) = &c.path {
            m.insert("continuation".into(), path_json(p));
        }
    }
    if let (Some(r), Value::Object(m)) = (&setup.rate, &mut doc) {
        m.insert("rate".into(), json!({"symbol": r.symbol, "meaning": r.meaning, "condition": r.condition.name()}));
    }
    doc
}

/// The continuation from the uncoupled limit of a coupled solve without a seed.
fn path_json(p: &crate::solve::continuation::Path) -> Value {
    json!({
        "parameter": p.parameter,
        "from": 0,
        "to": pair(p.target),
        "reached": p.reached,
        "steps_accepted": p.accepted,
        "steps_rejected": p.rejected,
        "omega_path_length": p.length,
        "uncoupled_modes": p.start.iter().map(|w| opt_pair(*w)).collect::<Vec<_>>(),
        "uncoupled_seeds_from": p.start_from,
        "stop": p.stop.text(),
    })
}

fn path_text(p: &crate::solve::continuation::Path) -> String {
    let start: Vec<String> = p.start.iter().map(|w| w.map_or("not converged".into(), |w| fmt_complex(w.re, w.im))).collect();
    let lengths: Vec<String> = p.length.iter().map(|l| format!("{l:.3e}")).collect();
    // The value as given (shortest text of the double), not 17 digits.
    let target = if p.target.im == 0.0 { format!("{}", p.target.re) } else { format!("{}{:+}i", p.target.re, p.target.im) };
    format!(
        "  continuation (no {opt_guess}): in {} from 0 to {}: {} steps accepted, {} rejected, path length in ω {} (per overtone); {}; uncoupled modes {} (seeds from {})\n",
        p.parameter,
        target,
        p.accepted,
        p.rejected,
        lengths.join(", "),
        p.stop.text(),
        start.join(", "),
        p.start_from, opt_guess = RequestInput::Guess.mention())
}

/// The CSV check columns `check_re,check_im,agreement` of a root `r`:
/// direct integration's root and their relative agreement, empty unless
/// both converged (a non-finite agreement left empty).
fn check_columns(r: &crate::solve::cf::CfRoot, check: Option<&crate::solve::integrate::IntRoot>) -> String {
    match check {
        Some(c) if c.converged && r.converged => {
            let agreement = (c.omega - r.omega).norm() / r.omega.norm();
            let agreement = if agreement.is_finite() { format!("{agreement:.3e}") } else { String::new() };
            format!("{:.17e},{:.17e},{agreement}", c.omega.re, c.omega.im)
        }
        _ => ",,".to_string(),
    }
}

fn recurrence_csv(b: &RecurrenceReport) -> String {
    // The check columns as in `scan` (the direct integration's root and its
    // relative agreement), and for a coupled problem the angular eigenvalue
    // at the mode.
    let with_angular = b.coupled.is_some();
    let mut o = String::from("n,re,im,converged,method,depth,change_on_doubling,residual,check_re,check_im,agreement,");
    o.push_str(if with_angular { "angular_re,angular_im,reason\n" } else { "reason\n" });
    let num = |x: f64| if x.is_finite() { format!("{x:.3e}") } else { String::new() };
    for (i, m) in b.modes.iter().enumerate() {
        let r = &m.root;
        // Direct integration has no depth: its columns stay empty.
        let depth = if matches!(m.method, ModeMethod::Integrate | ModeMethod::SpecialPoint) { String::new() } else { r.depth.to_string() };
        let checked = check_columns(r, b.checks.get(i).and_then(|c| c.as_ref()));
        let angular = match (with_angular, b.coupled.as_ref().and_then(|c| c.values.get(i)).and_then(|c| c.as_ref())) {
            (false, _) => String::new(),
            (true, Some(c)) if r.converged => format!("{:.17e},{:.17e},", c.root.omega.re, c.root.omega.im),
            (true, _) => ",,".to_string(),
        };
        if r.converged {
            o.push_str(&format!(
                "{},{:.17e},{:.17e},true,{},{depth},{},{},{checked},{angular}\n",
                m.n,
                r.omega.re,
                r.omega.im,
                m.method.tag(),
                num(r.depth_change),
                num(r.residual)
            ));
        } else {
            o.push_str(&format!("{},,,false,{},{depth},,,{checked},{angular}\"{}\"\n", m.n, m.method.tag(), r.stop.text().replace('"', "'")));
        }
    }
    o
}

/// The head of a table of modes: the overtone, the frequency by its name, the evidence.
fn table_head(fname: &str) -> String {
    format!("  n  {fname:<44} evidence\n")
}

fn recurrence_text(fname: &str, var: &str, source: &str, problem: Problem, b: &RecurrenceReport) -> String {
    let setup = &b.setup;
    let mut o = String::new();
    let what = if problem == Problem::QuasiBound { "quasi-bound states" } else { "quasinormal modes" };
    o.push_str(&format!("{what} of {source} ({fname}), time dependence e^(-i*{fname}*t)\n"));
    if let Some(c) = &b.coupled {
        let ang = &c.angular;
        o.push_str(&format!(
            "  coupled: angular eigenvalue {} of {} on ({}, {}): continued fraction about {}, inversion {} (eigenvalue number {} from the lowest), links: {}\n",
            ang.eigen_name,
            c.name,
            ang.ends.0,
            ang.ends.1,
            ang.ends.0,
            ang.index,
            ang.index,
            c.links.join("; ")
        ));
        for ch in &ang.choices {
            o.push_str(&format!("  angular choice: {ch}\n"));
        }
        if let Some((_, from)) = &ang.seed {
            o.push_str(&format!("  angular seed: {from}\n"));
        }
        if let Some(p) = &c.path {
            o.push_str(&path_text(p));
        }
    }
    o.push_str(&format!("  series about {} = {}: {}\n", var, setup.horizon, setup.ansatz));
    for c in &setup.choices {
        o.push_str(&format!("  choice: {c}\n"));
    }
    for n in &b.notes {
        o.push_str(&format!("  note: {n}\n"));
    }
    o.push_str(&format!("  method: {}, {}-term recurrence, n-th inversion for overtone n\n\n", recurrence_method(b), setup.terms));
    o.push_str(&table_head(fname));
    for (i, m) in b.modes.iter().enumerate() {
        let r = &m.root;
        let w = fmt_complex(r.omega.re, r.omega.im);
        if r.converged && m.method == ModeMethod::Terminating {
            o.push_str(&format!("  {:<2} {:<44} exact condition c1(n, ω) = 0, residual {:.1e}\n", m.n, w, r.residual));
        } else if r.converged && m.method == ModeMethod::Integrate {
            o.push_str(&format!("  {:<2} {:<44} [integrate] residual {:.1e}\n", m.n, w, r.residual));
        } else if r.converged && m.method == ModeMethod::SpecialPoint {
            o.push_str(&format!(
                "  {:<2} {:<44} [special] exact: c0({k}, ω) = 0 and the determinant of the first {} equations is 0 (see the note)\n",
                m.n,
                w,
                r.inversion + 1,
                k = r.inversion
            ));
            o.push_str("     check: exact arithmetic; no numeric check is possible at this point\n");
        } else if r.converged {
            o.push_str(&format!(
                "  {:<2} {:<44} [{}] depth {}, change on doubling {:.1e}, residual {:.1e}\n",
                m.n,
                w,
                m.method.tag(),
                r.depth,
                r.depth_change,
                r.residual
            ));
            if r.double {
                o.push_str(&format!("     note: {DOUBLE_CF}\n"));
            }
        } else {
            let seed = if m.seed.0.is_nan() { String::new() } else { format!(" (seed {} from {})", fmt_complex(m.seed.0.re, m.seed.0.im), m.seed.1) };
            o.push_str(&format!("  {:<2} NOT CONVERGED: {}{seed}\n", m.n, r.stop.text()));
        }
        let started = match b.check_from.get(i).copied().flatten() {
            Some(d) => format!(" (started {d:.1e} away, relative)"),
            None => String::new(),
        };
        match b.checks.get(i).and_then(|c| c.as_ref()) {
            Some(c) if c.converged => o.push_str(&format!(
                "     check: direct integration {}, agreement {:.1e}{started}\n",
                fmt_complex(c.omega.re, c.omega.im),
                (c.omega - r.omega).norm() / r.omega.norm()
            )),
            Some(c) => o.push_str(&format!("     check: direct integration did not converge{started}: {}\n", c.reason)),
            None => {}
        }
        if let Some(c) = b.coupled.as_ref().and_then(|c| c.values.get(i)).and_then(|c| c.as_ref()) {
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
        if let (true, Some(w)) = (r.converged, b.wkb.get(i).copied().flatten()) {
            let warn =
                if w.im >= 0.0 { " (upper half-plane: not a decaying mode; the WKB series has failed here and the value was not used)" } else { "" };
            o.push_str(&format!("     estimate: WKB order {} {}{warn}\n", b.wkb_order, fmt_complex(w.re, w.im)));
        }
    }
    o
}

const ENDS_METHOD: &str =
    "direct integration between the ends (Frobenius series at regular ends, asymptotic series at an irregular infinity, Taylor continuation; Muller roots)";

const SERIES_METHOD: &str = "continued fraction of a numeric series between the ends (Möbius variable, recurrence reduced to three terms by Gaussian elimination, n-th inversion for overtone n)";

fn ends_notes(b: &EndsReport) -> Vec<String> {
    b.problem.notes.iter().cloned().chain(b.note.clone()).chain(b.numbering.clone()).collect()
}

fn ends_json(fname: &str, b: &EndsReport) -> Value {
    let ms: Vec<Value> = b
        .modes
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let r = &m.root;
            let value = if r.converged { Ok(r.omega) } else { Err(r.reason.clone()) };
            let rest = json!({
                "evidence": match &r.note {
                    // A limit of nearby problems: its error estimate, not a refinement's change.
                    Some(Settled::Limit(note)) => json!({
                        "limit_error": finite_or_null(r.change),
                        "seed": pair(m.seed.omega),
                        "seed_from": m.seed.from,
                        "note": note,
                    }),
                    _ => json!({
                        "change_on_refinement": finite_or_null(r.change),
                        "residual": finite_or_null(r.residual),
                        "iterations": r.iterations,
                        "seed": pair(m.seed.omega),
                        "seed_from": m.seed.from,
                        "note": r.note.as_ref().map(|n| n.text()),
                    }),
                },
                "check": match b.checks.get(i).and_then(|c| c.as_ref()) {
                    Some(c) => match c.omega {
                        Some(w) => json!({"method": c.method.tag(), "omega": pair(w), "agreement": finite_or_null(c.agreement)}),
                        None => json!({"method": c.method.tag(), "omega": Value::Null, "reason": c.reason}),
                    },
                    None => Value::Null,
                },
            });
            mode_json(m.n, value, "integrate", rest)
        })
        .collect();
    let ms = match &b.series {
        Some(series) => series_modes_json(series, b),
        None => ms,
    };
    let ends: Vec<Value> = b
        .problem
        .ends
        .iter()
        .map(|e| {
            json!({
                "at": match e.location { Location::At(z) => json!(z), Location::Infinity => json!("infinity") },
                "found": e.found,
                "condition": e.condition.label(),
            })
        })
        .collect();
    let mut doc = json!({
        "frequency": fname,
        "boundary": b.spectrum.tag(),
        "ends": ends,
        "notes": ends_notes(b),
        "method": if b.series.is_some() { SERIES_METHOD } else { ENDS_METHOD },
        "check_method": b.check_note,
        "modes": ms,
    });
    if let (Some(series), Value::Object(m)) = (&b.series, &mut doc) {
        m.insert(
            "series".into(),
            json!({"description": series.description, "convergence_radius": finite_or_null(series.radius), "recurrence_terms": series.terms}),
        );
        if !series.second_family.is_empty() {
            // The modes listed apart from the numbered overtones, each with its check.
            let second: Vec<Value> = series
                .second_family
                .iter()
                .map(|x| {
                    json!({
                        "omega": pair(x.omega),
                        "check": x.agreement.map(|a| json!({"method": "integrate", "agreement": finite_or_null(a)})),
                    })
                })
                .collect();
            m.insert("second_family".into(), Value::Array(second));
        }
    }
    doc
}

/// The modes of the numeric series' continued fraction, each with its check
/// by direct integration (`b.modes`, index by index).
fn series_modes_json(series: &SeriesReport, b: &EndsReport) -> Vec<Value> {
    series
        .modes
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let r = &m.root;
            let value = if r.converged { Ok(r.omega) } else { Err(r.stop.text()) };
            let mut check = match b.modes.get(i).map(|c| &c.root) {
                Some(c) if r.converged && c.converged => json!({
                    "method": "integrate",
                    "omega": pair(c.omega),
                    "agreement": (c.omega - r.omega).norm() / r.omega.norm(),
                    "residual": finite_or_null(c.residual),
                }),
                Some(c) if r.converged => json!({"method": "integrate", "omega": Value::Null, "reason": c.reason}),
                _ => Value::Null,
            };
            // How a value at a resonance was settled (a limit through nearby problems).
            if let (Some(note), Some(c)) = (b.modes.get(i).and_then(|c| c.root.note.as_ref()), check.as_object_mut()) {
                c.insert("note".into(), json!(note.text()));
            }
            let evidence = cf_evidence(m, b.modes.get(i).and_then(|c| c.root.note.as_ref()));
            let rest = json!({
                "evidence": evidence,
                "check": check,
            });
            mode_json(m.n, value, m.method.tag(), rest)
        })
        .collect()
}

fn ends_csv(b: &EndsReport) -> String {
    if let Some(series) = &b.series {
        // The check columns as in the recurrence's table: direct integration's root and its relative agreement.
        let mut o = String::from("n,re,im,converged,method,change_on_doubling,residual,check_re,check_im,agreement,reason\n");
        let num = |x: f64| if x.is_finite() { format!("{x:.3e}") } else { String::new() };
        for (i, m) in series.modes.iter().enumerate() {
            let r = &m.root;
            if r.converged {
                let checked = check_columns(r, b.modes.get(i).map(|c| &c.root));
                o.push_str(&format!(
                    "{},{:.17e},{:.17e},true,{},{},{},{checked},\n",
                    m.n,
                    r.omega.re,
                    r.omega.im,
                    m.method.tag(),
                    num(r.depth_change),
                    num(r.residual)
                ));
            } else {
                o.push_str(&format!("{},,,false,{},,,,,,\"{}\"\n", m.n, m.method.tag(), r.stop.text().replace('"', "'")));
            }
        }
        return o;
    }
    let mut o = String::from("n,re,im,converged,method,change_on_refinement,residual,reason\n");
    for m in &b.modes {
        let r = &m.root;
        if r.converged {
            o.push_str(&format!("{},{:.17e},{:.17e},true,integrate,{:.3e},{:.3e},\n", m.n, r.omega.re, r.omega.im, r.change, r.residual));
        } else {
            o.push_str(&format!("{},,,false,integrate,,,\"{}\"\n", m.n, r.reason.replace('"', "'")));
        }
    }
    o
}

fn ends_text(fname: &str, var: &str, source: &str, b: &EndsReport) -> String {
    let end_text = |e: &End| format!("{} = {} ({}); condition: {}", var, location_text(e.location), e.found, e.condition.words());
    let mut o = String::new();
    // No end lets the wave out (each a regular end with a fall-off, a
    // centre or a mirror): the modes of a cavity, real.
    let closed = b.problem.ends.iter().all(|e| match e.condition {
        Condition::Normalisable | Condition::SlowerFallOff | Condition::Mixed(_) => true,
        Condition::IntoHorizon | Condition::OutOfHorizon | Condition::Outgoing | Condition::Decaying => false,
    });
    match b.spectrum {
        Problem::Quasinormal if closed => {
            o.push_str(&format!("normal modes of {source} ({fname}), time dependence e^(-i*{fname}*t) (no end lets the wave out)\n"))
        }
        Problem::Quasinormal => o.push_str(&format!("quasinormal modes of {source} ({fname}), time dependence e^(-i*{fname}*t)\n")),
        Problem::QuasiBound => o.push_str(&format!("quasi-bound states of {source} ({fname}), time dependence e^(-i*{fname}*t)\n")),
        Problem::Bound | Problem::Periodic => o.push_str(&format!("eigenvalues {fname} of {source} (a real eigenvalue problem between the ends)\n")),
    }
    o.push_str(&format!("  left end:  {}\n", end_text(&b.problem.ends[0])));
    o.push_str(&format!("  right end: {}\n", end_text(&b.problem.ends[1])));
    for n in ends_notes(b) {
        o.push_str(&format!("  note: {n}\n"));
    }
    if let Some(series) = &b.series {
        o.push_str(&format!("  method: {SERIES_METHOD}\n"));
        o.push_str(&format!("  series: {}\n", series.description));
        o.push_str(&format!("  {}\n\n", b.check_note));
        o.push_str(&table_head(fname));
        o.push_str(&series_rows(series, b));
        return o;
    }
    o.push_str(&format!("  method: {ENDS_METHOD}\n"));
    o.push_str(&format!("  {}\n\n", b.check_note));
    o.push_str(&table_head(fname));
    for (i, m) in b.modes.iter().enumerate() {
        let r = &m.root;
        if r.converged {
            match &r.note {
                Some(Settled::Limit(note)) => {
                    o.push_str(&limit_row(m.n, r.omega, r.change));
                    o.push_str(&format!("     note: {note}\n"));
                }
                Some(Settled::AtResonance(note) | Settled::DoubleRoot(note)) => {
                    o.push_str(&integrate_row(m.n, r.omega, r.change, r.residual));
                    o.push_str(&format!("     note: {note}\n"));
                }
                None => o.push_str(&integrate_row(m.n, r.omega, r.change, r.residual)),
            }
            if let Some(c) = b.checks.get(i).and_then(|c| c.as_ref()) {
                match c.omega {
                    Some(w) => o.push_str(&format!("     check: {} {}, agreement {:.1e}\n", c.method.words(), fmt_complex(w.re, w.im), c.agreement)),
                    None => o.push_str(&format!("     check: none: {}\n", c.reason)),
                }
            }
        } else {
            o.push_str(&format!("  {:<2} NOT CONVERGED: {} (seed from {})\n", m.n, r.reason, m.seed.from));
        }
    }
    o
}

/// The row of a mode taken as the limit of direct integration's modes of
/// nearby problems: its value and the limit's estimated error.
fn limit_row(n: u32, w: Complex64, error: f64) -> String {
    format!("  {:<2} {:<44} [integrate] limit of nearby problems, estimated error {error:.1e}\n", n, fmt_complex(w.re, w.im))
}

/// The row of a mode found by direct integration: its value, the change
/// between the standard and refined integrations, and the residual.
fn integrate_row(n: u32, w: Complex64, change: f64, residual: f64) -> String {
    format!("  {:<2} {:<44} [integrate] change on refinement {change:.1e}, residual {residual:.1e}\n", n, fmt_complex(w.re, w.im))
}

/// The rows of the numeric series' modes, each with its check by direct integration.
fn series_rows(series: &SeriesReport, b: &EndsReport) -> String {
    let mut o = String::new();
    for (i, m) in series.modes.iter().enumerate() {
        let r = &m.root;
        if !r.converged {
            let seed = if m.seed.0.is_nan() { String::new() } else { format!(" (seed {} from {})", fmt_complex(m.seed.0.re, m.seed.0.im), m.seed.1) };
            o.push_str(&format!("  {:<2} NOT CONVERGED: {}{seed}\n", m.n, r.stop.text()));
            continue;
        }
        if m.method == ModeMethod::Integrate {
            // Found by direct integration where the continued fraction did not settle.
            match b.modes.get(i).and_then(|c| c.root.note.as_ref()) {
                Some(Settled::Limit(note)) => {
                    // A limit through nearby problems (its error estimate in `depth_change`).
                    o.push_str(&limit_row(m.n, r.omega, r.depth_change));
                    o.push_str(&format!("     note: {note}\n     check: none: this value is direct integration's alone\n"));
                }
                _ => {
                    o.push_str(&integrate_row(m.n, r.omega, r.depth_change, r.residual));
                    o.push_str(
                        "     check: none: the continued fraction did not settle here, and this value is direct integration's alone (see the note)\n",
                    );
                }
            }
            continue;
        }
        o.push_str(&format!(
            "  {:<2} {:<44} [{}] depth {}, change on doubling {:.1e}, residual {:.1e}\n",
            m.n,
            fmt_complex(r.omega.re, r.omega.im),
            m.method.tag(),
            r.depth,
            r.depth_change,
            r.residual
        ));
        if r.double {
            o.push_str(&format!("     note: {DOUBLE_CF}\n"));
        }
        match b.modes.get(i).map(|c| &c.root) {
            Some(c) if c.converged => {
                o.push_str(&format!(
                    "     check: direct integration {}, agreement {:.1e}\n",
                    fmt_complex(c.omega.re, c.omega.im),
                    (c.omega - r.omega).norm() / r.omega.norm()
                ));
                if let Some(note) = &c.note {
                    o.push_str(&format!("     note: {}\n", note.text()));
                }
            }
            Some(c) => o.push_str(&format!("     check: direct integration did not converge: {}\n", c.reason)),
            None => {}
        }
    }
    o
}

fn domain_text(b: &BoundReport) -> String {
    use crate::solve::collocation::Domain;
    match b.domain {
        Domain::Finite(x, y) => format!("({x}, {y})"),
        Domain::HalfLine(x) => format!("({x}, ∞)"),
        Domain::Line => "(−∞, ∞)".to_string(),
    }
}

fn bound_agreement(r: &crate::solve::integrate::IntRoot, s: &crate::solve::collocation::BoundState) -> f64 {
    (r.omega - s.value).norm() / s.value.norm().max(f64::MIN_POSITIVE)
}

fn bound_elsewhere(r: &crate::solve::integrate::IntRoot, v: &Complex64) -> String {
    format!(
        "the refinement converged on {}, nearer the neighbouring collocation eigenvalue {} than its seed: another state",
        fmt_complex(r.omega.re, r.omega.im),
        fmt_complex(v.re, v.im)
    )
}

fn bound_json(fname: &str, b: &BoundReport) -> Value {
    let dom = domain_text(b);
    let ms: Vec<Value> = b
        .states
        .iter()
        .zip(&b.checks)
        .map(|(s, c)| {
            let check = match c {
                Some(BoundCheck::Agrees(r)) => json!({
                    "method": "shooting",
                    "omega": pair(r.omega),
                    "agreement": bound_agreement(r, s),
                    "residual": r.residual,
                    "change_on_refinement": r.change,
                }),
                Some(BoundCheck::Unconverged(r)) => json!({"method": "shooting", "omega": Value::Null, "agreement": Value::Null, "reason": r.reason}),
                Some(BoundCheck::Elsewhere(r, v)) => json!({
                    "method": "shooting",
                    "omega": Value::Null,
                    "agreement": Value::Null,
                    "reason": bound_elsewhere(r, v),
                    "landed": pair(r.omega),
                }),
                Some(BoundCheck::Unavailable(_)) | None => Value::Null,
            };
            let no_check = match c {
                Some(BoundCheck::Unavailable(why)) => Value::String(format!("no second method for this end type: {why}")),
                _ => Value::Null,
            };
            json!({
                "n": s.n,
                "omega": if s.converged { pair(s.value) } else { Value::Null },
                "converged": s.converged,
                "reason": if s.converged { Value::Null } else { Value::String(s.reason.clone().unwrap_or_default()) },
                "method": "collocation",
                "evidence": {"points": s.points, "change_on_doubling": s.change, "domain": dom},
                "check": check,
                "no_check": no_check,
            })
        })
        .collect();
    let mut v = json!({"frequency": fname, "boundary": "bound", "domain": dom, "continuum": finite_or_null(b.threshold), "method": "Chebyshev collocation (Boyd 2001)", "modes": ms});
    if !b.notes.is_empty() {
        v["notes"] = json!(b.notes);
    }
    v
}

fn bound_csv(b: &BoundReport) -> String {
    let mut o = String::from("n,re,im,converged,method,points,change_on_doubling,check_re,check_im,agreement,reason\n");
    for (s, c) in b.states.iter().zip(&b.checks) {
        let check = match c {
            Some(BoundCheck::Agrees(r)) => format!("{:.17e},{:.17e},{:.3e}", r.omega.re, r.omega.im, bound_agreement(r, s)),
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

fn bound_text(fname: &str, source: &str, b: &BoundReport) -> String {
    let mut o = format!("bound states of {source} in {fname} on {}: Chebyshev collocation with ψ = 0 at both ends (Boyd 2001)\n", domain_text(b));
    if b.threshold.is_finite() {
        o.push_str(&format!("  continuum above {fname} = {}\n", b.threshold));
    }
    for n in &b.notes {
        o.push_str(&format!("  note: {n}\n"));
    }
    o.push_str("  check: shooting from both ends (Frobenius / asymptotic series, Taylor continuation), Muller seeded by each eigenvalue\n");
    o.push('\n');
    for (s, c) in b.states.iter().zip(&b.checks) {
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
                o.push_str(&format!("     check: shooting {}, agreement {:.1e}\n", fmt_complex(r.omega.re, r.omega.im), bound_agreement(r, s)))
            }
            Some(BoundCheck::Unconverged(r)) => o.push_str(&format!("     check: shooting did not converge: {}\n", r.reason)),
            Some(BoundCheck::Elsewhere(r, v)) => o.push_str(&format!("     check: NOT A CHECK: {}\n", bound_elsewhere(r, v))),
            Some(BoundCheck::Unavailable(why)) => o.push_str(&format!("     check: no second method for this end type ({why})\n")),
            None => {}
        }
    }
    o
}

/// The value an estimate row reports.
fn estimate_value(b: &EstimateReport, n: u32, e: &crate::solve::wkb::BarrierEstimate) -> Complex64 {
    match (&b.limit, b.wkb) {
        (_, true) => e.series.omega(),
        (Some((_, lim, l)), false) => lim.omega(*l, n),
        (None, false) => e.eikonal,
    }
}

fn estimates_name(b: &EstimateReport) -> String {
    match (b.wkb, &b.limit) {
        (true, _) => format!("WKB to order {} about the barrier top (orders 1–3: Schutz & Will 1985, Iyer & Will 1987), Padé-resummed", b.order),
        (false, Some((p, ..))) => format!("eikonal limit Ω_c({p} + ½) − i(n + ½)λ from the part of V growing like {p}²"),
        (false, None) => "eikonal estimate √V₀ − i(n + ½)√(−V₀''/(2V₀)) (Schutz & Will 1985)".to_string(),
    }
}

fn estimates_method(b: &EstimateReport) -> &'static str {
    if b.wkb {
        "wkb"
    } else {
        "eikonal"
    }
}

fn estimates_json(fname: &str, b: &EstimateReport) -> Value {
    let method = estimates_method(b);
    let note = "an analytic approximation from the peak of the potential, not an iterated eigenvalue";
    let ms: Vec<Value> = b
        .rows
        .iter()
        .map(|(n, e)| {
            let Some(e) = e else {
                return json!({"n": n, "omega": Value::Null, "converged": false, "reason": "no barrier estimate",
                    "method": method, "wrong_half_plane": false, "evidence": Value::Null, "check": Value::Null});
            };
            let w = estimate_value(b, *n, e);
            let s = &e.series;
            let evidence = if b.wkb {
                let (p, ps) = s.pade_at(s.order());
                let orders: Vec<Value> = (1..=s.order())
                    .map(|k| json!({"order": k, "omega": pair(s.partial[k - 1]), "spread": opt_num(s.spread(k)), "pade": opt_pair(s.pade_at(k).0)}))
                    .collect();
                json!({
                    "note": note,
                    "pade": {"approximant": format!("[{}/{}]", s.order().div_ceil(2), s.order() / 2), "omega": opt_pair(p), "spread": opt_num(ps)},
                    "spread": opt_num(s.spread(s.order())),
                    "optimal_order": s.optimal().map(|o| json!(o.0)).unwrap_or(Value::Null),
                    "orders": orders,
                })
            } else {
                json!({"note": note})
            };
            json!({"n": n, "omega": pair(w), "converged": true, "reason": Value::Null, "method": method,
                "wrong_half_plane": !in_lower_half_plane(w), "evidence": evidence, "check": Value::Null})
        })
        .collect();
    let lim = match &b.limit {
        Some((p, e, _)) => json!({"param": p, "omega_c": e.omega_c, "lyapunov": e.lyapunov, "peak": e.peak}),
        None => Value::Null,
    };
    json!({"frequency": fname, "boundary": "qnm", "method": estimates_name(b), "order": if b.wkb { json!(b.order) } else { Value::Null },
        "eikonal_limit": lim, "modes": ms})
}

fn estimates_csv(b: &EstimateReport) -> String {
    let method = estimates_method(b);
    let mut o = String::from("n,re,im,converged,method,wrong_half_plane,spread,pade_re,pade_im\n");
    for (n, e) in &b.rows {
        match e {
            Some(e) => {
                let w = estimate_value(b, *n, e);
                let (p, _) = e.series.pade_at(e.series.order());
                let (sp, p) = if b.wkb { (e.series.spread(b.order), p) } else { (None, None) };
                let f = |x: Option<f64>| x.filter(|x| x.is_finite()).map(|x| format!("{x:.17e}")).unwrap_or_default();
                o.push_str(&format!(
                    "{n},{:.17e},{:.17e},true,{method},{},{},{},{}\n",
                    w.re,
                    w.im,
                    !in_lower_half_plane(w),
                    f(sp),
                    f(p.map(|p| p.re)),
                    f(p.map(|p| p.im))
                ));
            }
            None => o.push_str(&format!("{n},,,false,{method},false,,,\n")),
        }
    }
    o
}

fn estimates_text(fname: &str, source: &str, b: &EstimateReport) -> String {
    let mut o =
        format!("estimates of the quasinormal modes of {source} ({fname}): {}\n  approximations, not converged eigenvalues\n", estimates_name(b));
    if let Some((p, e, _)) = &b.limit {
        o.push_str(&format!("  Ω_c = {}, λ = {} (maximum of lim V/{p}² at {})\n", fmt_complex(e.omega_c, 0.0), fmt_complex(e.lyapunov, 0.0), e.peak));
    }
    o.push('\n');
    for (n, e) in &b.rows {
        let Some(e) = e else {
            o.push_str(&format!("  {n:<2} no estimate (no barrier peak found)\n"));
            continue;
        };
        let w = estimate_value(b, *n, e);
        let mark = if in_lower_half_plane(w) { "" } else { "  [upper half-plane: not a decaying mode, not used as a seed]" };
        o.push_str(&format!("  {n:<2} {}{mark}\n", fmt_complex(w.re, w.im)));
        if b.wkb {
            let s = &e.series;
            if let Some(sp) = s.spread(s.order()) {
                o.push_str(&format!("     change from order {}: {sp:.2e}\n", s.order() - 1));
            }
            if let (Some(p), ps) = s.pade_at(s.order()) {
                let m = if in_lower_half_plane(p) { "" } else { "  [upper half-plane]" };
                let ps = ps.map(|x| format!(" (change from order {}: {x:.2e})", s.order() - 1)).unwrap_or_default();
                o.push_str(&format!("     Padé [{}/{}]: {}{ps}{m}\n", s.order().div_ceil(2), s.order() / 2, fmt_complex(p.re, p.im)));
            }
            if let Some((k, wk, sp)) = s.optimal() {
                o.push_str(&format!("     least change between orders at order {k}: {} ({sp:.2e})\n", fmt_complex(wk.re, wk.im)));
            }
        }
    }
    o
}

/// The method of periodic problems, in words.
const PERIODIC_METHOD: &str = "the Floquet-Laurent series y = sum c_k zeta^(k+nu) truncated to |k| <= K and 3K/2 (a value kept only when both agree); check: the monodromy over one period, integrated around zeta = 0, its root polished from each value";

/// A periodic value's family in words: "even, period T" etc.
fn periodic_family(m: &PeriodicMode, period: Option<f64>) -> String {
    let span = match (m.floquet, period) {
        (Floquet::Periodic, Some(t)) => format!("period {}", pi_multiple(t)),
        (Floquet::Antiperiodic, Some(t)) => format!("period {} (sign change over {})", pi_multiple(2.0 * t), pi_multiple(t)),
        (Floquet::Periodic, None) => "single-valued".to_string(),
        (Floquet::Antiperiodic, None) => "sign change per turn".to_string(),
    };
    match (m.parity, m.index) {
        (Some(p), Some(i)) => format!("{} #{i}, {span}", p.tag()),
        _ => span,
    }
}

fn periodic_check_json(m: &PeriodicMode) -> Value {
    let c = &m.check;
    json!({
        "method": "monodromy",
        "omega": if c.converged { pair(c.omega) } else { Value::Null },
        "agreement": finite_or_null(m.agreement),
        "residual": finite_or_null(c.residual),
        "change_on_refinement": finite_or_null(c.change),
        "reason": if c.converged { Value::Null } else { Value::String(c.reason.clone()) },
    })
}

fn periodic_json(fname: &str, b: &PeriodicReport) -> Value {
    let s = &b.solution;
    let mut ms: Vec<(u32, Value)> = s
        .modes
        .iter()
        .map(|m| {
            let rest = json!({
                "family": {
                    "multiplier": m.floquet.multiplier(),
                    "parity": m.parity.map(|p| p.tag()),
                    "index": m.index,
                },
                "evidence": {"change_on_truncation": finite_or_null(m.change), "truncation": [s.truncation.0, s.truncation.1]},
                "check": periodic_check_json(m),
            });
            (m.n, mode_json(m.n, Ok(m.value), "truncation", rest))
        })
        .collect();
    ms.extend(s.missing.iter().map(|x| {
        let rest = json!({"family": Value::Null, "evidence": Value::Null, "check": Value::Null});
        (x.n, mode_json(x.n, Err(x.reason.clone()), "truncation", rest))
    }));
    ms.sort_by_key(|(n, _)| *n);
    json!({
        "frequency": fname,
        "boundary": "periodic",
        "variable": b.written_var,
        "period": opt_num(b.period),
        "map": b.map,
        "symmetric": s.symmetric,
        "method": PERIODIC_METHOD,
        "modes": ms.into_iter().map(|(_, v)| v).collect::<Vec<_>>(),
    })
}

fn periodic_csv(b: &PeriodicReport) -> String {
    let mut rows: Vec<(u32, String)> = Vec::new();
    for m in &b.solution.modes {
        let parity = m.parity.map_or("", |p| p.tag());
        let index = m.index.map(|i| i.to_string()).unwrap_or_default();
        let (cre, cim) =
            if m.check.converged { (format!("{:.17e}", m.check.omega.re), format!("{:.17e}", m.check.omega.im)) } else { Default::default() };
        let agreement = if m.agreement.is_finite() { format!("{:.3e}", m.agreement) } else { String::new() };
        let reason = if m.check.converged { String::new() } else { format!("\"check: {}\"", m.check.reason.replace('"', "'")) };
        rows.push((
            m.n,
            format!(
                "{},{:.17e},{:.17e},true,truncation,{},{parity},{index},{:.3e},{cre},{cim},{agreement},{reason}\n",
                m.n,
                m.value.re,
                m.value.im,
                m.floquet.multiplier(),
                m.change
            ),
        ));
    }
    for x in &b.solution.missing {
        rows.push((x.n, format!("{},,,false,truncation,,,,,,,,\"{}\"\n", x.n, x.reason.replace('"', "'"))));
    }
    rows.sort_by_key(|(n, _)| *n);
    let mut o = String::from("n,re,im,converged,method,multiplier,parity,index,change_on_truncation,check_re,check_im,agreement,reason\n");
    o.extend(rows.into_iter().map(|(_, r)| r));
    o
}

fn periodic_text(fname: &str, source: &str, b: &PeriodicReport) -> String {
    let s = &b.solution;
    let mut o = format!("characteristic values {fname} of {source}: coefficients periodic in {}", b.written_var);
    match (b.period, &b.map) {
        (Some(t), Some(map)) => o.push_str(&format!(" with period T = {} ({map})\n", pi_multiple(t))),
        _ => o.push_str(" (the equation in its own variable: solutions single-valued or changing sign once around 0)\n"),
    }
    o.push_str(&format!("  solutions with y({x} + T) = y({x}) and y({x} + T) = -y({x})", x = b.written_var));
    if s.symmetric {
        o.push_str(&format!(
            "; the equation is symmetric under {x} -> -{x}: even solutions numbered from #0, odd from #1, each ascending (for Mathieu's equation with real q: a_n and b_n, DLMF 28.2(vi))",
            x = b.written_var
        ));
    }
    o.push_str(&format!("\n  method: {PERIODIC_METHOD} (K = {}, {})\n\n", s.truncation.0, s.truncation.1));
    o.push_str(&format!("  n  {fname:<26} solution\n"));
    let mut rows: Vec<(u32, String)> = Vec::new();
    for m in &s.modes {
        let mut r = format!(
            "  {:<2} {:<26} {}, truncation change {:.1e}\n",
            m.n,
            fmt_complex(m.value.re, m.value.im),
            periodic_family(m, b.period),
            m.change
        );
        if m.check.converged {
            r.push_str(&format!("     check: monodromy {}, agreement {:.1e}\n", fmt_complex(m.check.omega.re, m.check.omega.im), m.agreement));
        } else {
            r.push_str(&format!("     check: the monodromy root did not converge (UNCONFIRMED): {}\n", m.check.reason));
        }
        rows.push((m.n, r));
    }
    for x in &s.missing {
        rows.push((x.n, format!("  {:<2} NOT CONVERGED: {}\n", x.n, x.reason)));
    }
    rows.sort_by_key(|(n, _)| *n);
    o.extend(rows.into_iter().map(|(_, r)| r));
    o
}
