//! Every eigenvalue in a region at once, with no seed: a global spectral
//! method on any [`BoundaryProblem`].
//!
//! The behaviour chosen at each end is factored out of ψ with its
//! ω-dependence: the exponent ρ(ω) at a finite end, the power σ at a regular
//! infinity, and e^(μ(ω) z) z^ν(ω) at an irregular infinity of rank 1. Each
//! must be affine in ω (the exponents of horizons and of massless fields
//! are); otherwise the method says so and stops. The domain is mapped onto
//! x ∈ [−1, 1]: linearly between two finite ends, and by the Möbius map
//! z = a + L(1 + x)/(1 − x) from a finite end to infinity, with L the
//! distance from a to the nearest other singular point, so that the
//! auxiliary point c = a − L, where the power at infinity is anchored
//! ((z − c)^(σ − ρ)), is sent to x = ∞ and adds no singularity to the
//! remainder φ. The equation for φ is cleared of denominators exactly (as
//! polynomials in x whose coefficients are polynomials in ω) and the common
//! factors that vanish at the two ends are divided out, so that the
//! equation stays non-trivial there and itself selects the regular
//! remainder (the other solution is not smooth at the end).
//!
//! Chebyshev collocation on the Gauss–Lobatto points (L. N. Trefethen,
//! Spectral Methods in MATLAB, 2000) then gives Σ_d ω^d M_d v = 0, a
//! polynomial eigenvalue problem. Its companion linearisation A z = ω B z
//! (z = (v, ωv, …)) is solved by shift and invert, (A − σB)⁻¹B z = z/(ω − σ),
//! with nalgebra's LU and Schur decompositions (infinite eigenvalues of the
//! pencil go to 0 and are dropped). nalgebra, already a dependency, has no
//! QZ for the pencil; shift and invert about a point where the pencil is well
//! conditioned (in the part of the plane being solved, where the complex
//! scaling below makes the unwanted solutions non-smooth) needs none, and
//! adds no crate to the build. An eigenvalue is kept only when the grid
//! of N and of ⌊3N/2⌋ intervals both have it, to the stated tolerance,
//! each as the other's nearest: eigenvalues of the discretisation that are
//! not eigenvalues of the problem move when the grid changes and never
//! reach the output. Each kept value can then be polished by direct
//! integration between the ends ([`super::ends::find_root`]).

use super::boundary::{exponent_slopes, exponents_at, BoundaryProblem, Condition, Location, Nature};
use super::integrate::{Coeffs, IntRoot};
use crate::error::{Error, ErrorKind, Result};
use nalgebra::DMatrix;
use num_complex::Complex64;

const ZERO: Complex64 = Complex64::new(0.0, 0.0);

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

fn cx(x: f64) -> Complex64 {
    Complex64::new(x, 0.0)
}

/// A polynomial in one variable s whose coefficients are polynomials in ω:
/// `0[i][j]` multiplies sⁱ ωʲ.
#[derive(Clone, Debug, Default)]
pub(crate) struct Bi(pub(crate) Vec<Vec<Complex64>>);

impl Bi {
    /// A polynomial in s with coefficients free of ω (low degree first).
    pub(crate) fn in_s(c: &[Complex64]) -> Bi {
        Bi(c.iter().map(|x| vec![*x]).collect())
    }
    /// v₀ + v₁ω, constant in s.
    pub(crate) fn affine(v: Affine) -> Bi {
        Bi(vec![vec![v.c0, v.c1]])
    }
    pub(crate) fn get(&self, i: usize, j: usize) -> Complex64 {
        self.0.get(i).and_then(|r| r.get(j)).copied().unwrap_or(ZERO)
    }
    pub(crate) fn deg_s(&self) -> usize {
        self.0.len().saturating_sub(1)
    }
    pub(crate) fn deg_w(&self) -> usize {
        self.0.iter().map(|r| r.len()).max().unwrap_or(1).saturating_sub(1)
    }
    pub(crate) fn add(&self, o: &Bi) -> Bi {
        let (ns, nw) = (self.0.len().max(o.0.len()), self.deg_w().max(o.deg_w()) + 1);
        Bi((0..ns).map(|i| (0..nw).map(|j| self.get(i, j) + o.get(i, j)).collect()).collect())
    }
    pub(crate) fn mul(&self, o: &Bi) -> Bi {
        if self.0.is_empty() || o.0.is_empty() {
            return Bi::default();
        }
        let (ns, nw) = (self.deg_s() + o.deg_s() + 1, self.deg_w() + o.deg_w() + 1);
        let mut out = vec![vec![ZERO; nw]; ns];
        for (i, r) in self.0.iter().enumerate() {
            for (j, x) in r.iter().enumerate() {
                for (k, q) in o.0.iter().enumerate() {
                    for (l, y) in q.iter().enumerate() {
                        out[i + k][j + l] += x * y;
                    }
                }
            }
        }
        Bi(out)
    }
    pub(crate) fn scale(&self, k: Complex64) -> Bi {
        Bi(self.0.iter().map(|r| r.iter().map(|x| x * k).collect()).collect())
    }
    /// d/ds.
    pub(crate) fn deriv(&self) -> Bi {
        Bi(self.0.iter().enumerate().skip(1).map(|(i, r)| r.iter().map(|x| x * i as f64).collect()).collect())
    }
    /// sᵏ · self.
    pub(crate) fn shift_up(&self, k: usize) -> Bi {
        let nw = self.deg_w() + 1;
        let mut v = vec![vec![ZERO; nw]; k];
        v.extend(self.0.iter().cloned());
        Bi(v)
    }
    /// self(g(s)) for g free of ω (Horner).
    pub(crate) fn compose(&self, g: &Bi) -> Bi {
        let mut acc = Bi::default();
        for r in self.0.iter().rev() {
            acc = acc.mul(g).add(&Bi(vec![r.clone()]));
        }
        acc
    }
    /// P(g/h) hⁿ with n = deg P, for g and h free of ω: Σ p_k g^k h^(n−k), and n.
    pub(crate) fn lift(&self, g: &Bi, h: &Bi) -> (Bi, usize) {
        let n = self.deg_s();
        let mut acc = Bi::default();
        let mut pow = Bi::in_s(&[cx(1.0)]);
        for k in 0..=n {
            let row = Bi(vec![self.0[k].clone()]);
            let mut term = row.mul(&pow);
            for _ in k..n {
                term = term.mul(h);
            }
            acc = acc.add(&term);
            pow = pow.mul(g);
        }
        (acc, n)
    }
    /// The polynomial in s at one value of ω (a single ω column).
    pub(crate) fn collapse(&self, w: Complex64) -> Bi {
        Bi(self.0.iter().map(|r| vec![r.iter().rev().fold(ZERO, |acc, x| acc * w + x)]).collect())
    }
    /// The largest coefficient's modulus.
    pub(crate) fn size(&self) -> f64 {
        self.0.iter().flatten().map(|x| x.norm()).fold(0.0, f64::max)
    }
    /// The coefficients of ωʲ at s.
    pub(crate) fn at(&self, s: f64) -> Vec<Complex64> {
        let nw = self.deg_w() + 1;
        (0..nw).map(|j| self.0.iter().rev().fold(ZERO, |acc, r| acc * s + r.get(j).copied().unwrap_or(ZERO))).collect()
    }
    /// The quotient by (s − s₀) and the largest remainder (one per ω power).
    #[allow(clippy::needless_range_loop)]
    pub(crate) fn divide(&self, s0: f64) -> (Bi, f64) {
        let nw = self.deg_w() + 1;
        let n = self.0.len();
        if n == 0 {
            return (Bi::default(), 0.0);
        }
        let mut q = vec![vec![ZERO; nw]; n.saturating_sub(1)];
        let mut rem = 0.0f64;
        for j in 0..nw {
            let mut carry = ZERO;
            for i in (0..n).rev() {
                let v = self.get(i, j) + carry * s0;
                if i == 0 {
                    rem = rem.max(v.norm());
                } else {
                    q[i - 1][j] = v;
                }
                carry = v;
            }
        }
        (Bi(q), rem)
    }
}

/// A quantity affine in ω: c₀ + c₁ω.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Affine {
    /// The value at ω = 0.
    pub c0: Complex64,
    /// The slope.
    pub c1: Complex64,
}

impl Affine {
    /// The value at ω.
    pub fn at(self, w: Complex64) -> Complex64 {
        self.c0 + self.c1 * w
    }
}

/// Fits v(ω) = c₀ + c₁ω through two real frequencies and checks it at a
/// third, complex one against `both` (the two branches there).
fn fit(scale: f64, pick: &dyn Fn(Complex64) -> Option<Complex64>, both: &dyn Fn(Complex64) -> Option<[Complex64; 2]>, what: &str) -> Result<Affine> {
    let (w1, w2, w3) = (cx(0.6 * scale), cx(1.4 * scale), Complex64::new(0.9, -0.7) * scale);
    let no = || usage(format!("{what} could not be evaluated"));
    let (v1, v2) = (pick(w1).ok_or_else(no)?, pick(w2).ok_or_else(no)?);
    let c1 = (v2 - v1) / (w2 - w1);
    let f = Affine { c0: v1 - c1 * w1, c1 };
    let pred = f.at(w3);
    let [a, b] = both(w3).ok_or_else(no)?;
    let off = (a - pred).norm().min((b - pred).norm());
    if off.is_nan() || off > 1e-7 * (1.0 + pred.norm()) {
        return Err(usage(format!(
            "{what} is not affine in the spectral parameter (off by {off:.1e} at a test value): the global spectral method and the numeric series need it affine"
        )));
    }
    Ok(f)
}

/// The behaviour factored out at the ends.
#[derive(Clone, Debug)]
pub struct Factors {
    /// The exponent at the left end.
    pub left: Affine,
    /// The exponent (finite right end) or the power σ of z at infinity.
    pub right: Affine,
    /// μ of e^(μz) at an irregular infinity.
    pub exp_rate: Option<Affine>,
    /// The map in words.
    pub map: String,
}

/// The exponent at a finite end z₀ obeying `cond` at the real frequency w.
fn finite_pick(bp: &BoundaryProblem, z0: f64, cond: Condition, w: Complex64) -> Option<Complex64> {
    match cond {
        Condition::IntoHorizon | Condition::OutOfHorizon => {
            let (e, s) = exponent_slopes(&bp.ode, z0, w)?;
            let into = if s[0].im <= s[1].im { 0 } else { 1 };
            Some(if cond == Condition::IntoHorizon { e[into] } else { e[1 - into] })
        }
        Condition::Normalisable | Condition::SlowerFallOff => {
            let e = exponents_at(&bp.ode, z0, w)?;
            let big = if e[0].re >= e[1].re { 0 } else { 1 };
            Some(if cond == Condition::Normalisable { e[big] } else { e[1 - big] })
        }
        Condition::Outgoing | Condition::Decaying | Condition::Mixed(_) => None,
    }
}

/// The exponent chosen at end `i` (0 left, 1 right) at ω where that end is
/// finite; `None` at an infinite end or where it cannot be evaluated.
pub(crate) fn end_exponent_at(bp: &BoundaryProblem, i: usize, w: Complex64) -> Option<Complex64> {
    let Location::At(a) = bp.ends[i].location else { return None };
    finite_pick(bp, a, bp.ends[i].condition, w)
}

/// The exponent at a finite end z₀ obeying `cond`, affine in ω (fitted
/// and checked at a third frequency, as [`factors`] does).
pub(crate) fn end_exponent(bp: &BoundaryProblem, z0: f64, cond: Condition) -> Result<Affine> {
    let pick = |w: Complex64| finite_pick(bp, z0, cond, w);
    let both = |w: Complex64| exponents_at(&bp.ode, z0, w);
    fit(bp.scale, &pick, &both, "the exponent at an end")
}

/// The powers σ of ψ ~ z^σ at a regular infinity: σ(σ − 1) + b σ + q = 0
/// with b = lim zB/A, q = lim z²C/A.
fn infinity_powers(bp: &BoundaryProblem, w: Complex64) -> Option<[Complex64; 2]> {
    let a = bp.ode.a.at_omega(w);
    let da = a.iter().rposition(|x| x.norm() > 0.0)?;
    let top = a[da];
    let b = bp.ode.b.at_omega(w);
    let c = bp.ode.c.at_omega(w);
    let bb = if da >= 1 { b.get(da - 1).copied().unwrap_or(ZERO) / top } else { ZERO };
    let q = if da >= 2 { c.get(da - 2).copied().unwrap_or(ZERO) / top } else { ZERO };
    // σ² + (b − 1)σ + q = 0
    let s = ((bb - 1.0) * (bb - 1.0) - 4.0 * q).sqrt();
    Some([(-(bb - 1.0) + s) / 2.0, (-(bb - 1.0) - s) / 2.0])
}

/// Factors out the chosen behaviour at both ends (each affine in ω).
pub fn factors(bp: &BoundaryProblem) -> Result<Factors> {
    let s = bp.scale;
    build_factors(bp, &|pick, both, what| fit(s, pick, both, what))
}

/// The behaviour at both ends frozen at one trial value ω: each exponent,
/// power or rate evaluated there, whatever its dependence on ω (a square
/// root for a massive field), as a constant.
fn frozen_factors(bp: &BoundaryProblem, w: Complex64) -> Result<Factors> {
    build_factors(bp, &|pick, _, what| {
        let v = pick(w).filter(|v| v.re.is_finite() && v.im.is_finite());
        v.map(|c0| Affine { c0, c1: ZERO }).ok_or_else(|| usage(format!("{what} could not be evaluated at {}", fmt_c(w))))
    })
}

/// One end quantity as a function of ω: from its pick (the branch the
/// condition chooses), both branches, and its name in words.
type Shape<'a> = &'a dyn Fn(&dyn Fn(Complex64) -> Option<Complex64>, &dyn Fn(Complex64) -> Option<[Complex64; 2]>, &str) -> Result<Affine>;

/// The behaviour at both ends, each quantity given its ω-dependence by `shape`.
fn build_factors(bp: &BoundaryProblem, shape: Shape) -> Result<Factors> {
    let [left, right] = &bp.ends;
    if bp.ends.iter().any(|e| matches!(e.condition, Condition::Mixed(_))) {
        return Err(usage(super::boundary::MIXED_NEEDS_BOTH));
    }
    let Location::At(a) = left.location else { return Err(usage("the left end must be finite")) };
    let lp = |w: Complex64| finite_pick(bp, a, left.condition, w);
    let lb = |w: Complex64| exponents_at(&bp.ode, a, w);
    let lf = shape(&lp, &lb, "the exponent at the left end")?;
    let (rf, mu, map) = match (right.location, right.nature) {
        (Location::At(b), _) => {
            let rp = |w: Complex64| finite_pick(bp, b, right.condition, w);
            let rb = |w: Complex64| exponents_at(&bp.ode, b, w);
            (shape(&rp, &rb, "the exponent at the right end")?, None, format!("z = {a} + ({b} − {a})(1 + x)/2"))
        }
        (Location::Infinity, Nature::Regular | Nature::Horizon) => {
            let slower = match right.condition {
                Condition::Normalisable => false,
                Condition::SlowerFallOff => true,
                other => return Err(usage(format!("the condition '{}' does not fit a regular infinity", other.name()))),
            };
            // ψ ~ z^σ = t^(−σ): the normalisable fall-off has the larger −σ.
            let pick = |w: Complex64| {
                let [p, q] = infinity_powers(bp, w)?;
                let p_first = (-p).re >= (-q).re;
                Some(if p_first != slower { p } else { q })
            };
            let both = |w: Complex64| infinity_powers(bp, w);
            (shape(&pick, &both, "the power at infinity")?, None, String::new())
        }
        (Location::Infinity, Nature::IrregularRank1) => {
            let cond = right.condition;
            let branch = |w: Complex64| Coeffs::at(&bp.ode, w).ok().and_then(|k| super::ends::far_branch(&k, cond, w).ok());
            let mu_pick = |w: Complex64| branch(w).map(|b| b.0);
            let nu_pick = |w: Complex64| branch(w).map(|b| b.1);
            let mu_both = |w: Complex64| branch(w).map(|b| [b.0, b.0]);
            let nu_both = |w: Complex64| branch(w).map(|b| [b.1, b.1]);
            let mu = shape(&mu_pick, &mu_both, "the exponential rate μ at infinity")?;
            let nu = shape(&nu_pick, &nu_both, "the power ν at infinity")?;
            (nu, Some(mu), String::new())
        }
    };
    let map = if map.is_empty() {
        let l = anchor_length(bp, a);
        format!("z = {a} + {l}(1 + x)/(1 − x), the power at infinity anchored at z = {}", a - l)
    } else {
        map
    };
    Ok(Factors { left: lf, right: rf, exp_rate: mu, map })
}

/// L of the Möbius map from a finite end a to infinity: the distance from a
/// to the nearest other zero of A (max(|a|, 1) when there is none).
fn anchor_length(bp: &BoundaryProblem, a: f64) -> f64 {
    let near = bp.zeros.iter().map(|z| (z - a).norm()).filter(|d| *d > 1e-9 * a.abs().max(1.0)).fold(f64::INFINITY, f64::min);
    if near.is_finite() {
        near
    } else {
        a.abs().max(1.0)
    }
}

/// The equation for the remainder φ in the collocation variable s:
/// c₂ φ_xx + c₁ φ_x + c₀ φ = 0 with each c a polynomial in (s, ω), and x(s).
struct Remainder {
    c: [Bi; 3],
    /// s at a collocation point x.
    s_of_x: fn(f64) -> f64,
}

fn s_is_x(x: f64) -> f64 {
    x
}
fn s_is_one_minus_x(x: f64) -> f64 {
    1.0 - x
}

/// The remainder's coefficients, s(x), and s at the two ends.
type Chart = ([Bi; 3], fn(f64) -> f64, [f64; 2]);

/// The remainder's equation; at an infinite right end the map's length is
/// the anchor length times `stretch` (≥ 1). With `at`, the equation at that
/// one value of ω (the factors frozen there), so that the factors vanishing
/// at the ends are those of the value, not of every power of ω.
fn remainder(bp: &BoundaryProblem, f: &Factors, theta: f64, stretch: f64, at: Option<Complex64>) -> Result<Remainder> {
    let [left, right] = &bp.ends;
    let Location::At(a) = left.location else { return Err(usage("the left end must be finite")) };
    // At an irregular infinity the ray runs at the angle θ (complex scaling).
    let anchor = match right.location {
        Location::At(_) => None,
        Location::Infinity => {
            let turn = if f.exp_rate.is_some() { Complex64::from_polar(1.0, theta) } else { cx(1.0) };
            let l = turn * anchor_length(bp, a) * stretch;
            Some((a - l, l))
        }
    };
    let [p2, p1, p0] = factored(bp, f, anchor.map_or(ZERO, |(c, _)| c))?;
    let (mut c, s_of_x, ends): Chart = match anchor {
        None => {
            let Location::At(b) = right.location else { return Err(Error::new(ErrorKind::Internal, "finite right end expected")) };
            let (m, h) = ((a + b) / 2.0, (b - a) / 2.0);
            let g = Bi::in_s(&[cx(m), cx(h)]);
            ([p2.compose(&g).scale(cx(1.0 / (h * h))), p1.compose(&g).scale(cx(1.0 / h)), p0.compose(&g)], s_is_x, [-1.0, 1.0])
        }
        Some((c0, l)) => {
            // s = t = 1 − x, z = (c t + 2L)/t; P(z) tⁿ = Σ p_k (c t + 2L)^k t^(n−k).
            let (num, den) = (Bi::in_s(&[2.0 * l, c0]), Bi::in_s(&[ZERO, cx(1.0)]));
            let ((r2, n2), (r1, n1d), (r0, n0)) = (p2.lift(&num, &den), p1.lift(&num, &den), p0.lift(&num, &den));
            let m = (n2 as isize - 3).max(n1d as isize - 2).max(n0 as isize).max(0) as usize;
            let c2 = r2.shift_up(m + 4 - n2).scale(1.0 / (4.0 * l * l));
            let c1 = r2.shift_up(m + 3 - n2).scale(-1.0 / (2.0 * l * l)).add(&r1.shift_up(m + 2 - n1d).scale(1.0 / (2.0 * l)));
            let c0p = r0.shift_up(m - n0);
            ([c2, c1, c0p], s_is_one_minus_x, [2.0, 0.0])
        }
    };
    if let Some(w) = at {
        c = [c[0].collapse(w), c[1].collapse(w), c[2].collapse(w)];
    }
    divide_common(&mut c, &ends)?;
    Ok(Remainder { c, s_of_x })
}

/// The equation p₂ φ'' + p₁ φ' + p₀ φ = 0 in z (each p a polynomial in
/// (z, ω)) for φ = ψ / S, S the behaviour `f` factored out at both ends:
/// (z − a)^ρ_a (z − b)^ρ_b between finite ends, (z − a)^ρ_a (z − c)^(σ − ρ_a)
/// (and e^(μz) at an irregular infinity) with the anchor c at an infinite
/// right end.
pub(crate) fn factored(bp: &BoundaryProblem, f: &Factors, c: Complex64) -> Result<[Bi; 3]> {
    let [left, right] = &bp.ends;
    let Location::At(a) = left.location else { return Err(usage("the left end must be finite")) };
    let lin = |root: Complex64| Bi::in_s(&[-root, cx(1.0)]); // z − root
    let (aa, bb, cc) = (Bi(bp.ode.a.c.clone()), Bi(bp.ode.b.c.clone()), Bi(bp.ode.c.c.clone()));
    // S' = N₁/D₁ (logarithmic derivative of the factored behaviour).
    let (d1, n1) = match right.location {
        Location::At(b) => {
            let d1 = lin(cx(a)).mul(&lin(cx(b)));
            let n1 = Bi::affine(f.left).mul(&lin(cx(b))).add(&Bi::affine(f.right).mul(&lin(cx(a))));
            (d1, n1)
        }
        Location::Infinity => {
            let d1 = lin(cx(a)).mul(&lin(c));
            let rest = Affine { c0: f.right.c0 - f.left.c0, c1: f.right.c1 - f.left.c1 };
            let mut n1 = Bi::affine(f.left).mul(&lin(c)).add(&Bi::affine(rest).mul(&lin(cx(a))));
            if let Some(mu) = f.exp_rate {
                n1 = n1.add(&Bi::affine(mu).mul(&d1));
            }
            (d1, n1)
        }
    };
    let d1sq = d1.mul(&d1);
    let p2 = aa.mul(&d1sq);
    let p1 = aa.mul(&n1.mul(&d1)).scale(cx(2.0)).add(&bb.mul(&d1sq));
    let inner = n1.deriv().mul(&d1).add(&n1.mul(&d1.deriv()).scale(cx(-1.0))).add(&n1.mul(&n1));
    let p0 = aa.mul(&inner).add(&bb.mul(&n1.mul(&d1))).add(&cc.mul(&d1sq));
    Ok([p2, p1, p0])
}

/// Below this size (relative to the coefficients') the three coefficients
/// at an end neither vanish (`VANISH`) nor are clearly nonzero: rounding in
/// the numeric data (nearly coincident horizons, whose exponents grow like
/// 1/κ) has left the equation there undecided. Where they vanish they do so
/// to 1e-13 or better on the problems tried, and where they do not their
/// values are 1e-4 (Schwarzschild–de Sitter at Λ = 1e-4, scales 100 apart)
/// to 2 of their size; near the Nariai limit 9ΛM² → 1 the rounding reaches
/// 1e-8 at 9ΛM² = 0.999 (caught here) and 1e-4 at 0.9999 (not: there the
/// continued fraction's first row is found trivial and it says so).
const UNDECIDED: f64 = 1e-6;

/// At or below this size (relative) the coefficients vanish at an end.
const VANISH: f64 = 1e-9;

/// Divides out of the three coefficients the factors (s − s₀) they share at
/// each of `points`, so that the equation stays non-trivial there; an error
/// where their values at a point lie between [`VANISH`] and [`UNDECIDED`]
/// of their size (the order of the zero is then not known).
pub(crate) fn divide_common(c: &mut [Bi; 3], points: &[f64]) -> Result<()> {
    for &s0 in points {
        for _ in 0..64 {
            let size = c.iter().map(|p| p.size()).fold(0.0, f64::max);
            if size == 0.0 {
                return Err(usage("the equation for the remainder vanishes identically"));
            }
            let at = c.iter().flat_map(|p| p.at(s0)).map(|v| v.norm()).fold(0.0, f64::max) / size;
            if at > VANISH && at <= UNDECIDED {
                return Err(usage(format!(
                    "the equation's coefficients at an end are {at:.1e} of their size, neither zero nor clearly not: the numeric data lose too many digits there (nearly coincident horizons?)"
                )));
            }
            if at > VANISH {
                break;
            }
            let next: Vec<Bi> = c.iter().map(|p| p.divide(s0).0).collect();
            *c = [next[0].clone(), next[1].clone(), next[2].clone()];
        }
    }
    Ok(())
}

/// Why a grid gave no eigenvalues.
fn grid_failure(n: usize, why: &str) -> Error {
    usage(format!("the collocation problem on {n} intervals could not be solved: {why}"))
}

/// The eigenvalues of the collocation problem on `n` intervals, by shift
/// and invert about σ.
fn grid_eigenvalues(r: &Remainder, n: usize, sigma: Complex64) -> Result<Vec<Complex64>> {
    if r.c.iter().map(|p| p.deg_w()).max().unwrap_or(0) == 0 {
        return Err(usage("the equation does not depend on the spectral parameter"));
    }
    let m = grid_matrices(r, n)?;
    pencil_eigenvalues(m, sigma).map_err(|why| grid_failure(n, &why))
}

/// The collocation matrices M_d of Σ_d ω^d M_d v = 0 on `n` intervals, each
/// row scaled to unit largest entry.
fn grid_matrices(r: &Remainder, n: usize) -> Result<Vec<DMatrix<Complex64>>> {
    let (x, d) = super::collocation::cheb(n);
    let d2 = &d * &d;
    let np = n + 1;
    let k = r.c.iter().map(|p| p.deg_w()).max().unwrap_or(0);
    let mut m: Vec<DMatrix<Complex64>> = vec![DMatrix::zeros(np, np); k + 1];
    for j in 0..np {
        let s = (r.s_of_x)(x[j]);
        let vals: Vec<Vec<Complex64>> = r.c.iter().map(|p| p.at(s)).collect();
        let mut big = 0.0f64;
        for (deg, md) in m.iter_mut().enumerate() {
            let g = |i: usize| vals[i].get(deg).copied().unwrap_or(ZERO);
            let (c2, c1, c0) = (g(0), g(1), g(2));
            for col in 0..np {
                let mut v = c2 * d2[(j, col)] + c1 * d[(j, col)];
                if col == j {
                    v += c0;
                }
                md[(j, col)] = v;
                big = big.max(v.norm());
            }
        }
        if !(big > 0.0 && big.is_finite()) {
            return Err(grid_failure(n, "a collocation row vanishes or is not finite"));
        }
        for md in m.iter_mut() {
            for col in 0..np {
                md[(j, col)] /= big;
            }
        }
    }
    Ok(m)
}

/// The eigenvalues ω of the polynomial eigenvalue problem Σ_d ω^d M_d v = 0
/// (`m[d]` = M_d, square, at least two of them): ω is scaled to balance the
/// first and last matrices, the companion linearisation A z = ω B z
/// (z = (v, ωv, …)) is solved by shift and invert about σ (nalgebra's LU and
/// a bounded Schur iteration), infinite eigenvalues of the pencil are
/// dropped. The error says why there are none (σ an eigenvalue, the
/// iteration at its limit).
pub(crate) fn pencil_eigenvalues(mut m: Vec<DMatrix<Complex64>>, sigma: Complex64) -> std::result::Result<Vec<Complex64>, String> {
    let k = m.len().saturating_sub(1);
    if k == 0 {
        return Err("the problem does not depend on the spectral parameter".into());
    }
    let np = m[0].nrows();
    // ω = γ ω̃ with γ balancing the first and last coefficient matrices
    // (a better conditioned companion form); the eigenvalues are scaled back.
    let fro = |x: &DMatrix<Complex64>| x.iter().map(|v| v.norm_sqr()).sum::<f64>().sqrt();
    let (n0, nk) = (fro(&m[0]), fro(&m[k]));
    let gamma = if n0 > 0.0 && nk > 0.0 { (n0 / nk).powf(1.0 / k as f64) } else { 1.0 };
    for (deg, md) in m.iter_mut().enumerate() {
        *md *= cx(gamma.powi(deg as i32));
    }
    let sigma = sigma / gamma;
    let size = k * np;
    let mut a = DMatrix::<Complex64>::zeros(size, size);
    let mut b = DMatrix::<Complex64>::zeros(size, size);
    for blk in 0..k {
        if blk + 1 < k {
            for i in 0..np {
                a[(blk * np + i, (blk + 1) * np + i)] = cx(1.0);
                b[(blk * np + i, blk * np + i)] = cx(1.0);
            }
        }
    }
    let last = (k - 1) * np;
    for (deg, md) in m.iter().enumerate().take(k) {
        for i in 0..np {
            for j in 0..np {
                a[(last + i, deg * np + j)] = -md[(i, j)];
            }
        }
    }
    for i in 0..np {
        for j in 0..np {
            b[(last + i, last + j)] = m[k][(i, j)];
        }
    }
    let t = &a - &b * sigma;
    let kmat = t.lu().solve(&b).ok_or("the shifted matrix is singular (the shift is an eigenvalue)")?;
    let theta = crate::analysis::numeric::try_eigenvalues(&kmat)
        .ok_or_else(|| format!("the eigenvalue iteration stopped at its limit of {} steps", crate::analysis::numeric::qr_limit(size)))?;
    let top = theta.iter().map(|t| t.norm()).fold(0.0, f64::max);
    Ok(theta
        .into_iter()
        .filter(|t| t.norm() > 1e-13 * top)
        .map(|t| (sigma + 1.0 / t) * gamma)
        .filter(|w| w.re.is_finite() && w.im.is_finite())
        .collect())
}

/// One eigenvalue kept by the global method.
#[derive(Clone, Copy, Debug)]
pub struct SpectralValue {
    /// The eigenvalue on the finer grid.
    pub omega: Complex64,
    /// |ω(⌊3N/2⌋) − ω(N)|.
    pub change: f64,
}

/// What the global method found.
#[derive(Clone, Debug)]
pub struct Spectral {
    /// The eigenvalues found on both grids, by |Im ω| then Re ω.
    pub values: Vec<SpectralValue>,
    /// The two grids (numbers of intervals).
    pub grids: (usize, usize),
    /// Eigenvalues of the finer grid that did not persist (dropped).
    pub dropped: usize,
    /// The degree in ω of the polynomial eigenvalue problem.
    pub degree: usize,
    /// The tolerance of persistence (relative to max(|ω|, scale)).
    pub tol: f64,
    /// The factored behaviour and the map.
    pub factors: Factors,
}

/// The default grid (intervals) of the global method.
pub const DEFAULT_GRID: usize = 48;
/// Relative size (to max(|ω|, scale)) below which an eigenvalue's imaginary
/// part is rounding, not damping: a normal mode's discretised eigenvalue
/// comes out with |Im ω| of 1e-13 of either sign.
pub const REAL_TOL: f64 = 1e-8;

/// Whether `w` is real up to [`REAL_TOL`].
pub fn nearly_real(w: Complex64, scale: f64) -> bool {
    w.im.abs() <= REAL_TOL * w.norm().max(scale)
}

/// The order in which overtones are numbered: by |Im ω| (the damping,
/// common practice for quasinormal modes), a real eigenvalue counting as
/// undamped, and by Re ω among equal damping (so that normal modes, all
/// real, are numbered by frequency).
pub fn overtone_order(p: Complex64, q: Complex64, scale: f64) -> std::cmp::Ordering {
    let damping = |w: Complex64| if nearly_real(w, scale) { 0.0 } else { w.im.abs() };
    damping(p).total_cmp(&damping(q)).then(p.re.total_cmp(&q.re))
}

/// The default persistence tolerance.
pub const DEFAULT_PERSIST: f64 = 1e-5;

/// Every eigenvalue of the boundary problem that the grids of `n` and
/// ⌊3n/2⌋ intervals agree on to `tol`·max(|ω|, scale), shifting about
/// `sigma` (a point near the region of interest, not an eigenvalue).
pub fn try_spectral(bp: &BoundaryProblem, n: usize, tol: f64, sigma: Complex64, theta: f64) -> Result<Spectral> {
    if !(8..=400).contains(&n) {
        return Err(usage(format!("the grid must have 8 to 400 intervals, not {n}")));
    }
    let f = factors(bp)?;
    let r = remainder(bp, &f, theta, 1.0, None)?;
    let n2 = n + n / 2;
    let coarse = grid_eigenvalues(&r, n, sigma)?;
    let fine = grid_eigenvalues(&r, n2, sigma)?;
    let mut values = persisting(&coarse, &fine, tol, bp.scale);
    // Shift and invert maps a nearly singular A − σB to eigenvalues at σ
    // itself on every grid: they persist, but they are the shift, not the
    // problem's (seen on Schwarzschild–de Sitter, where σ lay near a mode).
    values.retain(|v| (v.omega - sigma).norm() > 1e-7 * sigma.norm().max(bp.scale));
    values.sort_by(|p, q| overtone_order(p.omega, q.omega, bp.scale));
    let degree = r.c.iter().map(|p| p.deg_w()).max().unwrap_or(0);
    Ok(Spectral { dropped: fine.len() - values.len(), values, grids: (n, n2), degree, tol, factors: f })
}

/// The eigenvalues of the finer discretisation that the coarser one has
/// too, to `tol`·max(|ω|, `scale`), each as the other's nearest: the rest
/// moved with the discretisation and are not eigenvalues of the problem.
pub(crate) fn persisting(coarse: &[Complex64], fine: &[Complex64], tol: f64, scale: f64) -> Vec<SpectralValue> {
    let nearest = |w: Complex64, set: &[Complex64]| -> Option<(usize, f64)> {
        set.iter().enumerate().map(|(i, v)| (i, (v - w).norm())).min_by(|p, q| p.1.total_cmp(&q.1))
    };
    let mut values = Vec::new();
    for w in fine {
        let Some((i, dist)) = nearest(*w, coarse) else { continue };
        if dist.is_nan() || dist > tol * w.norm().max(scale) {
            continue;
        }
        // Mutual: the coarse value's nearest fine value is this one.
        if nearest(coarse[i], fine).is_some_and(|(_, back)| back < dist) {
            continue;
        }
        values.push(SpectralValue { omega: *w, change: dist });
    }
    values
}

/// A rectangle of the complex plane.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Region {
    /// Re ω from, to.
    pub re: (f64, f64),
    /// Im ω from, to.
    pub im: (f64, f64),
}

impl Region {
    /// Whether ω lies in the closed rectangle.
    pub fn contains(&self, w: Complex64) -> bool {
        w.re >= self.re.0 && w.re <= self.re.1 && w.im >= self.im.0 && w.im <= self.im.1
    }
    /// A shift for the inversion: inside the rectangle, off its symmetry lines.
    pub fn shift(&self) -> Complex64 {
        Complex64::new(self.re.0 + 0.5377 * (self.re.1 - self.re.0), self.im.1.max(0.0) + 0.6143 * (self.im.1 - self.im.0))
    }
}

/// The angle by which the ray to an irregular infinity is turned into the
/// complex z-plane for eigenvalues in the lower half-plane (complex
/// scaling): along it the wanted outgoing solution is the recessive one, so
/// the unwanted one is not smooth in the compactified coordinate and the
/// collocation problem stays well conditioned. Turning by more than π/2
/// covers the negative imaginary axis as well.
pub const TURN: f64 = 0.6 * std::f64::consts::PI;

/// The parts of the plane solved separately, with the turn of the ray for
/// each: the upper half-plane on the real axis, the lower right quadrant
/// (with the negative imaginary axis) turned by +TURN, the lower left one by −TURN.
fn sectors(bp: &BoundaryProblem) -> Vec<(f64, Region)> {
    let big = 1e300;
    let (up, right, left) =
        (Region { re: (-big, big), im: (0.0, big) }, Region { re: (0.0, big), im: (-big, 0.0) }, Region { re: (-big, 0.0), im: (-big, 0.0) });
    if bp.ends[1].nature == Nature::IrregularRank1 && bp.ends[1].location == Location::Infinity {
        vec![(0.0, up), (TURN, right), (-TURN, left)]
    } else {
        vec![(0.0, Region { re: (-big, big), im: (-big, big) })]
    }
}

impl Region {
    /// The overlap with another rectangle, if any.
    pub fn clip(&self, o: &Region) -> Option<Region> {
        let re = (self.re.0.max(o.re.0), self.re.1.min(o.re.1));
        let im = (self.im.0.max(o.im.0), self.im.1.min(o.im.1));
        (re.0 < re.1 && im.0 < im.1).then_some(Region { re, im })
    }
}

/// Every eigenvalue of the global method in `region`, part by part of the
/// plane (see [`TURN`]), merged and sorted by |Im ω|.
pub fn spectral_in(bp: &BoundaryProblem, region: Region, n: usize, tol: f64) -> Result<Spectral> {
    let mut out: Option<Spectral> = None;
    for (theta, part) in sectors(bp) {
        let Some(r) = region.clip(&part) else { continue };
        let sp = try_spectral(bp, n, tol, r.shift(), theta)?;
        let keep: Vec<SpectralValue> = sp.values.iter().copied().filter(|v| r.contains(v.omega)).collect();
        match &mut out {
            None => out = Some(Spectral { values: keep, ..sp }),
            Some(o) => {
                o.values.extend(keep);
                o.dropped += sp.dropped;
            }
        }
    }
    let mut sp = out.ok_or_else(|| usage("the region is empty"))?;
    sp.values.sort_by(|p, q| overtone_order(p.omega, q.omega, bp.scale));
    Ok(sp)
}

/// What [`modes_in`] returns: the spectral result, the confirmed modes, and
/// the spectral values that were not confirmed with the reason.
pub type Confirmed = (Spectral, Vec<Found>, Vec<(Complex64, String)>);

/// The grids [`seeds`] tries in turn: a coarse one first (the least damped
/// modes persist on it, at an eighth of the cost), then the default.
pub const SEED_GRIDS: [usize; 2] = [20, DEFAULT_GRID];

/// Seeds for overtones lo..=hi: the eigenvalues of the global method in the
/// lower right quadrant (the negative imaginary axis and the nearly real
/// positive axis included) in [`overtone_order`], from the first grid and
/// shift ([`SEED_GRIDS`] × [`SHIFTS`]) that gives all of them, else as many
/// as the most any gave (none when the method cannot run on the problem).
pub fn seeds(bp: &BoundaryProblem, (lo, hi): (u32, u32)) -> Vec<Complex64> {
    let want = (hi - lo + 1) as usize;
    let mut out: Vec<Complex64> = Vec::new();
    for n in SEED_GRIDS {
        for shift in SHIFTS {
            // A grid or shift that resolves nothing persistent is no reason
            // to skip the next one.
            let Ok((lower, _)) = lower_right_from(bp, n, DEFAULT_PERSIST, shift) else { continue };
            let these: Vec<Complex64> = lower.iter().map(|v| v.omega).skip(lo as usize).take(want).collect();
            if these.len() > out.len() {
                out = these;
            }
            if out.len() == want {
                return out;
            }
        }
    }
    out
}

/// Seeds for the eigenvalues lo..=hi of a real eigenvalue problem (a
/// [`SpectrumKind::Bound`](super::boundary::SpectrumKind) problem whose
/// spectral parameter enters polynomially, such as the normal modes of a
/// cavity written in ω): the nearly real eigenvalues of the global method,
/// upward; when the spectrum is symmetric under ω → −ω (the parameter
/// enters only as ω²), the non-negative ones. From the first grid of
/// [`SEED_GRIDS`] that gives all of them, else as many as the default grid
/// found.
pub fn real_seeds(bp: &BoundaryProblem, (lo, hi): (u32, u32)) -> Vec<Complex64> {
    let want = (hi - lo + 1) as usize;
    let even = even_in_omega(bp);
    let mut out = Vec::new();
    for n in SEED_GRIDS {
        let Ok(sp) = try_spectral(bp, n, DEFAULT_PERSIST, Complex64::new(0.6, -0.8) * bp.scale, 0.0) else { continue };
        let mut real: Vec<f64> = sp
            .values
            .iter()
            .filter(|v| nearly_real(v.omega, bp.scale) && (!even || v.omega.re >= -REAL_TOL * bp.scale))
            .map(|v| v.omega.re)
            .collect();
        real.sort_by(f64::total_cmp);
        out = real.into_iter().skip(lo as usize).take(want).map(|x| Complex64::new(x, 0.0)).collect();
        if out.len() == want {
            break;
        }
    }
    out
}

/// Whether the equation holds ω only in even powers (so that ω and −ω are
/// eigenvalues together).
pub fn even_in_omega(bp: &BoundaryProblem) -> bool {
    [&bp.ode.a, &bp.ode.b, &bp.ode.c].iter().all(|p| p.c.iter().all(|row| row.iter().skip(1).step_by(2).all(|c| c.norm() == 0.0)))
}

/// Whether ω enters the equation beyond linearly.
pub fn polynomial_in_omega(bp: &BoundaryProblem) -> bool {
    [&bp.ode.a, &bp.ode.b, &bp.ode.c].iter().any(|p| p.c.iter().any(|row| row.iter().skip(2).any(|c| c.norm() > 0.0)))
}

/// The persistence tolerance of seeds that are then polished and checked
/// by two other methods (the overtone ladder of a region search): looser
/// than [`DEFAULT_PERSIST`], since a value that persists only this well is
/// never reported as it is — only the polish, confirmed by the check, is.
pub const SEED_PERSIST: f64 = 1e-3;

/// The shifts of the inversion, in units of the problem's scale, that
/// [`lower_right`] tries in turn: one in the lower half-plane among the
/// least damped modes, and one in the upper half-plane, away from every
/// mode, for when the first lies so near an eigenvalue of the discretised
/// problem that nothing persists between the grids (seen on
/// Schwarzschild–de Sitter).
pub const SHIFTS: [Complex64; 2] = [Complex64::new(0.6, -0.8), Complex64::new(0.54, 0.61)];

/// The eigenvalues of the global method in the lower right quadrant (the
/// negative imaginary axis and the nearly real positive axis included), in
/// [`overtone_order`], on `n` and ⌊3n/2⌋ intervals persisting to `tol`,
/// with the whole result: from the first of [`SHIFTS`] that gives any.
pub fn lower_right(bp: &BoundaryProblem, n: usize, tol: f64) -> Result<(Vec<SpectralValue>, Spectral)> {
    let first = lower_right_from(bp, n, tol, SHIFTS[0]);
    match &first {
        Ok((lower, _)) if lower.is_empty() => lower_right_from(bp, n, tol, SHIFTS[1]).or(first),
        _ => first,
    }
}

/// [`lower_right`] with the inversion's shift `shift`·scale.
fn lower_right_from(bp: &BoundaryProblem, n: usize, tol: f64, shift: Complex64) -> Result<(Vec<SpectralValue>, Spectral)> {
    let sp = try_spectral(bp, n, tol, shift * bp.scale, TURN)?;
    let lower = sp
        .values
        .iter()
        .copied()
        .filter(|v| (v.omega.im < 0.0 || nearly_real(v.omega, bp.scale)) && v.omega.re >= -REAL_TOL * v.omega.norm().max(bp.scale))
        .collect();
    Ok((lower, sp))
}

/// Whether the equation is unchanged by ω → −ω̄ together with complex
/// conjugation (real coefficients in z, with ω entering as iω does: the
/// coefficient of ωʲ real for even j and imaginary for odd j, after one
/// common phase): then ω is a mode exactly when −ω̄ is, since the ends'
/// conditions (ingoing, outgoing, normalisable) are mapped onto themselves.
pub fn mirror_symmetric(bp: &BoundaryProblem) -> bool {
    let polys = [&bp.ode.a.c, &bp.ode.b.c, &bp.ode.c.c];
    let all = || polys.iter().flat_map(|p| p.iter().flat_map(|r| r.iter().enumerate()));
    let Some(top) = all().map(|(_, v)| *v).max_by(|p, q| p.norm().total_cmp(&q.norm())) else { return false };
    if !(top.norm() > 0.0 && top.norm().is_finite()) {
        return false;
    }
    let phase = top / top.norm();
    all().all(|(j, v)| {
        let v = v / phase;
        let mirrored = if j % 2 == 0 { v.conj() } else { -v.conj() };
        (mirrored - v).norm() <= 1e-13 * top.norm()
    })
}

/// A mode found by the global method and polished by direct integration.
#[derive(Clone, Debug)]
pub struct Found {
    /// The spectral eigenvalue.
    pub spectral: SpectralValue,
    /// The root of the mismatch between the ends, seeded there.
    pub polished: IntRoot,
}

/// The eigenvalues of the global method in `region`, each polished by
/// direct integration between the ends; a value whose polish did not
/// converge, or moved more than 100 × the persistence tolerance (the
/// integration landed on another root), or repeats a mode already found,
/// is not returned but listed in the third result with its reason.
pub fn modes_in(bp: &BoundaryProblem, region: Region, n: usize, tol: f64) -> Result<Confirmed> {
    let sp = spectral_in(bp, region, n, DEFAULT_PERSIST)?;
    let mut found: Vec<Found> = Vec::new();
    let mut rejected = Vec::new();
    for v in sp.values.iter() {
        let r = super::ends::find_root(bp, v.omega, tol);
        let reach = 100.0 * sp.tol * v.omega.norm().max(bp.scale);
        if !r.converged {
            rejected.push((v.omega, format!("direct integration from it did not converge: {}", r.reason)));
        } else if (r.omega - v.omega).norm() > reach {
            rejected.push((v.omega, format!("direct integration from it moved to {} (farther than {reach:.1e})", fmt_c(r.omega))));
        } else if found.iter().any(|f| (f.polished.omega - r.omega).norm() <= 1e-8 * r.omega.norm().max(bp.scale)) {
            rejected.push((v.omega, "it polishes to a mode already found".into()));
        } else {
            found.push(Found { spectral: *v, polished: r });
        }
    }
    Ok((sp, found, rejected))
}

/// A root of the collocation problem with the ends' behaviour frozen at
/// each trial value (see [`collocation_root`]).
#[derive(Clone, Debug)]
pub struct CollocationRoot {
    /// The root on the finer grid (the last iterate when not converged).
    pub omega: Complex64,
    /// True when both grids' searches converged and their roots agree.
    pub converged: bool,
    /// The two grids (numbers of intervals) of the last attempt.
    pub grids: (usize, usize),
    /// Why the search stopped, in words.
    pub reason: String,
}

/// The coarser grids [`collocation_root`] tries in turn (each with ⌊3N/2⌋).
pub const ROOT_GRIDS: [usize; 4] = [32, 48, 72, 108];

/// Muller iterations per grid in [`collocation_root`].
const ROOT_ITER: usize = 40;

/// A fixed vector of unit-modulus entries for the bordering (deterministic,
/// with no structure the collocation matrix could be orthogonal to).
fn border(np: usize, a: f64, b: f64) -> nalgebra::DVector<Complex64> {
    nalgebra::DVector::from_fn(np, |i, _| Complex64::from_polar(1.0, a * i as f64 + b))
}

/// The bordered scalar g(ω) = −1/(cᵀA(ω)⁻¹b) of the collocation matrix A(ω)
/// on `n` intervals, with the ends' behaviour frozen at ω: zero exactly where
/// A(ω) is singular, analytic in ω where the behaviour is.
fn bordered(bp: &BoundaryProblem, n: usize, theta: f64, stretch: f64, w: Complex64) -> std::result::Result<Complex64, String> {
    let f = frozen_factors(bp, w).map_err(|e| e.message)?;
    let r = remainder(bp, &f, theta, stretch, Some(w)).map_err(|e| e.message)?;
    let a = grid_matrices(&r, n).map_err(|e| e.message)?.swap_remove(0);
    let np = n + 1;
    let Some(y) = a.lu().solve(&border(np, 0.7, 0.3)) else { return Ok(ZERO) };
    let d = border(np, 1.9, 1.1).iter().zip(y.iter()).fold(ZERO, |acc, (c, y)| acc + c * y);
    let g = -1.0 / d;
    if g.re.is_finite() && g.im.is_finite() {
        Ok(g)
    } else {
        Err("the bordered collocation system is not finite".into())
    }
}

/// An eigenvalue by Chebyshev collocation where the behaviour at the ends
/// is not affine in ω (e^(−√(μ² − ω²) z) of a massive field, say), so that
/// the global method's polynomial eigenvalue problem cannot be formed: at
/// each trial ω the behaviour chosen at both ends is evaluated and factored
/// out, the remainder's collocation matrix A(ω) formed as in [`try_spectral`],
/// and the root of the bordered scalar −1/(cᵀA(ω)⁻¹b) (fixed vectors b, c;
/// the bordering technique, common practice) found by Muller's method from
/// `seed`. The grids N and ⌊3N/2⌋ must give the same root to
/// `agree` × max(|ω|, scale); N runs through [`ROOT_GRIDS`] until they do,
/// and the result says why it stopped.
pub fn collocation_root(bp: &BoundaryProblem, seed: Complex64, agree: f64) -> CollocationRoot {
    let right = &bp.ends[1];
    let theta = match (right.location, right.nature, right.condition) {
        (Location::Infinity, Nature::IrregularRank1, Condition::Outgoing) if seed.im < 0.0 => {
            if seed.re >= 0.0 {
                TURN
            } else {
                -TURN
            }
        }
        _ => 0.0,
    };
    // A slowly decaying or growing exponential (a quasi-bound state near
    // threshold) lives far out: the map is stretched to the geometric mean
    // of the anchor length and the decay length 1/|μ| at the seed, so that
    // both the end region and the far region are resolved.
    let stretch = match (right.location, frozen_factors(bp, seed)) {
        (Location::Infinity, Ok(Factors { exp_rate: Some(mu), .. })) => {
            let Location::At(a) = bp.ends[0].location else {
                return CollocationRoot { omega: seed, converged: false, grids: (0, 0), reason: "the left end must be finite".into() };
            };
            let l0 = anchor_length(bp, a);
            (1.0 / (mu.c0.norm() * l0)).sqrt().clamp(1.0, 1e3)
        }
        _ => 1.0,
    };
    let tol = 1e-3 * agree;
    let root = |n: usize, from: Complex64| {
        let g = |w: Complex64| bordered(bp, n, theta, stretch, w);
        super::roots::muller(&g, from, 1e-4, tol, ROOT_ITER)
    };
    let mut last = CollocationRoot { omega: seed, converged: false, grids: (0, 0), reason: "no grid was tried".into() };
    for n in ROOT_GRIDS {
        let n2 = n + n / 2;
        let (w1, _, s1) = root(n, seed);
        if let Err(e) = s1 {
            last = CollocationRoot { omega: w1, converged: false, grids: (n, n2), reason: format!("grid {n}: {e}") };
            continue;
        }
        let (w2, _, s2) = root(n2, w1);
        if let Err(e) = s2 {
            last = CollocationRoot { omega: w2, converged: false, grids: (n, n2), reason: format!("grid {n2}: {e}") };
            continue;
        }
        let change = (w2 - w1).norm();
        let reach = agree * w2.norm().max(bp.scale);
        if change <= reach {
            return CollocationRoot { omega: w2, converged: true, grids: (n, n2), reason: format!("grids {n} and {n2} agree to {change:.1e}") };
        }
        last = CollocationRoot {
            omega: w2,
            converged: false,
            grids: (n, n2),
            reason: format!("grids {n} and {n2} differ by {change:.1e} (more than {reach:.1e}) at the finest grid tried"),
        };
    }
    last
}

/// A complex number to 8 decimals, for sentences.
pub(crate) fn fmt_c(w: Complex64) -> String {
    format!("{:.8}{:+.8}i", w.re, w.im)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn polynomial_helpers() {
        // (s − 2)(s + 1) = s² − s − 2, divided by (s − 2) leaves s + 1, no remainder.
        let p = Bi::in_s(&[cx(-2.0), cx(1.0)]).mul(&Bi::in_s(&[cx(1.0), cx(1.0)]));
        assert_eq!(p.at(3.0)[0], cx(4.0));
        let (q, r) = p.divide(2.0);
        assert!(r < 1e-15);
        assert_eq!(q.at(5.0)[0], cx(6.0));
        // (s + 1)∘(2s) = 2s + 1
        assert_eq!(Bi::in_s(&[cx(1.0), cx(1.0)]).compose(&Bi::in_s(&[ZERO, cx(2.0)])).at(1.5)[0], cx(4.0));
    }
}
