//! C and Rust source for evaluating exact rational functions in complex
//! double precision: Q(z; params), the Schrödinger potential and the
//! recurrence coefficients. The evaluation form comes from
//! [`crate::present::choose`] (verified exactly there); this file only turns
//! its straight-line program into text: one local per shared step, the
//! parameters read from `p[i]` into locals whose names are sanitised so that
//! any parameter name gives valid, warning-free code.
//!
//! Entry points: C `double complex PREFIX_q(double complex z, const double complex p[])`,
//! Rust `pub fn PREFIX_q(z: Complex64, p: &[Complex64]) -> Complex64`, the same
//! for `PREFIX_potential`, and `PREFIX_recurrence(n, p, c)` (C, filling
//! `c[0..PREFIX_RECURRENCE_TERMS]`) / `PREFIX_recurrence(n, p) -> [Complex64; K]` (Rust).

use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{Field, GRat, Rat, RatFunc};
use crate::error::{Error, ErrorKind, RequestInput, Result};
use crate::present::{choose, Choice, Program, SearchLimits, Step};

/// The target language (also the command line's `--lang` values).
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Lang {
    /// C99 with `double complex` from `<complex.h>`.
    C,
    /// Rust with `num_complex::Complex64`.
    Rust,
}

/// What a function evaluates.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FunctionKind {
    /// Q of the normal form ψ'' + Qψ = 0, at z.
    Q,
    /// The potential V of the Schrödinger form, at z.
    Potential,
    /// The recurrence coefficients c_j(n).
    Recurrence,
}

impl FunctionKind {
    /// The suffix of the function's name.
    pub fn suffix(self) -> &'static str {
        match self {
            FunctionKind::Q => "q",
            FunctionKind::Potential => "potential",
            FunctionKind::Recurrence => "recurrence",
        }
    }
}

/// One function to emit.
pub struct FunctionSpec<'a> {
    /// What it is.
    pub kind: FunctionKind,
    /// The field of `outputs`: variable 0 is the argument (z or n), then the parameters in order.
    pub field: &'a Field,
    /// The exact values computed, one for Q and V, k for a k-term recurrence.
    pub outputs: Vec<RatFunc>,
    /// Lines of explanation for the doc comment (the exact expressions are added).
    pub about: Vec<String>,
    /// Named subexpressions in `field` (the file's `let`s) the form may be built on.
    pub named: Vec<RatFunc>,
}

/// A request: the functions, the name prefix and where the equation came from.
pub struct CodeRequest<'a> {
    /// The language.
    pub lang: Lang,
    /// The prefix of every name (an ASCII identifier).
    pub prefix: String,
    /// The source file (or `<stdin>`, `<equation>`) named in comments.
    pub source: String,
    /// The parameter names, in the order of `p`.
    pub params: Vec<String>,
    /// The functions.
    pub functions: Vec<FunctionSpec<'a>>,
    /// Notes on what was not emitted and why.
    pub skipped: Vec<String>,
    /// Bounds on the e-graph runs.
    pub limits: SearchLimits,
}

/// The emitted source and the choice made for each function.
pub struct Emitted {
    /// The source text.
    pub text: String,
    /// Per function: its kind and the chosen program with its counts.
    pub choices: Vec<(FunctionKind, Choice)>,
}

/// True for an ASCII identifier usable as a name prefix.
pub fn valid_prefix(s: &str) -> bool {
    let mut c = s.chars();
    matches!(c.next(), Some(ch) if ch.is_ascii_alphabetic() || ch == '_') && c.all(|ch| ch.is_ascii_alphanumeric() || ch == '_')
}

/// A prefix made from a file name: its stem with every other character replaced by `_`.
pub fn prefix_from_source(source: &str) -> String {
    let stem = std::path::Path::new(source).file_stem().and_then(|s| s.to_str()).unwrap_or("");
    let mut out: String = stem.chars().map(|c| if c.is_ascii_alphanumeric() { c.to_ascii_lowercase() } else { '_' }).collect();
    if !out.starts_with(|c: char| c.is_ascii_alphabetic()) {
        out.insert_str(0, "ode_");
    }
    out
}

/// Local names for the parameters: `p_` and an ASCII form of the name
/// (letters, digits and `_` kept, a Greek letter spelled out, anything else
/// as its code point); names that collide get the parameter's position
/// appended. The `p_` prefix keeps them clear of keywords, of `I`, and of
/// the argument, output and temporary names (`z`, `n`, `p`, `c`, `tK`).
pub fn param_locals(params: &[String]) -> Vec<String> {
    let ascii = |name: &str| -> String {
        let mut s = String::new();
        for ch in name.chars() {
            if ch.is_ascii_alphanumeric() || ch == '_' {
                s.push(ch);
            } else {
                let l = crate::algebra::print::latex_name(&ch.to_string());
                match l.strip_prefix('\\') {
                    Some(word) if word.chars().all(|c| c.is_ascii_alphabetic()) => s.push_str(word),
                    _ => s.push_str(&format!("u{:x}", ch as u32)),
                }
            }
        }
        format!("p_{s}")
    };
    let mut out: Vec<String> = Vec::new();
    for (i, p) in params.iter().enumerate() {
        let mut n = ascii(p);
        while out.contains(&n) {
            n = format!("{n}_{}", i + 1);
        }
        out.push(n);
    }
    out
}

/// The double nearest to `r` (ties to even), checked exactly against its neighbours.
pub fn nearest_double(r: &Rat) -> Result<f64> {
    let d = r.to_f64();
    if !d.is_finite() {
        return Err(Error::new(ErrorKind::Limit, format!("the constant {r} is outside the range of double precision")));
    }
    let dist = |x: f64| {
        let e = crate::solve::spectrum::exact_double(x).re.sub(r);
        e.mul(&e)
    };
    let mut best = d;
    for cand in [d.next_down(), d.next_up()] {
        if !cand.is_finite() {
            continue;
        }
        let diff = dist(cand).sub(&dist(best));
        let even = cand.to_bits() & 1 == 0;
        if diff.numer().is_negative() || (diff.is_zero() && even) {
            best = cand;
        }
    }
    Ok(best)
}

/// A double as a source literal of both languages with 17 significant digits
/// (an integer value as `N.0`).
fn literal(x: f64) -> String {
    if x == x.trunc() && x.abs() < 1e15 {
        format!("{x:.1}")
    } else {
        format!("{x:.16e}")
    }
}

struct Printer<'a> {
    lang: Lang,
    prog: &'a Program,
    names: Vec<String>,
    consts: Vec<(f64, f64)>,
    temps: Vec<Option<String>>,
}

impl Printer<'_> {
    fn prec(&self, i: usize) -> u8 {
        if self.temps[i].is_some() {
            return 9;
        }
        match self.prog.steps[i] {
            Step::Var(_) | Step::Const(_) => 9,
            Step::Add(..) | Step::Sub(..) => 1,
            Step::Mul(..) | Step::Div(..) => 2,
            Step::Neg(_) => 3,
        }
    }
    fn operand(&self, i: usize, min: u8) -> String {
        let t = self.expr(i, false);
        if self.prec(i) < min {
            format!("({t})")
        } else {
            t
        }
    }
    fn constant(&self, k: usize) -> String {
        let (re, im) = self.consts[k];
        match (self.lang, im == 0.0, re == 0.0) {
            (_, true, _) => literal(re),
            (Lang::C, false, true) => format!("({}*I)", literal(im)),
            (Lang::C, false, false) => format!("({} + {}*I)", literal(re), literal(im)),
            (Lang::Rust, false, _) => format!("Complex64::new({}, {})", literal(re), literal(im)),
        }
    }
    /// The text of step `i`; `top` when it is the whole right side of a definition.
    fn expr(&self, i: usize, top: bool) -> String {
        if !top {
            if let Some(t) = &self.temps[i] {
                return t.clone();
            }
        }
        match &self.prog.steps[i] {
            Step::Var(v) => self.names[*v].clone(),
            Step::Const(k) => self.constant(*k),
            Step::Add(a, b) => format!("{} + {}", self.operand(*a, 1), self.operand(*b, 2)),
            Step::Sub(a, b) => format!("{} - {}", self.operand(*a, 1), self.operand(*b, 2)),
            Step::Mul(a, b) => format!("{} * {}", self.operand(*a, 2), self.operand(*b, 3)),
            Step::Div(a, b) => format!("{} / {}", self.operand(*a, 2), self.operand(*b, 3)),
            Step::Neg(a) => format!("-{}", self.operand(*a, 3)),
        }
    }
    /// True when the step's value is a real double in Rust (built from real constants only).
    fn is_real(&self, i: usize) -> bool {
        match &self.prog.steps[i] {
            Step::Var(_) => false,
            Step::Const(k) => self.consts[*k].1 == 0.0,
            Step::Add(a, b) | Step::Sub(a, b) | Step::Mul(a, b) | Step::Div(a, b) => self.is_real(*a) && self.is_real(*b),
            Step::Neg(a) => self.is_real(*a),
        }
    }
}

/// Text made safe for a line comment of C or Rust: control characters
/// (a newline would end the comment) and the Unicode line and paragraph
/// separators become `U+XXXX`; a backslash becomes `U+005C` (at the end of
/// a C line it would continue the comment onto the next line); `??`
/// becomes `? ?` (no C trigraph).
pub(crate) fn comment_safe(text: &str) -> String {
    let mut o = String::with_capacity(text.len());
    for ch in text.chars() {
        if ch.is_control() || ch == '\\' || ch == '\u{2028}' || ch == '\u{2029}' {
            o.push_str(&format!("U+{:04X}", ch as u32));
        } else {
            o.push(ch);
        }
    }
    while o.contains("??") {
        o = o.replace("??", "? ?");
    }
    o
}

fn wrap_comment(prefix: &str, text: &str, width: usize) -> Vec<String> {
    let text = comment_safe(text);
    let mut lines = Vec::new();
    let mut cur = String::new();
    for word in text.split(' ') {
        if !cur.is_empty() && cur.chars().count() + word.chars().count() + 1 > width {
            lines.push(format!("{prefix}{cur}"));
            cur = String::from("    ");
        } else if !cur.is_empty() && cur != "    " {
            cur.push(' ');
        }
        cur.push_str(word);
    }
    if !cur.trim().is_empty() {
        lines.push(format!("{prefix}{cur}"));
    }
    lines
}

fn string_literal(s: &str) -> String {
    let mut o = String::from("\"");
    for ch in s.chars() {
        match ch {
            '"' => o.push_str("\\\""),
            '\\' => o.push_str("\\\\"),
            c => o.push(c),
        }
    }
    o.push('"');
    o
}

fn counts_line(ch: &Choice) -> String {
    let c = ch.emitted;
    format!(
        "cost: {} mul ({} by a real constant), {} add/sub, {} div = {} real flops; form: {}; e-graph: {} nodes, {} iterations, stop: {}",
        c.mul,
        c.scale,
        c.add,
        c.div,
        c.flops(),
        ch.origin,
        ch.egraph_nodes,
        ch.iterations,
        ch.stop
    )
}

/// Emits the requested functions: the file's head, then each function's
/// doc comment, signature and body.
pub fn emit_code(req: &CodeRequest<'_>) -> Result<Emitted> {
    if !valid_prefix(&req.prefix) {
        return Err(Error::new(ErrorKind::Usage, format!("'{}' is not a valid name prefix: use ASCII letters, digits and _", req.prefix))
            .in_option(RequestInput::Name));
    }
    let locals = param_locals(&req.params);
    let mut o = file_head(req);
    let mut choices = Vec::new();
    for f in &req.functions {
        // A function's field holds the parameters in the file's order; a
        // recurrence about an adjoined root holds θ after them (the last p).
        let own = f.field.names().len().saturating_sub(1);
        if own > req.params.len() || f.field.names()[1..] != req.params[..own] {
            return Err(Error::new(ErrorKind::Internal, "a function's field does not hold the parameters in the file's order"));
        }
        let ch = choose(f.field, &f.outputs, &f.named, &req.limits)?;
        let mut names = vec![f.kind.argument().to_string()];
        names.extend(locals.iter().cloned());
        let prog = &ch.program;
        let mut consts = Vec::with_capacity(prog.consts.len());
        for g in &prog.consts {
            consts.push(grat_doubles(g)?);
        }
        let pr = Printer { lang: req.lang, prog, names, consts, temps: temporaries(prog) };
        o.push('\n');
        o.push_str(&doc_comment(req, f, &ch));
        o.push_str(&signature(req, f));
        o.push_str(&body(&pr, &locals, f.kind));
        choices.push((f.kind, ch));
    }
    Ok(Emitted { text: o, choices })
}

impl Lang {
    /// The doc-comment marker.
    fn doc(self) -> &'static str {
        match self {
            Lang::C => "//",
            Lang::Rust => "///",
        }
    }
}

impl FunctionKind {
    /// The name of the function's argument.
    fn argument(self) -> &'static str {
        match self {
            FunctionKind::Recurrence => "n",
            FunctionKind::Q | FunctionKind::Potential => "z",
        }
    }
}

/// The file's head: where it came from, the parameter order, what was
/// skipped, and the language's preamble.
fn file_head(req: &CodeRequest<'_>) -> String {
    let cm = "//";
    let upper = req.prefix.to_ascii_uppercase();
    let mut o = String::new();
    o.push_str(&format!("{cm} Evaluators generated by canonode from {} (complex double precision).\n", comment_safe(&req.source)));
    o.push_str(&format!("{cm} Every function takes the parameters as p[i] in this order:\n"));
    for (i, p) in req.params.iter().enumerate() {
        o.push_str(&format!("{cm}   p[{i}] = {p}\n"));
    }
    if req.params.is_empty() {
        o.push_str(&format!("{cm}   (none: p is not read)\n"));
    }
    for s in &req.skipped {
        o.push_str(&format!("{cm} Not emitted: {}\n", comment_safe(s)));
    }
    o.push_str(&format!("{cm} Each form was checked to equal the exact canonical value before emission.\n\n"));
    let list: Vec<String> = req.params.iter().map(|p| string_literal(p)).collect();
    match req.lang {
        Lang::C => {
            o.push_str("#include <complex.h>\n\n");
            o.push_str(&format!("#define {upper}_PARAM_COUNT {}\n", req.params.len()));
            o.push_str(&format!("#define {upper}_PARAM_NAMES {{{}}}\n", list.join(", ")));
        }
        Lang::Rust => {
            o.push_str("use num_complex::Complex64;\n\n");
            o.push_str("/// The parameter names, in the order of `p`.\n");
            o.push_str(&format!("pub const {upper}_PARAMS: [&str; {}] = [{}];\n", req.params.len(), list.join(", ")));
        }
    }
    o
}

/// Names `tK` for the steps used twice or more (not variables or constants).
fn temporaries(prog: &Program) -> Vec<Option<String>> {
    let uses = prog.uses();
    let mut temps = vec![None; prog.steps.len()];
    let mut k = 0;
    for (i, s) in prog.steps.iter().enumerate() {
        if uses[i] >= 2 && !matches!(s, Step::Var(_) | Step::Const(_)) {
            temps[i] = Some(format!("t{k}"));
            k += 1;
        }
    }
    temps
}

/// The function's doc comment: its explanation, the exact values, the source and the counts.
fn doc_comment(req: &CodeRequest<'_>, f: &FunctionSpec<'_>, ch: &Choice) -> String {
    let doc = req.lang.doc();
    let mut o = String::new();
    for a in &f.about {
        for l in wrap_comment(&format!("{doc} "), a, 100) {
            o.push_str(&l);
            o.push('\n');
        }
    }
    for (j, r) in f.outputs.iter().enumerate() {
        let lhs = match f.kind {
            FunctionKind::Q => "Q".to_string(),
            FunctionKind::Potential => "V".to_string(),
            FunctionKind::Recurrence => format!("c[{j}]"),
        };
        let text = format!("{lhs} = {}", ratfunc_text(r, f.field.names(), Style::Text));
        for l in wrap_comment(&format!("{doc}   "), &text, 100) {
            o.push_str(&l);
            o.push('\n');
        }
    }
    o.push_str(&format!("{doc} Source: {}. {}\n", comment_safe(&req.source), counts_line(ch)));
    o
}

/// The function's signature (with the recurrence's term count before it) and its opening brace.
fn signature(req: &CodeRequest<'_>, f: &FunctionSpec<'_>) -> String {
    let upper = req.prefix.to_ascii_uppercase();
    let fname = format!("{}_{}", req.prefix, f.kind.suffix());
    let terms = f.outputs.len();
    let doc = req.lang.doc();
    match (req.lang, f.kind) {
        (Lang::C, FunctionKind::Recurrence) => format!(
            "#define {upper}_RECURRENCE_TERMS {terms}\nvoid {fname}(double complex n, const double complex p[], double complex c[])\n{{\n"
        ),
        (Lang::C, FunctionKind::Q | FunctionKind::Potential) => format!("double complex {fname}(double complex z, const double complex p[])\n{{\n"),
        (Lang::Rust, FunctionKind::Recurrence) => format!(
            "pub const {upper}_RECURRENCE_TERMS: usize = {terms};\n\n{doc} Returns the {terms} coefficients c[j] (in the order above).\n#[allow(non_snake_case)]\npub fn {fname}(n: Complex64, p: &[Complex64]) -> [Complex64; {terms}] {{\n"
        ),
        (Lang::Rust, FunctionKind::Q | FunctionKind::Potential) => {
            format!("#[allow(non_snake_case)]\npub fn {fname}(z: Complex64, p: &[Complex64]) -> Complex64 {{\n")
        }
    }
}

/// The function's body: unused arguments discarded, the parameters read,
/// the temporaries defined, the value returned; and the closing brace.
fn body(pr: &Printer<'_>, locals: &[String], kind: FunctionKind) -> String {
    let prog = pr.prog;
    let arg = kind.argument();
    let mut o = String::new();
    let used: Vec<bool> = (0..locals.len() + 1).map(|v| prog.steps.contains(&Step::Var(v))).collect();
    if !used[0] {
        o.push_str(&match pr.lang {
            Lang::C => format!("    (void){arg};\n"),
            Lang::Rust => format!("    let _ = {arg};\n"),
        });
    }
    if !used[1..].iter().any(|u| *u) {
        o.push_str(match pr.lang {
            Lang::C => "    (void)p;\n",
            Lang::Rust => "    let _ = p;\n",
        });
    }
    for (i, l) in locals.iter().enumerate() {
        if used[i + 1] {
            o.push_str(&match pr.lang {
                Lang::C => format!("    const double complex {l} = p[{i}];\n"),
                Lang::Rust => format!("    let {l} = p[{i}];\n"),
            });
        }
    }
    for (i, t) in pr.temps.iter().enumerate() {
        if let Some(t) = t {
            let rhs = pr.expr(i, true);
            o.push_str(&match (pr.lang, pr.is_real(i)) {
                (Lang::C, _) => format!("    const double complex {t} = {rhs};\n"),
                (Lang::Rust, true) => format!("    let {t}: f64 = {rhs};\n"),
                (Lang::Rust, false) => format!("    let {t} = {rhs};\n"),
            });
        }
    }
    let out_text = |i: usize| -> String {
        let e = pr.expr(i, true);
        match (pr.lang, pr.is_real(i)) {
            (Lang::Rust, true) => format!("Complex64::from({e})"),
            (Lang::Rust, false) | (Lang::C, _) => e,
        }
    };
    match (kind, pr.lang) {
        (FunctionKind::Recurrence, Lang::C) => {
            for (j, &i) in prog.outputs.iter().enumerate() {
                o.push_str(&format!("    c[{j}] = {};\n", out_text(i)));
            }
        }
        (FunctionKind::Recurrence, Lang::Rust) => {
            let items: Vec<String> = prog.outputs.iter().map(|&i| format!("        {},\n", out_text(i))).collect();
            o.push_str(&format!("    [\n{}    ]\n", items.concat()));
        }
        (FunctionKind::Q | FunctionKind::Potential, Lang::C) => o.push_str(&format!("    return {};\n", out_text(prog.outputs[0]))),
        (FunctionKind::Q | FunctionKind::Potential, Lang::Rust) => o.push_str(&format!("    {}\n", out_text(prog.outputs[0]))),
    }
    o.push_str("}\n");
    o
}

fn grat_doubles(g: &GRat) -> Result<(f64, f64)> {
    Ok((nearest_double(&g.re)?, nearest_double(&g.im)?))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn comments_never_carry_raw_control_characters() {
        let t = comment_safe("a\nb\\\r??/\u{2028}");
        assert_eq!(t, "aU+000AbU+005CU+000D? ?/U+2028");
    }

    #[test]
    fn hostile_names_become_distinct_locals() {
        let names: Vec<String> = ["int", "I", "re", "λ", "lambda", "p_lambda", "fn"].iter().map(|s| s.to_string()).collect();
        let l = param_locals(&names);
        assert_eq!(l, ["p_int", "p_I", "p_re", "p_lambda", "p_lambda_5", "p_p_lambda", "p_fn"]);
    }

    #[test]
    fn doubles_are_nearest() {
        // 1/3 and 1/10 as Python's float() rounds them (IEEE 754 round to nearest, common practice).
        let third = Rat::new(1.into(), 3.into()).unwrap();
        assert_eq!(nearest_double(&third).unwrap(), 1.0 / 3.0);
        assert_eq!(nearest_double(&Rat::new(1.into(), 10.into()).unwrap()).unwrap(), 0.1);
        assert_eq!(literal(0.1), "1.0000000000000001e-1");
        assert_eq!(literal(-2.0), "-2.0");
    }
}

/// What an emit request asks for (also the command line's `--what` values).
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum EmitWhat {
    /// Q of the normal form.
    Q,
    /// The Schrödinger potential (needs dx/dz).
    Potential,
    /// The recurrence coefficients (needs a recurrence).
    Recurrence,
    /// Everything available; what is missing is listed as skipped.
    All,
}

/// The functions of an emit request, what was skipped and why, and the
/// parameter list of every entry point — the one assembly the command line
/// and the Python package share. `dxdz` is the Schrödinger form's dx/dz as
/// the user gave it (for the comment), `rec` the recurrence when one was
/// derived.
pub fn emit_functions<'a>(
    red: &'a crate::ode::Reduction,
    source: &str,
    dxdz: Option<&str>,
    what: EmitWhat,
    rec: Option<&'a crate::series::Recurrence>,
) -> (Vec<FunctionSpec<'a>>, Vec<String>, Vec<String>) {
    let var = &red.var;
    // The file's `let`s are building blocks in the file's own variable only, not after a change of variable.
    let named: Vec<_> = if red.change.is_none() { red.ode.lets.iter().map(|(_, v)| v.clone()).collect() } else { Vec::new() };
    let want = |w: EmitWhat| what == w || what == EmitWhat::All;
    let mut functions = Vec::new();
    let mut skipped = Vec::new();
    if want(EmitWhat::Q) {
        functions.push(FunctionSpec {
            kind: FunctionKind::Q,
            field: &red.field,
            outputs: vec![red.normal.q.clone()],
            about: vec![format!("Q of the normal form psi'' + Q psi = 0 of {source}, at z = {var} (the equation's variable):")],
            named: named.clone(),
        });
    }
    if want(EmitWhat::Potential) {
        match &red.schrodinger {
            Some(s) => functions.push(FunctionSpec {
                kind: FunctionKind::Potential,
                field: &red.field,
                outputs: vec![s.v.clone()],
                about: vec![format!(
                    "The potential V of phi_xx + ({}^2 - V) phi = 0 with dx/d{var} = {}, at z = {var}:",
                    s.frequency.as_deref().unwrap_or("omega"),
                    dxdz.unwrap_or("")
                )],
                named: named.clone(),
            }),
            None => skipped.push("the potential (give dx/dz)".to_string()),
        }
    }
    match (rec, want(EmitWhat::Recurrence)) {
        (Some(rec), true) => {
            let n = &rec.field.names()[0];
            let k = rec.coeffs.len();
            let mut about = vec![
                format!(
                    "The {k}-term recurrence sum_j c[j]({n}) a[{n}+1-j] = 0 for {} = {} * sum a[{n}] u^{n}, {}.",
                    rec.function, rec.prefactor, rec.series
                ),
                format!("Choices: {}. The argument n is {n}.", rec.choices.join("; ")),
            ];
            if rec.field.names().len() > red.field.names().len() {
                let t = rec.field.names().last().expect("θ");
                about.push(format!(
                    "{t} = p[{}] is the adjoined root the series is about (canonode classify names its polynomial): pass its value.",
                    rec.field.names().len() - 2
                ));
            }
            functions.push(FunctionSpec { kind: FunctionKind::Recurrence, field: &rec.field, outputs: rec.coeffs.clone(), about, named: Vec::new() });
        }
        (None, true) => skipped.push("the recurrence coefficients (give the expansion point)".to_string()),
        _ => {}
    }
    // A recurrence about an adjoined root θ takes θ as the last parameter.
    let params = match rec {
        Some(r) if r.field.names().len() > red.field.names().len() => r.field.names()[1..].to_vec(),
        _ => red.field.names()[1..].to_vec(),
    };
    (functions, skipped, params)
}
