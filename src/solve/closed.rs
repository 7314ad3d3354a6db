//! Exact spectra in closed form: the quantisation condition of a boundary
//! problem whose equation is hypergeometric or confluent hypergeometric
//! (after, where needed, the fold x = z² of an even equation or the Möbius
//! map that sends a finite irregular point to infinity), solved exactly for
//! the spectral parameter.
//!
//! The condition comes from the connection coefficients. With three regular
//! singular points and the exponents ρ_A, ρ_B chosen at the two ends, the
//! solution is ∏(z − zᵢ)^ρᵢ·F(a, b; c; x) with a = ρ_A + ρ_B + ρ_C − 1 in
//! the exponents of the normal form (at ∞ those of the normal form in t = 1/z,
//! as `analysis` lists them; an ordinary ∞ contributes 0), ρ_C either
//! exponent of the third point; the coefficient of the unwanted branch at
//! the far end, Γ(c)Γ(a + b − c)/(Γ(a)Γ(b)) (DLMF 15.10.21, from memory),
//! vanishes where a = −n. With one regular point and infinity of rank 1,
//! ψ ~ e^(μz) z^σ (σ = −B/(2μ) for Q → A + B/z, μ² = −A), the solution is
//! z^ρ e^(μz) M(a, b, −2μz) and the coefficient 1/Γ(a) of the other branch
//! at infinity (DLMF 13.7.2 with 13.2.41, from memory) vanishes where
//! a = ρ_A − σ = −n. Both say that the solution is the chosen local
//! behaviours times a polynomial of degree n.
//!
//! The condition is rational in the spectral parameter ω, or in one square
//! root κ = √R(ω) of an exponent (the spectral radical; branch Re κ > 0),
//! and may hold one square root of the parameters (a "parameter radical",
//! whose branch each family names). It is solved exactly when it is linear
//! or quadratic in the unknown; everything is exact (`algebra`), floats
//! decide only which exponent an end condition picks at the given values
//! and which members satisfy the branch.

use crate::algebra::{print, Field, GRat, Rat, RatFunc};
use crate::analysis::{analyse_equation, Analysis, Exponent, Kind, Place, SingularPoint};
use crate::error::Result;
use crate::solve::boundary::{Condition, Location};
use num_complex::Complex64;

/// One end of the domain, as the closed-form derivation needs it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EndPick {
    /// Where the end lies (left end first; a left `Infinity` is −∞).
    pub location: Location,
    /// The condition imposed there.
    pub condition: Condition,
}

/// An exact value a + b·√r (b = 0 when rational), in the parameters and n.
#[derive(Clone, Debug)]
pub struct Surd {
    /// The rational part.
    pub a: RatFunc,
    /// The coefficient of the root.
    pub b: RatFunc,
    /// The radicand (principal square root).
    pub r: RatFunc,
}

/// Which n a family holds for.
#[derive(Clone, Debug)]
pub struct NRange {
    /// The last n at the given values (None: unbounded).
    pub last: Option<u32>,
    /// The exact bound n < bound when the branch ends the family (text, LaTeX).
    pub bound: Option<(String, String)>,
    /// The branch condition in words.
    pub branch: String,
}

/// One family of eigenvalues.
#[derive(Clone, Debug)]
pub struct Family {
    /// Which exponent choices (and root) give it, in words.
    pub label: String,
    /// The spectral parameter as an exact expression in n and the parameters.
    pub value: Surd,
    /// The spectral radical κ_n, when the condition was solved for it (κ² = R(ω), Re κ > 0 required).
    pub radical: Option<Surd>,
    /// Its range of n.
    pub range: NRange,
    /// The value and κ_n before their reduction to a + b√r, for numbers.
    pub unreduced: Option<Unreduced>,
}

/// A family's value and κ_n as rational functions of n, the parameters and
/// the symbol s of the parameters' square root (s² = `radicand`, principal
/// root), before the root was cleared from their denominators. Reducing to
/// a + b√r divides by the norm of the denominator, which vanishes where the
/// root is rational at an integer n (the Kratzer levels at 8Da² + 1 a perfect
/// square): the reduced form is 0/0 there and loses digits near there, this
/// one does not.
#[derive(Clone, Debug)]
pub struct Unreduced {
    /// The spectral parameter.
    pub value: RatFunc,
    /// κ_n, when the condition was solved for it.
    pub kappa: Option<RatFunc>,
    /// s².
    pub radicand: RatFunc,
}

impl Unreduced {
    /// The value of `x` (one of this form's functions) at `vals` (one per
    /// variable of the closed form's field; n and s set here).
    fn eval(&self, x: &RatFunc, vals: &[Complex64], nv: usize, sv: usize, n: u32) -> Option<Complex64> {
        let mut v = vals.to_vec();
        v[nv] = Complex64::new(n as f64, 0.0);
        v[sv] = crate::solve::eval_at(&self.radicand, &v)?.sqrt();
        crate::solve::eval_at(x, &v).filter(|z| z.is_finite())
    }
}

/// The closed form of a spectrum.
#[derive(Clone, Debug)]
pub struct ClosedForm {
    /// The connection formula used and the maps applied, in words.
    pub route: String,
    /// Variable names of the expressions (the field's, then n and two internal symbols).
    pub names: Vec<String>,
    /// Index of n among `names`.
    pub n_index: usize,
    /// The families.
    pub families: Vec<Family>,
    /// The ends of the boundary problem it was derived for.
    pub ends: [EndPick; 2],
}

/// The outcome of the derivation.
#[derive(Clone, Debug)]
pub enum Outcome {
    /// A closed form.
    Closed(ClosedForm),
    /// None here, with the reason (the class when it is Heun's).
    NotClosed(String),
}

/// The most overtones scanned for a family's range at the given values.
pub const RANGE_SCAN: u32 = 200;

/// Derives the closed-form spectrum of ψ'' + Q ψ = 0 (`q`, exact in all
/// parameters) between `ends`, with `values` (every parameter but the
/// spectral one, index `freq`) deciding the exponent picks and branches.
pub fn derive(k: &Field, q: &RatFunc, freq: usize, values: &[GRat], ends: &[EndPick; 2]) -> Result<Outcome> {
    let mut names = k.names().to_vec();
    let fresh = |base: &str, names: &[String]| {
        let mut s = base.to_string();
        while names.contains(&s) {
            s.push('_');
        }
        s
    };
    let n_name = fresh("n", &names);
    names.push(n_name);
    let kappa_name = fresh("kappa_", &names);
    names.push(kappa_name);
    let s_name = fresh("root_", &names);
    names.push(s_name);
    let kappa2_name = fresh("kappa2_", &names);
    names.push(kappa2_name);
    let kx = Field::new(names.clone(), k.limits().clone())?;
    let base = k.names().len();
    let cx = Ctx { k: &kx, freq, nv: base, kv: base + 1, sv: base + 2, k2v: base + 3, vals: numeric_values(values, base + 4) };
    // The domain's positions and an interior point, carried through the maps.
    let pos: Vec<Option<f64>> = ends
        .iter()
        .map(|e| match e.location {
            Location::At(x) => Some(x),
            Location::Infinity => None,
        })
        .collect();
    let interior = match (pos[0], pos[1]) {
        (Some(a), Some(b)) => (a + b) / 2.0,
        (Some(a), None) => a + 1.0,
        (None, Some(b)) => b - 1.0,
        (None, None) => 0.0,
    };
    let conds = [ends[0].condition, ends[1].condition];
    let mut reasons = Vec::new();
    // The analysis of the equation as given, done once: the first attempt,
    // the search for an irregular point to move and the final reason use it.
    let plain = analyse_equation(k, &RatFunc::zero(), q)?;
    for (fold, mobius) in [(false, false), (true, false), (false, true), (true, true)] {
        let Some(setup) = transformed(&cx, q, &plain, [pos[0], pos[1]], interior, fold, mobius)? else { continue };
        let owned;
        let an = if fold || mobius {
            owned = analyse_equation(cx.k, &RatFunc::zero(), &setup.q)?;
            &owned
        } else {
            &plain
        };
        let tried =
            attempt(&cx, &setup, an, conds).unwrap_or_else(|e| Err(format!("{}: the derivation stopped: {}", setup.words_or_plain(), e.message)));
        match tried {
            Ok((families, mut route)) if !families.is_empty() => {
                route.push_str(&setup.words);
                return Ok(Outcome::Closed(ClosedForm { route, names, n_index: base, families, ends: *ends }));
            }
            Ok(_) => reasons.push(format!("{}: no family satisfies the branch at these values", setup.words_or_plain())),
            Err(why) => reasons.push(why),
        }
    }
    let an = plain;
    let heun = an.class.is_heun();
    let first = reasons.first().cloned().unwrap_or_else(|| "no route applies".into());
    Ok(Outcome::NotClosed(if heun {
        format!("{} class ({}): the connection problem between the ends is Heun's, with no Gamma-function closed form; {first}", an.class, an.reason)
    } else {
        format!("{} ({}): {first}", an.class, an.reason)
    }))
}

struct Ctx<'a> {
    k: &'a Field,
    freq: usize,
    nv: usize,
    kv: usize,
    sv: usize,
    /// A second spectral square root κ′ (a potential with different limits
    /// at the two ends: Hulthén, Eckart, Rosen–Morse), eliminated from the
    /// condition by squaring.
    k2v: usize,
    vals: Vec<Complex64>,
}

fn numeric_values(values: &[GRat], len: usize) -> Vec<Complex64> {
    let mut v: Vec<Complex64> = values
        .iter()
        .map(|x| {
            let (re, im) = x.to_f64();
            Complex64::new(re, im)
        })
        .collect();
    v.resize(len, Complex64::new(0.0, 0.0));
    v
}

/// The equation after the chosen maps, with the ends' images.
struct Setup {
    q: RatFunc,
    ends: [Option<Complex64>; 2],
    interior: f64,
    words: String,
}

impl Setup {
    fn words_or_plain(&self) -> String {
        if self.words.is_empty() {
            "in the variable as given".into()
        } else {
            self.words.trim_start_matches("; ").to_string()
        }
    }
}

fn rat(n: i64, d: i64) -> RatFunc {
    RatFunc::rat(&Rat::new(n.into(), d.into()).expect("nonzero"))
}

/// Q after the fold x = z² (Q even, the domain on one side of 0) and/or the
/// Möbius map w = 1/(z − z₁) of the one finite irregular point z₁.
fn transformed(cx: &Ctx, q: &RatFunc, plain: &Analysis, pos: [Option<f64>; 2], interior: f64, fold: bool, mobius: bool) -> Result<Option<Setup>> {
    let k = cx.k;
    let z = k.var(0);
    let mut q = q.clone();
    let mut ends: [Option<Complex64>; 2] = [pos[0].map(|x| Complex64::new(x, 0.0)), pos[1].map(|x| Complex64::new(x, 0.0))];
    let mut inner = interior;
    let mut words = String::new();
    if fold {
        let minus = k.compose(&q, 0, &k.neg(&z))?;
        if minus != q || pos.iter().flatten().any(|x| *x < -1e-12) || (pos[0].is_none() && pos[1].is_none()) {
            return Ok(None);
        }
        // Q(z) = F(z²); φ(x) = ψ·(dz/dx)^(−1/2) solves φ'' + (F(x)/(4x) + 3/(16x²)) φ = 0.
        let halve = |p: &crate::algebra::Poly| {
            crate::algebra::Poly::from_terms(p.terms().iter().map(|(m, c)| (m.with_exp(0, m.exp(0) / 2), c.clone())).collect())
        };
        if q.num().terms().iter().any(|(m, _)| m.exp(0) % 2 == 1) || q.den_expanded().terms().iter().any(|(m, _)| m.exp(0) % 2 == 1) {
            return Ok(None);
        }
        let num = RatFunc::from_poly(halve(q.num()));
        let den = k.mul(&RatFunc::from_poly(halve(&q.den_expanded())), &RatFunc::rat(&Rat::int(q.scale().clone())))?;
        let f = k.div(&num, &den)?;
        let four_x = k.mul(&rat(4, 1), &z)?;
        q = k.add(&k.div(&f, &four_x)?, &k.div(&rat(3, 16), &k.pow(&z, 2)?)?)?;
        for e in ends.iter_mut().flatten() {
            *e = *e * *e;
        }
        inner *= inner;
        words.push_str("; folded by x = z² (the equation is even in z)");
    }
    if mobius {
        let folded;
        let an = if fold {
            folded = analyse_equation(k, &RatFunc::zero(), &q)?;
            &folded
        } else {
            plain
        };
        let irregular: Vec<&SingularPoint> = an.points.iter().filter(|p| p.kind == Kind::Irregular).collect();
        let [p] = irregular.as_slice() else { return Ok(None) };
        let Place::Point { at, .. } = &p.place else { return Ok(None) };
        let Some(z1) = crate::solve::eval_at(at, &cx.vals) else { return Ok(None) };
        // z = z₁ + 1/w: Q̃(w) = Q(z₁ + 1/w)/w⁴ (a Möbius map has no Schwarzian).
        let image = k.add(at, &k.inv(&z)?)?;
        q = k.div(&k.compose(&q, 0, &image)?, &k.pow(&z, 4)?)?;
        for e in ends.iter_mut() {
            *e = match *e {
                Some(x) if (x - z1).norm() < 1e-9 * (1.0 + z1.norm()) => None,
                Some(x) => Some(1.0 / (x - z1)),
                None => Some(Complex64::new(0.0, 0.0)),
            };
        }
        inner = 1.0 / (inner - z1.re);
        let at_text = print::ratfunc_text(at, k.names(), print::Style::Text);
        words.push_str(&format!("; the irregular point {at_text} sent to infinity by w = 1/(z − ({at_text}))"));
    }
    Ok(Some(Setup { q, ends, interior: inner, words }))
}

/// An exponent choice: a value in the extended field, the radicand it
/// introduced (parameter radical or spectral radical), and its words.
#[derive(Clone)]
struct Pick {
    value: RatFunc,
    words: String,
}

/// The radicals met so far: at most one of the parameters (symbol `sv`)
/// and two holding ω (symbols `kv` and `k2v`, branches Re κ > 0, Re κ′ > 0).
#[derive(Default)]
struct Radicals {
    param: Option<RatFunc>,
    spectral: Option<RatFunc>,
    spectral2: Option<RatFunc>,
}

fn attempt(cx: &Ctx, setup: &Setup, an: &Analysis, conds: [Condition; 2]) -> Result<std::result::Result<(Vec<Family>, String), String>> {
    let k = cx.k;
    let singular: Vec<usize> = (0..an.points.len()).filter(|&i| an.points[i].kind != Kind::Ordinary).collect();
    // Match the ends to singular points.
    let mut idx = [usize::MAX; 2];
    for (j, e) in setup.ends.iter().enumerate() {
        for &i in &singular {
            let hit = match (&an.points[i].place, e) {
                (Place::Infinity, None) => true,
                (Place::Point { at, .. }, Some(x)) => crate::solve::eval_at(at, &cx.vals).is_some_and(|v| (v - x).norm() < 1e-8 * (1.0 + x.norm())),
                _ => false,
            };
            if hit {
                idx[j] = i;
            }
        }
        if idx[j] == usize::MAX {
            return Ok(Err("an end is not a singular point with linear factor of the equation".into()));
        }
    }
    if idx[0] == idx[1] {
        return Ok(Err("both ends are the same singular point".into()));
    }
    let roots = an.points.iter().any(|p| matches!(p.place, Place::Roots(_)) && p.kind != Kind::Ordinary);
    let all_regular = singular.iter().all(|&i| an.points[i].kind == Kind::Regular);
    let mut rad = Radicals::default();
    // Direction in which the domain reaches an end at infinity.
    let dir = if setup.interior < 0.0 { -1.0 } else { 1.0 };
    let n = k.var(cx.nv);
    if all_regular && !roots && singular.len() == 3 {
        let third = *singular.iter().find(|i| !idx.contains(i)).expect("three points, two ends");
        let mut fixed = Vec::new();
        for j in 0..2 {
            match pick_regular(cx, &an.points[idx[j]], conds[j], &mut rad)? {
                Ok(p) => fixed.push(p),
                Err(w) => return Ok(Err(w)),
            }
        }
        let others = match both_regular(cx, &an.points[third], &mut rad)? {
            Ok(v) => v,
            Err(w) => return Ok(Err(w)),
        };
        let mut families = Vec::new();
        for o in others {
            // a = ρ_A + ρ_B + ρ_C − 1 = −n.
            let mut c = k.add(&fixed[0].value, &fixed[1].value)?;
            c = k.add(&c, &o.value)?;
            c = k.add(&c, &k.sub(&n, &RatFunc::one())?)?;
            let label = format!("{}; {}; {}", fixed[0].words, fixed[1].words, o.words);
            match solve(cx, &c, &rad, &label)? {
                Ok(mut f) => families.append(&mut f),
                Err(w) => return Ok(Err(w)),
            }
        }
        let route = "hypergeometric (three regular singular points): ψ = ∏(z − zᵢ)^ρᵢ F(a, b; c; x) with a = ρ_A + ρ_B + ρ_C − 1; the connection coefficient Γ(c)Γ(a + b − c)/(Γ(a)Γ(b)) of the unwanted branch at the far end (DLMF 15.10.21) vanishes at a = −n".to_string();
        return Ok(Ok((families, route)));
    }
    let finite_regular: Vec<usize> =
        singular.iter().copied().filter(|&i| an.points[i].kind == Kind::Regular && !matches!(an.points[i].place, Place::Infinity)).collect();
    let inf = an.points.iter().position(|p| matches!(p.place, Place::Infinity));
    if !roots
        && singular.len() == 2
        && finite_regular.len() == 1
        && inf.filter(|&i| an.points[i].kind == Kind::Irregular && an.points[i].rank == Rat::int(1.into()) && idx.contains(&i)).is_some()
    {
        let reg = finite_regular[0];
        let j = if idx[0] == reg { 0 } else { 1 };
        let jinf = 1 - j;
        let p = match pick_regular(cx, &an.points[reg], conds[j], &mut rad)? {
            Ok(p) => p,
            Err(w) => return Ok(Err(w)),
        };
        let sigma = match formal_power(cx, &setup.q, conds[jinf], dir, &mut rad)? {
            Ok(s) => s,
            Err(w) => return Ok(Err(w)),
        };
        // a = ρ_A − σ = −n.
        let c = k.add(&k.sub(&p.value, &sigma.value)?, &n)?;
        let label = format!("{}; {}", p.words, sigma.words);
        let families = match solve(cx, &c, &rad, &label)? {
            Ok(f) => f,
            Err(w) => return Ok(Err(w)),
        };
        let route = "confluent hypergeometric (one regular point, rank 1 at ∞): ψ = z^ρ e^(μz) M(a, b, −2μz) with a = ρ − σ, ψ ~ e^(μz) z^σ at ∞; the coefficient 1/Γ(a) of the other branch at ∞ (DLMF 13.7.2, 13.2.41) vanishes at a = −n".to_string();
        return Ok(Ok((families, route)));
    }
    // The class is said once, by the caller; a transformed equation's own
    // class is said here, beside its map.
    if setup.words.is_empty() {
        Ok(Err("not of hypergeometric or confluent hypergeometric type between these ends".into()))
    } else {
        Ok(Err(format!("{} ({}){}: not of hypergeometric or confluent hypergeometric type between these ends", an.class, an.reason, setup.words)))
    }
}

/// An exponent's pieces as elements of the base field (points with linear factors and ∞).
fn pieces(e: &Exponent) -> Option<(RatFunc, i8, Option<RatFunc>, RatFunc)> {
    let c = crate::analysis::ext_base(&e.center)?;
    let root = match &e.root {
        Some(r) => Some(crate::analysis::ext_base(r)?),
        None => None,
    };
    Some((c, e.sign, root, crate::analysis::ext_base(&e.radicand)?))
}

fn place_text(cx: &Ctx, p: &SingularPoint) -> String {
    match &p.place {
        Place::Infinity => "∞".into(),
        Place::Point { at, .. } => print::ratfunc_text(at, cx.k.names(), print::Style::Text),
        Place::Roots(f) => print::poly_text(f, &crate::algebra::Int::from(1), cx.k.names(), print::Style::Text),
    }
}

/// The symbol standing for √R: the parameter radical or the spectral one
/// (times an exact factor when R is a square multiple of the radicand met first).
fn radical_symbol(cx: &Ctx, r: &RatFunc, rad: &mut Radicals) -> Result<std::result::Result<(RatFunc, bool), String>> {
    let k = cx.k;
    let spectral = r.uses_var(cx.freq);
    let (slot, var) = if spectral { (&mut rad.spectral, cx.kv) } else { (&mut rad.param, cx.sv) };
    match slot {
        None => {
            *slot = Some(r.clone());
            Ok(Ok((k.var(var), spectral)))
        }
        Some(r0) => match k.sqrt_exact(&k.div(r, r0)?)? {
            Some(f) => Ok(Ok((k.mul(&f, &k.var(var))?, spectral))),
            None if spectral => match &rad.spectral2 {
                None => {
                    rad.spectral2 = Some(r.clone());
                    Ok(Ok((k.var(cx.k2v), spectral)))
                }
                Some(r1) => match k.sqrt_exact(&k.div(r, r1)?)? {
                    Some(f) => Ok(Ok((k.mul(&f, &k.var(cx.k2v))?, spectral))),
                    None => Ok(Err("three different square roots of the spectral parameter in the exponents".into())),
                },
            },
            None => Ok(Err("two different square roots of the parameters in the exponents".into())),
        },
    }
}

/// Both exponents of a regular point, as values in the extended field.
fn both_regular(cx: &Ctx, p: &SingularPoint, rad: &mut Radicals) -> Result<std::result::Result<Vec<Pick>, String>> {
    let k = cx.k;
    let at = place_text(cx, p);
    let mut out = Vec::new();
    for e in &p.exponents {
        let Some((c, sign, root, r)) = pieces(e) else { return Ok(Err("exponents outside the parameter field".into())) };
        let value = match root {
            _ if sign == 0 => c.clone(),
            Some(rt) => k.add(&c, &k.mul(&rat(sign as i64, 2), &rt)?)?,
            None => match radical_symbol(cx, &r, rad)? {
                Ok((s, _)) => k.add(&c, &k.mul(&rat(sign as i64, 2), &s)?)?,
                Err(w) => return Ok(Err(w)),
            },
        };
        let text = if e.root.is_some() || sign == 0 {
            print::ratfunc_text(&value, cx.k.names(), print::Style::Text)
        } else {
            let rt = print::ratfunc_text(&r, cx.k.names(), print::Style::Text);
            let ct = print::ratfunc_text(&c, cx.k.names(), print::Style::Text);
            format!("{ct} {} 1/2*sqrt({rt})", if sign > 0 { "+" } else { "-" })
        };
        out.push(Pick { value, words: format!("exponent {text} at {at}") });
    }
    Ok(Ok(out))
}

fn sign_of(x: f64) -> f64 {
    if x < 0.0 {
        -1.0
    } else {
        1.0
    }
}

/// The exponent a condition picks at a regular end.
fn pick_regular(cx: &Ctx, p: &SingularPoint, cond: Condition, rad: &mut Radicals) -> Result<std::result::Result<Pick, String>> {
    let k = cx.k;
    let mut cands = match both_regular(cx, p, rad)? {
        Ok(c) => c,
        Err(w) => return Ok(Err(w)),
    };
    if cands.len() != 2 {
        return Ok(Err("a regular end without two exponents".into()));
    }
    // Numeric values with ω at two trial points; κ and the parameter radical on their principal branches.
    let at = |v: &RatFunc, w: Complex64| -> Option<Complex64> {
        let mut vals = cx.vals.clone();
        vals[cx.freq] = w;
        if let Some(r) = &rad.param {
            vals[cx.sv] = crate::solve::eval_at(r, &vals)?.sqrt();
        }
        if let Some(r) = &rad.spectral {
            vals[cx.kv] = crate::solve::eval_at(r, &vals)?.sqrt();
        }
        if let Some(r) = &rad.spectral2 {
            vals[cx.k2v] = crate::solve::eval_at(r, &vals)?.sqrt();
        }
        crate::solve::eval_at(v, &vals)
    };
    let trial = [Complex64::new(1.0, -0.1), Complex64::new(2.3, -0.7)];
    let uses_w = |v: &RatFunc| v.uses_var(cx.freq) || v.uses_var(cx.kv) || v.uses_var(cx.k2v);
    let chosen = match cond {
        Condition::IntoHorizon | Condition::OutOfHorizon => {
            let mut signs = Vec::new();
            for c in &cands {
                if c.value.uses_var(cx.kv) || c.value.uses_var(cx.k2v) {
                    return Ok(Err("a horizon exponent under a square root of the spectral parameter".into()));
                }
                let d = k.deriv(&c.value, cx.freq)?;
                let s: Vec<f64> = trial.iter().filter_map(|w| at(&d, *w)).map(|x| x.im).collect();
                if s.len() != 2 || s[0] * s[1] <= 0.0 {
                    return Ok(Err("the ingoing exponent changes with the frequency".into()));
                }
                signs.push(s[0]);
            }
            let want_negative = cond == Condition::IntoHorizon;
            signs.iter().position(|s| (*s < 0.0) == want_negative)
        }
        Condition::Normalisable | Condition::SlowerFallOff => {
            let larger = cond == Condition::Normalisable;
            if cands.iter().any(|c| c.value.uses_var(cx.freq)) {
                return Ok(Err("the exponents at a regular end depend on the spectral parameter rationally".into()));
            }
            // With κ (Re κ > 0) the order is that of its coefficient's real part.
            let re: Vec<f64> = if cands.iter().any(|c| uses_w(&c.value)) {
                let slope = |v: &RatFunc| -> Option<RatFunc> { k.add(&k.deriv(v, cx.kv).ok()?, &k.deriv(v, cx.k2v).ok()?).ok() };
                let d: Vec<Option<Complex64>> = cands.iter().map(|c| slope(&c.value).and_then(|d| at(&d, trial[0]))).collect();
                d.iter().map(|x| x.map_or(f64::NAN, |x| x.re)).collect()
            } else {
                cands.iter().map(|c| at(&c.value, trial[0]).map_or(f64::NAN, |x| x.re)).collect()
            };
            if re.iter().any(|x| !x.is_finite()) || (re[0] - re[1]).abs() < 1e-12 {
                return Ok(Err("the two exponents at a regular end have equal real parts here".into()));
            }
            Some(if (re[0] > re[1]) == larger { 0 } else { 1 })
        }
        Condition::Outgoing | Condition::Decaying => return Ok(Err("an irregular condition at a regular end".into())),
        Condition::Mixed(_) => return Ok(Err(super::boundary::MIXED_NEEDS_BOTH.into())),
    };
    let Some(i) = chosen else { return Ok(Err("no exponent fits the end condition".into())) };
    let mut p = cands.swap_remove(i);
    p.words = format!("{} ({})", p.words, cond.name());
    Ok(Ok(p))
}

/// The power σ of the formal solution e^(μz) z^σ at a rank-1 infinity
/// that the condition picks (σ = −B/(2μ), μ² = −A for Q → A + B/z).
fn formal_power(cx: &Ctx, q: &RatFunc, cond: Condition, dir: f64, rad: &mut Radicals) -> Result<std::result::Result<Pick, String>> {
    let k = cx.k;
    let z = k.var(0);
    // Q(1/t) = A + B t + …
    let qt = k.compose(q, 0, &k.inv(&z)?)?;
    let a = k.compose(&qt, 0, &RatFunc::zero())?;
    let b = k.compose(&k.div(&k.sub(&qt, &a)?, &z)?, 0, &RatFunc::zero())?;
    let minus_a = k.neg(&a);
    let (mu0, spectral) = match k.sqrt_exact(&minus_a)? {
        Some(m) => (m, false),
        None => match radical_symbol(cx, &minus_a, rad)? {
            Ok(s) => s,
            Err(w) => return Ok(Err(w)),
        },
    };
    let mut vals = cx.vals.clone();
    if let Some(r) = &rad.param {
        if let Some(v) = crate::solve::eval_at(r, &vals) {
            vals[cx.sv] = v.sqrt();
        }
    }
    let sign = match cond {
        Condition::Decaying | Condition::Normalisable => {
            // Re(μ·dir) < 0, κ with Re κ > 0.
            let probe = if spectral { k.deriv(&mu0, cx.kv)? } else { mu0.clone() };
            if probe.uses_var(cx.freq) || probe.uses_var(cx.kv) {
                return Ok(Err("the decaying branch at ∞ depends on the frequency".into()));
            }
            let Some(v) = crate::solve::eval_at(&probe, &vals) else { return Ok(Err("μ undefined at these values".into())) };
            if v.re.abs() < 1e-14 {
                return Ok(Err("μ is imaginary here: no decaying branch".into()));
            }
            -sign_of(v.re * dir)
        }
        Condition::Outgoing => {
            // μ = c ω with Im μ of the sign of Re ω (times the direction).
            if spectral || !k.deriv(&k.deriv(&mu0, cx.freq)?, cx.freq)?.is_zero() {
                return Ok(Err("the outgoing branch is not linear in the frequency".into()));
            }
            let d = k.deriv(&mu0, cx.freq)?;
            let Some(v) = crate::solve::eval_at(&d, &vals) else { return Ok(Err("μ undefined at these values".into())) };
            sign_of(v.im * dir)
        }
        _ => return Ok(Err("a regular condition at an irregular end".into())),
    };
    let mu = k.mul(&rat(sign as i64, 1), &mu0)?;
    let sigma = k.neg(&k.div(&b, &k.mul(&rat(2, 1), &mu)?)?);
    let mu_text = if mu.uses_var(cx.kv) || mu.uses_var(cx.sv) {
        let root = format!("sqrt({})", print::ratfunc_text(&minus_a, k.names(), print::Style::Text));
        if sign < 0.0 {
            format!("-{root}")
        } else {
            root
        }
    } else {
        print::ratfunc_text(&mu, k.names(), print::Style::Text)
    };
    let words = format!("e^(μz) with μ = {mu_text} at ∞ ({})", cond.name());
    Ok(Ok(Pick { value: sigma, words }))
}

/// p as a + b·s with s² = r (s the variable `var`).
fn split(k: &Field, p: &crate::algebra::Poly, var: usize, r: &RatFunc) -> Result<(RatFunc, RatFunc)> {
    let mut even = RatFunc::zero();
    let mut odd = RatFunc::zero();
    for (j, c) in p.to_univariate(var).into_iter().enumerate() {
        let term = k.mul(&RatFunc::from_poly(c), &k.pow(r, (j / 2) as i64)?)?;
        if j % 2 == 0 {
            even = k.add(&even, &term)?;
        } else {
            odd = k.add(&odd, &term)?;
        }
    }
    Ok((even, odd))
}

/// x (rational in the symbol `var`, s² = r) as a + b·s.
fn as_surd(k: &Field, x: &RatFunc, var: usize, r: &RatFunc) -> Result<Surd> {
    if !x.uses_var(var) {
        return Ok(Surd { a: x.clone(), b: RatFunc::zero(), r: RatFunc::zero() });
    }
    let den = k.mul(&RatFunc::from_poly(x.den_expanded()), &RatFunc::rat(&Rat::int(x.scale().clone())))?;
    let (ne, no) = split(k, x.num(), var, r)?;
    let (de, dn) = if den.uses_var(var) { split(k, den.num(), var, r)? } else { (den.clone(), RatFunc::zero()) };
    let (de, dn) = if den.uses_var(var) {
        let dd = k.mul(&RatFunc::from_poly(den.den_expanded()), &RatFunc::rat(&Rat::int(den.scale().clone())))?;
        (k.div(&de, &dd)?, k.div(&dn, &dd)?)
    } else {
        (de, dn)
    };
    let norm = k.sub(&k.mul(&de, &de)?, &k.mul(&k.mul(&dn, &dn)?, r)?)?;
    let a = k.div(&k.sub(&k.mul(&ne, &de)?, &k.mul(&k.mul(&no, &dn)?, r)?)?, &norm)?;
    let b = k.div(&k.sub(&k.mul(&no, &de)?, &k.mul(&ne, &dn)?)?, &norm)?;
    Ok(Surd { a, b, r: r.clone() })
}

fn surd_mul(k: &Field, x: &Surd, y: &Surd) -> Result<Surd> {
    if x.b.is_zero() && y.b.is_zero() {
        return Ok(Surd { a: k.mul(&x.a, &y.a)?, b: RatFunc::zero(), r: RatFunc::zero() });
    }
    let r = if x.b.is_zero() { y.r.clone() } else { x.r.clone() };
    let a = k.add(&k.mul(&x.a, &y.a)?, &k.mul(&k.mul(&x.b, &y.b)?, &r)?)?;
    let b = k.add(&k.mul(&x.a, &y.b)?, &k.mul(&x.b, &y.a)?)?;
    Ok(Surd { a, b, r })
}

/// Solves the condition c = 0 for ω (through κ when it holds the spectral radical).
fn solve(cx: &Ctx, c: &RatFunc, rad: &Radicals, label: &str) -> Result<std::result::Result<Vec<Family>, String>> {
    let k = cx.k;
    let mut p = RatFunc::from_poly(c.num().clone());
    let via_kappa = p.uses_var(cx.kv);
    // κ² = R(ω): with ω in the condition too, R must be linear in ω.
    let mut r_lin = None;
    if let Some(r) = &rad.spectral {
        let r1 = k.deriv(r, cx.freq)?;
        let r0 = k.compose(r, cx.freq, &RatFunc::zero())?;
        let r2 = k.deriv(&r1, cx.freq)?;
        if r2.is_zero() && !r1.uses_var(cx.freq) {
            r_lin = Some((r0, r1));
        }
    }
    // κ′ (a second spectral root): the condition linear in it, c₀ + c₁κ′ = 0,
    // gives κ′ = −c₀/c₁, and squaring with κ′² = R′(ω), ω = (κ² − r₀)/r₁,
    // leaves a condition on κ alone: R′c₁² − c₀² = 0. Its roots are kept
    // where κ′ = −c₀/c₁ is on its branch (Re κ′ > 0).
    let mut second: Option<RatFunc> = None;
    if p.uses_var(cx.k2v) {
        let (Some(r2), Some((r0, r1))) = (&rad.spectral2, &r_lin) else {
            return Ok(Err("two square roots of the spectral parameter, the first not linear in it".into()));
        };
        let coeffs = p.num().to_univariate(cx.k2v);
        if coeffs.len() != 2 {
            return Ok(Err("the condition is not linear in the second square root".into()));
        }
        let (c0, c1) = (RatFunc::from_poly(coeffs[0].clone()), RatFunc::from_poly(coeffs[1].clone()));
        let w = k.div(&k.sub(&k.pow(&k.var(cx.kv), 2)?, r0)?, r1)?;
        let c0 = k.compose(&c0, cx.freq, &w)?;
        let c1 = k.compose(&c1, cx.freq, &w)?;
        let r2k = k.compose(r2, cx.freq, &w)?;
        second = Some(k.neg(&k.div(&c0, &c1)?));
        p = RatFunc::from_poly(k.sub(&k.mul(&r2k, &k.mul(&c1, &c1)?)?, &k.mul(&c0, &c0)?)?.num().clone());
    }
    let via_kappa = via_kappa || second.is_some();
    if via_kappa && p.uses_var(cx.freq) {
        let Some((r0, r1)) = &r_lin else { return Ok(Err("the condition holds ω both rationally and under a square root".into())) };
        let w = k.div(&k.sub(&k.pow(&k.var(cx.kv), 2)?, r0)?, r1)?;
        p = RatFunc::from_poly(k.compose(&p, cx.freq, &w)?.num().clone());
    }
    let u = if via_kappa { cx.kv } else { cx.freq };
    if !p.uses_var(u) {
        return Ok(Err("the condition does not hold the spectral parameter".into()));
    }
    let coeffs = p.num().to_univariate(u);
    let has_s = p.uses_var(cx.sv);
    let param_r = rad.param.clone().unwrap_or_else(RatFunc::zero);
    // Each root, with its unreduced form where reducing divided by a norm.
    let mut unreduced_root = None;
    let roots: Vec<(Surd, &str)> = match coeffs.len() {
        2 => {
            let x = k.neg(&k.div(&RatFunc::from_poly(coeffs[0].clone()), &RatFunc::from_poly(coeffs[1].clone()))?);
            if x.uses_var(cx.sv) {
                unreduced_root = Some(x.clone());
            }
            vec![(as_surd(k, &x, cx.sv, &param_r)?, "")]
        }
        3 if !has_s => {
            let [c0, c1, c2] = [0, 1, 2].map(|i| RatFunc::from_poly(coeffs[i].clone()));
            let disc = k.sub(&k.mul(&c1, &c1)?, &k.mul(&rat(4, 1), &k.mul(&c0, &c2)?)?)?;
            let two_c2 = k.mul(&rat(2, 1), &c2)?;
            let mid = k.neg(&k.div(&c1, &two_c2)?);
            match k.sqrt_exact(&disc)? {
                Some(d) => {
                    let h = k.div(&d, &two_c2)?;
                    vec![
                        (Surd { a: k.add(&mid, &h)?, b: RatFunc::zero(), r: RatFunc::zero() }, "root +"),
                        (Surd { a: k.sub(&mid, &h)?, b: RatFunc::zero(), r: RatFunc::zero() }, "root −"),
                    ]
                }
                None => {
                    let h = k.inv(&two_c2)?;
                    vec![(Surd { a: mid.clone(), b: h.clone(), r: disc.clone() }, "root +"), (Surd { a: mid, b: k.neg(&h), r: disc }, "root −")]
                }
            }
        }
        d => return Ok(Err(format!("the condition is of degree {} in the spectral parameter", d.saturating_sub(1)))),
    };
    let mut out = Vec::new();
    for (root, which) in roots {
        let root = tidy(cx, root)?;
        let lab = if which.is_empty() { label.to_string() } else { format!("{label}; {which}") };
        if !via_kappa {
            let unreduced = unreduced_root.as_ref().map(|x| Unreduced { value: x.clone(), kappa: None, radicand: param_r.clone() });
            out.push(Family { label: lab, value: root, radical: None, range: NRange { last: None, bound: None, branch: String::new() }, unreduced });
            continue;
        }
        let r = rad.spectral.as_ref().expect("κ from a spectral radicand");
        let sq = surd_mul(k, &root, &root)?;
        let (value, unreduced) = match &r_lin {
            Some((r0, r1)) => {
                let value = Surd { a: k.div(&k.sub(&sq.a, r0)?, r1)?, b: k.div(&sq.b, r1)?, r: sq.r.clone() };
                let unreduced = match &unreduced_root {
                    Some(x) => Some(Unreduced { value: k.div(&k.sub(&k.mul(x, x)?, r0)?, r1)?, kappa: Some(x.clone()), radicand: param_r.clone() }),
                    None => None,
                };
                (value, unreduced)
            }
            None => {
                // R = r0 + r2 ω²: ω = ±√((κ² − r0)/r2) when κ is rational.
                let r2 = k.compose(&k.deriv(&k.deriv(r, cx.freq)?, cx.freq)?, cx.freq, &RatFunc::zero())?;
                let r0 = k.compose(r, cx.freq, &RatFunc::zero())?;
                let half = k.div(&r2, &rat(2, 1))?;
                if !root.b.is_zero()
                    || half.uses_var(cx.freq)
                    || !k.deriv(r, cx.freq)?.is_zero() && !k.compose(&k.deriv(r, cx.freq)?, cx.freq, &RatFunc::zero())?.is_zero()
                {
                    return Ok(Err("the spectral radicand is not linear, nor even, in ω".into()));
                }
                let rr = k.div(&k.sub(&sq.a, &r0)?, &half)?;
                let plus = tidy(cx, Surd { a: RatFunc::zero(), b: RatFunc::one(), r: rr.clone() })?;
                let minus = tidy(cx, Surd { a: RatFunc::zero(), b: rat(-1, 1), r: rr })?;
                out.push(kappa_family(cx, format!("{lab}; ω = +√"), plus, root.clone(), None, second.as_ref())?);
                out.push(kappa_family(cx, format!("{lab}; ω = −√"), minus, root, None, second.as_ref())?);
                continue;
            }
        };
        out.push(kappa_family(cx, lab, tidy(cx, value)?, root, unreduced, second.as_ref())?);
    }
    if second.is_some() {
        // Squaring made roots of the other branch: a family with no member
        // on both branches is one of those.
        out.retain(|f| f.range.last != Some(u32::MAX));
    }
    Ok(Ok(out))
}

/// The same value with squared denominator factors taken out of the root
/// and the radicand positive at the given values when it is real there,
/// checked numerically against the original at n = 0, 1 (the sign of the
/// root's coefficient follows the principal branch).
fn tidy(cx: &Ctx, s: Surd) -> Result<Surd> {
    let k = cx.k;
    if s.b.is_zero() {
        return Ok(s);
    }
    let mut b = s.b.clone();
    let mut r = s.r.clone();
    for (f, e) in s.r.den_factors() {
        if e / 2 > 0 {
            let g = k.pow(&RatFunc::from_poly(f.poly().clone()), (e / 2) as i64)?;
            b = k.div(&b, &g)?;
            r = k.mul(&r, &k.mul(&g, &g)?)?;
        }
    }
    let mut vals = cx.vals.clone();
    vals[cx.nv] = Complex64::new(0.0, 0.0);
    if crate::solve::eval_at(&r, &vals).is_some_and(|v| v.re < 0.0 && v.im.abs() <= 1e-12 * v.re.abs()) {
        b = k.mul(&b, &RatFunc::constant(&GRat { re: Rat::zero(), im: Rat::one() }))?;
        r = k.neg(&r);
    }
    let mut t = Surd { a: s.a.clone(), b, r };
    let same = |t: &Surd| {
        [0u32, 1].iter().all(|&n| match (eval_surd(cx, &s, n), eval_surd(cx, t, n)) {
            (Some(x), Some(y)) => (x - y).norm() <= 1e-9 * (1.0 + x.norm()),
            _ => false,
        })
    };
    if same(&t) {
        return Ok(t);
    }
    t.b = k.neg(&t.b);
    Ok(if same(&t) { t } else { s })
}

fn kappa_family(cx: &Ctx, label: String, value: Surd, kappa: Surd, unreduced: Option<Unreduced>, second: Option<&RatFunc>) -> Result<Family> {
    let k = cx.k;
    let names = k.names();
    let mut last = None;
    // κ′ = −c₀/c₁ at κ_n, on its branch too (the squaring's other roots are not levels).
    let second_at = |kappa_n: Complex64, n: u32| -> Option<Complex64> {
        let x = second?;
        let mut vals = cx.vals.clone();
        vals[cx.nv] = Complex64::new(n as f64, 0.0);
        vals[cx.kv] = kappa_n;
        if let Some(u) = &unreduced {
            vals[cx.sv] = crate::solve::eval_at(&u.radicand, &vals)?.sqrt();
        }
        crate::solve::eval_at(x, &vals)
    };
    for n in 0..=RANGE_SCAN {
        let kappa_n = match unreduced.as_ref().and_then(|u| u.kappa.as_ref().map(|x| (u, x))) {
            Some((u, x)) => u.eval(x, &cx.vals, cx.nv, cx.sv, n),
            None => eval_surd(cx, &kappa, n),
        };
        let ok = kappa_n.is_some_and(|v| v.re > 0.0 && (second.is_none() || second_at(v, n).is_some_and(|s| s.re > 0.0)));
        if !ok {
            last = if n == 0 { Some(u32::MAX) } else { Some(n - 1) };
            break;
        }
    }
    // An exact bound where κ_n = c₀ + c₁ n + b√r (b, r free of n): n < −(c₀ + b√r)/c₁.
    let mut bound = None;
    let c1 = k.deriv(&kappa.a, cx.nv)?;
    let n_free = |x: &RatFunc| !x.uses_var(cx.nv);
    if last.is_some() && n_free(&c1) && !c1.is_zero() && n_free(&kappa.b) && n_free(&kappa.r) {
        let c0 = k.compose(&kappa.a, cx.nv, &RatFunc::zero())?;
        let nu = Surd { a: k.neg(&k.div(&c0, &c1)?), b: k.neg(&k.div(&kappa.b, &c1)?), r: kappa.r.clone() };
        bound = Some((nu.text(names), nu.latex(names)));
    }
    let branch = if second.is_some() {
        "Re κ_n > 0 and Re κ′_n > 0 (κ, κ′ the two square roots in the exponents that hold the spectral parameter; κ′ eliminated by squaring the condition)"
    } else {
        "Re κ_n > 0 (κ the square root in the exponents that holds the spectral parameter)"
    };
    let range = NRange { last, bound: if second.is_some() { None } else { bound }, branch: branch.into() };
    Ok(Family { label, value, radical: Some(kappa), range, unreduced })
}

impl Surd {
    /// Text in the input language (`sqrt` for the root).
    pub fn text(&self, names: &[String]) -> String {
        self.render(names, print::Style::Text)
    }
    /// LaTeX.
    pub fn latex(&self, names: &[String]) -> String {
        self.render(names, print::Style::Latex)
    }
    fn render(&self, names: &[String], style: print::Style) -> String {
        let t = |r: &RatFunc| print::ratfunc_text(r, names, style);
        if self.b.is_zero() {
            return t(&self.a);
        }
        let root = match style {
            print::Style::Text => format!("sqrt({})", t(&self.r)),
            print::Style::Latex => format!("\\sqrt{{{}}}", t(&self.r)),
        };
        let times = if style == print::Style::Text { "*" } else { " " };
        // A real or imaginary constant needs no parentheses.
        let plain = self.b.as_constant().is_some_and(|c| c.re.is_zero() || c.im.is_zero());
        let b = if self.b == RatFunc::one() {
            root
        } else if self.b == crate::algebra::RatFunc::rat(&Rat::int((-1).into())) {
            format!("-{root}")
        } else if plain {
            format!("{}{times}{root}", t(&self.b))
        } else {
            match style {
                print::Style::Text => format!("({}){times}{root}", t(&self.b)),
                print::Style::Latex => format!("\\left({}\\right){times}{root}", t(&self.b)),
            }
        };
        if self.a.is_zero() {
            b
        } else if b.starts_with('-') {
            format!("{} {}", t(&self.a), b.replacen('-', "- ", 1))
        } else {
            format!("{} + {b}", t(&self.a))
        }
    }
}

/// The value of `s` at the given parameters and n (principal square root).
fn eval_surd(cx: &Ctx, s: &Surd, n: u32) -> Option<Complex64> {
    let mut vals = cx.vals.clone();
    vals[cx.nv] = Complex64::new(n as f64, 0.0);
    let a = crate::solve::eval_at(&s.a, &vals)?;
    if s.b.is_zero() {
        return a.is_finite().then_some(a);
    }
    let v = a + crate::solve::eval_at(&s.b, &vals)? * crate::solve::eval_at(&s.r, &vals)?.sqrt();
    v.is_finite().then_some(v)
}

impl ClosedForm {
    /// The family's value at overtone n and the given parameter values;
    /// `None` outside its range or where it is not finite.
    pub fn value(&self, family: &Family, values: &[GRat], n: u32) -> Option<Complex64> {
        if family.range.last.is_some_and(|l| l == u32::MAX || n > l) {
            return None;
        }
        let vals = numeric_values(values, self.names.len());
        if let Some(u) = &family.unreduced {
            // n, then κ and s (see `derive`).
            return u.eval(&u.value, &vals, self.n_index, self.n_index + 2, n);
        }
        let mut v = vals.clone();
        v[self.n_index] = Complex64::new(n as f64, 0.0);
        let a = crate::solve::eval_at(&family.value.a, &v)?;
        let out = if family.value.b.is_zero() {
            a
        } else {
            a + crate::solve::eval_at(&family.value.b, &v)? * crate::solve::eval_at(&family.value.r, &v)?.sqrt()
        };
        out.is_finite().then_some(out)
    }
}
