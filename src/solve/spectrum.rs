//! Quasinormal-mode spectra from the pasted equation: the boundary data of
//! `analysis` pick the ingoing exponent at the outermost horizon and the
//! outgoing branch at infinity, `series` derives the recurrence about the
//! horizon, and the continued fraction is solved overtone by overtone (the
//! n-th inversion for overtone n, Leaver 1985), each seeded from a first
//! estimate and, when asked, checked by an independent method.

use super::cf::{find_root, try_numeric, CfRoot, StopReason};
use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{GRat, Rat};
use crate::analysis::canonical::Choices;
use crate::analysis::labels::{boundary_choices, label, Boundary, ExponentPicks};
use crate::analysis::{analyse, Kind, Place, PointId};
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::ode::Reduction;
use num_complex::Complex64;

/// Options of a spectrum computation.
#[derive(Clone, Debug)]
pub struct SpectrumOptions {
    /// Field index of the frequency parameter.
    pub freq: usize,
    /// A value for every field variable (entry 0 and the frequency's are ignored).
    pub values: Vec<GRat>,
    /// Overtones to compute, inclusive range.
    pub overtones: (u32, u32),
    /// Relative tolerance on ω.
    pub tol: f64,
    /// A seed for the lowest overtone asked for.
    pub guess: Option<Complex64>,
    /// Seeds, one per overtone from the lowest asked for, used before any
    /// other estimate.
    pub seeds: Vec<Complex64>,
    /// Where `seeds` came from (each mode's seed says so).
    pub seeds_from: SeedSource,
}

impl SpectrumOptions {
    /// Options with no seeds given (the route finds its own).
    pub fn new(freq: usize, values: Vec<GRat>, overtones: (u32, u32), tol: f64, guess: Option<Complex64>) -> SpectrumOptions {
        SpectrumOptions { freq, values, overtones, tol, guess, seeds: Vec::new(), seeds_from: SeedSource::GlobalMethod }
    }

    /// These options seeded by the global spectral method's eigenvalues,
    /// one per overtone from 0 to `last`, with no guess.
    pub fn from_global(&self, seeds: Vec<Complex64>, last: u32) -> SpectrumOptions {
        SpectrumOptions { overtones: (0, last), seeds, seeds_from: SeedSource::GlobalMethod, guess: None, ..self.clone() }
    }
}

/// Where a run's given seeds came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SeedSource {
    /// The global spectral method's eigenvalues (`solve::global`).
    GlobalMethod,
    /// The closed form's exact values.
    ClosedForm,
    /// The modes at a neighbouring point of a survey or a path.
    Neighbour,
}

impl SeedSource {
    /// A seed's origin in words.
    pub fn words(self) -> &'static str {
        match self {
            SeedSource::GlobalMethod => "the global spectral method (an eigenvalue two Chebyshev grids agree on)",
            SeedSource::ClosedForm => "the closed form's exact value",
            SeedSource::Neighbour => "the mode at the neighbouring point",
        }
    }
}

/// How a mode's value was obtained (a closed set: every use is a `match`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ModeMethod {
    /// The continued fraction of the exact recurrence.
    ContinuedFraction,
    /// The exact termination condition of a two-term recurrence.
    Terminating,
    /// Direct integration between the ends.
    Integrate,
    /// An algebraically special point of the recurrence ([`SpecialPoint`]),
    /// found and verified in exact arithmetic.
    SpecialPoint,
}

impl ModeMethod {
    /// The tag in documents: "cf", "terminating", "integrate" or "special".
    pub fn tag(self) -> &'static str {
        match self {
            ModeMethod::ContinuedFraction => "cf",
            ModeMethod::Terminating => "terminating",
            ModeMethod::Integrate => "integrate",
            ModeMethod::SpecialPoint => "special",
        }
    }
}

/// One mode and the evidence for it.
#[derive(Clone, Debug)]
pub struct Mode {
    /// The overtone number.
    pub n: u32,
    /// The continued-fraction result.
    pub root: CfRoot,
    /// The seed it started from, and where the seed came from.
    pub seed: (Complex64, String),
    /// How the value was obtained.
    pub method: ModeMethod,
}

/// What the computation set up, for the report.
#[derive(Clone, Debug)]
pub struct Setup {
    /// The horizon's location as text.
    pub horizon: String,
    /// Its numeric location at the given values.
    pub horizon_value: f64,
    /// The recurrence's ansatz and choices.
    pub ansatz: String,
    /// Exponent choices made.
    pub choices: Vec<String>,
    /// Number of terms of the recurrence.
    pub terms: usize,
    /// The horizon's identity (a point, or the roots of its factor).
    pub place: PointId,
    /// The exponent and branch picks (point, 1-based choice).
    pub picks: Vec<(PointId, usize)>,
    /// When the horizon is a root θ of a quadratic factor: the factor, θ's
    /// value and the index of the chosen exponent.
    pub theta: Option<(crate::algebra::Poly, f64, usize)>,
    /// The analysis the choices were made from (the integration check reads
    /// the same exponents and formal solutions).
    pub analysis: crate::analysis::Analysis,
    /// A square root adjoined at infinity (a massive field's decay rate).
    pub rate: Option<RateSetup>,
}

/// A square root χ, χ² = P, adjoined at an irregular infinity
/// (`series::rate`), and the branch it is evaluated on.
#[derive(Clone, Debug)]
pub struct RateSetup {
    /// χ's name.
    pub symbol: String,
    /// χ's index in the recurrence's field (the equation's field length).
    pub index: usize,
    /// P in the equation's field.
    pub square: crate::algebra::RatFunc,
    /// What χ stands for, in words.
    pub meaning: String,
    /// The condition at infinity that picks χ(ω): outgoing for quasinormal
    /// modes, decaying for quasi-bound states.
    pub condition: super::boundary::Condition,
}

impl Setup {
    /// The set-up for quasi-bound states (decaying at infinity) instead of
    /// quasinormal modes: only a recurrence with an adjoined rate has the
    /// choice, since its branch is picked at each trial ω.
    pub fn decaying(mut self) -> Result<Setup> {
        match &mut self.rate {
            Some(r) => {
                r.condition = super::boundary::Condition::Decaying;
                Ok(self)
            }
            None => Err(usage("the continued fraction for quasi-bound states needs a square root adjoined at ∞ (a massive field)")),
        }
    }
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// Picks the horizon (outermost regular point whose exponents depend on ω)
/// and derives the quasinormal-mode recurrence about it. After a change of
/// variable both happen on the equation in its physical variable
/// (`solve::physical`: there the horizon is outermost and infinity is where
/// the wave goes out), so the recurrence and its set-up are in that variable.
pub fn qnm_recurrence(red: &Reduction, opts: &SpectrumOptions) -> Result<(crate::series::Recurrence, Setup)> {
    let physical = super::physical::physical(red)?;
    let red = physical.as_ref().map_or(red, |(p, _)| p);
    let an = analyse(red)?;
    let choice = qnm_choice(red, &an, opts)?;
    let (rec, adjoined) = qnm_derive(red, &an, &choice)?;
    let setup = qnm_setup(&rec, adjoined, an, choice);
    Ok((rec, setup))
}

/// Where the quasinormal-mode series is expanded, as chosen at the values.
#[derive(Clone, Debug)]
pub enum HorizonChoice {
    /// A point rational in the parameters: its text, its value, and the
    /// series variable (`None`: Leaver's default about it).
    Point {
        /// The point's exact text.
        text: String,
        /// Its value.
        value: f64,
        /// The point, exact.
        at: crate::algebra::RatFunc,
        /// The series variable.
        series: crate::series::SeriesMap,
    },
    /// The outer real root of the irreducible factor of singular point `index`.
    Root {
        /// The index of the singular point in the analysis.
        index: usize,
        /// The root's value.
        value: f64,
    },
}

/// The numeric decisions behind a quasinormal-mode recurrence at the
/// values of [`SpectrumOptions`]: the exponent and branch picks, and the
/// horizon. The exact derivation ([`qnm_derive`]) depends only on the
/// discrete part of it ([`QnmChoice::same_derivation`]), so that a
/// recurrence derived with some parameters symbolic serves every point
/// where the same choice is made.
#[derive(Clone, Debug)]
pub struct QnmChoice {
    /// The exponent and branch picks (point, 1-based choice).
    pub picks: Vec<(PointId, usize)>,
    /// The picks in words.
    pub said: Vec<String>,
    /// The horizon.
    pub horizon: HorizonChoice,
    /// The spectral parameter's field index.
    pub freq: usize,
}

impl QnmChoice {
    /// True when `other` leads to the same exact derivation (the same
    /// picks, the same horizon and series), whatever the numeric values.
    pub fn same_derivation(&self, other: &QnmChoice) -> bool {
        self.picks == other.picks
            && match (&self.horizon, &other.horizon) {
                (HorizonChoice::Point { text: a, series: sa, .. }, HorizonChoice::Point { text: b, series: sb, .. }) => a == b && sa == sb,
                (HorizonChoice::Root { index: a, .. }, HorizonChoice::Root { index: b, .. }) => a == b,
                _ => false,
            }
    }
}

/// The sentences of the picks at finite points other than the horizon
/// (`horizon`: its place when rational, at the value `at`) when the domain runs from the horizon to an irregular infinity: such a
/// point lies inside the horizon (or off the real axis), not at an end, so
/// its pick is a convention of the series — the prefactor's power there is
/// analytic and non-zero on the whole domain, so either exponent gives the
/// same modes — and is said so instead of being called ingoing.
fn outside_the_domain(
    k: &crate::algebra::Field,
    picks: &[(PointId, usize)],
    said: Vec<String>,
    horizon: Option<&crate::algebra::RatFunc>,
    at: f64,
) -> Vec<String> {
    picks
        .iter()
        .zip(said)
        .map(|((id, j), sentence)| match id {
            PointId::At(z) if Some(z) != horizon => format!(
                "at {}: exponent number {j}, a convention of the series (the point is not an end: it lies inside the horizon at {}, and either exponent there gives the same modes)",
                id.text(k.names()),
                super::boundary::fmt(at)
            ),
            _ => sentence,
        })
        .collect()
}

/// The numeric decisions of [`qnm_recurrence`] at the options' values
/// (the analysis `an` of `red`).
pub fn qnm_choice(red: &Reduction, an: &crate::analysis::Analysis, opts: &SpectrumOptions) -> Result<QnmChoice> {
    let k = &red.field;
    let mut point = opts.values.clone();
    point[opts.freq] = GRat::real(Rat::new(1.into(), 2.into()).expect("nonzero"));
    let labels = label(k, an, opts.freq, &point, true)?;
    let ExponentPicks { picks, said } = boundary_choices(k, an, Some(&labels), Boundary::Qnm, &point)?;
    // The outermost labelled regular point with an exact location.
    let vals = crate::analysis::numeric::Values::new(point.clone());
    let mut best: Option<(f64, String, crate::algebra::RatFunc)> = None;
    let mut best_root: Option<(f64, usize)> = None;
    for (i, p) in an.points.iter().enumerate() {
        if p.kind != Kind::Regular || labels.per_point[i].iter().all(Option::is_none) {
            continue;
        }
        match &p.place {
            Place::Point { at, .. } => {
                if let Some(z) = vals.ratfunc(at) {
                    if best.as_ref().is_none_or(|(b, _, _)| z.re > *b) {
                        best = Some((z.re, ratfunc_text(at, k.names(), Style::Text), at.clone()));
                    }
                }
            }
            Place::Roots(f) => {
                // The outermost real root of the factor (the labels were decided there).
                let outer = crate::analysis::labels::outer_root(&vals, f, an.physical.as_ref());
                if let Some(z) = outer.filter(|z| z.im.abs() < 1e-10 * z.re.abs().max(1.0)) {
                    if best_root.is_none_or(|(b, _)| z.re > b) {
                        best_root = Some((z.re, i));
                    }
                }
            }
            Place::Infinity => {}
        }
    }
    let inf_irregular = an.points.iter().any(|p| matches!(p.place, Place::Infinity) && p.kind == Kind::Irregular);
    if let Some((zr, i)) = best_root.filter(|(zr, _)| best.as_ref().is_none_or(|(b, _, _)| *zr > *b)) {
        let said = if inf_irregular { outside_the_domain(k, &picks, said, None, zr) } else { said };
        return Ok(QnmChoice { picks, said, horizon: HorizonChoice::Root { index: i, value: zr }, freq: opts.freq });
    }
    let Some((horizon_value, horizon, horizon_at)) = best else {
        return Err(usage("no horizon-like regular point: the quasinormal-mode series needs one"));
    };
    let said = if inf_irregular { outside_the_domain(k, &picks, said, Some(&horizon_at), horizon_value) } else { said };
    // With an irregular point at infinity, Leaver's Möbius series; otherwise
    // a plain Frobenius series about the horizon carrying the chosen
    // exponents of the other regular points, whose termination is the mode condition.
    // With several other finite points, the Möbius pole z₂ is the one that
    // keeps every other singular point outside |u| ≤ 1 (so that the series
    // converges up to u = 1, i.e. infinity), the farthest outside possible.
    let others: Vec<(crate::algebra::RatFunc, Complex64)> = an
        .points
        .iter()
        .filter(|p| p.kind != Kind::Ordinary)
        .filter_map(|p| match &p.place {
            Place::Point { at, .. } if *at != horizon_at => vals.ratfunc(at).map(|z| (at.clone(), z)),
            _ => None,
        })
        .collect();
    let zh = Complex64::new(horizon_value, 0.0);
    let pole = if inf_irregular && others.len() >= 2 {
        others
            .iter()
            .map(|(at, z2)| {
                let worst = others.iter().filter(|(b, _)| b != at).map(|(_, p)| ((*p - *z2) / (*p - zh)).norm()).fold(0.0, f64::max);
                (worst, at.clone())
            })
            .filter(|(w, _)| *w < 1.0)
            .min_by(|a, b| a.0.partial_cmp(&b.0).unwrap_or(std::cmp::Ordering::Equal))
            .map(|(_, at)| at)
    } else {
        None
    };
    let series = match (pole, inf_irregular) {
        (Some(z2), _) => crate::series::SeriesMap::Pole(z2),
        (None, true) => crate::series::SeriesMap::Default,
        (None, false) => crate::series::SeriesMap::Shift,
    };
    Ok(QnmChoice { picks, said, horizon: HorizonChoice::Point { text: horizon, value: horizon_value, at: horizon_at, series }, freq: opts.freq })
}

/// About an adjoined root: the exponent used there (0-based) and what the
/// symbol stands for.
pub type RootUse = Option<(usize, String)>;

/// What a derivation adjoined as symbols: the horizon's root, and a square
/// root at infinity.
#[derive(Clone, Debug, Default)]
pub struct Adjoined {
    /// About an adjoined root of the horizon's factor.
    pub root: RootUse,
    /// The square root adjoined at infinity (its condition is outgoing until
    /// [`Setup::decaying`] changes it).
    pub rate: Option<RateSetup>,
}

/// The exact recurrence of a [`QnmChoice`] (only its discrete part matters).
/// When the formal solutions at an irregular infinity have no exact leading
/// coefficient, their square root χ is adjoined first (`series::rate`) and
/// the series carries e^(−χz) there.
pub fn qnm_derive(red: &Reduction, an: &crate::analysis::Analysis, choice: &QnmChoice) -> Result<(crate::series::Recurrence, Adjoined)> {
    let adjoined = if crate::series::rate::needs_rate(red)? { Some(crate::series::rate::adjoin_rate(red, choice.freq)?) } else { None };
    let mut choices = Choices { picks: choice.picks.clone(), values: Vec::new() };
    let rate = adjoined.as_ref().map(|a| {
        choices.set(PointId::Infinity, a.branch);
        RateSetup {
            symbol: a.symbol.clone(),
            index: a.index,
            square: a.square.clone(),
            meaning: a.meaning.clone(),
            condition: super::boundary::Condition::Outgoing,
        }
    });
    // The horizon's factor, when it is a root of one (found again in the rewritten analysis).
    let factor = match &choice.horizon {
        HorizonChoice::Root { index, .. } => match &an.points.get(*index).map(|p| &p.place) {
            Some(Place::Roots(f)) => Some(f.clone()),
            _ => return Err(Error::new(ErrorKind::Internal, "the horizon's index is not a root of a factor")),
        },
        HorizonChoice::Point { .. } => None,
    };
    let (red, an) = match &adjoined {
        Some(a) => (&a.red, &a.analysis),
        None => (red, an),
    };
    match (&choice.horizon, factor) {
        (HorizonChoice::Point { at, series, .. }, _) => {
            Ok((crate::series::recurrence_at(red, at, series, &choices, false)?, Adjoined { root: None, rate }))
        }
        (HorizonChoice::Root { .. }, f) => {
            if f.as_ref().is_none_or(|f| choices.get(&PointId::Roots(f.clone())).is_none()) {
                return Err(usage("no ingoing exponent was found at the horizon"));
            }
            let found = an.points.iter().position(|p| matches!((&p.place, &f), (Place::Roots(g), Some(f)) if g == f));
            let Some(i) = found else {
                return Err(usage("the horizon's factor is not a singular point of the equation with the adjoined square root"));
            };
            let root = crate::series::recurrence_about_point(red, &an.points[i], &choices)?;
            Ok((root.rec, Adjoined { root: Some((root.exponent, root.meaning)), rate }))
        }
    }
}

/// The [`Setup`] of a recurrence derived by [`qnm_derive`] from `choice`
/// (whose numeric values it reports).
pub fn qnm_setup(rec: &crate::series::Recurrence, adjoined: Adjoined, an: crate::analysis::Analysis, choice: QnmChoice) -> Setup {
    let ansatz = format!("{} = {} * Σ a_n u^n, {}", rec.function, rec.prefactor, rec.series);
    let Adjoined { root, rate } = adjoined;
    let mut said = choice.said;
    if let Some(r) = &rate {
        said.push(format!(
            "at ∞: {}; the ansatz carries the formal solution with leading exponent −{} there, and {}(ω) is evaluated at each trial ω on the branch of the square root that the condition at ∞ picks (outgoing: continuous with the massless outgoing wave; decaying: Re {} > 0)",
            r.meaning, r.symbol, r.symbol, r.symbol
        ));
    }
    let (horizon, horizon_value, theta, place) = match choice.horizon {
        HorizonChoice::Point { text, value, at, .. } => (text, value, None, PointId::At(at)),
        HorizonChoice::Root { index, value } => {
            let (j, meaning) = root.unwrap_or_default();
            let theta = match &an.points[index].place {
                Place::Roots(f) => Some((f.clone(), value, j)),
                _ => None,
            };
            let place = an.points[index].place.id();
            // The adjoined symbol is the recurrence field's last name.
            let names = rec.field.names();
            let letter = crate::algebra::print::root_letter(&names[..names.len().saturating_sub(1)]).text;
            (format!("{letter} ≈ {value:.15}, the outer real root; the formulas use {meaning}"), value, theta, place)
        }
    };
    Setup { horizon, horizon_value, ansatz, choices: said, terms: rec.coeffs.len(), place, picks: choice.picks, theta, analysis: an, rate }
}

/// An exact rational equal to a double (its binary value).
pub fn exact_double(x: f64) -> GRat {
    let (m, e) = if x == 0.0 {
        (0i64, 0i32)
    } else {
        let bits = x.to_bits();
        let exp = ((bits >> 52) & 0x7ff) as i32;
        let frac = (bits & ((1u64 << 52) - 1)) as i64;
        let (mant, e2) = if exp == 0 { (frac, -1074) } else { (frac | (1i64 << 52), exp - 1075) };
        (if x < 0.0 { -mant } else { mant }, e2)
    };
    let r = if e >= 0 {
        Rat::int(crate::algebra::Int::from(m).mul(&crate::algebra::Int::from(2).pow(e as u32)))
    } else {
        Rat::new(crate::algebra::Int::from(m), crate::algebra::Int::from(2).pow((-e) as u32)).expect("nonzero")
    };
    GRat::real(r)
}

/// Computes the quasinormal modes by the continued fraction.
pub fn qnm_modes(red: &Reduction, opts: &SpectrumOptions, first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>) -> Result<(Vec<Mode>, Setup)> {
    let (rec, setup) = qnm_recurrence(red, opts)?;
    qnm_modes_from(&rec, setup, opts, first_estimate)
}

/// [`qnm_modes`] on a recurrence already derived by [`qnm_recurrence`].
pub fn qnm_modes_from(
    rec: &crate::series::Recurrence,
    setup: Setup,
    opts: &SpectrumOptions,
    first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
) -> Result<(Vec<Mode>, Setup)> {
    if rec.coeffs.len() == 2 && setup.theta.is_none() && setup.rate.is_none() {
        let num = try_numeric(rec, &opts.values, opts.freq)?;
        let modes = (opts.overtones.0..=opts.overtones.1).map(|n| terminating_mode(&num, n)).collect();
        return Ok((modes, setup));
    }
    if rec.coeffs.len() < 3 {
        return Err(too_few_terms(rec, &setup));
    }
    let (mut modes, _) = cf_ladder(rec, &setup, opts, first_estimate, &|_, _| false)?;
    if opts.seeds.is_empty() && modes.iter().any(|m| !m.root.converged) {
        // A failed overtone can be reached from the next one's search (the
        // ladder files a root by the spacing below it): the ladder again
        // with LOOKAHEAD overtones more, kept when more of the range converge.
        let more = SpectrumOptions { overtones: (opts.overtones.0, opts.overtones.1 + LOOKAHEAD), ..opts.clone() };
        if let Ok((again, _)) = cf_ladder(rec, &setup, &more, first_estimate, &|_, _| false) {
            let again: Vec<Mode> = again.into_iter().filter(|m| m.n <= opts.overtones.1).collect();
            let count = |ms: &[Mode]| ms.iter().filter(|m| m.root.converged).count();
            if count(&again) > count(&modes) {
                modes = again;
            }
        }
    }
    Ok((modes, setup))
}

/// Overtones the ladder climbs past the range asked for when one in the
/// range failed (see [`qnm_modes_from`]).
const LOOKAHEAD: u32 = 2;

/// The error of a recurrence of fewer than three terms where a continued
/// fraction is needed.
pub(super) fn too_few_terms(rec: &crate::series::Recurrence, setup: &Setup) -> Error {
    usage(format!("the recurrence about {} has {} terms: no continued fraction", setup.horizon, rec.coeffs.len()))
}

/// The overtone ladder of [`overtones`] on the continued fraction of a
/// recurrence derived by [`qnm_recurrence`] (three terms or more), stopping
/// early where `beyond` says an extrapolated seed has left the part of the
/// plane wanted (see [`ladder`]).
pub fn cf_ladder(
    rec: &crate::series::Recurrence,
    setup: &Setup,
    opts: &SpectrumOptions,
    first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
    beyond: &dyn Fn(&[Mode], Complex64) -> bool,
) -> Result<(Vec<Mode>, LadderEnd)> {
    if rec.coeffs.len() < 3 {
        return Err(too_few_terms(rec, setup));
    }
    let num = numeric_recurrence(rec, setup, opts)?;
    ladder(opts, first_estimate, &|n, seed| find_root(&num, n as usize, seed, opts.tol, 64, 1 << 17), beyond)
}

/// Where the check by direct integration of a continued-fraction root
/// starts: [`CHECK_OFFSET`] away from it (relative, in both parts), so that
/// the check finds the root on its own rather than being handed it.
pub fn check_seed(w: Complex64) -> Complex64 {
    check_seed_at(w, CHECK_OFFSET)
}

/// The relative offset of [`check_seed`].
pub const CHECK_OFFSET: f64 = 1e-4;

/// A check's start `offset` away from `w` (relative, in both parts):
/// w (1 + offset + i offset). Quasi-bound levels crowd closer than
/// [`CHECK_OFFSET`], and their checks start nearer (`levels::check_offsets`).
pub fn check_seed_at(w: Complex64, offset: f64) -> Complex64 {
    w * Complex64::new(1.0 + offset, offset)
}

/// The tolerance of the check by direct integration for a requested
/// tolerance `tol` on ω: ten times looser (integration loses about a digit
/// against the continued fraction), never below 1e-12.
pub fn check_tol(tol: f64) -> f64 {
    (tol * 10.0).max(1e-12)
}

/// The recurrence made numeric at the options' values: polynomials in
/// (n, ω), and in an adjoined rate χ evaluated at each trial ω on its branch.
pub fn numeric_recurrence(rec: &crate::series::Recurrence, setup: &Setup, opts: &SpectrumOptions) -> Result<super::cf::NumRecurrence> {
    let values = recurrence_values(setup, opts);
    match &setup.rate {
        None => try_numeric(rec, &values, opts.freq),
        Some(r) => {
            let branch = super::cf::RateBranch { square: in_omega(&r.square, opts), condition: r.condition };
            super::cf::try_numeric_with_rate(rec, &values, opts.freq, r.index, branch)
        }
    }
}

/// The start of the error of [`overtones`] when an overtone has no seed.
pub const NO_SEED: &str = "no seed for overtone";

/// The values of the recurrence's field: the equation's parameters at their
/// values (the recurrence's field is (n, params…[, θ]), the equation's
/// indices, θ last), and the adjoined root's value when there is one.
pub fn recurrence_values(setup: &Setup, opts: &SpectrumOptions) -> Vec<GRat> {
    let mut values = opts.values.clone();
    if setup.rate.is_some() {
        // χ's place: its value comes from ω at each trial (never this zero).
        values.push(GRat::zero());
    }
    if let Some((f, zr, _)) = &setup.theta {
        // The adjoined symbol is φ = c₂θ.
        let c2 = f.to_univariate(0).get(2).cloned().unwrap_or_else(|| crate::algebra::Poly::int(1));
        let c2v = crate::algebra::RatFunc::from_poly(c2).eval(&opts.values).map(|g| g.to_f64().0).unwrap_or(1.0);
        values.push(exact_double(*zr * c2v));
    }
    values
}

/// Overtone by overtone: a seed for each (given, extrapolated from the two
/// previous overtones, a first estimate, or below the previous one), the
/// root from `solve`, and the rejection of roots outside the lower right
/// quadrant.
pub fn overtones(
    opts: &SpectrumOptions,
    first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
    solve: &dyn Fn(u32, Complex64) -> CfRoot,
) -> Result<Vec<Mode>> {
    Ok(ladder(opts, first_estimate, solve, &|_, _| false)?.0)
}

/// Where a ladder of overtones ([`ladder`]) stopped.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LadderEnd {
    /// Every overtone of the range was sought.
    Range,
    /// The seed of this overtone (not a given one) lay beyond the part of
    /// the plane wanted, so it was not sought.
    Beyond(u32),
}

/// [`overtones`], stopping before an overtone whose seed is neither given
/// nor a guess and of which `beyond(modes so far, seed)` says that it lies
/// past the part of the plane wanted (a window's bottom edge, say).
pub fn ladder(
    opts: &SpectrumOptions,
    first_estimate: &dyn Fn(u32) -> Option<(Complex64, String)>,
    solve: &dyn Fn(u32, Complex64) -> CfRoot,
    beyond: &dyn Fn(&[Mode], Complex64) -> bool,
) -> Result<(Vec<Mode>, LadderEnd)> {
    let mut modes: Vec<Mode> = Vec::new();
    // Overtones filed from a search between two others (see below): the
    // given seed that led past them belongs to the overtone after.
    let mut inserted = 0usize;
    for n in opts.overtones.0..=opts.overtones.1 {
        let idx = (n - opts.overtones.0) as usize - inserted;
        let given = idx < opts.seeds.len() || (opts.guess.is_some() && n == opts.overtones.0);
        // A step whose seed is not set by the spacing of two overtones (a
        // given seed after the first, or a guess below a lone overtone) can
        // pass over a mode unnoticed; it is searched between afterwards.
        let mut unpaced = n > opts.overtones.0 && idx < opts.seeds.len();
        let seed = if let Some(s) = opts.seeds.get(idx) {
            (*s, opts.seeds_from.words().to_string())
        } else if let Some(g) = opts.guess.filter(|_| n == opts.overtones.0) {
            (g, "the given guess".to_string())
        } else if let Some((a, b)) = last_two_converged(&modes) {
            // From the two nearest converged overtones (a failed one in
            // between is stepped over).
            (extrapolate(a, b, n), format!("extrapolated from overtones {} and {}", b.n, a.n))
        } else if let Some(e) = first_estimate(n).filter(|(w, _)| w.im < 0.0) {
            // An estimate in the upper half-plane is not a decaying mode: never a seed.
            e
        } else if let Some(last) = modes.iter().rev().find(|m| m.root.converged) {
            unpaced = true;
            (last.root.omega - Complex64::new(0.0, 2.0 * last.root.omega.im.abs().max(0.05)), "below the previous overtone".to_string())
        } else {
            return Err(usage(format!("{NO_SEED} {n}: give {opt_guess}", opt_guess = RequestInput::Guess.mention())));
        };
        if !given && beyond(&modes, seed.0) {
            return Ok((modes, LadderEnd::Beyond(n)));
        }
        let mut root = solve(n, seed.0);
        let mut seed = seed;
        if !root.converged && idx < opts.seeds.len() {
            // A given seed that leads nowhere (a value of another method that
            // is not a root here): the first estimate, when there is one.
            if let Some(e) = first_estimate(n).filter(|(w, _)| w.im < 0.0 && (*w - seed.0).norm() > 1e-6 * w.norm()) {
                let again = solve(n, e.0);
                if again.converged {
                    (root, seed) = (again, (e.0, format!("{} (the seed {} led nowhere)", e.1, text(seed.0))));
                }
            }
        }
        // A root in the left half-plane is the mirror −ω̄ of a mode when the
        // equation is real: start again from the mirror image.
        if root.converged && root.omega.re < 0.0 && root.omega.im < 0.0 {
            let again = solve(n, -root.omega.conj());
            if again.converged && again.omega.re >= 0.0 {
                root = again;
            }
        }
        // A real part below zero by rounding only (a purely imaginary mode) is zero.
        if root.converged && root.omega.re < 0.0 && root.omega.re.abs() <= 1e3 * f64::EPSILON * root.omega.norm() {
            root.omega.re = 0.0;
        }
        if root.converged && (root.omega.im > 0.0 || root.omega.re < 0.0) {
            // A root in the wrong quadrant is not the mode that was asked for.
            root.converged = false;
            root.stop = StopReason::Rejected(format!(
                "the root {:.6e}{:+.6e}i is not in the lower right quadrant (Re ω > 0, Im ω < 0)",
                root.omega.re, root.omega.im
            ));
        }
        if root.converged {
            // The n-th inversion is best conditioned at overtone n, but a poor
            // seed can still land on another overtone's root: never report
            // one mode twice.
            if let Some(prev) = modes.iter().find(|m| m.root.converged && (m.root.omega - root.omega).norm() <= 1e-8 * root.omega.norm()) {
                root.converged = false;
                root.stop = StopReason::Rejected(format!(
                    "the root {:.6e}{:+.6e}i is overtone {}'s again (the seed led to a mode already found); give seeds with {opt_guess}",
                    root.omega.re,
                    root.omega.im,
                    prev.n,
                    opt_guess = RequestInput::Guess.mention()
                ));
            }
        }
        if unpaced && root.converged {
            if let Some(prev) = modes.last().filter(|m| m.n + 1 == n && m.root.converged) {
                let before = root.omega;
                let (r, s) = root_between(prev.root.omega, root, seed, n, &modes, solve);
                if r.omega != before {
                    // The seed's own root lies past this overtone: with a
                    // given seed, the next overtone starts from it again.
                    inserted += usize::from(given);
                }
                (root, seed) = (r, s);
            }
        }
        // The overtone a root belongs to, by the spacing in Im ω of the two
        // nearest converged overtones below it: a seed past a missed overtone
        // can land on the missed one, which must not be reported under n.

        for _retry in 0..2 {
            let Some(m) = overtone_by_spacing(&modes, &root).filter(|&m| m != n) else { break };
            let why = format!(
                "the root {:.6e}{:+.6e}i is overtone {m} by the spacing in Im ω of the overtones below it, not overtone {n}",
                root.omega.re, root.omega.im
            );
            match modes.iter_mut().find(|x| x.n == m && !x.root.converged) {
                Some(slot) if m < n => {
                    // The missed overtone is found: file it there and try n again
                    // from the updated extrapolation.
                    slot.root = root.clone();
                    slot.seed = (seed.0, format!("{} (the search for overtone {n})", seed.1));
                    let Some((a, b)) = last_two_converged(&modes) else { break };
                    let step = (a.root.omega - b.root.omega) / f64::from(a.n - b.n);
                    let w = a.root.omega + step * f64::from(n - a.n);
                    seed = (Complex64::new(w.re.max(0.25 * a.root.omega.re), w.im), format!("extrapolated from overtones {} and {}", b.n, a.n));
                    root = solve(n, seed.0);
                }
                _ => {
                    root.converged = false;
                    root.stop = StopReason::Rejected(why);
                    break;
                }
            }
        }
        modes.push(Mode { n, root, seed, method: ModeMethod::ContinuedFraction });
    }
    Ok((modes, LadderEnd::Range))
}

/// [`super::roots::root_between`] for the ladder: the n-th inversion from
/// half way, a root in the left half-plane taken to its mirror −ω̄ (as the
/// ladder does), the seed's description saying where it came from.
fn root_between(
    prev: Complex64,
    root: CfRoot,
    seed: (Complex64, String),
    n: u32,
    modes: &[Mode],
    solve: &dyn Fn(u32, Complex64) -> CfRoot,
) -> (CfRoot, (Complex64, String)) {
    let from = |mid: Complex64| {
        let mut r = solve(n, mid);
        if r.converged && r.omega.re < 0.0 {
            r = solve(n, -r.omega.conj());
        }
        r.converged.then_some((r.omega, r))
    };
    let known = |w: Complex64| modes.iter().any(|m| m.root.converged && (m.root.omega - w).norm() <= 1e-8 * w.norm());
    match super::roots::root_between(prev, root.omega, &from, &known) {
        Some((mid, _, r)) => {
            let why = format!("half way between overtone {} and the root {} reached from {}", n - 1, text(root.omega), seed.1);
            (r, (mid, why))
        }
        None => (root, seed),
    }
}

/// A complex number in a seed's description.
fn text(w: Complex64) -> String {
    format!("{:.6e}{:+.6e}i", w.re, w.im)
}

/// The overtone number of a converged root from the two nearest converged
/// overtones below it, when their spacing in |Im ω| is positive.
fn overtone_by_spacing(modes: &[Mode], root: &CfRoot) -> Option<u32> {
    if !root.converged {
        return None;
    }
    let (a, b) = last_two_converged(modes)?;
    let spacing = (a.root.omega.im.abs() - b.root.omega.im.abs()) / f64::from(a.n - b.n);
    if !(spacing > 0.0) || root.omega.im.abs() <= a.root.omega.im.abs() {
        return None;
    }
    let steps = ((root.omega.im.abs() - a.root.omega.im.abs()) / spacing).round();
    (1.0..1e4).contains(&steps).then(|| a.n + steps as u32)
}

/// A seed for overtone n from two converged overtones a (the later) and b
/// below it: Im ω linear in the overtone number; Re ω geometric while it
/// shrinks, so that a seed past a slowly vanishing real part stays in the
/// right half-plane.
pub(crate) fn extrapolate(a: &Mode, b: &Mode, n: u32) -> Complex64 {
    let (span, ahead) = (f64::from(a.n - b.n), f64::from(n) - f64::from(a.n));
    let (wa, wb) = (a.root.omega, b.root.omega);
    let re =
        if wa.re > 0.0 && wb.re > 0.0 && wa.re < wb.re { wa.re * (wa.re / wb.re).powf(ahead / span) } else { wa.re + (wa.re - wb.re) * ahead / span };
    Complex64::new(re, wa.im + (wa.im - wb.im) * ahead / span)
}

/// The last two converged modes found (the later one first).
fn last_two_converged(modes: &[Mode]) -> Option<(&Mode, &Mode)> {
    let mut it = modes.iter().rev().filter(|m| m.root.converged);
    let a = it.next()?;
    let b = it.next()?;
    Some((a, b))
}

/// A two-term recurrence c₀(n) a_{n+1} + c₁(n) a_n = 0 terminates after a_N
/// exactly when c₁(N; ω) = 0: a polynomial condition on ω whose roots in the
/// lower right quadrant are the modes (the series is then a polynomial and
/// has the chosen exponents at both ends).
fn terminating_mode(num: &super::cf::NumRecurrence, n: u32) -> Mode {
    // Coefficients in ω at this n.
    let coeffs = num.terms[1].at_n(n as f64);
    let roots = crate::analysis::numeric::try_roots(&coeffs).unwrap_or_default();
    let pick =
        roots.iter().copied().filter(|w| w.im < 0.0 && w.re >= 0.0).max_by(|a, b| a.re.partial_cmp(&b.re).unwrap_or(std::cmp::Ordering::Equal));
    let eval = |w: Complex64| coeffs.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, c| acc * w + c);
    let scale = coeffs.iter().map(|c| c.norm()).fold(0.0, f64::max).max(1e-300);
    let root = match pick {
        Some(w) => CfRoot {
            omega: w,
            converged: true,
            depth: 0,
            depth_change: 0.0,
            residual: eval(w).norm() / scale,
            iterations: 0,
            stop: StopReason::Converged,
            inversion: n as usize,
            double: false,
        },
        None => CfRoot::failed(
            Complex64::new(f64::NAN, f64::NAN),
            n as usize,
            StopReason::Rejected(format!("the termination condition for overtone {n} has no root with Re ω ≥ 0 and Im ω < 0")),
        ),
    };
    Mode { n, root, seed: (Complex64::new(0.0, 0.0), "exact termination condition (no seed)".into()), method: ModeMethod::Terminating }
}

/// The Schrödinger form used by the barrier estimates: dx/dz = h with h² the
/// coefficient of ω² in q (the tortoise coordinate of these wave equations,
/// common practice) and V = ω² − W free of ω. Returns (V, h).
pub fn barrier_potential(red: &Reduction, opts: &SpectrumOptions) -> Result<(crate::algebra::RatFunc, crate::algebra::RatFunc)> {
    let k = &red.field;
    // q = q₀ + q₁ ω + q₂ ω²: q₂ = ½ ∂²q/∂ω².
    let d2 = k.deriv(&k.deriv(&red.q, opts.freq)?, opts.freq)?;
    let q2 = k.mul(&d2, &crate::algebra::RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero")))?;
    if k.deriv(&q2, opts.freq)? != crate::algebra::RatFunc::zero() {
        return Err(usage("q is not quadratic in the frequency: no tortoise coordinate from it"));
    }
    let Some(h) = k.sqrt_exact(&q2)? else {
        return Err(usage("the coefficient of the frequency squared is not a perfect square: no rational tortoise coordinate"));
    };
    let (_, v) = crate::ode::schrodinger(k, &red.p, &red.q, &h, Some(opts.freq))?;
    Ok((v, h))
}

/// First estimates from the barrier top of `barrier_potential`, searched
/// beyond the horizon (then below it): a function giving the estimates of
/// overtone n to WKB order `order` (eikonal, the series and its Padé values;
/// see `wkb.rs`).
pub fn barrier_estimates<'a>(
    red: &'a Reduction,
    opts: &'a SpectrumOptions,
    horizon: f64,
    order: usize,
) -> Result<impl Fn(u32) -> Option<super::wkb::BarrierEstimate> + 'a> {
    let (v, h) = barrier_potential(red, opts)?;
    // The barrier lies beyond the horizon; when the variable runs the other way (z → −∞ or a second end below), below it.
    let at = move |n: u32, d: (f64, f64)| super::wkb::try_barrier(&red.field, &v, &h, &opts.values, Some(opts.freq), d, n, order).ok();
    Ok(move |n: u32| at(n, (horizon, f64::INFINITY)).or_else(|| at(n, (f64::NEG_INFINITY, horizon))))
}

/// [`barrier_estimates`] with the barrier sought only inside `domain` (a
/// boundary problem's ends): no bump beyond its ends (inside a black hole's
/// inner horizon) seeds its modes.
pub fn barrier_estimates_on<'a>(
    red: &'a Reduction,
    opts: &'a SpectrumOptions,
    domain: (f64, f64),
    order: usize,
) -> Result<impl Fn(u32) -> Option<super::wkb::BarrierEstimate> + 'a> {
    let (v, h) = barrier_potential(red, opts)?;
    Ok(move |n: u32| super::wkb::try_barrier(&red.field, &v, &h, &opts.values, Some(opts.freq), domain, n, order).ok())
}

/// A rational function of the parameters as a function of ω alone (the
/// other parameters at their values), for numeric use.
pub(super) fn in_omega(r: &crate::algebra::RatFunc, opts: &SpectrumOptions) -> (super::NPoly, super::NPoly) {
    let num = super::try_npoly(r.num(), r.scale().to_f64(), &opts.values, opts.freq);
    let den = super::try_npoly(&r.den_expanded(), 1.0, &opts.values, opts.freq);
    (num, den)
}

pub(super) fn eval_in_omega(f: &(super::NPoly, super::NPoly), w: Complex64) -> Complex64 {
    let z = Complex64::new(0.0, 0.0);
    f.0.eval(z, w) / f.1.eval(z, w)
}

/// The independent check by direct integration (Frobenius series at the
/// horizon, asymptotic series at infinity, Taylor continuation between
/// them): a root finder seeded by the caller, with the ends built from the
/// same exponent choices as the continued fraction.
pub fn integration_check<'a>(
    red: &'a Reduction,
    opts: &'a SpectrumOptions,
    setup: &Setup,
) -> Result<impl Fn(Complex64) -> super::integrate::IntRoot + 'a> {
    let k = &red.field;
    let an = &setup.analysis;
    let ode = super::try_num_ode(k, &red.p, &red.q, &opts.values, opts.freq)?;
    let find = |id: &PointId| setup.picks.iter().find(|(p, _)| p == id).map(|(_, c)| c - 1);
    // ρ_h(ω) as a list of coefficients of θ^j (one coefficient for a linear point).
    let (rho_parts, theta_value): (Vec<crate::algebra::RatFunc>, f64) = match &setup.theta {
        None => {
            let hp = an.point(&setup.place).ok_or_else(|| usage("the horizon is not among the singular points"))?;
            // No pick: the series kept the unknown's exponent 0 there (the
            // behaviour at the horizon already taken out by hand).
            let zero = || hp.unknown_exponents.iter().position(|e| e.exact_value(k).is_some_and(|v| v.is_zero()));
            let hi = find(&setup.place).or_else(zero).ok_or_else(|| usage("no exponent was picked at the horizon"))?;
            let e = hp.unknown_exponents.get(hi).cloned().ok_or_else(|| usage("no exponent at the horizon"))?;
            let rho_exact =
                e.exact_value(k).ok_or_else(|| usage("the horizon exponent is not exact in the parameter field: the integration check needs it"))?;
            (vec![rho_exact], 0.0)
        }
        Some((f, zr, j)) => {
            let hp = an
                .points
                .iter()
                .find(|p| matches!(&p.place, Place::Roots(g) if g == f))
                .ok_or_else(|| usage("the horizon factor is not among the singular points"))?;
            let e = hp.unknown_exponents.get(*j).cloned().ok_or_else(|| usage("no exponent at the horizon"))?;
            let rho = e.in_extension(k)?.ok_or_else(|| usage("the horizon exponent is not exact"))?;
            (rho.coeffs, *zr)
        }
    };
    let inf = an.points.iter().find(|p| matches!(p.place, Place::Infinity)).expect("infinity listed");
    let bi = find(&PointId::Infinity).ok_or_else(|| usage("no branch was picked at infinity"))?;
    let f = inf.formal.get(bi).ok_or_else(|| usage("no formal solution at infinity"))?;
    let mu_exact = f
        .exponent
        .iter()
        .find(|(pw, _)| pw.is_integer() && pw.numer().is_one())
        .map(|(_, c)| c.clone())
        .ok_or_else(|| usage("infinity is not of rank 1"))?;
    if f.exponent.len() != 1 {
        return Err(usage("infinity is not of rank 1: the integration check needs exp(μz) z^ν"));
    }
    let p1 = crate::analysis::p_at_infinity_pub(k, &red.p)?;
    // μ of the unknown = μ of ψ − p₀/2 (an exponential taken out by hand).
    let p0 = crate::analysis::p_limit_at_infinity(k, &red.p)?.ok_or_else(|| usage("p grows at infinity: the integration check needs exp(μz) z^ν"))?;
    let half = crate::algebra::RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero"));
    let mu_exact = k.sub(&mu_exact, &k.mul(&half, &p0)?)?;
    // ν of the unknown = ρ of ψ − p₁/2 (the prefactor's power at infinity).
    let nu_exact = k.sub(&f.rho, &k.mul(&half, &p1)?)?;
    let rho: Vec<_> = rho_parts.iter().map(|c| in_omega(c, opts)).collect();
    let (mu, nu) = (in_omega(&mu_exact, opts), in_omega(&nu_exact, opts));
    let horizon = setup.horizon_value;
    let tol = opts.tol;
    Ok(move |seed: Complex64| {
        let rf = |w: Complex64| rho.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, c| acc * theta_value + eval_in_omega(c, w));
        let mf = |w: Complex64| eval_in_omega(&mu, w);
        let nf = |w: Complex64| eval_in_omega(&nu, w);
        let ends = super::integrate::Ends { horizon, rho_h: &rf, mu: &mf, nu: &nf };
        super::integrate::find_root(&ode, &ends, seed, check_tol(tol))
    })
}

/// The reduction with every parameter except the frequency replaced by its
/// exact value: factors of the denominators then often split over Q (a
/// horizon becomes a rational point), and what stays symbolic is only ω.
pub fn substitute(red: &Reduction, values: &[GRat], freq: usize) -> Result<Reduction> {
    substitute_keeping(red, values, &[freq])
}

/// [`substitute_keeping`] for the series: a parameter that an adjoined
/// square root at infinity eliminates (`series::rate`, a field's mass) is
/// kept symbolic too, so that the derivation can still solve for it.
pub fn substitute_for_series(red: &Reduction, values: &[GRat], keep: &[usize]) -> Result<Reduction> {
    let freq = keep.first().copied().unwrap_or(0);
    let mut keep = keep.to_vec();
    keep.extend(crate::series::rate::rate_parameter(red, freq)?);
    substitute_keeping(red, values, &keep)
}

/// [`substitute`] keeping every parameter in `keep` symbolic (the frequency,
/// and a separation constant that a coupled solve fixes numerically later).
pub fn substitute_keeping(red: &Reduction, values: &[GRat], keep: &[usize]) -> Result<Reduction> {
    let k = &red.field;
    let (mut p, mut q) = (red.p.clone(), red.q.clone());
    for (i, v) in values.iter().enumerate().skip(1) {
        if keep.contains(&i) {
            continue;
        }
        let c = crate::algebra::RatFunc::constant(v);
        p = k.compose(&p, i, &c)?;
        q = k.compose(&q, i, &c)?;
    }
    let kf = crate::algebra::Field::new(k.names().to_vec(), k.limits().clone())?;
    let normal = crate::ode::normal_form(&kf, &p, &q)?;
    let ode = crate::ode::LinearOde {
        field: crate::algebra::Field::new(k.names().to_vec(), k.limits().clone())?,
        var: red.var.clone(),
        unknown: red.ode.unknown.clone(),
        params: red.ode.params.clone(),
        inferred: Vec::new(),
        p: p.clone(),
        q: q.clone(),
        lets: Vec::new(),
    };
    let family = Some(red.family.clone().unwrap_or_else(|| red.normal.q.clone()));
    Ok(Reduction { ode, field: kf, var: red.var.clone(), p, q, normal, change: None, schrodinger: None, map: red.map.clone(), family })
}

/// A frequency where the recurrence's leading coefficient c₀(k; ω) (the
/// coefficient of a_{k+1}) vanishes: there the continued fraction is
/// singular (a zero denominator), and the exponents of the series' ansatz at
/// the expansion point differ by the integer k + 1 when c₀ is the indicial
/// polynomial shifted by k, as for a horizon.
#[derive(Clone, Debug, PartialEq)]
pub struct DegeneratePoint {
    /// The frequency.
    pub omega: Complex64,
    /// The index k with c₀(k; ω) = 0.
    pub k: u32,
}

/// Every degenerate point of the recurrence for k = 0, 1, …, `kmax` (the
/// roots in ω of c₀(k; ω)), for [`nearest_of`] to search around several
/// frequencies without solving again.
pub fn degenerate_points(num: &super::cf::NumRecurrence, kmax: u32) -> Vec<DegeneratePoint> {
    let mut out: Vec<DegeneratePoint> = Vec::new();
    for k in 0..=kmax {
        let coeffs = num.terms[0].at_n(f64::from(k));
        out.extend(crate::analysis::numeric::try_roots(&coeffs).unwrap_or_default().into_iter().map(|r| DegeneratePoint { omega: r, k }));
    }
    out
}

/// How far in k the degenerate points are solved: as far as the series
/// could reach within the depths the continued fraction uses (bounded).
pub const DEGENERATE_KMAX: u32 = 4096;

/// The degenerate points ([`degenerate_points`] to [`DEGENERATE_KMAX`]) of
/// the recurrence of a run at its values, solved once for every overtone
/// of the run; empty when the recurrence cannot be made numeric or its
/// leading coefficient is not a polynomial in ω (an adjoined rate holds
/// χ(ω) there).
pub fn degenerate_of(rec: &crate::series::Recurrence, setup: &Setup, opts: &SpectrumOptions) -> Vec<DegeneratePoint> {
    if setup.rate.is_some() {
        return Vec::new();
    }
    match try_numeric(rec, &recurrence_values(setup, opts), opts.freq) {
        Ok(num) if !num.terms.is_empty() => degenerate_points(&num, DEGENERATE_KMAX),
        _ => Vec::new(),
    }
}

/// The points of `all` within `radius` of `w`, nearest first.
pub fn nearest_of(all: &[DegeneratePoint], w: Complex64, radius: f64) -> Vec<DegeneratePoint> {
    let mut out: Vec<DegeneratePoint> = all.iter().filter(|p| (p.omega - w).norm() <= radius).cloned().collect();
    out.sort_by(|a, b| (a.omega - w).norm().partial_cmp(&(b.omega - w).norm()).unwrap_or(std::cmp::Ordering::Equal));
    out
}

/// An algebraically special point of a three-term recurrence: a frequency
/// ω* where the leading coefficient c₀(k; ω*) vanishes and the first k + 1
/// equations close by themselves (the continuant of rows 0…k is zero), both
/// in exact arithmetic. There the downward continued fraction passes row k
/// without the tail (row k no longer holds a_{k+1}), so its mode condition
/// holds at ω* exactly; and a_{k+1} is free, i.e. the solution that starts
/// at a_{k+1} (the other exponent at the expansion point) can be added to
/// the series without changing the first k + 1 coefficients: the series'
/// exponent no longer fixes its solution. Chandrasekhar's algebraically
/// special frequencies of the Regge–Wheeler and Zerilli equations are such
/// points (common practice).
#[derive(Clone, Debug, PartialEq)]
pub struct SpecialPoint {
    /// The exact frequency.
    pub omega: GRat,
    /// The index k with c₀(k; ω*) = 0.
    pub k: u32,
}

/// The exact roots in the variable `v` of `r` (every other variable
/// substituted) when its numerator is of degree 1, or 2 with a square
/// discriminant over Q(i); `None` otherwise.
fn exact_roots(k: &crate::algebra::Field, r: &crate::algebra::RatFunc, v: usize) -> Result<Option<Vec<GRat>>> {
    use crate::algebra::RatFunc;
    let c: Vec<RatFunc> = r.num().to_univariate(v).into_iter().map(RatFunc::from_poly).collect();
    let roots = match c.len() {
        2 => vec![k.neg(&k.div(&c[0], &c[1])?)],
        3 => {
            let disc = k.sub(&k.mul(&c[1], &c[1])?, &k.mul(&RatFunc::rat(&Rat::int(4.into())), &k.mul(&c[0], &c[2])?)?)?;
            let Some(s) = k.sqrt_exact(&disc)? else { return Ok(None) };
            let two_a = k.mul(&RatFunc::rat(&Rat::int(2.into())), &c[2])?;
            let minus_b = k.neg(&c[1]);
            vec![k.div(&k.add(&minus_b, &s)?, &two_a)?, k.div(&k.sub(&minus_b, &s)?, &two_a)?]
        }
        _ => return Ok(None),
    };
    Ok(roots.iter().map(RatFunc::as_constant).collect())
}

/// The algebraically special point ([`SpecialPoint`]) of the exact
/// recurrence `rec` within `radius` of `near`, among its degenerate points
/// `all` ([`degenerate_of`]), at exact `values` (indexed like the
/// recurrence's field; the spectral parameter's entry `freq` is ignored). `None` when there is none, when the recurrence does not have
/// three terms, or when the degenerate point is not exact (roots of
/// c₀(k; ω) beyond a square root over Q(i)).
pub fn special_point(
    rec: &crate::series::Recurrence,
    values: &[GRat],
    freq: usize,
    all: &[DegeneratePoint],
    near: Complex64,
    radius: f64,
) -> Result<Option<SpecialPoint>> {
    if rec.coeffs.len() != 3 {
        return Ok(None);
    }
    let k = &rec.field;
    let params: Vec<(usize, GRat)> = (1..values.len().min(k.names().len())).filter(|&i| i != freq).map(|i| (i, values[i].clone())).collect();
    for p in nearest_of(all, near, radius) {
        let mut at_k = params.clone();
        at_k.push((0, GRat::real(Rat::int(i64::from(p.k).into()))));
        let lead = k.substitute_values(&rec.coeffs[0], &at_k)?;
        let Some(roots) = exact_roots(k, &lead, freq)? else { continue };
        // The exact root the numeric one approximates.
        let Some(w) = roots.into_iter().find(|w| {
            let (re, im) = w.to_f64();
            (Complex64::new(re, im) - p.omega).norm() <= 1e-8 * p.omega.norm().max(1.0)
        }) else {
            continue;
        };
        let mut at_w = params.clone();
        at_w.push((freq, w.clone()));
        let coeffs = rec.coeffs.iter().map(|c| k.substitute_values(c, &at_w)).collect::<Result<Vec<_>>>()?;
        let t = crate::series::termination(k, &coeffs, p.k)?;
        if t.determinant.is_zero() {
            return Ok(Some(SpecialPoint { omega: w, k: p.k }));
        }
    }
    Ok(None)
}

/// Settles the overtones of the continued fraction that failed next to (or
/// converged onto) an algebraically special point of the recurrence
/// ([`special_point`]): each becomes a mode at the exact point, method
/// [`ModeMethod::SpecialPoint`], with a note in plain words of what the
/// point is and why it needs care. Needs exact values: nothing is done with
/// an adjoined root or rate (their values are not exact).
pub fn settle_special(
    rec: &crate::series::Recurrence,
    setup: &Setup,
    opts: &SpectrumOptions,
    all: &[DegeneratePoint],
    modes: &mut [Mode],
) -> Result<Vec<String>> {
    if setup.theta.is_some() || setup.rate.is_some() {
        return Ok(Vec::new());
    }
    let values = recurrence_values(setup, opts);
    let mut notes = Vec::new();
    for i in 0..modes.len() {
        let m = &modes[i];
        if m.method != ModeMethod::ContinuedFraction {
            continue;
        }
        let (at, radius) = if m.root.converged { (m.root.omega, 1e-3 * m.root.omega.norm()) } else { (m.seed.0, 0.1 * m.seed.0.im.abs().max(1e-3)) };
        if !(at.re.is_finite() && at.im.is_finite()) {
            continue;
        }
        let Some(sp) = special_point(rec, &values, opts.freq, all, at, radius)? else { continue };
        let (re, im) = sp.omega.to_f64();
        let omega = Complex64::new(re, im);
        // Another overtone already there: the point is that one's.
        if modes.iter().enumerate().any(|(j, o)| j != i && o.root.converged && (o.root.omega - omega).norm() <= 1e-8 * omega.norm().max(1.0)) {
            continue;
        }
        let m = &mut modes[i];
        let was =
            if m.root.converged { "converged onto it".to_string() } else { format!("the root finder had failed next to it: {}", m.root.stop.text()) };
        m.root = CfRoot {
            omega,
            converged: true,
            depth: 0,
            // No doubling: the point is exact.
            depth_change: f64::NAN,
            residual: 0.0,
            iterations: 0,
            stop: StopReason::Converged,
            inversion: sp.k as usize,
            double: false,
        };
        m.method = ModeMethod::SpecialPoint;
        notes.push(format!(
            "overtone {n} is the algebraically special point ω = {w} (exact; {was}): the recurrence's leading coefficient vanishes there at k = {k} (the exponents at the expansion point {h} differ by the integer {k1}) and the first {k1} equations close by themselves (their determinant is 0 in exact arithmetic), so the continued fraction's mode condition holds at this point exactly. The series' exponent does not fix its solution here (the solution that starts at a_{k1} can be added freely), so whether this is a mode of the physical problem depends on how the ingoing condition is continued to this frequency: published tables list it as an overtone, while for the Regge–Wheeler equation Maassen van den Brink (Phys. Rev. D 62 (2000) 064009) finds no mode at it and for the Zerilli equation one that is also totally transmitting. No numeric check is possible at this point; treat it with care",
            n = m.n,
            w = crate::algebra::print::grat_text(&sp.omega, Style::Text),
            k = sp.k,
            h = setup.horizon,
            k1 = sp.k + 1,
        ));
    }
    Ok(notes)
}

/// Plain words for every mode that failed next to a degenerate point of the
/// recurrence, or converged onto one: where it is, and why the continued
/// fraction cannot settle the mode there. A mode "next to" a point is within
/// a tenth of its own damping |Im ω| (failed modes, judged at the seed) or
/// within 1e-3 |ω| (converged ones). `all` are the run's degenerate
/// points ([`degenerate_of`]).
pub fn degenerate_notes(setup: &Setup, all: &[DegeneratePoint], modes: &[Mode]) -> Vec<String> {
    let mut notes = Vec::new();
    for m in modes.iter().filter(|m| m.method == ModeMethod::ContinuedFraction) {
        let (at, radius) = if m.root.converged { (m.root.omega, 1e-3 * m.root.omega.norm()) } else { (m.seed.0, 0.1 * m.seed.0.im.abs().max(1e-3)) };
        let Some(p) = nearest_of(all, at, radius).into_iter().next() else { continue };
        let status = if m.root.converged { "converged within 1e-3 of" } else { "was sought next to" };
        notes.push(format!(
            "overtone {} {status} ω = {:.6}{:+.6}i, where the recurrence's leading coefficient vanishes at k = {} (the exponents of the ansatz at the expansion point {} differ by the integer {} there): the continued fraction is singular at that point and the series solution can change its character (a logarithm, or a solution starting at a_{}); a mode at or next to it is a special case the methods here do not settle — treat it with care (for the Regge–Wheeler and Zerilli equations the algebraically special frequency is such a point; Maassen van den Brink 2000)",
            m.n,
            p.omega.re,
            p.omega.im,
            p.k,
            setup.horizon,
            p.k + 1,
            p.k + 1
        ));
    }
    notes
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_algebraically_special_point_is_found_exactly_and_only_where_the_equations_close() {
        // Regge–Wheeler, M = 1 (Leaver's recurrence about r = 2M, ingoing,
        // outgoing at infinity). Ω = −i(l − 1)l(l + 1)(l + 2)/12 (Chandrasekhar;
        // common practice) is −2i for l = 2 and −10i for l = 3, gravitational
        // s = 2 only; the recurrence degenerates at −2i (k = 7) for every s,
        // since the horizon's exponents ±2iω differ by 8 there.
        let src = "var r\nparam M, omega, l, s\nlet f = 1 - 2*M/r\node f*(f*y')' + (omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y = 0\n";
        let red = crate::ode::reduce(&crate::ode::Input::Program(src), &crate::ode::ReduceOptions::default()).unwrap();
        let rec = crate::series::about_written(&red, "2*M", &[("2*M", 2), ("inf", 1)]);
        let g = |x: i64| GRat::real(Rat::int(x.into()));
        let at = |l: i64, s: i64, w: f64| {
            let values = [g(0), g(1), g(0), g(l), g(s)];
            let all = degenerate_points(&try_numeric(&rec, &values, 2).unwrap(), DEGENERATE_KMAX);
            special_point(&rec, &values, 2, &all, Complex64::new(0.0, w), 0.05).unwrap()
        };
        assert_eq!(at(2, 2, -2.0), Some(SpecialPoint { omega: GRat { re: Rat::int(0.into()), im: Rat::int((-2).into()) }, k: 7 }));
        assert_eq!(at(3, 2, -10.0).map(|p| (p.omega.to_f64(), p.k)), Some(((0.0, -10.0), 39)));
        for (l, s) in [(2, 1), (2, 0), (3, 2)] {
            assert_eq!(at(l, s, -2.0), None, "l={l} s={s}");
        }
        // Away from any degenerate point: nothing.
        assert_eq!(at(2, 2, -1.0), None);
    }

    fn root(w: Complex64) -> CfRoot {
        CfRoot::at(w)
    }

    #[test]
    fn the_same_root_for_two_overtones_is_rejected_the_second_time() {
        let opts = SpectrumOptions::new(1, Vec::new(), (0, 2), 1e-10, Some(Complex64::new(0.4, -0.1)));
        let none = |_: u32| None;
        // A solver that always lands on the same mode, then on a new one.
        let modes = overtones(&opts, &none, &|n, _| root(if n < 2 { Complex64::new(0.37, -0.09) } else { Complex64::new(0.30, -0.48) })).unwrap();
        assert!(modes[0].root.converged);
        assert!(!modes[1].root.converged, "{:?}", modes[1].root);
        assert!(modes[1].root.stop.text().contains("overtone 0's again"));
        assert!(modes[2].root.converged);
    }

    #[test]
    fn roots_outside_the_lower_right_quadrant_are_rejected() {
        let opts = SpectrumOptions::new(1, Vec::new(), (0, 0), 1e-10, Some(Complex64::new(0.4, -0.1)));
        let none = |_: u32| None;
        let modes = overtones(&opts, &none, &|_, _| root(Complex64::new(0.37, 0.09))).unwrap();
        assert!(!modes[0].root.converged && modes[0].root.stop.text().contains("lower right quadrant"));
    }
}
