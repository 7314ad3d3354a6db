//! The `ode` stage: lowering of the syntax tree to an exact linear ODE, its
//! normal form, and changes of variable. Input is a parsed program; output
//! is a [`Reduction`], consumed by the later stages and by the CLI.

mod lower;
mod normal;
mod quasi;
mod transform;

pub use lower::{lower_program_mapped, ExpMap, LinearOde, MapForm, MapRequest, NameMode};
pub use normal::{linear_root, normal_form, normal_q, prefactor, prefactor_text, NormalForm, Prefactor};
pub use transform::{change_variable, schrodinger, schwarzian, transform_q};

pub(crate) use lower::lower_rational;
pub(crate) use normal::laurent_at;

use crate::algebra::{Field, Limits, RatFunc};
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::syntax::{self, Ident, ParseLimits, Program, Span, Statement};

/// Where the equation text comes from and how names are treated.
#[derive(Clone, Debug)]
pub enum Input<'a> {
    /// A whole program (a file or stdin): every name must be declared.
    Program(&'a str),
    /// LaTeX mathematics (`grammar/latex.md`): definitions become lets, the
    /// variable comes from the derivatives, other names become parameters.
    Latex(&'a str),
    /// A bare equation `LHS = RHS` in the named variable; other names become parameters.
    Inline {
        /// The equation text.
        equation: &'a str,
        /// The independent variable.
        var: &'a str,
    },
}

/// Options of a reduction.
#[derive(Clone, Debug, Default)]
pub struct ReduceOptions {
    /// `OLD=EXPR`: substitute the variable by a rational expression in a new variable.
    pub subst: Option<String>,
    /// Look at the point at infinity: z = 1/t.
    pub at_infinity: bool,
    /// dx/dz for the Schrödinger form, as an expression in the equation's variable and lets.
    pub dxdz: Option<String>,
    /// The name of the frequency parameter ω in V = ω² − W.
    pub frequency: Option<String>,
    /// `NEW=exp(ARG)`: the change of variable that makes transcendental coefficients rational, named by the user.
    pub map: Option<String>,
    /// Bounds on exact computations.
    pub limits: Limits,
    /// Bounds on parsing.
    pub parse_limits: ParseLimits,
}

/// A change of the independent variable that was applied.
#[derive(Clone, Debug)]
pub struct Change {
    /// The original variable.
    pub old_var: String,
    /// The new variable.
    pub new_var: String,
    /// old = g(new).
    pub g: RatFunc,
    /// The Schwarzian {g, new}.
    pub schwarzian: RatFunc,
}

/// The Schrödinger form φ_xx + (ω² − V) φ = 0 for a given dx/dz.
#[derive(Clone, Debug)]
pub struct Schrodinger {
    /// dx/dz.
    pub dxdz: RatFunc,
    /// W with φ_xx + W φ = 0.
    pub w: RatFunc,
    /// V = ω² − W.
    pub v: RatFunc,
    /// The frequency parameter used, if any.
    pub frequency: Option<String>,
    /// True when V still depends on the frequency (an energy-dependent potential).
    pub v_depends_on_frequency: bool,
}

/// Everything `reduce` derives.
#[derive(Debug)]
pub struct Reduction {
    /// The lowered equation (after any change of variable, p and q are the new ones).
    pub ode: LinearOde,
    /// The field in which `p`, `q` and the normal form live (variable 0 may be the new variable).
    pub field: Field,
    /// The variable name of `field`'s variable 0.
    pub var: String,
    /// Standard-form coefficients in `var`.
    pub p: RatFunc,
    /// Standard-form coefficients in `var`.
    pub q: RatFunc,
    /// The normal form in `var`.
    pub normal: NormalForm,
    /// The change of variable, when one was asked for.
    pub change: Option<Change>,
    /// The Schrödinger form, when dx/dz was given.
    pub schrodinger: Option<Schrodinger>,
    /// The change of variable that made transcendental coefficients
    /// rational, when one was applied while lowering (the equation is then in
    /// its new variable).
    pub map: Option<ExpMap>,
    /// After parameter values were substituted: Q of the normal form with
    /// its parameters still symbolic. Its singular points are those of the
    /// family of equations; one that a value makes ordinary (r = 0 of a
    /// radial equation at l = 0) is still where the domain ends.
    pub family: Option<RatFunc>,
}

/// Parses and lowers an input, making transcendental coefficients rational
/// by an exponential change of variable (the one `map` names, `NEW=exp(ARG)`,
/// or the automatic choice); returns the map that was applied.
pub fn lower_mapped(input: &Input<'_>, limits: &Limits, parse_limits: &ParseLimits, map: Option<&str>) -> Result<(LinearOde, Option<ExpMap>)> {
    let request = map.map(|m| map_request(m, parse_limits)).transpose()?;
    let request = request.as_ref();
    match input {
        Input::Program(src) => {
            let program = syntax::parse_program(src, parse_limits)?;
            lower_program_mapped(&program, NameMode::Strict, limits, request)
        }
        Input::Latex(src) => {
            let program = syntax::parse_latex(src, parse_limits)?;
            lower_program_mapped(&program, NameMode::Infer, limits, request)
        }
        Input::Inline { equation, var } => {
            let (lhs, rhs, span) = syntax::parse_equation(equation, parse_limits)?;
            let var = inline_variable(var, &[&lhs, &rhs]);
            let program = Program { statements: vec![Statement::Var(Ident { name: var, span: Span::new(0, 0) }), Statement::Ode { lhs, rhs, span }] };
            lower_program_mapped(&program, NameMode::Infer, limits, request)
        }
    }
}

/// Reads `NEW=exp(ARG)` (the `--map` option).
fn map_request(text: &str, parse_limits: &ParseLimits) -> Result<MapRequest> {
    let usage = || {
        Error::new(ErrorKind::Usage, "expected NEW=exp(ARG), e.g. zeta=exp(2*alpha*x)")
            .in_option(RequestInput::Map)
            .at(Span::new(0, text.len().max(1)))
    };
    let eq = text.find('=').ok_or_else(usage)?;
    let name = text[..eq].trim();
    if name.is_empty() || !name.chars().next().is_some_and(char::is_alphabetic) || !name.chars().all(|c| c.is_alphanumeric() || c == '_') {
        return Err(usage());
    }
    let offset = eq + 1;
    let expr = syntax::parse_expr(&text[offset..], parse_limits).map_err(|e| e.moved_by(offset).in_option(RequestInput::Map))?;
    let syntax::ExprKind::Call(syntax::Func::Exp, arg) = expr.kind else { return Err(usage()) };
    let mut exponent = *arg;
    shift_expr(&mut exponent, offset);
    Ok(MapRequest { new_var: name.to_string(), exponent })
}

/// Moves every span of an expression by `offset` bytes.
fn shift_expr(e: &mut syntax::Expr, offset: usize) {
    use syntax::ExprKind;
    e.span = Span::new(e.span.start + offset, e.span.end + offset);
    match &mut e.kind {
        ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Prime(a, _) | ExprKind::Call(_, a) => shift_expr(a, offset),
        ExprKind::Derivative { body, wrt, .. } => {
            wrt.span = Span::new(wrt.span.start + offset, wrt.span.end + offset);
            shift_expr(body, offset);
        }
        ExprKind::Binary(_, a, b) => {
            shift_expr(a, offset);
            shift_expr(b, offset);
        }
        _ => {}
    }
}

/// The map as text: `zeta = exp(c*x)` in the input language.
pub fn exp_map_text(map: &ExpMap, ode: &LinearOde) -> String {
    let mut names = vec![map.new_var.clone()];
    names.extend(ode.params.iter().cloned());
    let half = RatFunc::rat(&crate::algebra::Rat::new(1.into(), 2.into()).expect("nonzero"));
    // tanh(c x/2); tan(k x/2) and cos(k x) with k = c/i = −ic.
    let minus_half_i = RatFunc::constant(&crate::algebra::GRat {
        re: crate::algebra::Rat::zero(),
        im: crate::algebra::Rat::new((-1).into(), 2.into()).expect("nonzero"),
    });
    let (c, function) = match map.form {
        MapForm::Exp => (map.c.clone(), "exp"),
        MapForm::Tanh => (ode.field.mul(&map.c, &half).unwrap_or_else(|_| map.c.clone()), "tanh"),
        MapForm::Tan => (ode.field.mul(&map.c, &minus_half_i).unwrap_or_else(|_| map.c.clone()), "tan"),
        MapForm::Cos => {
            let minus_i = RatFunc::constant(&crate::algebra::GRat { re: crate::algebra::Rat::zero(), im: crate::algebra::Rat::int((-1).into()) });
            (ode.field.mul(&map.c, &minus_i).unwrap_or_else(|_| map.c.clone()), "cos")
        }
    };
    let c = crate::algebra::print::ratfunc_text(&c, &names, crate::algebra::print::Style::Text);
    let times = match c.as_str() {
        "1" => String::new(),
        "-1" => "-".to_string(),
        _ if c.contains(['+', '/']) || c[1..].contains('-') => format!("({c})*"),
        _ => format!("{c}*"),
    };
    let mut old_names = vec![map.old_var.clone()];
    old_names.extend(ode.params.iter().cloned());
    let x0 = crate::algebra::print::ratfunc_text(&map.shift, &old_names, crate::algebra::print::Style::Text);
    let arg = crate::algebra::print::shifted(&map.old_var, &x0, crate::algebra::print::Style::Text);
    let arg = match (times.is_empty(), arg.strip_prefix('(').and_then(|a| a.strip_suffix(')'))) {
        (true, Some(inner)) => inner.to_string(),
        _ => arg,
    };
    format!("{} = {function}({times}{arg})", map.new_var)
}

/// The variable of an inline equation: the one named (by `--var` or its
/// default) when it occurs, otherwise the one name all Leibniz derivatives
/// are taken with respect to, when there is exactly one.
fn inline_variable(named: &str, exprs: &[&syntax::Expr]) -> String {
    let mut names = Vec::new();
    let mut wrt = Vec::new();
    for e in exprs {
        collect_expr_names(e, &mut names);
        collect_wrt(e, &mut wrt);
    }
    wrt.sort();
    wrt.dedup();
    if names.iter().any(|n| n == named) || wrt.len() != 1 {
        return named.to_string();
    }
    wrt.remove(0)
}

/// The names Leibniz derivatives are taken with respect to.
pub(crate) fn collect_wrt(e: &syntax::Expr, out: &mut Vec<String>) {
    use syntax::ExprKind;
    match &e.kind {
        ExprKind::Derivative { body, wrt, .. } => {
            out.push(wrt.name.clone());
            collect_wrt(body, out);
        }
        ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Prime(a, _) | ExprKind::Call(_, a) => collect_wrt(a, out),
        ExprKind::Binary(_, a, b) => {
            collect_wrt(a, out);
            collect_wrt(b, out);
        }
        _ => {}
    }
}

/// A fresh name not among `taken`, starting from `want` (a trailing `_`
/// added until it is free): the one way new symbols are named.
pub(crate) fn fresh_name(want: &str, taken: &[String]) -> String {
    let mut name = want.to_string();
    while taken.contains(&name) {
        name.push('_');
    }
    name
}

/// Reads `text`, an expression in the reduced equation's variable and
/// parameters (and its `let` names), as an exact rational function of the
/// reduction's field: how a point or a map that a user writes beside an
/// equation becomes exact. Spans of errors are byte ranges of `text`.
pub fn read_expression(red: &Reduction, text: &str) -> Result<RatFunc> {
    let expr = syntax::parse_expr(text, &ParseLimits::default())?;
    let mut names = vec![red.var.clone()];
    names.extend(red.ode.params.iter().cloned());
    lower_rational(&red.field, &names, &red.ode.lets, &expr)
}

/// The whole `reduce` derivation: lower, optionally change variable, normal form, Schrödinger form.
pub fn reduce(input: &Input<'_>, opts: &ReduceOptions) -> Result<Reduction> {
    let (ode, map) = lower_mapped(input, &opts.limits, &opts.parse_limits, opts.map.as_deref())?;
    let mut names: Vec<String> = vec![ode.var.clone()];
    names.extend(ode.params.iter().cloned());
    let mut field = Field::new(names.clone(), opts.limits.clone())?;
    let (mut p, mut q) = (ode.p.clone(), ode.q.clone());
    let mut var = ode.var.clone();
    let mut change = None;
    let subst = if opts.at_infinity {
        let t = fresh_name("t", &names);
        Some((format!("{}=1/{t}", ode.var), RequestInput::AtInfinity, Some(t)))
    } else {
        opts.subst.clone().map(|s| (s, RequestInput::Subst, None))
    };
    if let Some((text, option, _)) = subst {
        let Some(eq) = text.find('=') else {
            return Err(Error::new(ErrorKind::Usage, format!("expected OLD=EXPR, e.g. {}=1/t", ode.var))
                .in_option(option)
                .at(Span::new(0, text.len())));
        };
        let (lhs, rhs) = (text[..eq].trim(), &text[eq + 1..]);
        if lhs != ode.var {
            return Err(Error::new(ErrorKind::Usage, format!("the left side must be the equation's variable '{}'", ode.var))
                .at(Span::new(0, eq))
                .in_option(option)
                .note(format!("write {}=EXPR with EXPR rational in a new variable", ode.var)));
        }
        let offset = eq + 1;
        let expr = syntax::parse_expr(rhs, &opts.parse_limits).map_err(|e| e.moved_by(offset).in_option(option))?;
        // The new variable: the one name in EXPR that is not a parameter.
        let mut found = Vec::new();
        collect_expr_names(&expr, &mut found);
        let mut new_vars: Vec<String> = found.into_iter().filter(|n| !ode.params.contains(n)).collect();
        new_vars.dedup();
        new_vars.sort();
        new_vars.dedup();
        if new_vars.len() != 1 {
            return Err(Error::new(
                ErrorKind::Usage,
                format!(
                    "the expression must use exactly one new variable besides the parameters, found {}",
                    if new_vars.is_empty() { "none".to_string() } else { new_vars.join(", ") }
                ),
            )
            .at(Span::new(offset, text.len()))
            .in_option(option));
        }
        let new_var = new_vars.remove(0);
        let mut new_names = vec![new_var.clone()];
        new_names.extend(ode.params.iter().cloned());
        let new_field = Field::new(new_names.clone(), opts.limits.clone())?;
        let g = lower_rational(&new_field, &new_names, &[], &expr).map_err(|e| e.moved_by(offset).in_option(option))?;
        if !g.uses_var(0) {
            return Err(Error::new(ErrorKind::Usage, "the substitution does not depend on the new variable")
                .at(Span::new(offset, text.len()))
                .in_option(option));
        }
        let (pt, qt) = change_variable(&new_field, &p, &q, &g).map_err(|e| e.in_option(option))?;
        let schw = schwarzian(&new_field, &g)?;
        change = Some(Change { old_var: ode.var.clone(), new_var: new_var.clone(), g, schwarzian: schw });
        p = pt;
        q = qt;
        field = new_field;
        var = new_var;
    }
    let normal = normal_form(&field, &p, &q)?;
    let mut schrod = None;
    if let Some(text) = &opts.dxdz {
        let option = RequestInput::Dxdz;
        let expr = syntax::parse_expr(text, &opts.parse_limits).map_err(|e| e.in_option(option))?;
        let mut fnames = vec![var.clone()];
        fnames.extend(ode.params.iter().cloned());
        let lets: &[(String, RatFunc)] = if change.is_none() { &ode.lets } else { &[] };
        let h = lower_rational(&field, &fnames, lets, &expr).map_err(|e| e.in_option(option))?;
        let freq_name = match &opts.frequency {
            Some(f) => Some(f.clone()),
            None => ["omega", "ω", "w"].iter().find(|n| ode.params.iter().any(|p| p == *n)).map(|s| s.to_string()),
        };
        let freq_idx = match &freq_name {
            Some(f) => Some(ode.params.iter().position(|p| p == f).map(|i| i + 1).ok_or_else(|| {
                Error::new(ErrorKind::Usage, format!("'{f}' is not a parameter of the equation")).in_option(RequestInput::Frequency)
            })?),
            None => None,
        };
        let (w, v) = schrodinger(&field, &p, &q, &h, freq_idx)?;
        let dep = freq_idx.is_some_and(|i| v.uses_var(i));
        schrod = Some(Schrodinger { dxdz: h, w, v, frequency: freq_name, v_depends_on_frequency: dep });
    }
    Ok(Reduction { ode, field, var, p, q, normal, change, schrodinger: schrod, map, family: None })
}

fn collect_expr_names(e: &syntax::Expr, out: &mut Vec<String>) {
    use syntax::ExprKind;
    match &e.kind {
        ExprKind::Name(n) => out.push(n.clone()),
        ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Prime(a, _) | ExprKind::Call(_, a) | ExprKind::Derivative { body: a, .. } => {
            collect_expr_names(a, out)
        }
        ExprKind::Binary(_, a, b) => {
            collect_expr_names(a, out);
            collect_expr_names(b, out);
        }
        _ => {}
    }
}
