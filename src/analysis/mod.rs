//! The `analysis` stage: singular points of the normal form with their pole
//! orders, kinds, Poincaré ranks and characteristic exponents (of ψ and of the
//! user's own unknown), apparent singularities, formal solutions at irregular
//! points, and the class of the equation (ids of DESIGN.md). Input is a
//! [`Reduction`]; output an [`Analysis`]. Exact throughout; numeric values
//! are computed separately by [`numeric`] when parameter values are given.

pub mod canonical;
mod class;
mod ext;
mod formal;
pub mod labels;
pub mod methods;
pub mod numeric;

pub use class::{classify_points, Class, Form};
pub use formal::Formal;

use crate::algebra::{Field, Poly, Rat, RatFunc, UPoly};
use crate::error::Result;
use crate::ode::{laurent_at, linear_root, Reduction};
use ext::Ext;

/// Where a singular point is.
#[derive(Clone, Debug)]
pub enum Place {
    /// z = z₀, a root of a linear factor of the denominator.
    Point {
        /// The linear factor.
        factor: Poly,
        /// z₀, free of the variable.
        at: RatFunc,
    },
    /// The roots θ of an irreducible factor of higher degree.
    Roots(Poly),
    /// z = ∞ (exponents refer to t = 1/z).
    Infinity,
}

/// A singular point's identity: its exact place, whatever text prints it.
///
/// The picks of exponents ([`canonical::Choices`]), the expansion point of a
/// series and the ends of a boundary problem name points by this value. It
/// is the place itself rather than an index into one [`Analysis`] because a
/// point keeps its place when a derivation analyses a rewritten equation (a
/// root adjoined as a symbol, a decay rate adjoined at infinity) while its
/// position in the list of points does not; [`Analysis::index_of`] gives the
/// index in a given analysis.
#[derive(Clone, Debug, PartialEq)]
pub enum PointId {
    /// z = z₀, exact in the parameters.
    At(RatFunc),
    /// The roots θ of this irreducible factor of degree ≥ 2.
    Roots(Poly),
    /// z = ∞.
    Infinity,
}

impl PointId {
    /// How the point is named in messages and choices: its location, θ (or
    /// the letter `root_letter` picks) for the roots
    /// of a factor, ∞ for infinity (`names` are the field's).
    pub fn text(&self, names: &[String]) -> String {
        match self {
            PointId::At(at) => crate::algebra::print::ratfunc_text(at, names, crate::algebra::print::Style::Text),
            PointId::Roots(_) => crate::algebra::print::root_letter(names).text.to_string(),
            PointId::Infinity => "∞".to_string(),
        }
    }
}

impl Place {
    /// The identity of the point at this place.
    pub fn id(&self) -> PointId {
        match self {
            Place::Point { at, .. } => PointId::At(at.clone()),
            Place::Roots(f) => PointId::Roots(f.clone()),
            Place::Infinity => PointId::Infinity,
        }
    }
}

/// Ordinary, regular singular or irregular singular.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// An ordinary point of the normal form.
    Ordinary,
    /// A regular singular point.
    Regular,
    /// An irregular singular point.
    Irregular,
}

impl Kind {
    /// The JSON word.
    pub fn word(self) -> &'static str {
        match self {
            Kind::Ordinary => "ordinary",
            Kind::Regular => "regular",
            Kind::Irregular => "irregular",
        }
    }
}

/// A characteristic exponent ρ = c + (sign/2)·√R, with the root taken exactly
/// when it exists. Quantities are polynomials in θ modulo the point's factor
/// (constants at a linear factor and at infinity).
#[derive(Clone, Debug)]
pub struct Exponent {
    /// c.
    pub center: UPoly,
    /// ±1 (0 for a single exponent with no square root).
    pub sign: i8,
    /// √R when exact.
    pub root: Option<UPoly>,
    /// R.
    pub radicand: UPoly,
}

impl Exponent {
    /// c + (sign/2)·√R as a polynomial in θ, when the root is exact.
    pub fn in_extension(&self, k: &Field) -> Result<Option<UPoly>> {
        if self.sign == 0 {
            return Ok(Some(self.center.clone()));
        }
        let Some(root) = &self.root else { return Ok(None) };
        let half = RatFunc::rat(&Rat::new((self.sign as i64).into(), 2.into()).expect("nonzero"));
        Ok(Some(self.center.add(k, &root.scale(k, &half)?)?))
    }
    /// The exponent as an element of the parameter field, when it is exact there.
    pub fn exact_value(&self, k: &Field) -> Option<RatFunc> {
        Ext::as_base(&self.in_extension(k).ok()??)
    }
}

/// Whether a regular point with an integer exponent difference is apparent.
#[derive(Clone, Debug)]
pub enum Apparent {
    /// Not a question here (no integer difference, or not regular).
    NotApplicable,
    /// No logarithm: an apparent singularity.
    Yes,
    /// A logarithm is present.
    No,
    /// Apparent exactly when this polynomial in the parameters vanishes.
    When(Poly),
    /// Not decided, with the reason.
    Unchecked(String),
}

/// The local data at one singular point.
#[derive(Clone, Debug)]
pub struct SingularPoint {
    /// Where.
    pub place: Place,
    /// Pole order of Q there (of the normal form in t = 1/z at infinity).
    pub pole_order: u32,
    /// Kind of the point for the normal form.
    pub kind: Kind,
    /// Poincaré rank (0 for regular points; half-integers allowed).
    pub rank: Rat,
    /// Exponents of the normal form ψ.
    pub exponents: Vec<Exponent>,
    /// Exponents of the user's unknown (ψ's shifted by the prefactor); empty when unavailable.
    pub unknown_exponents: Vec<Exponent>,
    /// The exponent difference when it is an integer.
    pub integer_difference: Option<i64>,
    /// Apparent-singularity verdict.
    pub apparent: Apparent,
    /// Formal solutions at an irregular point (both branches), when the leading root is exact.
    pub formal: Vec<Formal>,
    /// True when Q is regular here but the prefactor is not (singular for the unknown only).
    pub removable: bool,
}

/// Everything `classify` derives from a reduction.
#[derive(Clone, Debug)]
pub struct Analysis {
    /// Finite points first (sorted by their factor), infinity last.
    pub points: Vec<SingularPoint>,
    /// The class of DESIGN.md's table.
    pub class: Class,
    /// The one-line reason, e.g. "2 regular + rank 1 at ∞".
    pub reason: String,
    /// Remarks that qualify the class (apparent points present, …).
    pub notes: Vec<String>,
    /// The map back to the physical variable when the equation's variable
    /// was changed: the labels order roots and name ends there.
    pub physical: Option<PhysicalMap>,
}

/// A change of variable seen from the analysis: old = g(new), with g in
/// the analysis' field (variable 0 the new variable).
#[derive(Clone, Debug)]
pub struct PhysicalMap {
    /// The physical (original) variable's name.
    pub var: String,
    /// g.
    pub g: RatFunc,
}

impl PhysicalMap {
    /// g at a point z of the written variable at the values; `None` at a
    /// pole of g (the point maps to the physical ∞) or where a value is
    /// not finite.
    pub fn at(&self, v: &numeric::Values, z: num_complex::Complex64) -> Option<num_complex::Complex64> {
        let n = v.upoly(&UPoly::from_poly(self.g.num()), z)?;
        let d = v.upoly(&UPoly::from_poly(&self.g.den_expanded()), z)? * Rat::int(self.g.scale().clone()).to_f64();
        let r = n / d;
        (d.norm() > 0.0 && r.re.is_finite() && r.im.is_finite()).then_some(r)
    }
}

impl Analysis {
    /// The position of the point `id` in [`Analysis::points`], if it is one.
    pub fn index_of(&self, id: &PointId) -> Option<usize> {
        self.points.iter().position(|p| p.place.id() == *id)
    }

    /// The singular point `id`, if it is one.
    pub fn point(&self, id: &PointId) -> Option<&SingularPoint> {
        self.index_of(id).map(|i| &self.points[i])
    }
}

fn half() -> RatFunc {
    RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero"))
}

fn konst(c: RatFunc) -> UPoly {
    UPoly::constant(c)
}

/// Exponents ½ ± ½√(1 − 4q₀) of ψ at a regular point with coefficient q₀ of the double pole.
fn regular_exponents(k: &Field, ext: Option<&Ext>, q0: &UPoly) -> Result<(Vec<Exponent>, Option<UPoly>)> {
    let one = konst(RatFunc::one());
    let radicand = one.add(k, &q0.scale(k, &RatFunc::rat(&Rat::int((-4).into())))?)?;
    let root = match ext {
        Some(e) => e.sqrt(k, &radicand)?,
        None => match Ext::as_base(&radicand) {
            Some(b) => k.sqrt_exact(&b)?.map(konst),
            None => None,
        },
    };
    let center = konst(half());
    let exps = [1i8, -1].iter().map(|&sign| Exponent { center: center.clone(), sign, root: root.clone(), radicand: radicand.clone() }).collect();
    Ok((exps, root))
}

fn simple_exponents() -> Vec<Exponent> {
    [RatFunc::zero(), RatFunc::one()].into_iter().map(|c| Exponent { center: konst(c), sign: 0, root: None, radicand: UPoly::zero() }).collect()
}

fn shifted(k: &Field, e: &[Exponent], by: &UPoly) -> Result<Vec<Exponent>> {
    e.iter().map(|x| Ok(Exponent { center: x.center.add(k, by)?, sign: x.sign, root: x.root.clone(), radicand: x.radicand.clone() })).collect()
}

/// The integer value of an exact exponent difference, when it is one.
fn integer_of(root: &Option<UPoly>) -> Option<i64> {
    let r = root.as_ref()?;
    let c = Ext::as_base(r)?.as_constant()?;
    if c.im.is_zero() && c.re.is_integer() && c.re.numer().bits() < 32 {
        c.re.numer().to_i64()
    } else {
        None
    }
}

/// The largest integer exponent difference whose no-logarithm condition is
/// checked (the check's work grows with its square).
pub const MAX_RESONANCE: u64 = 200;

/// Frobenius check at a resonance: with Q = Σ a_j w^j (j ≥ −2) and the
/// smaller exponent ρ₁, the recursion c_m [(ρ₁+m)(ρ₁+m−1) + a₋₂] = −Σ a₋₂₊ᵢ c_{m−i}
/// is consistent at m = n (the integer difference) iff its right side vanishes.
fn apparent_check(k: &Field, laurent: &[RatFunc], n: i64) -> Result<Apparent> {
    if n == 0 {
        return Ok(Apparent::No);
    }
    let n = n.unsigned_abs() as usize;
    let rho1 = RatFunc::rat(&Rat::new((1 - n as i64).into(), 2.into()).expect("nonzero"));
    let a = |j: usize| laurent.get(j).cloned().unwrap_or_else(RatFunc::zero); // a_{−2+j}
    let mut c: Vec<RatFunc> = vec![RatFunc::one()];
    for m in 1..=n {
        let mut rhs = RatFunc::zero();
        for i in 1..=m {
            rhs = k.sub(&rhs, &k.mul(&a(i), &c[m - i])?)?;
        }
        if m == n {
            if rhs.is_zero() {
                return Ok(Apparent::Yes);
            }
            if rhs.as_constant().is_some() {
                return Ok(Apparent::No);
            }
            let cond = crate::algebra::primitive(&rhs.num().re());
            if !rhs.num().is_real() {
                // Both parts must vanish; report the real part's condition only when the imaginary part is a multiple.
                return Ok(Apparent::Unchecked("the no-logarithm condition has complex coefficients".into()));
            }
            return Ok(Apparent::When(cond));
        }
        let rm = k.add(&rho1, &RatFunc::rat(&Rat::int((m as i64).into())))?;
        let bracket = k.add(&k.mul(&rm, &k.sub(&rm, &RatFunc::one())?)?, &a(0))?;
        c.push(k.div(&rhs, &bracket)?);
    }
    Ok(Apparent::Unchecked("no resonance".into()))
}

/// The residue-based shift −res/2 of the unknown's exponents at a root of `f`
/// (the prefactor ~ (z − θ)^(−res/2)), in the point's extension (or base field).
fn prefactor_shift(k: &Field, p: &RatFunc, f: &Poly, ext: Option<&Ext>) -> Result<Option<UPoly>> {
    let Some(idx) = p.den_factors().iter().position(|(g, _)| g.poly() == f) else {
        return Ok(Some(UPoly::zero()));
    };
    let e = p.den_factors()[idx].1;
    let minus_half = RatFunc::rat(&Rat::new((-1).into(), 2.into()).expect("nonzero"));
    match ext {
        None => {
            let Some((_, c)) = laurent_at(k, p, idx, 0)? else {
                return Ok(None);
            };
            let res = c.last().cloned().unwrap_or_else(RatFunc::zero);
            Ok(Some(konst(k.mul(&minus_half, &res)?)))
        }
        Some(x) => {
            if e != 1 {
                return Ok(None);
            }
            // res = num(θ) / (scale·f'(θ)·G(θ)), G the other factors.
            let mut g = Poly::constant(crate::algebra::GInt::real(p.scale().clone()));
            for (j, (h, m)) in p.den_factors().iter().enumerate() {
                if j != idx {
                    g = g.mul(&h.poly().pow(*m));
                }
            }
            let d = x.mul(k, &x.of_poly(k, &g)?, &x.of_poly(k, &f.derivative(0))?)?;
            let Some(res) = x.div(k, &x.of_poly(k, p.num())?, &d)? else {
                return Ok(None);
            };
            Ok(Some(res.scale(k, &minus_half)?))
        }
    }
}

/// Q's expansion at infinity: coefficients of z^(d − i), i = 0..n, and d.
fn expand_at_infinity(k: &Field, q: &RatFunc, n: usize) -> Result<(i64, Vec<RatFunc>)> {
    let num = UPoly::from_poly(q.num());
    let mut den = UPoly::constant(RatFunc::rat(&Rat::int(q.scale().clone())));
    for (f, e) in q.den_factors() {
        den = den.mul(k, &UPoly::from_poly(&f.poly().pow(*e)))?;
    }
    let (Some(dn), Some(dd)) = (num.degree(), den.degree()) else {
        return Ok((i64::MIN, Vec::new()));
    };
    let rev = |u: &UPoly| UPoly { coeffs: u.coeffs.iter().rev().cloned().collect() };
    let c = rev(&num).series_div(k, &rev(&den), n)?.unwrap_or_default();
    Ok((dn as i64 - dd as i64, c))
}

/// The coefficient p₁ of 1/z in p at infinity (after its polynomial part).
pub fn p_at_infinity_pub(k: &Field, p: &RatFunc) -> Result<RatFunc> {
    p_at_infinity(k, p)
}

/// The limit of p at infinity (its z⁰ coefficient): nonzero where a factor
/// e^(cz) was taken out of the unknown by hand (an ingoing or outgoing wave
/// written into the equation), which shifts the unknown's exponential
/// behaviour at infinity from ψ's by −p₀/2. `None` where p grows.
pub fn p_limit_at_infinity(k: &Field, p: &RatFunc) -> Result<Option<RatFunc>> {
    let (d, _) = expand_at_infinity(k, p, 0)?;
    if d == i64::MIN || d < 0 {
        return Ok(Some(RatFunc::zero()));
    }
    if d > 0 {
        return Ok(None);
    }
    let (_, c) = expand_at_infinity(k, p, 1)?;
    Ok(Some(c.first().cloned().unwrap_or_else(RatFunc::zero)))
}

fn p_at_infinity(k: &Field, p: &RatFunc) -> Result<RatFunc> {
    let (d, c) = expand_at_infinity(k, p, 0)?;
    let _ = c;
    // p = Σ c_i z^(d − i): the 1/z coefficient is c_{d+1}.
    if d == i64::MIN || d < -1 {
        return Ok(RatFunc::zero());
    }
    let (_, c) = expand_at_infinity(k, p, (d + 2) as usize)?;
    Ok(c.get((d + 1) as usize).cloned().unwrap_or_else(RatFunc::zero))
}

/// Analyses a reduction.
pub fn analyse(red: &Reduction) -> Result<Analysis> {
    let mut a = analyse_equation(&red.field, &red.p, &red.normal.q)?;
    a.physical = red.change.as_ref().map(|c| PhysicalMap { var: c.old_var.clone(), g: c.g.clone() });
    Ok(a)
}

/// Analyses y'' + p y' + q y = 0 given p and the normal form's Q.
pub fn analyse_equation(k: &Field, p: &RatFunc, q: &RatFunc) -> Result<Analysis> {
    let mut points = Vec::new();
    // Finite points: factors of Q's denominator, then factors of p's only.
    let mut factors: Vec<(Poly, u32)> = q.den_factors().iter().filter(|(f, _)| f.poly().uses_var(0)).map(|(f, e)| (f.poly().clone(), *e)).collect();
    for (f, _) in p.den_factors() {
        if f.poly().uses_var(0) && !factors.iter().any(|(g, _)| g == f.poly()) {
            factors.push((f.poly().clone(), 0));
        }
    }
    for (f, order) in factors {
        points.push(finite_point(k, p, q, &f, order)?);
    }
    points.push(infinity_point(k, q, p)?);
    let (class, reason, notes) = classify_points(&points);
    Ok(Analysis { points, class, reason, notes, physical: None })
}

fn finite_point(k: &Field, p: &RatFunc, q: &RatFunc, f: &Poly, order: u32) -> Result<SingularPoint> {
    let linear = linear_root(k, f)?;
    let ext = if linear.is_none() { Some(Ext::new(f)) } else { None };
    let place = match &linear {
        Some(z0) => Place::Point { factor: f.clone(), at: z0.clone() },
        None => Place::Roots(f.clone()),
    };
    let idx = q.den_factors().iter().position(|(g, _)| g.poly() == f);
    let (kind, rank) = match order {
        0 => (Kind::Ordinary, Rat::zero()),
        1 | 2 => (Kind::Regular, Rat::zero()),
        k2 => (Kind::Irregular, Rat::new((k2 as i64 - 2).into(), 2.into()).expect("nonzero")),
    };
    let mut exponents = Vec::new();
    let mut integer_difference = None;
    let mut apparent = Apparent::NotApplicable;
    let mut formal = Vec::new();
    match order {
        0 | 1 => {
            exponents = simple_exponents();
            if order == 1 {
                integer_difference = Some(1);
                // A simple pole of Q always forces a logarithm (c₁·0 = −a₋₁).
                apparent = Apparent::No;
            }
        }
        2 => {
            let q0 = match (&ext, idx) {
                (None, Some(i)) => {
                    let (_, c) = laurent_at(k, q, i, 0)?.expect("linear factor");
                    konst(c[0].clone())
                }
                (Some(x), Some(i)) => {
                    // q₀ = N(θ) / (scale·f'(θ)²·G(θ)).
                    let mut g = Poly::constant(crate::algebra::GInt::real(q.scale().clone()));
                    for (j, (h, m)) in q.den_factors().iter().enumerate() {
                        if j != i {
                            g = g.mul(&h.poly().pow(*m));
                        }
                    }
                    let fp = x.of_poly(k, &f.derivative(0))?;
                    let d = x.mul(k, &x.mul(k, &fp, &fp)?, &x.of_poly(k, &g)?)?;
                    x.div(k, &x.of_poly(k, q.num())?, &d)?.unwrap_or_else(UPoly::zero)
                }
                _ => UPoly::zero(),
            };
            let (e, root) = regular_exponents(k, ext.as_ref(), &q0)?;
            exponents = e;
            integer_difference = integer_of(&root);
            if let Some(n) = integer_difference {
                apparent = match (&ext, idx) {
                    // The check costs O(n²) field operations: a resonance
                    // beyond the bound is reported, not checked.
                    _ if n.unsigned_abs() > MAX_RESONANCE => Apparent::Unchecked(format!(
                        "the integer exponent difference {} is beyond the checked range (at most {MAX_RESONANCE})",
                        n.unsigned_abs()
                    )),
                    (None, Some(i)) => {
                        let (_, c) = laurent_at(k, q, i, n.unsigned_abs() as usize + 1)?.expect("linear factor");
                        apparent_check(k, &c, n)?
                    }
                    _ => Apparent::Unchecked("the point is a root of a factor of higher degree".into()),
                };
            }
        }
        _ => {
            if let (None, Some(i)) = (&ext, idx) {
                let (_, c) = laurent_at(k, q, i, 0)?.expect("linear factor");
                if let Some(f) = formal::formal_solutions(k, &c, -(order as i64), 1)? {
                    formal = f;
                }
            }
        }
    }
    let shift = prefactor_shift(k, p, f, ext.as_ref())?;
    let unknown_exponents = match (&shift, kind) {
        (Some(s), Kind::Ordinary | Kind::Regular) => shifted(k, &exponents, s)?,
        _ => Vec::new(),
    };
    let removable = order == 0;
    Ok(SingularPoint { place, pole_order: order, kind, rank, exponents, unknown_exponents, integer_difference, apparent, formal, removable })
}

fn infinity_point(k: &Field, q: &RatFunc, p: &RatFunc) -> Result<SingularPoint> {
    let (d, _) = expand_at_infinity(k, q, 1)?;
    let pole = if d == i64::MIN { 0 } else { (d + 4).max(0) as u32 };
    let (kind, rank) = match pole {
        0 => (Kind::Ordinary, Rat::zero()),
        1 | 2 => (Kind::Regular, Rat::zero()),
        n => (Kind::Irregular, Rat::new((n as i64 - 2).into(), 2.into()).expect("nonzero")),
    };
    let mut exponents = simple_exponents();
    let mut integer_difference = None;
    let mut apparent = Apparent::NotApplicable;
    let mut formal = Vec::new();
    if pole == 1 {
        integer_difference = Some(1);
        apparent = Apparent::No;
    }
    if pole == 2 {
        // q∞ = lim z² Q.
        let (_, c) = expand_at_infinity(k, q, 6)?;
        let (e, root) = regular_exponents(k, None, &konst(c[0].clone()))?;
        exponents = e;
        integer_difference = integer_of(&root);
        if let Some(n) = integer_difference {
            // In t = 1/z the normal form's expansion is Q̃ = Σ c_i t^(i − 2).
            let laurent: Vec<RatFunc> = c.iter().take(n.unsigned_abs() as usize + 1).cloned().collect();
            apparent = apparent_check(k, &laurent, n)?;
        }
    }
    if pole > 2 {
        exponents = Vec::new();
        let (d, c) = expand_at_infinity(k, q, (d + 3) as usize)?;
        if let Some(f) = formal::formal_solutions(k, &c, d, -1)? {
            formal = f;
        }
    }
    // w ~ t^(ρ̃ − 1 + p₁/2) with ψ̃ = t^(−1)·ψ(1/t) up to a constant.
    let p1 = p_at_infinity(k, p)?;
    let shift = k.add(&RatFunc::rat(&Rat::int((-1).into())), &k.mul(&half(), &p1)?)?;
    let unknown_exponents = if kind == Kind::Irregular { Vec::new() } else { shifted(k, &exponents, &konst(shift))? };
    Ok(SingularPoint {
        place: Place::Infinity,
        pole_order: pole,
        kind,
        rank,
        exponents,
        unknown_exponents,
        integer_difference,
        apparent,
        formal,
        removable: false,
    })
}

/// The canonical form of the analysed equation, when its class has one here.
pub fn canonical_form_of(red: &Reduction, an: &Analysis, choices: &canonical::Choices) -> Result<Option<canonical::Canonical>> {
    let k = &red.field;
    let pf = crate::ode::prefactor_text(&red.var, red.field.names(), &red.normal.prefactor, crate::algebra::print::Style::Text);
    match an.class {
        Class::ConfluentHypergeometric => canonical::whittaker_form(k, &red.var, &red.normal.q, &an.points, &red.normal.prefactor, &pf),
        Class::Airy | Class::ParabolicCylinder => canonical::polynomial_q_form(k, &red.var, &red.normal.q, &pf),
        c => canonical::canonical_form(k, &red.var, &red.p, &red.q, c, &an.points, choices),
    }
}

/// A quantity of a point's extension as an element of the parameter field,
/// when it is one (constants at a linear factor and at infinity).
pub fn ext_base(u: &UPoly) -> Option<RatFunc> {
    Ext::as_base(u)
}
