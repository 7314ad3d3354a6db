//! Reports of an [`Analysis`](crate::analysis::Analysis) in text, LaTeX and JSON.
//!
//! JSON schema of `classify --format json` (stable): `class` (DESIGN.md id),
//! `class_name` (prose), `reason`, `notes` [text], `variable`, `parameters`,
//! `singular_points` [{`where` (exact text), `infinity` (bool), `value`
//! ([re, im] or null), `kind` ("ordinary" | "regular" | "irregular"),
//! `pole_order` (integer), `rank` (a number: an integer, or a half-integer
//! such as 1.5), `rank_text` (the exact text, "3/2"), `exponents` and
//! `unknown_exponents` ([{`exact`, `value`}]; `value` is [re, im] or null),
//! `difference` (the exponent difference as exact text, or null at an
//! irregular point), `integer_difference` (integer or null), `apparent` ("yes" | "no" |
//! "not applicable" | "when" | "unchecked"), `apparent_condition` (text: the
//! polynomial that must vanish, or the reason it was not checked; null
//! otherwise), `removable` (bool: Q is regular there, only the prefactor is
//! singular), `formal_solutions` [text], `labels` (with `--frequency`: per
//! exponent of the unknown at regular points, per formal branch at irregular
//! ones, "ingoing" | "outgoing" | "decaying" | "growing" | null; else null)}],
//! `branch_note` (text or null), `labels_basis` (text or null), `canonical`
//! (null or the object of [`canonical_json`]), `boundary` (null or
//! {`kind`, `choices` [text]}), `methods` [{`method`, `reason`, `source`}].
//! Every expression (`where`, `exact`, `difference`, `apparent_condition`,
//! `formal_solutions`, and the canonical form's `equation`, `map`,
//! `prefactor` and parameters' `exact`) is followed by its LaTeX (math
//! mode) under the same name with `_latex` appended (null beside null, an
//! array beside an array), as in every JSON document (`emit::latex::with_latex`).
//! At infinity exponents refer to t = 1/z: those of the normal form in t
//! (ψ̃ = t·ψ up to a constant) and of the unknown as a function of t.

use crate::algebra::print::{poly_text, ratfunc_text, Style};
use crate::algebra::{Field, Int, RatFunc, UPoly};
use crate::analysis::canonical::{Canonical, Param};
use crate::analysis::labels::Labels;
use crate::analysis::numeric::NumericPoint;
use crate::analysis::{Analysis, Apparent, Class, Exponent, Form, Place, SingularPoint};
use serde_json::{json, Value};

/// The class in words.
pub fn class_name(c: Class) -> &'static str {
    match c {
        Class::Euler => "Euler",
        Class::Hypergeometric => "hypergeometric (Gauss)",
        Class::ConfluentHypergeometric => "confluent hypergeometric",
        Class::ReducedConfluentHypergeometric => "reduced confluent hypergeometric",
        Class::ParabolicCylinder => "parabolic cylinder",
        Class::Airy => "Airy",
        Class::GeneralHeun => "general Heun",
        Class::ConfluentHeun => "confluent Heun",
        Class::DoublyConfluentHeun => "doubly confluent Heun",
        Class::BiconfluentHeun => "biconfluent Heun",
        Class::TriconfluentHeun => "triconfluent Heun",
        Class::ReducedConfluentHeun => "reduced confluent Heun",
        Class::ReducedDoublyConfluentHeun => "reduced doubly confluent Heun",
        Class::DoublyReducedDoublyConfluentHeun => "doubly reduced doubly confluent Heun",
        Class::Fuchsian => "Fuchsian",
        Class::Irregular => "irregular",
    }
}

/// A canonical form in words.
pub fn form_name(f: Form) -> &'static str {
    match f {
        Form::Of(c) => class_name(c),
        Form::Whittaker => "Whittaker",
        Form::Bessel => "Bessel",
    }
}

fn rf(k: &Field, r: &RatFunc, s: Style) -> String {
    ratfunc_text(r, k.names(), s)
}

fn paren(t: String) -> String {
    if t.contains(' ') || t.starts_with('-') {
        format!("({t})")
    } else {
        t
    }
}

/// A polynomial in θ as text.
pub(crate) fn upoly_text(k: &Field, u: &UPoly, s: Style) -> String {
    let letter = crate::algebra::print::root_letter(k.names());
    let theta = match s {
        Style::Text => letter.text,
        Style::Latex => letter.latex,
    };
    let mut parts: Vec<String> = Vec::new();
    for (j, c) in u.coeffs.iter().enumerate().rev() {
        if c.is_zero() {
            continue;
        }
        let ct = rf(k, c, s);
        let t = match j {
            0 => ct,
            _ => {
                let pw = if j == 1 { theta.to_string() } else { format!("{theta}^{j}") };
                if c.as_constant().is_some_and(|x| x.im.is_zero() && x.re.is_integer() && x.re.numer().is_one()) {
                    pw
                } else if c.as_constant().is_some_and(|x| x.im.is_zero() && x.re.is_integer() && x.re.numer() == &Int::from(-1)) {
                    format!("-{pw}")
                } else {
                    match s {
                        Style::Text => format!("{}*{pw}", paren(ct)),
                        Style::Latex => format!("\\left({ct}\\right){pw}"),
                    }
                }
            }
        };
        parts.push(t);
    }
    if parts.is_empty() {
        return "0".into();
    }
    let mut out = parts[0].clone();
    for p in &parts[1..] {
        match p.strip_prefix('-') {
            Some(rest) => {
                out.push_str(" - ");
                out.push_str(rest);
            }
            None => {
                out.push_str(" + ");
                out.push_str(p);
            }
        }
    }
    out
}

/// An exponent as exact text: the value itself when the root is exact.
pub(crate) fn exponent_text(k: &Field, e: &Exponent, s: Style) -> String {
    if e.sign == 0 {
        return upoly_text(k, &e.center, s);
    }
    let half = RatFunc::rat(&crate::algebra::Rat::new((e.sign as i64).into(), 2.into()).expect("nonzero"));
    if let Some(r) = &e.root {
        if let Ok(t) = r.scale(k, &half).and_then(|h| e.center.add(k, &h)) {
            return upoly_text(k, &t, s);
        }
    }
    let c = upoly_text(k, &e.center, s);
    let r = upoly_text(k, &e.radicand, s);
    let sign = if e.sign > 0 { '+' } else { '-' };
    let root = match s {
        Style::Text => format!("1/2*sqrt({r})"),
        Style::Latex => format!("\\tfrac{{1}}{{2}}\\sqrt{{{r}}}"),
    };
    if e.center.is_zero() {
        if e.sign > 0 {
            root
        } else {
            format!("-{root}")
        }
    } else {
        format!("{c} {sign} {root}")
    }
}

/// The exponent difference θ (of ψ, equal to that of the unknown) as exact text.
fn difference_text(k: &Field, p: &SingularPoint) -> Value {
    match p.exponents.first() {
        Some(e) if e.sign != 0 => match &e.root {
            Some(r) => Value::String(upoly_text(k, r, Style::Text)),
            None => Value::String(format!("sqrt({})", upoly_text(k, &e.radicand, Style::Text))),
        },
        Some(_) if p.kind != crate::analysis::Kind::Irregular => Value::String("1".into()),
        _ => Value::Null,
    }
}

pub(crate) fn where_text(k: &Field, var: &str, p: &SingularPoint, s: Style) -> String {
    match &p.place {
        Place::Point { at, .. } => format!("{var} = {}", rf(k, at, s)),
        Place::Roots(f) => {
            let letter = crate::algebra::print::root_letter(k.names());
            let theta = if s == Style::Latex { letter.latex } else { letter.text };
            format!("{var} = {theta}, a root of {}", poly_text(f, &Int::ONE, k.names(), s))
        }
        Place::Infinity => format!("{var} = ∞"),
    }
}

pub(crate) fn formal_text(k: &Field, var: &str, p: &SingularPoint) -> Vec<String> {
    let x = match &p.place {
        Place::Point { at, .. } => crate::algebra::print::shifted(var, &rf(k, at, Style::Text), Style::Text),
        _ => var.to_string(),
    };
    if p.formal.is_empty() && p.kind == crate::analysis::Kind::Irregular {
        return vec!["not expanded: the leading coefficient of S' is not an exact square root in the parameters".to_string()];
    }
    p.formal
        .iter()
        .map(|f| {
            let terms: Vec<String> = f
                .exponent
                .iter()
                .map(|(pw, c)| {
                    let pw_t = if pw.is_integer() && pw.numer().is_one() {
                        x.clone()
                    } else if pw.is_integer() && !pw.numer().is_negative() {
                        format!("{x}^{pw}")
                    } else {
                        format!("{x}^({pw})")
                    };
                    let c = rf(k, c, Style::Text);
                    match c.as_str() {
                        "1" => pw_t,
                        "-1" => format!("-{pw_t}"),
                        _ if !c[1..].contains(' ') => format!("{c}*{pw_t}"),
                        _ => format!("({c})*{pw_t}"),
                    }
                })
                .collect();
            let mut sum = String::new();
            for (i, t) in terms.iter().enumerate() {
                match (i, t.strip_prefix('-')) {
                    (0, _) => sum.push_str(t),
                    (_, Some(rest)) => {
                        sum.push_str(" - ");
                        sum.push_str(rest);
                    }
                    (_, None) => {
                        sum.push_str(" + ");
                        sum.push_str(t);
                    }
                }
            }
            let exp = if terms.is_empty() { String::new() } else { format!("exp({sum})*") };
            format!("{exp}{x}^({}) * (1 + ...)", rf(k, &f.rho, Style::Text))
        })
        .collect()
}

pub(crate) fn apparent_fields(k: &Field, a: &Apparent) -> (&'static str, Option<String>) {
    match a {
        Apparent::NotApplicable => ("not applicable", None),
        Apparent::Yes => ("yes", None),
        Apparent::No => ("no", None),
        Apparent::When(p) => ("when", Some(format!("{} = 0", poly_text(p, &Int::ONE, k.names(), Style::Text)))),
        Apparent::Unchecked(why) => ("unchecked", Some(why.clone())),
    }
}

fn c2(v: Option<num_complex::Complex64>) -> Value {
    match v {
        Some(z) => json!([z.re, z.im]),
        None => Value::Null,
    }
}

fn fmt_c(z: num_complex::Complex64) -> String {
    let sign = if z.im < 0.0 { '-' } else { '+' };
    format!("{:.10}{sign}{:.10}i", z.re, z.im.abs())
}

/// The classification as plain text.
pub fn analysis_text(k: &Field, var: &str, a: &Analysis, numeric: Option<&[NumericPoint]>, labels: Option<&Labels>) -> String {
    let s = Style::Text;
    let mut o = String::new();
    o.push_str(&format!("class   {}  ({}: {})\n", a.class, class_name(a.class), a.reason));
    for n in &a.notes {
        o.push_str(&format!("  note: {n}\n"));
    }
    o.push_str("\nsingular points (exponents of ψ and of the unknown; at ∞ in t = 1/z)\n");
    for (i, p) in a.points.iter().enumerate() {
        let rank = if p.rank.is_zero() { String::new() } else { format!(", rank {}", p.rank) };
        let removable = if p.removable { "  (Q is regular here; only the prefactor is singular)" } else { "" };
        o.push_str(&format!("  {}\n    {}, pole order {} of Q{rank}{removable}\n", where_text(k, var, p, s), p.kind.word(), p.pole_order));
        if !p.exponents.is_empty() && p.kind != crate::analysis::Kind::Irregular {
            let e: Vec<String> = p.exponents.iter().map(|e| exponent_text(k, e, s)).collect();
            o.push_str(&format!("    ψ exponents:        {}\n", e.join(",  ")));
        }
        if !p.unknown_exponents.is_empty() {
            let e: Vec<String> = p.unknown_exponents.iter().map(|e| exponent_text(k, e, s)).collect();
            o.push_str(&format!("    unknown exponents:  {}\n", e.join(",  ")));
        }
        if let Some(row) = labels.map(|l| &l.per_point[i]) {
            let words: Vec<String> = row.iter().enumerate().filter_map(|(j, l)| l.as_ref().map(|l| format!("{} {}", j + 1, l.word()))).collect();
            if !words.is_empty() {
                let what = if p.kind == crate::analysis::Kind::Irregular { "branches" } else { "exponents of the unknown" };
                // The roots of a factor share one label row, read at the
                // outermost real root (`labels::outer_root`): say which.
                let read_at = match (&p.place, numeric, &a.physical) {
                    (Place::Roots(_), Some(nums), None) => nums
                        .iter()
                        .filter(|np| np.index == i)
                        .filter_map(|np| np.value)
                        .filter(|z| z.im.abs() <= 1e-9 * z.re.abs().max(1.0))
                        .map(|z| z.re)
                        .max_by(f64::total_cmp)
                        .map(|x| format!(" (read at the outermost real root, {var} ≈ {x:.10}; the other roots may differ)"))
                        .unwrap_or_default(),
                    _ => String::new(),
                };
                o.push_str(&format!("    {what}{read_at}:  {}\n", words.join(",  ")));
            }
        }
        if let Some(n) = p.integer_difference {
            let (w, cond) = apparent_fields(k, &p.apparent);
            let extra = cond.map(|c| format!(" ({c})")).unwrap_or_default();
            o.push_str(&format!("    integer exponent difference {n}; apparent: {w}{extra}\n"));
        }
        for f in formal_text(k, var, p) {
            o.push_str(&format!("    formal solution:  ψ ~ {f}\n"));
        }
        if let Some(nums) = numeric {
            for np in nums.iter().filter(|np| np.index == i && !(np.exponents.is_empty() && np.unknown_exponents.is_empty())) {
                let loc = np.value.map(fmt_c).unwrap_or_else(|| "∞".into());
                let ex: Vec<String> = np.exponents.iter().map(|e| e.map(fmt_c).unwrap_or_else(|| "?".into())).collect();
                let ux: Vec<String> = np.unknown_exponents.iter().map(|e| e.map(fmt_c).unwrap_or_else(|| "?".into())).collect();
                o.push_str(&format!("    at {loc}:  ψ {}", ex.join(", ")));
                if !ux.is_empty() {
                    o.push_str(&format!(";  unknown {}", ux.join(", ")));
                }
                o.push('\n');
            }
        }
    }
    if numeric.is_some() && has_inexact_root(a) {
        o.push_str(&format!("\nnote: {}\n", BRANCH_NOTE));
    }
    if let Some(l) = labels {
        o.push_str(&format!("\nlabels for time dependence e^(-i*omega*t), {}\n", l.basis));
    }
    o
}

const BRANCH_NOTE: &str =
    "square roots that are not exact were evaluated on the principal branch; the two exponents at a point may be swapped relative to another choice";

fn has_inexact_root(a: &Analysis) -> bool {
    a.points.iter().any(|p| p.exponents.iter().any(|e| e.sign != 0 && e.root.is_none()))
}

/// The classification as JSON (schema in the module documentation).
pub fn analysis_json(k: &Field, var: &str, params: &[String], a: &Analysis, numeric: Option<&[NumericPoint]>, labels: Option<&Labels>) -> Value {
    let s = Style::Text;
    let mut pts = Vec::new();
    for (i, p) in a.points.iter().enumerate() {
        let rows: Vec<Option<&NumericPoint>> = match numeric {
            Some(n) => {
                let v: Vec<&NumericPoint> = n.iter().filter(|np| np.index == i).collect();
                if v.is_empty() {
                    vec![None]
                } else {
                    v.into_iter().map(Some).collect()
                }
            }
            None => vec![None],
        };
        for np in rows {
            let ex = |list: &[Exponent], vals: Option<&Vec<Option<num_complex::Complex64>>>| -> Vec<Value> {
                list.iter()
                    .enumerate()
                    .map(|(j, e)| json!({"exact": exponent_text(k, e, s), "value": c2(vals.and_then(|v| v.get(j).copied().flatten()))}))
                    .collect()
            };
            let (app, cond) = apparent_fields(k, &p.apparent);
            pts.push(json!({
                "where": where_text(k, var, p, s),
                "infinity": matches!(p.place, Place::Infinity),
                "value": c2(np.and_then(|n| n.value)),
                "kind": p.kind.word(),
                "pole_order": p.pole_order,
                // A number (rank is a multiple of 1/2, exact as a double), and the exact text beside it.
                "rank": match p.rank.numer().to_i64().filter(|_| p.rank.is_integer()) { Some(n) => json!(n), None => json!(p.rank.to_f64()) },
                "rank_text": p.rank.to_string(),
                "exponents": ex(&p.exponents, np.map(|n| &n.exponents)),
                "unknown_exponents": ex(&p.unknown_exponents, np.map(|n| &n.unknown_exponents)),
                "difference": difference_text(k, p),
                "integer_difference": p.integer_difference,
                "apparent": app,
                "apparent_condition": cond,
                "removable": p.removable,
                "formal_solutions": formal_text(k, var, p),
                "labels": match labels {
                    Some(l) => Value::Array(l.per_point[i].iter().map(|x| x.as_ref().map(|x| Value::String(x.word().into())).unwrap_or(Value::Null)).collect()),
                    None => Value::Null,
                },
            }));
        }
    }
    let doc = json!({
        "class": a.class.id(),
        "class_name": class_name(a.class),
        "reason": a.reason,
        "notes": a.notes,
        "variable": var,
        "parameters": params,
        "singular_points": pts,
        "branch_note": if numeric.is_some() && has_inexact_root(a) { Value::String(BRANCH_NOTE.into()) } else { Value::Null },
        "labels_basis": labels.map(|l| Value::String(l.basis.clone())).unwrap_or(Value::Null),
    });
    super::latex::with_latex(doc, CLASSIFY_EXPRESSIONS)
}

/// The members of `classify`'s JSON that hold expressions (each gets its LaTeX beside it).
const CLASSIFY_EXPRESSIONS: &[&str] = &["where", "exact", "difference", "apparent_condition", "formal_solutions", "equation", "map", "prefactor"];

/// A canonical parameter as exact text.
pub(crate) fn param_text(k: &Field, p: &Param) -> String {
    match p {
        Param::Exact(r) => rf(k, r, Style::Text),
        Param::Radical(c, r) => {
            let root = format!("sqrt({})", rf(k, r, Style::Text));
            if *c == RatFunc::one() {
                root
            } else {
                format!("{}*{root}", paren(rf(k, c, Style::Text)))
            }
        }
        Param::Root(e) => exponent_text(k, e, Style::Text),
    }
}

/// Numeric value of a canonical parameter (principal branch for radicals).
/// `None` where it is not finite in double precision.
pub(crate) fn param_value(vals: &crate::analysis::numeric::Values, p: &Param) -> Option<num_complex::Complex64> {
    let v = match p {
        Param::Exact(r) => vals.ratfunc(r),
        Param::Radical(c, r) => Some(vals.ratfunc(c)? * vals.ratfunc(r)?.sqrt()),
        Param::Root(e) => vals.exponent(e, num_complex::Complex64::new(0.0, 0.0)),
    }?;
    (v.re.is_finite() && v.im.is_finite()).then_some(v)
}

/// A warning when a letter of the canonical form is also a name of the
/// equation (its own γ beside the form's γ): the values on the right hold the
/// equation's, the names on the left are the form's.
fn shared_letters(k: &Field, c: &Canonical) -> Option<String> {
    // A letter that is the same parameter (ν = nu for Bessel's equation
    // written with nu) needs no word.
    let shared: Vec<&str> =
        c.parameters.iter().filter(|(n, p)| k.names().iter().skip(1).any(|m| m == n) && param_text(k, p) != *n).map(|(n, _)| n.as_str()).collect();
    (!shared.is_empty()).then(|| {
        format!(
            "{} on the left {} the form's own (DLMF's letters); the same name{} on the right {} the equation's parameter{}",
            shared.join(", "),
            if shared.len() == 1 { "is" } else { "are" },
            if shared.len() == 1 { "" } else { "s" },
            if shared.len() == 1 { "is" } else { "are" },
            if shared.len() == 1 { "" } else { "s" },
        )
    })
}

/// The canonical form as text lines.
pub fn canonical_text(k: &Field, unknown: &str, c: &Canonical, vals: Option<&crate::analysis::numeric::Values>) -> String {
    let mut o = String::new();
    o.push_str(&format!("\ncanonical form   {} ({}):  {}\n", form_name(c.form), c.source, c.equation));
    o.push_str(&format!("  map          {}\n", c.map));
    if c.prefactor == "1" {
        o.push_str(&format!("  prefactor    none: {unknown} = w\n"));
    } else {
        o.push_str(&format!("  prefactor    {unknown} = {} * w\n", c.prefactor));
    }
    for ch in &c.choices {
        o.push_str(&format!("  choice       {ch}\n"));
    }
    o.push_str("  parameters\n");
    if let Some(note) = shared_letters(k, c) {
        o.push_str(&format!("    ({note})\n"));
    }
    for (n, p) in &c.parameters {
        let v = vals.and_then(|v| param_value(v, p)).map(|z| format!("   ≈ {}", fmt_c(z))).unwrap_or_default();
        o.push_str(&format!("    {n} = {}{v}\n", param_text(k, p)));
    }
    for ch in &c.checks {
        o.push_str(&format!("  check        {ch}\n"));
    }
    o
}

/// The canonical form as JSON: {`form`, `source`, `equation`, `map`, `prefactor`,
/// `choices`, `checks`, `parameters` {name: {`exact`, `value`}}}.
pub fn canonical_json(k: &Field, c: &Canonical, vals: Option<&crate::analysis::numeric::Values>) -> Value {
    let mut params = serde_json::Map::new();
    for (n, p) in &c.parameters {
        params.insert(n.clone(), json!({"exact": param_text(k, p), "value": c2(vals.and_then(|v| param_value(v, p)))}));
    }
    let doc = json!({
        "form": c.form.id(),
        "source": c.source,
        "equation": c.equation,
        "map": c.map,
        "prefactor": c.prefactor,
        "choices": c.choices,
        "checks": c.checks,
        "parameters": Value::Object(params),
    });
    super::latex::with_latex(doc, CLASSIFY_EXPRESSIONS)
}

fn param_latex(k: &Field, p: &Param) -> String {
    match p {
        Param::Exact(r) => rf(k, r, Style::Latex),
        Param::Radical(c, r) => {
            let root = format!("\\sqrt{{{}}}", rf(k, r, Style::Latex));
            let c = rf(k, c, Style::Latex);
            match c.as_str() {
                "1" => root,
                "-1" => format!("-{root}"),
                // A sum needs parentheses; a product or fraction stands as it is.
                _ if c[1..].contains(" + ") || c[1..].contains(" - ") => format!("\\left({c}\\right){root}"),
                _ => format!("{c}\\,{root}"),
            }
        }
        Param::Root(e) => exponent_text(k, e, Style::Latex),
    }
}

/// A boundary problem's exponent picks, as `classify --boundary` reports them.
pub struct BoundaryPicks<'a> {
    /// The problem in words ("quasinormal modes").
    pub kind: &'a str,
    /// One sentence a point ("at 2*M: the ingoing exponent (number 2)").
    pub choices: &'a [String],
}

/// The classification as a LaTeX fragment (amsmath `align*`, rows that fit
/// the page): the class, each singular point with its kind and exponents
/// (one a row), the boundary choices, and the canonical form: its equation,
/// the map, the prefactor, the choices made, the parameters and the checks.
pub fn analysis_latex(k: &Field, var: &str, unknown: &str, a: &Analysis, canonical: Option<&Canonical>, boundary: Option<&BoundaryPicks>) -> String {
    let s = Style::Latex;
    let v = crate::algebra::print::latex_name(var);
    let mut doc = super::latex::Align::new();
    doc.prose(&format!("{} equation: {}", class_name(a.class), a.reason));
    for p in &a.points {
        let wher = match &p.place {
            Place::Point { at, .. } => format!("{v} = {}", rf(k, at, s)),
            Place::Roots(f) => {
                let letter = crate::algebra::print::root_letter(k.names());
                let mut names = k.names().to_vec();
                names[0] = letter.text.into();
                format!("{v} = {},\\ {} = 0", letter.latex, poly_text(f, &Int::ONE, &names, s))
            }
            Place::Infinity => format!("{v} = \\infty"),
        };
        let rank = if p.rank.is_zero() { String::new() } else { format!(", rank ${}$", p.rank) };
        doc.group();
        doc.math(format!("{wher}\\text{{: {}{rank}}}", p.kind.word()));
        let psi: &[Exponent] = if p.kind == crate::analysis::Kind::Irregular { &[] } else { &p.exponents };
        for (name, sub, list) in [("\\rho_{\\psi}", "\\psi,", psi), ("\\rho", "", &p.unknown_exponents[..])] {
            let texts: Vec<String> = list.iter().map(|e| exponent_text(k, e, s)).collect();
            let set = format!("\\{{{}\\}}", texts.join(",\\ "));
            if texts.is_empty() {
                continue;
            }
            if super::latex::width(&set) + 8.0 <= super::latex::LINE_BUDGET {
                doc.rel(name, "\\in", set, "");
            } else {
                // One exponent a row: long exponents are broken like any sum.
                for (j, t) in texts.into_iter().enumerate() {
                    doc.eq(format!("\\rho_{{{sub}{}}}", j + 1), t);
                }
            }
        }
    }
    if let Some(b) = boundary {
        doc.group();
        doc.prose(&format!("boundary conditions for {}:", b.kind));
        for c in b.choices {
            doc.prose(c);
        }
        if b.choices.is_empty() {
            doc.prose("no point could be labelled");
        }
    }
    if let Some(c) = canonical {
        doc.group();
        doc.prose(&format!("canonical form: {} ({}): {}", form_name(c.form), c.source, c.equation));
        match super::latex::equation_latex(&c.map) {
            Some((l, r)) => doc.rel(l, "=", r, "\\quad\\text{(the map)}"),
            None => doc.prose(&format!("map: {}", c.map)),
        }
        // The prefactor: an expression, then an optional note after two spaces.
        let (expr, note) = c.prefactor.split_once("  ").unwrap_or((&c.prefactor, ""));
        let u = crate::algebra::print::latex_name(unknown);
        let note = if note.is_empty() { String::new() } else { format!(" \\quad\\text{{{}}}", super::latex::prose_latex(note)) };
        match super::latex::expr_latex(expr) {
            Some(t) if t == "1" => doc.prose(&format!("prefactor: none (the unknown {unknown} is the canonical function)")),
            Some(t) => doc.rel(u, "=", format!("{t}\\, w"), &note),
            None => doc.prose(&format!("prefactor: {unknown} = {} * w", c.prefactor)),
        }
        for ch in &c.choices {
            doc.prose(&format!("choice: {ch}"));
        }
        if let Some(note) = shared_letters(k, c) {
            doc.prose(&note);
        }
        for (n, p) in &c.parameters {
            doc.eq(crate::algebra::print::latex_name(n), param_latex(k, p));
        }
        for ch in &c.checks {
            doc.prose(&format!("check: {ch}"));
        }
    } else {
        doc.group();
        doc.prose("canonical form: none reached for this class and configuration");
    }
    doc.finish()
}
