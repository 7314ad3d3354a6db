//! Estimates of quasinormal-mode frequencies from the top of a potential
//! barrier, to any WKB order. The input is the Schrödinger form
//! φ_xx + (ω² − V(x)) φ = 0 with dx/dz = h(z), where V and h are exact
//! rational functions of the equation's variable z (variable 0 of the field)
//! and of parameters. The parameter values are substituted exactly; the peak
//! z₀ is a real root of the numerator of dV/dz (companion-matrix
//! eigenvalues) where d²V/dx² < 0, found from exact derivatives. The Taylor
//! coefficients c_m = (1/m!) d^mV/dx^m at the peak come from the power series
//! of V and 1/h about z₀ (double precision), by d/dx = (1/h) d/dz applied to
//! the series.
//!
//! The WKB series is the perturbation series of the barrier-top problem
//! −φ'' + (c₂y² + Σ_{m≥3} c_m y^m) φ = (ω² − V₀) φ, y = x − x₀: an inverted
//! harmonic oscillator (c₂ < 0) with anharmonic terms, continued from the
//! harmonic well by the frequency k = −i√(−c₂) (so e^{−ky²/2} is outgoing on
//! both sides). With a book-keeping g multiplying c_m by g^{m−2}, the
//! eigenfunction is e^{−ky²/2} Σ_j g^j P_j(y), P₀ the degree-n polynomial
//! solution (a Hermite polynomial), and every P_j a polynomial of degree
//! n + 3j; the order-g^j equation −P_j'' + 2ky P_j' − 2kn P_j = R_j (R_j from
//! the lower orders) is solved coefficient by coefficient from the top degree
//! down, and the solvability condition at y^n gives E_j (the y^n coefficient
//! of P_j, j ≥ 1, is fixed at zero). Odd E_j vanish by parity; E₀ = k(2n+1).
//! WKB order N keeps ω² = V₀ + E₀ + E₂ + … + E_{2(N−1)}: order 1 is the
//! Schutz–Will formula, orders 2 and 3 reproduce Iyer & Will (1987), and each
//! further order adds one power of ħ, as in the usual higher-order WKB
//! formulas. The series is asymptotic, so the result is given at every
//! order with the spread between neighbouring orders, and resummed by Padé
//! approximants of ω²(ε) = V₀ + Σ_{i=1}^{N} E_{2(i−1)} ε^i at ε = 1, the
//! approximant [⌈N/2⌉/⌊N/2⌋] at order N.
//!
//! The eikonal (geodesic) limit comes from the part of V quadratic in a
//! large parameter L: V ≈ L² F(z), Ω_c = √F(z_c) at the maximum of F (the
//! photon sphere) and λ = √(−F''(z_c)/(2F(z_c))) (derivatives in x), so
//! ω ≈ Ω_c(L + ½) − i(n + ½)λ (common practice; e.g. Cardoso et al., Phys.
//! Rev. D 79 (2009) 064016). All of these are approximations; they seed the
//! exact spectral solvers, they do not replace them.

use crate::algebra::{Field, GRat, Int, Poly, Rat, RatFunc};
use crate::analysis::numeric::try_roots;
use crate::error::{Error, ErrorKind, Result};
use num_complex::Complex64;

/// The largest WKB order accepted (the Taylor coefficients then go to 2·80;
/// double precision has long stopped helping by then).
pub const MAX_ORDER: usize = 80;

/// The WKB order used for seeds when none is asked for (as `spectrum --wkb-order`'s default).
pub const SEED_ORDER: usize = 6;

/// Peak data of the potential on the real axis and the estimates built from it.
#[derive(Clone, Debug, PartialEq)]
pub struct BarrierEstimate {
    /// Location z₀ of the maximum of V (real), in the equation's variable.
    pub peak: f64,
    /// V(z₀), as a complex number (real for the real potentials accepted here).
    pub v0: Complex64,
    /// d^kV/dx^k at the peak for k = 2..=6 (entry k − 2; x the tortoise coordinate).
    pub derivs: [Complex64; 5],
    /// Taylor coefficients c_m = (1/m!) d^mV/dx^m at the peak, m = 0..=2N.
    pub taylor: Vec<Complex64>,
    /// Eikonal (first-order) estimate ω ≈ √V₀ − i(n+½)√(−V₀''/(2V₀)) (Schutz–Will 1985).
    pub eikonal: Complex64,
    /// The WKB series to the requested order, with its Padé resummation.
    pub series: WkbSeries,
}

/// The WKB series of one overtone: contributions, partial sums and Padé values.
#[derive(Clone, Debug, PartialEq)]
pub struct WkbSeries {
    /// Overtone number n.
    pub n: u32,
    /// Coefficients of ω²(ε): entry 0 is V₀, entry i ≥ 1 is E_{2(i−1)}.
    pub terms: Vec<Complex64>,
    /// ω (principal square root) at orders 1..=N (entry k − 1 for order k).
    pub partial: Vec<Complex64>,
    /// ω from the Padé approximant [⌈k/2⌉/⌊k/2⌋] of ω²(ε) at ε = 1, orders 1..=N; `None` when the linear system is singular.
    pub pade: Vec<Option<Complex64>>,
}

/// Where a QNM estimate lies: only the lower half-plane (Im ω < 0) is a decaying mode for e^{−iωt}.
pub fn in_lower_half_plane(w: Complex64) -> bool {
    w.re.is_finite() && w.im.is_finite() && w.im < 0.0
}

impl WkbSeries {
    /// The requested order N.
    pub fn order(&self) -> usize {
        self.partial.len()
    }
    /// ω at the requested order.
    pub fn omega(&self) -> Complex64 {
        self.partial[self.partial.len() - 1]
    }
    /// The error estimate at order k ≥ 2: the spread between neighbouring orders,
    /// max(|ω_k − ω_{k−1}|, |ω_{k−1} − ω_{k−2}|) (the second term from k = 3 on, so
    /// that a vanishing term, as in every other order of a symmetric barrier, does
    /// not pass for convergence); `None` at order 1.
    pub fn spread(&self, k: usize) -> Option<f64> {
        let d = |k: usize| (self.partial[k - 1] - self.partial[k - 2]).norm();
        (k >= 2 && k <= self.order()).then(|| if k >= 3 { d(k).max(d(k - 1)) } else { d(k) })
    }
    /// The Padé value at order k and its spread against order k − 1 (when both exist).
    pub fn pade_at(&self, k: usize) -> (Option<Complex64>, Option<f64>) {
        let p = self.pade.get(k.wrapping_sub(1)).copied().flatten();
        let q = if k >= 2 { self.pade.get(k - 2).copied().flatten() } else { None };
        (p, p.zip(q).map(|(a, b)| (a - b).norm()))
    }
    /// The order (2..=N) whose partial sum changes least from the previous one
    /// (optimal truncation of the asymptotic series), with ω there and the spread.
    pub fn optimal(&self) -> Option<(usize, Complex64, f64)> {
        (2..=self.order())
            .filter_map(|k| self.spread(k).filter(|s| s.is_finite()).map(|s| (k, self.partial[k - 1], s)))
            .min_by(|a, b| a.2.total_cmp(&b.2))
    }
    /// The value to seed a root finder with: the Padé value at the requested
    /// order when finite and in the lower half-plane, else the optimally
    /// truncated series when it is, else none (estimates in the wrong half-plane
    /// are never seeds). A value farther from the first-order estimate than
    /// twice its size is no correction of it but the series running away (a
    /// shallow bump, far from the barrier the formulas assume): no seed.
    pub fn seed(&self) -> Option<(Complex64, String)> {
        let n = self.order();
        let first = self.partial[0];
        let plausible = |w: Complex64| in_lower_half_plane(w) && (w - first).norm() <= 2.0 * first.norm();
        if let (Some(p), _) = self.pade_at(n) {
            if plausible(p) {
                return Some((p, format!("WKB order {n}, Padé [{}/{}]", n.div_ceil(2), n / 2)));
            }
        }
        let (k, w, _) = self.optimal().unwrap_or((n, self.omega(), f64::NAN));
        plausible(w).then(|| (w, format!("WKB order {k} (least change between orders)")))
    }
}

/// Computes the estimates for overtone n to WKB order `order` (1..=[`MAX_ORDER`]).
/// `values` gives every field variable a value (entry 0, the variable, is ignored);
/// `freq` is the field index of ω when V depends on it (then an error: the WKB formulas here need V free of ω).
/// `domain` is the real interval (a, b) of z to search (e.g. from the outermost horizon to +∞, b = f64::INFINITY allowed).
///
/// The peak is the real critical point of V strictly inside the domain that
/// is a maximum (d²V/dx² < 0) with the largest V; V(z₀) must be positive.
/// Square roots are principal (cut along the negative real axis), so the
/// estimates have Re ω ≥ 0; the mirror mode −ω̄ is not listed.
#[allow(clippy::too_many_arguments)]
pub fn try_barrier(
    field: &Field,
    v: &RatFunc,
    h: &RatFunc,
    values: &[GRat],
    freq: Option<usize>,
    domain: (f64, f64),
    n: u32,
    order: usize,
) -> Result<BarrierEstimate> {
    if order == 0 || order > MAX_ORDER {
        return Err(usage(format!("the WKB order {order} is outside 1..={MAX_ORDER}")));
    }
    let (v, h, z0) = barrier_peak(field, v, h, values, freq, domain)?;
    let taylor = tortoise_taylor(&NumRat::new(&v)?, &NumRat::new(&field.inv(&h)?)?, z0, 2 * order.max(3))
        .ok_or_else(|| usage(format!("dx/dz vanishes or has a pole at the peak z = {z0}, so the tortoise derivatives there are not finite")))?;
    let v0 = taylor[0];
    if v0.re <= 0.0 {
        return Err(usage(format!("the barrier top V(z₀) = {} at z₀ = {z0} is not positive; the WKB estimates need V₀ > 0", v0.re))
            .note("the formulas expand around a positive maximum of V in the tortoise coordinate"));
    }
    let fact = |k: usize| (1..=k).map(|i| i as f64).product::<f64>();
    let derivs = [2, 3, 4, 5, 6].map(|k| taylor[k] * fact(k));
    let alpha = n as f64 + 0.5;
    let eikonal = v0.sqrt() - Complex64::i() * alpha * (-derivs[0] / (2.0 * v0)).sqrt();
    let series = wkb_series(&taylor, n, order);
    if !(eikonal.re.is_finite() && eikonal.im.is_finite() && series.partial.iter().all(|w| w.re.is_finite() && w.im.is_finite())) {
        return Err(usage(format!("the WKB estimates at the peak z₀ = {z0} are not finite")));
    }
    Ok(BarrierEstimate { peak: z0, v0, derivs, taylor, eikonal, series })
}

/// The eikonal limit of a barrier: Ω_c, λ and where the photon sphere lies.
#[derive(Clone, Debug, PartialEq)]
pub struct EikonalLimit {
    /// The maximum z_c of F = lim V/L² (the photon sphere).
    pub peak: f64,
    /// Ω_c = √F(z_c).
    pub omega_c: f64,
    /// λ = √(−F''(z_c)/(2F(z_c))), derivatives in the tortoise coordinate.
    pub lyapunov: f64,
}

impl EikonalLimit {
    /// ω ≈ Ω_c(L + ½) − i(n + ½)λ.
    pub fn omega(&self, l: f64, n: u32) -> Complex64 {
        Complex64::new(self.omega_c * (l + 0.5), -(n as f64 + 0.5) * self.lyapunov)
    }
}

/// The eikonal limit in the large parameter `large` (a field index): F = lim_{L→∞} V/L²
/// with every other parameter at its value, then its barrier top. An error when
/// V does not grow exactly like L².
pub fn try_eikonal_limit(
    field: &Field,
    v: &RatFunc,
    h: &RatFunc,
    values: &[GRat],
    freq: Option<usize>,
    domain: (f64, f64),
    large: usize,
) -> Result<EikonalLimit> {
    let name = field.names().get(large).cloned().unwrap_or_default();
    if large == 0 || Some(large) == freq || large >= field.names().len() {
        return Err(usage(format!("'{name}' cannot be the large parameter of the eikonal limit (it must be a parameter other than the frequency)")));
    }
    // F = [L² V(1/L)]_{L=0}: the coefficient of L² at large L.
    let l = field.var(large);
    let f = field.mul(&field.compose(v, large, &field.inv(&l)?)?, &field.mul(&l, &l)?)?;
    let not_quadratic = || usage(format!("the potential does not grow like {name}² at large {name}, so there is no eikonal limit in it"));
    let f = field.compose(&f, large, &RatFunc::zero()).map_err(|_| not_quadratic())?;
    if f.is_zero() {
        return Err(not_quadratic());
    }
    let (f, h, zc) = barrier_peak(field, &f, h, values, freq, domain)?;
    let t = tortoise_taylor(&NumRat::new(&f)?, &NumRat::new(&field.inv(&h)?)?, zc, 2)
        .ok_or_else(|| usage(format!("dx/dz vanishes or has a pole at the photon sphere z = {zc}")))?;
    if t[0].re <= 0.0 {
        return Err(usage(format!("the large-{name} part of the potential has a non-positive maximum {} at z = {zc}", t[0].re)));
    }
    Ok(EikonalLimit { peak: zc, omega_c: t[0].re.sqrt(), lyapunov: (-t[2].re / t[0].re).sqrt() })
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// Specialises V and h and finds the peak: (V, h, z₀).
fn barrier_peak(
    field: &Field,
    v: &RatFunc,
    h: &RatFunc,
    values: &[GRat],
    freq: Option<usize>,
    domain: (f64, f64),
) -> Result<(RatFunc, RatFunc, f64)> {
    let (a, b) = domain;
    if a.is_nan() || b.is_nan() || a >= b {
        return Err(usage(format!("the search domain ({a}, {b}) is not an interval with a < b")));
    }
    let v = specialise(field, v, values, freq, "the potential V")?;
    let h = specialise(field, h, values, freq, "dx/dz")?;
    if !v.is_real() || !h.is_real() {
        return Err(usage("the potential or dx/dz is complex at these values; a barrier on the real axis needs both real"));
    }
    if h.is_zero() {
        return Err(usage("dx/dz is identically zero"));
    }
    // V and D²V, D = (1/h) d/dz, exact; numbers come afterwards.
    let hinv = field.inv(&h)?;
    let d1 = field.mul(&field.deriv(&v, 0)?, &hinv)?;
    let d2 = field.mul(&field.deriv(&d1, 0)?, &hinv)?;
    let z0 = peak(field, &v, &NumRat::new(&v)?, &NumRat::new(&d2)?, (a, b))?;
    Ok((v, h, z0))
}

/// Substitutes every parameter's value exactly, leaving a function of z alone.
fn specialise(field: &Field, r: &RatFunc, values: &[GRat], freq: Option<usize>, what: &str) -> Result<RatFunc> {
    let mut out = r.clone();
    for (i, name) in field.names().iter().enumerate().skip(1) {
        if !out.uses_var(i) {
            continue;
        }
        if Some(i) == freq {
            return Err(usage(format!("{what} depends on the frequency {}; the WKB formulas here need V and dx/dz free of it", name)));
        }
        let Some(x) = values.get(i) else {
            return Err(usage(format!("no value was given for the parameter {name}")));
        };
        out = field.compose(&out, i, &RatFunc::constant(x))?;
    }
    Ok(out)
}

/// The coefficients of a polynomial in z alone, low degree first, as doubles divided by `scale`.
fn coeffs(p: &Poly, scale: &Int) -> Result<Vec<Complex64>> {
    let mut out = Vec::new();
    for c in p.to_univariate(0) {
        let g = c.as_constant().ok_or_else(|| Error::new(ErrorKind::Internal, "a coefficient still depends on a parameter"))?;
        let re = Rat::new(g.re, scale.clone()).map(|r| r.to_f64());
        let im = Rat::new(g.im, scale.clone()).map(|r| r.to_f64());
        match (re, im) {
            (Some(re), Some(im)) if re.is_finite() && im.is_finite() => out.push(Complex64::new(re, im)),
            _ => return Err(Error::new(ErrorKind::Limit, "a coefficient of the potential does not fit in double precision")),
        }
    }
    Ok(out)
}

/// Horner evaluation of Σ c_k z^k at a real z.
fn horner(c: &[Complex64], z: f64) -> Complex64 {
    c.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, &ck| acc * z + ck)
}

/// The first `len` Taylor coefficients of Σ c_k z^k about z₀ (repeated synthetic division).
fn shift(c: &[Complex64], z0: f64, len: usize) -> Vec<Complex64> {
    let mut work = c.to_vec();
    let mut out = Vec::with_capacity(len);
    for _ in 0..len {
        if work.is_empty() {
            out.push(Complex64::new(0.0, 0.0));
            continue;
        }
        // work = q·(z − z₀) + r: r is the next coefficient, q carries on.
        let mut acc = Complex64::new(0.0, 0.0);
        let mut q = vec![Complex64::new(0.0, 0.0); work.len() - 1];
        for i in (0..work.len()).rev() {
            acc = acc * z0 + work[i];
            if i > 0 {
                q[i - 1] = acc;
            }
        }
        out.push(acc);
        work = q;
    }
    out
}

/// Truncated product of two power series.
pub(crate) fn series_mul(a: &[Complex64], b: &[Complex64], len: usize) -> Vec<Complex64> {
    let mut out = vec![Complex64::new(0.0, 0.0); len];
    for (i, x) in a.iter().enumerate().take(len) {
        for (j, y) in b.iter().enumerate().take(len - i) {
            out[i + j] += x * y;
        }
    }
    out
}

/// Truncated quotient a/b of power series; `None` when b(0) = 0.
pub(crate) fn series_div(a: &[Complex64], b: &[Complex64], len: usize) -> Option<Vec<Complex64>> {
    let b0 = *b.first()?;
    if b0.norm() == 0.0 {
        return None;
    }
    let mut out = vec![Complex64::new(0.0, 0.0); len];
    for k in 0..len {
        let mut s = a.get(k).copied().unwrap_or_default();
        for j in 1..=k.min(b.len() - 1) {
            s -= b[j] * out[k - j];
        }
        out[k] = s / b0;
    }
    Some(out)
}

/// The Taylor coefficients c_m = (1/m!) d^mf/dx^m, m = 0..=order, at z₀, with d/dx = g d/dz
/// (g = 1/h given as `g`); `None` when g has a pole at z₀ or a value is not finite.
fn tortoise_taylor(f: &NumRat, g: &NumRat, z0: f64, order: usize) -> Option<Vec<Complex64>> {
    let len = order + 1;
    let mut w = f.taylor(z0, len)?;
    let g = g.taylor(z0, len)?;
    let mut out = vec![w[0]];
    let mut fact = 1.0;
    for m in 1..=order {
        // D w = g · w', one order shorter each time.
        let d: Vec<Complex64> = (1..w.len()).map(|i| w[i] * i as f64).collect();
        w = series_mul(&g, &d, d.len());
        fact *= m as f64;
        out.push(w[0] / fact);
    }
    out.iter().all(|c| c.re.is_finite() && c.im.is_finite()).then_some(out)
}

/// A rational function of z alone, kept in its factored form for numeric evaluation.
struct NumRat {
    num: Vec<Complex64>,
    den: Vec<(Vec<Complex64>, u32)>,
}

impl NumRat {
    fn new(r: &RatFunc) -> Result<NumRat> {
        let one = Int::from(1);
        let num = coeffs(r.num(), r.scale())?;
        let den = r.den_factors().iter().map(|(f, e)| Ok((coeffs(f.poly(), &one)?, *e))).collect::<Result<_>>()?;
        Ok(NumRat { num, den })
    }
    /// The value at a real z; `None` at a pole or when the result is not finite.
    fn eval(&self, z: f64) -> Option<Complex64> {
        let mut d = Complex64::new(1.0, 0.0);
        for (f, e) in &self.den {
            d *= horner(f, z).powu(*e);
        }
        let v = horner(&self.num, z) / d;
        (d.norm() != 0.0 && v.re.is_finite() && v.im.is_finite()).then_some(v)
    }
    /// The first `len` Taylor coefficients about a real z₀; `None` at a pole.
    fn taylor(&self, z0: f64, len: usize) -> Option<Vec<Complex64>> {
        let mut d = vec![Complex64::new(1.0, 0.0)];
        for (f, e) in &self.den {
            let s = shift(f, z0, len);
            for _ in 0..*e {
                d = series_mul(&d, &s, len);
            }
        }
        series_div(&shift(&self.num, z0, len), &d, len)
    }
}

/// The real maximum of V inside the domain with the largest value (`v` exact, `nv` and `d2` its
/// numeric value and D²V).
fn peak(field: &Field, v: &RatFunc, nv: &NumRat, d2: &NumRat, (a, b): (f64, f64)) -> Result<f64> {
    let dv = field.deriv(v, 0)?;
    if dv.is_zero() {
        return Err(usage("the potential is constant in the variable, so it has no barrier"));
    }
    // The numerator and denominator of dV/dz are coprime, so the critical
    // points are exactly the numerator's roots; differentiating in z rather
    // than x keeps the zeros of 1/h (horizons) out of the candidate list.
    let c = coeffs(dv.num(), dv.scale())?;
    let roots = try_roots(&c).map_err(|e| Error::new(ErrorKind::Limit, format!("the critical points of V cannot be computed: {e}")))?;
    let mut critical = 0;
    let mut best: Option<(f64, f64)> = None;
    for r in roots {
        let tol = 1e-7 * r.norm().max(1.0);
        if r.im.abs() > tol || !(r.re > a && r.re < b) {
            continue;
        }
        critical += 1;
        let z = r.re;
        let (Some(v0), Some(v2)) = (nv.eval(z), d2.eval(z)) else {
            continue;
        };
        // At a critical point d²V/dx² = h⁻² d²V/dz², so its sign decides maximum or minimum whatever the sign of h.
        if v2.re >= 0.0 {
            continue;
        }
        if best.is_none_or(|(_, vb)| v0.re > vb) {
            best = Some((z, v0.re));
        }
    }
    match (best, critical) {
        (Some((z, _)), _) => Ok(z),
        (None, 0) => Err(usage(format!("the potential has no critical point in the domain ({a}, {b}), so there is no barrier to expand around"))),
        (None, k) => Err(usage(format!(
            "none of the {k} critical point(s) of the potential in the domain ({a}, {b}) is a maximum with finite tortoise derivatives"
        ))),
    }
}

/// The perturbation coefficients E₀..=E_{jmax} of the barrier-top eigenvalue
/// (module docs): `c` holds c₀.. (at least up to c_{jmax+2}), c₂ < 0 for a barrier
/// (any c₂ ≠ 0 is accepted: k = −i√(−c₂) continues the well's k = √c₂).
pub fn barrier_top_coefficients(c: &[Complex64], n: u32, jmax: usize) -> Vec<Complex64> {
    let zero = Complex64::new(0.0, 0.0);
    let n = n as usize;
    // A well (Re c₂ > 0) keeps its own k = √c₂; a barrier takes the outgoing continuation.
    let k = if c[2].re > 0.0 { c[2].sqrt() } else { -Complex64::i() * (-c[2]).sqrt() };
    let denom = |p: usize| 2.0 * k * (p as f64 - n as f64);
    let lift = |p: usize| ((p + 2) * (p + 1)) as f64;
    // P₀: 2k(p − n) a_p = (p+2)(p+1) a_{p+2}, a_n = 1.
    let mut p0 = vec![zero; n + 1];
    p0[n] = Complex64::new(1.0, 0.0);
    for p in (0..n).rev().skip(1).step_by(2) {
        p0[p] = lift(p) * p0[p + 2] / denom(p);
    }
    let mut ps = vec![p0];
    let mut e = vec![k * (2 * n + 1) as f64];
    for j in 1..=jmax {
        let deg = n + 3 * j;
        let mut r = vec![zero; deg + 1];
        for m in 3..=(j + 2).min(c.len() - 1) {
            for (i, a) in ps[j + 2 - m].iter().enumerate() {
                r[i + m] -= c[m] * a;
            }
        }
        for i in 1..j {
            for (t, a) in ps[j - i].iter().enumerate() {
                r[t] += e[i] * a;
            }
        }
        let mut a = vec![zero; deg + 3];
        for p in (n + 1..=deg).rev() {
            a[p] = (r[p] + lift(p) * a[p + 2]) / denom(p);
        }
        let ej = -(r[n] + lift(n) * a[n + 2]);
        for (t, b) in ps[0].iter().enumerate() {
            r[t] += ej * b;
        }
        for p in (0..n).rev() {
            a[p] = (r[p] + lift(p) * a[p + 2]) / denom(p);
        }
        a.truncate(deg + 1);
        ps.push(a);
        e.push(ej);
    }
    e
}

/// The WKB series of overtone n to order N from the Taylor coefficients at the peak (at least 2N + 1 of them).
pub fn wkb_series(taylor: &[Complex64], n: u32, order: usize) -> WkbSeries {
    let e = barrier_top_coefficients(taylor, n, 2 * (order - 1));
    let mut terms = vec![taylor[0]];
    terms.extend((0..order).map(|i| e[2 * i]));
    let mut partial = Vec::with_capacity(order);
    let mut sum = terms[0];
    for t in &terms[1..] {
        sum += t;
        partial.push(sum.sqrt());
    }
    let pade = (1..=order).map(|k| pade_at_one(&terms[..=k], k.div_ceil(2), k / 2).map(|w2| w2.sqrt())).collect();
    WkbSeries { n, terms, partial, pade }
}

/// The WKB transmission |T|² = 1/(1 + e^{2πiα}) through the barrier at real ω²
/// (the connection formula of the barrier-top expansion; Iyer & Will 1987 at
/// third order): α solves ω² = V₀ + Σ_{i<N} E_{2i}(α), the eigenvalue series
/// continued to non-integer α = n + ½. E_{2i} is a polynomial of degree i + 1 in
/// α, so the sum at order N is fixed by its values at n = 0..=N (Lagrange
/// interpolation), and α follows by Newton's method from the parabolic
/// α₀ = (ω² − V₀)/(2k). `None` when Newton does not settle in 60 steps.
pub fn wkb_transmission(taylor: &[Complex64], w2: f64, order: usize) -> Option<f64> {
    let v0 = taylor[0];
    let nodes: Vec<(f64, Complex64)> = (0..=order as u32)
        .map(|n| {
            let e = barrier_top_coefficients(taylor, n, 2 * (order - 1));
            (n as f64 + 0.5, (0..order).map(|i| e[2 * i]).sum())
        })
        .collect();
    let p = |a: Complex64| -> Complex64 {
        nodes
            .iter()
            .enumerate()
            .map(|(i, (xi, yi))| {
                let l: Complex64 = nodes.iter().enumerate().filter(|(j, _)| *j != i).map(|(_, (xj, _))| (a - xj) / (xi - xj)).product();
                yi * l
            })
            .sum()
    };
    let target = Complex64::new(w2, 0.0) - v0;
    let k = if taylor[2].re > 0.0 { taylor[2].sqrt() } else { -Complex64::i() * (-taylor[2]).sqrt() };
    let mut a = target / (2.0 * k);
    for _ in 0..60 {
        let h = 1e-6 * (1.0 + a.norm());
        let f = p(a) - target;
        let df = (p(a + h) - p(a - h)) / (2.0 * h);
        if df.norm() == 0.0 {
            return None;
        }
        let step = f / df;
        a -= step;
        if !(a.re.is_finite() && a.im.is_finite()) {
            return None;
        }
        if step.norm() <= 1e-14 * (1.0 + a.norm()) {
            let t = 1.0 / (1.0 + (2.0 * std::f64::consts::PI * Complex64::i() * a).exp());
            return (t.re.is_finite()).then_some(t.re);
        }
    }
    None
}

/// The Padé approximant [p/q] of Σ a_i ε^i (p + q + 1 coefficients) at ε = 1; `None` when singular.
pub fn pade_at_one(a: &[Complex64], p: usize, q: usize) -> Option<Complex64> {
    let at = |i: isize| if i < 0 { Complex64::new(0.0, 0.0) } else { a.get(i as usize).copied().unwrap_or_default() };
    // Denominator 1 + b₁ε + … + b_qε^q: Σ_j b_j a_{p+i−j} = −a_{p+i}, i = 1..=q.
    let mut b = vec![Complex64::new(1.0, 0.0)];
    if q > 0 {
        let m = nalgebra::DMatrix::from_fn(q, q, |i, j| at(p as isize + i as isize + 1 - (j as isize + 1)));
        let rhs = nalgebra::DVector::from_fn(q, |i, _| -at((p + i + 1) as isize));
        let sol = m.lu().solve(&rhs)?;
        b.extend(sol.iter().copied());
    }
    let num: Complex64 = (0..=p).map(|k| (0..=k.min(q)).map(|j| b[j] * at(k as isize - j as isize)).sum::<Complex64>()).sum();
    let den: Complex64 = b.iter().sum();
    let v = num / den;
    (den.norm() > 1e-300 && v.re.is_finite() && v.im.is_finite()).then_some(v)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::algebra::Limits;

    fn int(k: i64) -> RatFunc {
        RatFunc::rat(&Rat::int(k.into()))
    }
    fn val(k: i64) -> GRat {
        GRat::real(Rat::int(k.into()))
    }
    fn c(re: f64) -> Complex64 {
        Complex64::new(re, 0.0)
    }

    /// Regge–Wheeler potential V = f(l(l+1)/r² + (1−s²)2M/r³), f = 1 − 2M/r, and h = dr*/dr = 1/f
    /// (T. Regge and J. A. Wheeler, Phys. Rev. 108 (1957) 1063; the spin-s form as in Cardoso et al. 2009, from memory).
    fn regge_wheeler() -> (Field, RatFunc, RatFunc) {
        let k = Field::new(["r", "M", "l", "s"].map(String::from).to_vec(), Limits::default()).unwrap();
        let (r, m, l, s) = (k.var(0), k.var(1), k.var(2), k.var(3));
        let f = k.sub(&int(1), &k.div(&k.mul(&int(2), &m).unwrap(), &r).unwrap()).unwrap();
        let ll = k.mul(&l, &k.add(&l, &int(1)).unwrap()).unwrap();
        let t1 = k.div(&ll, &k.pow(&r, 2).unwrap()).unwrap();
        let one_s2 = k.sub(&int(1), &k.mul(&s, &s).unwrap()).unwrap();
        let t2 = k.div(&k.mul(&k.mul(&one_s2, &int(2)).unwrap(), &m).unwrap(), &k.pow(&r, 3).unwrap()).unwrap();
        let v = k.mul(&f, &k.add(&t1, &t2).unwrap()).unwrap();
        let h = k.inv(&f).unwrap();
        (k, v, h)
    }

    fn schwarzschild(l: i64, s: i64, n: u32, order: usize) -> BarrierEstimate {
        let (k, v, h) = regge_wheeler();
        try_barrier(&k, &v, &h, &[val(0), val(1), val(l), val(s)], None, (2.0, f64::INFINITY), n, order).unwrap()
    }

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs()
    }

    /// Third-order WKB in closed form (Iyer & Will, Phys. Rev. D 35 (1987) 3621, eq. 1.5, written in V = ω² − Q;
    /// from memory): ω² = V₀ + (−2V₀'')^½ Λ − iα(−2V₀'')^½ (1 + Ω). An independent check of the recursion.
    fn iyer_will(v0: Complex64, d: &[Complex64; 5], alpha: f64) -> Complex64 {
        let [v2, v3, v4, v5, v6] = *d;
        let a2 = alpha * alpha;
        let s = (-2.0 * v2).sqrt();
        let lambda = (v4 / v2 * (0.25 + a2) / 8.0 - (v3 / v2).powu(2) * (7.0 + 60.0 * a2) / 288.0) / s;
        let omega = (5.0 / 6912.0 * (v3 / v2).powu(4) * (77.0 + 188.0 * a2) - v3 * v3 * v4 / v2.powu(3) * (51.0 + 100.0 * a2) / 384.0
            + (v4 / v2).powu(2) * (67.0 + 68.0 * a2) / 2304.0
            + v3 * v5 / (v2 * v2) * (19.0 + 28.0 * a2) / 288.0
            - v6 / v2 * (5.0 + 4.0 * a2) / 288.0)
            / (-2.0 * v2);
        v0 + s * lambda - Complex64::i() * alpha * s * (1.0 + omega)
    }

    // Orders 1, 2 and 3 of the recursion are the Schutz–Will and Iyer–Will formulas, for every overtone.
    #[test]
    fn third_order_of_the_recursion_is_the_iyer_will_formula() {
        for (l, s, n) in [(2, 2, 0u32), (2, 2, 3), (3, 0, 1), (1, 1, 2)] {
            let e = schwarzschild(l, s, n, 3);
            let w2 = e.series.partial[2] * e.series.partial[2];
            let iw = iyer_will(e.v0, &e.derivs, n as f64 + 0.5);
            assert!((w2 - iw).norm() < 1e-12 * iw.norm(), "l={l} s={s} n={n}: {w2} vs {iw}");
            let first = e.v0 - Complex64::i() * (n as f64 + 0.5) * (-2.0 * e.derivs[0]).sqrt();
            assert!((e.series.partial[0] * e.series.partial[0] - first).norm() < 1e-13 * first.norm());
        }
    }

    // The quartic anharmonic oscillator −ψ'' + (y² + g y⁴) ψ = Eψ: E₀ = 1 + ¾g − (21/16)g² + (333/64)g³ − …
    // (C. M. Bender and T. T. Wu, Phys. Rev. 184 (1969) 1231, from memory). With c₂ = 1 the recursion's k is 1.
    #[test]
    fn recursion_gives_the_anharmonic_oscillator_series() {
        let g = 0.1;
        let e = barrier_top_coefficients(&[c(0.0), c(0.0), c(1.0), c(0.0), c(g)], 0, 6);
        let want = [1.0, 0.0, 0.75 * g, 0.0, -21.0 / 16.0 * g * g, 0.0, 333.0 / 64.0 * g * g * g];
        for (j, (got, w)) in e.iter().zip(want).enumerate() {
            assert!((got - w).norm() < 1e-14, "E_{j} = {got}, expected {w}");
        }
        // First excited state: E₁ = 3 + (15/4)g − (165/16)g² + … (Bender & Wu 1969, from memory).
        let e = barrier_top_coefficients(&[c(0.0), c(0.0), c(1.0), c(0.0), c(g)], 1, 4);
        assert!((e[0] - 3.0).norm() < 1e-14 && (e[2] - 3.75 * g).norm() < 1e-14 && (e[4] + 165.0 / 16.0 * g * g).norm() < 1e-14, "{e:?}");
    }

    fn poschl_teller(uu: i64, n: u32, order: usize) -> BarrierEstimate {
        let k = Field::new(["z", "U"].map(String::from).to_vec(), Limits::default()).unwrap();
        let (z, u) = (k.var(0), k.var(1));
        let one_z2 = k.sub(&int(1), &k.mul(&z, &z).unwrap()).unwrap();
        let v = k.mul(&u, &one_z2).unwrap();
        let h = k.inv(&one_z2).unwrap();
        try_barrier(&k, &v, &h, &[val(0), val(uu)], None, (-1.0, 1.0), n, order).unwrap()
    }

    // Pöschl–Teller barrier V = U sech²x, in z = tanh x: V = U(1 − z²), dx/dz = 1/(1 − z²).
    // Exact modes ω = √(U − ¼) − i(n+½) (V. Ferrari and B. Mashhoon, Phys. Rev. D 30 (1984) 295, from memory), so
    // ω² = U − ¼ − α² − 2iα√U Σ_j C(½, j)(−1/(4U))^j: the WKB series is that expansion term by term —
    // E₂ = −¼ − α², E_{4j} the binomial terms, every other coefficient zero.
    #[test]
    fn poschl_teller_series_is_the_expansion_of_the_exact_modes() {
        for (uu, n) in [(4i64, 0u32), (4, 2), (25, 1)] {
            let order = 12;
            let e = poschl_teller(uu, n, order);
            let (uf, a) = (uu as f64, n as f64 + 0.5);
            assert!(e.peak.abs() < 1e-12, "peak at {}", e.peak);
            let expect_d = [-2.0 * uf, 0.0, 16.0 * uf, 0.0, -272.0 * uf];
            for (got, want) in e.derivs.iter().zip(expect_d) {
                assert!((got - want).norm() < 1e-9 * uf, "tortoise derivatives {:?}", e.derivs);
            }
            let mut binom = 1.0;
            for i in 1..=order {
                let j = 2 * (i - 1); // the coefficient E_j
                let want = if j == 2 {
                    c(-0.25 - a * a)
                } else if j % 4 == 0 {
                    let m = (j / 4) as f64;
                    if m > 0.0 {
                        binom *= (0.5 - (m - 1.0)) / m;
                    }
                    Complex64::new(0.0, -2.0 * a * uf.sqrt() * binom * (-0.25 / uf).powi(m as i32))
                } else {
                    c(0.0)
                };
                let got = e.series.terms[i];
                assert!((got - want).norm() < 1e-10 * uf, "U = {uu}, n = {n}: E_{j} = {got}, expected {want}");
            }
            let exact = Complex64::new((uf - 0.25).sqrt(), -a);
            // The series converges here (4U > 1): order 12 and its Padé value are close to the exact mode.
            assert!((e.series.omega() - exact).norm() < 1e-6, "{} vs {exact}", e.series.omega());
            let p = e.series.pade_at(order).0.unwrap();
            assert!((p - exact).norm() < 1e-6, "Padé {p} vs {exact}");
        }
    }

    // (a) Eikonal limit Ω_c = λ = 1/(3√3 M) for Schwarzschild, at the photon sphere r = 3M (textbook;
    // V. Cardoso et al., Phys. Rev. D 79 (2009) 064016), from the l² part of the potential, for any spin.
    #[test]
    fn eikonal_limit_is_the_photon_sphere() {
        let (k, v, h) = regge_wheeler();
        let want = 1.0 / (3.0 * 3f64.sqrt());
        for s in [0, 2] {
            let e = try_eikonal_limit(&k, &v, &h, &[val(0), val(1), val(2), val(s)], None, (2.0, f64::INFINITY), 2).unwrap();
            assert!((e.peak - 3.0).abs() < 1e-12 && (e.omega_c - want).abs() < 1e-14 && (e.lyapunov - want).abs() < 1e-14, "{e:?}");
        }
        // M does not enter as M²·F at large M: not quadratic there; s enters only at order s².
        let err = try_eikonal_limit(&k, &v, &h, &[val(0), val(1), val(2), val(2)], None, (2.0, f64::INFINITY), 1).unwrap_err();
        assert_eq!(err.kind, ErrorKind::Usage);
        // Large l at finite l: the first-order estimate tends to the same limit.
        let l = 60;
        for n in [0u32, 1] {
            let e = schwarzschild(l, 2, n, 3);
            let a = n as f64 + 0.5;
            for w in [e.eikonal, e.series.omega()] {
                let (re, im) = (w.re / (l as f64 + 0.5), -w.im / a);
                assert!(close(re, want, 1e-3), "n = {n}: Re ω/(l+½) = {re}, expected {want}");
                assert!(close(im, want, 1e-3), "n = {n}: −Im ω/(n+½) = {im}, expected {want}");
            }
        }
    }

    // (b) Third-order WKB for the Regge–Wheeler equation, M = 1: l = 2, n = 0 is 0.3732 − 0.0892i and n = 1
    // 0.3460 − 0.2749i (S. Iyer, Phys. Rev. D 35 (1987) 3632, from memory); sixth order 0.3736 − 0.0889i
    // (R. A. Konoplya, Phys. Rev. D 68 (2003) 024018, from memory).
    #[test]
    fn third_and_sixth_orders_match_the_published_gravitational_modes() {
        let w = schwarzschild(2, 2, 0, 3).series.omega();
        assert!((w.re - 0.3732).abs() < 5e-5 && (w.im + 0.0892).abs() < 5e-5, "l = 2: {w}");
        let w = schwarzschild(2, 2, 1, 3).series.omega();
        assert!((w.re - 0.3460).abs() < 5e-5 && (w.im + 0.2749).abs() < 5e-5, "l = 2, n = 1: {w}");
        let w = schwarzschild(2, 2, 0, 6).series.omega();
        assert!((w.re - 0.3736).abs() < 5e-5 && (w.im + 0.0889).abs() < 5e-5, "l = 2, sixth order: {w}");
    }

    // The error against the continued-fraction value 0.37367168 − 0.08896232i (E. W. Leaver, Proc. R. Soc.
    // Lond. A 402 (1985) 285; tests/spectrum.rs reproduces it to 8 digits) falls with the order up to the
    // optimal truncation, and the spread between neighbouring orders bounds it there.
    #[test]
    fn error_against_the_continued_fraction_falls_with_order() {
        let exact = Complex64::new(0.37367168, -0.08896232);
        let e = schwarzschild(2, 2, 0, 12);
        let err: Vec<f64> = e.series.partial.iter().map(|w| (w - exact).norm()).collect();
        assert!(err[1] < err[0] && err[2] < err[1] && err[5] < err[2], "{err:?}");
        let (k, w, spread) = e.series.optimal().unwrap();
        assert!((w - exact).norm() <= 2.0 * spread + 1e-7, "order {k}: {w}, spread {spread}");
        assert!((w - exact).norm() < err[2], "optimal order {k} should beat third order: {err:?}");
        let (p, _) = e.series.pade_at(12);
        assert!((p.unwrap() - exact).norm() < 1e-3, "Padé {p:?}");
    }

    // The WKB transmission through the Pöschl–Teller barrier U sech²x against the exact
    // sinh²(πω)/(sinh²(πω) + cosh²(½π√(4U − 1))) (Landau & Lifshitz §25, from memory): near the barrier
    // top the error falls from order 1 to order 6.
    #[test]
    fn wkb_transmission_approaches_the_exact_barrier_transmission() {
        let e = poschl_teller(4, 0, 8);
        let exact = |w: f64| {
            let sh = (std::f64::consts::PI * w).sinh().powi(2);
            sh / (sh + (0.5 * std::f64::consts::PI * 15f64.sqrt()).cosh().powi(2))
        };
        for w in [1.8, 2.0, 2.2] {
            let t1 = wkb_transmission(&e.taylor, w * w, 1).unwrap();
            let t6 = wkb_transmission(&e.taylor, w * w, 6).unwrap();
            let x = exact(w);
            assert!((t6 - x).abs() < (t1 - x).abs() && (t6 - x).abs() < 1e-4, "ω = {w}: exact {x}, order 1 {t1}, order 6 {t6}");
        }
    }

    // (c) For s = 0 the peak of the potential tends to the photon sphere r = 3M as l grows (textbook).
    #[test]
    fn scalar_peak_tends_to_the_photon_sphere() {
        let d20 = (schwarzschild(20, 0, 0, 3).peak - 3.0).abs();
        let d200 = (schwarzschild(200, 0, 0, 3).peak - 3.0).abs();
        assert!(d200 < 1e-4, "l = 200: peak at r = {}", 3.0 + d200);
        assert!(d200 < d20 / 50.0, "the offset from r = 3M must fall like 1/l²: {d20} then {d200}");
    }

    // Estimates in the upper half-plane are never seeds.
    #[test]
    fn wrong_half_plane_estimates_are_not_seeds() {
        let s = WkbSeries {
            n: 0,
            terms: vec![c(1.0), Complex64::new(0.0, 1.0)],
            partial: vec![Complex64::new(1.0, 0.5)],
            pade: vec![Some(Complex64::new(1.0, 0.5))],
        };
        assert!(s.seed().is_none());
        let e = schwarzschild(2, 2, 0, 6);
        assert!(e.series.seed().is_some_and(|(w, _)| in_lower_half_plane(w)));
    }

    // (d) Bad input gives an error, not a panic.
    #[test]
    fn potentials_without_a_positive_barrier_are_errors() {
        let k = Field::new(["z", "w"].map(String::from).to_vec(), Limits::default()).unwrap();
        let (z, w) = (k.var(0), k.var(1));
        let one = RatFunc::one();
        let all = (f64::NEG_INFINITY, f64::INFINITY);
        let vals = [val(0), val(1)];
        let check = |v: &RatFunc, domain: (f64, f64), freq: Option<usize>, want: &str| {
            let e = try_barrier(&k, v, &one, &vals, freq, domain, 0, 3).unwrap_err();
            assert_eq!(e.kind, ErrorKind::Usage);
            assert!(e.message.contains(want), "{:?}", e.message);
        };
        // 1/z is monotonic: no critical point at all.
        check(&k.inv(&z).unwrap(), (0.0, f64::INFINITY), None, "no critical point");
        // z² + 1 has only a minimum.
        let well = k.add(&k.mul(&z, &z).unwrap(), &one).unwrap();
        check(&well, all, None, "is a maximum");
        // 1/(1 + z²) − 2 has its maximum at V₀ = −1.
        let low = k.sub(&k.inv(&well).unwrap(), &int(2)).unwrap();
        check(&low, all, None, "not positive");
        // The maximum of 1/(1 + z²) at z = 0 lies outside (1, ∞).
        check(&k.inv(&well).unwrap(), (1.0, f64::INFINITY), None, "no critical point");
        // An energy-dependent potential.
        let vw = k.mul(&w, &k.inv(&well).unwrap()).unwrap();
        check(&vw, all, Some(1), "depends on the frequency");
        check(&one, all, None, "constant");
        check(&k.inv(&well).unwrap(), (1.0, 0.0), None, "not an interval");
        // A missing parameter value.
        let e = try_barrier(&k, &vw, &one, &[val(0)], None, all, 0, 3).unwrap_err();
        assert!(e.message.contains("no value"), "{:?}", e.message);
        // Orders outside the accepted range.
        let e = try_barrier(&k, &k.inv(&well).unwrap(), &one, &vals, None, all, 0, 0).unwrap_err();
        assert!(e.message.contains("order"), "{:?}", e.message);
    }
}
