//! Boundary problems as data: the spectral parameter, the two ends of the
//! domain and the condition imposed at each, located numerically at the
//! given parameter values from the exact normal form ψ'' + Q ψ = 0.
//!
//! The ends are singular points of Q: real roots of its denominator's exact
//! factors (of any degree: a cubic's roots are found numerically and said
//! to be so) and the point at infinity. An end whose exponents depend on the
//! spectral parameter behaves as a horizon (the tortoise coordinate runs
//! off to ±∞ there); one whose exponents do not is a regular boundary (a
//! centre, an anti-de Sitter boundary, the end of an angular interval).
//!
//! The default domain is the one a physicist would pick (DESIGN.md,
//! "Boundary problems on every background"): from the outermost black-hole
//! horizon to the next singular end outward. When infinity is irregular
//! (asymptotically flat, massless or massive) that is infinity; when it is a
//! regular point, two neighbouring horizons are a black-hole and a
//! cosmological horizon (de Sitter: the domain lies between them); a single
//! outer horizon over a centre is cosmological when the potential
//! V = ω² − q/h² (h² the coefficient of ω² in q) is positive inside it and
//! negative beyond (the de Sitter static patch), and otherwise the black
//! hole's, with an anti-de Sitter boundary at infinity. The equation alone
//! cannot always tell these apart (flipping the sign of f changes only the
//! sign of the angular and mass terms), so the choice is printed and
//! `--ends` overrides it.

use crate::algebra::{Field, GRat, RatFunc};
use crate::analysis::numeric::try_roots;
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;
use crate::solve::NumOde;
use num_complex::Complex64;

/// What kind of spectrum is sought.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SpectrumKind {
    /// Quasinormal modes: waves leave the domain through both ends.
    Quasinormal,
    /// Quasi-bound states: waves leave through horizons and decay at an
    /// irregular infinity (massive fields).
    QuasiBound,
    /// Bound states and other real eigenvalue problems (angular equations,
    /// wells): the solution is normalisable or regular at both ends.
    Bound,
}

/// Two ends a user gave (left, right), each with the condition there when
/// one was given.
pub type GivenEnds = [(Location, Option<Condition>); 2];

/// Where an end lies.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Location {
    /// A finite real point (numeric value at the given parameters).
    At(f64),
    /// The point at infinity.
    Infinity,
}

/// The local nature of an end at the given parameter values.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Nature {
    /// A regular singular point whose exponents depend on the spectral
    /// parameter: a horizon.
    Horizon,
    /// A regular singular (or ordinary) point whose exponents do not depend
    /// on the spectral parameter: a centre, an anti-de Sitter boundary, an
    /// angular end.
    Regular,
    /// Infinity as an irregular point of Poincaré rank 1.
    IrregularRank1,
}

/// The condition imposed at an end. Matched exhaustively wherever an end is
/// used, so a new condition shows the compiler every place it touches.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Condition {
    /// The wave leaves the domain through this horizon (black-hole horizon:
    /// "ingoing"; cosmological horizon: "outgoing into it"). With e^(−iωt),
    /// the exponent whose ω-derivative has the negative imaginary part.
    IntoHorizon,
    /// The wave comes out of this horizon (the other exponent).
    OutOfHorizon,
    /// At an irregular infinity: the branch e^(μz) with Im μ of the sign of
    /// Re ω (e^(+ikr), Re k > 0 for Re ω > 0).
    Outgoing,
    /// At an irregular infinity: the branch with Re μ < 0 (quasi-bound states).
    Decaying,
    /// At a regular boundary: the exponent with the larger real part (regular
    /// at a centre, the normalisable fall-off at an anti-de Sitter boundary).
    Normalisable,
    /// At a regular boundary: the exponent with the smaller real part
    /// (the slower fall-off; a Neumann-type condition).
    SlowerFallOff,
    /// At a regular boundary with exponents ρ₋ (smaller real part) and ρ₊:
    /// the solution d^ρ₋(1 + …) + κ d^ρ₊(1 + …), d the distance to the end
    /// (1/z at infinity), each series with unit leading coefficient — a
    /// mixed (Robin) condition between [`Condition::SlowerFallOff`] (κ = 0)
    /// and [`Condition::Normalisable`] (κ → ∞). Only direct integration
    /// takes it: the other methods factor out a single exponent.
    Mixed(Weight),
}

/// The weight κ of a [`Condition::Mixed`], compared by its bits so that a
/// condition stays `Eq`.
#[derive(Clone, Copy, Debug)]
pub struct Weight(pub f64);

impl PartialEq for Weight {
    fn eq(&self, other: &Self) -> bool {
        self.0.to_bits() == other.0.to_bits()
    }
}

impl Eq for Weight {}

/// Why the methods that factor out one exponent per end (the global
/// method, the numeric series, closed forms) do not take a mixed condition.
pub const MIXED_NEEDS_BOTH: &str =
    "a mixed condition combines both exponents at its end, while the global method, the numeric series and the closed forms each factor out one: direct integration alone takes it";

impl Condition {
    /// The condition in words, as printed.
    pub fn words(self) -> &'static str {
        match self {
            Condition::IntoHorizon => {
                "the wave leaves the domain through the horizon, into it (ingoing at a black hole's horizon, outgoing at a cosmological one)"
            }
            Condition::OutOfHorizon => "the wave comes out of the horizon",
            Condition::Outgoing => "outgoing, e^(+ikz) with Re k of the sign of Re ω",
            Condition::Decaying => "decaying, e^(μz) with Re μ < 0",
            Condition::Normalisable => "normalisable: the exponent with the larger real part",
            Condition::SlowerFallOff => "the exponent with the smaller real part",
            Condition::Mixed(_) => "mixed (Robin): the slower fall-off plus κ times the faster, each with unit leading coefficient in the distance to the end (1/z at infinity)",
        }
    }

    /// The short name used by `--ends` and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Condition::IntoHorizon => "into",
            Condition::OutOfHorizon => "out-of",
            Condition::Outgoing => "outgoing",
            Condition::Decaying => "decaying",
            Condition::Normalisable => "normalisable",
            Condition::SlowerFallOff => "slower",
            Condition::Mixed(_) => "mixed",
        }
    }

    /// The name with its weight, as `--ends` takes it and JSON prints it:
    /// `mixed=K` for a mixed condition, else [`Condition::name`].
    pub fn label(self) -> String {
        match self {
            Condition::Mixed(Weight(k)) => format!("mixed={k}"),
            other => other.name().to_string(),
        }
    }

    /// The condition named `text` (one of [`Condition::name`]); a mixed
    /// one is read by its caller, which parses the weight.
    pub fn from_name(text: &str) -> Option<Condition> {
        [Condition::IntoHorizon, Condition::OutOfHorizon, Condition::Outgoing, Condition::Decaying, Condition::Normalisable, Condition::SlowerFallOff]
            .into_iter()
            .find(|c| c.name() == text)
    }

    /// Whether the condition can be imposed at an end of this nature.
    pub fn fits(self, nature: Nature) -> bool {
        match self {
            Condition::IntoHorizon | Condition::OutOfHorizon => nature == Nature::Horizon,
            Condition::Outgoing | Condition::Decaying => nature == Nature::IrregularRank1,
            Condition::Normalisable | Condition::SlowerFallOff => nature != Nature::IrregularRank1,
            Condition::Mixed(_) => nature == Nature::Regular,
        }
    }
}

/// One end of the domain.
#[derive(Clone, Debug)]
pub struct End {
    /// Where it lies.
    pub location: Location,
    /// Its nature at the given values.
    pub nature: Nature,
    /// The condition imposed there.
    pub condition: Condition,
    /// How it was found, in words (e.g. "the largest real root of the cubic factor …").
    pub found: String,
}

/// A singular point of Q on the real axis at the given values.
#[derive(Clone, Debug)]
pub struct RealPoint {
    /// Its location.
    pub z: f64,
    /// Its nature.
    pub nature: Nature,
    /// The exact factor it is a root of, as text, and the factor's degree.
    pub factor: (String, u32),
    /// A singular point of the family of equations (the parameters
    /// symbolic) at which these values leave Q without a pole: an ordinary
    /// point, exponents 0 and 1.
    pub ordinary: bool,
}

/// A boundary problem at given parameter values: the numeric equation
/// A ψ'' + C ψ = 0 (the normal form cleared of denominators, numeric except
/// in the spectral parameter) and the two ends with their conditions.
#[derive(Clone, Debug)]
pub struct BoundaryProblem {
    /// Field index of the spectral parameter.
    pub freq: usize,
    /// The normal form as a numeric equation in (z, ω).
    pub ode: NumOde,
    /// The left and the right end (left < right on the real axis).
    pub ends: [End; 2],
    /// Every zero of A (the finite singular points, complex in general).
    pub zeros: Vec<Complex64>,
    /// The real singular points, sorted.
    pub real_points: Vec<RealPoint>,
    /// A frequency scale: the surface gravity κ of the first horizon end
    /// (|dρ/dω| = 1/(2κ)), or 1 when no end is a horizon.
    pub scale: f64,
    /// What was chosen and why, in words (printed with the result).
    pub notes: Vec<String>,
    /// The kind of spectrum sought.
    pub kind: SpectrumKind,
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// Coefficients of a univariate numeric polynomial (low degree first) with
/// the top zeros dropped.
fn trim(mut v: Vec<Complex64>) -> Vec<Complex64> {
    while v.last().is_some_and(|c| c.norm() == 0.0) {
        v.pop();
    }
    v
}

/// The two exponents of ψ at a finite point z₀ of the numeric normal form at
/// ω, from the indicial equation ρ(ρ − 1) + q₀ = 0 with q₀ = lim (z − z₀)² C/A;
/// `None` when z₀ is an irregular point (the pole of C/A exceeds 2).
pub fn exponents_at(ode: &NumOde, z0: f64, w: Complex64) -> Option<[Complex64; 2]> {
    let a = trim(ode.a.at_omega(w));
    let c = trim(ode.c.at_omega(w));
    let x0 = Complex64::new(z0, 0.0);
    let (sa, sc) = (super::integrate::shift(&a, x0), super::integrate::shift(&c, x0));
    let scale_a = sa.iter().map(|x| x.norm()).fold(0.0, f64::max).max(f64::MIN_POSITIVE);
    let m = sa.iter().position(|x| x.norm() > 1e-9 * scale_a)?;
    // Pole order of C/A at z₀ is m − ord(C).
    let scale_c = sc.iter().map(|x| x.norm()).fold(0.0, f64::max);
    let oc = sc.iter().position(|x| x.norm() > 1e-9 * scale_c.max(f64::MIN_POSITIVE)).unwrap_or(usize::MAX);
    if oc != usize::MAX && m > oc + 2 {
        return None;
    }
    let q0 = if m >= 2 && oc != usize::MAX && oc <= m - 2 { sc[m - 2] / sa[m] } else { Complex64::new(0.0, 0.0) };
    let s = (Complex64::new(0.25, 0.0) - q0).sqrt();
    Some([Complex64::new(0.5, 0.0) + s, Complex64::new(0.5, 0.0) - s])
}

/// d/dω of each exponent at a finite point, by pairing the exponents at ω
/// and at ω + ε (the exponents are analytic in ω away from coincidences).
pub fn exponent_slopes(ode: &NumOde, z0: f64, w: Complex64) -> Option<([Complex64; 2], [Complex64; 2])> {
    let eps = 1e-6 * w.norm().max(1e-3);
    let e0 = exponents_at(ode, z0, w)?;
    let e1 = exponents_at(ode, z0, w + eps)?;
    let direct = (e1[0] - e0[0]).norm() + (e1[1] - e0[1]).norm();
    let crossed = (e1[1] - e0[0]).norm() + (e1[0] - e0[1]).norm();
    let e1 = if direct <= crossed { e1 } else { [e1[1], e1[0]] };
    Some((e0, [(e1[0] - e0[0]) / eps, (e1[1] - e0[1]) / eps]))
}

/// Whether the exponents at z₀ depend on ω (checked at two real values).
fn is_horizon(ode: &NumOde, z0: f64) -> bool {
    let ws = [Complex64::new(0.37, 0.0), Complex64::new(1.13, 0.0)];
    let (Some(a), Some(b)) = (exponents_at(ode, z0, ws[0]), exponents_at(ode, z0, ws[1])) else { return false };
    let d = (a[0] - a[1]).norm().max((b[0] - b[1]).norm());
    ((a[0] - a[1]).norm() - (b[0] - b[1]).norm()).abs() > 1e-7 * (1.0 + d)
}

/// The degree in z of the numeric coefficient polynomials (max over ω powers)
/// and the ω-degree.
fn z_degree(p: &super::NPoly) -> Option<usize> {
    p.c.iter().rposition(|row| row.iter().any(|c| c.norm() > 0.0))
}

/// Builds the boundary problem from a reduction whose parameters other than
/// the spectral one are already substituted (see `spectrum::substitute`):
/// finds the real singular points, decides each one's nature, and picks the
/// default domain and conditions, or the `given` ends (left, right) with
/// their conditions when the caller names them.
pub fn try_problem(red: &Reduction, values: &[GRat], freq: usize, kind: SpectrumKind, given: Option<GivenEnds>) -> Result<BoundaryProblem> {
    let (field, q, unknown_q) = (&red.field, &red.normal.q, &red.q);
    let ode = super::try_num_ode(field, &RatFunc::zero(), q, values, freq)?;
    // The unknown's own coefficient of y: its ω-free part against its ω²
    // part is the potential as the equation was written (sign of f·W).
    let unknown = super::try_num_ode(field, &RatFunc::zero(), unknown_q, values, freq)?;
    if ode.a.c.iter().any(|row| row.len() > 1 && row[1..].iter().any(|c| c.norm() > 0.0)) {
        return Err(usage("the denominator of Q depends on the spectral parameter: the ends would move with it"));
    }
    let (real_points, zeros) = real_singular_points(field, q, red.family.as_ref(), &ode, values, freq)?;
    let infinity = infinity_of(&ode);
    let mut notes = Vec::new();
    let ends = match &given {
        Some(g) => given_ends(g, &real_points, &infinity)?,
        None => match cosine_ends(red, &real_points, &mut notes) {
            Some(ends) => ends,
            None => natural_ends(&real_points, &infinity, (&ode, &unknown), &mut notes)?,
        },
    };
    let [left, right] = end_conditions(ends, given.as_ref(), kind)?;
    notes.extend(limit_circle_note(&ode, [&left, &right], given.as_ref(), &field.names()[0]));
    if let (Location::At(a), Location::At(b)) = (left.location, right.location) {
        if a >= b {
            return Err(usage("the left end must lie below the right end"));
        }
    }
    if left.location == Location::Infinity {
        return Err(usage("infinity can only be the right end"));
    }
    let scale = horizon_scale(&ode, [&left, &right]);
    Ok(BoundaryProblem { freq, ode, ends: [left, right], zeros, real_points, scale, notes, kind })
}

/// The real points where the family of equations is singular but these
/// values leave Q without a pole (see [`RealPoint::ordinary`]): ends for any
/// method that picks its interval from the singular points.
pub(crate) fn ordinary_family_points(red: &Reduction, values: &[GRat], freq: usize) -> Result<Vec<f64>> {
    if red.family.is_none() {
        return Ok(Vec::new());
    }
    let ode = super::try_num_ode(&red.field, &RatFunc::zero(), &red.normal.q, values, freq)?;
    let (points, _) = real_singular_points(&red.field, &red.normal.q, red.family.as_ref(), &ode, values, freq)?;
    Ok(points.iter().filter(|p| p.ordinary).map(|p| p.z).collect())
}

/// The real roots of each exact denominator factor, with the factor they
/// come from and their nature (sorted), and every root (real or not); then
/// the real roots of the family's factors (`family`, Q with its parameters
/// symbolic) that are not among them: points these values make ordinary.
fn real_singular_points(
    field: &Field,
    q: &RatFunc,
    family: Option<&RatFunc>,
    ode: &NumOde,
    values: &[GRat],
    freq: usize,
) -> Result<(Vec<RealPoint>, Vec<Complex64>)> {
    let names = field.names();
    let mut real_points: Vec<RealPoint> = Vec::new();
    let mut zeros: Vec<Complex64> = Vec::new();
    let own = q.den_factors();
    let count = own.len();
    let extra = family.map(|f| f.den_factors()).unwrap_or_default();
    for (i, (f, _)) in own.iter().chain(extra.iter()).enumerate() {
        let ordinary = i >= count;
        let coeffs: Vec<Complex64> = {
            let np = super::try_npoly(f.poly(), 1.0, values, freq);
            trim(np.c.iter().map(|row| row.first().copied().unwrap_or_default()).collect())
        };
        let deg = coeffs.len().saturating_sub(1);
        if deg == 0 {
            continue;
        }
        let roots = try_roots(&coeffs).map_err(|e| usage(format!("the singular points could not be located numerically: {e}")))?;
        let text = crate::algebra::print::poly_text(f.poly(), &crate::algebra::Int::from(1), names, crate::algebra::print::Style::Text);
        for r in roots {
            let real = r.im.abs() <= 1e-9 * r.re.abs().max(1.0);
            if ordinary {
                // Only a real point the equation at these values lacks.
                let known = zeros.iter().any(|z| (z - r).norm() <= 1e-9 * r.norm().max(1.0));
                if real && !known && !real_points.iter().any(|p| (p.z - r.re).abs() <= 1e-9 * r.re.abs().max(1.0)) {
                    real_points.push(RealPoint { z: r.re + 0.0, nature: Nature::Regular, factor: (text.clone(), deg as u32), ordinary: true });
                }
                continue;
            }
            zeros.push(r);
            if real {
                real_points.push(RealPoint { z: r.re + 0.0, nature: Nature::Regular, factor: (text.clone(), deg as u32), ordinary: false });
            }
        }
    }
    real_points.sort_by(|a, b| a.z.total_cmp(&b.z));
    for p in real_points.iter_mut().filter(|p| !p.ordinary) {
        let w = Complex64::new(0.7, 0.0);
        if exponents_at(ode, p.z, w).is_none() {
            return Err(usage(format!(
                "{} = {} is an irregular singular point on the real axis (a degenerate horizon, as an extremal black hole's, is one): an end there is not supported yet",
                field.names()[0],
                fmt(p.z)
            )));
        }
        if is_horizon(ode, p.z) {
            p.nature = Nature::Horizon;
        }
    }
    Ok((real_points, zeros))
}

/// Infinity as an end: its nature when supported, and d = deg C − deg A
/// (C/A ~ z^d), which decides it.
struct Infinity {
    nature: Option<Nature>,
    d: isize,
}

impl Infinity {
    /// Its Poincaré rank, for messages.
    fn rank(&self) -> f64 {
        self.d as f64 / 2.0 + 1.0
    }
}

fn infinity_of(ode: &NumOde) -> Infinity {
    let (da, dc) = (z_degree(&ode.a).unwrap_or(0) as isize, z_degree(&ode.c).map(|d| d as isize).unwrap_or(isize::MIN / 2));
    let d = dc - da;
    let nature = if d <= -2 {
        Some(Nature::Regular)
    } else if d == 0 {
        Some(Nature::IrregularRank1)
    } else {
        None
    };
    Infinity { nature, d }
}

/// An end found before its condition is chosen: where, what, and how it was found.
#[derive(Clone)]
struct FoundEnd {
    location: Location,
    nature: Nature,
    found: String,
}

/// A real singular point as an end's description.
fn describe(p: &RealPoint) -> String {
    let what = match p.nature {
        Nature::Horizon => "horizon",
        Nature::Regular => "regular boundary",
        Nature::IrregularRank1 => "irregular point",
    };
    if p.ordinary {
        return format!(
            "the root of {}, singular for other values of the parameters but an ordinary point of Q at these: exponents 0 and 1, the larger one being ψ = 0 there (Dirichlet), the other ψ' = 0 (Neumann)",
            p.factor.0
        );
    }
    if p.factor.1 == 1 {
        format!("{what}, the root of {}", p.factor.0)
    } else {
        format!("{what}, a real root of {} (degree {}), located numerically", p.factor.0, p.factor.1)
    }
}

/// The ends as given, each matched to a singular point.
fn given_ends(given: &GivenEnds, real_points: &[RealPoint], infinity: &Infinity) -> Result<[FoundEnd; 2]> {
    let find_point = |z: f64| real_points.iter().find(|p| (p.z - z).abs() <= 1e-9 * z.abs().max(1.0));
    let mut out = Vec::new();
    for (loc, _) in given.iter() {
        match loc {
            Location::Infinity => {
                let n = infinity
                    .nature
                    .ok_or_else(|| usage(format!("infinity has Poincaré rank {} here: not supported as an end yet", infinity.rank())))?;
                out.push(FoundEnd { location: Location::Infinity, nature: n, found: "infinity, given".to_string() });
            }
            Location::At(z) => match find_point(*z) {
                Some(p) => out.push(FoundEnd { location: Location::At(p.z), nature: p.nature, found: format!("{}, given", describe(p)) }),
                // An ordinary point as an end: a centre where ψ is analytic,
                // its exponents 0 (ψ(z) ≠ 0, Neumann-like) and 1 (ψ(z) = 0:
                // regular at the centre of a field whose radial function is
                // ψ = r·φ).
                None => out.push(FoundEnd {
                    location: Location::At(*z),
                    nature: Nature::Regular,
                    found:
                        "an ordinary point of Q, given: exponents 0 and 1, the larger one being ψ = 0 there (Dirichlet), the other ψ' = 0 (Neumann)"
                            .to_string(),
                }),
            },
        }
    }
    Ok([out[0].clone(), out[1].clone()])
}

/// For an equation written in an angle x and solved in w = cos(kx) (the
/// coefficients' poles at x = 0 and π/k): the interval between those
/// poles, w from −1 to 1; w = ∞ is no real x.
fn cosine_ends(red: &Reduction, real_points: &[RealPoint], notes: &mut Vec<String>) -> Option<[FoundEnd; 2]> {
    let map = red.map.as_ref().filter(|m| m.form == crate::ode::MapForm::Cos)?;
    let at = |z: f64| real_points.iter().find(|p| (p.z - z).abs() <= 1e-12);
    let (lo, hi) = (at(-1.0)?, at(1.0)?);
    notes.push(format!(
        "the equation is even in {x} with poles between which {map} runs once over (−1, 1): the domain is that interval (name other ends with {opt_ends})",
        x = map.old_var,
        map = crate::ode::exp_map_text(map, &red.ode),
        opt_ends = RequestInput::Ends.mention()
    ));
    let end = |p: &RealPoint| FoundEnd { location: Location::At(p.z), nature: p.nature, found: describe(p) };
    Some([end(lo), end(hi)])
}

/// The ends a physicist means when none are given: from the outermost
/// horizon to infinity, or, when that horizon is cosmological, from the
/// next singular point inward to it (`eqs`: the normal form and the
/// equation as written, whose potentials decide); with no horizon, from the
/// outermost real singular point (a centre) to infinity.
fn natural_ends(real_points: &[RealPoint], infinity: &Infinity, eqs: (&NumOde, &NumOde), notes: &mut Vec<String>) -> Result<[FoundEnd; 2]> {
    let (ode, unknown) = eqs;
    let horizons: Vec<&RealPoint> = real_points.iter().filter(|p| p.nature == Nature::Horizon).collect();
    let inf = infinity.nature.ok_or_else(|| {
        usage(format!(
            "infinity has Poincaré rank {}: not supported as an end yet (give the ends with {opt_ends})",
            infinity.rank(),
            opt_ends = RequestInput::Ends.mention()
        ))
    })?;
    let Some(outer) = horizons.last() else {
        // No horizon (a star, a cavity, global anti-de Sitter): the domain
        // runs from the outermost real singular point (a centre) to
        // infinity, and the spectrum is that of the field's normal or
        // quasinormal modes there.
        let Some(centre) = real_points.last() else {
            return Err(usage(format!(
                "no horizon and no real singular point: the equation has no natural end (give the ends with {opt_ends})",
                opt_ends = RequestInput::Ends.mention()
            )));
        };
        notes.push(format!(
            "no horizon (no real singular point whose exponents depend on the spectral parameter): the domain runs from the outermost real singular point, {}, to infinity (name other ends with {opt_ends})",
            fmt(centre.z),
            opt_ends = RequestInput::Ends.mention()
        ));
        let found = match inf {
            Nature::IrregularRank1 => "irregular point of rank 1".to_string(),
            _ => "regular boundary".to_string(),
        };
        return Ok([
            FoundEnd { location: Location::At(centre.z), nature: centre.nature, found: describe(centre) },
            FoundEnd { location: Location::Infinity, nature: inf, found },
        ]);
    };
    let inner = real_points.iter().rev().find(|p| p.z < outer.z - 1e-9 * outer.z.abs().max(1.0));
    // Beyond a cosmological horizon the potential turns negative; inside
    // it (between it and the next singular point inward) it is positive.
    // Whether the static region lies beyond the outer horizon, and whether
    // the potential's sign said so (else the horizons' arrangement did).
    let (beyond_is_static, by_potential) = match (inf, inner) {
        (Nature::IrregularRank1, _) | (_, None) => (true, false),
        (_, Some(inner)) => {
            // Two horizons next to each other with a regular infinity beyond:
            // a black-hole and a cosmological horizon (de Sitter). Otherwise the
            // potential decides: positive inside and negative beyond the outer
            // horizon (as written, or in normal form) marks a cosmological one.
            let gap = outer.z - inner.z;
            let says = |eq: &NumOde| potential_at(eq, inner.z + 0.5 * gap) > 0.0 && potential_at(eq, outer.z + 0.5 * gap) < 0.0;
            let by_potential = says(unknown) || says(ode);
            // The reverse — negative between two horizons, positive beyond
            // the outer one — is a black hole's inner and outer horizons
            // (f < 0 between them) with the static region outside, up to an
            // anti-de Sitter boundary: charged or rotating AdS black holes.
            let inside_negative = |eq: &NumOde| potential_at(eq, inner.z + 0.5 * gap) < 0.0 && potential_at(eq, outer.z + 0.5 * gap) > 0.0;
            let inner_and_outer = inner.nature == Nature::Horizon && !by_potential && (inside_negative(unknown) || inside_negative(ode));
            // Horizons at ±r_h about a regular centre at r = 0 (real
            // exponents a positive integer apart, as l + 1 and −l, or an
            // ordinary point): the horizon polynomial is even, as de Sitter
            // space's f = 1 − r²/L², whose static patch lies between the
            // centre and the horizon (common practice). A black hole's
            // centre is no such point (BTZ's exponents at r = 0 are
            // ½ ± ik/r₊, Schwarzschild–anti-de Sitter's coincide).
            let close = |x: f64, y: f64| (x - y).abs() <= 1e-9 * y.abs().max(1.0);
            let centre = inner.ordinary
                || exponents_at(ode, inner.z, Complex64::new(1.0, 0.0)).is_some_and(|[e1, e2]| {
                    let d = (e1 - e2).re.abs();
                    (e1 - e2).im.abs() <= 1e-9 && d >= 1.0 - 1e-9 && (d - d.round()).abs() <= 1e-9
                });
            let mirrored = centre
                && inner.z.abs() <= 1e-12 * outer.z.abs().max(1.0)
                && real_points.iter().any(|p| p.nature == Nature::Horizon && close(p.z, -outer.z));
            if mirrored && !by_potential && inner.nature != Nature::Horizon {
                notes.push(format!(
                    "horizons at ±{} about a regular centre at 0: taken as the static patch of a de Sitter-like space, the domain between the centre and the horizon (the potential's sign alone does not decide this at these values; for the region beyond the horizon name the ends with {opt_ends})",
                    fmt(outer.z),
                    opt_ends = RequestInput::Ends.mention()
                ));
            }
            let interior = (inner.nature == Nature::Horizon && !inner_and_outer) || mirrored || by_potential;
            if inner_and_outer {
                notes.push(format!(
                    "two horizons with a regular infinity beyond, the potential negative between them and positive outside: taken as a black hole's inner and outer horizons, the domain from the outer one, {}, to the boundary at infinity (for a region between a black-hole and a cosmological horizon name the ends with {opt_ends} {}..{})",
                    fmt(outer.z),
                    fmt(inner.z),
                    fmt(outer.z),
                    opt_ends = RequestInput::Ends.mention()
                ));
            } else if inner.nature == Nature::Horizon {
                notes.push(format!("two horizons with a regular infinity beyond: taken as a black-hole and a cosmological horizon (for the inner and outer horizons of an anti-de Sitter black hole name the ends with {opt_ends})", opt_ends = RequestInput::Ends.mention()));
            } else if !interior {
                // f and −f give the same equation when the potential's
                // bracket changes sign with them: which side is static is a
                // choice, said plainly with the command for the other one.
                notes.push(format!(
                    "the horizon at {} is taken as a black hole's, with the static region outside it up to the regular boundary at infinity; the equation alone does not decide this (the potential does not change sign across the horizon as a cosmological horizon's does): for a cosmological horizon with the static region inside it (a de Sitter static patch), name the ends with {opt_ends} {}..{}",
                    fmt(outer.z),
                    fmt(inner.z),
                    fmt(outer.z),
                    opt_ends = RequestInput::Ends.mention()
                ));
            }
            (!interior, by_potential)
        }
    };
    let at = |p: &RealPoint| FoundEnd { location: Location::At(p.z), nature: p.nature, found: describe(p) };
    if beyond_is_static {
        notes.push("the domain runs from the outermost horizon to infinity".to_string());
        let found = match inf {
            Nature::IrregularRank1 => "irregular point of rank 1".to_string(),
            _ => "regular boundary".to_string(),
        };
        Ok([FoundEnd { nature: Nature::Horizon, ..at(outer) }, FoundEnd { location: Location::Infinity, nature: inf, found }])
    } else {
        // The outermost horizon is cosmological: the domain lies inside it.
        let Some(inner) = inner else { return Err(Error::new(ErrorKind::Internal, "no inner end")) };
        if by_potential {
            notes.push("the potential is negative beyond the outermost horizon: the static region, the domain, lies inside it (a cosmological horizon, or a black hole's in an inverted radial variable such as u = r₊²/r²)".to_string());
        }
        Ok([at(inner), FoundEnd { nature: Nature::Horizon, ..at(outer) }])
    }
}

/// Where a regular end whose condition was not given is limit-circle —
/// its exponents differ by a non-integer less than 1 in real part, so both
/// solutions are square-integrable there (Weyl's alternative; common
/// practice) — the condition is a choice, not forced: said, with the other
/// choices. (Mathieu's equation in cos x at w = ±1, exponents 0 and ½; a
/// field in anti-de Sitter inside the window of two admissible fall-offs.)
fn limit_circle_note(ode: &NumOde, ends: [&End; 2], given: Option<&GivenEnds>, var: &str) -> Option<String> {
    let circle = |end: &End| -> Option<f64> {
        let Location::At(z) = end.location else { return None };
        let chosen = given.is_some_and(|g| g.iter().any(|(l, c)| *l == end.location && c.is_some()));
        if chosen || end.nature != Nature::Regular || end.condition != Condition::Normalisable {
            return None;
        }
        let [a, b] = exponents_at(ode, z, Complex64::new(0.37, 0.0))?;
        let d = (a - b).re.abs();
        let integer = (d - d.round()).abs() <= 1e-9;
        (d < 1.0 - 1e-9 && !integer && (a - b).im.abs() <= 1e-9).then_some(d)
    };
    let found: Vec<(usize, f64)> = ends.iter().enumerate().filter_map(|(i, e)| circle(e).map(|d| (i, d))).collect();
    if found.is_empty() {
        return None;
    }
    let text = |i: usize| match ends[i].location {
        Location::At(z) => fmt(z),
        Location::Infinity => "inf".to_string(),
    };
    let at: Vec<String> = found.iter().map(|(i, d)| format!("{var} = {} (exponents {} apart)", text(*i), fmt(*d))).collect();
    let other: Vec<String> = (0..2).map(|i| if found.iter().any(|(j, _)| *j == i) { format!("{}:slower", text(i)) } else { text(i) }).collect();
    Some(format!(
        "at {}: the exponents differ by less than 1, so both solutions are square-integrable there (a limit-circle end) and the condition is a choice, not forced: the larger exponent is taken (the solution vanishing fastest); the other is {opt_ends} '{}..{}', a combination …:mixed=κ",
        at.join(" and "),
        other[0],
        other[1],
        opt_ends = RequestInput::Ends.mention()
    ))
}

/// Each end with its condition: the one given (when it fits the end), else
/// the problem's natural one.
fn end_conditions(ends: [FoundEnd; 2], given: Option<&GivenEnds>, kind: SpectrumKind) -> Result<[End; 2]> {
    let mut out: Vec<End> = Vec::new();
    for (i, FoundEnd { location, nature, found }) in ends.into_iter().enumerate() {
        let wanted = given.and_then(|g| g[i].1);
        let condition = match wanted {
            Some(c) => {
                if !c.fits(nature) {
                    return Err(usage(format!("the condition '{}' does not fit {found}", c.label())));
                }
                c
            }
            None => match nature {
                Nature::Horizon => match kind {
                    // A real eigenvalue problem whose exponents depend on the eigenvalue
                    // (an energy: ±√(−E)): the decaying, larger exponent.
                    SpectrumKind::Bound => Condition::Normalisable,
                    SpectrumKind::Quasinormal | SpectrumKind::QuasiBound => Condition::IntoHorizon,
                },
                Nature::Regular => Condition::Normalisable,
                Nature::IrregularRank1 => match kind {
                    SpectrumKind::Quasinormal => Condition::Outgoing,
                    SpectrumKind::QuasiBound | SpectrumKind::Bound => Condition::Decaying,
                },
            },
        };
        // In a real eigenvalue problem such a point is no horizon: its
        // exponents move with an energy or a separation constant.
        let found = match (nature, kind) {
            (Nature::Horizon, SpectrumKind::Bound) if found.starts_with("horizon") => {
                found.replacen("horizon", "regular boundary whose exponents move with the eigenvalue", 1)
            }
            _ => found,
        };
        out.push(End { location, nature, condition, found });
    }
    out.try_into().map_err(|_| Error::new(ErrorKind::Internal, "two ends expected"))
}

/// The length scale 1/(2|κ|) of the first horizon end (κ its exponent's
/// slope in ω), 1 without one.
fn horizon_scale(ode: &NumOde, ends: [&End; 2]) -> f64 {
    ends.iter()
        .find_map(|e| match (e.location, e.nature) {
            (Location::At(z), Nature::Horizon) => {
                let (_, s) = exponent_slopes(ode, z, Complex64::new(0.5, 0.0))?;
                let k = 1.0 / (2.0 * s[0].norm());
                k.is_finite().then_some(k)
            }
            _ => None,
        })
        .unwrap_or(1.0)
}

/// V = ω² − q/h² at a real point x of y'' + p y' + q y = 0 (h² the
/// coefficient of ω² in q, so V = −q₀/q₂ with q₀ the ω-free part), the
/// potential as the equation was written; 0 where h² vanishes.
fn potential_at(ode: &NumOde, x: f64) -> f64 {
    let at =
        |j: usize| -> f64 { ode.c.c.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, row| acc * x + row.get(j).copied().unwrap_or_default()).re };
    let (q0, q2) = (at(0), at(2));
    if q2 == 0.0 {
        return 0.0;
    }
    -q0 / q2
}

/// A double with up to 12 significant digits, for notes.
pub(crate) fn fmt(x: f64) -> String {
    let s = format!("{x:.12}");
    let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// The right end's location in words.
pub fn location_text(l: Location) -> String {
    match l {
        Location::At(z) => fmt(z),
        Location::Infinity => "∞".into(),
    }
}
