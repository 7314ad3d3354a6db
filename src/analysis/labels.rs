//! Physical names of local solutions for a wave equation with time
//! dependence e^(−iωt): at a horizon-like regular point (an exponent
//! difference that depends on ω) the solution (z − z_h)^ρ with Im ∂ρ/∂ω < 0
//! falls into the horizon ("ingoing"); at an irregular point at infinity
//! exp(u₀ z) with Im ∂u₀/∂ω > 0 is "outgoing" (e^{−iω(t − r)}). For bound
//! states the decaying branch at infinity (Re u₀ < 0 on the real axis) and
//! the exponent with the larger real part at a regular point are the
//! normalisable ones. The derivatives are taken numerically at given
//! parameter values, or at a fixed generic point when none are given.

use super::ext::Ext;
use super::numeric::Values;
use super::{Analysis, Exponent, Kind, PhysicalMap, Place};
use crate::algebra::{Field, GRat, Poly, Rat, RatFunc, UPoly};
use crate::error::RequestInput;
use crate::error::Result;
use num_complex::Complex64;
use std::cmp::Ordering;

/// A label for one local solution.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Label {
    /// Falls into a horizon.
    Ingoing,
    /// Leaves towards infinity.
    Outgoing,
    /// Decays (normalisable end).
    Decaying,
    /// Grows.
    Growing,
}

impl Label {
    /// The word used in output.
    pub fn word(&self) -> &'static str {
        match self {
            Label::Ingoing => "ingoing",
            Label::Outgoing => "outgoing",
            Label::Decaying => "decaying",
            Label::Growing => "growing",
        }
    }
}

/// Labels per point: for the unknown's exponents at regular points, and for
/// the formal branches at irregular points; `None` where no label applies.
#[derive(Clone, Debug)]
pub struct Labels {
    /// Indexed like `Analysis::points`; inner vectors like the exponents (regular) or the formal branches (irregular).
    pub per_point: Vec<Vec<Option<Label>>>,
    /// How the labels were decided.
    pub basis: String,
}

/// A generic point: parameter i gets 0.3 + 0.17·i, the frequency 1/2.
pub fn generic_values(nvars: usize, freq: usize) -> Vec<GRat> {
    (0..nvars)
        .map(|i| {
            if i == freq {
                GRat::real(Rat::new(1.into(), 2.into()).expect("nonzero"))
            } else {
                GRat::real(Rat::new((30 + 17 * i as i64).into(), 100.into()).expect("nonzero"))
            }
        })
        .collect()
}

/// Labels for an analysis, with `freq` the field index of ω and `point` the
/// parameter values. The decisions are exact where the place is rational
/// (a point z₀ in the parameter field, or ∞): ∂ρ/∂ω is derived exactly,
/// evaluated at the Gaussian-rational values, and the sign of its imaginary
/// part (with a square root of the radicand on the principal branch, as the
/// numeric values take it) is decided by exact comparisons. At the roots of
/// a factor of higher degree the derivative is exact in θ but evaluated at
/// the numeric root.
pub fn label(k: &Field, a: &Analysis, freq: usize, point: &[GRat], given: bool) -> Result<Labels> {
    let v0 = Values::new(point.to_vec());
    let mut per_point = Vec::new();
    for p in &a.points {
        let mut row = Vec::new();
        match p.kind {
            Kind::Regular => {
                let ds: Vec<Option<Ordering>> = p
                    .unknown_exponents
                    .iter()
                    .map(|e| im_derivative_sign(k, &v0, &p.place, e, freq, point, a.physical.as_ref()))
                    .collect::<Result<_>>()?;
                let depends = ds.iter().flatten().any(|d| *d != Ordering::Equal);
                for (j, d) in ds.iter().enumerate() {
                    // An exponent free of ω beside one that moves with it
                    // (the wave's factor at the horizon taken out by hand,
                    // as in ingoing coordinates): the two waves are told
                    // apart by their difference, so it is the other kind.
                    let other = ds.get(1 - j.min(1)).filter(|_| ds.len() == 2).copied().flatten();
                    row.push(match (depends, d, other) {
                        (true, Some(Ordering::Equal), Some(Ordering::Greater)) => Some(Label::Ingoing),
                        (true, Some(Ordering::Equal), Some(Ordering::Less)) => Some(Label::Outgoing),
                        (true, Some(Ordering::Less), _) => Some(Label::Ingoing),
                        (true, Some(_), _) => Some(Label::Outgoing),
                        _ => None,
                    });
                }
            }
            Kind::Irregular => {
                // The physical ∞ seen from here: e^(u₀z) at ∞ itself, or
                // e^(c/(z − z₀)) ≈ e^((c/R) r) at a simple pole z₀ of the
                // map r = g(z) with residue R (u₀ = −c, S' = −c (z − z₀)^(−2)).
                let toward_infinity = physical_infinity(k, a, &p.place, point)?;
                for f in &p.formal {
                    let lab = match toward_infinity {
                        Some(PhysicalInfinity::Itself { flip }) => infinity_label(k, &f.lead, freq, point, flip)?,
                        Some(PhysicalInfinity::Pole { flip }) if f.lead_power == Rat::int((-2).into()) => {
                            infinity_label(k, &f.lead, freq, point, flip)?
                        }
                        _ => None,
                    };
                    row.push(lab);
                }
            }
            Kind::Ordinary => {}
        }
        per_point.push(row);
    }
    let physical = a.physical.as_ref().map_or(String::new(), |m| {
        format!(
            "; ends named and roots ordered in {}, the physical variable ({} = {})",
            m.var,
            m.var,
            crate::algebra::print::ratfunc_text(&m.g, k.names(), crate::algebra::print::Style::Text)
        )
    });
    let basis = if given {
        format!("decided at the given parameter values{physical}")
    } else {
        format!(
            "decided at a generic point (the k-th parameter at 0.3 + 0.17·k, the frequency at 1/2); pass {opt_at} to decide at your values{physical}",
            opt_at = RequestInput::At.mention()
        )
    };
    Ok(Labels { per_point, basis })
}

/// Where the physical ∞ lies relative to an irregular point, as the sign
/// that carries the point's leading coefficient u₀ of S' to the physical
/// one.
enum PhysicalInfinity {
    /// The point is the physical ∞ itself (∞ with no change of variable,
    /// or a change r ≈ αz there); `flip` when α < 0.
    Itself {
        /// Whether the physical coefficient has the opposite sign.
        flip: bool,
    },
    /// The point is a simple pole of the map r = g(z) with a real residue
    /// R at the values: e^(c/(z − z₀)) ≈ e^((c/R) r), u₀ = −c, so the
    /// physical coefficient is −u₀/R; `flip` when R > 0.
    Pole {
        /// Whether the physical coefficient has the opposite sign.
        flip: bool,
    },
}

/// Whether an irregular point is the physical ∞: without a change of
/// variable ∞ is; with one, ∞ when g keeps it there (g grows like αz),
/// else a finite point where g has a simple pole with a real residue.
/// `None` where the point is not the physical ∞ or that is not decided
/// exactly at the values.
fn physical_infinity(k: &Field, a: &Analysis, place: &Place, point: &[GRat]) -> Result<Option<PhysicalInfinity>> {
    let Some(m) = &a.physical else {
        return Ok(matches!(place, Place::Infinity).then_some(PhysicalInfinity::Itself { flip: false }));
    };
    let (num, den) = (RatFunc::from_poly(m.g.num().clone()), RatFunc::from_poly(m.g.den_expanded()));
    let scale = GRat::real(Rat::int(m.g.scale().clone()));
    let real_sign = |x: Option<GRat>| x.filter(|x| x.im.is_zero() && !x.re.is_zero()).map(|x| x.re > Rat::zero());
    match place {
        Place::Infinity => {
            // ∞ stays at ∞ under g only when g grows like αz: α = lc(N)/(scale·lc(D)).
            let (dn, dd) = (m.g.num().degree(0), m.g.den_expanded().degree(0));
            if dn != dd + 1 {
                return Ok(None);
            }
            let lc = |p: &Poly| p.to_univariate(0).last().cloned().map(RatFunc::from_poly).and_then(|c| c.eval(point));
            let alpha = lc(m.g.num()).zip(lc(&m.g.den_expanded())).and_then(|(n, d)| n.div(&d.mul(&scale)));
            Ok(real_sign(alpha).map(|positive| PhysicalInfinity::Itself { flip: !positive }))
        }
        Place::Point { at, .. } => {
            // A simple pole: D(z₀) = 0 ≠ D'(z₀), N(z₀) ≠ 0; R = N(z₀)/(scale·D'(z₀)).
            let d0 = k.compose(&den, 0, at)?.eval(point);
            let d1 = k.compose(&k.deriv(&den, 0)?, 0, at)?.eval(point);
            let n0 = k.compose(&num, 0, at)?.eval(point);
            let (Some(d0), Some(d1), Some(n0)) = (d0, d1, n0) else { return Ok(None) };
            if !d0.is_zero() || d1.is_zero() || n0.is_zero() {
                return Ok(None);
            }
            Ok(real_sign(n0.div(&d1.mul(&scale))).map(|positive| PhysicalInfinity::Pole { flip: positive }))
        }
        Place::Roots(_) => Ok(None),
    }
}

/// The label of the branch e^(u₀ r) at the physical ∞, from the point's
/// leading coefficient `lead` (its sign flipped when `flip`): outgoing
/// where Im ∂u₀/∂ω > 0, ingoing where < 0, else decaying or growing by
/// Re u₀.
fn infinity_label(k: &Field, lead: &RatFunc, freq: usize, point: &[GRat], flip: bool) -> Result<Option<Label>> {
    let (u0, du) = (lead.eval(point), k.deriv(lead, freq)?.eval(point));
    let (Some(u0), Some(du)) = (u0, du) else { return Ok(None) };
    let sign = |o: Ordering| if flip { o.reverse() } else { o };
    Ok(match (sign(du.im.cmp(&Rat::zero())), sign(u0.re.cmp(&Rat::zero()))) {
        (Ordering::Greater, _) => Some(Label::Outgoing),
        (Ordering::Less, _) => Some(Label::Ingoing),
        (Ordering::Equal, Ordering::Less) => Some(Label::Decaying),
        (Ordering::Equal, Ordering::Greater) => Some(Label::Growing),
        (Ordering::Equal, Ordering::Equal) => None,
    })
}

/// A polynomial in θ at θ = `at` (Horner), exactly.
fn at_place(k: &Field, u: &UPoly, at: &RatFunc) -> Result<RatFunc> {
    let mut acc = RatFunc::zero();
    for c in u.coeffs.iter().rev() {
        acc = k.add(&k.mul(&acc, at)?, c)?;
    }
    Ok(acc)
}

/// The place's location as an element of the parameter field, when it is one
/// (∞ is read in t = 1/z at t = 0).
fn rational_place(place: &Place) -> Option<RatFunc> {
    match place {
        Place::Point { at, .. } => Some(at.clone()),
        Place::Infinity => Some(RatFunc::zero()),
        Place::Roots(_) => None,
    }
}

/// The sign of Im ∂ρ/∂ω at the values; `None` where it is not defined there
/// (a pole, a vanishing radicand, no numeric root).
fn im_derivative_sign(
    k: &Field,
    v: &Values,
    place: &Place,
    e: &Exponent,
    freq: usize,
    point: &[GRat],
    physical: Option<&PhysicalMap>,
) -> Result<Option<Ordering>> {
    let Some(at) = rational_place(place) else {
        let Place::Roots(f) = place else { return Ok(None) };
        return roots_derivative_sign(k, v, f, e, freq, physical);
    };
    let center = at_place(k, &e.center, &at)?;
    let exact = match (e.sign, &e.root) {
        (0, _) => Some(center.clone()),
        (s, Some(root)) => {
            let half = RatFunc::rat(&Rat::new((s as i64).into(), 2.into()).expect("nonzero"));
            Some(k.add(&center, &k.mul(&half, &at_place(k, root, &at)?)?)?)
        }
        (_, None) => None,
    };
    if let Some(rho) = exact {
        return Ok(k.deriv(&rho, freq)?.eval(point).map(|d| d.im.cmp(&Rat::zero())));
    }
    // ρ = c + (s/2)√R: ∂ρ/∂ω = c' + (s/4) R'/√R.
    let radicand = at_place(k, &e.radicand, &at)?;
    let (Some(dc), Some(r0), Some(r1)) = (k.deriv(&center, freq)?.eval(point), radicand.eval(point), k.deriv(&radicand, freq)?.eval(point)) else {
        return Ok(None);
    };
    Ok(im_sign_over_sqrt(&dc.im, e.sign, &r0, &r1))
}

/// The sign of Im(w·i + (s/4)·R₁/√R₀) for rational w (the imaginary part of
/// the centre's derivative), with √R₀ on the principal branch; `None` when
/// R₀ = 0. With R₀ = a + bi, m = |R₀|, √R₀ = u + iv (u = √((m+a)/2),
/// v = ±√((m−a)/2) with the sign of b, uv = b/2) and R₁ = p + qi, the value
/// is w + (s/4)(qu − pv)/m; every comparison below squares away one root at
/// a time until only α + β√(a² + b²) is left, whose sign is exact.
fn im_sign_over_sqrt(w: &Rat, s: i8, r0: &GRat, r1: &GRat) -> Option<Ordering> {
    let (a, b) = (&r0.re, &r0.im);
    if r0.is_zero() {
        return None;
    }
    let zero = Rat::zero();
    let two = Rat::int(2.into());
    let d = a.mul(a).add(&b.mul(b)); // m² > 0
    let (p, q) = (&r1.re, &r1.im);
    let (p2, q2) = (p.mul(p), q.mul(q));
    // The signs of qu and −pv: u = 0 only when b = 0 ≤ −a, v = 0 only when b = 0 ≤ a.
    let u_zero = b.is_zero() && a < &zero;
    let v_zero = b.is_zero() && a >= &zero;
    let v_sign = if b < &zero { Ordering::Less } else { Ordering::Greater };
    let sa = if u_zero { Ordering::Equal } else { q.cmp(&zero) };
    let sb = if v_zero { Ordering::Equal } else { times(p.cmp(&zero).reverse(), v_sign) };
    // (qu)² − (pv)² = ((q² − p²)m + (q² + p²)a)/2.
    let y = sum_sign(sa, sb, || surd_sign(&q2.add(&p2).mul(a), &q2.sub(&p2), &d));
    let y = if s < 0 { y.reverse() } else { y };
    // 4wm + sY: (4wm)² − Y² = 16w²m² − (m(p² + q²)/2 + a(q² − p²)/2 − pqb).
    let sixteen = Rat::int(16.into());
    let alpha = sixteen.mul(&w.mul(w)).mul(&d).sub(&a.mul(&q2.sub(&p2)).div(&two)?).add(&p.mul(q).mul(b));
    let beta = p2.add(&q2).div(&two)?.neg();
    Some(sum_sign(w.cmp(&zero), y, || surd_sign(&alpha, &beta, &d)))
}

/// The product of two signs.
fn times(x: Ordering, y: Ordering) -> Ordering {
    match (x, y) {
        (Ordering::Equal, _) | (_, Ordering::Equal) => Ordering::Equal,
        (x, y) if x == y => Ordering::Greater,
        _ => Ordering::Less,
    }
}

/// The sign of X + Y from their signs and, when they differ, the sign of X² − Y².
fn sum_sign(x: Ordering, y: Ordering, squares: impl FnOnce() -> Ordering) -> Ordering {
    match (x, y) {
        (Ordering::Equal, y) => y,
        (x, Ordering::Equal) => x,
        (x, y) if x == y => x,
        (x, _) => match squares() {
            Ordering::Greater => x,
            Ordering::Less => x.reverse(),
            Ordering::Equal => Ordering::Equal,
        },
    }
}

/// The sign of α + β√D for rational α, β and D ≥ 0.
fn surd_sign(alpha: &Rat, beta: &Rat, d: &Rat) -> Ordering {
    let zero = Rat::zero();
    let sb = if d.is_zero() { Ordering::Equal } else { beta.cmp(&zero) };
    sum_sign(alpha.cmp(&zero), sb, || alpha.mul(alpha).cmp(&beta.mul(beta).mul(d)))
}

/// The sign of Im ∂ρ/∂ω at the outer root θ of `f`: the derivative is exact
/// in Q(params)[θ]/(f) (θ' = −f_ω(θ)/f_z(θ)), its value taken at the numeric
/// root (the one decision here that is not exact).
fn roots_derivative_sign(k: &Field, v: &Values, f: &Poly, e: &Exponent, freq: usize, physical: Option<&PhysicalMap>) -> Result<Option<Ordering>> {
    let Some(theta) = outer_root(v, f, physical) else { return Ok(None) };
    let ext = Ext::new(f);
    let Some(dtheta) = ext.div(k, &ext.of_poly(k, &f.derivative(freq).neg())?, &ext.of_poly(k, &f.derivative(0))?)? else {
        return Ok(None);
    };
    // d/dω of a polynomial in θ whose coefficients depend on ω.
    let total = |u: &UPoly| -> Result<UPoly> {
        let partial = UPoly { coeffs: u.coeffs.iter().map(|c| k.deriv(c, freq)).collect::<Result<_>>()? };
        ext.reduce(k, &partial.add(k, &ext.mul(k, &u.derivative(k)?, &dtheta)?)?)
    };
    let dc = v.upoly(&total(&e.center)?, theta);
    let d = match (e.sign, &e.root) {
        (0, _) => dc,
        (s, Some(root)) => v.upoly(&total(root)?, theta).and_then(|dr| Some(dc? + 0.5 * s as f64 * dr)),
        (s, None) => {
            let r0 = v.upoly(&e.radicand, theta);
            let r1 = v.upoly(&total(&e.radicand)?, theta);
            match (dc, r0, r1) {
                (Some(dc), Some(r0), Some(r1)) if r0 != Complex64::new(0.0, 0.0) => Some(dc + 0.25 * s as f64 * r1 / r0.sqrt()),
                _ => None,
            }
        }
    };
    Ok(d.and_then(|d| d.im.partial_cmp(&0.0)))
}

/// A singular point's name in the picks' sentences, as the exponents'
/// choices (`Choices`) and the expansion point name it: its location,
/// θ for a root of an irreducible factor of degree ≥ 2, ∞ for infinity.
pub fn point_name(k: &Field, p: &super::SingularPoint) -> String {
    p.place.id().text(k.names())
}

/// The boundary problem whose exponents are picked (also the command
/// line's `classify --boundary` values).
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Boundary {
    /// Quasinormal modes: ingoing at horizons, outgoing at infinity.
    Qnm,
    /// Bound states: the larger exponent at regular points, decaying at infinity.
    Bound,
}

/// The root of a factor at which a root point's local data are read: the
/// outermost real root (the outer horizon of a horizon polynomial), or the
/// root with the largest real part when none is real. Outermost is the
/// largest in the physical variable: after a change of variable r = g(z)
/// the real roots are ordered by g (t = 1/r makes the largest root in t
/// the smallest in r), a root at a pole of g (the physical ∞) last of all.
pub fn outer_root(v: &Values, f: &crate::algebra::Poly, physical: Option<&PhysicalMap>) -> Option<Complex64> {
    let roots = v.roots(f)?;
    let real = |z: &&Complex64| z.im.abs() <= 1e-9 * z.re.abs().max(1.0);
    let place = |z: &Complex64| match physical {
        None => z.re,
        Some(m) => m.at(v, *z).map_or(f64::NEG_INFINITY, |r| r.re),
    };
    let real_max = roots.iter().filter(real).copied().max_by(|a, b| place(a).total_cmp(&place(b)));
    real_max.or_else(|| roots.iter().copied().max_by(|a, b| a.re.total_cmp(&b.re)))
}

/// The physical place of a singular point at the values, for the picks'
/// sentences after a change of variable: "r = ∞", "r ≈ 1.866"; `None`
/// without a change.
fn physical_place(a: &Analysis, p: &Place, v: &Values) -> Option<String> {
    let m = a.physical.as_ref()?;
    let z = match p {
        Place::Point { at, .. } => v.ratfunc(at),
        Place::Roots(f) => outer_root(v, f, Some(m)),
        Place::Infinity => {
            // g(∞): ∞ when g grows there, else the ratio of leading coefficients (0 when it decays).
            let (dn, dd) = (m.g.num().degree(0), m.g.den_expanded().degree(0));
            return Some(match dn.cmp(&dd) {
                Ordering::Greater => format!("{} = ∞", m.var),
                Ordering::Less => format!("{} = 0", m.var),
                Ordering::Equal => {
                    let lc = |p: &Poly| p.to_univariate(0).last().cloned().map(RatFunc::from_poly).and_then(|c| v.ratfunc(&c));
                    let scale = Rat::int(m.g.scale().clone()).to_f64();
                    match (lc(m.g.num()), lc(&m.g.den_expanded())) {
                        (Some(n), Some(d)) => format!("{} ≈ {}", m.var, short(n / (d * scale))),
                        _ => format!("{} not placed at these values", m.var),
                    }
                }
            });
        }
    };
    Some(match z.map(|z| m.at(v, z)) {
        Some(Some(r)) => format!("{} ≈ {}", m.var, short(r)),
        Some(None) => format!("{} = ∞", m.var),
        None => format!("{} not placed at these values", m.var),
    })
}

/// A complex value with up to 10 significant digits, its imaginary part
/// only when it is not negligible.
fn short(z: Complex64) -> String {
    let fmt = |x: f64| {
        let s = format!("{x:.10}");
        let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
        if s == "-0" {
            "0".to_string()
        } else {
            s
        }
    };
    if z.im.abs() <= 1e-9 * z.re.abs().max(1.0) {
        fmt(z.re)
    } else {
        format!("{}{:+}i", fmt(z.re), z.im)
    }
}

/// The exponents picked for a boundary problem.
#[derive(Clone, Debug, Default)]
pub struct ExponentPicks {
    /// (point, 1-based exponent number).
    pub picks: Vec<(super::PointId, usize)>,
    /// A sentence per point saying what was picked.
    pub said: Vec<String>,
}

/// Exponent choices (1-based, by point) for a boundary
/// problem, and a sentence per point saying what was picked.
pub fn boundary_choices(k: &Field, a: &Analysis, labels: Option<&Labels>, b: Boundary, point: &[GRat]) -> Result<ExponentPicks> {
    let v = Values::new(point.to_vec());
    let mut picks = Vec::new();
    let mut said = Vec::new();
    let beyond = beyond_a_singular_point(a, labels, &v);
    for (i, p) in a.points.iter().enumerate() {
        let row = labels.map(|l| &l.per_point[i]);
        let name = point_name(k, p);
        // The sentence names the point in the written variable and, after a change of variable, in the physical one.
        let named = match physical_place(a, &p.place, &v) {
            Some(there) => format!("{name} ({there})"),
            None => name.clone(),
        };
        match (b, p.kind) {
            (Boundary::Qnm, Kind::Regular) => {
                if let Some(j) = row.and_then(|r| r.iter().position(|x| *x == Some(Label::Ingoing))) {
                    picks.push((p.place.id(), j + 1));
                    said.push(match beyond[i] {
                        Some(mid) => format!(
                            "at {named}: exponent number {} (the one with the ingoing sign; not a horizon of the domain: a singular point, {}, lies between it and the outer horizon)",
                            j + 1,
                            short(Complex64::new(mid, 0.0))
                        ),
                        None => format!("at {named}: the ingoing exponent (number {})", j + 1),
                    });
                }
            }
            (Boundary::Qnm, Kind::Irregular) => {
                if let Some(j) = row.and_then(|r| r.iter().position(|x| *x == Some(Label::Outgoing))) {
                    picks.push((p.place.id(), j + 1));
                    said.push(format!("at {named}: the outgoing branch (number {})", j + 1));
                }
            }
            (Boundary::Bound, Kind::Regular) => {
                if let Some(j) = larger_real_part(k, &v, &p.place, &p.unknown_exponents, point, a.physical.as_ref())? {
                    picks.push((p.place.id(), j + 1));
                    said.push(format!("at {named}: the exponent with the larger real part (number {})", j + 1));
                }
            }
            (Boundary::Bound, Kind::Irregular) => {
                if let Some(j) = row.and_then(|r| r.iter().position(|x| *x == Some(Label::Decaying))) {
                    picks.push((p.place.id(), j + 1));
                    said.push(format!("at {named}: the decaying branch (number {})", j + 1));
                }
            }
            _ => {}
        }
    }
    Ok(ExponentPicks { picks, said })
}

/// For each point: when it is a real point with a spectral-parameter
/// dependent exponent lying below the outermost such point with another
/// real singular point strictly between them (r = −r_h of a
/// higher-dimensional black hole, r = −1 of de Sitter: beyond the centre
/// r = 0), that point's location; such a point has no horizon physics for
/// the domain outside. Decided in the written variable only (after a change
/// of variable, `None` everywhere).
fn beyond_a_singular_point(a: &Analysis, labels: Option<&Labels>, v: &Values) -> Vec<Option<f64>> {
    let none = vec![None; a.points.len()];
    let Some(labels) = labels else { return none };
    if a.physical.is_some() {
        return none;
    }
    let real = |z: &Complex64| (z.im.abs() <= 1e-9 * z.re.abs().max(1.0)).then_some(z.re);
    let located: Vec<Vec<f64>> = a
        .points
        .iter()
        .map(|p| match &p.place {
            Place::Point { at, .. } => v.ratfunc(at).as_ref().and_then(real).into_iter().collect(),
            Place::Roots(f) => v.roots(f).unwrap_or_default().iter().filter_map(real).collect(),
            Place::Infinity => Vec::new(),
        })
        .collect();
    let labelled = |i: usize| labels.per_point.get(i).is_some_and(|r| r.iter().any(Option::is_some));
    let outer = (0..a.points.len()).filter(|i| labelled(*i)).flat_map(|i| located[i].iter().copied()).fold(f64::NEG_INFINITY, f64::max);
    (0..a.points.len())
        .map(|i| {
            let Place::Point { .. } = a.points[i].place else { return None };
            let z = *located[i].first()?;
            if !labelled(i) || z >= outer {
                return None;
            }
            located.iter().flatten().copied().find(|m| *m > z + 1e-9 * z.abs().max(1.0) && *m < outer - 1e-9 * outer.abs().max(1.0))
        })
        .collect()
}

/// Which of two exponents has the larger real part at the values (the first
/// on a tie); at infinity the larger exponent in t = 1/z is the decaying
/// solution too. Exact at a rational place: two exact exponents are compared
/// exactly, and c ± ½√R with √R on the principal branch (Re √R ≥ 0, zero only
/// for a real R ≤ 0) picks the + sign. At the roots of a factor of higher
/// degree the values are compared at the numeric root.
fn larger_real_part(k: &Field, v: &Values, place: &Place, e: &[Exponent], point: &[GRat], physical: Option<&PhysicalMap>) -> Result<Option<usize>> {
    if e.len() != 2 {
        return Ok(None);
    }
    let Some(at) = rational_place(place) else {
        let Place::Roots(f) = place else { return Ok(None) };
        let theta = outer_root(v, f, physical);
        let re: Vec<f64> = e.iter().map(|x| theta.and_then(|t| v.exponent(x, t)).map(|z| z.re).unwrap_or(f64::NAN)).collect();
        return Ok(re.iter().all(|x| x.is_finite()).then(|| if re[0] >= re[1] { 0 } else { 1 }));
    };
    let mut exact = Vec::new();
    for x in e {
        let center = at_place(k, &x.center, &at)?;
        exact.push(match (x.sign, &x.root) {
            (0, _) => center.eval(point),
            (s, Some(root)) => {
                let half = RatFunc::rat(&Rat::new((s as i64).into(), 2.into()).expect("nonzero"));
                k.add(&center, &k.mul(&half, &at_place(k, root, &at)?)?)?.eval(point)
            }
            (_, None) => None,
        });
    }
    if let [Some(r0), Some(r1)] = &exact[..] {
        return Ok(Some(if r0.re >= r1.re { 0 } else { 1 }));
    }
    // c ± ½√R: both defined where R is.
    let same = e[0].center == e[1].center && e[0].radicand == e[1].radicand && e[0].sign == -e[1].sign && e[0].sign != 0;
    let Some(r) = at_place(k, &e[0].radicand, &at)?.eval(point) else { return Ok(None) };
    if !same || at_place(k, &e[0].center, &at)?.eval(point).is_none() {
        return Ok(None);
    }
    let tie = r.im.is_zero() && r.re <= Rat::zero();
    Ok(Some(if tie || e[0].sign > 0 { 0 } else { 1 }))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(n: i64, d: i64) -> Rat {
        Rat::new(n.into(), d.into()).expect("nonzero")
    }

    /// The exact sign of Im(w·i + (s/4)·R₁/√R₀) against the same value in
    /// double precision with num_complex's principal square root (an
    /// independent route), on a grid of small Gaussian rationals where the
    /// double value is far from zero, and on exact zeros.
    #[test]
    fn the_exact_sign_agrees_with_complex_arithmetic() {
        let vals = [-3i64, -2, -1, 0, 1, 2, 5];
        let mut checked = 0;
        for &a in &vals {
            for &b in &vals {
                if a == 0 && b == 0 {
                    continue;
                }
                for &p in &vals {
                    for &qq in &vals {
                        for &w in &[-2i64, 0, 1] {
                            for s in [1i8, -1] {
                                let r0 = GRat { re: q(a, 3), im: q(b, 2) };
                                let r1 = GRat { re: q(p, 1), im: q(qq, 5) };
                                let wr = q(w, 7);
                                let exact = im_sign_over_sqrt(&wr, s, &r0, &r1).expect("R₀ ≠ 0");
                                let z0 = Complex64::new(a as f64 / 3.0, b as f64 / 2.0);
                                let z1 = Complex64::new(p as f64, qq as f64 / 5.0);
                                let f = w as f64 / 7.0 + 0.25 * s as f64 * (z1 / z0.sqrt()).im;
                                if f.abs() > 1e-9 {
                                    assert_eq!(exact, f.partial_cmp(&0.0).unwrap(), "a={a}/3 b={b}/2 p={p} q={qq}/5 w={w}/7 s={s}");
                                    checked += 1;
                                }
                            }
                        }
                    }
                }
            }
        }
        assert!(checked > 1000);
        // Exact cancellations: R₀ = −1 (√R₀ = i), R₁ = 4: Im(4/(4i)) = −1, cancelled by w = 1.
        let r0 = GRat { re: q(-1, 1), im: Rat::zero() };
        let r1 = GRat { re: q(4, 1), im: Rat::zero() };
        assert_eq!(im_sign_over_sqrt(&Rat::one(), 1, &r0, &r1), Some(Ordering::Equal));
        // R₀ = 2i (√R₀ = 1 + i), R₁ = 8: Im(8/(1 + i))/4 = −1, cancelled by w = 1.
        let r0 = GRat { re: Rat::zero(), im: q(2, 1) };
        let r1 = GRat { re: q(8, 1), im: Rat::zero() };
        assert_eq!(im_sign_over_sqrt(&Rat::one(), 1, &r0, &r1), Some(Ordering::Equal));
        assert_eq!(im_sign_over_sqrt(&Rat::zero(), 1, &GRat::zero(), &r1), None);
    }

    /// The sign of α + β√D against doubles, and exact zeros (1 − √1, 2 − √4, 3 − 3√1).
    #[test]
    fn surd_signs() {
        for a in -4i64..=4 {
            for b in -3i64..=3 {
                for d in [0i64, 1, 2, 3, 5, 9] {
                    let f = a as f64 + b as f64 * (d as f64).sqrt();
                    let exact = surd_sign(&q(a, 1), &q(b, 1), &q(d, 1));
                    if f.abs() > 1e-12 {
                        assert_eq!(exact, f.partial_cmp(&0.0).unwrap(), "{a} + {b}√{d}");
                    } else {
                        assert_eq!(exact, Ordering::Equal, "{a} + {b}√{d}");
                    }
                }
            }
        }
    }
}
