//! `canonode._native`: the Rust side of the Python package. Each function
//! takes the equation's text and options as plain Python values, runs the
//! library on a worker thread (with the command line's large stack, so deep
//! but within-limit input cannot overflow it) while the calling thread waits
//! with the GIL released, and returns plain Python values (dicts, lists,
//! bytes) that `canonode/__init__.py` wraps in result objects. Arrays cross
//! as the raw bytes of complex128 (NumPy views them without copying or
//! parsing), so the extension needs no NumPy crate and links no BLAS-like
//! kernels that would make its floating point differ from the binary's.
//!
//! Waiting happens in 50 ms slices; between slices the caller checks for
//! signals, so Ctrl-C in a notebook raises `KeyboardInterrupt` at once. The
//! worker is told to stop: a scan stops before its next grid point, other
//! computations finish their current (bounded) step in the background and
//! their result is dropped.
//!
//! Library errors of bad input become `canonode.InputError` (a `ValueError`)
//! with `line`, `column`, `source` (what the place refers to: the input's
//! name or a keyword argument) and the caret rendering of the command line
//! as its message; other failures become `RuntimeError`.

mod workflows;

use canonode::{ratfunc_text, Error, ErrorKind, GRat, Input, Origin, Rat, ReduceOptions, RequestInput, Span, Style};
use num_complex::Complex64;
use pyo3::exceptions::{PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::{PyBytes, PyDict, PyList};
use pyo3::IntoPyObjectExt;
use serde_json::Value;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{mpsc, Arc};
use std::time::{Duration, Instant};

pyo3::create_exception!(
    canonode,
    InputError,
    PyValueError,
    "Bad input: the message is the located diagnostic (source:line:column, the line, carets); `.line` and `.column` are 1-based (None without a place), `.source` names the text they refer to."
);

/// The equation and the options every function shares, as the Python side passes them:
/// (text, name, var, subst, at_infinity, dxdz, frequency).
type InputTuple = (String, String, Option<String>, Option<String>, bool, Option<String>, Option<String>);

/// The input of one call, owned so that it can move to the worker.
#[derive(Clone, Debug)]
pub(crate) struct Spec {
    /// The equation's text.
    pub text: String,
    /// Its display name (`<input>` or a file name).
    pub name: String,
    /// The variable of a bare equation (`None`: a whole program with declarations).
    pub var: Option<String>,
    subst: Option<String>,
    at_infinity: bool,
    dxdz: Option<String>,
    /// The frequency parameter's name, when given.
    pub frequency: Option<String>,
}

impl Spec {
    /// A whole program with the default options.
    pub fn program(text: String, name: String) -> Spec {
        Spec { text, name, var: None, subst: None, at_infinity: false, dxdz: None, frequency: None }
    }

    fn from_tuple(t: InputTuple) -> Spec {
        let (text, name, var, subst, at_infinity, dxdz, frequency) = t;
        Spec { text, name, var, subst, at_infinity, dxdz, frequency }
    }

    /// The library's view of the text.
    pub fn input(&self) -> Input<'_> {
        match &self.var {
            Some(v) => Input::Inline { equation: &self.text, var: v },
            None => Input::Program(&self.text),
        }
    }

    /// The reduction options.
    pub fn options(&self) -> ReduceOptions {
        ReduceOptions {
            subst: self.subst.clone(),
            at_infinity: self.at_infinity,
            dxdz: self.dxdz.clone(),
            frequency: self.frequency.clone(),
            ..ReduceOptions::default()
        }
    }

    /// The text of a keyword argument a library error may point into.
    fn option_text(&self, origin: &Origin) -> Option<String> {
        match origin {
            Origin::Option(RequestInput::Subst) => self.subst.clone(),
            Origin::Option(RequestInput::Dxdz) => self.dxdz.clone(),
            Origin::Option(RequestInput::Frequency) => self.frequency.clone(),
            Origin::Option(RequestInput::AtInfinity) => Some(String::new()),
            _ => None,
        }
    }
}

/// A failure, rendered on the worker (where the texts are) and raised on the caller.
#[derive(Debug)]
pub(crate) enum Fail {
    /// Bad input: the rendered message, the place and what it refers to.
    Input { message: String, line: Option<usize>, column: Option<usize>, source: String },
    /// Anything else.
    Internal(String),
}

/// The Python keyword argument an error's origin names (empty for the input).
fn keyword(origin: &Origin) -> String {
    match origin {
        Origin::Input => String::new(),
        Origin::Option(r) => r.key().to_string(),
        Origin::Named(kw) => kw.clone(),
    }
}

/// The library's text with its mentions of inputs spelled as the command
/// line spells them: the package's documents and messages are the command
/// line's, word for word (the tests compare them).
pub(crate) fn named(text: &str) -> String {
    canonode::name_inputs(text, canonode::command::flag)
}

/// A library error rendered against the text it points into: the input, an
/// option of `spec`, or one of `extra` (keyword, text).
pub(crate) fn fail(e: &Error, spec: &Spec, extra: &[(String, String)]) -> Fail {
    if !e.is_bad_input() {
        return Fail::Internal(format!("internal failure (a bug in canonode; please report it with the input): {}", e.message));
    }
    let (name, text) = match &e.origin {
        Origin::Input => (spec.name.clone(), spec.text.clone()),
        o @ (Origin::Option(_) | Origin::Named(_)) => {
            let kw = keyword(o);
            let text = spec.option_text(o).or_else(|| extra.iter().find(|(n, _)| *n == kw).map(|(_, t)| t.clone())).unwrap_or_default();
            (kw, text)
        }
    };
    let message = named(canonode::render_diagnostic(e, &name, &text).trim_end());
    let (line, column) = match e.span {
        Some(s) => {
            let (l, c) = canonode::line_column(&text, s);
            (Some(l), Some(c))
        }
        None => (None, None),
    };
    Fail::Input { message, line, column, source: name }
}

/// A usage error about a keyword argument (its text in `extra`), pointing at `span` (or all of it).
pub(crate) fn usage(msg: impl Into<String>, kw: &str, spec: &Spec, extra: &[(String, String)], span: Option<Span>) -> Fail {
    let len = extra.iter().find(|(n, _)| n == kw).map(|(_, t)| t.len()).unwrap_or(0);
    let e = Error::new(ErrorKind::Usage, msg).at(span.unwrap_or(Span::new(0, len.max(1)))).in_named(kw);
    fail(&e, spec, extra)
}

impl Fail {
    fn into_py(self, py: Python<'_>) -> PyErr {
        match self {
            Fail::Internal(m) => PyRuntimeError::new_err(m),
            Fail::Input { message, line, column, source } => {
                let err = InputError::new_err(message);
                let v = err.value(py);
                let _ = v.setattr("line", line);
                let _ = v.setattr("column", column);
                let _ = v.setattr("source", source);
                err
            }
        }
    }
}

/// Runs `job` on a worker thread with a large stack while the caller waits
/// with the GIL released, checking for signals every 50 ms; `job` is given
/// the flag that Ctrl-C sets.
fn run<T: Send + 'static>(py: Python<'_>, job: impl FnOnce(&AtomicBool) -> Result<T, Fail> + Send + 'static) -> PyResult<T> {
    let cancel = Arc::new(AtomicBool::new(false));
    let flag = cancel.clone();
    let (tx, rx) = mpsc::channel();
    let worker = std::thread::Builder::new().name("canonode".into()).stack_size(512 << 20).spawn(move || {
        let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| job(&flag)));
        let _ = tx.send(r);
    });
    if let Err(e) = worker {
        return Err(PyRuntimeError::new_err(format!("cannot start the worker thread: {e}")));
    }
    let mut rx = rx;
    loop {
        let (got, back) = py.allow_threads(move || (rx.recv_timeout(Duration::from_millis(50)), rx));
        rx = back;
        match got {
            Ok(Ok(Ok(v))) => return Ok(v),
            Ok(Ok(Err(f))) => return Err(f.into_py(py)),
            Ok(Err(_)) | Err(mpsc::RecvTimeoutError::Disconnected) => {
                return Err(PyRuntimeError::new_err("internal failure (a bug in canonode; please report it with the input)"))
            }
            Err(mpsc::RecvTimeoutError::Timeout) => {
                if let Err(e) = py.check_signals() {
                    cancel.store(true, Ordering::SeqCst);
                    return Err(e);
                }
            }
        }
    }
}

/// A JSON value as the Python object it stands for (no text in between).
fn to_py(py: Python<'_>, v: &Value) -> PyResult<PyObject> {
    Ok(match v {
        Value::Null => py.None(),
        Value::Bool(b) => b.into_py_any(py)?,
        Value::Number(n) => match (n.as_i64(), n.as_u64(), n.as_f64()) {
            (Some(i), _, _) => i.into_py_any(py)?,
            (_, Some(u), _) => u.into_py_any(py)?,
            (_, _, Some(f)) => f.into_py_any(py)?,
            _ => py.None(),
        },
        Value::String(s) => named(s).into_py_any(py)?,
        Value::Array(a) => {
            let items: Vec<PyObject> = a.iter().map(|x| to_py(py, x)).collect::<PyResult<_>>()?;
            PyList::new(py, items)?.into_any().unbind()
        }
        Value::Object(m) => {
            let d = PyDict::new(py);
            for (k, x) in m {
                d.set_item(k, to_py(py, x)?)?;
            }
            d.into_any().unbind()
        }
    })
}

/// A signed exact decimal (`-0.5`, `1e-05`) or a ratio of two (`1/3`).
fn exact_real(t: &str) -> Option<Rat> {
    let t = t.trim();
    if let Some((n, d)) = t.split_once('/') {
        return exact_real(n)?.div(&exact_real(d)?);
    }
    let (neg, body) = match t.strip_prefix('-') {
        Some(b) => (true, b),
        None => (false, t.strip_prefix('+').unwrap_or(t)),
    };
    let r = Rat::parse_decimal(body)?;
    Some(if neg { r.neg() } else { r })
}

/// Parameter values as the Python side passes them: (name, shown, re, im)
/// with the parts as exact decimal text (Python's shortest repr of a float
/// is exactly the decimal the command line would be given).
pub(crate) type Values = Vec<(String, String, String, String)>;

/// One value: the name, the exact value, its span in the values' text.
pub(crate) type Assignment = (String, GRat, Span);

/// The values as `name=value` text (what errors point into, keyword `kw`)
/// and each value exact with the span of its entry.
pub(crate) fn read_values(values: &Values, kw: &str, spec: &Spec) -> Result<(String, Vec<Assignment>), Fail> {
    let mut text = String::new();
    let mut spans = Vec::new();
    for (n, shown, _, _) in values {
        if !text.is_empty() {
            text.push_str(", ");
        }
        let start = text.len();
        text.push_str(&format!("{n}={shown}"));
        spans.push(Span::new(start, text.len()));
    }
    let extra = [(kw.to_string(), text.clone())];
    let mut out = Vec::new();
    for ((n, shown, re, im), span) in values.iter().zip(spans) {
        let (Some(re), Some(im)) = (exact_real(re), exact_real(im)) else {
            let vspan = Span::new(span.start + n.len() + 1, span.end);
            return Err(usage(
                format!("'{shown}' is not a finite number (give an int, float, complex, Fraction or a decimal string)"),
                kw,
                spec,
                &extra,
                Some(vspan),
            ));
        };
        out.push((n.clone(), GRat { re, im }, span));
    }
    Ok((text, out))
}

/// One point: a value for every field variable (entry 0 the variable, unset
/// entries zero), from `values`; names in `skip` may be absent, names not in
/// the field are errors unless `foreign` accepts them.
pub(crate) struct Point {
    pub values: Vec<GRat>,
    pub missing: Vec<String>,
}

pub(crate) fn point_from(
    names: &[String],
    values: &[(String, GRat, Span)],
    skip: &[usize],
    kw: &str,
    text: &str,
    spec: &Spec,
    not_here: &dyn Fn(usize) -> Option<String>,
) -> Result<Point, Fail> {
    let extra = [(kw.to_string(), text.to_string())];
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    given[0] = true;
    for &i in skip {
        given[i] = true;
    }
    for (n, v, span) in values {
        match names.iter().skip(1).position(|x| x == n).map(|i| i + 1) {
            Some(i) => {
                if let Some(why) = not_here(i) {
                    return Err(usage(why, kw, spec, &extra, Some(*span)));
                }
                point[i] = v.clone();
                given[i] = true;
            }
            None => {
                let e = Error::new(ErrorKind::Usage, format!("'{n}' is not a parameter of the equation"))
                    .at(*span)
                    .in_named(kw)
                    .note(format!("the parameters are: {}", names[1..].join(", ")));
                return Err(fail(&e, spec, &extra));
            }
        }
    }
    let missing = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.clone()).collect();
    Ok(Point { values: point, missing })
}

/// `reduce`: the derivation's JSON document (as `canonode reduce --format
/// json`), its text and LaTeX, the field's names and Q in LaTeX.
#[pyfunction]
fn reduce(py: Python<'_>, input: InputTuple) -> PyResult<PyObject> {
    let spec = Spec::from_tuple(input);
    let v = run(py, move |_| {
        let red = canonode::reduce(&spec.input(), &spec.options()).map_err(|e| fail(&e, &spec, &[]))?;
        let names = red.field.names().to_vec();
        Ok(serde_json::json!({
            "json": canonode::reduction_json(&red),
            "text": canonode::reduction_text(&red, &spec.name),
            "latex": canonode::reduction_latex(&red),
            "names": names,
            "Q_latex": ratfunc_text(&red.normal.q, &names, Style::Latex),
        }))
    })?;
    to_py(py, &v)
}

/// `Q_at`: Q of the normal form at every z (the native-endian bytes of a
/// complex128 array) with the parameters at `values`; the same layout back,
/// NaN where Q has a pole.
#[pyfunction]
fn q_at<'py>(py: Python<'py>, input: InputTuple, values: Values, z: &[u8]) -> PyResult<Bound<'py, PyBytes>> {
    let spec = Spec::from_tuple(input);
    let zs: Vec<Complex64> = z
        .chunks_exact(16)
        .map(|c| {
            let part = |b: &[u8]| f64::from_ne_bytes(b.try_into().expect("8 bytes"));
            Complex64::new(part(&c[..8]), part(&c[8..]))
        })
        .collect();
    let out = run(py, move |_| {
        let red = canonode::reduce(&spec.input(), &spec.options()).map_err(|e| fail(&e, &spec, &[]))?;
        let names = red.field.names().to_vec();
        let (text, vals) = read_values(&values, "params", &spec)?;
        let p = point_from(&names, &vals, &[], "params", &text, &spec, &|_| None)?;
        if !p.missing.is_empty() {
            let extra = [("params".to_string(), text.clone())];
            return Err(usage(format!("no value given for {}", p.missing.join(", ")), "params", &spec, &extra, None));
        }
        let mut at: Vec<Complex64> = p.values.iter().map(|g| g.to_f64()).map(|(re, im)| Complex64::new(re, im)).collect();
        let mut bytes = Vec::with_capacity(zs.len() * 16);
        for &zv in &zs {
            at[0] = zv;
            let q = canonode::numeric::eval_at(&red.normal.q, &at).unwrap_or(Complex64::new(f64::NAN, f64::NAN));
            bytes.extend_from_slice(&q.re.to_ne_bytes());
            bytes.extend_from_slice(&q.im.to_ne_bytes());
        }
        Ok(bytes)
    })?;
    Ok(PyBytes::new(py, &out))
}

/// `classify`: the JSON document of `canonode classify --format json` with
/// the same options, and its text and LaTeX.
#[pyfunction]
#[pyo3(signature = (input, at=None, exponents=None, boundary=None))]
fn classify(py: Python<'_>, input: InputTuple, at: Option<Values>, exponents: Option<String>, boundary: Option<String>) -> PyResult<PyObject> {
    let spec = Spec::from_tuple(input);
    let v = run(py, move |_| classify_doc(&spec, at.as_ref(), exponents.as_deref(), boundary.as_deref()))?;
    to_py(py, &v)
}

fn classify_doc(spec: &Spec, at: Option<&Values>, exponents: Option<&str>, boundary: Option<&str>) -> Result<Value, Fail> {
    use canonode::numeric::{evaluate, Values as NumValues};
    use canonode::{boundary_choices, generic_values, label, Boundary};
    let extra: Vec<(String, String)> = exponents.iter().map(|t| ("exponents".to_string(), t.to_string())).collect();
    let lib = |e: Error| fail(&e, spec, &extra);
    let red = canonode::reduce(&spec.input(), &spec.options()).map_err(lib)?;
    let an = canonode::analyse(&red).map_err(lib)?;
    let k = &red.field;
    let names = k.names().to_vec();
    let (values_point, numeric) = match at {
        Some(at) => {
            let (text, vals) = read_values(at, "at", spec)?;
            let p = point_from(&names, &vals, &[], "at", &text, spec, &|_| None)?;
            if !p.missing.is_empty() {
                let extra = [("at".to_string(), text.clone())];
                return Err(usage(format!("no value given for {}", p.missing.join(", ")), "at", spec, &extra, None));
            }
            let numeric = evaluate(&an, &NumValues::new(p.values.clone()), k);
            (Some(p.values), Some(numeric))
        }
        None => (None, None),
    };
    let mut choices = match exponents {
        Some(t) => canonode::command::read_choices(&red, &an, t).map_err(|e| lib(e.in_option(RequestInput::Exponents)))?,
        None => Default::default(),
    };
    let freq_name =
        spec.frequency.clone().or_else(|| ["omega", "ω", "w"].iter().find(|n| red.ode.params.iter().any(|p| p == *n)).map(|s| s.to_string()));
    let freq = match &freq_name {
        Some(f) => match names.iter().skip(1).position(|n| n == f) {
            Some(i) => Some(i + 1),
            None => {
                return Err(lib(Error::new(ErrorKind::Usage, format!("'{f}' is not a parameter of the equation")).in_option(RequestInput::Frequency)))
            }
        },
        None => None,
    };
    let label_point = values_point.clone().unwrap_or_else(|| generic_values(names.len(), freq.unwrap_or(usize::MAX)));
    let labels = freq.map(|f| label(k, &an, f, &label_point, values_point.is_some())).transpose().map_err(lib)?;
    let kind = match boundary {
        None => None,
        Some("qnm") => Some(Boundary::Qnm),
        Some("bound") => Some(Boundary::Bound),
        Some(other) => {
            let extra = [("boundary".to_string(), other.to_string())];
            return Err(usage(format!("'{other}' is not a boundary problem: use 'qnm' or 'bound'"), "boundary", spec, &extra, None));
        }
    };
    let mut said = Vec::new();
    if let Some(b) = kind {
        if b == Boundary::Qnm && labels.is_none() {
            return Err(lib(Error::new(
                ErrorKind::Usage,
                "boundary='qnm' needs a frequency: name it with frequency= (no parameter is called omega)",
            )));
        }
        let canonode::ExponentPicks { picks, said: s } = boundary_choices(k, &an, labels.as_ref(), b, &label_point).map_err(lib)?;
        choices.fill(picks);
        said = s;
    }
    let canon = canonode::canonical_form_of(&red, &an, &choices).map_err(lib)?;
    let methods = canonode::suggest(&an, kind.map(|b| b == Boundary::Bound));
    let vals = values_point.map(NumValues::new);
    let mut v = canonode::analysis_json(k, &red.var, &red.ode.params, &an, numeric.as_deref(), labels.as_ref());
    v["canonical"] = match &canon {
        Some(c) => canonode::canonical_json(k, c, vals.as_ref()),
        None => Value::Null,
    };
    v["boundary"] = match kind {
        Some(b) => serde_json::json!({"kind": if b == Boundary::Qnm { "quasinormal modes" } else { "bound states" }, "choices": said}),
        None => Value::Null,
    };
    v["methods"] = Value::Array(methods.iter().map(|m| serde_json::json!({"method": m.method, "reason": m.reason, "source": m.source})).collect());
    let mut text = canonode::analysis_text(k, &red.var, &an, numeric.as_deref(), labels.as_ref());
    if let Some(c) = &canon {
        text.push_str(&canonode::canonical_text(k, &red.ode.unknown, c, vals.as_ref()));
    }
    let picks = kind.map(|b| canonode::BoundaryPicks { kind: if b == Boundary::Qnm { "quasinormal modes" } else { "bound states" }, choices: &said });
    let latex = canonode::analysis_latex(k, &red.var, &red.ode.unknown, &an, canon.as_ref(), picks.as_ref());
    Ok(serde_json::json!({"json": v, "text": text, "latex": latex}))
}

/// `emit`: C or Rust source evaluating Q, the potential (with `dxdz`) or
/// the recurrence coefficients (with `about`), as `canonode emit`.
#[pyfunction]
#[pyo3(signature = (input, lang, what, prefix, about=None, series=None, exponents=None))]
#[allow(clippy::too_many_arguments)]
fn emit(
    py: Python<'_>,
    input: InputTuple,
    lang: String,
    what: String,
    prefix: Option<String>,
    about: Option<String>,
    series: Option<String>,
    exponents: Option<String>,
) -> PyResult<String> {
    use canonode::code::{emit_code, emit_functions, CodeRequest, EmitWhat, Lang};
    let spec = Spec::from_tuple(input);
    run(py, move |_| {
        let prefix = prefix.unwrap_or_else(|| canonode::code::prefix_from_source(&spec.name));
        let mut extra = vec![("lang".to_string(), lang.clone()), ("what".to_string(), what.clone()), ("name".to_string(), prefix.clone())];
        extra.extend(
            [("about", &about), ("series", &series), ("exponents", &exponents)]
                .iter()
                .filter_map(|(n, v)| v.as_ref().map(|v| (n.to_string(), v.clone()))),
        );
        let lang = match lang.as_str() {
            "c" | "C" => Lang::C,
            "rust" | "Rust" => Lang::Rust,
            _ => return Err(usage(format!("'{lang}' is not a target language: use 'c' or 'rust'"), "lang", &spec, &extra, None)),
        };
        let want = match what.as_str() {
            "q" => EmitWhat::Q,
            "potential" => EmitWhat::Potential,
            "recurrence" => EmitWhat::Recurrence,
            "all" => EmitWhat::All,
            _ => return Err(usage(format!("'{what}' cannot be emitted: use 'q', 'potential', 'recurrence' or 'all'"), "what", &spec, &extra, None)),
        };
        if !canonode::code::valid_prefix(&prefix) {
            return Err(usage(
                format!("'{prefix}' is not an identifier: use ASCII letters, digits and _, not starting with a digit"),
                "name",
                &spec,
                &extra,
                None,
            ));
        }
        let red = canonode::reduce(&spec.input(), &spec.options()).map_err(|e| fail(&e, &spec, &[]))?;
        if want == EmitWhat::Potential && red.schrodinger.is_none() {
            return Err(usage("what='potential' needs dxdz= (dx/dz of the Schrödinger form, e.g. '1/f')", "what", &spec, &extra, None));
        }
        if want == EmitWhat::Recurrence && about.is_none() {
            return Err(usage("what='recurrence' needs about= (the expansion point, as classify prints it)", "what", &spec, &extra, None));
        }
        let rec = match (&about, matches!(want, EmitWhat::Recurrence | EmitWhat::All)) {
            (Some(p), true) => {
                let an = canonode::analyse(&red).map_err(|e| fail(&e, &spec, &[]))?;
                let asked = canonode::command::asked_about(&red, &an, p, series.as_deref(), exponents.as_deref())
                    .map_err(|e| fail(&e, &spec, &extra))?;
                Some(canonode::requested(&red, &asked.about, &asked.series, &asked.choices, false, None).map_err(|e| fail(&e, &spec, &extra))?)
            }
            _ => None,
        };
        let dxdz = spec.option_text(&Origin::Option(RequestInput::Dxdz));
        let (functions, skipped, params) = emit_functions(&red, &spec.name, dxdz.as_deref(), want, rec.as_ref());
        let req = CodeRequest { lang, prefix, source: spec.name.clone(), params, functions, skipped, limits: Default::default() };
        Ok(emit_code(&req).map_err(|e| fail(&e, &spec, &[]))?.text)
    })
}

/// `record`: the derivation record of the text, naming `path` as its source.
#[pyfunction]
#[pyo3(signature = (input, path, about=None, series=None, exponents=None))]
fn record(
    py: Python<'_>,
    input: InputTuple,
    path: String,
    about: Option<String>,
    series: Option<String>,
    exponents: Option<String>,
) -> PyResult<String> {
    let spec = Spec::from_tuple(input);
    run(py, move |_| {
        let extra: Vec<(String, String)> = [("about", &about), ("series", &series), ("exponents", &exponents)]
            .iter()
            .filter_map(|(n, v)| v.as_ref().map(|v| (n.to_string(), v.clone())))
            .collect();
        let req = canonode::record::RecurrenceRequest { about, series, exponents };
        let rec = canonode::command::derive_record(&spec.text, &path, &spec.options(), &req, None).map_err(|e| fail(&e, &spec, &extra))?;
        Ok(rec.render())
    })
}

/// The source path a record names (relative to the record's directory).
#[pyfunction]
fn record_source(py: Python<'_>, record_text: String, record_name: String) -> PyResult<String> {
    run(py, move |_| {
        let spec = Spec::program(record_text, record_name);
        let rec = canonode::record::Record::parse(&spec.text).map_err(|e| fail(&e, &spec, &[]))?;
        Ok(rec.source_path().map_err(|e| fail(&e, &spec, &[]))?.to_string())
    })
}

/// `check`: re-derives a record from its source text; (holds, changed keys, unified diff, version note).
#[pyfunction]
fn check(
    py: Python<'_>,
    record_text: String,
    record_name: String,
    source_text: String,
    source_name: String,
) -> PyResult<(bool, Vec<String>, String, Option<String>)> {
    run(py, move |_| {
        let rspec = Spec::program(record_text, record_name.clone());
        let recorded = canonode::record::Record::parse(&rspec.text).map_err(|e| fail(&e, &rspec, &[]))?;
        let rel = recorded.source_path().map_err(|e| fail(&e, &rspec, &[]))?.to_string();
        let opts = recorded.options().map_err(|e| fail(&e, &rspec, &[]))?;
        let sspec = Spec::program(source_text, source_name.clone());
        let recomputed =
            canonode::command::derive_record(&sspec.text, &rel, &opts, &recorded.recurrence_request(), None).map_err(|e| fail(&e, &sspec, &[]))?;
        let cmp = canonode::record::compare_named(
            &recorded,
            &recomputed,
            &format!("{record_name} (recorded)"),
            &format!("{record_name} (recomputed from {source_name})"),
        );
        let note = cmp.version.as_ref().map(|(old, new)| format!("recorded with canonode {old}, checked with {new} (the version is not compared)"));
        Ok((cmp.holds(), cmp.changed.clone(), cmp.diff.clone(), note))
    })
}

/// The angular side of a coupled spectrum: (text, name, links, index, guess).
type CoupleTuple = (String, String, Vec<String>, usize, Option<(String, String)>);

/// `spectrum`: the JSON document of `canonode spectrum --format json` and
/// the time the library spent.
#[pyfunction]
#[pyo3(signature = (input, at, overtones, method, boundary, guess, tol, couple=None, ends=None, region=None))]
#[allow(clippy::too_many_arguments)]
fn spectrum(
    py: Python<'_>,
    input: InputTuple,
    at: Values,
    overtones: (u32, u32),
    method: String,
    boundary: Option<String>,
    guess: Option<(String, String)>,
    tol: f64,
    couple: Option<CoupleTuple>,
    ends: Option<String>,
    region: Option<((f64, f64, f64, f64), usize)>,
) -> PyResult<PyObject> {
    let spec = Spec::from_tuple(input);
    let couple = couple.map(|(text, name, links, index, guess)| workflows::Couple { text, name, links, index, guess });
    let (doc, secs) = run(py, move |_| {
        let t0 = Instant::now();
        let req = workflows::Request { at, overtones, method, boundary, guess, tol, couple, ends, region };
        let doc = workflows::spectrum(&spec, &req)?;
        Ok((doc, t0.elapsed().as_secs_f64()))
    })?;
    let out = PyDict::new(py);
    out.set_item("json", to_py(py, &doc)?)?;
    out.set_item("seconds", secs)?;
    Ok(out.into_any().unbind())
}

/// `scan`: the JSON document of `canonode scan --format json` over the
/// given values of `vary` (exact decimals), in parallel; Ctrl-C stops it
/// before the next grid point.
#[pyfunction]
#[pyo3(signature = (input, vary, values, at, overtones, check, guess, tol))]
#[allow(clippy::too_many_arguments)]
fn scan(
    py: Python<'_>,
    input: InputTuple,
    vary: String,
    values: Values,
    at: Values,
    overtones: (u32, u32),
    check: bool,
    guess: Option<(String, String)>,
    tol: f64,
) -> PyResult<PyObject> {
    let spec = Spec::from_tuple(input);
    let doc = run(py, move |cancel| {
        let req = workflows::Request {
            at,
            overtones,
            method: "auto".into(),
            boundary: Some("qnm".into()),
            guess,
            tol,
            couple: None,
            ends: None,
            region: None,
        };
        workflows::scan(&spec, &req, &vary, &values, check, cancel)
    })?;
    to_py(py, &doc)
}

/// `scatter`: the JSON document of `canonode scatter --format json`;
/// Ctrl-C stops it before the next frequency.
#[pyfunction]
#[pyo3(signature = (input, at, omega, sum_l, wkb_order, couple=None))]
fn scatter(
    py: Python<'_>,
    input: InputTuple,
    at: Values,
    omega: (String, String, String),
    sum_l: Option<(String, i64, i64)>,
    wkb_order: usize,
    couple: Option<CoupleTuple>,
) -> PyResult<PyObject> {
    let spec = Spec::from_tuple(input);
    let couple = couple.map(|(text, name, links, index, guess)| workflows::Couple { text, name, links, index, guess });
    let doc = run(py, move |cancel| workflows::scatter(&spec, &at, &omega, sum_l, wkb_order, couple.as_ref(), cancel))?;
    to_py(py, &doc)
}

/// The Python module.
#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("InputError", m.py().get_type::<InputError>())?;
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    m.add_function(wrap_pyfunction!(reduce, m)?)?;
    m.add_function(wrap_pyfunction!(q_at, m)?)?;
    m.add_function(wrap_pyfunction!(classify, m)?)?;
    m.add_function(wrap_pyfunction!(spectrum, m)?)?;
    m.add_function(wrap_pyfunction!(scan, m)?)?;
    m.add_function(wrap_pyfunction!(scatter, m)?)?;
    m.add_function(wrap_pyfunction!(emit, m)?)?;
    m.add_function(wrap_pyfunction!(record, m)?)?;
    m.add_function(wrap_pyfunction!(record_source, m)?)?;
    m.add_function(wrap_pyfunction!(check, m)?)?;
    Ok(())
}
