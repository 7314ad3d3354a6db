//! Reports of a [`Reduction`](crate::ode::Reduction) in text, LaTeX and JSON.
//!
//! JSON schema of `reduce --format json` (stable; keys in this order):
//! `variable`, `unknown`, `parameters`, `inferred_parameters`,
//! `change_of_variable` (null or {`old`, `new`, `map`, `schwarzian`}),
//! `standard_form` {`p`, `q`}, `normal_form` {`Q`, `numerator`,
//! `denominator`, `denominator_factors` [{`factor`, `power`}],
//! `principal_parts` [{`at`, `factor`, `order`, `coefficients` [{`power`,
//! `coefficient`}]}]}, `prefactor` {`text`, `powers` [{`base`,
//! `exponent`}], `exponential`, `unevaluated` [{`factor`, `power`,
//! `numerator`}]}, `schrodinger` (null or {`dxdz`, `frequency`, `W`, `V`,
//! `V_depends_on_frequency`}), and last, only where transcendental
//! coefficients were made rational, `transcendental_map` {`written_in`,
//! `solved_in`, `relation`: the map as text, e.g. "x = cos(theta)"}. Every
//! expression is text in the input
//! language, so it can be pasted back into a file, and is followed by its
//! LaTeX (math mode) under the same name with `_latex` appended (`Q`,
//! `Q_latex`; null beside null), the convention of every JSON document
//! (`emit::latex::with_latex`).

use crate::algebra::print::{den_text, poly_text, ratfunc_text, Style};
use crate::algebra::{Int, Poly, RatFunc};
use crate::ode::Reduction;
use serde_json::{json, Value};

fn names(r: &Reduction) -> Vec<String> {
    r.field.names().to_vec()
}

fn rt(r: &Reduction, x: &RatFunc, style: Style) -> String {
    ratfunc_text(x, &names(r), style)
}

fn pt(r: &Reduction, x: &Poly, style: Style) -> String {
    poly_text(x, &Int::ONE, &names(r), style)
}

fn principal_rows(r: &Reduction, style: Style) -> Vec<(String, Vec<(i64, String)>)> {
    r.normal
        .principal
        .iter()
        .map(|pp| {
            let at = rt(r, &pp.point, style);
            let rows = pp.coeffs.iter().enumerate().map(|(j, c)| (-(pp.order as i64) + j as i64, rt(r, c, style))).collect();
            (at, rows)
        })
        .collect()
}

/// The derivation as plain text.
pub fn reduction_text(r: &Reduction, source_name: &str) -> String {
    let s = Style::Text;
    let mut o = String::new();
    let ode = &r.ode;
    o.push_str(&format!("equation      {source_name}\n"));
    o.push_str(&format!("unknown       {}({})\n", ode.unknown, ode.var));
    o.push_str(&format!("parameters    {}\n", if ode.params.is_empty() { "(none)".to_string() } else { ode.params.join(", ") }));
    if !ode.inferred.is_empty() {
        o.push_str(&format!("inferred      {} (undeclared names taken as parameters)\n", ode.inferred.join(", ")));
    }
    if let Some(c) = &r.change {
        o.push_str(&format!("\nchange of variable   {} = {}\n", c.old_var, rt(r, &c.g, s)));
        o.push_str(&format!("  Schwarzian {{{}, {}}} = {}\n", c.old_var, c.new_var, rt(r, &c.schwarzian, s)));
    }
    let u = &ode.unknown;
    let v = &r.var;
    o.push_str(&format!("\nstandard form   {u}'' + p*{u}' + q*{u} = 0   (derivatives in {v})\n"));
    o.push_str(&format!("  p = {}\n", rt(r, &r.p, s)));
    o.push_str(&format!("  q = {}\n", rt(r, &r.q, s)));
    o.push_str(&format!("\nnormal form   ψ'' + Q*ψ = 0,   {u} = P*ψ\n"));
    o.push_str(&format!("  Q = N/D\n  N = {}\n", poly_text(r.normal.q.num(), r.normal.q.scale(), &names(r), s)));
    o.push_str(&format!("  D = {}\n", den_text(&r.normal.q, &names(r), s)));
    let rows = principal_rows(r, s);
    if !rows.is_empty() {
        o.push_str("\nprincipal parts of Q\n");
        for (at, cs) in rows {
            o.push_str(&format!("  at {v} = {at}:\n"));
            for (pw, c) in cs {
                o.push_str(&format!("    {}^({pw}):  {c}\n", crate::algebra::print::shifted(v, &at, s)));
            }
        }
    }
    o.push_str(&format!(
        "\nprefactor   P = exp(-1/2*integral(p)) = {}\n",
        crate::ode::prefactor_text(&r.var, r.field.names(), &r.normal.prefactor, s)
    ));
    if let Some(sch) = &r.schrodinger {
        o.push_str(&format!("\nSchrödinger form   d²φ/dx² + (ω² − V)*φ = 0,   dx/d{v} = {}\n", rt(r, &sch.dxdz, s)));
        match &sch.frequency {
            Some(f) => o.push_str(&format!("  frequency {f}:  V = {f}^2 - W\n")),
            None => o.push_str("  no frequency parameter: V = -W\n"),
        }
        o.push_str(&format!("  W = {}\n  V = {}\n", rt(r, &sch.w, s), rt(r, &sch.v, s)));
        if sch.v_depends_on_frequency {
            o.push_str("  note: V depends on the frequency (an energy-dependent potential)\n");
        }
    }
    o
}

/// The derivation as a LaTeX fragment (an `align*` environment, amsmath),
/// long right-hand sides broken over rows to fit the page (the one layout of `emit::latex`).
pub fn reduction_latex(r: &Reduction) -> String {
    let s = Style::Latex;
    let u = crate::algebra::print::latex_name(&r.ode.unknown);
    let v = crate::algebra::print::latex_name(&r.var);
    let mut doc = super::latex::Align::new();
    if let Some(c) = &r.change {
        doc.eq(crate::algebra::print::latex_name(&c.old_var), rt(r, &c.g, s));
    }
    doc.math(format!("{u}'' + p\\,{u}' + q\\,{u} = 0, \\qquad ' = \\frac{{d}}{{d{v}}}"));
    doc.eq("p", rt(r, &r.p, s));
    doc.eq("q", rt(r, &r.q, s));
    doc.math(format!("\\psi'' + Q\\,\\psi = 0, \\qquad {u} = P\\,\\psi"));
    doc.eq("P", crate::ode::prefactor_text(&r.var, r.field.names(), &r.normal.prefactor, s));
    doc.eq("Q", rt(r, &r.normal.q, s));
    for (at, cs) in principal_rows(r, s) {
        let terms: Vec<String> =
            cs.iter().map(|(pw, c)| format!("\\left({c}\\right){}^{{{pw}}}", crate::algebra::print::shifted(&v, &at, s))).collect();
        doc.rel("Q", "=", format!("{} + O(1)", terms.join(" + ")), &format!(" \\quad ({v} \\to {at})"));
    }
    if let Some(sch) = &r.schrodinger {
        doc.eq(format!("\\frac{{dx}}{{d{v}}}"), rt(r, &sch.dxdz, s));
        doc.eq("V", rt(r, &sch.v, s));
    }
    doc.finish()
}

/// `Q` at a point as a LaTeX fragment: the point (exact values), then the
/// value in double precision.
pub fn value_latex(point: &[(String, crate::algebra::GRat)], re: f64, im: f64) -> String {
    let mut doc = super::latex::Align::new();
    let mut items: Vec<String> = point
        .iter()
        .map(|(n, v)| format!("{} = {}", crate::algebra::print::latex_name(n), crate::algebra::print::grat_text(v, Style::Latex)))
        .collect();
    if let Some(first) = items.first_mut() {
        *first = format!("\\text{{at }} {first}");
    }
    doc.rel("Q", "\\approx", super::numbers::latex_complex(re, im), "");
    doc.list(&items);
    doc.finish()
}

/// A recurrence as a LaTeX fragment: the ansatz, the series variable, the
/// choices, the recurrence and each coefficient (long ones broken over rows).
pub fn recurrence_latex(rec: &crate::series::Recurrence) -> String {
    let n = crate::algebra::print::latex_name(rec.index());
    let f = crate::algebra::print::latex_name(&rec.function);
    let mut doc = super::latex::Align::new();
    let sum = format!("\\sum_{{{n}=0}}^{{\\infty}} a_{{{n}}} u^{{{n}}}");
    match super::latex::expr_latex(&rec.prefactor) {
        Some(p) if p == "1" => doc.eq(f, sum),
        Some(p) => doc.eq(f, format!("{p} {sum}")),
        None => doc.prose(&format!("{} = {} * Σ a_n u^n", rec.function, rec.prefactor)),
    }
    match super::latex::equation_latex(&rec.series) {
        Some((l, r)) => doc.eq(l, r),
        None => doc.prose(&rec.series),
    }
    for c in &rec.choices {
        doc.prose(&format!("choice: {c}"));
    }
    doc.group();
    let k = rec.coeffs.len();
    doc.math(format!("\\sum_{{j=0}}^{{{}}} c_{{j}}({n})\\, a_{{{n}+1-j}} = 0, \\qquad {n} \\ge 0,\\ a_{{{n}}} = 0 \\text{{ for }} {n} < 0", k - 1));
    for (j, c) in rec.coeffs.iter().enumerate() {
        doc.eq(format!("c_{{{j}}}({n})"), poly_text(c.num(), c.scale(), rec.field.names(), Style::Latex));
    }
    doc.finish()
}

/// The derivation as JSON (schema in the module documentation).
pub fn reduction_json(r: &Reduction) -> Value {
    let s = Style::Text;
    let nf = &r.normal;
    let factors: Vec<Value> = nf.q.den_factors().iter().map(|(f, e)| json!({"factor": pt(r, f.poly(), s), "power": e})).collect();
    let principal: Vec<Value> = nf
        .principal
        .iter()
        .map(|pp| {
            let cs: Vec<Value> =
                pp.coeffs.iter().enumerate().map(|(j, c)| json!({"power": -(pp.order as i64) + j as i64, "coefficient": rt(r, c, s)})).collect();
            json!({"at": rt(r, &pp.point, s), "factor": pt(r, &pp.factor, s), "order": pp.order, "coefficients": cs})
        })
        .collect();
    let pf = &nf.prefactor;
    let powers: Vec<Value> = pf.powers.iter().map(|(f, e)| json!({"base": pt(r, f, s), "exponent": rt(r, e, s)})).collect();
    let unev: Vec<Value> = pf.unevaluated.iter().map(|(f, e, a)| json!({"factor": pt(r, f, s), "power": e, "numerator": rt(r, a, s)})).collect();
    let change = match &r.change {
        Some(c) => {
            json!({"old": c.old_var, "new": c.new_var, "map": rt(r, &c.g, s), "schwarzian": rt(r, &c.schwarzian, s)})
        }
        None => Value::Null,
    };
    let schrod = match &r.schrodinger {
        Some(x) => {
            json!({"dxdz": rt(r, &x.dxdz, s), "frequency": x.frequency, "W": rt(r, &x.w, s), "V": rt(r, &x.v, s), "V_depends_on_frequency": x.v_depends_on_frequency})
        }
        None => Value::Null,
    };
    let doc = json!({
        "variable": r.var,
        "unknown": r.ode.unknown,
        "parameters": r.ode.params,
        "inferred_parameters": r.ode.inferred,
        "change_of_variable": change,
        "standard_form": {"p": rt(r, &r.p, s), "q": rt(r, &r.q, s)},
        "normal_form": {
            "Q": rt(r, &nf.q, s),
            "numerator": poly_text(nf.q.num(), nf.q.scale(), &names(r), s),
            "denominator": pt(r, &nf.q.den_expanded(), s),
            "denominator_factors": factors,
            "principal_parts": principal,
        },
        "prefactor": {"text": crate::ode::prefactor_text(&r.var, r.field.names(), pf, s), "powers": powers, "exponential": rt(r, &pf.exponential, s), "unevaluated": unev},
        "schrodinger": schrod,
    });
    let mut doc = super::latex::with_latex(doc, REDUCE_EXPRESSIONS);
    // The variable the equation was written in and the one it is solved in,
    // when a map made its coefficients rational (absent otherwise, so that
    // the documents of rational equations stay as they were).
    if let (Some(m), Some(o)) = (&r.map, doc.as_object_mut()) {
        o.insert(
            "transcendental_map".into(),
            json!({"written_in": m.old_var, "solved_in": m.new_var, "relation": crate::ode::exp_map_text(m, &r.ode)}),
        );
    }
    doc
}

/// The members of `reduce`'s JSON that hold expressions (each gets its LaTeX beside it).
const REDUCE_EXPRESSIONS: &[&str] = &[
    "p",
    "q",
    "Q",
    "numerator",
    "denominator",
    "factor",
    "at",
    "coefficient",
    "text",
    "base",
    "exponent",
    "exponential",
    "map",
    "schwarzian",
    "dxdz",
    "W",
    "V",
];
