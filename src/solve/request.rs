//! The spectrum workflow as one library call: a [`SpectrumRequest`] (what
//! was asked: the kind of spectrum, the ends, the parameter values, the
//! overtones, the method) goes in, a [`SpectrumReport`] (what was found,
//! with every piece of evidence and every choice made) comes out. The
//! command line and the Python package both call [`spectrum`] and render its
//! report with `emit::spectrum`, so their documents cannot drift apart.
//!
//! Method dispatch: bound states go to collocation (checked by shooting);
//! quasinormal modes from a horizon that do not end at a regular infinity go
//! to the exact recurrence's continued fraction (checked by direct
//! integration), or to WKB / eikonal estimates when asked; every other
//! boundary problem (de Sitter, anti-de Sitter, massive fields, `ends`) goes
//! to direct integration between its ends, as does a problem whose
//! continued fraction cannot be set up.

use super::boundary::{BoundaryProblem, Condition, Location, SpectrumKind};
use super::collocation::{BoundState, Domain};
use super::coupled::{Angular, CoupledValue, Link};
use super::ends::EndMode;
use super::integrate::IntRoot;
use super::modefn::Samples;
use super::shoot::BoundCheck;
use super::spectrum::{Mode, ModeMethod, Setup, SpectrumOptions};
use super::wkb::{BarrierEstimate, EikonalLimit};
use crate::algebra::GRat;
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;
use crate::syntax::Span;
use num_complex::Complex64;

/// Which spectrum (also the command line's `--boundary` values).
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Problem {
    /// Quasinormal modes: the wave leaves the domain through both ends.
    #[value(name = "qnm")]
    Quasinormal,
    /// Bound states: normalisable at both ends (real eigenvalues).
    Bound,
    /// Quasi-bound states: into the horizon, decaying at an irregular infinity.
    QuasiBound,
    /// Characteristic values of periodic coefficients: solutions of period
    /// T or 2T in the variable the equation was written in.
    Periodic,
}

impl Problem {
    /// The problem a physicist means when none is named: characteristic
    /// values when the coefficients are periodic in the real variable (a
    /// trigonometric map ζ = e^(iκx) made them rational), quasinormal modes
    /// otherwise.
    pub fn natural(red: &Reduction) -> Problem {
        // Any parameter values serve to tell an imaginary exponent from a real one.
        let ones = vec![Complex64::new(1.0, 0.0); red.field.names().len()];
        if matches!(super::periodic::trigonometric_kappa(red, &ones), Ok(Some(_))) {
            Problem::Periodic
        } else {
            Problem::Quasinormal
        }
    }
}

impl Problem {
    /// The short name used by `--boundary`, in JSON and in derivation records.
    pub fn tag(self) -> &'static str {
        match self {
            Problem::Quasinormal => "qnm",
            Problem::QuasiBound => "quasi-bound",
            Problem::Bound => "bound",
            Problem::Periodic => "periodic",
        }
    }

    /// The problem named `text` (one of [`Problem::tag`]).
    pub fn from_tag(text: &str) -> Option<Problem> {
        [Problem::Quasinormal, Problem::QuasiBound, Problem::Bound, Problem::Periodic].into_iter().find(|p| p.tag() == text)
    }
}

/// Which method (also the command line's `--method` values).
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Method {
    /// The continued fraction when the recurrence allows it, else direct integration; collocation for bound states.
    Auto,
    /// The continued fraction.
    Cf,
    /// Direct integration between the ends.
    Integrate,
    /// WKB estimates at the barrier top, Padé-resummed.
    Wkb,
    /// The eikonal (first-order) estimate.
    Eikonal,
    /// Chebyshev collocation (bound states).
    Collocation,
    /// The closed form alone (hypergeometric and confluent hypergeometric problems): exact values, no numeric check.
    Exact,
}

/// The angular side of a coupled solve (a separation constant shared by two equations).
#[derive(Debug)]
pub struct CoupleRequest {
    /// The angular equation, reduced.
    pub angular: Reduction,
    /// Its display name (a file name).
    pub name: String,
    /// The links between the equations, parsed.
    pub links: Vec<Link>,
    /// The links' texts as given (for the report).
    pub link_texts: Vec<String>,
    /// Which angular eigenvalue (0 the lowest).
    pub index: usize,
    /// A first value of the angular eigenvalue.
    pub guess: Option<Complex64>,
}

/// What a spectrum computation is asked for besides the equation.
#[derive(Debug)]
pub struct SpectrumRequest {
    /// The kind of spectrum.
    pub problem: Problem,
    /// The two ends and, optionally, their conditions (default: from the roles of the singular points).
    pub ends: Option<super::boundary::GivenEnds>,
    /// The spectral parameter when named; else the one parameter without a value, else a conventional name.
    pub frequency: Option<String>,
    /// Values of the other parameters: name, exact value, and the span of the assignment in the caller's text.
    pub values: Vec<(String, GRat, Span)>,
    /// Overtones, inclusive.
    pub overtones: (u32, u32),
    /// The method.
    pub method: Method,
    /// A seed for the lowest overtone.
    pub guess: Option<Complex64>,
    /// Relative tolerance on the eigenvalue.
    pub tol: f64,
    /// The WKB order of the barrier-top estimates.
    pub wkb_order: usize,
    /// With [`Method::Eikonal`]: the parameter whose large values give the eikonal limit.
    pub eikonal_param: Option<String>,
    /// Compute each converged mode's function; `Some(reach)` with an optional sampling reach for quasinormal modes.
    pub mode_functions: Option<Option<f64>>,
    /// An angular equation sharing the separation constant.
    pub couple: Option<CoupleRequest>,
    /// Derive the closed form of a solvable problem beside the numeric modes (a few milliseconds).
    pub closed_form: bool,
    /// Derive the condition for polynomial solutions of this degree
    /// (`solve::polynomial`); `--method exact` derives the lowest one
    /// whenever there is no closed form.
    pub polynomial: Option<super::polynomial::Degree>,
}

/// Each converged mode's function, sampled on the real axis.
#[derive(Debug)]
pub struct ModeFunctions {
    /// How the functions are normalised, in words.
    pub normalisation: &'static str,
    /// One entry per converged mode.
    pub modes: Vec<ModeFunction>,
}

/// One mode's function, with the second method's beside it where two methods ran.
#[derive(Debug)]
pub struct ModeFunction {
    /// Overtone (or level) number.
    pub n: u32,
    /// The function of the mode's value by its method.
    pub first: MethodFunction,
    /// The function by the second method (its own value, or its own
    /// construction), on the same samples; `None` where no second method ran.
    pub second: Option<MethodFunction>,
    /// The largest difference between the two functions over the samples,
    /// relative to the largest |ψ| of the first (`None` without a second
    /// function, or when either has no samples).
    pub difference: Option<f64>,
}

/// The numeric method that gave a mode's value or its function (a closed
/// set: every use is a `match`); [`NumericMethod::tag`] is its word in documents.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NumericMethod {
    /// The continued fraction of the exact recurrence.
    ContinuedFraction,
    /// The exact termination condition of a two-term recurrence.
    Terminating,
    /// Direct integration between the ends.
    Integrate,
    /// Shooting on a bound state's mismatch.
    Shooting,
    /// Chebyshev collocation (an eigenvector, or a collocation root).
    Collocation,
    /// The global spectral method.
    Spectral,
    /// The periodic route's truncated two-sided Laurent series (its null vector).
    Laurent,
    /// The periodic route's truncation, as the method of a characteristic value.
    Truncation,
    /// Integration once around the period (the monodromy).
    Monodromy,
    /// An algebraically special point of a recurrence, exact.
    SpecialPoint,
}

impl NumericMethod {
    /// The tag in documents ("cf", "terminating", "integrate", "shooting",
    /// "collocation", "spectral", "laurent", "truncation", "monodromy", "special").
    pub fn tag(self) -> &'static str {
        match self {
            NumericMethod::ContinuedFraction => "cf",
            NumericMethod::Terminating => "terminating",
            NumericMethod::Integrate => "integrate",
            NumericMethod::Shooting => "shooting",
            NumericMethod::Collocation => "collocation",
            NumericMethod::Spectral => "spectral",
            NumericMethod::Laurent => "laurent",
            NumericMethod::Truncation => "truncation",
            NumericMethod::Monodromy => "monodromy",
            NumericMethod::SpecialPoint => "special",
        }
    }
}

impl From<ModeMethod> for NumericMethod {
    fn from(m: ModeMethod) -> NumericMethod {
        match m {
            ModeMethod::ContinuedFraction => NumericMethod::ContinuedFraction,
            ModeMethod::Terminating => NumericMethod::Terminating,
            ModeMethod::Integrate => NumericMethod::Integrate,
            ModeMethod::SpecialPoint => NumericMethod::SpecialPoint,
        }
    }
}

impl From<CheckMethod> for NumericMethod {
    fn from(m: CheckMethod) -> NumericMethod {
        match m {
            CheckMethod::Spectral => NumericMethod::Spectral,
            CheckMethod::Collocation => NumericMethod::Collocation,
        }
    }
}

/// A function by one method.
#[derive(Debug)]
pub struct MethodFunction {
    /// The method.
    pub method: NumericMethod,
    /// The eigenvalue (or frequency) it was computed at.
    pub value: Complex64,
    /// The samples, or why there are none.
    pub samples: std::result::Result<Samples, String>,
}

impl ModeFunction {
    /// A mode's function, the second method's beside it, and their largest relative difference.
    pub fn new(n: u32, first: MethodFunction, second: Option<MethodFunction>) -> ModeFunction {
        let difference = match (&first.samples, second.as_ref().map(|s| &s.samples)) {
            (Ok(a), Some(Ok(b))) if a.len() == b.len() => {
                let big = a.iter().map(|s| s.1.norm()).fold(0.0, f64::max);
                let d = a.iter().zip(b).map(|(x, y)| (x.1 - y.1).norm()).fold(0.0, f64::max);
                (big > 0.0 && d.is_finite()).then(|| d / big)
            }
            _ => None,
        };
        ModeFunction { n, first, second, difference }
    }
}

/// Quasinormal modes from the exact recurrence (continued fraction or a terminating series).
#[derive(Debug)]
pub struct RecurrenceReport {
    /// The series set-up: horizon, ansatz, choices.
    pub setup: Setup,
    /// One mode per overtone asked for.
    pub modes: Vec<Mode>,
    /// The second method (direct integration) per mode, where it ran.
    pub checks: Vec<Option<IntRoot>>,
    /// Per mode, the relative distance from the value at which its check
    /// started where that is not the standard `spectrum::CHECK_OFFSET`
    /// (quasi-bound levels: `levels::check_offsets`); `None` for the standard.
    pub check_from: Vec<Option<f64>>,
    /// The WKB estimate per mode (shown beside the result; used as a seed only in the lower half-plane).
    pub wkb: Vec<Option<Complex64>>,
    /// The WKB order of those estimates.
    pub wkb_order: usize,
    /// For a coupled solve: the angular evidence per mode, the angular problem and the links as given.
    pub coupled: Option<CoupledReport>,
    /// Warnings about single modes, in words (a mode at a point where the recurrence degenerates).
    pub notes: Vec<String>,
}

/// The angular side of a coupled solve, for the report.
#[derive(Debug)]
pub struct CoupledReport {
    /// The angular equation's name.
    pub name: String,
    /// The angular problem solved at each frequency.
    pub angular: Angular,
    /// The links as given.
    pub links: Vec<String>,
    /// The angular eigenvalue and linked values at each mode.
    pub values: Vec<Option<CoupledValue>>,
    /// With no seed given: the continuation from the uncoupled limit.
    pub path: Option<super::continuation::Path>,
}

/// Bound states between the natural ends of a real eigenvalue problem:
/// collocation where the parameter enters linearly (falling back to the
/// problem between the interval's ends where it does not converge), the
/// global method between the ends where it enters polynomially. `redirected`:
/// a default (quasinormal) request on an equation with no horizon, said in a
/// note.
fn bound_route(
    red: &Reduction,
    req: &SpectrumRequest,
    opts: &SpectrumOptions,
    point: &[GRat],
    freq: usize,
    redirected: bool,
) -> Result<(Body, Option<ModeFunctions>)> {
    let why = redirected.then(|| format!(
        "the spectral parameter enters linearly (an energy or a separation constant, not a frequency whose square enters): solved as a real eigenvalue problem (for quasinormal modes between chosen ends, give {opt_boundary} qnm with {opt_ends})",
        opt_boundary = RequestInput::Boundary.mention(),
        opt_ends = RequestInput::Ends.mention()
    ));
    let with_why = |note: String| match &why {
        Some(w) => format!("{w}; {note}"),
        None => note,
    };
    if super::collocation::linear_in(&red.field, &red.normal.q, freq)? || req.method == Method::Collocation {
        let (b, f) = bound_states(red, req, opts)?;
        // The lowest states, each confirmed by shooting, with none found
        // above the first that failed: where fewer bound states exist than
        // were asked for, these are all there are, and they stand unless the
        // problem between the ends below finds more.
        let found = b.states.iter().take_while(|st| st.converged).count();
        let confirmed = if b.states[found..].iter().all(|st| !st.converged)
            && b.checks.iter().take(found).all(|c| matches!(c, Some(super::shoot::BoundCheck::Agrees(_))))
        {
            found
        } else {
            0
        };
        if req.method == Method::Collocation || b.states.iter().all(|st| st.converged) {
            let notes = why.into_iter().chain(b.notes.iter().cloned()).collect();
            return Ok((Body::Bound(BoundReport { notes, ..b }), f));
        }
        // Collocation with ψ = 0 at the ends cannot tell the regular
        // solution from the logarithmic one where the exponents at an end
        // coincide (ψ ~ (1 − x)^(1/2) and (1 − x)^(1/2) log(1 − x) both
        // vanish): the same interval as a problem between its ends, each
        // end's regular exponent picked, solved by direct integration.
        let given = match b.domain {
            Domain::Finite(a, z) => Some([(Location::At(a), None), (Location::At(z), None)]),
            Domain::HalfLine(a) => Some([(Location::At(a), None), (Location::Infinity, None)]),
            Domain::Line => None,
        };
        let problem = given.map(|g| super::boundary::try_problem(red, point, freq, SpectrumKind::Bound, Some(g)));
        let Some(Ok(mut bp)) = problem else {
            // Singular only at 0 and ∞ (an equation in ζ = e^(2ix)): the
            // problem meant may be the periodic one on the circle |ζ| = 1.
            let circle = super::try_num_ode(&red.field, &red.p, &red.q, point, freq).is_ok_and(|o| super::periodic::poses(&o));
            let hint = circle.then(|| format!(
                "the only singular points are 0 and ∞: for solutions on the circle |{v}| = 1, periodic in its angle (Mathieu's equation in {v} = e^(2ix)), give {opt_boundary} periodic",
                v = red.var,
                opt_boundary = RequestInput::Boundary.mention()
            ));
            let notes = why.into_iter().chain(b.notes.iter().cloned()).chain(hint).collect();
            return Ok((Body::Bound(BoundReport { notes, ..b }), f));
        };
        // The ends are the collocation interval's, not the user's.
        for e in &mut bp.ends {
            e.found = e.found.replace(", given", ", an end of the interval");
        }
        let note = with_why("collocation with ψ = 0 at the ends did not converge on every state asked for: the interval is solved as a problem between its ends (the regular exponent at each), by direct integration".to_string());
        let report = between_ends_as(bp, Problem::Bound, opts, Some(note));
        if report.modes.iter().filter(|m| m.root.converged).count() < confirmed {
            let notes = why.into_iter().chain(b.notes.iter().cloned()).collect();
            return Ok((Body::Bound(BoundReport { notes, ..b }), f));
        }
        let f = ends_functions(req, &report);
        return Ok((Body::Ends(report), f));
    }
    // The eigenvalue enters Q polynomially (ω² and ω, a normal-mode
    // problem written in the frequency): the global spectral method
    // between the natural ends, polished by direct integration.
    let bp = super::boundary::try_problem(red, point, freq, SpectrumKind::Bound, None)?;
    let note = "the spectral parameter enters Q beyond linearly: the eigenvalue problem is polynomial, solved between the ends (collocation of Q₀ + E·Q₁ does not apply)".to_string();
    let report = between_ends_as(bp, Problem::Bound, opts, Some(note));
    let f = ends_functions(req, &report);
    Ok((Body::Ends(report), f))
}

/// Modes by direct integration between the ends of a boundary problem.
#[derive(Debug)]
pub struct EndsReport {
    /// The boundary problem.
    pub problem: BoundaryProblem,
    /// One mode per overtone asked for.
    pub modes: Vec<EndMode>,
    /// Why this route was taken, when another was tried first.
    pub note: Option<String>,
    /// The numbering caveat when the modes come from a scan of the plane.
    pub numbering: Option<String>,
    /// Which spectrum: quasinormal modes, quasi-bound states (decaying at the far end) or real eigenvalues.
    pub spectrum: Problem,
    /// The second method per mode (None where the mode did not converge or no second method ran).
    pub checks: Vec<Option<SpectralCheck>>,
    /// What the second method was, or why none ran, in words.
    pub check_note: String,
    /// When the numeric series' continued fraction found the modes: its
    /// set-up and roots, index by index with `modes`, which are then their
    /// checks by direct integration.
    pub series: Option<SeriesReport>,
}

/// The continued fraction of the numeric series between the ends
/// (`solve::mobius`) that found the modes of an [`EndsReport`].
#[derive(Debug)]
pub struct SeriesReport {
    /// The series variable, the factored behaviour and the convergence radius, in words.
    pub description: String,
    /// The convergence radius (min |u| of the other singular points).
    pub radius: f64,
    /// The number of terms of the recurrence (reduced to three by Gaussian elimination).
    pub terms: usize,
    /// One continued-fraction mode per overtone asked for.
    pub modes: Vec<Mode>,
    /// The second family's modes (purely imaginary, or near the imaginary
    /// axis for a massive field: see `Families`) listed apart from the
    /// numbered overtones of the barrier, least damped first; empty when
    /// there is no second family.
    pub second_family: Vec<SecondMode>,
}

/// A mode of the second family that [`SeriesReport`] lists apart.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SecondMode {
    /// The continued fraction's root.
    pub omega: Complex64,
    /// The relative agreement of direct integration from 1e-4 away, when it
    /// ran and converged.
    pub agreement: Option<f64>,
}

/// The second method beside direct integration between the ends.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CheckMethod {
    /// The global spectral method's eigenvalue nearest the mode.
    Spectral,
    /// The root of the collocation problem with the ends' behaviour frozen
    /// at each trial value, from the mode (exponents not affine in ω).
    Collocation,
}

impl CheckMethod {
    /// The tag in documents.
    pub fn tag(self) -> &'static str {
        match self {
            CheckMethod::Spectral => "spectral",
            CheckMethod::Collocation => "collocation",
        }
    }
    /// The method in words.
    pub fn words(self) -> &'static str {
        match self {
            CheckMethod::Spectral => "global spectral method",
            CheckMethod::Collocation => "collocation root",
        }
    }
}

/// The second method's value beside a mode found by direct integration.
#[derive(Clone, Debug)]
pub struct SpectralCheck {
    /// Which second method.
    pub method: CheckMethod,
    /// The spectral eigenvalue, when one lies near the mode.
    pub omega: Option<Complex64>,
    /// |spectral − mode| / max(|mode|, 10⁻³ × the problem's frequency scale) (NaN without a value).
    pub agreement: f64,
    /// Why there is no value (empty with one).
    pub reason: String,
}

/// Bound states by collocation, each checked by shooting.
#[derive(Debug)]
pub struct BoundReport {
    /// The interval.
    pub domain: Domain,
    /// The edge of the continuum (infinite on a finite interval).
    pub threshold: f64,
    /// The states asked for.
    pub states: Vec<BoundState>,
    /// The shooting check of each converged state.
    pub checks: Vec<Option<BoundCheck>>,
    /// Why the problem was posed this way, when a default request was read
    /// as an eigenvalue problem.
    pub notes: Vec<String>,
}

/// Barrier-top estimates (WKB or eikonal), not iterated eigenvalues.
#[derive(Debug)]
pub struct EstimateReport {
    /// WKB (else eikonal).
    pub wkb: bool,
    /// The WKB order.
    pub order: usize,
    /// With an eikonal parameter: its name, the limit and the parameter's value.
    pub limit: Option<(String, EikonalLimit, f64)>,
    /// The estimate of each overtone, when a barrier peak was found.
    pub rows: Vec<(u32, Option<BarrierEstimate>)>,
}

/// What was found, by which route (one report per call: the variants' sizes do not matter).
#[derive(Debug)]
#[allow(clippy::large_enum_variant)]
pub enum Body {
    /// The exact recurrence's continued fraction (or termination).
    Recurrence(RecurrenceReport),
    /// Direct integration between the ends of a boundary problem.
    Ends(EndsReport),
    /// Collocation for bound states.
    Bound(BoundReport),
    /// WKB or eikonal estimates.
    Estimates(EstimateReport),
    /// The closed form alone (`Method::Exact`).
    Exact,
    /// Characteristic values of a periodic problem.
    Periodic(PeriodicReport),
}

/// Characteristic values of a periodic problem (`solve::periodic`).
#[derive(Debug)]
pub struct PeriodicReport {
    /// The period T in the variable the equation was written in (None when
    /// the equation was given in ζ itself: one turn about ζ = 0).
    pub period: Option<f64>,
    /// The map ζ = e^(iκx), as text, when one was applied.
    pub map: Option<String>,
    /// The variable the equation was written in (x), or the equation's variable.
    pub written_var: String,
    /// The values and their evidence.
    pub solution: super::periodic::PeriodicSolution,
}

/// The result of [`spectrum`].
#[derive(Debug)]
pub struct SpectrumReport {
    /// The spectral parameter's name.
    pub frequency: String,
    /// The independent variable's name.
    pub var: String,
    /// The findings.
    pub body: Body,
    /// The mode functions, when asked for.
    pub mode_functions: Option<ModeFunctions>,
    /// The exact spectrum of a solvable problem (`solve::closed`), or why there is none.
    pub closed: ClosedSection,
    /// The kind of spectrum asked for.
    pub problem: Problem,
    /// The polynomial solutions, when derived: the section, or why there is none.
    pub polynomial: Option<std::result::Result<super::polynomial::PolynomialSolutions, String>>,
    /// When the equation's variable was changed: the map and where the
    /// ends, decided and solved in the physical variable, lie in the
    /// written one (`solve::physical`).
    pub change: Option<super::physical::ChangeReport>,
}

/// The closed-form part of a report.
#[derive(Debug)]
pub enum ClosedSection {
    /// A closed form, with each family's values at the overtones asked for.
    Found {
        /// The families and their exact expressions.
        form: super::closed::ClosedForm,
        /// Per family: (n, value) for the overtones asked for that the family has.
        values: Vec<Vec<(u32, Complex64)>>,
    },
    /// None, with the reason (a Heun-class problem says so).
    None(String),
    /// Not derived (CSV output of a numeric route, or a coupled solve).
    NotAsked,
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

fn method_error(msg: impl Into<String>) -> Error {
    usage(msg).in_option(RequestInput::Method)
}

/// The spectral parameter's field index and name: named, else the one
/// parameter without a value (uncoupled solves), else a conventional name.
fn frequency(red: &Reduction, req: &SpectrumRequest) -> Result<(usize, String)> {
    let valued: Vec<&str> = req.values.iter().map(|(n, _, _)| n.as_str()).collect();
    spectral_parameter(red.field.names(), req.frequency.as_deref(), &valued, req.couple.is_none(), req.problem == Problem::Bound)
}

/// The spectral parameter of an equation with parameters `names` (the
/// variable first): the one `named`, else (with `infer`) the one parameter
/// without a value (not in `valued`) unless a conventional name has one,
/// else a conventional name (E first for bound states, else ω). Its field index and name, or an error that says
/// which parameters were left without a value.
pub fn spectral_parameter(names: &[String], named: Option<&str>, valued: &[&str], infer: bool, bound: bool) -> Result<(usize, String)> {
    let defaults: &[&str] = if bound { &["E", "omega", "ω", "w"] } else { &["omega", "ω", "w"] };
    let open: Vec<&String> = names.iter().skip(1).filter(|n| !valued.contains(&n.as_str())).collect();
    // A conventional name given a value means another parameter was
    // forgotten, not that the one left open is the spectral parameter.
    let conventional_valued = defaults.iter().any(|d| valued.contains(d));
    let inferred = (infer && open.len() == 1 && !conventional_valued).then(|| open[0].clone());
    let fname = named.map(str::to_string).or(inferred).or_else(|| defaults.iter().find(|n| names.iter().any(|p| p == *n)).map(|s| s.to_string()));
    let Some(fname) = fname else {
        let opt_frequency = RequestInput::Frequency.mention();
        let opt_at = RequestInput::At.mention();
        let why = match open.len() {
            0 => format!("every parameter has a value in {opt_at}: leave the spectral parameter out of it, or name it with {opt_frequency}"),
            n => format!(
                "{n} parameters have no value in {opt_at} ({}): the spectral parameter is the one left without a value; give the others values, or name it with {opt_frequency}",
                open.iter().map(|s| s.as_str()).collect::<Vec<_>>().join(", ")
            ),
        };
        return Err(usage(format!("no spectral parameter: {why}")));
    };
    let Some(freq) = names.iter().skip(1).position(|n| *n == fname).map(|i| i + 1) else {
        return Err(usage(format!("'{fname}' is not a parameter of the equation")).in_option(RequestInput::Frequency));
    };
    Ok((freq, fname))
}

/// The radial parameters that links set; a link may not set one of
/// `solved` (`what` says what they are).
pub fn linked_radial(links: &[Link], names: &[String], solved: &[usize], what: &str) -> Result<Vec<usize>> {
    let mut out = Vec::new();
    for (j, l) in links.iter().enumerate().filter(|(_, l)| !l.angular) {
        if let Some(i) = names.iter().position(|x| *x == l.target) {
            if solved.contains(&i) {
                return Err(usage(format!("'{}' is {what}: it cannot be linked", l.target))
                    .at(Span::new(0, l.target.len()))
                    .in_option(link_option(j)));
            }
            out.push(i);
        }
    }
    Ok(out)
}

/// True when a value's name is a parameter of the angular equation only
/// (its value goes there); an error when a link sets it.
pub fn for_angular_only(n: &str, span: Span, links: &[Link], names: &[String], angular_names: Option<&[String]>) -> Result<bool> {
    if links.iter().any(|l| l.target == n) {
        return Err(usage(format!("'{n}' is set by a {opt_link}; it cannot also have a value", opt_link = RequestInput::Link(0).mention()))
            .at(span)
            .in_option(RequestInput::At));
    }
    let n = n.to_string();
    Ok(angular_names.is_some_and(|a| a[1..].contains(&n)) && !names[1..].contains(&n))
}

/// The input a link's errors are rendered against.
pub fn link_option(i: usize) -> RequestInput {
    RequestInput::Link(i)
}

/// The exact point: a value for every parameter but the frequency (and
/// those that links set), or an error naming what is missing.
fn point(red: &Reduction, req: &SpectrumRequest, freq: usize) -> Result<Vec<GRat>> {
    let names = red.field.names();
    let mut point = vec![GRat::zero(); names.len()];
    let mut given = vec![false; names.len()];
    given[0] = true;
    given[freq] = true;
    let links: &[Link] = req.couple.as_ref().map_or(&[], |c| &c.links);
    for i in linked_radial(links, names, &[freq], "the frequency being solved for")? {
        given[i] = true;
    }
    let angular_names = req.couple.as_ref().map(|c| c.angular.field.names());
    for (n, v, span) in &req.values {
        if for_angular_only(n, *span, links, names, angular_names)? {
            continue;
        }
        match names.iter().skip(1).position(|x| x == n) {
            Some(i) if i + 1 == freq => {
                // Every other parameter given: the one left is what the user solves for.
                let left: Vec<&String> = names
                    .iter()
                    .enumerate()
                    .skip(1)
                    .filter(|(j, m)| *j != freq && !req.values.iter().any(|(v, _, _)| v == *m))
                    .map(|(_, m)| m)
                    .collect();
                let other = match left.as_slice() {
                    [one] => format!(
                        " (to solve for '{one}' with '{n}' held at this value, add {opt_frequency} {one})",
                        opt_frequency = RequestInput::Frequency.mention()
                    ),
                    _ => String::new(),
                };
                return Err(usage(format!(
                    "'{n}' is the spectral parameter being solved for; give a seed with {opt_guess} instead{other}",
                    opt_guess = RequestInput::Guess.mention()
                ))
                .at(*span)
                .in_option(RequestInput::At));
            }
            Some(i) => {
                point[i + 1] = v.clone();
                given[i + 1] = true;
            }
            None => {
                return Err(usage(format!("'{n}' is not a parameter of the equation"))
                    .at(*span)
                    .in_option(RequestInput::At)
                    .note(format!("the parameters are: {}", names[1..].join(", "))))
            }
        }
    }
    let missing: Vec<&str> = names.iter().zip(&given).filter(|(_, g)| !**g).map(|(n, _)| n.as_str()).collect();
    if !missing.is_empty() {
        // No span: the caller points at the whole of its value list.
        return Err(usage(format!("no value given for {}", missing.join(", "))).in_option(RequestInput::At));
    }
    Ok(point)
}

/// Computes the spectrum a request asks for: the numeric route's modes with
/// their evidence and, when asked, the closed form of a solvable problem
/// (each exact value checked against the numeric modes by the renderer).
///
/// When the equation's variable was changed (`--subst`, `--at-infinity`),
/// the ends, their roles and the domain are decided on the equation in its
/// physical variable and the spectrum is solved there (`solve::physical`);
/// the report's `change` says where the ends lie in the written variable.
pub fn spectrum(red: &Reduction, req: &SpectrumRequest) -> Result<SpectrumReport> {
    if req.problem != Problem::Periodic {
        if let Some((phys, chart)) = super::physical::physical(red)? {
            return physical_spectrum(&phys, &chart, req);
        }
        let (freq, _) = frequency(red, req)?;
        let point = point(red, req, freq)?;
        if let Some((moved, chart)) = super::physical::irregular_to_infinity(red, &point, freq)? {
            return physical_spectrum(&moved, &chart, req);
        }
    }
    spectrum_in(red, req)
}

/// [`spectrum`] on the physical equation `phys` of a changed variable:
/// ends given in the written variable are carried to the physical one
/// first, and the ends found are carried back for the report.
fn physical_spectrum(phys: &Reduction, chart: &super::physical::Chart, req: &SpectrumRequest) -> Result<SpectrumReport> {
    let (freq, _) = frequency(phys, req)?;
    let point = point(phys, req, freq)?;
    let carried = carried_request(chart, req, &point, freq)?;
    let mut report = spectrum_in(phys, carried.as_ref().unwrap_or(req))?;
    let ends = report_ends(&report);
    report.change = Some(chart.report(&ends, &point, freq));
    Ok(report)
}

/// A request whose ends, given in the written variable of `chart`, are
/// carried to the physical one (`None`: nothing to carry, the request
/// serves as it is; a coupled solve does not read the ends).
fn carried_request(chart: &super::physical::Chart, req: &SpectrumRequest, point: &[GRat], freq: usize) -> Result<Option<SpectrumRequest>> {
    let (Some(given), None) = (&req.ends, &req.couple) else { return Ok(None) };
    let Some(ends) = chart.ends_to_physical(given, point, freq) else {
        return Err(usage(format!("an end given in {} has no real place in {} under {}", chart.written, chart.physical, chart.map))
            .in_option(RequestInput::Ends));
    };
    Ok(Some(uncoupled(req, req.problem, Some(ends))))
}

/// The request `req` for another problem and ends, without an angular equation.
fn uncoupled(req: &SpectrumRequest, problem: Problem, ends: Option<super::boundary::GivenEnds>) -> SpectrumRequest {
    SpectrumRequest {
        problem,
        ends,
        frequency: req.frequency.clone(),
        values: req.values.clone(),
        overtones: req.overtones,
        method: req.method,
        guess: req.guess,
        tol: req.tol,
        wkb_order: req.wkb_order,
        eikonal_param: req.eikonal_param.clone(),
        mode_functions: req.mode_functions,
        couple: None,
        closed_form: req.closed_form,
        polynomial: req.polynomial,
    }
}

/// The ends of the domain a report's modes were found between, left to
/// right (none for a periodic problem or barrier estimates alone).
fn report_ends(r: &SpectrumReport) -> Vec<Location> {
    let closed = || match &r.closed {
        ClosedSection::Found { form, .. } => form.ends.iter().map(|e| e.location).collect(),
        _ => Vec::new(),
    };
    match &r.body {
        Body::Recurrence(b) => vec![Location::At(b.setup.horizon_value), Location::Infinity],
        Body::Ends(e) => e.problem.ends.iter().map(|e| e.location).collect(),
        Body::Bound(b) => match bound_ends(b.domain) {
            Some(ends) => ends.iter().map(|e| e.location).collect(),
            None => vec![Location::Infinity],
        },
        Body::Exact => closed(),
        Body::Estimates(_) | Body::Periodic(_) => Vec::new(),
    }
}

/// [`spectrum`] on the equation as it is written.
fn spectrum_in(red: &Reduction, req: &SpectrumRequest) -> Result<SpectrumReport> {
    if req.method == Method::Exact {
        return exact_only(red, req);
    }
    if let Some(note) = bound_at_horizon(red, req)? {
        let mut report = spectrum_in(red, &uncoupled(req, Problem::QuasiBound, None))?;
        match &mut report.body {
            Body::Recurrence(r) => r.notes.insert(0, note),
            Body::Ends(e) => e.problem.notes.insert(0, note),
            Body::Bound(_) | Body::Estimates(_) | Body::Exact | Body::Periodic(_) => {}
        }
        return Ok(report);
    }
    let Numeric { mut report, freq, point, ends } = numeric(red, req, Vec::new())?;
    if req.closed_form && req.couple.is_none() {
        let ends = match &report.body {
            Body::Bound(b) => bound_ends(b.domain),
            Body::Ends(e) => Some(problem_ends(&e.problem)),
            Body::Recurrence(_) | Body::Estimates(_) | Body::Exact => ends,
            Body::Periodic(_) => None,
        };
        report.closed = match report.body {
            Body::Periodic(_) => ClosedSection::None("closed forms are derived for problems between two ends, not for periodic ones".into()),
            _ => closed_section(red, req, freq, &point, ends),
        };
        let merged = merged_exact(&report, req, &point).unwrap_or_default();
        let missed = passed_over_count(&report.body, &report.closed) + misnumbered(&report.body, &merged, req.overtones);
        let none_found = report.body.converged().is_empty();
        if let Some(seeds) = (missed > 0 || none_found).then(|| exact_seeds(&report, req, &point)).flatten() {
            // The numeric search passed over exact values (a second family
            // between its overtones), numbered one out of its place, or
            // found no mode at all: again from the exact values as seeds,
            // kept when it passes over or misnumbers fewer, or finds some.
            let again = numeric(red, req, seeds)?.report;
            let found = !again.body.converged().is_empty();
            let missed_again = passed_over_count(&again.body, &report.closed) + misnumbered(&again.body, &merged, req.overtones);
            if missed_again < missed || (none_found && found) {
                report.body = again.body;
                report.mode_functions = again.mode_functions;
                let words = format!(
                    "the seeds are the closed form's exact values, its families together, numbered {} (the numeric search from its own seeds {}); each is still polished and checked numerically",
                    if report.problem == Problem::Bound { "upward" } else { "by |Im ω|" },
                    if none_found { "found none of them" } else { "passed over some of them, numbered one out of its place or did not converge on one" }
                );
                match &mut report.body {
                    Body::Ends(e) => e.numbering = Some(words),
                    Body::Recurrence(r) => r.notes.push(words),
                    _ => {}
                }
            }
        }
    }
    beyond_the_last_level(&mut report);
    if let Some(degree) = req.polynomial {
        report.polynomial = Some(polynomial_section(red, freq, &point, degree));
    }
    Ok(report)
}

/// With closed-form families of bound states that all end at these values
/// (a finite well: Morse, Pöschl–Teller), a state asked for beyond its last
/// one and not found numerically is said not to exist, rather than left to
/// a guess.
fn beyond_the_last_level(report: &mut SpectrumReport) {
    if report.problem != Problem::Bound {
        return;
    }
    let ClosedSection::Found { form, .. } = &report.closed else { return };
    // Every family ends (one with no member at these values counts none).
    let mut count = 0;
    for family in &form.families {
        match family.range.last {
            None => return,
            Some(u32::MAX) => {}
            Some(last) => count += last + 1,
        }
    }
    let why = |n: u32| match count {
        0 => format!("there is no state n = {n}: the closed form has no state at these values"),
        c => format!("there is no state n = {n}: the closed form has {c} at these values (n = 0..={})", c - 1),
    };
    match &mut report.body {
        Body::Ends(e) if e.series.is_none() => {
            for m in e.modes.iter_mut().filter(|m| !m.root.converged && m.n >= count) {
                m.root.reason = why(m.n);
            }
        }
        Body::Bound(b) => {
            for s in b.states.iter_mut().filter(|s| !s.converged && s.n >= count) {
                s.reason = Some(why(s.n));
            }
        }
        _ => {}
    }
}

/// Bound states asked for (with the default ends) where the spectral
/// parameter is a frequency and the near end is a horizon: its exponents
/// ±iω/(2κ) have equal real parts for every real ω, so no real eigenvalue is
/// normalisable there. The problem meant is the quasi-bound one (into the
/// horizon, decaying or normalisable at the far end); the note saying so,
/// `None` when the request is a real eigenvalue problem after all.
fn bound_at_horizon(red: &Reduction, req: &SpectrumRequest) -> Result<Option<String>> {
    if req.problem != Problem::Bound || req.ends.is_some() || req.couple.is_some() {
        return Ok(None);
    }
    let (freq, fname) = frequency(red, req)?;
    let point = point(red, req, freq)?;
    let red = super::spectrum::substitute_for_series(red, &point, &[freq])?;
    if super::collocation::linear_in(&red.field, &red.normal.q, freq)? {
        return Ok(None);
    }
    let Ok(bp) = super::boundary::try_problem(&red, &point, freq, SpectrumKind::Bound, None) else { return Ok(None) };
    Ok(oscillating_horizon(&bp).map(|z| {
        format!(
            "bound states were asked for, but {var} = {z} is a horizon: its exponents have equal real parts for every real {fname} (±i·{fname}/(2κ)), so no real {fname} is normalisable there; solved as quasi-bound states, the physical problem of a field around a black hole: into the horizon, decaying (or normalisable) at the far end (ask for them directly with {opt_boundary} quasi-bound)",
            var = red.var,
            z = super::boundary::fmt(z),
            opt_boundary = RequestInput::Boundary.mention()
        )
    }))
}

/// The first finite end of `bp` with the physics of a horizon: its two
/// exponents have equal real parts and differ in their imaginary parts at
/// real values of the spectral parameter of either sign (±i·ω/(2κ)), so that
/// no real value
/// is normalisable there. Ends whose exponents move with the eigenvalue but
/// split in real part (e^(−κx) at the far end of an exponential potential
/// brought to a finite point) are not such ends.
fn oscillating_horizon(bp: &BoundaryProblem) -> Option<f64> {
    let oscillating = |z: f64| {
        [0.41, 1.27, -0.41, -1.27].iter().all(|&w| {
            super::boundary::exponents_at(&bp.ode, z, Complex64::new(w, 0.0)).is_some_and(|e| {
                let size = 1.0 + e[0].norm() + e[1].norm();
                (e[0].re - e[1].re).abs() <= 1e-9 * size && (e[0].im - e[1].im).abs() > 1e-6 * size
            })
        })
    };
    bp.ends.iter().find_map(|e| match (e.nature, e.location) {
        (super::boundary::Nature::Horizon, Location::At(z)) if oscillating(z) => Some(z),
        _ => None,
    })
}

/// For an exact value no numeric mode matches (to [`CONFIRMED`]): the
/// lowest number of the numeric modes that lie beyond it in the table's own
/// order (|Im ω| for complex spectra, the value itself for real ones), when
/// there are any; those numbers, counted without this value, are too low. A
/// value left of the imaginary axis counts only when the table lists such
/// modes (it lists the right half-plane's otherwise, the mirror images −ω̄
/// apart).
pub fn passed_over(w: Complex64, numeric: &[(u32, Complex64, NumericMethod)]) -> Option<u32> {
    if numeric.iter().any(|(_, m, _)| (m - w).norm() <= CONFIRMED * w.norm().max(1.0)) {
        return None;
    }
    if w.re < 0.0 && !numeric.iter().any(|(_, m, _)| m.re < 0.0) {
        return None;
    }
    let real = numeric.iter().all(|(_, m, _)| m.im == 0.0) && w.im == 0.0;
    let key = |v: Complex64| if real { v.re } else { v.im.abs() };
    numeric.iter().filter(|(_, m, _)| key(*m) > key(w)).map(|(n, _, _)| *n).min()
}

/// How many of the closed form's values the numeric modes pass over.
fn passed_over_count(body: &Body, closed: &ClosedSection) -> usize {
    let ClosedSection::Found { values, .. } = closed else { return 0 };
    let numeric = body.converged();
    values.iter().flatten().filter(|(_, w)| passed_over(*w, &numeric).is_some()).count()
}

/// The closed form's values in the table's order (with no guess): every
/// family's values for n up to the last overtone asked for, merged —
/// quasinormal modes in the right half-plane ordered by |Im ω|, mirror
/// duplicates once; real eigenvalues ascending. `None` when there is no closed form to compare with.
fn merged_exact(report: &SpectrumReport, req: &SpectrumRequest, point: &[GRat]) -> Option<Vec<Complex64>> {
    let ClosedSection::Found { form, .. } = &report.closed else { return None };
    if req.guess.is_some() || !matches!(report.body, Body::Ends(_) | Body::Recurrence(_)) {
        return None;
    }
    // Real eigenvalues (bound states) in ascending order; else quasinormal
    // modes in the lower right quadrant by damping.
    let real = report.problem == Problem::Bound;
    let mut all: Vec<Complex64> = form
        .families
        .iter()
        .flat_map(|f| (0..=req.overtones.1).filter_map(|n| form.value(f, point, n)))
        .filter(|w| w.re.is_finite() && w.im.is_finite())
        .filter(|w| if real { w.im.abs() <= 1e-12 * w.re.abs().max(1.0) } else { w.re >= 0.0 && w.im < 0.0 })
        .collect();
    if real {
        // A spectrum symmetric under ω → −ω (ω² alone enters) is numbered
        // from its non-negative values, as the numeric table is.
        let tol = |w: &Complex64| CONFIRMED * w.norm().max(1.0);
        if all.iter().all(|w| all.iter().any(|v| (v + w).norm() <= tol(w))) {
            all.retain(|w| w.re >= -tol(w));
        }
        all.sort_by(|a, b| a.re.total_cmp(&b.re));
    } else {
        all.sort_by(|a, b| a.im.abs().total_cmp(&b.im.abs()).then(a.re.total_cmp(&b.re)));
    }
    all.dedup_by(|a, b| (*a - *b).norm() <= CONFIRMED * b.norm().max(1.0));
    Some(all)
}

/// Seeds for the numeric search from the closed form (the caller asks when
/// the numeric search passed over an exact value, numbered one out of its
/// place, or found none): [`merged_exact`] from the first overtone asked
/// for on. `None` when there is nothing to mend.
fn exact_seeds(report: &SpectrumReport, req: &SpectrumRequest, point: &[GRat]) -> Option<Vec<Complex64>> {
    let all = merged_exact(report, req, point)?;
    let seeds: Vec<Complex64> = all.into_iter().skip(req.overtones.0 as usize).take((req.overtones.1 - req.overtones.0) as usize + 1).collect();
    (!seeds.is_empty()).then_some(seeds)
}

/// How many numeric modes equal an exact value other than the one of their
/// own number in [`merged_exact`]'s order (a mode of one family numbered
/// past an exact value of the other the range asked for did not reach),
/// and how many overtones asked for have no converged numeric mode though
/// an exact value of their number exists.
fn misnumbered(body: &Body, merged: &[Complex64], (lo, hi): (u32, u32)) -> usize {
    let near = |a: Complex64, b: Complex64| (a - b).norm() <= CONFIRMED * b.norm().max(1.0);
    let numeric = body.converged();
    let out_of_place =
        numeric.iter().filter(|(n, w, _)| merged.get(*n as usize).is_some_and(|e| !near(*w, *e)) && merged.iter().any(|e| near(*w, *e))).count();
    let missing = (lo..=hi).filter(|n| (*n as usize) < merged.len() && !numeric.iter().any(|(m, _, _)| m == n)).count();
    out_of_place + missing
}

/// The polynomial solutions of the symbolic equation, or why there are none.
fn polynomial_section(
    red: &Reduction,
    freq: usize,
    point: &[GRat],
    degree: super::polynomial::Degree,
) -> std::result::Result<super::polynomial::PolynomialSolutions, String> {
    super::polynomial::derive(red, freq, point, degree).unwrap_or_else(|e| Err(format!("the derivation stopped: {}", e.message)))
}

/// What the numeric route found, with what the closed form needs from its
/// set-up (so that nothing is derived twice).
struct Numeric {
    report: SpectrumReport,
    /// The spectral parameter's index.
    freq: usize,
    /// The exact point.
    point: Vec<GRat>,
    /// The ends of the route's boundary problem, when it set one up.
    ends: Option<[super::closed::EndPick; 2]>,
}

/// The ends of a bound-state domain for the closed form: normalisable at both.
fn bound_ends(domain: Domain) -> Option<[super::closed::EndPick; 2]> {
    let pick = |location| super::closed::EndPick { location, condition: Condition::Normalisable };
    match domain {
        Domain::Finite(a, b) => Some([pick(Location::At(a)), pick(Location::At(b))]),
        Domain::HalfLine(a) => Some([pick(Location::At(a)), pick(Location::Infinity)]),
        Domain::Line => None,
    }
}

/// The ends of a boundary problem for the closed form.
fn problem_ends(bp: &BoundaryProblem) -> [super::closed::EndPick; 2] {
    bp.ends.clone().map(|e| super::closed::EndPick { location: e.location, condition: e.condition })
}

/// The closed form on the symbolic equation between `ends`, with its values at the overtones asked for.
fn closed_section(red: &Reduction, req: &SpectrumRequest, freq: usize, point: &[GRat], ends: Option<[super::closed::EndPick; 2]>) -> ClosedSection {
    let Some(ends) = ends else { return whole_line(red, req, freq, point) };
    match super::closed::derive(&red.field, &red.normal.q, freq, point, &ends) {
        Ok(super::closed::Outcome::Closed(form)) => {
            let values = form
                .families
                .iter()
                .map(|f| (req.overtones.0..=req.overtones.1).filter_map(|n| form.value(f, point, n).map(|w| (n, w))).collect())
                .collect();
            ClosedSection::Found { form, values }
        }
        Ok(super::closed::Outcome::NotClosed(why)) => ClosedSection::None(why),
        Err(e) => ClosedSection::None(format!("the derivation stopped: {}", e.message)),
    }
}

/// The closed form of a bound-state problem on the whole line whose Q is
/// even in x: the even states are those of the half-line x > 0 with
/// ψ'(0) = 0 (the smaller exponent at x = 0 after the fold x = z²), the odd
/// ones with ψ(0) = 0, and by the oscillation theorem the whole line's
/// levels alternate even, odd, even, … (overtone k = 2n + parity; common
/// practice). Each family keeps its own n.
fn whole_line(red: &Reduction, req: &SpectrumRequest, freq: usize, point: &[GRat]) -> ClosedSection {
    use super::closed::{derive, EndPick, Outcome};
    let k = &red.field;
    let q = &red.normal.q;
    let minus_x = k.neg(&k.var(0));
    let even = k.compose(q, 0, &minus_x).is_ok_and(|r| r == *q);
    if !even {
        return ClosedSection::None("the domain is the whole line and Q is not even in the variable: no half-line closed form applies".into());
    }
    let half = |cond| {
        [EndPick { location: Location::At(0.0), condition: cond }, EndPick { location: Location::Infinity, condition: Condition::Normalisable }]
    };
    let mut merged: Option<super::closed::ClosedForm> = None;
    let mut values = Vec::new();
    for (parity, cond, word) in [(0u32, Condition::SlowerFallOff, "even"), (1, Condition::Normalisable, "odd")] {
        let form = match derive(k, q, freq, point, &half(cond)) {
            Ok(Outcome::Closed(form)) => form,
            Ok(Outcome::NotClosed(why)) => return ClosedSection::None(format!("the whole line, {word} states on x > 0: {why}")),
            Err(e) => return ClosedSection::None(format!("the whole line, {word} states: the derivation stopped: {}", e.message)),
        };
        for f in &form.families {
            let vs = (req.overtones.0..=req.overtones.1)
                .filter(|o| o % 2 == parity)
                .filter_map(|o| form.value(f, point, o / 2).map(|w| (o / 2, w)))
                .collect::<Vec<_>>();
            values.push(vs);
        }
        let relabelled: Vec<_> = form
            .families
            .iter()
            .cloned()
            .map(|mut f| {
                f.label = format!("{word} states ({}); overtone 2n{}", f.label, if parity == 1 { " + 1" } else { "" });
                f
            })
            .collect();
        match &mut merged {
            None => {
                let mut m = form.clone();
                m.route =
                    format!("the whole line, Q even: the half-line x > 0 with ψ'(0) = 0 (even states) and ψ(0) = 0 (odd states); {}", form.route);
                m.families = relabelled;
                merged = Some(m);
            }
            Some(m) => m.families.extend(relabelled),
        }
    }
    match merged {
        Some(form) => ClosedSection::Found { form, values },
        None => ClosedSection::None("no family".into()),
    }
}

/// What the closed form alone needs: the spectral parameter, the exact
/// point, and the ends (`Err`: no boundary problem could be set up).
struct ExactSetup {
    freq: usize,
    fname: String,
    point: Vec<GRat>,
    ends: Result<Option<[super::closed::EndPick; 2]>>,
}

fn exact_setup(red: &Reduction, req: &SpectrumRequest) -> Result<ExactSetup> {
    let (freq, fname) = frequency(red, req)?;
    let point = point(red, req, freq)?;
    let sub = super::spectrum::substitute(red, &point, freq)?;
    let ends = if req.problem == Problem::Bound && req.ends.is_none() {
        Ok(super::collocation::bound_problem(&sub, freq, &point).ok().and_then(|(d, _, _)| bound_ends(d)))
    } else {
        boundary_problem(&sub, req, &point, freq).0.map(|bp| Some(problem_ends(&bp)))
    };
    Ok(ExactSetup { freq, fname, point, ends })
}

/// The closed form of the request's problem alone, with the ends found as
/// `Method::Exact` finds them, and the spectral parameter's name (derivation
/// records use it; no numeric route runs).
///
/// After a change of variable the closed form is the physical equation's,
/// between the ends decided there, as in [`spectrum`].
pub fn closed_form(red: &Reduction, req: &SpectrumRequest) -> Result<(String, ClosedSection)> {
    if req.problem != Problem::Periodic {
        if let Some((phys, chart)) = super::physical::physical(red)? {
            let (freq, _) = frequency(&phys, req)?;
            let point = point(&phys, req, freq)?;
            let carried = carried_request(&chart, req, &point, freq)?;
            return closed_form_in(&phys, carried.as_ref().unwrap_or(req));
        }
    }
    closed_form_in(red, req)
}

/// [`closed_form`] on the equation as it is written.
fn closed_form_in(red: &Reduction, req: &SpectrumRequest) -> Result<(String, ClosedSection)> {
    let ExactSetup { freq, fname, point, ends } = exact_setup(red, req)?;
    Ok((fname, closed_section(red, req, freq, &point, ends?)))
}

/// `Method::Exact`: the closed form alone, an error when there is none.
fn exact_only(red: &Reduction, req: &SpectrumRequest) -> Result<SpectrumReport> {
    let ExactSetup { freq, fname, point, ends } = exact_setup(red, req)?;
    // With no closed form, the polynomial solutions of the lowest degree when none is asked for.
    let lowest = req.polynomial.unwrap_or(super::polynomial::Degree::Lowest);
    let (closed, polynomial) = match ends {
        Ok(ends) => {
            let closed = closed_section(red, req, freq, &point, ends);
            let degree = if matches!(closed, ClosedSection::None(_)) { Some(lowest) } else { req.polynomial };
            (closed, degree.map(|d| polynomial_section(red, freq, &point, d)))
        }
        // No boundary problem: the polynomial solutions alone, else the error.
        Err(e) => match polynomial_section(red, freq, &point, lowest) {
            Ok(p) => {
                let class =
                    crate::analysis::analyse(red).map(|a| format!("; the equation is of {} class ({})", a.class, a.reason)).unwrap_or_default();
                (ClosedSection::None(format!("no boundary problem: {}{class}", e.message)), Some(Ok(p)))
            }
            Err(why) if req.polynomial.is_some() => return Err(e.note(format!("polynomial solutions: {why}"))),
            Err(_) => return Err(e),
        },
    };
    if let (ClosedSection::None(why), None | Some(Err(_))) = (&closed, &polynomial) {
        let extra = match &polynomial {
            Some(Err(p)) => format!("; polynomial solutions: {p}"),
            _ => String::new(),
        };
        return Err(method_error(format!("no closed form for this problem: {why}{extra}")));
    }
    Ok(SpectrumReport {
        frequency: fname,
        var: red.var.clone(),
        body: Body::Exact,
        mode_functions: None,
        closed,
        problem: req.problem,
        polynomial,
        change: None,
    })
}

impl Body {
    /// The converged modes of the numeric route: (n, value, method).
    pub fn converged(&self) -> Vec<(u32, Complex64, NumericMethod)> {
        match self {
            Body::Recurrence(b) => b.modes.iter().filter(|m| m.root.converged).map(|m| (m.n, m.root.omega, m.method.into())).collect(),
            Body::Ends(EndsReport { series: Some(s), .. }) => {
                s.modes.iter().filter(|m| m.root.converged).map(|m| (m.n, m.root.omega, m.method.into())).collect()
            }
            Body::Ends(b) => b.modes.iter().filter(|m| m.root.converged).map(|m| (m.n, m.root.omega, NumericMethod::Integrate)).collect(),
            Body::Bound(b) => b.states.iter().filter(|s| s.converged).map(|s| (s.n, s.value, NumericMethod::Collocation)).collect(),
            Body::Periodic(b) => b.solution.modes.iter().map(|m| (m.n, m.value, NumericMethod::Truncation)).collect(),
            Body::Estimates(_) | Body::Exact => Vec::new(),
        }
    }
}

/// Two methods agree on a mode when they differ by at most this, relative.
pub const CONFIRMED: f64 = 1e-6;

impl SpectrumReport {
    /// The converged modes for a picture of the complex plane: each
    /// labelled by its number, and whether a second method confirmed it
    /// (agreeing to `CONFIRMED`).
    pub fn plane_modes(&self) -> Vec<super::plot::PlaneMode> {
        let near = |a: Complex64, b: Complex64| (a - b).norm() <= CONFIRMED * b.norm().max(f64::MIN_POSITIVE);
        let mode = |n: u32, omega: Complex64, confirmed: bool| super::plot::PlaneMode { label: format!("n={n}"), omega, confirmed };
        match &self.body {
            Body::Recurrence(b) => b
                .modes
                .iter()
                .enumerate()
                .filter(|(_, m)| m.root.converged)
                .map(|(i, m)| {
                    let ok = b.checks.get(i).and_then(|c| c.as_ref()).is_some_and(|c| c.converged && near(c.omega, m.root.omega));
                    mode(m.n, m.root.omega, ok)
                })
                .collect(),
            Body::Ends(b @ EndsReport { series: Some(s), .. }) => s
                .modes
                .iter()
                .zip(&b.modes)
                .filter(|(m, _)| m.root.converged)
                .map(|(m, c)| mode(m.n, m.root.omega, c.root.converged && near(c.root.omega, m.root.omega)))
                .collect(),
            Body::Ends(b) => b
                .modes
                .iter()
                .enumerate()
                .filter(|(_, m)| m.root.converged)
                .map(|(i, m)| {
                    let ok = b.checks.get(i).and_then(|c| c.as_ref()).and_then(|c| c.omega).is_some_and(|w| near(w, m.root.omega));
                    mode(m.n, m.root.omega, ok)
                })
                .collect(),
            Body::Bound(b) => b
                .states
                .iter()
                .zip(&b.checks)
                .filter(|(s, _)| s.converged)
                .map(|(s, c)| mode(s.n, s.value, matches!(c, Some(super::shoot::BoundCheck::Agrees(r)) if near(r.omega, s.value))))
                .collect(),
            Body::Periodic(b) => b.solution.modes.iter().map(|m| mode(m.n, m.value, m.check.converged && near(m.check.omega, m.value))).collect(),
            Body::Estimates(_) | Body::Exact => Vec::new(),
        }
    }
}

/// The numeric route of [`spectrum`], from `seeds` for the overtones asked
/// for when there are any (else the route's own seeds); modes between the
/// ends that sit at a resonance of a horizon's exponents are then settled
/// as limits ([`settle_resonances`]).
fn numeric(red: &Reduction, req: &SpectrumRequest, seeds: Vec<Complex64>) -> Result<Numeric> {
    let mut n = numeric_route(red, req, seeds)?;
    if let Body::Ends(e) = &mut n.report.body {
        settle_resonances(red, req, n.freq, &n.point, e);
    }
    Ok(n)
}

/// How near (absolutely) a horizon's two exponents must differ from an
/// integer at a value for it to count as at a resonance.
const RESONANCE_GAP: f64 = 1e-6;

/// Modes between the ends at a resonance of a horizon's exponents, where
/// direct integration (and the continued fraction's inversions) see no
/// clean root: each taken as the limit of direct integration's modes of
/// nearby problems (`solve::nearby`), with the same conditions at the same
/// ends and one parameter moved. A continued-fraction root whose check did
/// not converge gets the limit as its check; an overtone neither method
/// settled, whose seed (an exact value, an extrapolation) sits at a
/// resonance, gets the limit as its value, direct integration's alone,
/// when it is new. The limit's words go in the check's note.
fn settle_resonances(red: &Reduction, req: &SpectrumRequest, freq: usize, point: &[GRat], e: &mut EndsReport) {
    if req.couple.is_some() {
        return;
    }
    let conditions = [e.problem.ends[0].condition, e.problem.ends[1].condition];
    let same = [(e.problem.ends[0].location, Some(conditions[0])), (e.problem.ends[1].location, Some(conditions[1]))];
    let solve = |pt: &[GRat], seed: Complex64| -> Option<Complex64> {
        let red = super::spectrum::substitute_for_series(red, pt, &[freq]).ok()?;
        // The ends as the request picks them, else (where a moved parameter
        // changed the pick) the same points with the same conditions.
        let bp = boundary_problem(&red, req, pt, freq)
            .0
            .ok()
            .filter(|bp| [bp.ends[0].condition, bp.ends[1].condition] == conditions)
            .or_else(|| super::boundary::try_problem(&red, pt, freq, e.problem.kind, Some(same)).ok())?;
        // Not at the resonance itself, where the mismatch cannot be evaluated.
        let seed = seed + Complex64::new(1e-4 * seed.norm(), 0.0);
        let r = super::ends::find_root(&bp, seed, req.tol);
        (r.converged && r.note.is_none()).then_some(r.omega)
    };
    let names = red.field.names();
    let at_resonance =
        |bp: &BoundaryProblem, w: Complex64| w.re.is_finite() && w.im.is_finite() && super::ends::resonant_horizon(bp, w, RESONANCE_GAP).is_some();
    let limit_root = |l: &super::nearby::Limit| IntRoot {
        omega: l.omega,
        converged: l.error <= LIMIT_ERROR,
        residual: l.error,
        iterations: 0,
        steps: 0,
        change: l.error,
        reason: format!("the limit of the nearby modes has an estimated error {:.0e}, more than {LIMIT_ERROR:.0e}", l.error),
        note: Some(super::integrate::Settled::Limit(l.words(false))),
    };
    let Some(series) = e.series.as_mut() else {
        // Direct integration alone: an overtone that did not converge from a seed at a resonance.
        for m in e.modes.iter_mut().filter(|m| !m.root.converged) {
            if at_resonance(&e.problem, m.seed.omega) {
                if let Some(l) = super::nearby::limit(point, names, &[0, freq], m.seed.omega, &solve) {
                    m.root = limit_root(&l);
                }
            }
        }
        return;
    };
    for i in 0..series.modes.len().min(e.modes.len()) {
        let m = &series.modes[i];
        if m.root.converged && m.method == ModeMethod::ContinuedFraction && !e.modes[i].root.converged && at_resonance(&e.problem, m.root.omega) {
            // The check of a continued-fraction root.
            if let Some(l) = super::nearby::limit(point, names, &[0, freq], m.root.omega, &solve) {
                e.modes[i].root = limit_root(&l);
            }
        } else if !m.root.converged && at_resonance(&e.problem, m.seed.0) {
            // An overtone neither method settled.
            let Some(l) = super::nearby::limit(point, names, &[0, freq], m.seed.0, &solve) else { continue };
            let taken = series.modes.iter().any(|o| o.root.converged && (o.root.omega - l.omega).norm() <= CONFIRMED * l.omega.norm());
            if l.error > LIMIT_ERROR || taken {
                continue;
            }
            let m = &mut series.modes[i];
            // The limit's error estimate in place of a refinement's change.
            integrated(m, l.omega, l.error, 0, l.error);
            let mut check = super::ends::unfound(m.n, "not checked: the limit of direct integration's nearby modes is the value itself".into());
            check.root.note = Some(super::integrate::Settled::Limit(l.words(true)));
            e.modes[i] = check;
        }
    }
}

/// A numeric series' mode whose value is direct integration's (the
/// continued fraction did not settle on it): converged, with depth 0 and
/// the integration's residual, steps and change between its two
/// discretisations in place of the fraction's evidence.
fn integrated(m: &mut Mode, omega: Complex64, residual: f64, iterations: usize, change: f64) {
    m.root.omega = omega;
    m.root.converged = true;
    m.root.residual = residual;
    m.root.iterations = iterations;
    m.root.depth = 0;
    m.root.depth_change = change;
    m.root.stop = super::cf::StopReason::Converged;
    m.method = ModeMethod::Integrate;
}

/// The largest estimated error (relative) of a limit through nearby
/// problems that is taken as a mode or a check.
const LIMIT_ERROR: f64 = 1e-6;

/// [`numeric`] before modes at resonances are settled.
fn numeric_route(red: &Reduction, req: &SpectrumRequest, seeds: Vec<Complex64>) -> Result<Numeric> {
    if !(1..=super::wkb::MAX_ORDER).contains(&req.wkb_order) {
        return Err(usage(format!("the WKB order must lie in 1..={}", super::wkb::MAX_ORDER)).in_option(RequestInput::WkbOrder));
    }
    let (freq, fname) = frequency(red, req)?;
    let point = point(red, req, freq)?;
    let opts = SpectrumOptions {
        seeds,
        seeds_from: super::spectrum::SeedSource::ClosedForm,
        ..SpectrumOptions::new(freq, point.clone(), req.overtones, req.tol, req.guess)
    };
    let done = |body: Body, mode_functions: Option<ModeFunctions>, ends: Option<[super::closed::EndPick; 2]>| Numeric {
        report: SpectrumReport {
            frequency: fname.clone(),
            var: red.var.clone(),
            body,
            mode_functions,
            closed: ClosedSection::NotAsked,
            problem: req.problem,
            polynomial: None,
            change: None,
        },
        freq,
        point: point.clone(),
        ends,
    };
    if let Some(c) = &req.couple {
        if req.problem != Problem::Quasinormal {
            return Err(usage(format!(
                "a coupled solve ({opt_couple}) is set up for quasinormal modes only: coupled {} problems are not solved yet; for them, give the separation constant a value with {opt_at} (the angular eigenvalue at the expected frequency) and solve the radial equation alone",
                req.problem.tag(),
                opt_couple = RequestInput::Couple.mention(),
                opt_at = RequestInput::At.mention()
            ))
            .in_option(RequestInput::Boundary));
        }
        if !matches!(req.method, Method::Auto | Method::Cf) {
            return Err(method_error(format!(
                "a coupled solve uses the continued fraction ({opt_method} auto or cf); direct integration runs as its check",
                opt_method = RequestInput::Method.mention()
            )));
        }
        let (report, functions) = coupled(red, req, c, &opts)?;
        return Ok(done(Body::Recurrence(report), functions, None));
    }
    // The eikonal limit keeps its large parameter symbolic.
    let eikonal = eikonal_reduction(req, red, &point, freq)?;
    // Exact values for every other parameter: horizons often become rational points.
    if req.problem == Problem::Periodic {
        let (report, functions) = periodic(red, req, &point, freq)?;
        return Ok(done(Body::Periodic(report), functions, None));
    }
    let red = super::spectrum::substitute_for_series(red, &point, &[freq])?;
    // A parameter entering Q linearly is an energy or a separation
    // constant, not a frequency (whose square enters, and whose horizon
    // exponents ±iω/(2κ) are linear in it): the problem a default request
    // means is an eigenvalue problem, not quasinormal modes.
    let as_bound = req.problem == Problem::Quasinormal
        && req.ends.is_none()
        && req.couple.is_none()
        && req.guess.is_none()
        && super::collocation::linear_in(&red.field, &red.normal.q, freq)?;
    if req.problem == Problem::Bound {
        // ζ = e^(ikx) takes the real x-axis to the unit circle: an interval
        // of the real ζ-axis is no interval of x.
        if let Some(map) = red.map.as_ref().filter(|m| m.form == crate::ode::MapForm::Exp) {
            if map.c.as_constant().is_some_and(|k| k.re.is_zero() && !k.im.is_zero()) {
                return Err(usage(format!(
                    "the coefficients are trigonometric in {x}, and {z} = e^(i·k·{x}) takes real {x} to the unit circle |{z}| = 1, not to an interval of real {z}: bound states on an interval of {x} are not posed in {z}. For solutions periodic in {x} give {opt_boundary} periodic; for an interval between two zeros of sin {x} (an angular equation in θ), write the equation in cos {x} (η = cos θ), or name a half-angle map with {opt_map}",
                    x = map.old_var,
                    z = map.new_var,
                    opt_boundary = RequestInput::Boundary.mention(),
                    opt_map = RequestInput::Map.mention()
                )));
            }
        }
    }
    if (req.problem == Problem::Bound || as_bound) && req.ends.is_none() {
        let (body, f) = bound_route(&red, req, &opts, &point, freq, as_bound)?;
        let mut n = done(body, f, None);
        n.report.problem = Problem::Bound;
        return Ok(n);
    }
    if req.method == Method::Collocation {
        return Err(method_error(format!(
            "{opt_method} collocation computes bound states (with {opt_boundary} bound); quasinormal modes use auto, cf, integrate, wkb or eikonal",
            opt_method = RequestInput::Method.mention(),
            opt_boundary = RequestInput::Boundary.mention()
        )));
    }
    let kind = spectrum_kind(req.problem);
    let (problem, classic) = boundary_problem(&red, req, &point, freq);
    let ends = problem.as_ref().ok().map(problem_ends);
    // Only a field whose rate at infinity is adjoined has the continued fraction for quasi-bound states.
    let cf_asked = matches!(req.method, Method::Auto | Method::Cf) && crate::series::rate::needs_rate(&red)?;
    if let Some(bp) = problem.as_ref().ok().filter(|bp| kind == SpectrumKind::QuasiBound && req.ends.is_none() && cf_asked && rated_ends(bp)) {
        // Quasi-bound states from a horizon to an irregular infinity: the
        // continued fraction with the decay rate adjoined, direct integration
        // between the ends as its check.
        match recurrence_route(&red, req, &opts, None, Some(bp)) {
            Ok((body, f)) => return Ok(done(body, f, ends)),
            Err(e) if req.method == Method::Cf => return Err(e),
            Err(e) => {
                let note = format!("the continued fraction could not be set up ({}); direct integration between the ends instead", e.message);
                let report = between_ends(problem?, req, &opts, Some(note));
                let f = ends_functions(req, &report);
                return Ok(done(Body::Ends(report), f, None));
            }
        }
    }
    if classic {
        match recurrence_route(&red, req, &opts, eikonal, problem.as_ref().ok()) {
            // No estimate seeds an overtone: the global spectral method does.
            Err(e) if opts.guess.is_none() && e.message.starts_with(super::spectrum::NO_SEED) && problem.is_ok() => {
                let seeds = problem.as_ref().map(|bp| super::global::seeds(bp, opts.overtones)).unwrap_or_default();
                if seeds.is_empty() {
                    return Err(e);
                }
                let opts = SpectrumOptions { seeds, seeds_from: super::spectrum::SeedSource::GlobalMethod, ..opts.clone() };
                let (body, f) = recurrence_route(&red, req, &opts, None, problem.as_ref().ok())?;
                return Ok(done(body, f, ends));
            }
            Err(e) if e.kind == ErrorKind::Usage && problem.is_ok() && matches!(req.method, Method::Auto | Method::Cf | Method::Integrate) => {
                let bp = problem?;
                let report = match req.method {
                    Method::Integrate => between_ends(bp, req, &opts, None),
                    _ => {
                        let why = format!("the exact recurrence could not be set up ({})", e.message);
                        let estimate = barrier_seed(&red, &opts, &bp);
                        match series_between_ends(bp, req.problem, &opts, &red.var, &why, true, &estimate) {
                            Ok(report) => report,
                            Err(b) if req.method == Method::Cf => {
                                return Err(method_error(format!("{why}, and the numeric series cannot be set up either: {}", b.1.message)))
                            }
                            Err(b) => {
                                let (bp, s) = *b;
                                let note = format!("{why}, nor the numeric series ({}); direct integration between the ends instead", s.message);
                                between_ends(bp, req, &opts, Some(note))
                            }
                        }
                    }
                };
                let f = ends_functions(req, &report);
                return Ok(done(Body::Ends(report), f, None));
            }
            Err(e) if e.kind == ErrorKind::Usage => {
                // Neither a series about a horizon nor ends between which to
                // integrate: the boundary problem's reason says what is missing.
                return Err(match problem {
                    Err(p) => p.note(format!("nor can the series about a horizon be set up: {}", e.message)),
                    Ok(_) => e,
                });
            }
            Err(e) => return Err(e),
            Ok((body, f)) => return Ok(done(body, f, ends)),
        }
    }
    if matches!(req.method, Method::Auto | Method::Cf)
        && problem.as_ref().is_ok_and(|bp| kind == SpectrumKind::Quasinormal && req.ends.is_none() && horizon_to_series_end(bp))
    {
        // The exact recurrence about a horizon does not take a regular
        // boundary at infinity (anti-de Sitter) or a second horizon
        // (de Sitter): the numeric series between the ends does.
        let bp = problem?;
        let why = if bp.ends[0].nature != super::boundary::Nature::Horizon {
            "the exact recurrence is derived about a horizon with the domain beyond it, and here the domain ends at its horizon from below"
        } else if bp.ends[1].location == Location::Infinity {
            "the exact recurrence is not derived for a regular boundary at infinity"
        } else {
            "the exact recurrence about one horizon does not impose the condition at a second one"
        };
        let estimate = barrier_seed(&red, &opts, &bp);
        let report = match series_between_ends(bp, req.problem, &opts, &red.var, why, true, &estimate) {
            Ok(report) => report,
            Err(b) => {
                let (bp, s) = *b;
                // Two finite horizons whose series has no continued fraction
                // (a recurrence of two terms: the modes close exactly, as for
                // the Pöschl–Teller barrier in tanh x): the exact recurrence
                // about a horizon, which solves such a recurrence by its
                // terminating condition, checked by direct integration.
                if let (Location::At(_), Ok((body, f))) = (bp.ends[1].location, recurrence_route(&red, req, &opts, None, Some(&bp))) {
                    return Ok(done(body, f, Some(problem_ends(&bp))));
                }
                if req.method == Method::Cf {
                    return Err(method_error(format!("the numeric series cannot be set up: {}", s.message)));
                }
                let note = format!("the numeric series cannot be set up ({}); direct integration between the ends instead", s.message);
                between_ends(bp, req, &opts, Some(note))
            }
        };
        let f = ends_functions(req, &report);
        return Ok(done(Body::Ends(report), f, None));
    }
    if !matches!(req.method, Method::Auto | Method::Integrate) {
        return Err(method_error(format!(
            "this boundary problem is solved by direct integration between its ends: use {opt_method} auto or integrate",
            opt_method = RequestInput::Method.mention()
        )));
    }
    let bp = problem?;
    if let Some(z) = oscillating_horizon(&bp).filter(|_| kind == SpectrumKind::Bound) {
        return Err(usage(format!(
            "a bound-state problem between given ends cannot end at the horizon {var} = {z}: its exponents have equal real parts for every real {fname}, so no real value is normalisable there; use {opt_boundary} qnm or quasi-bound",
            var = red.var,
            z = super::boundary::fmt(z),
            fname = red.field.names()[freq],
            opt_boundary = RequestInput::Boundary.mention()
        ))
        .in_option(RequestInput::Ends));
    }
    let report = between_ends(bp, req, &opts, None);
    let f = ends_functions(req, &report);
    Ok(done(Body::Ends(report), f, None))
}

/// The mode functions of modes found between the ends, when asked for: the
/// normal form's ψ from the left end's Frobenius series with the chosen
/// exponent and unit leading coefficient, continued along the real axis (up
/// to 98 % of the way to a finite right end); the second method's function
/// at its own value where its check has one.
fn ends_functions(req: &SpectrumRequest, r: &EndsReport) -> Option<ModeFunctions> {
    let reach = req.mode_functions?;
    let bp = &r.problem;
    if r.spectrum == Problem::Bound {
        return Some(bound_ends_functions(r));
    }
    let Location::At(_) = bp.ends[0].location else { return None };
    if let Some(s) = &r.series {
        // The continued fraction's value first, direct integration's beside it.
        let modes = s
            .modes
            .iter()
            .zip(&r.modes)
            .filter(|(m, _)| m.root.converged)
            .map(|(m, c)| {
                let second = c.root.converged.then(|| left_end_function(bp, NumericMethod::Integrate, c.root.omega, reach));
                ModeFunction::new(m.n, left_end_function(bp, m.method.into(), m.root.omega, reach), second)
            })
            .collect();
        return Some(ModeFunctions {
            normalisation: "the normal form's ψ, with unit leading coefficient of its Frobenius series at the left end",
            modes,
        });
    }
    let modes = r
        .modes
        .iter()
        .zip(&r.checks)
        .filter(|(m, _)| m.root.converged)
        .map(|(m, c)| {
            let second = c.as_ref().and_then(|c| c.omega.map(|w| left_end_function(bp, c.method.into(), w, reach)));
            ModeFunction::new(m.n, left_end_function(bp, NumericMethod::Integrate, m.root.omega, reach), second)
        })
        .collect();
    Some(ModeFunctions { normalisation: "the normal form's ψ, with unit leading coefficient of its Frobenius series at the left end", modes })
}

/// The normal form's ψ at `w` from the left end's Frobenius series with the
/// chosen exponent and unit leading coefficient, continued along the real
/// axis out to `reach` (at most 98 % of the way to a finite right end).
fn left_end_function(bp: &BoundaryProblem, method: NumericMethod, w: Complex64, reach: Option<f64>) -> MethodFunction {
    let samples = match (bp.ends[0].location, bp.ends[1].location) {
        (Location::At(a), right) => {
            let reach = match right {
                Location::At(b) => Some(reach.map_or(0.98 * (b - a), |d| d.min(0.98 * (b - a)))),
                Location::Infinity => reach,
            };
            super::global::end_exponent_at(bp, 0, w)
                .ok_or_else(|| "the exponent at the left end could not be evaluated".to_string())
                .and_then(|rho| super::modefn::horizon_mode_function(&bp.ode, a, rho, w, reach, 400))
        }
        (Location::Infinity, _) => Err("the left end is at infinity: no Frobenius series to start from".to_string()),
    };
    MethodFunction { method, value: w, samples }
}

/// The mode functions of a coupled solve: at each converged mode the radial
/// equation with the linked parameters held at their values there (the
/// angular eigenvalue at the mode's frequency), as a typed boundary problem,
/// and its ψ from the horizon ([`left_end_function`]); direct integration's
/// function at its own root (same linked values) beside it.
fn coupled_functions(
    red: &Reduction,
    req: &SpectrumRequest,
    opts: &SpectrumOptions,
    found: &[super::coupled::CoupledMode],
    reach: Option<f64>,
) -> ModeFunctions {
    let k = &red.field;
    let modes = found
        .iter()
        .filter(|c| c.mode.root.converged)
        .map(|c| {
            let w = c.mode.root.omega;
            let problem = c.angular.as_ref().ok_or_else(|| "no angular eigenvalue at this mode".to_string()).and_then(|e| {
                let mut values = opts.values.clone();
                for (n, v) in &e.links {
                    if let Some(i) = k.names().iter().position(|x| x == n) {
                        values[i] = GRat { re: super::spectrum::exact_double(v.re).re, im: super::spectrum::exact_double(v.im).re };
                    }
                }
                let sub = super::spectrum::substitute(red, &values, opts.freq).map_err(|e| e.message)?;
                boundary_problem(&sub, req, &values, opts.freq).0.map_err(|e| e.message)
            });
            match problem {
                Ok(bp) => {
                    let second = c.check.as_ref().filter(|r| r.converged).map(|r| left_end_function(&bp, NumericMethod::Integrate, r.omega, reach));
                    ModeFunction::new(c.mode.n, left_end_function(&bp, c.mode.method.into(), w, reach), second)
                }
                Err(e) => ModeFunction::new(c.mode.n, MethodFunction { method: c.mode.method.into(), value: w, samples: Err(e) }, None),
            }
        })
        .collect();
    ModeFunctions { normalisation: "the normal form's ψ, with unit leading coefficient of its Frobenius series at the left end", modes }
}

/// The mode functions of real eigenvalues between given ends: each end's
/// solution with its chosen exponent (a finite end) or decaying (an infinite
/// one), joined in the middle and normalised to ∫|ψ|² = 1 over the whole
/// domain, as the bound-state route's are; the second method's function at
/// its own value, turned to the same phase.
fn bound_ends_functions(r: &EndsReport) -> ModeFunctions {
    let bp = &r.problem;
    let domain = match (bp.ends[0].location, bp.ends[1].location) {
        (Location::At(a), Location::At(b)) => Ok(Domain::Finite(a, b)),
        (Location::At(a), Location::Infinity) => Ok(Domain::HalfLine(a)),
        _ => Err("the mode function needs a finite left end".to_string()),
    };
    let at = |method: NumericMethod, w: Complex64| MethodFunction {
        method,
        value: w,
        samples: domain.clone().and_then(|d| {
            let picks = [0, 1].map(|i| super::global::end_exponent_at(bp, i, w));
            super::modefn::bound_mode_function_with(&bp.ode, d, picks, w, 24)
        }),
    };
    let modes = r
        .modes
        .iter()
        .zip(&r.checks)
        .filter(|(m, _)| m.root.converged)
        .map(|(m, c)| {
            let first = at(NumericMethod::Integrate, m.root.omega);
            let second = c.as_ref().and_then(|c| c.omega.map(|w| at(c.method.into(), w))).map(|mut s| {
                // Same samples (a finite domain): the same phase as the first.
                if let (Ok(one), Ok(two)) = (&first.samples, &s.samples) {
                    if one.len() == two.len() && one.iter().zip(two).all(|(p, q)| p.0 == q.0) {
                        s.samples = super::modefn::normalised_like(one, two.iter().map(|q| q.1).collect());
                    }
                }
                s
            });
            ModeFunction::new(m.n, first, second)
        })
        .collect();
    ModeFunctions { normalisation: "the normal form's psi, with the integral of |psi|^2 equal to 1, real and positive next to the first end", modes }
}

/// True for the ends the recurrence route with an adjoined rate covers: a
/// horizon on the left, an irregular infinity of rank 1 on the right.
fn rated_ends(bp: &BoundaryProblem) -> bool {
    use super::boundary::Nature;
    bp.ends[0].nature == Nature::Horizon && bp.ends[1].location == Location::Infinity && bp.ends[1].nature == Nature::IrregularRank1
}

/// True for ends that the exact recurrence about a horizon does not take
/// and the numeric series between the ends (a Möbius variable sending one
/// end to 0, the other to 1) does: a horizon on the left and a regular
/// boundary at infinity (an anti-de Sitter black hole) or a second horizon
/// (a black-hole and a cosmological horizon, de Sitter); or a regular
/// boundary on the left and a horizon on the right (a black brane in
/// u = r₊²/r², its boundary at u = 0).
pub(crate) fn horizon_to_series_end(bp: &BoundaryProblem) -> bool {
    use super::boundary::Nature;
    let [left, right] = &bp.ends;
    let irregular_right = right.location == Location::Infinity && right.nature == Nature::IrregularRank1;
    match left.nature {
        Nature::Horizon => !irregular_right,
        Nature::Regular => right.nature == Nature::Horizon && matches!(right.location, Location::At(_)),
        Nature::IrregularRank1 => false,
    }
}

/// The boundary problem of a (substituted) reduction, and whether the exact
/// recurrence route applies: it covers quasinormal modes from a horizon that
/// do not end at a regular infinity, with the default conditions.
fn boundary_problem(red: &Reduction, req: &SpectrumRequest, point: &[GRat], freq: usize) -> (Result<BoundaryProblem>, bool) {
    let kind = spectrum_kind(req.problem);
    let problem = super::boundary::try_problem(red, point, freq, kind, req.ends);
    let classic = kind == SpectrumKind::Quasinormal
        && req.ends.is_none()
        && problem.as_ref().map_or(true, |bp| {
            use super::boundary::Nature;
            // Barrier-top estimates need no recurrence: they take the
            // exact route's barrier on any ends.
            bp.ends[0].nature == Nature::Horizon && (!horizon_to_series_end(bp) || matches!(req.method, Method::Wkb | Method::Eikonal))
        });
    (problem, classic)
}

/// The boundary problem's kind of spectrum for a requested one.
fn spectrum_kind(p: Problem) -> SpectrumKind {
    match p {
        Problem::Quasinormal => SpectrumKind::Quasinormal,
        Problem::QuasiBound => SpectrumKind::QuasiBound,
        Problem::Bound | Problem::Periodic => SpectrumKind::Bound,
    }
}

/// Characteristic values of a periodic problem: the equation in ζ (after the
/// trigonometric map, or as given) made numeric except in the spectral
/// parameter and handed to `solve::periodic`.
fn periodic(red: &Reduction, req: &SpectrumRequest, point: &[GRat], freq: usize) -> Result<(PeriodicReport, Option<ModeFunctions>)> {
    if req.method != Method::Auto {
        return Err(method_error(format!(
            "a periodic problem is solved by the truncated Laurent series, checked by the monodromy: use {opt_method} auto",
            opt_method = RequestInput::Method.mention()
        )));
    }
    if req.ends.is_some() || req.guess.is_some() {
        return Err(usage(
            "a periodic problem has no ends and needs no seed: every characteristic value comes from one truncated eigenvalue problem",
        ));
    }
    let values: Vec<Complex64> = point.iter().map(|v| v.to_f64()).map(|(re, im)| Complex64::new(re, im)).collect();
    let kappa = super::periodic::trigonometric_kappa(red, &values)?;
    let sub = super::spectrum::substitute(red, point, freq)?;
    let ode = super::try_num_ode(&sub.field, &sub.p, &sub.q, point, freq)?;
    let solution = super::periodic::solve(&ode, req.overtones, req.tol)?;
    let map = red.map.as_ref().map(|m| crate::ode::exp_map_text(m, &red.ode));
    let written_var = red.map.as_ref().map_or_else(|| red.var.clone(), |m| m.old_var.clone());
    let period = kappa.map(|k| 2.0 * std::f64::consts::PI / (k.abs() * solution.step as f64));
    // Mode functions over one period of each solution in the written
    // variable (the angle of ζ when the equation was given in ζ).
    let functions = req.mode_functions.map(|_| ModeFunctions {
        normalisation:
            "the unknown over one period of the solution, with the integral of |y|^2 over it equal to 1, real and positive at the first sample",
        modes: solution
            .modes
            .iter()
            .map(|m| {
                let (first, second) = super::periodic::mode_functions(&ode, &solution, m, kappa.unwrap_or(1.0), 256);
                let second = second.map(|samples| MethodFunction { method: NumericMethod::Monodromy, value: m.check.omega, samples });
                ModeFunction::new(m.n, MethodFunction { method: NumericMethod::Laurent, value: m.value, samples: first }, second)
            })
            .collect(),
    });
    Ok((PeriodicReport { period, map, written_var, solution }, functions))
}

/// What the global spectral method over a region works on.
pub struct RegionSetup {
    /// The reduction with every parameter but the frequency substituted.
    pub red: Reduction,
    /// The frequency's name.
    pub frequency: String,
    /// The options (frequency index, values, tolerance).
    pub opts: SpectrumOptions,
    /// The boundary problem.
    pub problem: BoundaryProblem,
    /// Whether the exact recurrence (continued fraction) applies.
    pub classic: bool,
}

/// The set-up of [`spectrum`] for a search over a region of the complex
/// plane (quasinormal modes and quasi-bound states; no coupled solve).
pub fn region_setup(red: &Reduction, req: &SpectrumRequest) -> Result<RegionSetup> {
    if req.couple.is_some() || req.problem == Problem::Bound {
        return Err(usage(format!(
            "{opt_region} searches quasinormal modes and quasi-bound states of one equation (no {opt_couple}, no {opt_boundary} bound)",
            opt_region = RequestInput::Region.mention(),
            opt_couple = RequestInput::Couple.mention(),
            opt_boundary = RequestInput::Boundary.mention()
        ))
        .in_option(RequestInput::Region));
    }
    // After a change of variable the window's modes are those of the
    // physical equation, between the ends decided there (`solve::physical`).
    let physical = super::physical::physical(red)?;
    let red = physical.as_ref().map_or(red, |(p, _)| p);
    let (freq, frequency) = frequency(red, req)?;
    let point = point(red, req, freq)?;
    let carried = match &physical {
        Some((_, chart)) => carried_request(chart, req, &point, freq)?,
        None => None,
    };
    let req = carried.as_ref().unwrap_or(req);
    let opts = SpectrumOptions::new(freq, point.clone(), req.overtones, req.tol, None);
    let red = super::spectrum::substitute(red, &point, freq)?;
    let (problem, classic) = boundary_problem(&red, req, &point, freq);
    let mut problem = problem?;
    if let Some((_, chart)) = &physical {
        // The first note says which variable the ends and words refer to.
        let ends: Vec<Location> = problem.ends.iter().map(|e| e.location).collect();
        problem.notes.insert(0, chart.report(&ends, &point, freq).sentence());
    }
    Ok(RegionSetup { problem, red, frequency, opts, classic })
}

/// With an eikonal parameter: its name, index and the equation with every
/// other parameter but it and the frequency substituted.
fn eikonal_reduction(req: &SpectrumRequest, red: &Reduction, point: &[GRat], freq: usize) -> Result<Option<(String, usize, Reduction)>> {
    let Some(name) = &req.eikonal_param else { return Ok(None) };
    if req.method != Method::Eikonal {
        return Err(usage(format!(
            "{opt_eikonal_param} belongs with {opt_method} eikonal",
            opt_eikonal_param = RequestInput::EikonalParam.mention(),
            opt_method = RequestInput::Method.mention()
        ))
        .in_option(RequestInput::EikonalParam));
    }
    let Some(i) = red.field.names().iter().skip(1).position(|n| n == name).map(|i| i + 1).filter(|i| *i != freq) else {
        return Err(usage(format!("'{name}' is not a parameter of the equation other than the frequency")).in_option(RequestInput::EikonalParam));
    };
    Ok(Some((name.clone(), i, super::spectrum::substitute_keeping(red, point, &[freq, i])?)))
}

/// Modes by direct integration between the ends of a boundary problem.
fn between_ends(bp: BoundaryProblem, req: &SpectrumRequest, opts: &SpectrumOptions, note: Option<String>) -> EndsReport {
    between_ends_as(bp, req.problem, opts, note)
}

/// [`between_ends`] for the kind of spectrum `problem` (the request's, or
/// the one a default request turned out to be).
fn between_ends_as(bp: BoundaryProblem, problem: Problem, opts: &SpectrumOptions, note: Option<String>) -> EndsReport {
    let real = problem == Problem::Bound && super::global::polynomial_in_omega(&bp);
    if !opts.seeds.is_empty() {
        // Seeds given (the closed form's exact values): one search from each.
        let modes: Vec<EndMode> = (opts.overtones.0..)
            .zip(&opts.seeds)
            .map(|(n, &s)| EndMode {
                n,
                root: super::ends::find_root(&bp, s, opts.tol),
                seed: super::ends::Seed { omega: s, from: opts.seeds_from.words().into() },
            })
            .collect();
        let (checks, check_note) = spectral_checks(&bp, &modes);
        return EndsReport { problem: bp, modes, note, numbering: None, spectrum: problem, checks, check_note, series: None };
    }
    let seeded = (opts.guess.is_none() && (problem == Problem::Quasinormal || real)).then(|| spectral_seeded(&bp, opts, real)).flatten();
    let from_spectral = seeded.is_some();
    // Normal modes between two regular ends the global method does not
    // resolve (a fall-off whose exponents differ by an integer leaves its
    // discretisation without a condition there): the real-axis scan.
    let normal = (!from_spectral && opts.guess.is_none() && problem == Problem::Quasinormal)
        .then(|| super::ends::normal_modes(&bp, opts.overtones, opts.tol))
        .flatten();
    let from_real_scan = normal.is_some();
    let modes = seeded.or(normal).unwrap_or_else(|| super::ends::modes(&bp, opts.overtones, opts.guess, opts.tol));
    let spectrum = match problem {
        Problem::Bound => Problem::Bound,
        _ if bp.ends[1].condition == Condition::Decaying => Problem::QuasiBound,
        p => p,
    };
    let numbering = match spectrum {
        _ if opts.guess.is_some() => None,
        Problem::Bound if from_spectral => Some(format!("no {opt_guess}: the eigenvalues are the global spectral method's real eigenvalues, numbered upward (the non-negative ones when only the square of the parameter enters), each polished by direct integration", opt_guess = RequestInput::Guess.mention())),
        Problem::Quasinormal if from_spectral => Some(format!("no {opt_guess}: the modes are the global spectral method's eigenvalues in the lower right quadrant, numbered by |Im ω| (real ones, normal modes, by ω), each polished by direct integration", opt_guess = RequestInput::Guess.mention())),
        Problem::Quasinormal if from_real_scan => Some(format!("no {opt_guess}: both ends are regular and the global spectral method resolved too few modes: the modes are the real roots ω ≥ 0 reached from a scan of the real axis (normal modes), numbered upward; a mode off the real axis is not sought", opt_guess = RequestInput::Guess.mention())),
        Problem::Bound | Problem::Periodic => Some(format!("no {opt_guess}: the eigenvalues are the distinct real roots reached from a scan of the real axis, numbered upward; an eigenvalue below the scanned range would shift the numbering", opt_guess = RequestInput::Guess.mention())),
        Problem::Quasinormal => Some(format!("no {opt_guess}: the modes are the distinct roots reached from a scan of the complex plane, numbered by |Im ω|; a mode the scan missed would shift the numbering", opt_guess = RequestInput::Guess.mention())),
        Problem::QuasiBound => None,
    };
    let (checks, check_note) = spectral_checks(&bp, &modes);
    let growing = growing_note(modes.iter().filter(|m| m.root.converged).map(|m| (m.n, m.root.omega)));
    let note = match (note, growing) {
        (Some(a), Some(b)) => Some(format!("{a}; {b}")),
        (a, b) => a.or(b),
    };
    EndsReport { problem: bp, modes, note, numbering, spectrum, checks, check_note, series: None }
}

/// A warning for converged modes that grow in time (Im ω > 0 under the time
/// dependence e^(−iωt)): not decaying states but an instability, which a
/// reader of the table must not take for a damped mode.
pub(crate) fn growing_note(modes: impl Iterator<Item = (u32, Complex64)>) -> Option<String> {
    // Above rounding: a real normal mode's Im ω of 1e-22 is not growth.
    let grow: Vec<String> = modes.filter(|(_, w)| w.im > 1e-10 * w.norm()).map(|(n, w)| format!("n = {n} (Im ω = {:.3e})", w.im)).collect();
    (!grow.is_empty()).then(|| {
        format!(
            "GROWING: {} {} Im ω > 0, so the field grows as e^(Im ω·t): an instability, not a decaying state (around a rotating black hole, superradiance, where Re ω < m·Ω_H; Detweiler 1980, from memory)",
            grow.join(", "),
            if grow.len() == 1 { "has" } else { "have" }
        )
    })
}

/// Modes by the continued fraction of the numeric series between the ends
/// (`solve::mobius`), each checked by direct integration seeded 1e-4 away
/// from its root when `check` (a survey may skip it); seeds given (a
/// survey's neighbour), else from the guess or the global spectral method.
/// `why` says why the exact recurrence did not serve. Gives the problem
/// back with the reason when the series cannot be set up or has no seed.
pub(crate) fn series_between_ends(
    bp: BoundaryProblem,
    problem: Problem,
    opts: &SpectrumOptions,
    var: &str,
    why: &str,
    check: bool,
    estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
) -> std::result::Result<EndsReport, Box<(BoundaryProblem, Error)>> {
    let s = match super::mobius::series(&bp, var) {
        Ok(s) => s,
        Err(e) => return Err(Box::new((bp, e))),
    };
    // Seeds given (a survey's neighbour) are used as they are.
    let neighbour = !opts.seeds.is_empty();
    // The families are told apart only where the seeds are the route's own
    // (a survey's neighbours and a guess need no estimates).
    let families = if !neighbour && opts.guess.is_none() {
        Families::new(estimate, bp.scale, opts.overtones.1 + 3)
    } else {
        Families { estimates: Vec::new(), scale: bp.scale }
    };
    // Without a guess the overtones are counted from the fundamental: the
    // ladder climbs from 0 and the range asked for is kept.
    let climb = !neighbour && opts.guess.is_none();
    let mut second: Vec<Complex64> = Vec::new();
    let seeds = match (neighbour, opts.guess) {
        (true, _) => opts.seeds.clone(),
        (false, None) => {
            let mut all = super::global::seeds(&bp, (0, opts.overtones.1));
            let second_count = all.iter().filter(|w| families.second(**w)).count();
            if second_count > 0 {
                // Room for the second family's modes among the least damped.
                all = super::global::seeds(&bp, (0, opts.overtones.1 + second_count as u32));
            }
            // Two families (the barrier's oscillating overtones, and modes
            // on or near the imaginary axis such as those set by a
            // cosmological horizon, see [`Families`]) are numbered apart:
            // the overtone ladder runs on the barrier's, which a barrier
            // estimate may seed where the spectral method resolves none of
            // it; the second family is listed on its own.
            let (osc, imag): (Vec<Complex64>, Vec<Complex64>) = all.iter().partition(|w| !families.second(**w));
            let keep = opts.overtones.1 as usize + 1;
            if !imag.is_empty() && (!osc.is_empty() || estimate(0).is_some()) {
                second = imag;
                osc.into_iter().take(keep).collect()
            } else {
                all.into_iter().take(keep).collect()
            }
        }
        (false, Some(_)) => Vec::new(),
    };
    let from_spectral = !neighbour && !seeds.is_empty();
    let seeds_from = if neighbour { opts.seeds_from } else { super::spectrum::SeedSource::GlobalMethod };
    let o = SpectrumOptions { seeds, seeds_from, overtones: if climb { (0, opts.overtones.1) } else { opts.overtones }, ..opts.clone() };
    let solve = |n: u32, seed: Complex64| super::cf::find_root(&s.recurrence, n as usize, seed, opts.tol, 64, 1 << 17);
    // With the families apart, a root of the purely imaginary one is not an
    // overtone of the oscillating one.
    let split = !second.is_empty();
    let ladder_solve = |n: u32, seed: Complex64| {
        // The inversion best conditioned for a root counts the modes of both
        // families less damped than it.
        let below = second.iter().filter(|w| w.im.abs() < seed.im.abs()).count() as u32;
        let mut r = solve(n + below, seed);
        if split && r.converged && families.second(r.omega) {
            r.converged = false;
            r.stop =
                super::cf::StopReason::Rejected(format!("the root {} belongs to the second family, listed apart", mode_words(r.omega, bp.scale)));
        }
        r
    };
    let mut cf_modes = match super::spectrum::overtones(&o, estimate, &ladder_solve) {
        Ok(m) => m.into_iter().filter(|m| m.n >= opts.overtones.0).collect::<Vec<_>>(),
        Err(e) => return Err(Box::new((bp, e))),
    };
    if neighbour && opts.seeds_from == super::spectrum::SeedSource::ClosedForm {
        // An exact seed is the mode itself: a root elsewhere is another one's.
        for m in cf_modes.iter_mut().filter(|m| m.root.converged && (m.root.omega - m.seed.0).norm() > CONFIRMED * m.seed.0.norm().max(1.0)) {
            m.root.converged = false;
            m.root.stop = super::cf::StopReason::Rejected(format!(
                "from the closed form's exact value the continued fraction reached {:.6e}{:+.6e}i, another value",
                m.root.omega.re, m.root.omega.im
            ));
        }
    }
    let (second, second_modes) = second_family(&bp, &second, &families, &solve, opts, check);
    let second_like = |w: Complex64| split && families.second(w);
    let (cf_modes, alone) = integrate_where_unsettled(&bp, cf_modes, &second_like, opts.tol, estimate);
    let o = SpectrumOptions { seeds: o.seeds.iter().skip(if climb { opts.overtones.0 as usize } else { 0 }).copied().collect(), ..o };
    let modes: Vec<EndMode> = cf_modes
        .iter()
        .map(|m| {
            if m.method == ModeMethod::Integrate {
                return super::ends::unfound(
                    m.n,
                    "not checked: found by direct integration itself, where the continued fraction did not settle".into(),
                );
            }
            if !m.root.converged {
                return super::ends::unfound(m.n, "not checked: the continued fraction did not converge".into());
            }
            if !check {
                return super::ends::unfound(m.n, "not checked: no check was asked for".into());
            }
            let seed = super::spectrum::check_seed(m.root.omega);
            let mut root = super::ends::find_root(&bp, seed, opts.tol);
            if !root.converged {
                if let Some(words) = super::ends::no_dip_at(&bp, m.root.omega) {
                    root.reason = format!("{}; {words}", root.reason);
                }
            }
            EndMode { n: m.n, root, seed: super::ends::Seed { omega: seed, from: "the continued fraction's root, 1e-4 away".into() } }
        })
        .collect();
    let given = if from_spectral || neighbour { o.seeds.len() } else { usize::from(opts.guess.is_some()) };
    let wanted = (opts.overtones.1 - opts.overtones.0 + 1) as usize;
    let mut numbering: Vec<String> = Vec::new();
    if from_spectral {
        numbering.push(format!(
            "no {opt_guess}: the seeds are the global spectral method's eigenvalues in the lower right quadrant, numbered by |Im ω| (real ones, normal modes, by ω)",
            opt_guess = RequestInput::Guess.mention()
        ));
    }
    if given < wanted {
        numbering.push(format!(
            "overtones from {} on were seeded by a first estimate or from the overtones below them (extrapolated; a step not set by the spacing of two overtones was searched again from half way back for a mode between): a mode skipped between two seeds would shift the numbering of those above it",
            opts.overtones.0 + given as u32
        ));
    }
    numbering.extend(second);
    numbering.extend(alone);
    let numbering = (!numbering.is_empty()).then(|| numbering.join("; "));
    let note = Some(format!("{why}: the continued fraction of a numeric series between the ends instead"));
    let checks = modes.iter().map(|_| None).collect();
    let check_note = "second method: direct integration between the ends, from 1e-4 away from each continued-fraction root".to_string();
    let series = SeriesReport {
        description: s.description.clone(),
        radius: s.radius,
        terms: s.recurrence.terms.len(),
        modes: cf_modes,
        second_family: second_modes,
    };
    Ok(EndsReport { problem: bp, modes, note, numbering, spectrum: problem, checks, check_note, series: Some(series) })
}

/// First estimates for the numeric series' overtone ladder: the barrier
/// top's WKB values (`spectrum::barrier_estimates`, searched beyond the
/// left end) where the equation has a barrier, those in the lower
/// half-plane only; `None` for every overtone otherwise.
pub(crate) fn barrier_seed<'a>(
    red: &'a Reduction,
    opts: &'a SpectrumOptions,
    bp: &BoundaryProblem,
) -> Box<dyn Fn(u32) -> Option<(Complex64, String)> + 'a> {
    let Location::At(left) = bp.ends[0].location else { return Box::new(|_| None) };
    let right = match bp.ends[1].location {
        Location::At(b) => b,
        Location::Infinity => f64::INFINITY,
    };
    match super::spectrum::barrier_estimates_on(red, opts, (left, right), super::wkb::SEED_ORDER) {
        Ok(est) => Box::new(move |n| est(n).and_then(|b| b.series.seed())),
        Err(_) => Box::new(|_| None),
    }
}

/// Whether ω lies on the imaginary axis to within the global method's
/// resolution of a real part (1e-6 of max(|ω|, the problem's scale)).
fn purely_imaginary(w: Complex64, scale: f64) -> bool {
    w.re.abs() <= 1e-6 * w.norm().max(scale)
}

/// The overtones whose continued fraction did not settle (its depth limit,
/// or its root finder's iteration limit) or settled on a root refused as
/// not theirs, found instead by direct integration from the same seed, on
/// the route `ends::find_root` picks: kept when the search converges in
/// the lower right quadrant to a root no other overtone holds (and, with
/// the families apart, not a purely imaginary one). Such a mode has one
/// method's evidence (its standard and refined integrations), which the
/// note says.
fn integrate_where_unsettled(
    bp: &BoundaryProblem,
    mut modes: Vec<Mode>,
    second_like: &dyn Fn(Complex64) -> bool,
    tol: f64,
    estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
) -> (Vec<Mode>, Option<String>) {
    use super::cf::StopReason;
    let mut found: Vec<u32> = Vec::new();
    for i in 0..modes.len() {
        let m = &modes[i];
        // The fraction failed to settle, or settled on a root refused as
        // not this overtone's (another overtone's again, the other family's,
        // outside the lower right quadrant): the seed is still this one's.
        let unsettled = !m.root.converged && matches!(m.root.stop, StopReason::DepthLimit | StopReason::RootIterations | StopReason::Rejected(_));
        if !unsettled || m.method != ModeMethod::ContinuedFraction || !(m.seed.0.re.is_finite() && m.seed.0.im.is_finite()) {
            continue;
        }
        // Seeds: the ladder's own, then one extrapolated from the two
        // nearest converged overtones below (one found here among them),
        // then the barrier's estimate.
        let mut below = modes[..i].iter().rev().filter(|o| o.root.converged);
        let fresh = match (below.next(), below.next()) {
            (Some(a), Some(b)) => Some(super::spectrum::extrapolate(a, b, m.n)).filter(|w| (w - m.seed.0).norm() > 1e-6 * w.norm()),
            _ => None,
        };
        let accept = |r: &super::integrate::IntRoot| {
            let near = |w: Complex64| (w - r.omega).norm() <= 1e-8 * r.omega.norm().max(bp.scale);
            let taken = modes.iter().enumerate().any(|(j, o)| j != i && o.root.converged && near(o.root.omega));
            let quadrant = r.omega.im < 0.0 && r.omega.re >= -1e-8 * r.omega.norm();
            r.converged && quadrant && !taken && !second_like(r.omega)
        };
        // Last, the barrier's estimate of this overtone, where it is not the seed already.
        let barrier = estimate(m.n).filter(|(w, _)| (w - m.seed.0).norm() > 1e-6 * w.norm());
        let seeds = [(m.seed.0, None)]
            .into_iter()
            .chain(
                fresh.map(|w| (w, Some("extrapolated from the two nearest converged overtones below, one found by direct integration".to_string()))),
            )
            .chain(barrier.map(|(w, from)| (w, Some(from))));
        let Some((from, r)) = seeds.map(|(s, from)| (from.map(|f| (s, f)), super::ends::find_root(bp, s, tol))).find(|(_, r)| accept(r)) else {
            continue;
        };
        let m = &mut modes[i];
        integrated(m, r.omega, r.residual, r.iterations, r.change);
        if let Some(seed) = from {
            m.seed = seed;
        }
        found.push(m.n);
    }
    let note = (!found.is_empty()).then(|| {
        let list: Vec<String> = found.iter().map(|n| n.to_string()).collect();
        format!(
            "overtone{} {}: the continued fraction did not settle on it, and the value is direct integration's alone from its listed seed (its standard and refined integrations agree; no second method confirms it)",
            if found.len() > 1 { "s" } else { "" },
            list.join(", ")
        )
    });
    (modes, note)
}

/// The second family of [`series_between_ends`] (purely imaginary modes
/// the global method found beside an oscillating family): each solved by
/// the continued fraction from its spectral value (the k-th inversion for
/// the k-th of them) and, when `check`, by direct integration from 1e-4
/// away; in words, for the report's notes (nothing when there is none).
fn second_family(
    bp: &BoundaryProblem,
    seeds: &[Complex64],
    families: &Families,
    solve: &dyn Fn(u32, Complex64) -> super::cf::CfRoot,
    opts: &SpectrumOptions,
    check: bool,
) -> (Option<String>, Vec<SecondMode>) {
    if seeds.is_empty() {
        return (None, Vec::new());
    }
    let mut found: Vec<Complex64> = Vec::new();
    let mut modes: Vec<SecondMode> = Vec::new();
    let mut words: Vec<String> = Vec::new();
    for (k, s) in seeds.iter().enumerate() {
        let root = solve(k as u32, *s);
        let near = |w: Complex64| (w - root.omega).norm() <= 1e-8 * root.omega.norm().max(bp.scale);
        if !root.converged || !families.second(root.omega) || found.iter().any(|w| near(*w)) {
            words.push(format!(
                "{} (the global method's value; the continued fraction did not settle on a new root of this family from it)",
                mode_words(*s, bp.scale)
            ));
            continue;
        }
        found.push(root.omega);
        let mut mode = SecondMode { omega: root.omega, agreement: None };
        let checked = if check {
            let r = super::ends::find_root(bp, super::spectrum::check_seed(root.omega), opts.tol);
            if r.converged {
                let a = agreement(root.omega, r.omega, bp.scale);
                mode.agreement = Some(a);
                format!("direct integration agrees to {a:.1e}")
            } else {
                "direct integration did not converge from it".to_string()
            }
        } else {
            "not checked".to_string()
        };
        modes.push(mode);
        words.push(format!("{} ({checked})", mode_words(root.omega, bp.scale)));
    }
    let kind = if seeds.iter().all(|w| purely_imaginary(*w, bp.scale)) {
        "purely imaginary"
    } else {
        "on or near the imaginary axis and away from the barrier's overtone estimates"
    };
    let note = format!(
        "a second family, {kind}, is not numbered with the overtones above (the least damped of each family is listed first): {}",
        words.join(", ")
    );
    (Some(note), modes)
}

/// A mode in a sentence, every digit kept: its imaginary part alone when
/// it is purely imaginary.
fn mode_words(w: Complex64, scale: f64) -> String {
    if purely_imaginary(w, scale) {
        format!("{}i", w.im)
    } else {
        format!("{}{:+}i", w.re, w.im)
    }
}

/// The two families of modes a spectrum between a black hole's horizon and
/// a cosmological one holds: the barrier's overtones, which its WKB
/// estimates follow, and a second family set by the far horizon, purely
/// imaginary for a massless field and near the imaginary axis for a
/// massive one (common practice; e.g. the de Sitter modes of
/// Schwarzschild–de Sitter). A value is of the second family when it is
/// purely imaginary, or when it is farther than a quarter of the local
/// overtone spacing from every estimate and its real part is below half
/// that of the estimate nearest in damping.
struct Families {
    /// The barrier's estimates for overtones 0, 1, … (lower half-plane), empty without a barrier.
    estimates: Vec<Complex64>,
    /// The problem's frequency scale.
    scale: f64,
}

impl Families {
    /// The estimates for overtones 0..=`last` (to the first one missing or
    /// not decaying).
    fn new(estimate: &dyn Fn(u32) -> Option<(Complex64, String)>, scale: f64, last: u32) -> Families {
        let estimates = (0..=last).map_while(|n| estimate(n).map(|(w, _)| w).filter(|w| w.im < 0.0 && w.re.is_finite())).collect();
        Families { estimates, scale }
    }

    /// Whether `w` is of the second family.
    fn second(&self, w: Complex64) -> bool {
        if purely_imaginary(w, self.scale) {
            return true;
        }
        let e = &self.estimates;
        if e.len() < 2 {
            return false;
        }
        let Some(k) = (0..e.len()).min_by(|&i, &j| (e[i].im - w.im).abs().total_cmp(&(e[j].im - w.im).abs())) else { return false };
        let spacing = if k + 1 < e.len() { (e[k + 1] - e[k]).norm() } else { (e[k] - e[k - 1]).norm() };
        let far = e.iter().all(|x| (x - w).norm() > 0.25 * spacing);
        far && w.re.abs() < 0.5 * e[k].re.abs()
    }
}

/// Modes with no guess seeded by the global spectral method (its
/// eigenvalues in the lower right quadrant in overtone order, or with `real`
/// its real eigenvalues upward), each polished by direct integration;
/// `None` (the scan decides instead) when it does not give every overtone
/// asked for or a polish fails or repeats a mode.
fn spectral_seeded(bp: &BoundaryProblem, opts: &SpectrumOptions, real: bool) -> Option<Vec<EndMode>> {
    let (lo, hi) = opts.overtones;
    let seeds = if real { super::global::real_seeds(bp, (lo, hi)) } else { super::global::seeds(bp, (lo, hi)) };
    if seeds.len() != (hi - lo + 1) as usize {
        return None;
    }
    let mut out: Vec<EndMode> = Vec::new();
    for (n, s) in (lo..=hi).zip(seeds) {
        let root = super::ends::find_root(bp, s, opts.tol);
        let repeat = out.iter().any(|m| (m.root.omega - root.omega).norm() <= 1e-8 * root.omega.norm());
        if !root.converged || repeat {
            return None;
        }
        out.push(EndMode { n, root, seed: super::ends::Seed { omega: s, from: "the global spectral method".into() } });
    }
    Some(out)
}

/// The second method on a boundary problem solved by direct integration:
/// one solve of the global spectral method (`solve::global`) over a
/// rectangle around the converged modes, and for each mode the spectral
/// eigenvalue nearest it, accepted within 1e-4 × max(|ω|, scale) (the
/// spectral values persist between its two grids to 1e-5 of that). When the
/// method cannot run on the problem (an exponent not affine in ω: a massive
/// field), the note says why and no mode has a check.
fn spectral_checks(bp: &BoundaryProblem, modes: &[EndMode]) -> (Vec<Option<SpectralCheck>>, String) {
    use super::global::{spectral_in, Region, DEFAULT_PERSIST, SEED_GRIDS};
    let found: Vec<Complex64> = modes.iter().filter(|m| m.root.converged).map(|m| m.root.omega).collect();
    if found.is_empty() {
        return (modes.iter().map(|_| None).collect(), "no mode converged: no second method ran".into());
    }
    if bp.ends.iter().any(|e| matches!(e.condition, Condition::Mixed(_))) {
        // No second method factors out a combination of two exponents.
        return (
            modes.iter().map(|_| None).collect(),
            format!("no second method ran: {}; the evidence is the agreement of standard and refined integration", super::boundary::MIXED_NEEDS_BOTH),
        );
    }
    if let Err(e) = super::global::factors(bp) {
        return collocation_checks(bp, modes, &e.message);
    }
    let pad = 0.25 * found.iter().map(|w| w.norm()).fold(bp.scale, f64::max);
    let (re0, re1) = found.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), w| (a.min(w.re), b.max(w.re)));
    let (im0, im1) = found.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), w| (a.min(w.im), b.max(w.im)));
    // Stay on the side of the real axis the modes are on (the global method
    // solves the half-planes separately at an irregular infinity); a mode on
    // the axis (a normal mode) has its discretised twin on either side.
    let on_axis = found.iter().any(|w| super::global::nearly_real(*w, bp.scale));
    let top = if im1 < 0.0 && !on_axis { (im1 + pad).min(-1e-9 * pad) } else { im1 + pad };
    let region = Region { re: (re0 - pad, re1 + pad), im: (im0 - pad, top) };
    // The coarser grid first: kept when it has an eigenvalue near every
    // converged mode, else the finer one decides.
    let mut sp = None;
    for n in SEED_GRIDS {
        let s = match spectral_in(bp, region, n, DEFAULT_PERSIST) {
            Ok(s) => s,
            Err(e) => {
                return (
                    modes.iter().map(|_| None).collect(),
                    format!("no second method ran: the global spectral method does not apply ({})", e.message),
                )
            }
        };
        let all = found.iter().all(|w| s.values.iter().any(|v| (v.omega - w).norm() <= 1e-4 * w.norm().max(bp.scale)));
        sp = Some(s);
        if all {
            break;
        }
    }
    let Some(sp) = sp else { return (modes.iter().map(|_| None).collect(), "no second method ran: no grid".into()) };
    let checks = modes
        .iter()
        .map(|m| {
            if !m.root.converged {
                return None;
            }
            let w = m.root.omega;
            let near = sp.values.iter().min_by(|a, b| (a.omega - w).norm().total_cmp(&(b.omega - w).norm()));
            let reach = 1e-4 * w.norm().max(bp.scale);
            Some(match near {
                Some(v) if (v.omega - w).norm() <= reach => {
                    SpectralCheck { method: CheckMethod::Spectral, omega: Some(v.omega), agreement: agreement(v.omega, w, bp.scale), reason: String::new() }
                }
                _ => SpectralCheck {
                    method: CheckMethod::Spectral,
                    omega: None,
                    agreement: f64::NAN,
                    reason: format!(
                        "the global spectral method has no eigenvalue within {reach:.1e} of this mode (grids {} and {}; it resolves the least damped modes only)",
                        sp.grids.0, sp.grids.1
                    ),
                },
            })
        })
        .collect();
    let words = format!(
        "second method: the global spectral method (Chebyshev collocation of the remainder after the ends' behaviour, grids {} and {} agreeing to {:.0e}), its eigenvalue nearest each mode",
        sp.grids.0, sp.grids.1, sp.tol
    );
    (checks, words)
}

/// How far the second method's value `v` lies from the mode `w`, relative to
/// |w|, or to a thousandth of the problem's frequency scale where |w| is
/// smaller (an eigenvalue at or next to zero has no relative accuracy).
fn agreement(v: Complex64, w: Complex64, scale: f64) -> f64 {
    (v - w).norm() / w.norm().max(1e-3 * scale).max(f64::MIN_POSITIVE)
}

/// The second method where the global one cannot be formed (`why`): for
/// each converged mode, the root of the collocation problem with the ends'
/// behaviour frozen at each trial value, from the mode
/// ([`super::global::collocation_root`], grids agreeing to 1e-9).
fn collocation_checks(bp: &BoundaryProblem, modes: &[EndMode], why: &str) -> (Vec<Option<SpectralCheck>>, String) {
    const AGREE: f64 = 1e-9;
    let mut grids = (0, 0);
    let checks = modes
        .iter()
        .map(|m| {
            if !m.root.converged {
                return None;
            }
            let w = m.root.omega;
            let mut r = super::global::collocation_root(bp, w, AGREE);
            grids = grids.max(r.grids);
            if bp.kind == SpectrumKind::Bound && r.omega.im.abs() <= 1e-8 * r.omega.norm().max(bp.scale) {
                // A real problem's eigenvalue: the imaginary part is rounding.
                r.omega.im = 0.0;
            }
            let reach = 1e-4 * w.norm().max(bp.scale);
            Some(if r.converged && (r.omega - w).norm() <= reach {
                SpectralCheck {
                    method: CheckMethod::Collocation,
                    omega: Some(r.omega),
                    agreement: agreement(r.omega, w, bp.scale),
                    reason: String::new(),
                }
            } else {
                let reason = if r.converged {
                    format!("the collocation root from this mode is {:.10}{:+.10}i, farther than {reach:.1e}: another mode", r.omega.re, r.omega.im)
                } else {
                    format!("the collocation root did not converge: {}", r.reason)
                };
                SpectralCheck { method: CheckMethod::Collocation, omega: None, agreement: f64::NAN, reason }
            })
        })
        .collect();
    let words = format!(
        "second method: Chebyshev collocation with the ends' behaviour evaluated at each trial value (the global method's polynomial problem cannot be formed: {why}), the root of its bordered determinant from each mode, grids up to {} and {} agreeing to {AGREE:.0e}",
        grids.0, grids.1
    );
    (checks, words)
}

/// Quasinormal modes by the exact recurrence's continued fraction, checked
/// by direct integration; or the barrier-top estimates when asked for.
fn recurrence_route(
    red: &Reduction,
    req: &SpectrumRequest,
    opts: &SpectrumOptions,
    eikonal: Option<(String, usize, Reduction)>,
    bp: Option<&BoundaryProblem>,
) -> Result<(Body, Option<ModeFunctions>)> {
    let (rec, setup0) = super::spectrum::qnm_recurrence(red, opts)?;
    let quasi_bound = req.problem == Problem::QuasiBound;
    let setup0 = if quasi_bound { setup0.decaying()? } else { setup0 };
    // Quasi-bound states are seeded by the hydrogen-like levels, never by the barrier.
    let estimates = if quasi_bound { None } else { super::spectrum::barrier_estimates(red, opts, setup0.horizon_value, req.wkb_order).ok() };
    if matches!(req.method, Method::Wkb | Method::Eikonal) {
        let Some(est) = &estimates else {
            return Err(usage("no potential barrier could be built for WKB: the equation has no rational tortoise coordinate"));
        };
        let limit = match eikonal {
            Some((name, i, ered)) => {
                let (v, h) = super::spectrum::barrier_potential(&ered, opts)?;
                let e = super::wkb::try_eikonal_limit(&ered.field, &v, &h, &opts.values, Some(opts.freq), (setup0.horizon_value, f64::INFINITY), i)
                    .map_err(|e| e.in_option(RequestInput::EikonalParam))?;
                Some((name, e, opts.values[i].to_f64().0))
            }
            None => None,
        };
        let rows = (opts.overtones.0..=opts.overtones.1).map(|n| (n, est(n))).collect();
        return Ok((Body::Estimates(EstimateReport { wkb: req.method == Method::Wkb, order: req.wkb_order, limit, rows }), None));
    }
    // Seeds only from estimates in the lower half-plane (wkb.rs: WkbSeries::seed).
    let estimate = |n: u32| -> Option<(Complex64, String)> {
        if quasi_bound {
            return bp.and_then(|bp| super::ends::hydrogenic_seed(bp, n)).map(|s| (s.omega, s.from));
        }
        estimates.as_ref().and_then(|e| e(n)).and_then(|b| b.series.seed())
    };
    // Quasi-bound levels crowd below the continuum edge: each one's check
    // starts at an offset scaled to the distance to its nearest neighbour.
    let mut offsets: Option<Vec<f64>> = None;
    let (mut modes, setup) = if quasi_bound {
        let levels = super::levels::quasi_bound_levels(&rec, setup0.clone(), opts, &estimate)?;
        offsets = Some(levels.check_offsets);
        (levels.modes, levels.setup)
    } else if opts.overtones.0 > 0 && opts.guess.is_none() && opts.seeds.is_empty() {
        // The overtone number is a count from the fundamental: without a
        // guess the ladder climbs from overtone 0 (a first estimate of a high
        // overtone can sit nearer another one), and the range asked for is kept.
        // (The overtones below the range are kept until the special points
        // are settled: a point another overtone holds is not this one's.)
        let from_zero = SpectrumOptions { overtones: (0, opts.overtones.1), ..opts.clone() };
        super::spectrum::qnm_modes_from(&rec, setup0.clone(), &from_zero, &estimate)?
    } else {
        super::spectrum::qnm_modes_from(&rec, setup0.clone(), opts, &estimate)?
    };
    let degenerate = super::spectrum::degenerate_of(&rec, &setup, opts);
    let mut notes = super::spectrum::settle_special(&rec, &setup, opts, &degenerate, &mut modes)?;
    modes.retain(|m| m.n >= opts.overtones.0);
    notes.extend(super::spectrum::degenerate_notes(&setup, &degenerate, &modes));
    notes.extend(growing_note(modes.iter().filter(|m| m.root.converged).map(|m| (m.n, m.root.omega))));
    let wkb = modes.iter().map(|m| estimates.as_ref().and_then(|e| e(m.n)).map(|b| b.series.omega())).collect();
    // The independent check: direct integration, seeded 1e-4 away from the
    // continued-fraction root (quasi-bound levels: nearer, see
    // `levels::check_offsets`; with Method::Integrate, from the seed); with an
    // adjoined rate, between the ends of the boundary problem (the branch at
    // infinity chosen at each trial ω by the same condition). The closure
    // takes the seed and the root finder's first relative spread.
    type Check<'a> = Box<dyn Fn(Complex64, f64) -> IntRoot + Sync + 'a>;
    let integ: Option<Check<'_>> = match (&setup.rate, bp) {
        (Some(_), Some(bp)) => Some(Box::new(move |w, spread| super::ends::find_root_near(bp, w, spread, opts.tol))),
        (Some(_), None) => None,
        (None, _) => super::spectrum::integration_check(red, opts, &setup).ok().map(|f| Box::new(move |w, _| f(w)) as Check<'_>),
    };
    let offset = |i: usize| offsets.as_ref().and_then(|o| o.get(i).copied());
    // Each mode's integration is independent of the others': they run in
    // parallel, and come back in the modes' order.
    let refine = req.method == Method::Integrate;
    let runs: Vec<Option<IntRoot>> = {
        use rayon::prelude::*;
        modes
            .par_iter()
            .enumerate()
            .map(|(i, m)| match &integ {
                Some(f) if m.method == ModeMethod::ContinuedFraction && refine => Some(f(m.seed.0, offset(i).unwrap_or(super::roots::SPREAD))),
                Some(f) if m.method == ModeMethod::ContinuedFraction && m.root.converged => Some(match offset(i) {
                    Some(o) => super::levels::check_level(m.root.omega, o, &|w, spread| f(w, spread)),
                    None => f(super::spectrum::check_seed(m.root.omega), super::roots::SPREAD),
                }),
                _ => None,
            })
            .collect()
    };
    let mut checks: Vec<Option<IntRoot>> = Vec::new();
    for (m, run) in modes.iter_mut().zip(runs) {
        match run {
            // With Method::Integrate the integration's root is the mode.
            Some(r) if refine => {
                m.root.omega = r.omega;
                m.root.converged = r.converged;
                m.root.residual = r.residual;
                m.root.iterations = r.iterations;
                m.root.depth = 0;
                m.root.depth_change = f64::NAN;
                if !r.converged {
                    m.root.stop = super::cf::StopReason::Rejected(r.reason.clone());
                }
                m.method = ModeMethod::Integrate;
                checks.push(None);
            }
            other => checks.push(other),
        }
    }
    let functions = match (req.mode_functions, &setup.rate, bp) {
        (Some(reach), Some(_), Some(bp)) => {
            // ψ of the normal form from the horizon's Frobenius series, as between the ends.
            let fs = modes
                .iter()
                .zip(&checks)
                // At a special point the series' exponent does not fix a function.
                .filter(|(m, _)| m.root.converged && m.method != ModeMethod::SpecialPoint)
                .map(|(m, c)| {
                    let second = c.as_ref().filter(|r| r.converged).map(|r| left_end_function(bp, NumericMethod::Integrate, r.omega, reach));
                    ModeFunction::new(m.n, left_end_function(bp, m.method.into(), m.root.omega, reach), second)
                })
                .collect();
            Some(ModeFunctions {
                normalisation: "the normal form's ψ, with unit leading coefficient of its Frobenius series at the left end",
                modes: fs,
            })
        }
        (Some(reach), _, _) => {
            // The unknown itself, from the horizon's Frobenius series with unit leading coefficient.
            let pb = super::scatter::problem(red, opts, &setup)?;
            let at = |method: NumericMethod, w: Complex64| MethodFunction {
                method,
                value: w,
                samples: super::modefn::horizon_mode_function(&pb.ode, pb.near, pb.rho_at(w), w, reach, 400),
            };
            // The second method's function at its own frequency, where the check converged.
            let fs = modes
                .iter()
                .zip(&checks)
                // At a special point the series' exponent does not fix a function.
                .filter(|(m, _)| m.root.converged && m.method != ModeMethod::SpecialPoint)
                .map(|(m, c)| {
                    let second = c.as_ref().filter(|r| r.converged).map(|r| at(NumericMethod::Integrate, r.omega));
                    ModeFunction::new(m.n, at(m.method.into(), m.root.omega), second)
                })
                .collect();
            Some(ModeFunctions { normalisation: "the unknown, with unit leading coefficient of its Frobenius series at the horizon", modes: fs })
        }
        (None, _, _) => None,
    };
    if quasi_bound {
        for (m, c) in modes.iter().zip(&checks) {
            if let (true, Some(c)) = (m.root.converged, c) {
                notes.extend(super::levels::im_resolution_note(m.n, m.root.omega, c));
            }
        }
    }
    let check_from = (0..modes.len()).map(offset).collect();
    Ok((Body::Recurrence(RecurrenceReport { setup, modes, checks, check_from, wkb, wkb_order: req.wkb_order, coupled: None, notes }), functions))
}

/// Bound states by collocation on the interval between the real singular
/// points (or the half line / line when infinity is the only other end),
/// each converged eigenvalue refined by shooting as its check.
fn bound_states(red: &Reduction, req: &SpectrumRequest, opts: &SpectrumOptions) -> Result<(BoundReport, Option<ModeFunctions>)> {
    use super::collocation::{bound_problem, try_bound_states};
    use super::shoot::{refine, try_bound_ode};
    if !matches!(req.method, Method::Auto | Method::Collocation) {
        return Err(method_error(
            format!("{opt_boundary} bound computes bound states by collocation ({opt_method} auto or collocation); shooting runs as the check of every eigenvalue", opt_boundary = RequestInput::Boundary.mention(), opt_method = RequestInput::Method.mention()),
        ));
    }
    let k = &red.field;
    let (domain, threshold, family_ends) = bound_problem(red, opts.freq, &opts.values)?;
    let count = opts.overtones.1 as usize + 1;
    let states =
        try_bound_states(k, &red.normal.q, opts.freq, &opts.values, domain, super::collocation::SCALE, count, opts.tol.max(1e-13), threshold)?;
    let states: Vec<BoundState> = states.into_iter().filter(|s| s.n >= opts.overtones.0).collect();
    // The second method: Muller on the shooting mismatch, seeded by each
    // converged collocation value (the value itself stays primary).
    let ode = try_bound_ode(k, &red.normal.q, &opts.values, opts.freq);
    let checks: Vec<Option<BoundCheck>> = states
        .iter()
        .map(|s| {
            s.converged.then(|| match &ode {
                Ok(o) => refine(o, domain, s, opts.tol.max(1e-12)),
                Err(e) => BoundCheck::Unavailable(e.to_string()),
            })
        })
        .collect();
    let functions = match (&req.mode_functions, &ode) {
        (Some(_), Ok(o)) => {
            // The normal form's ψ at the refined (shooting) value where it agrees, else the collocation value.
            let fs = states
                .iter()
                .zip(&checks)
                .filter(|(s, _)| s.converged)
                .map(|(s, c)| {
                    let e = match c {
                        Some(BoundCheck::Agrees(r)) => r.omega,
                        _ => s.value,
                    };
                    let first =
                        MethodFunction { method: NumericMethod::Shooting, value: e, samples: super::modefn::bound_mode_function(o, domain, e, 24) };
                    // The collocation eigenvector of the same state, on the same samples.
                    let second = first.samples.as_ref().ok().map(|shot| MethodFunction {
                        method: NumericMethod::Collocation,
                        value: s.value,
                        samples: super::collocation::try_eigenfunction(
                            k,
                            &red.normal.q,
                            opts.freq,
                            &opts.values,
                            domain,
                            super::collocation::SCALE,
                            s.points,
                            s.value,
                            &shot.iter().map(|p| p.0).collect::<Vec<_>>(),
                        )
                        .map_err(|e| e.message)
                        .and_then(|v| super::modefn::normalised_like(shot, v)),
                    });
                    ModeFunction::new(s.n, first, second)
                })
                .collect();
            Some(ModeFunctions {
                normalisation: "the normal form's psi, with the integral of |psi|^2 equal to 1, real and positive next to the first end",
                modes: fs,
            })
        }
        _ => None,
    };
    // An end the family of equations has but these values make ordinary.
    let notes = family_ends
        .iter()
        .map(|z| {
            format!(
                "{} = {} ends the domain: singular for other values of the parameters, an ordinary point of Q at these (ψ = 0 there)",
                red.var,
                super::boundary::fmt(*z)
            )
        })
        .collect();
    Ok((BoundReport { domain, threshold, states, checks, notes }, functions))
}

/// Quasinormal modes of a radial equation coupled to an angular one.
fn coupled(red: &Reduction, req: &SpectrumRequest, c: &CoupleRequest, opts: &SpectrumOptions) -> Result<(RecurrenceReport, Option<ModeFunctions>)> {
    let fixed: Vec<(String, GRat)> = req.values.iter().map(|(n, v, _)| (n.clone(), v.clone())).collect();
    let mut coupling = super::coupled::try_coupling(&red.field, &c.angular, &c.links, &fixed, opts.freq, c.index, c.guess).map_err(in_angular)?;
    let none = |_: u32| None;
    let (setup, found, path) = match opts.guess {
        Some(_) => {
            let (setup, found) = super::coupled::coupled_spectrum(red, &coupling, opts, true, &none)?;
            (setup, found, None)
        }
        // No seed: from the uncoupled limit, continued in the coupling parameter.
        None => {
            let (setup, found, path) = super::continuation::continued_spectrum(red, &mut coupling, opts, true)?;
            (setup, found, Some(path))
        }
    };
    let functions = req.mode_functions.map(|reach| coupled_functions(red, req, opts, &found, reach));
    let report = RecurrenceReport {
        setup,
        modes: found.iter().map(|c| c.mode.clone()).collect(),
        checks: found.iter().map(|c| c.check.clone()).collect(),
        check_from: found.iter().map(|_| None).collect(),
        wkb: found.iter().map(|_| None).collect(),
        wkb_order: req.wkb_order,
        coupled: Some(CoupledReport {
            name: c.name.clone(),
            angular: coupling.angular,
            links: c.link_texts.iter().map(|t| t.trim().to_string()).collect(),
            values: found.iter().map(|c| c.angular.clone()).collect(),
            path,
        }),
        notes: Vec::new(),
    };
    Ok((report, functions))
}

/// The marker of an error in the angular equation's own text: the caller
/// renders errors whose origin is this input against that text.
pub const ANGULAR_ORIGIN: RequestInput = RequestInput::Couple;

/// Marks an error of the angular equation (its span points into that equation's text).
fn in_angular(e: Error) -> Error {
    if e.origin == crate::error::Origin::Input {
        e.in_option(ANGULAR_ORIGIN)
    } else {
        e
    }
}
