//! Lowering: from the syntax tree to a linear ODE a2·y'' + a1·y' + a0·y = 0
//! with exact rational coefficients, and from there to the standard form
//! y'' + p y' + q y = 0. Checks every rule of the input language that is not
//! pure syntax: declarations, the unknown, linearity, homogeneity, order and
//! rationality, each with the span of the offending text.

use super::quasi::{Atoms, Quasi};
use crate::algebra::{Field, GRat, Limits, Rat, RatFunc};
use crate::error::{Error, ErrorKind, RequestInput, Result};
use crate::syntax::{BinOp, Expr, ExprKind, Func, Ident, Program, Span, Statement};
use std::collections::BTreeMap;

/// The highest derivative order tracked while lowering (the equation itself
/// must be of order exactly two; the slack gives a clear message for y''').
const MAX_ORDER: usize = 4;

/// A linear second-order ODE in standard form, exact.
#[derive(Debug)]
pub struct LinearOde {
    /// The field of rational functions: variable 0 is the independent variable, then the parameters.
    pub field: Field,
    /// The independent variable's name.
    pub var: String,
    /// The unknown function's name.
    pub unknown: String,
    /// Parameter names in declaration order.
    pub params: Vec<String>,
    /// Parameters that were not declared but inferred (inline mode only).
    pub inferred: Vec<String>,
    /// Coefficient of y' after dividing by the coefficient of y''.
    pub p: RatFunc,
    /// Coefficient of y after dividing by the coefficient of y''.
    pub q: RatFunc,
    /// The `let` definitions that are rational functions of the variable, in order (for display).
    pub lets: Vec<(String, RatFunc)>,
}

/// How undeclared names are treated.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NameMode {
    /// Every name must be declared (files).
    Strict,
    /// Undeclared names other than the unknown become parameters (inline `-e`).
    Infer,
}

/// A lowered expression: a part free of the unknown plus coefficients of
/// y, y', y'', ...
#[derive(Clone, Debug, Default)]
struct Value {
    free: Quasi,
    lin: Vec<Quasi>,
}

impl Value {
    fn is_linear_free(&self) -> bool {
        self.lin.iter().all(Quasi::is_zero)
    }
    fn constant(q: Quasi) -> Value {
        Value { free: q, lin: Vec::new() }
    }
}

struct Lowerer<'a> {
    field: Field,
    atoms: Atoms,
    lets: BTreeMap<String, (Value, Span)>,
    params: &'a [String],
    var: &'a str,
    unknown: &'a str,
    /// The exponential map in force, when the equation has transcendental
    /// coefficients: field variable 0 is then ζ = e^(c·x), not x.
    map: Option<&'a Chain>,
    /// Declared coordinates X with d/dX = factor · d/d(var).
    coords: Vec<(String, Value)>,
}

/// The exponential change of variable ζ = e^(c·x) while lowering: `c` is
/// free of the variable; `slopes` holds each function argument's slope a
/// (the argument is a·x), found by the argument's span.
struct Chain {
    c: RatFunc,
    slopes: Vec<(Span, RatFunc)>,
}

/// Which variable the map finally gives: ζ itself, or a half-angle variable
/// rational in ζ with no more singular points, real on the real x-axis.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MapForm {
    /// ζ = e^(c·x).
    Exp,
    /// u = (ζ − 1)/(ζ + 1) = tanh(c·x/2), c real: the real line onto (−1, 1).
    Tanh,
    /// u = −i(ζ − 1)/(ζ + 1) = tan(k·x/2) with c = ik imaginary: for
    /// trigonometric coefficients with poles on the real axis (not a
    /// periodic problem), whose points x = 0 and x = π/k go to u = 0 and ∞.
    Tan,
    /// w = (ζ + 1/ζ)/2 = cos(k·x) with c = ik imaginary: for an equation
    /// even in x (unchanged by ζ → 1/ζ) with poles at x = 0 and π/k, the
    /// interval between them onto (−1, 1) once, ζ = 0 and ∞ together at
    /// w = ∞ (the polar angle's cos θ).
    Cos,
}

/// A change of variable ζ = e^(c·x) that made transcendental coefficients rational.
#[derive(Clone, Debug)]
pub struct ExpMap {
    /// The variable the equation was written in (x).
    pub old_var: String,
    /// The new variable (ζ).
    pub new_var: String,
    /// c in ζ = e^(c·x), in the new field (free of the variable; may hold I).
    pub c: RatFunc,
    /// The variable the equation was finally written in.
    pub form: MapForm,
    /// x₀ of ζ = e^(c(x − x₀)) when the arguments were written a·x + b (in the
    /// old field, free of x; zero otherwise).
    pub shift: RatFunc,
}

/// A map asked for by name: `NEW=exp(ARG)` with ARG a multiple of the variable.
#[derive(Clone, Debug)]
pub struct MapRequest {
    /// The new variable's name.
    pub new_var: String,
    /// The exponent ARG (spans into the request's text).
    pub exponent: Expr,
}

fn err(kind: ErrorKind, msg: impl Into<String>, span: Span) -> Error {
    Error::new(kind, msg).at(span)
}

/// The field, p and q of a lowered equation, and the lets that are constants.
type Lowered = (Field, RatFunc, RatFunc, Vec<(String, RatFunc)>);

/// Lowers a parsed program whose coefficients may hold exp, sinh, cosh,
/// tanh, sech (or sin, cos, tan) of multiples of the variable: those are made
/// rational by ζ = e^(c·x) (the requested map, or the first of c = 2g, g —
/// g the common step of the arguments, times i for trigonometric ones — that
/// leaves no fractional power), and the result is the equation in ζ.
pub fn lower_program_mapped(program: &Program, mode: NameMode, limits: &Limits, request: Option<&MapRequest>) -> Result<(LinearOde, Option<ExpMap>)> {
    let mut decl = read_declarations(program)?;
    let unknown = find_unknown(&decl)?;
    // Inline mode: undeclared names become parameters, in order of appearance.
    let inferred = if mode == NameMode::Infer { infer_parameters(program, &mut decl, &unknown) } else { Vec::new() };
    let param_names: Vec<String> = decl.params.iter().map(|(n, _)| n.clone()).collect();
    let mut names = vec![decl.var.clone()];
    names.extend(param_names.iter().cloned());
    let field = Field::new(names.clone(), limits.clone()).map_err(|e| e.or_at(decl.params.last().map(|p| p.1).unwrap_or(decl.ode_span)))?;
    let calls = function_calls(program, &decl);
    let lowering = Lowering { program, param_names, var: decl.var.clone(), unknown, lhs: decl.lhs, rhs: decl.rhs, ode_span: decl.ode_span };
    if calls.is_empty() && request.is_none() {
        let (field, p, q, lets) = lowering.lower(field, None)?;
        let Lowering { var, unknown, param_names, .. } = lowering;
        return Ok((LinearOde { field, var, unknown, params: param_names, inferred, p, q, lets }, None));
    }
    // The new variable's name avoids every name of the program: the
    // variable, the parameters, the unknown and the lets.
    let mut taken = names.clone();
    taken.push(lowering.unknown.clone());
    taken.extend(decl.let_names.iter().map(|(n, _)| n.clone()));
    let plan = plan_map(&field, &names, &taken, &calls, request)?;
    lower_through_map(&lowering, &plan, &taken, inferred, limits, request.is_some())
}

/// The statements of a program, checked for their structure: one variable,
/// one equation, at most one unknown, no name declared twice.
struct Declarations<'a> {
    var: String,
    params: Vec<(String, Span)>,
    unknown: Option<(String, Span)>,
    let_names: Vec<(String, Span)>,
    lhs: &'a Expr,
    rhs: &'a Expr,
    ode_span: Span,
}

impl Declarations<'_> {
    /// True for the variable, a parameter or a let.
    fn known(&self, n: &str) -> bool {
        n == self.var || self.params.iter().any(|(p, _)| p == n) || self.let_names.iter().any(|(l, _)| l == n)
    }
}

/// What an earlier statement declared `name` as, and where.
fn declared(name: &str, params: &[(String, Span)], var: &Option<(String, Span)>, lets: &[(String, Span)]) -> Option<(&'static str, Span)> {
    params.iter().find(|(n, _)| n == name).map(|(_, s)| ("a parameter", *s)).or_else(|| {
        var.as_ref()
            .filter(|(n, _)| n == name)
            .map(|(_, s)| ("the variable", *s))
            .or_else(|| lets.iter().find(|(n, _)| n == name).map(|(_, s)| ("a let", *s)))
    })
}

/// Reads the program's statements in order into its declarations.
fn read_declarations(program: &Program) -> Result<Declarations<'_>> {
    let mut var: Option<(String, Span)> = None;
    let mut params: Vec<(String, Span)> = Vec::new();
    let mut unknown: Option<(String, Span)> = None;
    let mut ode: Option<(&Expr, &Expr, Span)> = None;
    let mut let_names: Vec<(String, Span)> = Vec::new();
    let twice = |name: &str, what: &str, span: Span| err(ErrorKind::Structure, format!("'{name}' is already declared as {what}"), span);
    for st in &program.statements {
        match st {
            Statement::Var(id) => {
                if var.is_some() {
                    return Err(err(ErrorKind::Structure, "a second 'var' statement: the equation has one independent variable", id.span));
                }
                if let Some((what, _)) = declared(&id.name, &params, &var, &let_names) {
                    return Err(twice(&id.name, what, id.span));
                }
                var = Some((id.name.clone(), id.span));
            }
            Statement::Param(ids) => {
                for id in ids {
                    if let Some((what, _)) = declared(&id.name, &params, &var, &let_names) {
                        return Err(twice(&id.name, what, id.span));
                    }
                    params.push((id.name.clone(), id.span));
                }
            }
            Statement::Let { name, .. } => {
                if let Some((what, _)) = declared(&name.name, &params, &var, &let_names) {
                    return Err(twice(&name.name, what, name.span));
                }
                let_names.push((name.name.clone(), name.span));
            }
            Statement::Unknown(id) => {
                if unknown.is_some() {
                    return Err(err(ErrorKind::Structure, "a second 'unknown' statement", id.span));
                }
                unknown = Some((id.name.clone(), id.span));
            }
            Statement::Coordinate { top, bottom, .. } => {
                for id in [top, bottom] {
                    if let Some((what, _)) = declared(&id.name, &params, &None, &let_names) {
                        return Err(twice(&id.name, what, id.span));
                    }
                }
            }
            Statement::Ode { lhs, rhs, span } => {
                if ode.is_some() {
                    return Err(err(ErrorKind::Structure, "a second 'ode' statement: a file holds one equation", *span));
                }
                ode = Some((lhs, rhs, *span));
            }
        }
    }
    let Some((lhs, rhs, ode_span)) = ode else {
        return Err(Error::new(ErrorKind::Structure, "no 'ode' statement: nothing to reduce").note("write the equation as: ode LHS = RHS"));
    };
    let Some((var, _)) = var else {
        return Err(Error::new(ErrorKind::Structure, "no 'var' statement: the independent variable is not named")
            .at(Span::new(ode_span.start, ode_span.start + 3))
            .note("add a line such as: var r"));
    };
    Ok(Declarations { var, params, unknown, let_names, lhs, rhs, ode_span })
}

/// The unknown: explicit, or the one name that carries primes in the equation.
fn find_unknown(d: &Declarations) -> Result<String> {
    let known = |n: &str| d.known(n);
    if let Some((u, s)) = &d.unknown {
        if known(u) {
            return Err(err(ErrorKind::Structure, format!("the unknown '{u}' is also declared as another name"), *s));
        }
        return Ok(u.clone());
    }
    let mut primed = Vec::new();
    collect_primed(d.lhs, &mut primed, &known);
    collect_primed(d.rhs, &mut primed, &known);
    primed.retain(|(n, _)| !known(n));
    if primed.is_empty() {
        // Only bracketed expressions are differentiated, as in
        // d/dx(x*w) or (x*w)': the unknown is among their names.
        collect_differentiated(d.lhs, false, &mut primed);
        collect_differentiated(d.rhs, false, &mut primed);
        primed.retain(|(n, _)| !known(n));
    }
    primed.dedup_by(|a, b| a.0 == b.0);
    let mut names: Vec<(String, Span)> = Vec::new();
    for p in primed {
        if !names.iter().any(|(n, _)| *n == p.0) {
            names.push(p);
        }
    }
    match names.len() {
        0 => Err(err(ErrorKind::NotSecondOrder, "no unknown function: no undeclared name carries a derivative (') in the equation", d.ode_span)
            .note("write the unknown with primes, e.g. y'' + q*y = 0, or name it with: unknown y")),
        1 => Ok(names.remove(0).0),
        _ => {
            let list: Vec<String> = names.iter().map(|(n, _)| format!("'{n}'")).collect();
            Err(err(ErrorKind::Structure, format!("more than one undeclared name carries a derivative: {}", list.join(", ")), names[1].1)
                .note("declare the others with 'param' or 'let', or name the unknown with: unknown NAME"))
        }
    }
}

/// Makes the undeclared names (but the unknown) parameters, in order of
/// appearance, and returns them.
fn infer_parameters(program: &Program, d: &mut Declarations, unknown: &str) -> Vec<String> {
    let mut names = Vec::new();
    for st in &program.statements {
        if let Statement::Let { value, .. } | Statement::Coordinate { rate: value, .. } = st {
            collect_names(value, &mut names);
        }
    }
    collect_names(d.lhs, &mut names);
    collect_names(d.rhs, &mut names);
    let mut inferred = Vec::new();
    let mut new_params = Vec::new();
    for (n, s) in names {
        if n != unknown && !d.known(&n) && !inferred.contains(&n) {
            new_params.push((n.clone(), s));
            inferred.push(n);
        }
    }
    d.params.extend(new_params);
    inferred
}

/// The calls of exp, sinh, … in the lets and the equation.
fn function_calls<'a>(program: &'a Program, d: &Declarations<'a>) -> Vec<(Func, &'a Expr, Span)> {
    let mut calls = Vec::new();
    for st in &program.statements {
        if let Statement::Let { value, .. } = st {
            collect_calls(value, &mut calls);
        }
    }
    collect_calls(d.lhs, &mut calls);
    collect_calls(d.rhs, &mut calls);
    calls
}

/// The equation's names and text, ready to be lowered into a field.
struct Lowering<'a> {
    program: &'a Program,
    param_names: Vec<String>,
    var: String,
    unknown: String,
    lhs: &'a Expr,
    rhs: &'a Expr,
    ode_span: Span,
}

impl Lowering<'_> {
    /// The equation lowered into `field`, through the exponential map's chain rule when one is given.
    fn lower(&self, field: Field, map: Option<&Chain>) -> Result<Lowered> {
        let mut lw = Lowerer {
            field,
            atoms: Atoms::default(),
            lets: BTreeMap::new(),
            params: &self.param_names,
            var: &self.var,
            unknown: &self.unknown,
            map,
            coords: Vec::new(),
        };
        let mut lets_out = Vec::new();
        for st in &self.program.statements {
            if let Statement::Let { name, value } = st {
                let v = lw.expr(value)?;
                if let (true, Some(r)) = (v.is_linear_free(), v.free.as_rat()) {
                    lets_out.push((name.name.clone(), r));
                }
                lw.lets.insert(name.name.clone(), (v, name.span));
            }
        }
        for st in &self.program.statements {
            if let Statement::Coordinate { top, bottom, rate, span } = st {
                lw.coordinate(top, bottom, rate, *span)?;
            }
        }
        let (p, q) = lw.equation(self.lhs, self.rhs, self.ode_span)?;
        Ok((lw.field, p, q, lets_out))
    }

    /// The lowered equation as a [`LinearOde`] in `var`.
    fn ode(&self, (field, p, q, lets): Lowered, var: String, inferred: &[String]) -> LinearOde {
        LinearOde { field, var, unknown: self.unknown.clone(), params: self.param_names.clone(), inferred: inferred.to_vec(), p, q, lets }
    }
}

/// The exponential map to try: the slopes of the arguments, the candidate
/// constants c of ζ = e^(c·x) in order, the common shift and the new name.
struct MapPlan {
    slopes: Vec<(Span, RatFunc)>,
    candidates: Vec<RatFunc>,
    shift: RatFunc,
    new_var: String,
}

/// The map that makes the calls rational (or the requested one).
fn plan_map(field: &Field, names: &[String], taken: &[String], calls: &[(Func, &Expr, Span)], request: Option<&MapRequest>) -> Result<MapPlan> {
    // The slope a of every argument a·x.
    let mut slopes = Vec::new();
    let mut shifts = Vec::new();
    let mut trig: Option<(bool, Span)> = None;
    for (func, arg, span) in calls {
        let (a, x0) = linear_slope(field, names, arg)?;
        shifts.push((arg.span, x0));
        match trig {
            Some((t, first)) if t != func.is_trigonometric() => {
                return Err(err(
                    ErrorKind::NotRational,
                    "hyperbolic (or exponential) and trigonometric functions together: no one change of variable makes both rational",
                    *span,
                )
                .note(format!("the first kind was written at byte {}", first.start)))
            }
            None => trig = Some((func.is_trigonometric(), *span)),
            _ => {}
        }
        slopes.push((arg.span, a));
    }
    let i_unit = RatFunc::constant(&GRat { re: Rat::zero(), im: Rat::one() });
    let candidates: Vec<RatFunc> = match request {
        Some(req) => {
            let (a, x0) = linear_slope(field, names, &req.exponent).map_err(|e| e.in_option(RequestInput::Map))?;
            shifts.push((req.exponent.span, x0));
            vec![a]
        }
        None => {
            let g = common_step(field, &slopes)?;
            let unit = if trig.is_some_and(|(t, _)| t) { field.mul(&g, &i_unit)? } else { g };
            let two = RatFunc::rat(&Rat::int(2.into()));
            vec![field.mul(&two, &unit)?, unit]
        }
    };
    let shift = common_shift(field, names, &shifts)?;
    let new_var = match request {
        Some(req) => {
            if taken.contains(&req.new_var) {
                return Err(Error::new(ErrorKind::Usage, format!("'{}' is already a name of the equation", req.new_var)).in_option(RequestInput::Map));
            }
            req.new_var.clone()
        }
        None => super::fresh_name("zeta", taken),
    };
    Ok(MapPlan { slopes, candidates, shift, new_var })
}

/// The equation in ζ = e^(c·x) for the first candidate c that lowers (or in
/// the half-angle variable tanh(c x/2), or tan(k x/2) for c = ik when the
/// coefficients have poles on the real axis, when that has no more singular
/// points and no map was requested).
fn lower_through_map(
    lowering: &Lowering,
    plan: &MapPlan,
    names: &[String],
    inferred: Vec<String>,
    limits: &Limits,
    requested: bool,
) -> Result<(LinearOde, Option<ExpMap>)> {
    let mut new_names = vec![plan.new_var.clone()];
    new_names.extend(lowering.param_names.iter().cloned());
    let mut last = None;
    // A half-angle form that folds its interval, kept in case the next
    // candidate does not lower.
    let mut folded: Option<(LinearOde, ExpMap)> = None;
    for (n, c) in plan.candidates.iter().enumerate() {
        let nf = Field::new(new_names.clone(), limits.clone())?;
        let chain = Chain { c: c.clone(), slopes: plan.slopes.clone() };
        match lowering.lower(nf, Some(&chain)) {
            Ok((nf, px, qx, lets)) => {
                // d/dx = h d/dζ with h = c ζ: y'' + (h'/h + p_x/h) y' + q_x/h² y = 0.
                let zeta = nf.var(0);
                let h = nf.mul(c, &zeta)?;
                let p = nf.add(&nf.inv(&zeta)?, &nf.div(&px, &h)?)?;
                let q = nf.div(&qx, &nf.mul(&h, &h)?)?;
                let real = c.as_constant().is_none_or(|k| k.im.is_zero()) && c.is_real();
                let imaginary = c.as_constant().is_some_and(|k| k.re.is_zero() && !k.im.is_zero());
                let form = if real {
                    Some(MapForm::Tanh)
                } else if imaginary && poles_off_zero(&nf, &p, &q)? {
                    Some(MapForm::Tan)
                } else {
                    None
                };
                if let (false, Some(MapForm::Tan)) = (requested, form) {
                    if let Some((ode, map)) = cos_form(lowering, plan, c, (&nf, &p, &q), names, &inferred, limits)? {
                        return Ok((ode, Some(map)));
                    }
                }
                if let (false, Some(form)) = (requested, form) {
                    if let Some((ode, map)) = half_angle_form(lowering, plan, c, form, (&nf, &p, &q), names, &inferred, limits)? {
                        // u = tan(kx/2) sends x = 0 to 0 and x = π/k to ∞. Where
                        // u = ∞ is an ordinary point, the coefficients' real
                        // poles lie π/k·2 apart (cot x, 1/sin²x with k = 2):
                        // the interval between two of them folds onto the
                        // half-line twice, and the half angle (the next
                        // candidate, k = 1) maps it one-to-one.
                        let folds = form == MapForm::Tan && n + 1 < plan.candidates.len() && ordinary_at_infinity(&ode.field, &ode.p, &ode.q)?;
                        if !folds {
                            return Ok((ode, Some(map)));
                        }
                        folded = Some((ode, map));
                        continue;
                    }
                }
                let map = ExpMap {
                    old_var: lowering.var.clone(),
                    new_var: plan.new_var.clone(),
                    c: c.clone(),
                    form: MapForm::Exp,
                    shift: plan.shift.clone(),
                };
                return Ok((lowering.ode((nf, p, q, lets), plan.new_var.clone(), &inferred), Some(map)));
            }
            Err(e) if e.kind == ErrorKind::NotRational && n + 1 < plan.candidates.len() => last = Some(e),
            Err(e) => {
                if let Some((ode, map)) = folded {
                    return Ok((ode, Some(map)));
                }
                return Err(e);
            }
        }
    }
    if let Some((ode, map)) = folded {
        return Ok((ode, Some(map)));
    }
    Err(last.unwrap_or_else(|| Error::new(ErrorKind::Internal, "no candidate map")))
}

/// The equation in the half-angle variable of `form` (u = (ζ − 1)/(ζ + 1)
/// = tanh(c x/2), or u = −i(ζ − 1)/(ζ + 1) = tan(k x/2) for c = ik), when
/// it has no more singular points than the one in ζ (`in_zeta`: its field,
/// p and q) and ζ = ∞ is not irregular.
#[allow(clippy::too_many_arguments)]
fn half_angle_form(
    lowering: &Lowering,
    plan: &MapPlan,
    c: &RatFunc,
    form: MapForm,
    in_zeta: (&Field, &RatFunc, &RatFunc),
    names: &[String],
    inferred: &[String],
    limits: &Limits,
) -> Result<Option<(LinearOde, ExpMap)>> {
    let (nf, p, q) = in_zeta;
    // An irregular point at ζ = ∞ (Q not O(ζ⁻²): e^(cx) unbounded in the
    // potential, as Morse's) would become a finite irregular point u = 1,
    // which the solvers' irregular end (at infinity) does not take: ζ stays.
    // (Under tan the points ζ = 0, ∞ go to u = ±i, off the real axis.)
    let qn = super::normal::normal_q(nf, p, q)?;
    if form == MapForm::Tanh && !qn.is_zero() && i64::from(qn.num().degree(0)) - i64::from(qn.den_expanded().degree(0)) >= -1 {
        return Ok(None);
    }
    let u_name = first_free(&["u", "v", "w", "s"], names);
    let mut u_names = vec![u_name.clone()];
    u_names.extend(lowering.param_names.iter().cloned());
    let tf = Field::new(u_names, limits.clone())?;
    let one = RatFunc::one();
    // ζ = (1 + u)/(1 − u) for tanh; ζ = (1 + iu)/(1 − iu) for tan. A slope
    // written negative (e^(−δr), parameters taken positive) is turned over,
    // u = tanh(|c|x/2) = (1 − ζ)/(1 + ζ), so that x > 0 lies at u > 0, where
    // the rightmost interval of the real singular points is.
    let flip = form == MapForm::Tanh && c.num().lead().is_some_and(|(_, k)| k.re.is_negative());
    let v = match form {
        MapForm::Tan => tf.mul(&RatFunc::constant(&GRat { re: Rat::zero(), im: Rat::one() }), &tf.var(0))?,
        MapForm::Tanh | MapForm::Exp | MapForm::Cos if flip => tf.neg(&tf.var(0)),
        MapForm::Tanh | MapForm::Exp | MapForm::Cos => tf.var(0),
    };
    let g = tf.div(&tf.add(&one, &v)?, &tf.sub(&one, &v)?)?;
    let (pu, qu) = super::transform::change_variable(&tf, p, q, &g)?;
    if singular_count(&tf, &pu, &qu)? > singular_count(nf, p, q)? {
        return Ok(None);
    }
    let c = if flip { nf.neg(c) } else { c.clone() };
    let map = ExpMap { old_var: lowering.var.clone(), new_var: u_name.clone(), c, form, shift: plan.shift.clone() };
    Ok(Some((lowering.ode((tf, pu, qu, Vec::new()), u_name, inferred), map)))
}

/// The equation in w = (ζ + 1/ζ)/2 = cos(kx) (c = ik), when it is
/// unchanged by ζ → 1/ζ (even in x) and both ζ = 1 and ζ = −1 are singular
/// points (x = 0 and π/k: where one is ordinary, the map would fold the
/// interval about it and make it a singular point the equation does not
/// have). With w' = dw/dζ = (ζ² − 1)/(2ζ²) and w'' = 1/ζ³:
/// y_ww + (w'' + p w')/w'² y_w + q/w'² y = 0.
fn cos_form(
    lowering: &Lowering,
    plan: &MapPlan,
    c: &RatFunc,
    in_zeta: (&Field, &RatFunc, &RatFunc),
    names: &[String],
    inferred: &[String],
    limits: &Limits,
) -> Result<Option<(LinearOde, ExpMap)>> {
    let (nf, p, q) = in_zeta;
    let qn = super::normal::normal_q(nf, p, q)?;
    let den = RatFunc::from_poly(qn.den_expanded());
    for end in [1, -1] {
        if !nf.compose(&den, 0, &RatFunc::rat(&Rat::int(end.into())))?.is_zero() {
            return Ok(None);
        }
    }
    let zeta = nf.var(0);
    let z2 = nf.mul(&zeta, &zeta)?;
    let w1 = nf.div(&nf.sub(&z2, &RatFunc::one())?, &nf.mul(&RatFunc::rat(&Rat::int(2.into())), &z2)?)?;
    let w2 = nf.inv(&nf.mul(&z2, &zeta)?)?;
    let w1sq = nf.mul(&w1, &w1)?;
    let pw = nf.div(&nf.add(&w2, &nf.mul(p, &w1)?)?, &w1sq)?;
    let qw = nf.div(q, &w1sq)?;
    let w_name = first_free(&["x", "w", "v"], names);
    let mut w_names = vec![w_name.clone()];
    w_names.extend(lowering.param_names.iter().cloned());
    let wf = Field::new(w_names, limits.clone())?;
    let (Some(pw), Some(qw)) = (super::transform::in_cosine(&wf, &pw)?, super::transform::in_cosine(&wf, &qw)?) else {
        return Ok(None);
    };
    let map = ExpMap { old_var: lowering.var.clone(), new_var: w_name.clone(), c: c.clone(), form: MapForm::Cos, shift: plan.shift.clone() };
    Ok(Some((lowering.ode((wf, pw, qw, Vec::new()), w_name, inferred), map)))
}

/// The first of `candidates` that is none of `names` (the first with
/// underscores appended when all are).
fn first_free(candidates: &[&str], names: &[String]) -> String {
    candidates.iter().find(|n| !names.iter().any(|m| m == *n)).map_or_else(|| super::fresh_name(candidates[0], names), |n| n.to_string())
}

/// Whether the point at infinity is an ordinary point of y'' + p y' + q y
/// = 0 (Q of the normal form O(z⁻⁴) there).
fn ordinary_at_infinity(field: &Field, p: &RatFunc, q: &RatFunc) -> Result<bool> {
    let qn = super::normal::normal_q(field, p, q)?;
    Ok(qn.is_zero() || i64::from(qn.num().degree(0)) - i64::from(qn.den_expanded().degree(0)) <= -4)
}

/// Whether the equation in ζ has a finite singular point other than ζ = 0
/// (for trigonometric coefficients: a pole on the real x-axis, so that the
/// problem is not a periodic one).
fn poles_off_zero(field: &Field, p: &RatFunc, q: &RatFunc) -> Result<bool> {
    let qn = super::normal::normal_q(field, p, q)?;
    let zeta = crate::algebra::Poly::var(0);
    Ok(qn.den_factors().iter().any(|(f, _)| f.poly().uses_var(0) && *f.poly() != zeta))
}

/// The number of singular points of y'' + p y' + q y = 0, infinity included
/// (an irreducible factor of degree n counts n): the measure by which the
/// simpler of two forms is chosen.
fn singular_count(field: &Field, p: &RatFunc, q: &RatFunc) -> Result<usize> {
    let qn = super::normal::normal_q(field, p, q)?;
    let finite: usize = qn.den_factors().iter().map(|(f, _)| f.poly().degree(0) as usize).sum();
    let d = i64::from(qn.num().degree(0)) - i64::from(qn.den_expanded().degree(0));
    Ok(finite + usize::from(!qn.is_zero() && d >= -3))
}

/// Every transcendental call: (function, argument, span of the call).
fn collect_calls<'e>(e: &'e Expr, out: &mut Vec<(Func, &'e Expr, Span)>) {
    match &e.kind {
        ExprKind::Call(f, a) => {
            out.push((*f, a, e.span));
            collect_calls(a, out);
        }
        ExprKind::Prime(a, _) | ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Derivative { body: a, .. } => collect_calls(a, out),
        ExprKind::Binary(_, a, b) => {
            collect_calls(a, out);
            collect_calls(b, out);
        }
        _ => {}
    }
}

/// The slope a and the shift x₀ of an argument that must be a·(x − x₀)
/// (a free of x and nonzero, x₀ free of x).
fn linear_slope(field: &Field, names: &[String], arg: &Expr) -> Result<(RatFunc, RatFunc)> {
    let v = lower_rational(field, names, &[], arg)?;
    let a = field.deriv(&v, 0)?;
    if a.uses_var(0) || a.is_zero() {
        let e = err(ErrorKind::NotRational, format!("the argument must be a nonzero multiple of '{}' (linear in it)", names[0]), arg.span);
        // A constant argument: e² read as Euler's number squared, where
        // the charge e was meant, is the usual way in.
        return Err(if a.is_zero() {
            e.note("the argument is a constant: e^{…} is read as the exponential function; if e is a charge, give it another name (q_e, e_0)")
        } else {
            e
        });
    }
    let rest = field.sub(&v, &field.mul(&a, &field.var(0))?)?;
    let shift = field.neg(&field.div(&rest, &a)?);
    Ok((a, shift))
}

/// The one shift x₀ every argument a·(x − x₀) shares (zero when none has a
/// constant part): with it the map is ζ = e^(c(x − x₀)), a translation of
/// the variable; different shifts have no common map.
fn common_shift(field: &Field, names: &[String], shifts: &[(Span, RatFunc)]) -> Result<RatFunc> {
    let Some((_, first)) = shifts.first() else { return Ok(RatFunc::zero()) };
    for (span, x0) in shifts {
        if field.sub(x0, first)?.is_zero() {
            continue;
        }
        return Err(err(
            ErrorKind::NotRational,
            format!("the arguments are shifted by different amounts along '{}': no one change of variable makes them all rational", names[0]),
            *span,
        )
        .note(format!("write every argument as a multiple of the same '{} − x0'", names[0])));
    }
    Ok(first.clone())
}

/// The largest step g with every slope an integer multiple of it (the first slope's sign).
fn common_step(field: &Field, slopes: &[(Span, RatFunc)]) -> Result<RatFunc> {
    let Some((_, first)) = slopes.first() else { return Err(Error::new(ErrorKind::Internal, "no slopes")) };
    let mut num = crate::algebra::Int::from(0);
    let mut den = crate::algebra::Int::from(1);
    for (span, a) in slopes {
        let ratio = field.div(a, first)?.as_constant().filter(|c| c.im.is_zero()).ok_or_else(|| {
            err(
                ErrorKind::NotRational,
                "arguments that are not rational multiples of one another: no one change of variable makes them all rational",
                *span,
            )
        })?;
        num = num.gcd(ratio.re.numer());
        let d = ratio.re.denom();
        den = den.mul(d).div_exact(&den.gcd(d)).unwrap_or_else(|| den.mul(d));
    }
    let step = Rat::new(num, den).ok_or_else(|| Error::new(ErrorKind::Internal, "zero denominator"))?;
    field.mul(first, &RatFunc::rat(&step))
}

/// The error for a transcendental function where no map is in force.
fn transcendental_here(f: Func, span: Span) -> Error {
    err(ErrorKind::NotRational, format!("{}(…) is not rational here", f.name()), span)
        .note("transcendental functions are read in the equation and its lets, where a change of variable makes them rational")
}

/// Names that carry a derivative: primed names and Leibniz derivatives of a
/// name. `known` tells declared names, so that a quotient `dA/dB` of two
/// declared names is skipped.
fn collect_primed(e: &Expr, out: &mut Vec<(String, Span)>, known: &dyn Fn(&str) -> bool) {
    match &e.kind {
        ExprKind::Prime(inner, _) => {
            if let ExprKind::Name(n) = &inner.kind {
                out.push((n.clone(), inner.span));
            }
            collect_primed(inner, out, known);
        }
        ExprKind::Derivative { body, wrt, order } => match &body.kind {
            ExprKind::Name(n) => {
                if !(*order == 1 && known(&format!("d{n}")) && known(&format!("d{}", wrt.name))) {
                    out.push((n.clone(), body.span));
                }
            }
            _ => collect_primed(body, out, known),
        },
        ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Call(_, a) => collect_primed(a, out, known),
        ExprKind::Binary(_, a, b) => {
            collect_primed(a, out, known);
            collect_primed(b, out, known);
        }
        _ => {}
    }
}

/// Every name inside a differentiated expression (`inside` once below a
/// prime or a Leibniz derivative).
fn collect_differentiated(e: &Expr, inside: bool, out: &mut Vec<(String, Span)>) {
    match &e.kind {
        ExprKind::Name(n) if inside => out.push((n.clone(), e.span)),
        ExprKind::Prime(a, _) | ExprKind::Derivative { body: a, .. } => collect_differentiated(a, true, out),
        ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Call(_, a) => collect_differentiated(a, inside, out),
        ExprKind::Binary(_, a, b) => {
            collect_differentiated(a, inside, out);
            collect_differentiated(b, inside, out);
        }
        _ => {}
    }
}

fn collect_names(e: &Expr, out: &mut Vec<(String, Span)>) {
    match &e.kind {
        ExprKind::Name(n) => out.push((n.clone(), e.span)),
        ExprKind::Prime(a, _) | ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Call(_, a) | ExprKind::Derivative { body: a, .. } => {
            collect_names(a, out)
        }
        ExprKind::Binary(_, a, b) => {
            collect_names(a, out);
            collect_names(b, out);
        }
        _ => {}
    }
}

/// A Leibniz derivative must be taken with respect to the equation's variable.
fn check_wrt(wrt: &Ident, var: &str) -> Result<()> {
    if wrt.name == var {
        return Ok(());
    }
    Err(err(ErrorKind::Structure, format!("a derivative with respect to '{}', but the equation's variable is '{var}'", wrt.name), wrt.span)
        .note(format!("derivatives are taken with respect to the variable: write d/d{var}, or make '{}' the variable", wrt.name)))
}

/// Splits a sum into its top-level terms with signs.
fn top_terms<'e>(e: &'e Expr, sign: bool, out: &mut Vec<(bool, &'e Expr)>) {
    match &e.kind {
        ExprKind::Binary(BinOp::Add, a, b) => {
            top_terms(a, sign, out);
            top_terms(b, sign, out);
        }
        ExprKind::Binary(BinOp::Sub, a, b) => {
            top_terms(a, sign, out);
            top_terms(b, !sign, out);
        }
        ExprKind::Neg(a) => top_terms(a, !sign, out),
        _ => out.push((sign, e)),
    }
}

impl<'a> Lowerer<'a> {
    fn k(&self) -> &Field {
        &self.field
    }

    fn equation(&mut self, lhs: &Expr, rhs: &Expr, span: Span) -> Result<(RatFunc, RatFunc)> {
        let mut terms = Vec::new();
        top_terms(lhs, true, &mut terms);
        top_terms(rhs, false, &mut terms);
        let mut total = Value::default();
        let mut free_spans = Vec::new();
        for (sign, t) in terms {
            let mut v = self.expr(t)?;
            if !sign {
                v = self.neg(&v);
            }
            if !v.free.is_zero() {
                free_spans.push(t.span);
            }
            total = self.add(&total, &v).map_err(|e| e.or_at(t.span))?;
        }
        if !total.free.is_zero() {
            let at = free_spans.first().copied().unwrap_or(span);
            return Err(err(
                ErrorKind::Inhomogeneous,
                format!("the equation is inhomogeneous: this term does not contain the unknown '{}'", self.unknown),
                at,
            )
            .note("canonode reduces homogeneous linear equations: every term must be proportional to the unknown or one of its derivatives"));
        }
        let order = total.lin.iter().rposition(|c| !c.is_zero());
        match order {
            None => return Err(err(ErrorKind::NotSecondOrder, format!("the unknown '{}' cancels out of the equation", self.unknown), span)),
            Some(0) | Some(1) => {
                return Err(err(
                    ErrorKind::NotSecondOrder,
                    format!("the equation is of order {} in '{}', not 2", order.unwrap_or(0), self.unknown),
                    span,
                )
                .note("canonode handles second-order equations"))
            }
            Some(2) => {}
            Some(n) => return Err(err(ErrorKind::NotSecondOrder, format!("the equation is of order {n} in '{}', not 2", self.unknown), span)),
        }
        let a2 = total.lin[2].clone();
        let a1 = total.lin.get(1).cloned().unwrap_or_default();
        let a0 = total.lin.first().cloned().unwrap_or_default();
        let inv = self.atoms.inv(&self.field, &a2, span).map_err(|e| {
            if e.kind == ErrorKind::NotRational {
                self.atoms.not_rational(
                    &self.field,
                    &a2,
                    span,
                    &format!("the coefficient of {}'' is not a rational function times a single power", self.unknown),
                )
            } else {
                e
            }
        })?;
        let p = self.atoms.mul(&self.field, &a1, &inv)?;
        let q = self.atoms.mul(&self.field, &a0, &inv)?;
        let p = p.as_rat().ok_or_else(|| {
            self.atoms.not_rational(
                &self.field,
                &p,
                span,
                &format!("the coefficient of {}' divided by that of {}'' is not rational in {}", self.unknown, self.unknown, self.var),
            )
        })?;
        let q = q.as_rat().ok_or_else(|| {
            self.atoms.not_rational(
                &self.field,
                &q,
                span,
                &format!("the coefficient of {} divided by that of {}'' is not rational in {}", self.unknown, self.unknown, self.var),
            )
        })?;
        Ok((p, q))
    }

    fn add(&self, a: &Value, b: &Value) -> Result<Value> {
        let k = self.k();
        let n = a.lin.len().max(b.lin.len());
        let mut lin = Vec::with_capacity(n);
        for i in 0..n {
            let x = a.lin.get(i).cloned().unwrap_or_default();
            let y = b.lin.get(i).cloned().unwrap_or_default();
            lin.push(x.add(k, &y)?);
        }
        Ok(Value { free: a.free.add(k, &b.free)?, lin })
    }

    fn neg(&self, a: &Value) -> Value {
        let k = self.k();
        Value { free: a.free.neg(k), lin: a.lin.iter().map(|c| c.neg(k)).collect() }
    }

    fn mul(&self, a: &Value, b: &Value, span: Span) -> Result<Value> {
        let k = self.k();
        let (lin_a, lin_b) = (!a.is_linear_free(), !b.is_linear_free());
        if lin_a && lin_b {
            return Err(err(
                ErrorKind::Nonlinear,
                format!("the equation is nonlinear in '{}': this product multiplies the unknown by itself", self.unknown),
                span,
            ));
        }
        let (c, v) = if lin_a { (b, a) } else { (a, b) };
        let free = self.atoms.mul(k, &c.free, &v.free)?;
        let mut lin = Vec::with_capacity(v.lin.len());
        for x in &v.lin {
            lin.push(self.atoms.mul(k, &c.free, x)?);
        }
        Ok(Value { free, lin })
    }

    fn deriv(&self, a: &Value, times: u32, span: Span) -> Result<Value> {
        let k = self.k();
        let mut v = a.clone();
        for _ in 0..times {
            let free = self.dx(&v.free)?;
            let mut lin: Vec<Quasi> = vec![Quasi::zero(); v.lin.len() + 1];
            for (i, c) in v.lin.iter().enumerate() {
                if c.is_zero() {
                    continue;
                }
                lin[i] = lin[i].add(k, &self.dx(c)?)?;
                lin[i + 1] = lin[i + 1].add(k, c)?;
            }
            while matches!(lin.last(), Some(c) if c.is_zero()) {
                lin.pop();
            }
            if lin.len() > MAX_ORDER {
                return Err(err(
                    ErrorKind::NotSecondOrder,
                    format!("derivatives of '{}' of order above {} are not supported", self.unknown, MAX_ORDER - 1),
                    span,
                ));
            }
            v = Value { free, lin };
        }
        Ok(v)
    }

    /// A coordinate declaration dX/dV = rate with V the variable (or dV/dX =
    /// rate): d/dX = (1/rate) d/dV (or rate · d/dV).
    fn coordinate(&mut self, top: &Ident, bottom: &Ident, rate: &Expr, span: Span) -> Result<()> {
        let v = self.expr(rate)?;
        if !v.is_linear_free() {
            return Err(err(ErrorKind::Nonlinear, format!("the unknown '{}' appears in a coordinate's rate", self.unknown), rate.span));
        }
        let (name, factor) = if bottom.name == self.var && top.name != self.var {
            if v.free.is_zero() {
                return Err(err(ErrorKind::DivisionByZero, "the rate of the coordinate is identically zero", rate.span));
            }
            (top.name.clone(), Value::constant(self.atoms.inv(&self.field, &v.free, rate.span)?))
        } else if top.name == self.var && bottom.name != self.var {
            (bottom.name.clone(), v)
        } else {
            return Err(err(
                ErrorKind::Structure,
                format!("a coordinate is declared against the variable '{}': dX/d{0} = … or d{0}/dX = …", self.var),
                span,
            ));
        };
        if self.coords.iter().any(|(n, _)| *n == name) {
            return Err(err(ErrorKind::Structure, format!("the coordinate '{name}' is declared twice"), span));
        }
        self.coords.push((name, factor));
        Ok(())
    }

    /// d/dx of a coefficient: d/dζ times dζ/dx = c ζ under an exponential map.
    fn dx(&self, a: &Quasi) -> Result<Quasi> {
        let k = self.k();
        let d = self.atoms.deriv(k, a)?;
        match self.map {
            None => Ok(d),
            Some(chain) => self.atoms.mul(k, &d, &Quasi::rat(k.mul(&chain.c, &k.var(0))?)),
        }
    }

    /// exp, sinh, … of a·x under the map ζ = e^(c·x): with E = ζ^κ,
    /// κ = a/c (i·a/c for sin, cos, tan), exp = E, sinh = (E² − 1)/(2E),
    /// cosh = (E² + 1)/(2E), tanh = (E² − 1)/(E² + 1), sech = 2E/(E² + 1),
    /// coth = 1/tanh, csch = 1/sinh; sin = sinh/i, cos = cosh, tan = tanh/i,
    /// cot = i·coth, csc = i·csch, sec = sech (of the argument times i).
    fn call(&mut self, f: Func, arg: &Expr, span: Span) -> Result<Value> {
        let Some(chain) = self.map else { return Err(transcendental_here(f, span)) };
        let k = &self.field;
        let Some((_, a)) = chain.slopes.iter().find(|(s, _)| *s == arg.span) else {
            return Err(Error::new(ErrorKind::Internal, "an argument without its slope"));
        };
        let i_unit = RatFunc::constant(&GRat { re: Rat::zero(), im: Rat::one() });
        let a = if f.is_trigonometric() { k.mul(a, &i_unit)? } else { a.clone() };
        let kappa = k.div(&a, &chain.c)?;
        if !kappa.as_constant().is_some_and(|c| c.im.is_zero()) {
            return Err(err(ErrorKind::NotRational, format!("{}(…) is not a power of the map's variable", f.name()), span));
        }
        let zeta = Quasi::rat(k.var(0));
        let e1 = self.atoms.pow(k, &zeta, &kappa, span)?;
        let e2 = self.atoms.pow(k, &zeta, &k.add(&kappa, &kappa)?, span)?;
        let one = Quasi::rat(RatFunc::one());
        let half = Quasi::rat(RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero")));
        let minus = e2.add(k, &one.neg(k))?;
        let plus = e2.add(k, &one)?;
        let inv_i = Quasi::rat(k.neg(&i_unit));
        let v = match f {
            Func::Exp => e1,
            Func::Sinh | Func::Sin | Func::Cosh | Func::Cos => {
                let top = if matches!(f, Func::Sinh | Func::Sin) { minus } else { plus };
                let inv_e1 = self.atoms.inv(k, &e1, span)?;
                let v = self.atoms.mul(k, &self.atoms.mul(k, &top, &inv_e1)?, &half)?;
                if f == Func::Sin {
                    self.atoms.mul(k, &v, &inv_i)?
                } else {
                    v
                }
            }
            Func::Tanh | Func::Tan => {
                let v = self.atoms.mul(k, &minus, &self.atoms.inv(k, &plus, span)?)?;
                if f == Func::Tan {
                    self.atoms.mul(k, &v, &inv_i)?
                } else {
                    v
                }
            }
            Func::Sech | Func::Sec | Func::Csch | Func::Csc => {
                let two = Quasi::rat(RatFunc::rat(&Rat::int(2.into())));
                let below = if matches!(f, Func::Sech | Func::Sec) { plus } else { minus };
                let v = self.atoms.mul(k, &self.atoms.mul(k, &two, &e1)?, &self.atoms.inv(k, &below, span)?)?;
                if f == Func::Csc {
                    self.atoms.mul(k, &v, &Quasi::rat(i_unit.clone()))?
                } else {
                    v
                }
            }
            Func::Coth | Func::Cot => {
                let v = self.atoms.mul(k, &plus, &self.atoms.inv(k, &minus, span)?)?;
                if f == Func::Cot {
                    self.atoms.mul(k, &v, &Quasi::rat(i_unit.clone()))?
                } else {
                    v
                }
            }
        };
        Ok(Value::constant(v))
    }

    fn expr(&mut self, e: &Expr) -> Result<Value> {
        let r = self.expr_inner(e);
        r.map_err(|x| x.or_at(e.span))
    }

    fn expr_inner(&mut self, e: &Expr) -> Result<Value> {
        match &e.kind {
            ExprKind::Number(text) => {
                let r = Rat::parse_decimal(text)
                    .ok_or_else(|| err(ErrorKind::Syntax, format!("'{text}' is not a number canonode can read exactly"), e.span))?;
                Ok(Value::constant(Quasi::rat(RatFunc::rat(&r))))
            }
            ExprKind::Imag => Ok(Value::constant(Quasi::rat(RatFunc::constant(&GRat { re: Rat::zero(), im: Rat::one() })))),
            ExprKind::Name(n) => self.name(n, e.span),
            ExprKind::Neg(a) => {
                let v = self.expr(a)?;
                Ok(self.neg(&v))
            }
            ExprKind::Binary(op, a, b) => {
                let x = self.expr(a)?;
                let y = self.expr(b)?;
                if matches!(op, BinOp::Mul | BinOp::Div | BinOp::Pow) {
                    // Operands of products and powers are the factors that later
                    // denominators are made of: remember them so that splitting
                    // a denominator starts from them instead of a gcd.
                    for v in [&x, &y] {
                        if let (true, Some(r)) = (v.is_linear_free(), v.free.as_rat()) {
                            if r.uses_var(0) {
                                self.field.add_hint(r.num())?;
                            }
                        }
                    }
                }
                match op {
                    BinOp::Add => self.add(&x, &y),
                    BinOp::Sub => {
                        let ny = self.neg(&y);
                        self.add(&x, &ny)
                    }
                    BinOp::Mul => self.mul(&x, &y, e.span),
                    BinOp::Div => {
                        if !y.is_linear_free() {
                            return Err(err(ErrorKind::Nonlinear, format!("the unknown '{}' appears in a denominator", self.unknown), b.span));
                        }
                        if y.free.is_zero() {
                            return Err(err(ErrorKind::DivisionByZero, "division by zero: the denominator is identically zero", b.span));
                        }
                        let inv = self.atoms.inv(&self.field, &y.free, b.span)?;
                        self.mul(&x, &Value::constant(inv), e.span)
                    }
                    BinOp::Pow => self.pow(&x, &y, a.span, b.span, e.span),
                }
            }
            ExprKind::Prime(a, n) => {
                if *n as usize > MAX_ORDER {
                    return Err(err(
                        ErrorKind::NotSecondOrder,
                        format!("a derivative of order {n} is not supported (the equation must be of order 2)"),
                        e.span,
                    ));
                }
                let v = self.expr(a)?;
                self.deriv(&v, *n, e.span)
            }
            ExprKind::Call(f, arg) => self.call(*f, arg, e.span),
            ExprKind::Derivative { body, wrt, order } => {
                if let Some(quotient) = self.leibniz_as_quotient(body, wrt, *order) {
                    return quotient;
                }
                if let Some(factor) = self.coords.iter().find(|(n, _)| *n == wrt.name).map(|(_, f)| f.clone()) {
                    // d/dX = factor · d/d(var), applied `order` times.
                    let mut v = self.expr(body)?;
                    for _ in 0..*order {
                        let d = self.deriv(&v, 1, e.span)?;
                        v = self.mul(&factor, &d, e.span)?;
                    }
                    return Ok(v);
                }
                check_wrt(wrt, self.var)?;
                let v = self.expr(body)?;
                self.deriv(&v, *order, e.span)
            }
            ExprKind::Sqrt(a) => {
                let x = self.expr(a)?;
                let half = Value::constant(Quasi::rat(RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("2 is nonzero"))));
                self.pow(&x, &half, a.span, a.span, e.span)
            }
        }
    }

    /// `dA/dB` written between two declared names that begin with `d` (and
    /// not with respect to the variable) is their quotient, as before
    /// Leibniz forms were read.
    fn leibniz_as_quotient(&self, body: &Expr, wrt: &Ident, order: u32) -> Option<Result<Value>> {
        let ExprKind::Name(n) = &body.kind else { return None };
        if order != 1 || wrt.name == self.var {
            return None;
        }
        let (top, bottom) = (format!("d{n}"), format!("d{}", wrt.name));
        let top_span = Span::new(body.span.start.saturating_sub(1), body.span.end);
        let bottom_span = Span::new(wrt.span.start.saturating_sub(1), wrt.span.end);
        let (Ok(x), Ok(y)) = (self.name(&top, top_span), self.name(&bottom, bottom_span)) else { return None };
        Some((|| {
            if !y.is_linear_free() {
                return Err(err(ErrorKind::Nonlinear, format!("the unknown '{}' appears in a denominator", self.unknown), bottom_span));
            }
            let inv = self.atoms.inv(&self.field, &y.free, bottom_span)?;
            self.mul(&x, &Value::constant(inv), top_span.to(bottom_span))
        })())
    }

    fn name(&self, n: &str, span: Span) -> Result<Value> {
        if n == self.var {
            if self.map.is_some() {
                return Err(err(
                    ErrorKind::NotRational,
                    format!("'{n}' itself occurs besides the transcendental functions: the change of variable that makes them rational leaves it a logarithm"),
                    span,
                ));
            }
            return Ok(Value::constant(Quasi::rat(self.field.var(0))));
        }
        if let Some(i) = self.params.iter().position(|p| p == n) {
            return Ok(Value::constant(Quasi::rat(self.field.var(i + 1))));
        }
        if let Some((v, _)) = self.lets.get(n) {
            return Ok(v.clone());
        }
        if n == self.unknown {
            return Ok(Value { free: Quasi::zero(), lin: vec![Quasi::rat(RatFunc::one())] });
        }
        let error = err(ErrorKind::UnknownName, format!("unknown name '{n}'"), span);
        if n == "i" || n == "j" {
            return Err(error.note("the imaginary unit is written I"));
        }
        Err(error.note("declare it with 'param', define it with 'let' before this line, or check the spelling"))
    }

    fn pow(&mut self, base: &Value, exp: &Value, bspan: Span, espan: Span, span: Span) -> Result<Value> {
        if !exp.is_linear_free() {
            return Err(err(ErrorKind::Nonlinear, format!("the unknown '{}' appears in an exponent", self.unknown), espan));
        }
        let Some(e) = exp.free.as_rat() else {
            return Err(self.atoms.not_rational(&self.field, &exp.free, espan, "an exponent must be a rational function of the parameters"));
        };
        if e.uses_var(0) {
            return Err(err(
                ErrorKind::NotRational,
                format!("the exponent depends on the variable '{}', so the power is not rational in it", self.var),
                espan,
            ));
        }
        if !base.is_linear_free() {
            // y^1 is fine; any other power of the unknown is not linear.
            if let Some(c) = e.as_constant() {
                if c == GRat::one() {
                    return Ok(base.clone());
                }
            }
            return Err(err(
                ErrorKind::Nonlinear,
                format!("the equation is nonlinear in '{}': the unknown is raised to a power", self.unknown),
                span,
            ));
        }
        let _ = bspan;
        let free = self.atoms.pow(&self.field, &base.free, &e, span)?;
        Ok(Value::constant(free))
    }
}

/// Lowers one expression free of the unknown (a command-line value such as a
/// change of variable or dx/dz) against an equation's names and `let`s.
pub(crate) fn lower_rational(field: &Field, names: &[String], lets: &[(String, RatFunc)], e: &Expr) -> Result<RatFunc> {
    // Names map to variables of `field` by position in `names`; lets by value.
    fn go(field: &Field, names: &[String], lets: &[(String, RatFunc)], atoms: &mut Atoms, e: &Expr) -> Result<Quasi> {
        let r = match &e.kind {
            ExprKind::Number(t) => {
                Quasi::rat(RatFunc::rat(&Rat::parse_decimal(t).ok_or_else(|| err(ErrorKind::Syntax, format!("'{t}' is not a number"), e.span))?))
            }
            ExprKind::Imag => Quasi::rat(RatFunc::constant(&GRat { re: Rat::zero(), im: Rat::one() })),
            ExprKind::Name(n) => {
                if let Some(i) = names.iter().position(|x| x == n) {
                    Quasi::rat(field.var(i))
                } else if let Some((_, v)) = lets.iter().find(|(x, _)| x == n) {
                    Quasi::rat(v.clone())
                } else {
                    return Err(err(ErrorKind::UnknownName, format!("unknown name '{n}'"), e.span));
                }
            }
            ExprKind::Neg(a) => go(field, names, lets, atoms, a)?.neg(field),
            ExprKind::Binary(op, a, b) => {
                let x = go(field, names, lets, atoms, a)?;
                let y = go(field, names, lets, atoms, b)?;
                match op {
                    BinOp::Add => x.add(field, &y)?,
                    BinOp::Sub => x.add(field, &y.neg(field))?,
                    BinOp::Mul => atoms.mul(field, &x, &y)?,
                    BinOp::Div => {
                        let inv = atoms.inv(field, &y, b.span)?;
                        atoms.mul(field, &x, &inv)?
                    }
                    BinOp::Pow => {
                        let ex = y
                            .as_rat()
                            .filter(|r| !r.uses_var(0))
                            .ok_or_else(|| err(ErrorKind::NotRational, "an exponent must be free of the variable", b.span))?;
                        atoms.pow(field, &x, &ex, e.span)?
                    }
                }
            }
            ExprKind::Prime(a, n) => {
                let mut v = go(field, names, lets, atoms, a)?;
                for _ in 0..*n {
                    v = atoms.deriv(field, &v)?;
                }
                v
            }
            ExprKind::Call(f, _) => return Err(transcendental_here(*f, e.span)),
            ExprKind::Derivative { body, wrt, order } => {
                check_wrt(wrt, &names[0])?;
                let mut v = go(field, names, lets, atoms, body)?;
                for _ in 0..*order {
                    v = atoms.deriv(field, &v)?;
                }
                v
            }
            ExprKind::Sqrt(a) => {
                let x = go(field, names, lets, atoms, a)?;
                atoms.pow(field, &x, &RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero")), e.span)?
            }
        };
        Ok(r)
    }
    let mut atoms = Atoms::default();
    let q = go(field, names, lets, &mut atoms, e).map_err(|x| x.or_at(e.span))?;
    q.as_rat().ok_or_else(|| atoms.not_rational(field, &q, e.span, "the expression is not a rational function"))
}
