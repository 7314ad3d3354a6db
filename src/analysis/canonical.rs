//! Canonical forms in DLMF conventions: a Möbius or affine map puts the
//! singular points at the standard places, an s-homotopic factor
//! y = ∏ (x − xᵢ)^ρᵢ · exp(E(x)) · w picks one exponent (or exponential
//! behaviour) at each point, and the parameters are read off the equation
//! of w and checked by rebuilding the template exactly.
//!
//! Targets: general Heun (DLMF 31.2.1), confluent (31.12.1), doubly confluent
//! (31.12.2), biconfluent (31.12.3), triconfluent (31.12.4) and Gauss
//! hypergeometric (15.10.1) for the equation of the unknown; Whittaker
//! (13.14.1), Bessel (10.2.1), Airy (9.2.1) and parabolic cylinder (12.2.2)
//! for its normal form.

use super::{analyse_equation, Class, Exponent, Form, Kind, Place, PointId, SingularPoint};
use crate::algebra::print::{ratfunc_text, Style};
use crate::algebra::{Field, Rat, RatFunc, UPoly};
use crate::error::Result;
use crate::ode::{change_variable, laurent_at, normal_q, prefactor};

/// A canonical parameter: `value`·√`radical` (no radical when exact), or a
/// pair of roots of t² − S t + P written as S/2 ± ½√(S² − 4P).
#[derive(Clone, Debug)]
pub enum Param {
    /// An exact value in the parameter field.
    Exact(RatFunc),
    /// value · √radical, the root on the principal branch.
    Radical(RatFunc, RatFunc),
    /// One root of a quadratic: center + sign/2 · √radicand.
    Root(Exponent),
}

/// The canonical form reached.
#[derive(Clone, Debug)]
pub struct Canonical {
    /// The standard form reached.
    pub form: Form,
    /// The published form, e.g. "DLMF 31.12.1".
    pub source: String,
    /// The equation of the canonical unknown, in words.
    pub equation: String,
    /// The map, as text: old variable = expression in the new one.
    pub map: String,
    /// The s-homotopic factor, as text: unknown = (this) · w.
    pub prefactor: String,
    /// The canonical parameters in the form's order.
    pub parameters: Vec<(String, Param)>,
    /// Every choice made, in words.
    pub choices: Vec<String>,
    /// Checks that were made (template rebuilt exactly, Fuchs relation).
    pub checks: Vec<String>,
}

/// Which exponent to keep at a point: by position (1 or 2) in the listed
/// exponents, or the default (the unknown's exponent 0 when it has one).
/// Points are named by their identity ([`PointId`]); a front end turns the
/// text a user wrote into these.
#[derive(Clone, Debug, Default)]
pub struct Choices {
    /// (point, 1-based choice).
    pub picks: Vec<(PointId, usize)>,
    /// Exponents given outright (point, value), used before `picks`:
    /// for a point whose exponents are only exact modulo a relation.
    pub values: Vec<(PointId, RatFunc)>,
}

impl Choices {
    /// The 1-based choice at `id`, if one was made.
    pub fn get(&self, id: &PointId) -> Option<usize> {
        self.picks.iter().find(|(p, _)| p == id).map(|(_, c)| *c)
    }

    /// The exponent given outright at `id`, if any.
    pub fn value(&self, id: &PointId) -> Option<&RatFunc> {
        self.values.iter().find(|(p, _)| p == id).map(|(_, v)| v)
    }

    /// Sets the choice at `id`, replacing an earlier one.
    pub fn set(&mut self, id: PointId, choice: usize) {
        self.picks.retain(|(p, _)| *p != id);
        self.picks.push((id, choice));
    }

    /// Adds `picks` at the points that have no choice yet (a user's choice
    /// stands over a boundary problem's default).
    pub fn fill(&mut self, picks: Vec<(PointId, usize)>) {
        for (p, c) in picks {
            if self.get(&p).is_none() {
                self.picks.push((p, c));
            }
        }
    }

    /// These choices without any at `id`.
    pub fn without(&self, id: &PointId) -> Choices {
        Choices { picks: self.picks.iter().filter(|(p, _)| p != id).cloned().collect(), values: self.values.clone() }
    }
}

struct Ctx<'a> {
    k0: &'a Field,
    var: String,
    choices: &'a Choices,
}

fn rt(k: &Field, r: &RatFunc) -> String {
    ratfunc_text(r, k.names(), Style::Text)
}

fn rat(n: i64, d: i64) -> RatFunc {
    RatFunc::rat(&Rat::new(n.into(), d.into()).expect("nonzero"))
}

/// The image of an expression in the canonical variable under the map found.
type Image<'a> = Box<dyn Fn(&RatFunc) -> Result<RatFunc> + 'a>;

fn wrap(s: String) -> String {
    if s.chars().all(|c| c.is_alphanumeric() || c == '_') {
        s
    } else {
        format!("({s})")
    }
}

/// The polynomial in x (coefficients free of x) equal to `r`, if it is one.
fn as_upoly(k: &Field, r: &RatFunc) -> Result<Option<UPoly>> {
    if r.den_factors().iter().any(|(f, _)| f.poly().uses_var(0)) {
        return Ok(None);
    }
    let mut c = RatFunc::rat(&Rat::int(r.scale().clone()));
    for (f, e) in r.den_factors() {
        c = k.mul(&c, &k.pow(&RatFunc::from_poly(f.poly().clone()), *e as i64)?)?;
    }
    Ok(Some(UPoly::from_poly(r.num()).scale(k, &k.inv(&c)?)?))
}

/// Residue of `r` at x = x0 (0 when r is regular there).
fn residue(k: &Field, r: &RatFunc, x0: &RatFunc) -> Result<RatFunc> {
    for (i, (f, _)) in r.den_factors().iter().enumerate() {
        if let Some(root) = crate::ode::linear_root(k, f.poly())? {
            if root == *x0 {
                let (_, c) = laurent_at(k, r, i, 0)?.expect("linear factor");
                return Ok(c.last().cloned().unwrap_or_else(RatFunc::zero));
            }
        }
    }
    Ok(RatFunc::zero())
}

/// p and q of w for y = F·w with F'/F = L: p + 2L and q + pL + L' + L².
fn homotopic(k: &Field, p: &RatFunc, q: &RatFunc, l: &RatFunc) -> Result<(RatFunc, RatFunc)> {
    let pw = k.add(p, &k.mul(&rat(2, 1), l)?)?;
    let qw = k.add(&k.add(q, &k.mul(p, l)?)?, &k.add(&k.deriv(l, 0)?, &k.mul(l, l)?)?)?;
    Ok((pw, qw))
}

/// The finite singular points with linear factors, and whether all finite ones are linear.
fn finite_points(points: &[SingularPoint]) -> (Vec<&SingularPoint>, bool) {
    let mut out = Vec::new();
    let mut all_linear = true;
    for p in points {
        if p.kind == Kind::Ordinary {
            continue;
        }
        match &p.place {
            Place::Point { .. } => out.push(p),
            Place::Roots(_) => all_linear = false,
            Place::Infinity => {}
        }
    }
    (out, all_linear)
}

fn at_of(p: &SingularPoint) -> RatFunc {
    match &p.place {
        Place::Point { at, .. } => at.clone(),
        _ => RatFunc::zero(),
    }
}

/// The result of mapping and choosing exponents: the w-equation and texts.
struct Prepared {
    k: Field,
    x: String,
    map_text: String,
    pw: RatFunc,
    qw: RatFunc,
    prefactor: String,
    choices: Vec<String>,
}

impl<'a> Ctx<'a> {
    fn new_field(&self, identity: bool) -> Result<(Field, String)> {
        let mut names = self.k0.names().to_vec();
        let x = if identity { self.var.clone() } else { crate::ode::fresh_name("x", &names) };
        names[0] = x.clone();
        Ok((Field::new(names, self.k0.limits().clone())?, x))
    }

    /// Maps z = g(x), then multiplies by ∏(x − xᵢ)^ρᵢ at `regular` images and
    /// exp(E) at irregular points (from the formal solutions of the unknown).
    fn prepare(&self, p: &RatFunc, q: &RatFunc, g: &RatFunc, identity: bool, labels: &[(RatFunc, RatFunc)]) -> Result<Option<Prepared>> {
        let (k, x) = self.new_field(identity)?;
        let (p1, q1) = change_variable(&k, p, q, g)?;
        let qn = normal_q(&k, &p1, &q1)?;
        let an = analyse_equation(&k, &p1, &qn)?;
        let pf = prefactor(&k, &p1)?;
        let mut l = RatFunc::zero();
        let mut factors: Vec<String> = Vec::new();
        let mut choices = Vec::new();
        for sp in &an.points {
            match (&sp.place, sp.kind) {
                (_, Kind::Ordinary) => {}
                (Place::Roots(_), _) => return Ok(None),
                (Place::Point { at, .. }, Kind::Regular) => {
                    let (id, label) = self.original(labels, &k, at);
                    let values: Vec<Option<RatFunc>> = sp.unknown_exponents.iter().map(|e| e.exact_value(&k)).collect();
                    let Some(pick) = self.pick(&id, &values) else { return Ok(None) };
                    let rho = values[pick].clone().expect("picked an exact exponent");
                    choices.push(format!(
                        "at {} = {label}: exponent {} of the unknown{}",
                        self.var,
                        rt(&k, &rho),
                        if self.choices.get(&id).is_some() {
                            " (as asked)"
                        } else if rho.is_zero() {
                            " (its exponent 0, kept)"
                        } else {
                            " (the first listed)"
                        }
                    ));
                    if !rho.is_zero() {
                        let xm = k.sub(&k.var(0), at)?;
                        l = k.add(&l, &k.div(&rho, &xm)?)?;
                        factors.push(format!("{}^{}", wrap(rt(&k, &xm)), wrap(rt(&k, &rho))));
                    }
                }
                (Place::Point { at, .. }, Kind::Irregular) => {
                    // exp(E₀) (x − x₀)^ρ with E₀ from the formal solution of the unknown.
                    let idx = p1.den_factors().iter().position(|(f, _)| crate::ode::linear_root(&k, f.poly()).ok().flatten().as_ref() == Some(at));
                    let e_p = principal_exp(&k, &pf.exponential, at)?;
                    let mut cands = Vec::new();
                    for f in &sp.formal {
                        if f.exponent.iter().any(|(pw, _)| !pw.is_integer()) {
                            return Ok(None);
                        }
                        let xm = k.sub(&k.var(0), at)?;
                        let mut e = e_p.clone();
                        for (pw, c) in &f.exponent {
                            let n = pw.numer().to_i64().ok_or_else(|| {
                                crate::error::Error::new(crate::error::ErrorKind::Limit, "a power of the formal solution's exponent is too large")
                            })?;
                            e = k.add(&e, &k.mul(c, &k.pow(&xm, n)?)?)?;
                        }
                        let shift = match idx {
                            Some(i) => {
                                let (_, c) = laurent_at(&k, &p1, i, 0)?.expect("linear");
                                k.mul(&rat(-1, 2), c.last().expect("residue"))?
                            }
                            None => RatFunc::zero(),
                        };
                        cands.push((e, k.add(&f.rho, &shift)?));
                    }
                    let (id, label) = self.original(labels, &k, at);
                    let Some((e, rho)) = self.pick_exp(&id, &cands) else { return Ok(None) };
                    choices.push(format!(
                        "at {} = {label}: the formal solution exp({})*(…)^{} of the unknown",
                        self.var,
                        rt(&k, &e),
                        wrap(rt(&k, &rho))
                    ));
                    let xm = k.sub(&k.var(0), at)?;
                    l = k.add(&l, &k.add(&k.deriv(&e, 0)?, &k.div(&rho, &xm)?)?)?;
                    if !rho.is_zero() {
                        factors.push(format!("{}^{}", wrap(rt(&k, &xm)), wrap(rt(&k, &rho))));
                    }
                    if !e.is_zero() {
                        factors.push(format!("exp({})", rt(&k, &e)));
                    }
                }
                (Place::Infinity, Kind::Irregular) => {
                    let e_p = poly_exp(&k, &pf.exponential)?;
                    let mut cands = Vec::new();
                    for f in &sp.formal {
                        if f.exponent.iter().any(|(pw, _)| !pw.is_integer()) {
                            return Ok(None);
                        }
                        let mut e = e_p.clone();
                        for (pw, c) in &f.exponent {
                            let n = pw.numer().to_i64().ok_or_else(|| {
                                crate::error::Error::new(crate::error::ErrorKind::Limit, "a power of the formal solution's exponent is too large")
                            })?;
                            e = k.add(&e, &k.mul(c, &k.pow(&k.var(0), n)?)?)?;
                        }
                        cands.push((e, RatFunc::zero()));
                    }
                    let Some((e, _)) = self.pick_exp(&PointId::Infinity, &cands) else { return Ok(None) };
                    choices.push(format!("at {} = ∞: the exponential behaviour exp({}) of the unknown", self.var, rt(&k, &e)));
                    l = k.add(&l, &k.deriv(&e, 0)?)?;
                    if !e.is_zero() {
                        factors.push(format!("exp({})", rt(&k, &e)));
                    }
                }
                (Place::Infinity, _) => {}
            }
        }
        let (pw, qw) = homotopic(&k, &p1, &q1, &l)?;
        let prefactor = if factors.is_empty() { "1".to_string() } else { factors.join("*") };
        let map_text = if identity { "identity (already in standard position)".to_string() } else { format!("{} = {}", self.var, rt(&k, g)) };
        Ok(Some(Prepared { k, x, map_text, pw, qw, prefactor, choices }))
    }

    /// The identity and text of the original point that `at` (in the new
    /// variable) is the image of, by the map's `labels`; `at` itself when it
    /// is no image.
    fn original(&self, labels: &[(RatFunc, RatFunc)], k: &Field, at: &RatFunc) -> (PointId, String) {
        match labels.iter().find(|(v, _)| v == at) {
            Some((_, z)) => (PointId::At(z.clone()), rt(self.k0, z)),
            None => (PointId::At(at.clone()), rt(k, at)),
        }
    }

    fn pick(&self, id: &PointId, values: &[Option<RatFunc>]) -> Option<usize> {
        if let Some(c) = self.choices.get(id) {
            return values.get(c.checked_sub(1)?)?.as_ref().map(|_| c - 1);
        }
        if let Some(i) = values.iter().position(|v| v.as_ref().is_some_and(RatFunc::is_zero)) {
            return Some(i);
        }
        values.iter().position(Option::is_some)
    }

    fn pick_exp(&self, id: &PointId, cands: &[(RatFunc, RatFunc)]) -> Option<(RatFunc, RatFunc)> {
        if let Some(c) = self.choices.get(id) {
            return cands.get(c.checked_sub(1)?).cloned();
        }
        cands.iter().find(|(e, r)| e.is_zero() && r.is_zero()).or_else(|| cands.iter().find(|(e, _)| e.is_zero())).or_else(|| cands.first()).cloned()
    }
}

/// The polynomial part (positive powers) of an exponential exponent E(x).
pub(crate) fn poly_exp(k: &Field, e: &RatFunc) -> Result<RatFunc> {
    if e.is_zero() {
        return Ok(RatFunc::zero());
    }
    let num = UPoly::from_poly(e.num());
    let mut den = UPoly::constant(RatFunc::rat(&Rat::int(e.scale().clone())));
    for (f, m) in e.den_factors() {
        den = den.mul(k, &UPoly::from_poly(&f.poly().pow(*m)))?;
    }
    let (qt, _) = num.divrem(k, &den)?.unwrap_or((UPoly::zero(), UPoly::zero()));
    let mut qt = qt;
    if !qt.coeffs.is_empty() {
        qt.coeffs[0] = RatFunc::zero();
    }
    qt.to_ratfunc(k)
}

/// The principal part (negative powers) of E(x) at x0.
fn principal_exp(k: &Field, e: &RatFunc, x0: &RatFunc) -> Result<RatFunc> {
    for (i, (f, m)) in e.den_factors().iter().enumerate() {
        if crate::ode::linear_root(k, f.poly())?.as_ref() == Some(x0) {
            let (_, c) = laurent_at(k, e, i, 0)?.expect("linear");
            let xm = k.sub(&k.var(0), x0)?;
            let mut s = RatFunc::zero();
            for (j, cj) in c.iter().enumerate() {
                let pw = *m as i64 - j as i64;
                s = k.add(&s, &k.mul(cj, &k.pow(&xm, -pw)?)?)?;
            }
            return Ok(s);
        }
    }
    Ok(RatFunc::zero())
}

fn exact(k: &Field, p: &Prepared, params: Vec<(&str, RatFunc)>) -> Vec<(String, Param)> {
    let _ = (k, p);
    params.into_iter().map(|(n, v)| (n.to_string(), Param::Exact(v))).collect()
}

/// Roots α, β of t² − S t + P: S/2 ± ½√(S² − 4P).
fn root_pair(k: &Field, s: &RatFunc, p: &RatFunc) -> Result<(Param, Param)> {
    let disc = k.sub(&k.mul(s, s)?, &k.mul(&rat(4, 1), p)?)?;
    let center = k.mul(&rat(1, 2), s)?;
    let root = k.sqrt_exact(&disc)?;
    let mk = |sign: i8| -> Result<Param> {
        Ok(match &root {
            Some(r) => Param::Exact(k.add(&center, &k.mul(&rat(sign as i64, 2), r)?)?),
            None => Param::Root(Exponent { center: UPoly::constant(center.clone()), sign, root: None, radicand: UPoly::constant(disc.clone()) }),
        })
    };
    Ok((mk(1)?, mk(-1)?))
}

/// Brings the equation y'' + p y' + q y = 0 (with its analysis) to the
/// canonical form of its class, when that class has one here: the classes
/// with regular finite points are mapped by a Möbius or affine map
/// (`regular_points_form`), the Heun classes irregular at ∞ by a shift and
/// a scale (`irregular_heun_form`); each template reader then rebuilds its
/// template and compares it exactly.
pub fn canonical_form(
    k0: &Field,
    var: &str,
    p: &RatFunc,
    q: &RatFunc,
    class: Class,
    points: &[SingularPoint],
    choices: &Choices,
) -> Result<Option<Canonical>> {
    let ctx = Ctx { k0, var: var.to_string(), choices };
    let (finite, all_linear) = finite_points(points);
    if !all_linear {
        return Ok(None);
    }
    let inf = points.iter().find(|p| matches!(p.place, Place::Infinity));
    let inf_kind = inf.map(|p| p.kind).unwrap_or(Kind::Ordinary);
    let z0s: Vec<RatFunc> = finite.iter().map(|p| at_of(p)).collect();
    let template = match class {
        Class::Hypergeometric => RegularTemplate::Hypergeometric,
        Class::GeneralHeun => RegularTemplate::GeneralHeun,
        Class::ConfluentHeun => RegularTemplate::ConfluentHeun,
        Class::DoublyConfluentHeun => return irregular_heun_form(&ctx, p, q, IrregularHeun::DoublyConfluent, &z0s),
        Class::BiconfluentHeun => return irregular_heun_form(&ctx, p, q, IrregularHeun::Biconfluent, &z0s),
        Class::TriconfluentHeun => return irregular_heun_form(&ctx, p, q, IrregularHeun::Triconfluent, &z0s),
        Class::Euler
        | Class::ConfluentHypergeometric
        | Class::ReducedConfluentHypergeometric
        | Class::ParabolicCylinder
        | Class::Airy
        | Class::ReducedConfluentHeun
        | Class::ReducedDoublyConfluentHeun
        | Class::DoublyReducedDoublyConfluentHeun
        | Class::Fuchsian
        | Class::Irregular => return Ok(None),
    };
    if finite.len() >= 2 && (inf_kind != Kind::Ordinary || finite.len() >= 3) {
        regular_points_form(&ctx, p, q, template, &z0s, inf_kind)
    } else {
        Ok(None)
    }
}

/// The templates read after a Möbius or affine map of the finite points.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum RegularTemplate {
    Hypergeometric,
    GeneralHeun,
    ConfluentHeun,
}

/// The Heun classes irregular at ∞ with at most one finite point.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum IrregularHeun {
    DoublyConfluent,
    Biconfluent,
    Triconfluent,
}

/// z₀ → 0, z₁ → 1 and, when ∞ is an ordinary point, the last finite point
/// → ∞; then the template's reader.
fn regular_points_form(
    ctx: &Ctx<'_>,
    p: &RatFunc,
    q: &RatFunc,
    template: RegularTemplate,
    z0s: &[RatFunc],
    inf_kind: Kind,
) -> Result<Option<Canonical>> {
    let k0 = ctx.k0;
    // z0 → 0, z1 → 1, and, when ∞ is an ordinary point, the last
    // finite point → ∞ by a Möbius map; otherwise an affine map.
    let mobius = inf_kind == Kind::Ordinary;
    let (a, b) = (z0s[0].clone(), z0s[1].clone());
    let lam = k0.sub(&b, &a)?;
    let identity = !mobius && a.is_zero() && lam == RatFunc::one();
    let (kx, _) = ctx.new_field(identity)?;
    let xv = kx.var(0);
    let (g, img): (RatFunc, Image<'_>) = if mobius {
        // x = ((z − z0)/(z − z∞))·((z1 − z∞)/(z1 − z0)); inverse z = (x z∞ (z1 − z0) − z0 (z1 − z∞))/(x (z1 − z0) − (z1 − z∞)).
        let zi = z0s.last().expect("a last point").clone();
        let d10 = lam.clone();
        let d1i = k0.sub(&b, &zi)?;
        let num = kx.sub(&kx.mul(&kx.mul(&xv, &zi)?, &d10)?, &kx.mul(&a, &d1i)?)?;
        let den = kx.sub(&kx.mul(&xv, &d10)?, &d1i)?;
        let g = kx.div(&num, &den)?;
        let (a2, zi2, d1i2, d102) = (a.clone(), zi.clone(), d1i.clone(), d10.clone());
        let f = move |z: &RatFunc| -> Result<RatFunc> {
            let t = k0.div(&k0.sub(z, &a2)?, &k0.sub(z, &zi2)?)?;
            k0.mul(&t, &k0.div(&d1i2, &d102)?)
        };
        (g, Box::new(f))
    } else {
        let g = kx.add(&a, &kx.mul(&lam, &xv)?)?;
        let (a2, l2) = (a.clone(), lam.clone());
        (g, Box::new(move |z: &RatFunc| kx_map(k0, z, &a2, &l2)))
    };
    let n_fin = if mobius { z0s.len() - 1 } else { z0s.len() };
    let mut labels: Vec<(RatFunc, RatFunc)> = Vec::new();
    for z in z0s.iter().take(n_fin) {
        labels.push((img(z)?, z.clone()));
    }
    let Some(pr) = ctx.prepare(p, q, &g, identity, &labels)? else { return Ok(None) };
    match template {
        RegularTemplate::Hypergeometric if n_fin == 2 => hypergeometric_template(pr),
        RegularTemplate::GeneralHeun if n_fin == 3 => {
            let av = img(&z0s[2])?;
            general_heun_template(pr, av)
        }
        RegularTemplate::ConfluentHeun if n_fin == 2 && inf_kind == Kind::Irregular => confluent_heun_template(pr),
        RegularTemplate::Hypergeometric | RegularTemplate::GeneralHeun | RegularTemplate::ConfluentHeun => Ok(None),
    }
}

/// DLMF 15.10.1 read from the mapped equation.
fn hypergeometric_template(pr: Prepared) -> Result<Option<Canonical>> {
    let k = &pr.k;
    let x = k.var(0);
    let c = residue(k, &pr.pw, &RatFunc::zero())?;
    // p_w x(1 − x) = c − (a+b+1) x, q_w x(1 − x) = −ab.
    let x1mx = k.mul(&x, &k.sub(&RatFunc::one(), &x)?)?;
    let Some(ap) = as_upoly(k, &k.mul(&pr.pw, &x1mx)?)? else { return Ok(None) };
    let Some(aq) = as_upoly(k, &k.mul(&pr.qw, &x1mx)?)? else { return Ok(None) };
    if ap.degree().unwrap_or(0) > 1 || aq.degree().unwrap_or(0) > 0 {
        return Ok(None);
    }
    let s = k.sub(&k.neg(&ap.coeff(1)), &RatFunc::one())?;
    let prod = k.neg(&aq.coeff(0));
    let pt = k.div(&k.sub(&c, &k.mul(&k.add(&s, &RatFunc::one())?, &x)?)?, &x1mx)?;
    let qt = k.div(&k.neg(&prod), &x1mx)?;
    if pt != pr.pw || qt != pr.qw {
        return Ok(None);
    }
    let (alpha, beta) = root_pair(k, &s, &prod)?;
    let mut params = vec![("a".to_string(), alpha), ("b".to_string(), beta)];
    params.push(("c".to_string(), Param::Exact(c)));
    Ok(Some(finish(
        pr,
        Form::Of(Class::Hypergeometric),
        "DLMF 15.10.1",
        "x(1 − x) w'' + (c − (a + b + 1) x) w' − a b w = 0",
        params,
        vec!["the template was rebuilt from the parameters and equals the transformed equation exactly".into()],
    )))
}

/// DLMF 31.2.1 read from the mapped equation, with the fourth point at `av`.
fn general_heun_template(pr: Prepared, av: RatFunc) -> Result<Option<Canonical>> {
    let k = &pr.k;
    let x = k.var(0);
    let xm1 = k.sub(&x, &RatFunc::one())?;
    let gamma = residue(k, &pr.pw, &RatFunc::zero())?;
    let delta = residue(k, &pr.pw, &RatFunc::one())?;
    let eps = residue(k, &pr.pw, &av)?;
    let xma = k.sub(&x, &av)?;
    let pt = k.add(&k.add(&k.div(&gamma, &x)?, &k.div(&delta, &xm1)?)?, &k.div(&eps, &xma)?)?;
    let d = k.mul(&k.mul(&x, &xm1)?, &xma)?;
    let Some(lq) = as_upoly(k, &k.mul(&pr.qw, &d)?)? else { return Ok(None) };
    if pt != pr.pw || lq.degree().unwrap_or(0) > 1 {
        return Ok(None);
    }
    let ab = lq.coeff(1);
    let qq = k.neg(&lq.coeff(0));
    let s = k.sub(&k.add(&k.add(&gamma, &delta)?, &eps)?, &RatFunc::one())?;
    let (alpha, beta) = root_pair(k, &s, &ab)?;
    let params = vec![
        ("a".to_string(), Param::Exact(av)),
        ("q".to_string(), Param::Exact(qq)),
        ("alpha".to_string(), alpha),
        ("beta".to_string(), beta),
        ("gamma".to_string(), Param::Exact(gamma)),
        ("delta".to_string(), Param::Exact(delta)),
        ("epsilon".to_string(), Param::Exact(eps)),
    ];
    Ok(Some(finish(
        pr,
        Form::Of(Class::GeneralHeun),
        "DLMF 31.2.1",
        "w'' + (γ/x + δ/(x − 1) + ε/(x − a)) w' + (αβ x − q)/(x(x − 1)(x − a)) w = 0",
        params,
        vec![
            "the template was rebuilt from the parameters and equals the transformed equation exactly".into(),
            "Fuchs relation α + β + 1 = γ + δ + ε holds (α, β are the exponents at ∞)".into(),
        ],
    )))
}

/// DLMF 31.12.1 read from the mapped equation.
fn confluent_heun_template(pr: Prepared) -> Result<Option<Canonical>> {
    let k = &pr.k;
    let x = k.var(0);
    let xm1 = k.sub(&x, &RatFunc::one())?;
    let gamma = residue(k, &pr.pw, &RatFunc::zero())?;
    let delta = residue(k, &pr.pw, &RatFunc::one())?;
    let rest = k.sub(&k.sub(&pr.pw, &k.div(&gamma, &x)?)?, &k.div(&delta, &xm1)?)?;
    let Some(e) = rest.as_constant().map(|c| RatFunc::constant(&c)).or_else(|| (!rest.uses_var(0)).then(|| rest.clone())) else {
        return Ok(None);
    };
    let d = k.mul(&x, &xm1)?;
    let Some(lq) = as_upoly(k, &k.mul(&pr.qw, &d)?)? else { return Ok(None) };
    if lq.degree().unwrap_or(0) > 1 {
        return Ok(None);
    }
    let params = vec![
        ("q".to_string(), Param::Exact(k.neg(&lq.coeff(0)))),
        ("alpha".to_string(), Param::Exact(lq.coeff(1))),
        ("gamma".to_string(), Param::Exact(gamma)),
        ("delta".to_string(), Param::Exact(delta)),
        ("epsilon".to_string(), Param::Exact(e)),
    ];
    Ok(Some(finish(
        pr,
        Form::Of(Class::ConfluentHeun),
        "DLMF 31.12.1",
        "w'' + (γ/x + δ/(x − 1) + ε) w' + (α x − q)/(x(x − 1)) w = 0",
        params,
        vec!["the template was rebuilt from the parameters and equals the transformed equation exactly".into()],
    )))
}

/// Translates the finite point (if any) to 0, then scales so that the
/// leading coefficient of p_w at ∞ matches the template; then the
/// template's reader.
fn irregular_heun_form(ctx: &Ctx<'_>, p: &RatFunc, q: &RatFunc, class: IrregularHeun, z0s: &[RatFunc]) -> Result<Option<Canonical>> {
    let k0 = ctx.k0;
    // Translate the finite point (if any) to 0, then scale so that the
    // leading coefficient of p_w at ∞ matches the template.
    let shift = z0s.first().cloned().unwrap_or_else(RatFunc::zero);
    let (k1, _) = ctx.new_field(shift.is_zero())?;
    let g1 = k1.add(&shift, &k1.var(0))?;
    let labels: Vec<(RatFunc, RatFunc)> = z0s.iter().map(|z| (k1.sub(z, &shift).unwrap_or_else(|_| z.clone()), z.clone())).collect();
    let Some(pr1) = ctx.prepare(p, q, &g1, shift.is_zero(), &labels)? else { return Ok(None) };
    // Leading behaviour of p_w at ∞: c·x^n with n = 0, 1, 2 for the three forms.
    let n = match class {
        IrregularHeun::DoublyConfluent => 0,
        IrregularHeun::Biconfluent => 1,
        IrregularHeun::Triconfluent => 2,
    };
    let Some(poly) = as_upoly_part(&pr1.k, &pr1.pw)? else { return Ok(None) };
    let c = poly.coeff(n);
    if c.is_zero() || poly.degree() != Some(n) {
        return Ok(None);
    }
    // Template leading coefficient: +1 (31.12.2), −1 (31.12.3), +1 (31.12.4).
    let target = if class == IrregularHeun::Biconfluent { rat(-1, 1) } else { RatFunc::one() };
    // Scale x → λx: p_w's x^n coefficient becomes λ^(n+1) c.
    let ratio = k0.div(&target, &c)?;
    let lam = match n {
        0 => Some(ratio),
        1 => k0.sqrt_exact(&ratio)?,
        _ => (ratio == RatFunc::one()).then(RatFunc::one),
    };
    let Some(lam) = lam else { return Ok(None) };
    let identity = shift.is_zero() && lam == RatFunc::one();
    let (kx, _) = ctx.new_field(identity)?;
    let g = kx.add(&shift, &kx.mul(&lam, &kx.var(0))?)?;
    let mut labels: Vec<(RatFunc, RatFunc)> = Vec::new();
    for z in z0s {
        labels.push((kx_map(&kx, z, &shift, &lam)?, z.clone()));
    }
    let Some(pr) = ctx.prepare(p, q, &g, identity, &labels)? else { return Ok(None) };
    match class {
        IrregularHeun::DoublyConfluent => doubly_confluent_heun_template(pr),
        IrregularHeun::Biconfluent => biconfluent_heun_template(pr),
        IrregularHeun::Triconfluent => triconfluent_heun_template(pr),
    }
}

/// DLMF 31.12.2 read from the scaled equation.
fn doubly_confluent_heun_template(pr: Prepared) -> Result<Option<Canonical>> {
    let k = &pr.k;
    let x = k.var(0);
    let Some(a) = as_upoly(k, &k.mul(&pr.pw, &k.mul(&x, &x)?)?)? else { return Ok(None) };
    let Some(b) = as_upoly(k, &k.mul(&pr.qw, &k.mul(&x, &x)?)?)? else { return Ok(None) };
    if a.degree() != Some(2) || a.coeff(2) != RatFunc::one() || b.degree().unwrap_or(0) > 1 {
        return Ok(None);
    }
    let params = exact(k, &pr, vec![("q", k.neg(&b.coeff(0))), ("alpha", b.coeff(1)), ("gamma", a.coeff(1)), ("delta", a.coeff(0))]);
    Ok(Some(finish(
        pr,
        Form::Of(Class::DoublyConfluentHeun),
        "DLMF 31.12.2",
        "w'' + (δ/x² + γ/x + 1) w' + (α x − q)/x² w = 0",
        params,
        vec!["the template was rebuilt from the parameters and equals the transformed equation exactly".into()],
    )))
}

/// DLMF 31.12.3 read from the scaled equation.
fn biconfluent_heun_template(pr: Prepared) -> Result<Option<Canonical>> {
    let k = &pr.k;
    let x = k.var(0);
    let Some(a) = as_upoly(k, &k.mul(&pr.pw, &x)?)? else { return Ok(None) };
    let Some(b) = as_upoly(k, &k.mul(&pr.qw, &x)?)? else { return Ok(None) };
    if a.degree() != Some(2) || a.coeff(2) != rat(-1, 1) || b.degree().unwrap_or(0) > 1 {
        return Ok(None);
    }
    let params = exact(k, &pr, vec![("q", k.neg(&b.coeff(0))), ("alpha", b.coeff(1)), ("gamma", k.neg(&a.coeff(0))), ("delta", k.neg(&a.coeff(1)))]);
    Ok(Some(finish(
        pr,
        Form::Of(Class::BiconfluentHeun),
        "DLMF 31.12.3",
        "w'' − (γ/x + δ + x) w' + (α x − q)/x w = 0",
        params,
        vec!["the template was rebuilt from the parameters and equals the transformed equation exactly".into()],
    )))
}

/// DLMF 31.12.4 read from the scaled equation.
fn triconfluent_heun_template(pr: Prepared) -> Result<Option<Canonical>> {
    let k = &pr.k;
    let Some(a) = as_upoly(k, &pr.pw)? else { return Ok(None) };
    let Some(b) = as_upoly(k, &pr.qw)? else { return Ok(None) };
    if a.degree() != Some(2) || a.coeff(2) != RatFunc::one() || !a.coeff(0).is_zero() || b.degree().unwrap_or(0) > 1 {
        return Ok(None);
    }
    let params = exact(k, &pr, vec![("q", k.neg(&b.coeff(0))), ("alpha", b.coeff(1)), ("gamma", a.coeff(1))]);
    Ok(Some(finish(
        pr,
        Form::Of(Class::TriconfluentHeun),
        "DLMF 31.12.4",
        "w'' + (γ + x) x w' + (α x − q) w = 0",
        params,
        vec!["the template was rebuilt from the parameters and equals the transformed equation exactly".into()],
    )))
}

/// P·(z − z₀)^(1/2): the prefactor of the normal form with the power of the
/// factor vanishing at z₀ raised by one half (x = (z − z₀)/λ up to a constant).
fn bessel_prefactor(k: &Field, pf: &crate::ode::Prefactor, z0: &RatFunc) -> Result<String> {
    let mut parts = Vec::new();
    let mut found = false;
    for (f, e) in &pf.powers {
        let mut e = e.clone();
        if crate::ode::linear_root(k, f)?.as_ref() == Some(z0) {
            e = k.add(&e, &rat(1, 2))?;
            found = true;
        }
        if !e.is_zero() {
            parts.push(format!(
                "{}^{}",
                wrap(crate::algebra::print::poly_text(f, &crate::algebra::Int::ONE, k.names(), Style::Text)),
                wrap(rt(k, &e))
            ));
        }
    }
    if !found {
        let f = k.sub(&k.var(0), z0)?;
        parts.push(format!("{}^(1/2)", wrap(rt(k, &f))));
    }
    if !pf.exponential.is_zero() {
        parts.push(format!("exp({})", rt(k, &pf.exponential)));
    }
    let mut t = if parts.is_empty() { "1".to_string() } else { parts.join("*") };
    if !pf.unevaluated.is_empty() {
        t.push_str("*(unevaluated part of the prefactor)");
    }
    Ok(format!("{t}  (up to a constant)"))
}

/// The image of z under x = (z − a)/λ.
fn kx_map(k: &Field, z: &RatFunc, a: &RatFunc, lam: &RatFunc) -> Result<RatFunc> {
    k.div(&k.sub(z, a)?, lam)
}

/// The polynomial part of `r` in x (its quotient by the denominator).
fn as_upoly_part(k: &Field, r: &RatFunc) -> Result<Option<UPoly>> {
    let num = UPoly::from_poly(r.num());
    let mut den = UPoly::constant(RatFunc::rat(&Rat::int(r.scale().clone())));
    for (f, m) in r.den_factors() {
        den = den.mul(k, &UPoly::from_poly(&f.poly().pow(*m)))?;
    }
    Ok(num.divrem(k, &den)?.map(|(q, _)| q))
}

fn finish(pr: Prepared, form: Form, source: &str, equation: &str, parameters: Vec<(String, Param)>, checks: Vec<String>) -> Canonical {
    let Prepared { k, x, map_text, prefactor, choices, .. } = pr;
    let _ = (&k, &x);
    Canonical { form, source: source.into(), equation: equation.into(), map: map_text, prefactor, parameters, choices, checks }
}

/// Canonical forms of the normal form for the confluent hypergeometric family:
/// Whittaker (DLMF 13.14.1) W'' + (−1/4 + κ/x + (1/4 − μ²)/x²) W = 0 after x = (z − z₀)/λ with
/// λ² = −1/(4 q∞), and Bessel (DLMF 10.2.1) when κ = 0.
pub fn whittaker_form(
    k0: &Field,
    var: &str,
    qn: &RatFunc,
    points: &[SingularPoint],
    pf: &crate::ode::Prefactor,
    prefactor: &str,
) -> Result<Option<Canonical>> {
    let (finite, all_linear) = finite_points(points);
    if !all_linear || finite.len() != 1 {
        return Ok(None);
    }
    let z0 = at_of(finite[0]);
    // Q(z0 + t) = Σ a_j t^j for j ≥ −2 and its limit at ∞.
    let ctx = Ctx { k0, var: var.to_string(), choices: &Choices::default() };
    let (k, _) = ctx.new_field(z0.is_zero())?;
    let g = k.add(&z0, &k.var(0))?;
    let qt = crate::ode::transform_q(&k, qn, &g)?;
    let Some(poly) = as_upoly_part(&k, &qt)? else { return Ok(None) };
    if poly.degree() != Some(0) {
        return Ok(None);
    }
    let qinf = poly.coeff(0);
    // Q̃ = q∞ + a₋₁/t + a₋₂/t² exactly?
    let a1 = residue(&k, &qt, &RatFunc::zero())?;
    let t = k.var(0);
    let a2 = {
        let idx = qt.den_factors().iter().position(|(f, _)| f.poly() == &crate::algebra::Poly::var(0));
        match idx {
            Some(i) => laurent_at(&k, &qt, i, 0)?
                .map(|(_, c)| if c.len() >= 2 { c[c.len() - 2].clone() } else { RatFunc::zero() })
                .unwrap_or_else(RatFunc::zero),
            None => RatFunc::zero(),
        }
    };
    let rebuilt = k.add(&k.add(&qinf, &k.div(&a1, &t)?)?, &k.div(&a2, &k.mul(&t, &t)?)?)?;
    if rebuilt != qt {
        return Ok(None);
    }
    let mu2 = k.sub(&rat(1, 4), &a2)?;
    let mu = match k.sqrt_exact(&mu2)? {
        Some(r) => Param::Exact(r),
        None => Param::Radical(RatFunc::one(), mu2.clone()),
    };
    let shift_text = if z0.is_zero() { var.to_string() } else { format!("{var} - {}", wrap(rt(k0, &z0))) };
    let x = crate::ode::fresh_name("x", k0.names());
    let scaled = |l: &RatFunc| if *l == RatFunc::one() { x.clone() } else { format!("{}*{x}", wrap(rt(k0, l))) };
    if a1.is_zero() {
        // Bessel: Q̃(x) = 1 + (1/4 − ν²)/x² after λ² = 1/q∞.
        let lam2 = k.inv(&qinf)?;
        let (map, lam_note) = match k.sqrt_exact(&lam2)? {
            Some(l) => (format!("{shift_text} = {}", scaled(&l)), None),
            None => (format!("{shift_text} = sqrt({})*{x}", rt(k0, &lam2)), Some("λ = √(1/q∞) is taken on the principal branch".to_string())),
        };
        let mut choices = vec!["the normal form is matched (the unknown is prefactor · ψ; ψ = x^(1/2) w up to a constant)".to_string()];
        choices.extend(lam_note);
        return Ok(Some(Canonical {
            form: Form::Bessel,
            source: "DLMF 10.2.1".into(),
            equation: "x² w'' + x w' + (x² − ν²) w = 0".into(),
            map,
            prefactor: bessel_prefactor(k0, pf, &z0)?,
            parameters: vec![("nu".into(), mu)],
            choices,
            checks: vec!["Q in the new variable equals 1 + (1/4 − ν²)/x² exactly".into()],
        }));
    }
    // Whittaker: λ² = −1/(4 q∞); κ = λ a₋₁.
    let lam2 = k.neg(&k.inv(&k.mul(&rat(4, 1), &qinf)?)?);
    let lam = k.sqrt_exact(&lam2)?;
    let (map, kappa) = match &lam {
        Some(l) => (format!("{shift_text} = {}", scaled(l)), Param::Exact(k.mul(l, &a1)?)),
        None => (format!("{shift_text} = sqrt({})*{x}", rt(k0, &lam2)), Param::Radical(a1.clone(), lam2.clone())),
    };
    Ok(Some(Canonical {
        form: Form::Whittaker,
        source: "DLMF 13.14.1".into(),
        equation: "W'' + (−1/4 + κ/x + (1/4 − μ²)/x²) W = 0".into(),
        map,
        prefactor: format!("{prefactor}  (the normal form ψ is W up to a constant)"),
        parameters: vec![("kappa".into(), kappa), ("mu".into(), mu)],
        choices: vec!["the normal form is matched; λ = √(−1/(4 q∞)) on the principal branch".into()],
        checks: vec!["Q in the new variable equals −1/4 + κ/x + (1/4 − μ²)/x² exactly (with λ² substituted)".into()],
    }))
}

/// Airy (DLMF 9.2.1, w'' = x w) and parabolic cylinder (DLMF 12.2.2,
/// w'' − (x²/4 + a) w = 0) forms of a polynomial Q of degree 1 or 2.
pub fn polynomial_q_form(k0: &Field, var: &str, qn: &RatFunc, prefactor: &str) -> Result<Option<Canonical>> {
    let x = crate::ode::fresh_name("x", k0.names());
    let Some(u) = as_upoly(k0, qn)? else { return Ok(None) };
    match u.degree() {
        Some(1) => {
            // Q = A z + B: z₀ = −B/A, λ³ A = −1.
            let (b, a) = (u.coeff(0), u.coeff(1));
            let z0 = k0.neg(&k0.div(&b, &a)?);
            let l3 = k0.neg(&k0.inv(&a)?);
            let lam = if l3 == RatFunc::one() { "1".to_string() } else { format!("({})^(1/3)", rt(k0, &l3)) };
            let shift = if z0.is_zero() { var.to_string() } else { format!("{var} - {}", wrap(rt(k0, &z0))) };
            Ok(Some(Canonical {
                form: Form::Of(Class::Airy),
                source: "DLMF 9.2.1".into(),
                equation: "w'' = x w".into(),
                map: if lam == "1" && z0.is_zero() {
                    "identity (already in standard position)".to_string()
                } else if lam == "1" {
                    format!("{shift} = {x}")
                } else {
                    format!("{shift} = {lam}*{x}")
                },
                prefactor: format!("{prefactor}  (the normal form ψ is w up to a constant)"),
                parameters: Vec::new(),
                choices: vec!["the real cube root is taken for λ".into()],
                checks: vec!["Q is linear: λ² Q(z₀ + λx) = −x with λ³ = −1/A".into()],
            }))
        }
        Some(2) => {
            // Q = A z² + B z + C: z₀ = −B/(2A), λ⁴ A = −1/4, a = −λ² Q(z₀).
            let (c, b, a) = (u.coeff(0), u.coeff(1), u.coeff(2));
            let z0 = k0.neg(&k0.div(&b, &k0.mul(&rat(2, 1), &a)?)?);
            let l4 = k0.neg(&k0.inv(&k0.mul(&rat(4, 1), &a)?)?);
            let qz0 = k0.sub(&c, &k0.div(&k0.mul(&b, &b)?, &k0.mul(&rat(4, 1), &a)?)?)?;
            let (lam_text, aparam) = match k0.sqrt_exact(&l4)? {
                Some(l2) => (format!("sqrt({})", rt(k0, &l2)), Param::Exact(k0.neg(&k0.mul(&l2, &qz0)?))),
                None => (format!("({})^(1/4)", rt(k0, &l4)), Param::Radical(k0.neg(&qz0), l4.clone())),
            };
            let shift = if z0.is_zero() { var.to_string() } else { format!("{var} - {}", wrap(rt(k0, &z0))) };
            Ok(Some(Canonical {
                form: Form::Of(Class::ParabolicCylinder),
                source: "DLMF 12.2.2".into(),
                equation: "w'' − (x²/4 + a) w = 0".into(),
                map: format!("{shift} = {lam_text}*{x}"),
                prefactor: format!("{prefactor}  (the normal form ψ is w up to a constant)"),
                parameters: vec![("a".into(), aparam)],
                choices: vec!["λ² is the positive (principal) square root of −1/(4A)".into()],
                checks: vec!["Q is quadratic: λ² Q(z₀ + λx) = −x²/4 − a".into()],
            }))
        }
        _ => Ok(None),
    }
}
