//! The report of `spectrum --method wkb` and `--method eikonal`: barrier-top
//! estimates, not iterated eigenvalues.
//!
//! JSON (stable): `frequency`, `boundary` ("qnm"), `method` (words), `order`
//! (the WKB order, for "wkb"), `eikonal_limit` (null, or with
//! `--eikonal-param`: {`param`, `omega_c`, `lyapunov`, `peak`}) and `modes`,
//! each {`n`, `omega` [re, im] or null, `converged` (an estimate exists),
//! `reason`, `method` ("wkb" or "eikonal"), `wrong_half_plane` (Im ω ≥ 0:
//! not a decaying mode, never used as a seed), `evidence`, `check` (null)}.
//! For "wkb", `evidence` holds `note`, `pade` ({`approximant` "[p/q]",
//! `omega`, `spread`}: the Padé value of ω²(ε) at ε = 1 and its change from
//! the previous order), `spread` (|ω_N − ω_{N−1}|, the error estimate),
//! `optimal_order` (the order of least spread) and `orders`, every order's
//! {`order`, `omega`, `spread`, `pade`}.

use super::spectrum::SpecFormat;
use super::values::fmt_complex;
use super::Failure;
use crate::error::{Error, ErrorKind};
use crate::solve::wkb::{in_lower_half_plane, BarrierEstimate};
use num_complex::Complex64;
use serde_json::{json, Value};

/// What the report was asked for.
pub(crate) struct WkbRequest<'a> {
    /// `--method wkb` (else eikonal).
    pub wkb: bool,
    pub format: SpecFormat,
    pub order: usize,
    pub overtones: (u32, u32),
    /// With `--eikonal-param`: its name, field index, and the equation with every other parameter substituted.
    pub eikonal: Option<(&'a str, usize, crate::ode::Reduction)>,
}

/// For `--method eikonal --eikonal-param NAME`: the equation with every
/// parameter but NAME and the frequency substituted (NAME stays symbolic so
/// that the part of V growing like NAME² can be taken).
pub(crate) fn eikonal_reduction<'a>(
    eikonal: bool,
    param: Option<&'a str>,
    red: &crate::ode::Reduction,
    point: &[crate::algebra::GRat],
    freq: usize,
) -> Result<Option<(&'a str, usize, crate::ode::Reduction)>, Failure> {
    let Some(name) = param else { return Ok(None) };
    if !eikonal {
        return Err(Error::new(ErrorKind::Usage, "--eikonal-param belongs with --method eikonal").in_option("--eikonal-param").into());
    }
    let Some(i) = red.field.names().iter().skip(1).position(|n| n == name).map(|i| i + 1).filter(|i| *i != freq) else {
        return Err(Error::new(ErrorKind::Usage, format!("'{name}' is not a parameter of the equation other than the frequency"))
            .in_option("--eikonal-param")
            .into());
    };
    Ok(Some((name, i, crate::solve::spectrum::substitute_keeping(red, point, &[freq, i])?)))
}

fn pair(w: Complex64) -> Value {
    json!([w.re, w.im])
}

fn opt(w: Option<Complex64>) -> Value {
    w.map(pair).unwrap_or(Value::Null)
}

fn num(x: Option<f64>) -> Value {
    x.filter(|x| x.is_finite()).map(|x| json!(x)).unwrap_or(Value::Null)
}

/// Renders the estimates of every requested overtone.
pub(crate) fn render(
    q: &WkbRequest,
    fname: &str,
    src: &super::Source,
    opts: &crate::solve::spectrum::SpectrumOptions,
    horizon: f64,
    est: &dyn Fn(u32) -> Option<BarrierEstimate>,
) -> Result<String, Failure> {
    // The eikonal limit in a named large parameter.
    let limit = match &q.eikonal {
        Some((name, i, ered)) => {
            let (v, h) = crate::solve::spectrum::barrier_potential(ered, opts)?;
            let e = crate::solve::wkb::try_eikonal_limit(&ered.field, &v, &h, &opts.values, Some(opts.freq), (horizon, f64::INFINITY), *i)
                .map_err(|e| Failure::from(e.in_option("--eikonal-param")))?;
            let l = opts.values[*i].to_f64().0;
            Some((*name, e, l))
        }
        None => None,
    };
    let rows: Vec<(u32, Option<BarrierEstimate>)> = (q.overtones.0..=q.overtones.1).map(|n| (n, est(n))).collect();
    let value = |n: u32, b: &BarrierEstimate| -> Complex64 {
        match (&limit, q.wkb) {
            (_, true) => b.series.omega(),
            (Some((_, e, l)), false) => e.omega(*l, n),
            (None, false) => b.eikonal,
        }
    };
    let name = match (q.wkb, &limit) {
        (true, _) => format!("WKB to order {} about the barrier top (orders 1–3: Schutz & Will 1985, Iyer & Will 1987), Padé-resummed", q.order),
        (false, Some((p, ..))) => format!("eikonal limit Ω_c({p} + ½) − i(n + ½)λ from the part of V growing like {p}²"),
        (false, None) => "eikonal estimate √V₀ − i(n + ½)√(−V₀''/(2V₀)) (Schutz & Will 1985)".to_string(),
    };
    let method = if q.wkb { "wkb" } else { "eikonal" };
    let out = match q.format {
        SpecFormat::Json => {
            let ms: Vec<Value> = rows
                .iter()
                .map(|(n, b)| {
                    let Some(b) = b else {
                        return json!({"n": n, "omega": Value::Null, "converged": false, "reason": "no barrier estimate",
                            "method": method, "wrong_half_plane": false, "evidence": Value::Null, "check": Value::Null});
                    };
                    let w = value(*n, b);
                    let s = &b.series;
                    let evidence = if q.wkb {
                        let (p, ps) = s.pade_at(s.order());
                        let orders: Vec<Value> = (1..=s.order())
                            .map(|k| json!({"order": k, "omega": pair(s.partial[k - 1]), "spread": num(s.spread(k)), "pade": opt(s.pade_at(k).0)}))
                            .collect();
                        json!({
                            "note": "an analytic approximation from the peak of the potential, not an iterated eigenvalue",
                            "pade": {"approximant": format!("[{}/{}]", s.order().div_ceil(2), s.order() / 2), "omega": opt(p), "spread": num(ps)},
                            "spread": num(s.spread(s.order())),
                            "optimal_order": s.optimal().map(|o| json!(o.0)).unwrap_or(Value::Null),
                            "orders": orders,
                        })
                    } else {
                        json!({"note": "an analytic approximation from the peak of the potential, not an iterated eigenvalue"})
                    };
                    json!({"n": n, "omega": pair(w), "converged": true, "reason": Value::Null, "method": method,
                        "wrong_half_plane": !in_lower_half_plane(w), "evidence": evidence, "check": Value::Null})
                })
                .collect();
            let lim = match &limit {
                Some((p, e, _)) => json!({"param": p, "omega_c": e.omega_c, "lyapunov": e.lyapunov, "peak": e.peak}),
                None => Value::Null,
            };
            let doc = json!({"frequency": fname, "boundary": "qnm", "method": name, "order": if q.wkb { json!(q.order) } else { Value::Null },
                "eikonal_limit": lim, "modes": ms});
            format!("{}\n", serde_json::to_string_pretty(&doc).unwrap_or_default())
        }
        SpecFormat::Csv => {
            let mut o = String::from("n,re,im,converged,method,wrong_half_plane,spread,pade_re,pade_im\n");
            for (n, b) in &rows {
                match b {
                    Some(b) => {
                        let w = value(*n, b);
                        let (p, _) = b.series.pade_at(b.series.order());
                        let (sp, p) = if q.wkb { (b.series.spread(q.order), p) } else { (None, None) };
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
        SpecFormat::Text => {
            let mut o =
                format!("estimates of the quasinormal modes of {} ({fname}): {name}\n  approximations, not converged eigenvalues\n", src.name);
            if let Some((p, e, _)) = &limit {
                o.push_str(&format!(
                    "  Ω_c = {}, λ = {} (maximum of lim V/{p}² at {})\n",
                    fmt_complex(e.omega_c, 0.0),
                    fmt_complex(e.lyapunov, 0.0),
                    e.peak
                ));
            }
            o.push('\n');
            for (n, b) in &rows {
                let Some(b) = b else {
                    o.push_str(&format!("  {n:<2} no estimate (no barrier peak found)\n"));
                    continue;
                };
                let w = value(*n, b);
                let mark = if in_lower_half_plane(w) { "" } else { "  [upper half-plane: not a decaying mode, not used as a seed]" };
                o.push_str(&format!("  {n:<2} {}{mark}\n", fmt_complex(w.re, w.im)));
                if q.wkb {
                    let s = &b.series;
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
    };
    Ok(out)
}
