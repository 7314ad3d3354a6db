//! Continued fractions on three-term recurrences (E. W. Leaver, Proc. R.
//! Soc. Lond. A 402 (1985) 285): the recurrence derived by `series` is
//! evaluated numerically in (n, ω), the n-th inversion of its continued
//! fraction is the mode condition for overtone n, and the tail beyond the
//! truncation depth is the large-n expansion of a_{n+1}/a_n in powers of
//! n^(−1/2) (H.-P. Nollert, Phys. Rev. D 47 (1993) 5253), solved here order
//! by order from the recurrence itself. Roots are found with Muller's method.

use super::dd::Scalar;
use crate::algebra::GRat;
use crate::error::{Error, ErrorKind, Result};
use crate::series::Recurrence;
use num_complex::Complex64;

/// A polynomial Σ `c[a][b]` nᵃ ωᵇ with complex coefficients.
#[derive(Clone, Debug, Default)]
pub struct NPoly {
    /// `c[a][b]` multiplies nᵃ ωᵇ.
    pub c: Vec<Vec<Complex64>>,
}

impl NPoly {
    /// The coefficients of ωᵇ at n (b = 0, 1, …), trailing exact zeros removed.
    pub fn at_n(&self, n: f64) -> Vec<Complex64> {
        let nb = self.c.iter().map(|r| r.len()).max().unwrap_or(0);
        let mut coeffs = vec![Complex64::new(0.0, 0.0); nb];
        for (a, row) in self.c.iter().enumerate() {
            for (b, c) in row.iter().enumerate() {
                coeffs[b] += c * n.powi(a as i32);
            }
        }
        while coeffs.last().is_some_and(|c| c.norm() == 0.0) {
            coeffs.pop();
        }
        coeffs
    }

    /// The coefficients of nᵃ at ω (a = 0, 1, …).
    pub fn at_omega(&self, w: Complex64) -> Vec<Complex64> {
        self.c
            .iter()
            .map(|row| {
                let mut acc = Complex64::new(0.0, 0.0);
                for c in row.iter().rev() {
                    acc = acc * w + c;
                }
                acc
            })
            .collect()
    }
}

/// A recurrence Σⱼ cⱼ(n, ω) a_{n+1−j} = 0 with numeric coefficients.
#[derive(Clone, Debug)]
pub struct NumRecurrence {
    /// cⱼ, j = 0..k−1 (with an adjoined rate χ, their part free of χ).
    pub terms: Vec<NPoly>,
    /// An adjoined square root χ(ω) the coefficients also hold.
    pub rate: Option<NumRate>,
    /// The arithmetic a recurrence of more than three terms is reduced and
    /// solved in.
    pub precision: Precision,
    /// What sets the truncation depth root searches start from, where the
    /// series' other singular points crowd the unit circle (`None`: the
    /// caller's depth).
    pub crowding: Option<Crowding>,
}

/// A series whose other singular points lie just outside the unit disc
/// needs thousands of terms before its tail settles, and shallower
/// truncations have roots of their own, which a search started there
/// follows. The mode's series falls as R⁻ⁿ; the far end's other solution,
/// (1 − u)^δ, contributes n^(−1−δ): the first settles below the second
/// only once n ln R exceeds a multiple of 1 + Re δ.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Crowding {
    /// The convergence radius R.
    pub radius: f64,
    /// δ(ω) = δ₀ + δ₁ω, the far end's other exponent less the chosen one
    /// (zero where the far end is not a finite regular point).
    pub gap: [Complex64; 2],
}

/// The first depth of a crowded series is at least this over R − 1.
const FIRST_DEPTH_SCALE: f64 = 64.0;

/// … and at least this times (1 + Re δ) / ln R (measured: the modes of
/// Schwarzschild–de Sitter at Λ = 1e-3, 1e-4 settle from about 4 to 5
/// times it).
const GAP_SCALE: f64 = 5.0;

/// The largest first depth a crowded series is given.
const FIRST_DEPTH_CAP: usize = 1 << 15;

impl Crowding {
    /// The first truncation depth for a search from ω, a power of two.
    /// Beyond `FIRST_DEPTH_CAP` (a far end so distant that a search from a
    /// rough seed there would find another mode) the caller's depth, the
    /// search following its roots up from there.
    pub fn first_depth(&self, w: Complex64) -> usize {
        let delta = (self.gap[0] + self.gap[1] * w).re.max(0.0);
        let n = (FIRST_DEPTH_SCALE / (self.radius - 1.0)).max(GAP_SCALE * (1.0 + delta) / self.radius.ln());
        if n.is_finite() && n <= FIRST_DEPTH_CAP as f64 {
            (n as usize).next_power_of_two()
        } else {
            0
        }
    }
}

/// The relative change on doubling at which a search in doubles hands a
/// double-double recurrence's root over to be polished (the doubles' noise
/// there is about 1e-9).
const COARSE_TOL: f64 = 1e-7;

/// The largest truncation depth of a search wholly in double-double.
const DD_MAX_DEPTH: usize = 1 << 15;

/// The relative difference at the seed between an inversion in doubles and
/// in double-double below which the search's first stage runs in doubles:
/// the inversion at a seed a few percent from the root is a few percent of
/// its scale, and the doubles' noise must stay below the first stage's
/// tolerance (`COARSE_TOL`) times that (at Λ = 0.002, l = 2, n = 3 a
/// difference of 1e-3 at the seed already let the doubles' roots wander by
/// 1e-4 with the depth).
const TRUSTED: f64 = 1e-6;

/// The arithmetic a recurrence is solved in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Precision {
    /// Complex doubles.
    Double,
    /// Complex double-doubles (about 32 digits, [`super::dd`]): for a
    /// recurrence whose characteristic roots nearly coincide, where doubles
    /// lose half their digits or more.
    DoubleDouble,
}

/// The part of a recurrence's coefficients in an adjoined square root χ
/// (`series::rate`), and χ as a function of ω.
#[derive(Clone, Debug)]
pub struct NumRate {
    /// `powers[j][c]` multiplies χ^(c+1) in cⱼ.
    pub powers: Vec<Vec<NPoly>>,
    /// χ(ω).
    pub branch: RateBranch,
}

/// χ(ω) with χ² = P(ω): the series carries the formal solution e^(−χz) at
/// infinity, so −χ is its rate, taken on the branch the end's condition
/// picks (`ends::pick_rate`, the choice direct integration makes):
/// decaying, Re χ > 0; outgoing, continuous with the massless e^(+iωz).
#[derive(Clone, Debug)]
pub struct RateBranch {
    /// P's numerator and denominator in ω (the other parameters at their values).
    pub square: (NPoly, NPoly),
    /// The condition at infinity.
    pub condition: super::boundary::Condition,
}

impl RateBranch {
    /// χ at ω, `None` where P cannot be evaluated or the condition is not one at infinity.
    pub fn at(&self, w: Complex64) -> Option<Complex64> {
        let p = super::spectrum::eval_in_omega(&self.square, w);
        if !(p.re.is_finite() && p.im.is_finite()) {
            return None;
        }
        let s = p.sqrt();
        super::ends::pick_rate(self.condition, w, -s, s).ok().map(|rate| -rate)
    }

    /// The continuum edge: the first real ω > 0 where χ² = P(ω) changes
    /// sign (P = μ² − ω² for a field of mass μ: the edge is μ, below which
    /// a decaying χ is real). `None` where P keeps its sign or cannot be
    /// evaluated on the real axis.
    pub fn edge(&self) -> Option<f64> {
        let p = |w: f64| {
            let v = super::spectrum::eval_in_omega(&self.square, Complex64::new(w, 0.0)).re;
            v.is_finite().then_some(v)
        };
        super::roots::first_sign_change(&p, 1e-3)
    }
}

impl NumRecurrence {
    /// The coefficients as polynomials in n at ω (χ at its branch);
    /// `None` where χ cannot be evaluated.
    pub fn at_omega(&self, w: Complex64) -> Option<Vec<Vec<Complex64>>> {
        let mut out: Vec<Vec<Complex64>> = self.terms.iter().map(|t| t.at_omega(w)).collect();
        if let Some(rate) = &self.rate {
            let chi = rate.branch.at(w)?;
            for (j, parts) in rate.powers.iter().enumerate() {
                let mut power = Complex64::new(1.0, 0.0);
                for part in parts {
                    power *= chi;
                    let v = part.at_omega(w);
                    if out[j].len() < v.len() {
                        out[j].resize(v.len(), Complex64::new(0.0, 0.0));
                    }
                    for (o, x) in out[j].iter_mut().zip(v) {
                        *o += power * x;
                    }
                }
            }
        }
        Some(out)
    }
}

/// Substitutes numeric values for every parameter except the frequency
/// (field index `freq`) in an exact recurrence. `values` is indexed like the
/// recurrence's field (entry 0, n, and entry `freq` are ignored).
pub fn try_numeric(rec: &Recurrence, values: &[GRat], freq: usize) -> Result<NumRecurrence> {
    try_numeric_at(rec, &complex_values(values), freq)
}

/// Exact values as complex doubles (the display and numeric exit of the exact layer).
fn complex_values(values: &[GRat]) -> Vec<Complex64> {
    values
        .iter()
        .map(|x| {
            let (re, im) = x.to_f64();
            Complex64::new(re, im)
        })
        .collect()
}

/// [`try_numeric`] with the other parameters at complex double values.
pub fn try_numeric_at(rec: &Recurrence, values: &[Complex64], freq: usize) -> Result<NumRecurrence> {
    let mut terms = Vec::new();
    for c in &rec.coeffs {
        if !c.den_factors().is_empty() {
            return Err(Error::new(ErrorKind::Internal, "a recurrence coefficient is not a polynomial"));
        }
        terms.push(super::npoly_at(c.num(), c.scale().to_f64(), values, freq));
    }
    Ok(NumRecurrence { terms, rate: None, precision: Precision::Double, crowding: None })
}

/// [`try_numeric`] for a recurrence whose field holds an adjoined square
/// root χ at index `chi` (`series::rate`): each coefficient split by powers
/// of χ, which is evaluated at each trial ω on `branch`.
pub fn try_numeric_with_rate(rec: &Recurrence, values: &[GRat], freq: usize, chi: usize, branch: RateBranch) -> Result<NumRecurrence> {
    let vals = complex_values(values);
    let mut terms = Vec::new();
    let mut powers = Vec::new();
    for c in &rec.coeffs {
        if !c.den_factors().is_empty() {
            return Err(Error::new(ErrorKind::Internal, "a recurrence coefficient is not a polynomial"));
        }
        let scale = c.scale().to_f64();
        let mut parts = c.num().to_univariate(chi).into_iter().map(|p| super::npoly_at(&p, scale, &vals, freq));
        terms.push(parts.next().unwrap_or_default());
        powers.push(parts.collect());
    }
    Ok(NumRecurrence { terms, rate: Some(NumRate { powers, branch }), precision: Precision::Double, crowding: None })
}

/// The recurrence's three coefficients as polynomials in n at a given ω.
struct Three {
    a: Vec<Complex64>,
    b: Vec<Complex64>,
    g: Vec<Complex64>,
    sa: Ser,
    sb: Ser,
    sg: Ser,
}

impl Three {
    fn new(a: Vec<Complex64>, b: Vec<Complex64>, g: Vec<Complex64>) -> Three {
        let (sa, sb, sg) = (scaled(&a), scaled(&b), scaled(&g));
        Three { a, b, g, sa, sb, sg }
    }
}

fn poly_n(c: &[Complex64], n: f64) -> Complex64 {
    Complex64::poly_at(c, n)
}

/// Length of the fixed series buffers (orders kept in the tail expansion + 3).
const SER: usize = 16;

type Ser = [Complex64; SER];

const ZERO: Complex64 = Complex64::new(0.0, 0.0);

/// Truncated product of two series up to order n − 1.
fn ser_mul(a: &Ser, b: &Ser, n: usize) -> Ser {
    let mut out = [ZERO; SER];
    for i in 0..n {
        if a[i] == ZERO {
            continue;
        }
        for j in 0..(n - i) {
            out[i + j] += a[i] * b[j];
        }
    }
    out
}

/// Σ pᵢ nⁱ / n² written in x = n^(−1/2): Σ pᵢ x^(2(2−i)).
fn scaled(p: &[Complex64]) -> Ser {
    let mut out = [ZERO; SER];
    for (i, c) in p.iter().enumerate().take(3) {
        out[2 * (2 - i)] += c;
    }
    out
}

/// The residual series (orders 0..n−1) of α rₙ r_{n−1} + β r_{n−1} + γ = 0
/// divided by n², for rₙ = Σ C_k x^k, r_{n−1} = Σ C_k x^k (1 − x²)^(−k/2).
fn residual(t: &Three, c: &[Complex64], n: usize) -> Ser {
    let mut r = [ZERO; SER];
    let mut rt = [ZERO; SER];
    for (k, ck) in c.iter().enumerate().take(n) {
        r[k] = *ck;
        // (1 − x²)^(−k/2) = Σ_j binom(−k/2, j) (−1)^j x^(2j)
        let mut coef = 1.0f64;
        let mut j = 0usize;
        while k + 2 * j < n {
            rt[k + 2 * j] += ck * coef;
            coef *= (k as f64 / 2.0 + j as f64) / (j as f64 + 1.0);
            j += 1;
        }
    }
    let rr = ser_mul(&r, &rt, n);
    let mut e = ser_mul(&t.sa, &rr, n);
    let br = ser_mul(&t.sb, &rt, n);
    for i in 0..n {
        e[i] += br[i] + t.sg[i];
    }
    e
}

/// The large-n expansion of the minimal solution's ratio a_{n+1}/a_n,
/// C₀ + C₁ n^(−1/2) + C₂ n^(−1) + …, solved order by order (Nollert 1993).
fn tail_coefficients(t: &Three, k: usize) -> Option<Vec<Complex64>> {
    let deg = |p: &[Complex64]| p.iter().rposition(|c| c.norm() > 0.0);
    if deg(&t.a)? != 2 || deg(&t.g).unwrap_or(0) > 2 || deg(&t.b).unwrap_or(0) > 2 {
        return None;
    }
    let (a2, b2, c2) = (t.a[2], t.b.get(2).copied().unwrap_or_default(), t.g.get(2).copied().unwrap_or_default());
    let disc = (b2 * b2 - 4.0 * a2 * c2).sqrt();
    let r1 = (-b2 + disc) / (2.0 * a2);
    let r2 = (-b2 - disc) / (2.0 * a2);
    let degenerate = disc.norm() <= 1e-9 * (b2.norm() + a2.norm());
    let n = k + 3;
    let mut c = vec![if r1.norm() <= r2.norm() { r1 } else { r2 }];
    if degenerate {
        c[0] = -b2 / (2.0 * a2);
        // Order 2 is quadratic in C₁: fit it from three values.
        let e = |x: Complex64| residual(t, &[c[0], x], 3)[2];
        let (e0, e1, em) = (e(Complex64::new(0.0, 0.0)), e(Complex64::new(1.0, 0.0)), e(Complex64::new(-1.0, 0.0)));
        let qa = (e1 + em) / 2.0 - e0;
        let qb = (e1 - em) / 2.0;
        if qa.norm() == 0.0 {
            return None;
        }
        let d = (qb * qb - 4.0 * qa * e0).sqrt();
        let s1 = (-qb + d) / (2.0 * qa);
        let s2 = (-qb - d) / (2.0 * qa);
        // The minimal solution decays: Re(C₁/C₀) < 0.
        c.push(if (s1 / c[0]).re < (s2 / c[0]).re { s1 } else { s2 });
    }
    // The newest unknown enters its order linearly, always with the same
    // slope (2α₂C₀ + β₂, or 2α₂C₁ when the leading root is double).
    let mut slope: Option<Complex64> = None;
    while c.len() < k {
        let idx = c.len();
        let order = if degenerate { idx + 1 } else { idx };
        if order >= n || order >= SER {
            break;
        }
        let mut c0 = c.clone();
        c0.push(ZERO);
        let e0 = residual(t, &c0, order + 1)[order];
        let sl = match slope {
            Some(s) => s,
            None => {
                let mut c1 = c.clone();
                c1.push(Complex64::new(1.0, 0.0));
                let s = residual(t, &c1, order + 1)[order] - e0;
                slope = Some(s);
                s
            }
        };
        c.push(if sl == ZERO { ZERO } else { -e0 / sl });
    }
    Some(c)
}

/// Why a root search stopped.
#[derive(Clone, Debug, PartialEq)]
pub enum StopReason {
    /// The root changed by less than the tolerance between two depths.
    Converged,
    /// The iteration limit of the root finder was reached.
    RootIterations,
    /// The continued fraction kept changing up to the largest depth.
    DepthLimit,
    /// The recurrence is not of the form the continued fraction needs.
    NotThreeTerm,
    /// The function could not be evaluated (a zero denominator).
    Singular,
    /// A root was found but rejected, with the reason.
    Rejected(String),
    /// Along a scan: the root coincides with the one of this other overtone
    /// (two followed modes met, or one root finder jumped to the other's mode).
    Collided(u32),
    /// Along a scan: the mode converged at the previous point and its root
    /// finder failed here, with the failure.
    Disappeared(Box<StopReason>),
}

impl StopReason {
    /// The reason in words.
    pub fn text(&self) -> String {
        match self {
            StopReason::Converged => "converged".into(),
            StopReason::RootIterations => "the root finder did not converge within its iteration limit".into(),
            StopReason::DepthLimit => "the continued fraction kept changing up to the largest depth".into(),
            StopReason::NotThreeTerm => "the recurrence does not have three terms".into(),
            StopReason::Singular => "the continued fraction could not be evaluated (a zero denominator)".into(),
            StopReason::Rejected(why) => why.clone(),
            StopReason::Collided(n) => format!(
                "collided with overtone {n}: both converge to the same value here (the two modes meet, or the root finder jumped to the other mode); no value is reported for this one"
            ),
            StopReason::Disappeared(why) => {
                format!("disappeared along the scan: the mode followed from the previous point was not found here ({})", why.text())
            }
        }
    }
}

/// The evidence for one root.
#[derive(Clone, Debug)]
pub struct CfRoot {
    /// The frequency found (meaningful only when `converged`).
    pub omega: Complex64,
    /// True when the root converged to the tolerance.
    pub converged: bool,
    /// The final truncation depth.
    pub depth: usize,
    /// |ω(2N) − ω(N)| at the final depth.
    pub depth_change: f64,
    /// |f(ω)| at the root, relative to |β_k|.
    pub residual: f64,
    /// Root-finder iterations at the final depth.
    pub iterations: usize,
    /// Why the search stopped.
    pub stop: StopReason,
    /// Which inversion was used.
    pub inversion: usize,
    /// True when the root is a double one (two modes coincide), settled as
    /// the zero of the inversion's derivative.
    pub double: bool,
}

impl CfRoot {
    /// A search that stopped before any root, at `seed`, for inversion `k`.
    pub fn failed(seed: Complex64, k: usize, stop: StopReason) -> CfRoot {
        CfRoot {
            omega: seed,
            converged: false,
            depth: 0,
            depth_change: f64::NAN,
            residual: f64::NAN,
            iterations: 0,
            stop,
            inversion: k,
            double: false,
        }
    }

    /// A converged root at `w` with nominal evidence, for tests of what is
    /// built on root finders.
    #[cfg(test)]
    pub(crate) fn at(w: Complex64) -> CfRoot {
        CfRoot {
            omega: w,
            converged: true,
            depth: 64,
            depth_change: 0.0,
            residual: 0.0,
            iterations: 1,
            stop: StopReason::Converged,
            inversion: 0,
            double: false,
        }
    }
}

/// The k-th inversion of the continued fraction at ω with truncation depth
/// N, f = β_k + α_k r_k + γ_k / r_{k−1} (its zeros are the eigenvalues), and
/// β_k, the scale its residual is reported against; `None` where a
/// denominator vanishes. The root is sought on f itself, not on f/β_k:
/// β_k can vanish next to a root (an angular eigenvalue continued from the
/// point where its series terminates), where the quotient has a pole beside
/// its zero.
pub fn inversion(rec: &NumRecurrence, w: Complex64, k: usize, depth: usize) -> Option<(Complex64, Complex64)> {
    if rec.terms.len() > 3 {
        // A row k whose coefficients all vanish (a recurrence whose first
        // equation is trivial) gives 0 at every ω: no root there.
        return inversion_reduced(rec, w, k, depth).filter(|(f, scale)| !(f.norm() == 0.0 && scale.norm() == 0.0));
    }
    if rec.terms.len() != 3 {
        return None;
    }
    let [a, b, g]: [Vec<Complex64>; 3] = rec.at_omega(w)?.try_into().ok()?;
    let t = Three::new(a, b, g);
    let depth = depth.max(k + 2);
    let tail = tail_coefficients(&t, 10);
    let n_f = depth as f64;
    let mut r = match &tail {
        Some(c) => {
            let x = n_f.powf(-0.5);
            let mut acc = Complex64::new(0.0, 0.0);
            for (i, ci) in c.iter().enumerate() {
                acc += ci * x.powi(i as i32);
            }
            acc
        }
        None => Complex64::new(0.0, 0.0),
    };
    // Downward: r_{n−1} = −γ_n / (β_n + α_n r_n) for n = N … k+1.
    for n in ((k + 1)..=depth).rev() {
        let nf = n as f64;
        let den = poly_n(&t.b, nf) + poly_n(&t.a, nf) * r;
        if den.re == 0.0 && den.im == 0.0 {
            return None;
        }
        r = -poly_n(&t.g, nf) / den;
    }
    // Upward: r_n = −(β_n + γ_n / r_{n−1}) / α_n from 1/r_{−1} = 0.
    let mut inv_prev = Complex64::new(0.0, 0.0); // 1/r_{n−1}
    for n in 0..k {
        let nf = n as f64;
        let an = poly_n(&t.a, nf);
        if an.re == 0.0 && an.im == 0.0 {
            return None;
        }
        let rn = -(poly_n(&t.b, nf) + poly_n(&t.g, nf) * inv_prev) / an;
        if rn.re == 0.0 && rn.im == 0.0 {
            return None;
        }
        inv_prev = 1.0 / rn;
    }
    let kf = k as f64;
    let bk = poly_n(&t.b, kf);
    let f = bk + poly_n(&t.a, kf) * r + poly_n(&t.g, kf) * inv_prev;
    // A two-term recurrence (γ ≡ 0): f is β_k itself, measured against α_k
    // (the residual is then a_{k+1}/a_k, zero where the series ends).
    if t.g.iter().all(|x| x.norm() == 0.0) {
        return Some((f, poly_n(&t.a, kf)));
    }
    Some((f, bk))
}

/// The k-th inversion for a recurrence of more than three terms: Gaussian
/// elimination of the lowest-index term, one term at a time, down to three
/// (E. W. Leaver, Phys. Rev. D 41 (1990) 2986), then the three-term
/// continued fraction on the reduced coefficients, with a tail from the
/// reduced recurrence at the truncation depth (r ≈ r_N ≈ r_{N−1}).
fn inversion_reduced(rec: &NumRecurrence, w: Complex64, k: usize, depth: usize) -> Option<(Complex64, Complex64)> {
    let polys: Vec<Vec<Complex64>> = rec.at_omega(w)?;
    match rec.precision {
        Precision::Double => reduced_in::<Complex64>(&polys, k, depth),
        Precision::DoubleDouble => reduced_in::<super::dd::Cdd>(&polys, k, depth),
    }
}

/// [`inversion_reduced`] in the arithmetic `T`, from the coefficients'
/// polynomials in n at the given ω.
fn reduced_in<T: Scalar>(polys: &[Vec<Complex64>], k: usize, depth: usize) -> Option<(Complex64, Complex64)> {
    let depth = depth.max(k + 2);
    let kk = polys.len();
    let at_n = |p: &[Complex64], n: usize| T::poly_at(p, n as f64);
    // c[n][j] for n = 0..=depth+1, row by row in one buffer.
    let rows = depth + 2;
    let mut c: Vec<T> = Vec::with_capacity(rows * kk);
    for n in 0..rows {
        c.extend(polys.iter().map(|p| at_n(p, n)));
    }
    let mut terms = kk;
    while terms > 3 {
        let last = terms - 1;
        // Row n's last term multiplies a_{n+1−last} (zero for n < last − 1);
        // it is removed with row n − 1, already reduced (rows in order).
        for n in (last - 1).max(1)..rows {
            let (prev, row) = c[(n - 1) * kk..(n + 1) * kk].split_at_mut(kk);
            let piv = prev[last - 1];
            if piv.is_zero() {
                return None;
            }
            let f = row[last] / piv;
            for j in 1..last {
                row[j] = row[j] - f * prev[j - 1];
            }
        }
        terms -= 1;
    }
    let (al, be, ga) = (|n: usize| c[n * kk], |n: usize| c[n * kk + 1], |n: usize| c[n * kk + 2]);
    // Tail: α r² + β r + γ = 0 at the depth, the root of smaller modulus
    // (in doubles: the backward recursion damps its error).
    let (a2, b2, g2) = (al(depth).to_c(), be(depth).to_c(), ga(depth).to_c());
    let disc = (b2 * b2 - 4.0 * a2 * g2).sqrt();
    let (r1, r2) = ((-b2 + disc) / (2.0 * a2), (-b2 - disc) / (2.0 * a2));
    let mut r = T::from_c(if r1.norm() <= r2.norm() { r1 } else { r2 });
    for n in ((k + 1)..=depth).rev() {
        let den = be(n) + al(n) * r;
        if den.is_zero() {
            return None;
        }
        r = -ga(n) / den;
    }
    let one = T::from_c(Complex64::new(1.0, 0.0));
    let mut inv_prev = T::from_c(Complex64::new(0.0, 0.0));
    for n in 0..k {
        let an = al(n);
        if an.is_zero() {
            return None;
        }
        let rn = -(be(n) + ga(n) * inv_prev) / an;
        if rn.is_zero() {
            return None;
        }
        inv_prev = one / rn;
    }
    let bk = be(k);
    let f = bk + al(k) * r + ga(k) * inv_prev;
    Some((f.to_c(), bk.to_c()))
}

/// Finds the root of the k-th inversion near `seed`, doubling the depth
/// from `depth0` until the root changes by less than `tol` (relative), up to
/// `max_depth`.
pub fn find_root(rec: &NumRecurrence, k: usize, seed: Complex64, tol: f64, depth0: usize, max_depth: usize) -> CfRoot {
    find_root_near(rec, k, seed, super::roots::SPREAD, tol, depth0, max_depth)
}

/// [`find_root`] with Muller's first points ± `spread`·|seed| about the
/// seed, and later ones never wider: below the spacing of the roots near
/// the seed (levels crowding below a continuum edge), so that the search
/// is not drawn to a neighbour.
pub fn find_root_near(rec: &NumRecurrence, k: usize, seed: Complex64, spread: f64, tol: f64, depth0: usize, max_depth: usize) -> CfRoot {
    let r = root_of_inversion(rec, k, seed, spread, tol, depth0, max_depth);
    // Every inversion holds every root; the k-th is the steadiest for the
    // k-th root counted from the least damped. A crowded series counts a
    // second family among them (de Sitter's purely imaginary modes), so
    // where the k-th does not settle the one below is tried.
    let unsettled = !r.converged && matches!(r.stop, StopReason::DepthLimit | StopReason::RootIterations);
    if unsettled && k > 0 && rec.crowding.is_some() {
        let below = root_of_inversion(rec, k - 1, seed, spread, tol, depth0, max_depth);
        if below.converged {
            return below;
        }
    }
    r
}

/// [`find_root_near`] on the k-th inversion alone.
fn root_of_inversion(rec: &NumRecurrence, k: usize, seed: Complex64, spread: f64, tol: f64, depth0: usize, max_depth: usize) -> CfRoot {
    if rec.terms.len() < 3 {
        return CfRoot::failed(seed, k, StopReason::NotThreeTerm);
    }
    let search_to = |rec: &NumRecurrence, seed: Complex64, tol: f64, depth0: usize, max_depth: usize| {
        find_root_spread(
            &|w, depth| inversion(rec, w, k, depth).ok_or_else(|| "a zero denominator in the continued fraction".to_string()),
            k,
            seed,
            spread,
            tol,
            depth0,
            max_depth,
        )
    };
    let search = |rec: &NumRecurrence, seed: Complex64, tol: f64, depth0: usize| search_to(rec, seed, tol, depth0, max_depth);
    let depth0 = depth0.max(rec.crowding.map_or(0, |c| c.first_depth(seed)).min(max_depth / 2));
    // The recurrence in doubles: the search's first stage, and the test for
    // a double root, which needs no more than its digits (the recurrence
    // itself where it is in doubles already).
    let doubles: std::borrow::Cow<NumRecurrence> = match rec.precision {
        Precision::Double => std::borrow::Cow::Borrowed(rec),
        Precision::DoubleDouble => std::borrow::Cow::Owned(NumRecurrence { precision: Precision::Double, ..rec.clone() }),
    };
    let r = match rec.precision {
        Precision::Double => search(rec, seed, tol, depth0),
        Precision::DoubleDouble => {
            // The search in doubles first (several times cheaper; it settles
            // to about the doubles' noise), then polished in double-double
            // from its root and depth; the whole search in double-double
            // where the first does not settle, or where the doubles' value
            // at the seed is already off by more than `TRUSTED` (a high
            // overtone: large exponents, more cancellation), which would
            // lead the first stage astray.
            let value = |rec: &NumRecurrence| inversion(rec, seed, k, depth0).map(|(v, _)| v).filter(|v| v.re.is_finite() && v.im.is_finite());
            let trusted = match (value(&doubles), value(rec)) {
                (Some(d), Some(x)) => (d - x).norm() <= TRUSTED * x.norm(),
                _ => false,
            };
            // Searches wholly in double-double stop at `DD_MAX_DEPTH` (a
            // bound on their cost: about 0.8 µs per term and evaluation).
            let cap = max_depth.min(DD_MAX_DEPTH);
            let dd_search = || search_to(rec, seed, tol, depth0.min(cap / 2), cap);
            let coarse = if trusted { Some(search(&doubles, seed, tol.max(COARSE_TOL), depth0)) } else { None };
            match coarse {
                // Where double-double does not settle within its depth, the
                // search in doubles alone (to the largest depth) is the last
                // resort, as for a recurrence that is not crowded.
                None => Some(dd_search()).filter(|r| r.converged).unwrap_or_else(|| search(&doubles, seed, tol, depth0)),
                // Roots still moving at the largest depth, by more than the
                // doubles' noise (`COARSE_TOL` is above it where they are
                // trusted), would move in double-double too.
                Some(c) if c.stop == StopReason::DepthLimit => c,
                Some(c) if !c.converged => dd_search(),
                // Polished at the depth before the doubles settled, then at
                // doubled depths while the tail still moves the root by more
                // than the tolerance; where none settles, the search in
                // doubles alone to the tolerance asked for.
                Some(c) => std::iter::successors(Some((c.depth / 2).max(1)), |d| Some(2 * d))
                    .take_while(|d| *d <= DD_MAX_DEPTH && 2 * d <= max_depth)
                    .find_map(|d| polish(rec, &doubles, &c, d, tol))
                    .unwrap_or_else(|| search(&doubles, c.omega, tol, c.depth)),
            }
        }
    };
    if r.converged {
        // In the recurrence's own arithmetic: the other inversions lose more
        // digits in doubles than the one searched. A polished root's depth
        // is twice the one it settled at, where the test is cheaper.
        let depth = match rec.precision {
            Precision::Double => r.depth,
            Precision::DoubleDouble => (r.depth / 2).max(r.inversion + 4),
        };
        if let Some(why) = spurious(rec, &r, depth) {
            return CfRoot { converged: false, stop: StopReason::Rejected(why), ..r };
        }
        return double_root(rec, &doubles, r, tol);
    }
    // At a double root each depth's search stops about √(rounding) away, so
    // the roots of two depths never agree: settled as one where it is one.
    if r.stop == StopReason::DepthLimit && r.omega.re.is_finite() && r.omega.im.is_finite() {
        let settled = double_root(rec, &doubles, r.clone(), tol);
        if settled.double && settled.converged {
            return CfRoot { stop: StopReason::Converged, ..settled };
        }
    }
    r
}

/// A root found in doubles on a double-double recurrence (`rec`, and
/// `doubles` the same in doubles) polished by two Newton steps in
/// double-double at depth N (the search's last depth or the one before,
/// whose roots agreed in doubles), the derivative a central difference in
/// doubles (its error, about 1e-5 relative, shrinks the correction that
/// much per step); the change on doubling is the Newton correction at 2N.
/// `None` where the first step is not small (above 1e-6 relative), the
/// second or that change exceeds the tolerance: the caller then polishes
/// at twice the depth, or searches in doubles alone.
fn polish(rec: &NumRecurrence, doubles: &NumRecurrence, r: &CfRoot, depth: usize, tol: f64) -> Option<CfRoot> {
    let k = r.inversion;
    let size = r.omega.norm().max(f64::MIN_POSITIVE);
    let h = 1e-4 * size;
    let at = |rec: &NumRecurrence, w: Complex64, depth: usize| inversion(rec, w, k, depth).filter(|(v, _)| v.re.is_finite() && v.im.is_finite());
    let (up, down) = (at(doubles, r.omega + h, depth)?, at(doubles, r.omega - h, depth)?);
    let slope = (up.0 - down.0) / (2.0 * h);
    if slope.norm() == 0.0 || !slope.re.is_finite() || !slope.im.is_finite() {
        return None;
    }
    let mut w = r.omega;
    let mut last = f64::INFINITY;
    for _ in 0..2 {
        let step = at(rec, w, depth)?.0 / slope;
        last = step.norm();
        if last > 1e-6 * size {
            return None;
        }
        w -= step;
    }
    // After the second step the error is that step times the slope's own
    // relative error: far below it.
    let (value, scale) = at(rec, w, 2 * depth)?;
    let change = (value / slope).norm();
    if change > tol * size || last > 0.1 * tol * size {
        return None;
    }
    Some(CfRoot { omega: w, depth: 2 * depth, depth_change: change, residual: relative((value, scale)), ..r.clone() })
}

/// A converged root about which the k-th inversion grows like the square of
/// the distance (`roots::growth_order` between 1.7 and 2.4): a double root,
/// where two families meet and Muller's method stops about √(rounding)
/// away; it is then the zero of the inversion's derivative
/// (`roots::double_root`) at the depth reached and at twice it, their
/// difference the change on doubling. The root as it was otherwise. The
/// growth is measured on `doubles`, the recurrence in doubles.
fn double_root(rec: &NumRecurrence, doubles: &NumRecurrence, r: CfRoot, tol: f64) -> CfRoot {
    let at = |depth: usize| move |w: Complex64| inversion(rec, w, r.inversion, depth).map(|(v, _)| v);
    let coarse = |w: Complex64| inversion(doubles, w, r.inversion, r.depth).map(|(v, _)| v);
    let Some(_) = super::roots::growth_order(&coarse, r.omega).filter(|o| (1.7..=2.4).contains(o)) else { return r };
    let (Some(a), Some(b)) =
        (super::roots::double_root(&at(r.depth), r.omega, 0.1 * tol), super::roots::double_root(&at(2 * r.depth), r.omega, 0.1 * tol))
    else {
        return r;
    };
    let change = (a - b).norm();
    // The residual at the settled value (the one before where it is not finite).
    let residual = inversion(rec, b, r.inversion, 2 * r.depth).map(relative).filter(|x| x.is_finite()).unwrap_or(r.residual);
    CfRoot {
        omega: b,
        depth: 2 * r.depth,
        depth_change: change,
        residual,
        converged: change <= tol * b.norm().max(super::roots::ABSOLUTE_BELOW) && residual.is_finite(),
        double: true,
        ..r
    }
}

/// |value| relative to its scale (absolute where the scale is 0): an
/// inversion's residual, from its (value, scale).
fn relative((v, scale): (Complex64, Complex64)) -> f64 {
    if scale.norm() > 0.0 {
        (v / scale).norm()
    } else {
        v.norm()
    }
}

/// The residual (relative to its scale) above which a neighbouring
/// inversion is taken not to vanish at a root: a mode is a zero of every
/// inversion, and at true roots the inversions k − 1 and k + 2 are near
/// the rounding (1e-16 to 1e-9 on Schwarzschild's n = 0…14 and de Sitter's
/// families), while at a spurious zero both are of order 1e-2 or more.
const NEIGHBOUR_RESIDUAL: f64 = 1e-6;

/// Why a converged root of the k-th inversion is not a mode, when it is
/// not: a spurious zero of that inversion (the next shares it), seen as
/// the inversions k − 1 and k + 2 (k + 2 and k + 3 for k = 0) both not
/// vanishing at the root. One of them vanishing keeps the root: at a
/// resonance of an end's exponents (de Sitter's conformally coupled field)
/// an inversion can miss a true mode, and one that cannot be evaluated
/// there (a zero denominator) says nothing. The inversions are taken at
/// `depth`.
fn spurious(rec: &NumRecurrence, r: &CfRoot, depth: usize) -> Option<String> {
    // A two-term recurrence (its third term zero): the k-th inversion is
    // β_k, whose roots end the series at degree k, and its neighbours' are
    // other degrees' roots.
    if rec.terms.len() == 3 && rec.terms[2].c.iter().all(|row| row.iter().all(|x| x.norm() == 0.0)) {
        return None;
    }
    let k = r.inversion;
    let others = match k.checked_sub(1) {
        Some(below) => [below, k + 2],
        None => [k + 2, k + 3],
    };
    let residuals: Vec<(usize, f64)> =
        others.into_iter().filter_map(|j| inversion(rec, r.omega, j, depth).map(|vs| (j, relative(vs)))).filter(|(_, res)| res.is_finite()).collect();
    if residuals.len() < others.len() || residuals.iter().any(|(_, res)| *res <= NEIGHBOUR_RESIDUAL) {
        return None;
    }
    let words: Vec<String> = residuals.iter().map(|(j, res)| format!("{res:.1e} for the {j}-th")).collect();
    Some(format!(
        "the root {:.6e}{:+.6e}i is a zero of the {k}-th inversion of the continued fraction but not of its neighbours (residual {} there): a spurious zero of the inverted fraction, not a mode",
        r.omega.re,
        r.omega.im,
        words.join(", ")
    ))
}

/// [`find_root`] on any function of (ω, truncation depth) giving the value
/// whose root is sought and the scale its residual is reported against (as
/// [`inversion`] does): the k-th inversion of a continued fraction whose
/// coefficients themselves depend on ω through another solve (coupled
/// equations). An `Err` names why the function could not be evaluated.
pub fn find_root_by(
    f_at: &dyn Fn(Complex64, usize) -> std::result::Result<(Complex64, Complex64), String>,
    k: usize,
    seed: Complex64,
    tol: f64,
    depth0: usize,
    max_depth: usize,
) -> CfRoot {
    find_root_spread(f_at, k, seed, super::roots::SPREAD, tol, depth0, max_depth)
}

/// [`find_root_by`] with Muller's first points ± `first_spread`·|seed|
/// about the seed, and the later searches' spreads never wider.
fn find_root_spread(
    f_at: &dyn Fn(Complex64, usize) -> std::result::Result<(Complex64, Complex64), String>,
    k: usize,
    seed: Complex64,
    first_spread: f64,
    tol: f64,
    depth0: usize,
    max_depth: usize,
) -> CfRoot {
    let fail = |stop: StopReason| CfRoot::failed(seed, k, stop);
    let mut depth = depth0.max(k + 10);
    let mut w = seed;
    let mut prev: Option<Complex64> = None;
    let inner_tol = (tol * 0.1).max(1e-15);
    // The first search starts from the given spread around the seed; later
    // ones, at doubled depth, from a spread of the size of the last change.
    let first_spread = first_spread.clamp(1e-12, super::roots::SPREAD);
    let mut spread = first_spread;
    loop {
        let f = |x: Complex64| f_at(x, depth).map(|(v, _)| v);
        let (root, iters, stop) = super::roots::muller(&f, w, spread, inner_tol, 200);
        if let Err(why) = stop {
            let mut r = fail(if why.starts_with("no convergence") { StopReason::RootIterations } else { StopReason::Rejected(why) });
            r.omega = root;
            r.depth = depth;
            r.iterations = iters;
            return r;
        }
        if let Some(p) = prev {
            let change = (root - p).norm();
            if change <= tol * root.norm() {
                let res = f_at(root, depth).map(relative).unwrap_or(f64::NAN);
                if !(root.re.is_finite() && root.im.is_finite() && res.is_finite()) {
                    let mut r = fail(StopReason::Rejected("the root or its residual is not finite in double precision".into()));
                    r.omega = root;
                    r.depth = depth;
                    r.iterations = iters;
                    return r;
                }
                return CfRoot {
                    omega: root,
                    converged: true,
                    depth,
                    depth_change: change,
                    residual: res,
                    iterations: iters,
                    stop: StopReason::Converged,
                    inversion: k,
                    double: false,
                };
            }
            if depth * 2 > max_depth {
                return CfRoot {
                    omega: root,
                    converged: false,
                    depth,
                    depth_change: change,
                    residual: f64::NAN,
                    iterations: iters,
                    stop: StopReason::DepthLimit,
                    inversion: k,
                    double: false,
                };
            }
        }
        if let Some(p) = prev {
            spread = ((root - p).norm() / root.norm().max(1e-300) * 10.0).clamp(1e-9_f64.min(first_spread), first_spread);
        } else {
            spread = 1e-6_f64.min(first_spread);
        }
        prev = Some(root);
        w = root;
        depth *= 2;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::algebra::Rat;
    use crate::ode::{reduce, Input, ReduceOptions};

    #[test]
    fn a_crowded_series_starts_deeper_for_a_larger_exponent_gap() {
        // R = 1.04, δ = 1 + 10iω: at ω = −0.1i, δ = 2, the radius' own bound
        // 64/0.04 = 1600 → 2048; at ω = −3i, δ = 31: 5·32/ln 1.04 ≈ 4079 → 4096.
        let c = Crowding { radius: 1.04, gap: [Complex64::new(1.0, 0.0), Complex64::new(0.0, 10.0)] };
        assert_eq!(c.first_depth(Complex64::new(0.3, -0.1)), 2048);
        assert_eq!(c.first_depth(Complex64::new(0.3, -3.0)), 4096);
        // Past the cap the caller's depth stands (0 here).
        assert_eq!(c.first_depth(Complex64::new(0.3, -100.0)), 0);
        let far = Crowding { radius: 1.001, gap: [Complex64::new(1.0, 0.0), Complex64::new(0.0, 0.0)] };
        assert_eq!(far.first_depth(Complex64::new(0.3, -0.1)), 0);
    }

    fn rw_recurrence(s: i64, l: i64) -> NumRecurrence {
        let src = "var r\nparam M, omega, l, s\nlet f = 1 - 2*M/r\node f*(f*y')' + (omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y = 0\n";
        let red = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
        let rec = crate::series::about_written(&red, "2*M", &[("2*M", 2), ("inf", 1)]);
        let g = |x: i64| GRat::real(Rat::int(x.into()));
        try_numeric(&rec, &[g(0), g(1), g(0), g(l), g(s)], 2).unwrap()
    }

    #[test]
    fn an_adjoined_rate_takes_the_branch_of_its_condition() {
        use crate::solve::boundary::Condition;
        // χ² = μ² − ω² (μ = 0.1): P as a polynomial in ω.
        let square = |mu: f64| {
            let num = NPoly { c: vec![vec![Complex64::new(mu * mu, 0.0), Complex64::new(0.0, 0.0), Complex64::new(-1.0, 0.0)]] };
            let den = NPoly { c: vec![vec![Complex64::new(1.0, 0.0)]] };
            (num, den)
        };
        let w = Complex64::new(0.099, -1e-5);
        let decaying = RateBranch { square: square(0.1), condition: Condition::Decaying }.at(w).unwrap();
        assert!(decaying.re > 0.0 && (decaying * decaying - (0.01 - w * w)).norm() < 1e-15);
        // Outgoing: as μ → 0 the rate −χ tends to the massless e^(+iωz), χ → −iω.
        let w = Complex64::new(0.3, -0.1);
        let outgoing = RateBranch { square: square(1e-6), condition: Condition::Outgoing }.at(w).unwrap();
        assert!((outgoing + Complex64::i() * w).norm() < 1e-9, "{outgoing}");
    }

    #[test]
    fn schwarzschild_fundamental_modes_leaver_1985() {
        // Leaver 1985; Berti, Cardoso & Starinets 2009 tables (M = 1).
        for (s, l, n, want) in [
            (2, 2, 0, Complex64::new(0.37367168, -0.08896232)),
            (2, 2, 1, Complex64::new(0.34671100, -0.27391488)),
            (2, 2, 2, Complex64::new(0.30105345, -0.47827698)),
            (2, 2, 3, Complex64::new(0.25150496, -0.70514820)),
            (2, 3, 0, Complex64::new(0.59944329, -0.09270305)),
            (0, 0, 0, Complex64::new(0.11045494, -0.10489572)),
            (0, 1, 0, Complex64::new(0.29293613, -0.09765999)),
            (0, 2, 0, Complex64::new(0.48364387, -0.09675878)),
            (1, 1, 0, Complex64::new(0.24826326, -0.09248772)),
        ] {
            let rec = rw_recurrence(s, l);
            let seed = want * Complex64::new(1.03, 0.0);
            let root = find_root(&rec, n, seed, 1e-11, 40, 1 << 16);
            assert!(root.converged, "s={s} l={l} n={n}: {root:?}");
            // The published values carry 8 decimals: agreement to half a unit in the last place.
            let (dre, dim) = ((root.omega.re - want.re).abs(), (root.omega.im - want.im).abs());
            assert!(dre <= 5.1e-9 && dim <= 5.1e-9, "s={s} l={l} n={n}: got {} want {want} (depth {})", root.omega, root.depth);
        }
    }
}
