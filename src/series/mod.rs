//! The `series` stage: series recurrences. The unknown (or the normal-form
//! ψ) is written as prefactor · Σ aₙ uⁿ with u a Möbius variable sending the
//! expansion point to 0, and the equation becomes a k-term recurrence
//! Σⱼ cⱼ(n) a_{n+1−j} = 0 with coefficients exact polynomials in n and the
//! parameters.
//!
//! The prefactor is (z − z_h)^ρ_h · ∏ (z − zᵢ)^ρᵢ · (z − z₂)^σ · exp(E(z)):
//! ρ_h and ρᵢ are the chosen exponents of the unknown at the expansion point
//! and at the other finite regular points, E is the exponential part of the
//! chosen formal branch at an irregular point at infinity, and σ makes the
//! total power at infinity that branch's power, so that Σ aₙ uⁿ needs no
//! singular factor at u = 1 (Leaver 1985's ansatz).

use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{gcd, Field, Int, Poly, Rat, RatFunc, UPoly};
use crate::analysis::canonical::Choices;
use crate::analysis::{analyse_equation, Kind, Place, PointId, SingularPoint};
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use crate::ode::{change_variable, normal_q, prefactor, Reduction};

pub mod rate;

/// A derived recurrence.
#[derive(Debug)]
pub struct Recurrence {
    /// The field of the coefficients: variable 0 is n, then the parameters.
    pub field: Field,
    /// cⱼ(n), j = 0..k−1, multiplying a_{n+1−j}.
    pub coeffs: Vec<RatFunc>,
    /// The ansatz as text: unknown = prefactor * Σ aₙ uⁿ.
    pub prefactor: String,
    /// The series variable as text: u = ….
    pub series: String,
    /// The choices made, in words.
    pub choices: Vec<String>,
    /// Which function was expanded: the unknown's name or "ψ".
    pub function: String,
}

impl Recurrence {
    /// The name of the summation index (n, or n_ when n is a parameter).
    pub fn index(&self) -> &str {
        &self.field.names()[0]
    }

    /// The subscript of the coefficient that cⱼ multiplies: `n+1`, `n`, `n-1`, …
    pub fn subscript(&self, j: usize) -> String {
        let n = self.index();
        match 1 - j as i64 {
            0 => n.to_string(),
            d if d > 0 => format!("{n}+{d}"),
            d => format!("{n}-{}", -d),
        }
    }

    /// cⱼ(n) as text in the input language.
    pub fn coefficient_text(&self, j: usize) -> String {
        let c = &self.coeffs[j];
        crate::algebra::print::poly_text(c.num(), c.scale(), self.field.names(), Style::Text)
    }

    /// The ansatz in the input language: `y = prefactor * sum(a[n]*u^n)`.
    pub fn ansatz_text(&self) -> String {
        let n = self.index();
        format!("{} = {} * sum(a[{n}]*u^{n})", self.function, self.prefactor)
    }

    /// The recurrence itself: `c0(n)*a[n+1] + c1(n)*a[n] + … = 0`.
    pub fn equation_text(&self) -> String {
        let n = self.index();
        let terms: Vec<String> = (0..self.coeffs.len()).map(|j| format!("c{j}({n})*a[{}]", self.subscript(j))).collect();
        format!("{} = 0", terms.join(" + "))
    }
}

fn rat(n: i64, d: i64) -> RatFunc {
    RatFunc::rat(&Rat::new(n.into(), d.into()).expect("nonzero"))
}

fn rt(k: &Field, r: &RatFunc) -> String {
    ratfunc_text(r, k.names(), Style::Text)
}

fn wrap(s: String) -> String {
    if s.chars().all(|c| c.is_alphanumeric() || c == '_') {
        s
    } else {
        format!("({s})")
    }
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// The polynomial (in the variable) expanded denominator of `r`, and `r`
/// times it as a dense polynomial in the variable.
fn upoly_times(k: &Field, r: &RatFunc, d: &Poly) -> Result<UPoly> {
    let t = k.mul(r, &RatFunc::from_poly(d.clone()))?;
    let mut c = RatFunc::rat(&Rat::int(t.scale().clone()));
    for (f, e) in t.den_factors() {
        if f.poly().uses_var(0) {
            return Err(Error::new(ErrorKind::Internal, "a cleared coefficient still has a denominator in the series variable"));
        }
        c = k.mul(&c, &k.pow(&RatFunc::from_poly(f.poly().clone()), *e as i64)?)?;
    }
    UPoly::from_poly(t.num()).scale(k, &k.inv(&c)?)
}

fn den_in_var(r: &RatFunc) -> Poly {
    let mut d = Poly::int(1);
    for (f, e) in r.den_factors() {
        if f.poly().uses_var(0) {
            d = d.mul(&f.poly().pow(*e));
        }
    }
    d
}

/// Derives the recurrence about the finite singular point at `at` (exact),
/// with the series variable `map`: the typed entry for callers that chose
/// the point and the variable themselves (no text round trip).
pub fn recurrence_at(red: &Reduction, at: &RatFunc, map: &SeriesMap, choices: &Choices, normal: bool) -> Result<Recurrence> {
    recurrence_mod(red, at, map, choices, normal, None, &[])
}

/// The recurrence about the point written `at` with the exponent `picks`
/// (`inf` for infinity), in the default series variable: the unit tests'
/// short way to Leaver's recurrences.
#[cfg(test)]
pub(crate) fn about_written(red: &Reduction, at: &str, picks: &[(&str, usize)]) -> Recurrence {
    let read = |t: &str| if t == "inf" { PointId::Infinity } else { PointId::At(crate::ode::read_expression(red, t).expect("a point")) };
    let choices = Choices { picks: picks.iter().map(|(p, c)| (read(p), *c)).collect(), values: Vec::new() };
    let PointId::At(z) = read(at) else { panic!("a finite point") };
    recurrence_at(red, &z, &SeriesMap::Default, &choices, false).expect("the recurrence")
}

/// How the series variable u is chosen.
#[derive(Clone, Debug, PartialEq)]
pub enum SeriesMap {
    /// u = (z − z_h)/(z − z₂) when there is exactly one other finite
    /// singular point z₂, else u = z − z_h.
    Default,
    /// u = z − z_h.
    Shift,
    /// u = (z − z_h)/(z − pole), the pole exact.
    Pole(RatFunc),
    /// A Möbius map u = `map`(z) that the user gave, exact, with the text
    /// it was written in (shown as the series variable).
    Given {
        /// u as an exact function of the equation's variable.
        map: RatFunc,
        /// How the user wrote it, e.g. `u=(r - 2*M)/r`.
        text: String,
    },
}

/// An exponent of the unknown known from the original equation at a point
/// of the rewritten one (a root adjoined as a symbol hides it from the
/// rewritten analysis).
#[derive(Clone, Debug)]
struct KnownExponent {
    /// The point.
    at: RatFunc,
    /// The exponent of the unknown there.
    rho: RatFunc,
    /// The point as printed.
    label: String,
}

/// The relation F(t) = 0 (monic in the variable `var`) of a root adjoined as a symbol.
#[derive(Clone, Debug)]
struct RootRelation {
    /// The field index of the adjoined root.
    var: usize,
    /// F.
    poly: Poly,
}

/// The series variable u: its field (variable 0 is u), the Möbius pole z₂
/// (when finite), the inverse map z = g(u) and its text.
struct SeriesVariable {
    field: Field,
    pole: Option<RatFunc>,
    inverse: RatFunc,
    text: String,
}

/// The prefactor being built: L = (log prefactor)', its factors as text, and
/// the sum of the finite powers.
struct PrefactorParts<'a> {
    z: RatFunc,
    k: &'a Field,
    log_derivative: RatFunc,
    text: Vec<String>,
    total_power: RatFunc,
}

impl PrefactorParts<'_> {
    /// Multiplies by (z − at)^rho; `count` adds rho to the total power.
    fn add_power(&mut self, at: &RatFunc, rho: &RatFunc, count: bool) -> Result<()> {
        let k = self.k;
        if rho.is_zero() {
            return Ok(());
        }
        let zm = k.sub(&self.z, at)?;
        self.log_derivative = k.add(&self.log_derivative, &k.div(rho, &zm)?)?;
        if count {
            self.total_power = k.add(&self.total_power, rho)?;
        }
        self.text.push(format!("{}^{}", wrap(rt(k, &zm)), wrap(rt(k, rho))));
        Ok(())
    }
}

/// The exponent picked at the point `id`: the one the user chose,
/// else an exact zero, else the first exact one.
fn pick(choices: &Choices, id: &PointId, values: &[Option<RatFunc>]) -> Option<usize> {
    if let Some(c) = choices.get(id) {
        return values.get(c.checked_sub(1)?)?.as_ref().map(|_| c - 1);
    }
    values.iter().position(|v| v.as_ref().is_some_and(RatFunc::is_zero)).or_else(|| values.iter().position(Option::is_some))
}

/// [`recurrence`] whose coefficients are finally reduced modulo a monic
/// polynomial in one variable (`modf`): the relation F(θ) = 0 of a
/// root θ that was adjoined as a symbol.
/// With `modf` set, the finite factors of the prefactor are only the
/// expansion point (its exponent given in `choices.values`) and `extra`:
/// the analysis of the rewritten equation is trusted only at the expansion
/// point, the pole and infinity.
///
/// The steps: the expansion point, the series variable, the prefactor
/// (finite exponents, the branch at ∞, the power at the pole), the
/// equation for v = unknown / prefactor in u, its recurrence, and the
/// recurrence normalised.
fn recurrence_mod(
    red: &Reduction,
    about: &RatFunc,
    series: &SeriesMap,
    choices: &Choices,
    normal: bool,
    modf: Option<RootRelation>,
    extra: &[KnownExponent],
) -> Result<Recurrence> {
    let k = &red.field;
    let zero = RatFunc::zero();
    let (p, q) = if normal { (zero.clone(), red.normal.q.clone()) } else { (red.p.clone(), red.q.clone()) };
    let qn = normal_q(k, &p, &q)?;
    let an = analyse_equation(k, &p, &qn)?;
    let finite: Vec<(RatFunc, &SingularPoint)> = an
        .points
        .iter()
        .filter_map(|sp| match &sp.place {
            Place::Point { at, .. } if sp.kind != Kind::Ordinary => Some((at.clone(), sp)),
            _ => None,
        })
        .collect();
    let (zh, hp) = expansion_point(k, &finite, about)?;
    let others: Vec<&(RatFunc, &SingularPoint)> = finite.iter().filter(|(at, _)| *at != zh).collect();
    let sv = series_variable(red, series, &zh, &others)?;
    let mut said = Vec::new();
    let mut pre = PrefactorParts { z: k.var(0), k, log_derivative: RatFunc::zero(), text: Vec::new(), total_power: RatFunc::zero() };
    for e in extra {
        said.push(format!("at {} = {}: exponent {} of the unknown (from the original equation)", red.var, e.label, rt(k, &e.rho)));
        pre.add_power(&e.at, &e.rho, true)?;
    }
    finite_powers(red, choices, (&zh, hp), &others, sv.pole.as_ref(), modf.is_some(), &mut pre, &mut said)?;
    let inf = an.points.iter().find(|sp| matches!(sp.place, Place::Infinity)).expect("infinity is always listed");
    let (exp_part, inf_power) = infinity_branch(red, &p, inf, choices, &mut said)?;
    if let Some(z2) = &sv.pole {
        let sigma = match &inf_power {
            Some(pw) => k.sub(pw, &pre.total_power)?,
            None => RatFunc::zero(),
        };
        if inf_power.is_some() {
            said.push(format!("at {} = {}: power {} so that the total power at ∞ is the chosen branch's", red.var, rt(k, z2), rt(k, &sigma)));
        }
        pre.add_power(z2, &sigma, false)?;
    }
    let mut l = pre.log_derivative;
    let mut text = pre.text;
    if !exp_part.is_zero() {
        l = k.add(&l, &k.deriv(&exp_part, 0)?)?;
        text.push(format!("exp({})", rt(k, &exp_part)));
    }
    // v = unknown / prefactor: p_v = p + 2L, q_v = q + pL + L' + L².
    let pv = k.add(&p, &k.mul(&rat(2, 1), &l)?)?;
    let qv = k.add(&k.add(&q, &k.mul(&p, &l)?)?, &k.add(&k.deriv(&l, 0)?, &k.mul(&l, &l)?)?)?;
    let (kn, ps) = recurrence_polynomials(k, &sv, &pv, &qv)?;
    let coeffs = normalised(&kn, ps, modf.as_ref())?;
    let function = if normal { "ψ".to_string() } else { red.ode.unknown.clone() };
    let prefactor = if text.is_empty() { "1".to_string() } else { text.join("*") };
    Ok(Recurrence { field: kn, coeffs, prefactor, series: sv.text, choices: said, function })
}

/// The singular point `about`, which must be regular.
fn expansion_point<'a>(k: &Field, finite: &[(RatFunc, &'a SingularPoint)], about: &RatFunc) -> Result<(RatFunc, &'a SingularPoint)> {
    let Some((zh, hp)) = finite.iter().find(|(at, _)| at == about).cloned() else {
        let list: Vec<String> = finite.iter().map(|(at, _)| rt(k, at)).collect();
        return Err(usage(format!("'{}' is not a singular point with an exact location; the points are: {}", rt(k, about), list.join(", ")))
            .in_option(RequestInput::About));
    };
    let about = rt(k, &zh);
    if hp.kind != Kind::Regular {
        return Err(usage(format!("the point {about} is not a regular singular point: a Frobenius-type series does not start there"))
            .in_option(RequestInput::About));
    }
    Ok((zh, hp))
}

/// The series variable ([`SeriesMap`]): the one given, else u = (z − z_h)/(z − z₂)
/// when there is exactly one other finite singular point z₂, else u = z − z_h.
fn series_variable(red: &Reduction, series: &SeriesMap, zh: &RatFunc, others: &[&(RatFunc, &SingularPoint)]) -> Result<SeriesVariable> {
    let k = &red.field;
    let mut unames = k.names().to_vec();
    let u = crate::ode::fresh_name("u", &unames);
    unames[0] = u.clone();
    let ku = Field::new(unames, k.limits().clone())?;
    let (pole, inverse, text) = match series {
        SeriesMap::Given { map, text } => {
            let (z2, g) = mobius_inverse(red, map, zh)?;
            (z2, g, text.to_string())
        }
        SeriesMap::Default | SeriesMap::Shift | SeriesMap::Pole(_) => {
            let z2 = match (series, others) {
                (SeriesMap::Pole(z2), _) => Some(z2.clone()),
                (SeriesMap::Default, [(z2, _)]) => Some(z2.clone()),
                _ => None,
            };
            let uu = ku.var(0);
            match &z2 {
                Some(z2) => {
                    // u = (z − z_h)/(z − z₂)  ⇔  z = (z_h − z₂ u)/(1 − u)
                    let g = ku.div(&ku.sub(zh, &ku.mul(z2, &uu)?)?, &ku.sub(&RatFunc::one(), &uu)?)?;
                    let sh = |at: &RatFunc| crate::algebra::print::shifted(&red.var, &rt(k, at), Style::Text);
                    // A chosen pole is written in the parenthesised form that
                    // records and documents have always carried for it.
                    let text = match series {
                        SeriesMap::Pole(_) => format!("{u}=({v} - ({}))/({v} - ({}))", rt(k, zh), rt(k, z2), v = red.var),
                        _ => format!("{u} = {}/{}", sh(zh), sh(z2)),
                    };
                    (Some(z2.clone()), g, text)
                }
                None => {
                    let text = match series {
                        SeriesMap::Shift => format!("{u}={} - ({})", red.var, rt(k, zh)),
                        _ => format!("{u} = {}", crate::algebra::print::shifted(&red.var, &rt(k, zh), Style::Text)),
                    };
                    (None, ku.add(zh, &uu)?, text)
                }
            }
        }
    };
    Ok(SeriesVariable { field: ku, pole, inverse, text })
}

/// The prefactor's powers at the expansion point and at the other finite
/// regular points (not the pole; with an adjoined root only the expansion
/// point): the exponent given, or the one picked.
#[allow(clippy::too_many_arguments)]
fn finite_powers(
    red: &Reduction,
    choices: &Choices,
    here: (&RatFunc, &SingularPoint),
    others: &[&(RatFunc, &SingularPoint)],
    pole: Option<&RatFunc>,
    only_here: bool,
    pre: &mut PrefactorParts<'_>,
    said: &mut Vec<String>,
) -> Result<()> {
    let k = &red.field;
    let (zh, hp) = here;
    let first = (zh.clone(), hp);
    for (at, sp) in std::iter::once(&first).chain(others.iter().copied()) {
        if only_here && at != zh {
            continue;
        }
        if pole == Some(at) || (sp.kind != Kind::Regular && at != zh) {
            continue;
        }
        let label = rt(k, at);
        let id = PointId::At(at.clone());
        if let Some(v) = choices.value(&id) {
            said.push(format!("at {} = {label}: exponent {} (given)", red.var, rt(k, v)));
            pre.add_power(at, v, true)?;
            continue;
        }
        let values: Vec<Option<RatFunc>> = sp.unknown_exponents.iter().map(|e| e.exact_value(k)).collect();
        let Some(i) = pick(choices, &id, &values) else {
            return Err(usage(format!(
                "the exponents at {} = {label} are not exact; choose the point's exponent with {opt_exponents} or expand elsewhere",
                red.var,
                opt_exponents = RequestInput::Exponents.mention()
            )));
        };
        let rho = values[i].clone().expect("picked exact");
        said.push(format!("at {} = {label}: exponent {} (number {})", red.var, rt(k, &rho), i + 1));
        pre.add_power(at, &rho, true)?;
    }
    Ok(())
}

/// The branch at ∞: for an irregular ∞ the chosen formal solution's
/// exponential part and the unknown's power there; for a regular ∞ the
/// power z^(−ρ∞) of the chosen exponent.
fn infinity_branch(
    red: &Reduction,
    p: &RatFunc,
    inf: &SingularPoint,
    choices: &Choices,
    said: &mut Vec<String>,
) -> Result<(RatFunc, Option<RatFunc>)> {
    let k = &red.field;
    let z = k.var(0);
    match inf.kind {
        Kind::Irregular => {
            let pf = prefactor(k, p)?;
            let ep = crate::analysis::canonical::poly_exp(k, &pf.exponential)?;
            let p1 = crate::analysis::p_at_infinity_pub(k, p)?;
            let mut cands = Vec::new();
            for f in &inf.formal {
                if f.exponent.iter().any(|(pw, _)| !pw.is_integer()) {
                    return Err(usage("the formal solutions at ∞ are ramified (half-integer rank): no Jaffé-type prefactor"));
                }
                let mut e = ep.clone();
                for (pw, c) in &f.exponent {
                    let n =
                        pw.numer().to_i64().ok_or_else(|| Error::new(ErrorKind::Limit, "a power of the formal solution's exponent is too large"))?;
                    e = k.add(&e, &k.mul(c, &k.pow(&z, n)?)?)?;
                }
                // The unknown's power at ∞: ρ_ψ − p₁/2.
                let rho = k.sub(&f.rho, &k.mul(&rat(1, 2), &p1)?)?;
                cands.push((e, rho));
            }
            let vals: Vec<Option<RatFunc>> = cands.iter().map(|(e, _)| Some(e.clone())).collect();
            let Some(i) = pick(choices, &PointId::Infinity, &vals) else {
                return Err(usage("the formal solutions at ∞ have no exact leading coefficient"));
            };
            let (e, rho) = cands[i].clone();
            said.push(format!("at {} = ∞: the branch exp({})*{}^{} (number {})", red.var, rt(k, &e), red.var, wrap(rt(k, &rho)), i + 1));
            Ok((e, Some(rho)))
        }
        Kind::Regular => {
            // y ~ z^(−ρ∞) for the chosen exponent ρ∞ at infinity (in t = 1/z).
            let values: Vec<Option<RatFunc>> = inf.unknown_exponents.iter().map(|e| e.exact_value(k)).collect();
            let power = match pick(choices, &PointId::Infinity, &values) {
                Some(i) => {
                    let rho = values[i].clone().expect("picked exact");
                    said.push(format!("at {} = ∞: exponent {} in 1/{} (number {})", red.var, rt(k, &rho), red.var, i + 1));
                    Some(k.neg(&rho))
                }
                None => None,
            };
            Ok((RatFunc::zero(), power))
        }
        Kind::Ordinary => Ok((RatFunc::zero(), None)),
    }
}

/// The equation v'' + p_v v' + q_v v = 0 in u, cleared to A v'' + B v' + C v = 0
/// with A, B, C polynomials in u, and the recurrence's polynomials
/// P_s(m) = A_s (m+2−s)(m+1−s) + B_{s−1}(m+2−s) + C_{s−2} in a field whose
/// variable 0 is the index.
fn recurrence_polynomials(k: &Field, sv: &SeriesVariable, pv: &RatFunc, qv: &RatFunc) -> Result<(Field, Vec<RatFunc>)> {
    let ku = &sv.field;
    let (pu, qu) = change_variable(ku, pv, qv, &sv.inverse)?;
    let (dp, dq) = (den_in_var(&pu), den_in_var(&qu));
    let gg = gcd(&dp, &dq).ok_or_else(|| Error::new(ErrorKind::Limit, "a gcd in the series variable grew too large"))?;
    let a = dp.mul(&dq.div_exact(&gg).ok_or_else(|| Error::new(ErrorKind::Internal, "gcd does not divide"))?);
    let au = UPoly::from_poly(&a);
    let bu = upoly_times(ku, &pu, &a)?;
    let cu = upoly_times(ku, &qu, &a)?;
    let smax = [au.coeffs.len(), bu.coeffs.len() + 1, cu.coeffs.len() + 2].into_iter().max().unwrap_or(0);
    let mut names = k.names().to_vec();
    names[0] = crate::ode::fresh_name("n", &names);
    let kn = Field::new(names, k.limits().clone())?;
    let m = kn.var(0);
    let mut ps = Vec::new();
    for s in 0..smax {
        // m = n − 1 + s_min is substituted later; P_s is built as a function of m first.
        let lin = |c: i64| kn.add(&m, &RatFunc::rat(&Rat::int(c.into())));
        let mut t = RatFunc::zero();
        let a_s = au.coeff(s);
        if !a_s.is_zero() {
            t = kn.add(&t, &kn.mul(&a_s, &kn.mul(&lin(2 - s as i64)?, &lin(1 - s as i64)?)?)?)?;
        }
        if s >= 1 {
            let b = bu.coeff(s - 1);
            if !b.is_zero() {
                t = kn.add(&t, &kn.mul(&b, &lin(2 - s as i64)?)?)?;
            }
        }
        if s >= 2 {
            let c = cu.coeff(s - 2);
            if !c.is_zero() {
                t = kn.add(&t, &c)?;
            }
        }
        ps.push(t);
    }
    Ok((kn, ps))
}

/// The recurrence's coefficients from the P_s: parameter denominators
/// cleared, reduced modulo the root's relation, the vanishing ends dropped,
/// re-indexed so that the first multiplies a_{n+1}, and divided by their
/// integer content and by a common factor of the parameters alone.
fn normalised(kn: &Field, ps: Vec<RatFunc>, modf: Option<&RootRelation>) -> Result<Vec<RatFunc>> {
    // Clear parameter denominators (common to all P_s), then reduce modulo
    // the root's relation, before deciding which coefficients vanish.
    let mut lden = Poly::int(1);
    for c in &ps {
        let d = c.den_expanded().mul_int(c.scale());
        let g = gcd(&lden, &d).ok_or_else(|| Error::new(ErrorKind::Limit, "a gcd grew too large"))?;
        lden = lden.mul(&d.div_exact(&g).ok_or_else(|| Error::new(ErrorKind::Internal, "gcd does not divide"))?);
    }
    let lr = RatFunc::from_poly(lden);
    let mut ps: Vec<RatFunc> = ps.iter().map(|c| kn.mul(c, &lr)).collect::<Result<_>>()?;
    if let Some(rel) = modf {
        for c in ps.iter_mut() {
            *c = RatFunc::from_poly(rem_monic(c.num(), rel.var, &rel.poly)?);
        }
    }
    let Some(smin) = ps.iter().position(|t| !t.is_zero()) else {
        return Err(Error::new(ErrorKind::Internal, "the recurrence is empty"));
    };
    let slast = ps.iter().rposition(|t| !t.is_zero()).expect("nonempty");
    // Re-index: m = n − 1 + s_min, so the first coefficient multiplies a_{n+1}.
    let shift = kn.add(&kn.var(0), &RatFunc::rat(&Rat::int((smin as i64 - 1).into())))?;
    let mut coeffs = Vec::new();
    for t in &ps[smin..=slast] {
        coeffs.push(kn.compose(t, 0, &shift)?);
    }
    let content = coeffs.iter().fold(Int::ZERO, |g, c| g.gcd(&c.num().content_int()));
    if !content.is_zero() && !content.is_one() {
        let inv = RatFunc::rat(&Rat::new(Int::ONE, content).expect("nonzero"));
        coeffs = coeffs.iter().map(|c| kn.mul(c, &inv)).collect::<Result<_>>()?;
    }
    // A common factor of the parameters alone (e.g. (M² − a²)³ after the
    // exponents at a quadratic root were cleared of their denominators)
    // multiplies the whole recurrence and is divided out; factors with n or
    // with an adjoined root are kept.
    if coeffs.iter().all(|c| c.den_factors().is_empty()) {
        // A real common factor divides the real and the imaginary part of
        // every coefficient (the gcd works over Q).
        let parts: Vec<Poly> = coeffs.iter().flat_map(|c| [c.num().re(), c.num().im()]).filter(|p| !p.is_zero()).collect();
        let mut g = parts.first().cloned().unwrap_or_else(|| Poly::int(1));
        for p in parts.iter().skip(1) {
            match gcd(&g, p) {
                Some(x) => g = x,
                None => {
                    g = Poly::int(1);
                    break;
                }
            }
        }
        let adjoined = modf.is_some_and(|rel| g.uses_var(rel.var));
        if (1..crate::algebra::MAX_VARS).any(|i| g.uses_var(i)) && !g.uses_var(0) && !adjoined {
            if let Some(divided) = coeffs.iter().map(|c| c.num().div_exact(&g).map(RatFunc::from_poly)).collect::<Option<Vec<_>>>() {
                coeffs = divided;
            }
        }
    }
    Ok(coeffs)
}

/// Checks that u = `m`(z) is a Möbius map (a z + b)/(c z + d) that vanishes
/// at z_h; returns its pole z₂ (if finite) and the inverse map z = g(u).
fn mobius_inverse(red: &Reduction, m: &RatFunc, zh: &RatFunc) -> Result<(Option<RatFunc>, RatFunc)> {
    let k = &red.field;
    let opt = RequestInput::Series;
    // m = (a z + b)/(c z + d).
    let num = UPoly::from_poly(m.num());
    let den_poly = m.den_expanded().mul_int(m.scale());
    let den = UPoly::from_poly(&den_poly);
    if num.degree().unwrap_or(0) > 1 || den.degree().unwrap_or(0) > 1 || m.den_factors().iter().filter(|(f, _)| f.poly().uses_var(0)).count() > 1 {
        return Err(usage("the series variable must be a Möbius map (a z + b)/(c z + d) of the variable").in_option(opt));
    }
    let (a, b, c, d) = (num.coeff(1), num.coeff(0), den.coeff(1), den.coeff(0));
    if !k.compose(m, 0, zh)?.is_zero() {
        return Err(usage("the series variable must vanish at the expansion point").in_option(opt));
    }
    let mut unames = k.names().to_vec();
    unames[0] = crate::ode::fresh_name("u", &unames);
    let ku = Field::new(unames, k.limits().clone())?;
    let uu = ku.var(0);
    // z = (d u − b)/(a − c u)
    let g = ku.div(&ku.sub(&ku.mul(&d, &uu)?, &b)?, &ku.sub(&a, &ku.mul(&c, &uu)?)?)?;
    let z2 = if c.is_zero() { None } else { Some(k.neg(&k.div(&d, &c)?)) };
    Ok((z2, g))
}

/// The remainder of `p` modulo a polynomial `f` monic in variable `t`.
fn rem_monic(p: &Poly, t: usize, f: &Poly) -> Result<Poly> {
    let fu = f.to_univariate(t);
    let df = fu.len() - 1;
    let mut pu = p.to_univariate(t);
    while pu.len() > df {
        let lead = pu.pop().expect("nonempty");
        let shift = pu.len() - df;
        for (j, fj) in fu.iter().enumerate().take(df) {
            pu[shift + j] = pu[shift + j].sub(&lead.mul(fj));
        }
    }
    Ok(Poly::from_univariate(t, &pu))
}

/// The recurrence a user asked for: about the singular point `about` (a
/// point with an exact location, or a root θ of an irreducible quadratic,
/// whose series variable is fixed), in the series variable `series`, with
/// exponent choices, and the normal form's ψ expanded instead of the unknown
/// when `normal`.
///
/// When the formal solutions at an irregular infinity have no exact leading
/// coefficient (a massive field: e^(±√(μ² − ω²) z)), their square root χ is
/// adjoined first (`rate::adjoin_rate`, keeping the spectral parameter
/// `freq` — by default the parameter named omega, ω or w — symbolic), the
/// series carries e^(−χz) at infinity, and a choice line says what χ
/// stands for; its branch is the user's to pick when evaluating.
pub fn requested(red: &Reduction, about: &PointId, series: &SeriesMap, choices: &Choices, normal: bool, freq: Option<usize>) -> Result<Recurrence> {
    if rate::needs_rate(red)? {
        let names = red.field.names();
        let freq = freq.or_else(|| ["omega", "ω", "w"].iter().find_map(|d| names.iter().skip(1).position(|n| n == d).map(|i| i + 1)));
        let Some(freq) = freq else {
            return Err(usage(format!(
                "the formal solutions at ∞ need the square root of a polynomial in the frequency adjoined: name the frequency with {}",
                RequestInput::Frequency.mention()
            )));
        };
        let a = rate::adjoin_rate(red, freq)?;
        let mut adjoined = choices.without(&PointId::Infinity);
        adjoined.set(PointId::Infinity, a.branch);
        let mut rec = requested_exact(&a.red, about, series, &adjoined, normal)?;
        rec.choices.push(format!(
            "at ∞: {} (the series carries e^(−{s}{v}); pick the branch of {s} when evaluating: Re {s} > 0 decays)",
            a.meaning,
            s = a.symbol,
            v = red.var
        ));
        return Ok(rec);
    }
    requested_exact(red, about, series, choices, normal)
}

/// [`requested`] where the leading coefficients at infinity are exact.
fn requested_exact(red: &Reduction, about: &PointId, series: &SeriesMap, choices: &Choices, normal: bool) -> Result<Recurrence> {
    match about {
        PointId::At(at) => recurrence_at(red, at, series, choices, normal),
        PointId::Roots(f) => {
            if *series != SeriesMap::Default || normal {
                return Err(
                    usage("about θ the series variable is fixed (u = (z − θ)/(z − θ')) and the unknown is expanded").in_option(RequestInput::About)
                );
            }
            let an = crate::analysis::analyse(red)?;
            let Some(p) = an.point(about).filter(|p| p.kind == Kind::Regular) else {
                return Err(usage(format!(
                    "the roots of {} are not a regular singular point",
                    crate::algebra::print::poly_text(f, &Int::ONE, red.field.names(), Style::Text)
                ))
                .in_option(RequestInput::About));
            };
            recurrence_about_point(red, p, choices).map(|r| r.rec).map_err(|e| {
                if e.is_bad_input() && e.span.is_none() {
                    e.in_option(RequestInput::About)
                } else {
                    e
                }
            })
        }
        PointId::Infinity => Err(usage(format!(
            "the series is set up about a finite regular singular point, not about ∞: rewrite the equation in 1/z ({}) to expand there",
            RequestInput::AtInfinity.mention()
        ))
        .in_option(RequestInput::About)),
    }
}

/// The symbol adjoined for a root θ of the quadratic `f` (in `k`'s variable
/// 0) and what it stands for: θ itself when `f` is monic, else φ = c₂θ
/// (c₂ the leading coefficient), the symbol [`recurrence_at_root`] uses; a
/// name already taken gets a trailing `_`.
pub fn root_symbol(k: &Field, f: &Poly) -> (String, String) {
    let c2 = f.to_univariate(0).get(2).cloned().unwrap_or_else(|| Poly::int(1));
    let monic = c2 == Poly::int(1);
    let theta = crate::algebra::print::root_letter(k.names()).text;
    let letter = if monic { theta } else { crate::algebra::print::scaled_root_letter(k.names()).text };
    let name = crate::ode::fresh_name(letter, k.names());
    let ftext = crate::algebra::print::poly_text(f, &Int::ONE, k.names(), Style::Text);
    let what = if monic {
        format!("{name}, a root of {ftext}")
    } else {
        let c2text = crate::algebra::print::poly_text(&c2, &Int::ONE, k.names(), Style::Text);
        format!("{name} = {c2text}*{theta}, {theta} a root of {ftext}")
    };
    (name, what)
}

/// A recurrence about an adjoined root, with what the symbol stands for.
#[derive(Debug)]
pub struct RootRecurrence {
    /// The recurrence; its field has the symbol last.
    pub rec: Recurrence,
    /// The exponent used at the root (0-based, in the listed order).
    pub exponent: usize,
    /// The adjoined symbol (θ, or φ = c₂θ for a non-monic factor).
    pub symbol: String,
    /// What the symbol stands for, in words and the factor's text.
    pub meaning: String,
}

/// The recurrence about the first regular singular point that is a root θ
/// of an irreducible quadratic factor (a horizon r₊ of r² − 2Mr + a²): see
/// `recurrence_about_point`.
pub fn recurrence_about_root(red: &Reduction, choices: &Choices) -> Result<RootRecurrence> {
    let an = crate::analysis::analyse(red)?;
    let found = an.points.iter().find(|p| p.kind == Kind::Regular && matches!(&p.place, Place::Roots(f) if f.to_univariate(0).len() == 3));
    match found {
        Some(p) => {
            recurrence_about_point(red, p, choices)
                .map_err(|e| if e.is_bad_input() && e.span.is_none() { e.in_option(RequestInput::About) } else { e })
        }
        None => Err(usage("no regular singular point is a root of an irreducible quadratic factor").in_option(RequestInput::About)),
    }
}

/// The recurrence about the singular point `p`, a root θ of an irreducible
/// quadratic factor, adjoined as a symbol (see [`root_symbol`]) placed last
/// in the recurrence's field. The exponent there is chosen by `choices` at
/// its identity (1-based), else the first exact one.
pub fn recurrence_about_point(red: &Reduction, p: &crate::analysis::SingularPoint, choices: &Choices) -> Result<RootRecurrence> {
    let k = &red.field;
    let Place::Roots(f) = &p.place else { return Err(Error::new(ErrorKind::Internal, "not a root of a factor")) };
    if f.to_univariate(0).len() != 3 {
        return Err(usage("the expansion point must be a root of a quadratic factor"));
    }
    let exact: Vec<Option<UPoly>> = p.unknown_exponents.iter().map(|e| e.in_extension(k).ok().flatten()).collect();
    let id = p.place.id();
    let pick = match choices.get(&id) {
        Some(c) => Some(c - 1).filter(|j| exact.get(*j).is_some_and(Option::is_some)),
        None => exact.iter().position(Option::is_some),
    };
    let Some(j) = pick else {
        return Err(usage("the chosen exponent at θ is not exact in the root's field: the series needs it"));
    };
    let rho = exact[j].clone().expect("picked exact");
    let (symbol, meaning) = root_symbol(k, f);
    let others = choices.without(&id);
    let rec = recurrence_at_root(red, f, &rho, &symbol, &others)?;
    Ok(RootRecurrence { rec, exponent: j, symbol, meaning })
}

/// The recurrence about a root θ of a monic quadratic factor F of the
/// denominators: θ is adjoined as a new symbol, F is replaced by
/// (z − θ)(z − θ') with θ' = −F₁ − θ, the exponent at θ (`rho`, a polynomial
/// in θ, exact modulo F) is given, and the coefficients are reduced modulo
/// F(θ). The result's field has the extra symbol `theta_name` last: it
/// stands for φ = c₂θ (c₂ the leading coefficient of F), which is θ itself
/// when F is monic.
pub fn recurrence_at_root(red: &Reduction, f: &Poly, rho: &UPoly, theta_name: &str, choices: &Choices) -> Result<Recurrence> {
    let k = &red.field;
    let fu = f.to_univariate(0);
    if fu.len() != 3 {
        return Err(usage("the expansion point must be a root of a quadratic factor"));
    }
    // With F = c₂z² + c₁z + c₀ the adjoined symbol is φ = c₂θ, a root of the
    // monic φ² + c₁φ + c₀c₂ (so that reduction needs no division).
    let c2 = RatFunc::from_poly(fu[2].clone());
    let mut names = k.names().to_vec();
    if names.len() >= crate::algebra::MAX_VARS {
        return Err(Error::new(ErrorKind::Limit, "too many symbols to adjoin the root"));
    }
    names.push(theta_name.to_string());
    let t = names.len() - 1;
    let kt = Field::new(names, k.limits().clone())?;
    let theta = kt.div(&kt.var(t), &c2)?;
    let theta2 = kt.sub(&kt.neg(&kt.div(&RatFunc::from_poly(fu[1].clone()), &c2)?), &theta)?;
    let z = kt.var(0);
    let split = kt.mul(&c2, &kt.mul(&kt.sub(&z, &theta)?, &kt.sub(&z, &theta2)?)?)?;
    let fr = RatFunc::from_poly(f.clone());
    let swap = |r: &RatFunc| -> Result<RatFunc> {
        let e = r.den_factors().iter().find(|(g, _)| g.poly() == f).map(|(_, e)| *e).unwrap_or(0) as i64;
        if e == 0 {
            return Ok(r.clone());
        }
        kt.div(&kt.mul(r, &kt.pow(&fr, e)?)?, &kt.pow(&split, e)?)
    };
    let (p, q) = (swap(&red.p)?, swap(&red.q)?);
    let normal = crate::ode::normal_form(&kt, &p, &q)?;
    let ode = crate::ode::LinearOde {
        field: Field::new(kt.names().to_vec(), k.limits().clone())?,
        var: red.var.clone(),
        unknown: red.ode.unknown.clone(),
        params: kt.names()[1..].to_vec(),
        inferred: Vec::new(),
        p: p.clone(),
        q: q.clone(),
        lets: Vec::new(),
    };
    let red2 = Reduction { ode, field: kt, var: red.var.clone(), p, q, normal, change: None, schrodinger: None, map: None, family: None };
    let k2 = &red2.field;
    let theta_r = k2.div(&k2.var(t), &c2)?;
    let mut rho_r = RatFunc::zero();
    for (j, c) in rho.coeffs.iter().enumerate() {
        rho_r = k2.add(&rho_r, &k2.mul(c, &k2.pow(&theta_r, j as i64)?)?)?;
    }
    let mut ch = choices.clone();
    ch.values.push((PointId::At(theta_r.clone()), rho_r));
    // The other singular points of the original equation keep an exact
    // exponent of the unknown (its exponent 0 when it has one).
    let an0 = crate::analysis::analyse(red)?;
    let mut extra = Vec::new();
    for sp in &an0.points {
        if let Place::Point { at, .. } = &sp.place {
            let values: Vec<Option<RatFunc>> = sp.unknown_exponents.iter().map(|e| e.exact_value(k)).collect();
            let pick = values.iter().position(|v| v.as_ref().is_some_and(RatFunc::is_zero)).or_else(|| values.iter().position(Option::is_some));
            if let Some(i) = pick {
                let rho = values[i].clone().expect("picked exact");
                if !rho.is_zero() {
                    extra.push(KnownExponent { at: at.clone(), rho, label: rt(k, at) });
                }
            }
        }
    }
    // θ' is the Möbius pole; its power follows from the branch at infinity.
    let theta2 = k2.sub(&k2.neg(&k2.div(&RatFunc::from_poly(fu[1].clone()), &c2)?), &theta_r)?;
    let phi = Poly::var(t);
    let relation = phi.pow(2).add(&fu[1].mul(&phi)).add(&fu[0].mul(&fu[2]));
    let modf = Some(RootRelation { var: t, poly: relation });
    recurrence_mod(&red2, &theta_r, &SeriesMap::Pole(theta2), &ch, false, modf, &extra)
}

/// What a three-term recurrence α_n a_{n+1} + β_n a_n + γ_n a_{n−1} = 0
/// (a_{−1} = 0) needs for its series to stop at degree N: with
/// a_{N+1} = a_{N+2} = 0 the equation at n = N + 1 leaves γ_{N+1} a_N = 0,
/// and the equations n = 0..N for a_0..a_N are a tridiagonal system whose
/// determinant must vanish (DLMF 31.5 for Heun's equation, where it is a
/// polynomial of degree N + 1 in the accessory parameter).
#[derive(Debug, Clone)]
pub struct Termination {
    /// The degree N.
    pub degree: u32,
    /// γ_{N+1}, which must vanish (in the recurrence's field, free of n).
    pub last: RatFunc,
    /// The determinant of the first N + 1 equations (free of n).
    pub determinant: RatFunc,
}

/// Coefficients c_j(n) (field variable 0 is n) at the index n = `at`.
pub fn coefficients_at(k: &Field, coeffs: &[RatFunc], at: i64) -> Result<Vec<RatFunc>> {
    let n = RatFunc::rat(&Rat::int(at.into()));
    coeffs.iter().map(|c| k.compose(c, 0, &n)).collect()
}

/// The conditions for the series of a three-term recurrence (coefficients
/// c_0, c_1, c_2 = α, β, γ in `k`, variable 0 the index n) to stop at
/// degree `degree` ([`Termination`]); the determinant by the continuant
/// recursion D_k = β_k D_{k−1} − α_{k−1} γ_k D_{k−2} (D_{−1} = 1, D_0 = β_0).
pub fn termination(k: &Field, coeffs: &[RatFunc], degree: u32) -> Result<Termination> {
    if coeffs.len() != 3 {
        return Err(usage(format!("the recurrence has {} terms: the termination condition here is that of three terms", coeffs.len())));
    }
    // (D_{j−2}, D_{j−1}), starting from (D_{−2}, D_{−1}) = (0, 1); α_{−1} = 0.
    let (mut before, mut det) = (RatFunc::zero(), RatFunc::one());
    let mut prev_alpha = RatFunc::zero();
    for j in 0..=degree as i64 {
        let c = coefficients_at(k, coeffs, j)?;
        let next = k.sub(&k.mul(&c[1], &det)?, &k.mul(&k.mul(&prev_alpha, &c[2])?, &before)?)?;
        before = std::mem::replace(&mut det, next);
        prev_alpha = c[0].clone();
    }
    let last = coefficients_at(k, coeffs, degree as i64 + 1)?.swap_remove(2);
    Ok(Termination { degree, last, determinant: det })
}
