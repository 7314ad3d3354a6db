//! First estimates of quasinormal-mode frequencies from the top of a
//! potential barrier. The input is the Schrödinger form
//! φ_xx + (ω² − V(x)) φ = 0 with dx/dz = h(z), where V and h are exact
//! rational functions of the equation's variable z (variable 0 of the field)
//! and of parameters. The parameter values are substituted exactly, the
//! tortoise derivatives d^kV/dx^k = ((1/h) d/dz)^k V are built as exact
//! rational functions, and only then are numbers taken: the peak z₀ is a real
//! root of the numerator of dV/dz (companion-matrix eigenvalues), and the
//! derivatives are evaluated there in double precision. From these come the
//! eikonal estimate (B. F. Schutz and C. M. Will, ApJ 291 (1985) L33) and the
//! third-order WKB estimate (S. Iyer and C. M. Will, Phys. Rev. D 35 (1987)
//! 3621). Both are approximations whose error falls with the multipole
//! number; they seed the exact spectral solvers, they do not replace them.

use crate::algebra::{Field, GRat, Int, Poly, Rat, RatFunc};
use crate::analysis::numeric::try_roots;
use crate::error::{Error, ErrorKind, Result};
use num_complex::Complex64;

/// Peak data of the potential on the real axis and the estimates built from it.
#[derive(Clone, Debug, PartialEq)]
pub struct BarrierEstimate {
    /// Location z₀ of the maximum of V (real), in the equation's variable.
    pub peak: f64,
    /// V(z₀), as a complex number (real for the real potentials accepted here).
    pub v0: Complex64,
    /// d^kV/dx^k at the peak for k = 2..=6 (entry k − 2; x the tortoise coordinate).
    pub derivs: [Complex64; 5],
    /// Eikonal (first-order) estimate ω ≈ √V₀ − i(n+½)√(−V₀''/(2V₀)) (Schutz–Will 1985).
    pub eikonal: Complex64,
    /// Third-order WKB (Iyer & Will 1987), the root with positive real part.
    pub wkb3: Complex64,
}

/// Computes the estimate for overtone n. `values` gives every field variable a value (entry 0, the variable, is ignored);
/// `freq` is the field index of ω when V depends on it (then an error: the WKB formulas here need V free of ω).
/// `domain` is the real interval (a, b) of z to search (e.g. from the outermost horizon to +∞, b = f64::INFINITY allowed).
///
/// The peak is the real critical point of V strictly inside the domain that
/// is a maximum (d²V/dx² < 0) with the largest V; V(z₀) must be positive.
/// Square roots are principal (cut along the negative real axis), so both
/// estimates have Re ω ≥ 0; the mirror mode −ω̄ is not listed.
pub fn try_barrier(
    field: &Field,
    v: &RatFunc,
    h: &RatFunc,
    values: &[GRat],
    freq: Option<usize>,
    domain: (f64, f64),
    n: u32,
) -> Result<BarrierEstimate> {
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

    // Tortoise derivatives D^k V, D = (1/h) d/dz, all exact; numbers come afterwards.
    let hinv = field.inv(&h)?;
    let mut tower = vec![v.clone()];
    for k in 1..=6 {
        let d = field.mul(&field.deriv(&tower[k - 1], 0)?, &hinv)?;
        tower.push(d);
    }
    let tower: Vec<NumRat> = tower.iter().map(NumRat::new).collect::<Result<_>>()?;

    let z0 = peak(field, &v, &tower, (a, b))?;
    let at = |k: usize| -> Result<Complex64> {
        tower[k]
            .eval(z0)
            .ok_or_else(|| usage(format!("dx/dz vanishes or has a pole at the peak z = {z0}, so the tortoise derivatives there are not finite")))
    };
    let v0 = at(0)?;
    let derivs = [at(2)?, at(3)?, at(4)?, at(5)?, at(6)?];
    if v0.re <= 0.0 {
        return Err(usage(format!("the barrier top V(z₀) = {} at z₀ = {z0} is not positive; the WKB estimates need V₀ > 0", v0.re))
            .note("the formulas expand around a positive maximum of V in the tortoise coordinate"));
    }
    let alpha = n as f64 + 0.5;
    let eikonal = eikonal(v0, derivs[0], alpha);
    let wkb3 = wkb3(v0, &derivs, alpha);
    if !(eikonal.re.is_finite() && eikonal.im.is_finite() && wkb3.re.is_finite() && wkb3.im.is_finite()) {
        return Err(usage(format!("the WKB estimates at the peak z₀ = {z0} are not finite")));
    }
    Ok(BarrierEstimate { peak: z0, v0, derivs, eikonal, wkb3 })
}

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
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
}

/// The real maximum of V inside the domain with the largest value.
fn peak(field: &Field, v: &RatFunc, tower: &[NumRat], (a, b): (f64, f64)) -> Result<f64> {
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
        let (Some(v0), Some(v2)) = (tower[0].eval(z), tower[2].eval(z)) else {
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

/// Eikonal estimate ω = √V₀ − iα√(−V₀''/(2V₀)), α = n + ½ (Schutz & Will, ApJ 291 (1985) L33, from memory).
fn eikonal(v0: Complex64, v2: Complex64, alpha: f64) -> Complex64 {
    v0.sqrt() - Complex64::i() * alpha * (-v2 / (2.0 * v0)).sqrt()
}

/// Third-order WKB (Iyer & Will, Phys. Rev. D 35 (1987) 3621, eq. 1.5, written in V = ω² − Q; from memory):
/// ω² = V₀ + (−2V₀'')^½ Λ − iα(−2V₀'')^½ (1 + Ω), returned as the principal square root.
fn wkb3(v0: Complex64, d: &[Complex64; 5], alpha: f64) -> Complex64 {
    let [v2, v3, v4, v5, v6] = *d;
    let a2 = alpha * alpha;
    let s = (-2.0 * v2).sqrt();
    let lambda = (v4 / v2 * (0.25 + a2) / 8.0 - (v3 / v2).powu(2) * (7.0 + 60.0 * a2) / 288.0) / s;
    let omega = (5.0 / 6912.0 * (v3 / v2).powu(4) * (77.0 + 188.0 * a2) - v3 * v3 * v4 / v2.powu(3) * (51.0 + 100.0 * a2) / 384.0
        + (v4 / v2).powu(2) * (67.0 + 68.0 * a2) / 2304.0
        + v3 * v5 / (v2 * v2) * (19.0 + 28.0 * a2) / 288.0
        - v6 / v2 * (5.0 + 4.0 * a2) / 288.0)
        / (-2.0 * v2);
    let w2 = v0 + s * lambda - Complex64::i() * alpha * s * (1.0 + omega);
    w2.sqrt()
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

    fn schwarzschild(l: i64, s: i64, n: u32) -> BarrierEstimate {
        let (k, v, h) = regge_wheeler();
        try_barrier(&k, &v, &h, &[val(0), val(1), val(l), val(s)], None, (2.0, f64::INFINITY), n).unwrap()
    }

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs()
    }

    // (a) Eikonal limit: ω ≈ Ω_c (l+½) − i λ (n+½) with Ω_c = λ = 1/(3√3 M) for Schwarzschild
    // (textbook; V. Cardoso et al., Phys. Rev. D 79 (2009) 064016).
    #[test]
    fn large_l_tends_to_the_photon_sphere_frequency_and_lyapunov_exponent() {
        let c = 1.0 / (3.0 * 3f64.sqrt());
        let l = 60;
        for n in [0u32, 1] {
            let e = schwarzschild(l, 2, n);
            let a = n as f64 + 0.5;
            for w in [e.eikonal, e.wkb3] {
                let (re, im) = (w.re / (l as f64 + 0.5), -w.im / a);
                assert!(close(re, c, 1e-3), "n = {n}: Re ω/(l+½) = {re}, expected {c}");
                assert!(close(im, c, 1e-3), "n = {n}: −Im ω/(n+½) = {im}, expected {c}");
            }
        }
    }

    // (b) Third-order WKB for the Regge–Wheeler equation, M = 1: l = 2, n = 0 is 0.3732 − 0.0892i
    // (S. Iyer, Phys. Rev. D 35 (1987) 3632, from memory); l = 3, n = 0 lies near Leaver's
    // 0.59944 − 0.09270i (E. W. Leaver, Proc. R. Soc. Lond. A 402 (1985) 285, from memory).
    #[test]
    fn third_order_matches_the_published_gravitational_modes() {
        let w = schwarzschild(2, 2, 0).wkb3;
        assert!((w.re - 0.3732).abs() < 5e-5 && (w.im + 0.0892).abs() < 5e-5, "l = 2: {w}");
        // The first overtone exercises the α-dependence of Λ and Ω: 0.3460 − 0.2749i (Iyer 1987, from memory).
        let w = schwarzschild(2, 2, 1).wkb3;
        assert!((w.re - 0.3460).abs() < 5e-5 && (w.im + 0.2749).abs() < 5e-5, "l = 2, n = 1: {w}");
        let w = schwarzschild(3, 2, 0).wkb3;
        let leaver = Complex64::new(0.59944, -0.09270);
        assert!((w - leaver).norm() < 5e-3 * leaver.norm(), "l = 3: {w}");
    }

    // (c) For s = 0 the peak of the potential tends to the photon sphere r = 3M as l grows (textbook).
    #[test]
    fn scalar_peak_tends_to_the_photon_sphere() {
        let d20 = (schwarzschild(20, 0, 0).peak - 3.0).abs();
        let d200 = (schwarzschild(200, 0, 0).peak - 3.0).abs();
        assert!(d200 < 1e-4, "l = 200: peak at r = {}", 3.0 + d200);
        assert!(d200 < d20 / 50.0, "the offset from r = 3M must fall like 1/l²: {d20} then {d200}");
    }

    // Pöschl–Teller barrier V = U sech²x, in z = tanh x: V = U(1 − z²), dx/dz = 1/(1 − z²).
    // Exact modes ω = √(U − ¼) − i(n+½) (V. Ferrari and B. Mashhoon, Phys. Rev. D 30 (1984) 295, from memory).
    // Derivation check of the third-order formula: with V₀''' = V₀⁽⁵⁾ = 0 it gives Re ω² = U − ¼ − α² exactly and
    // Im ω² = −2α√U (1 − 1/(8U)), the expansion of the exact −2α√(U − ¼) to that order.
    #[test]
    fn poschl_teller_checks_the_even_terms_of_the_third_order_formula() {
        let k = Field::new(["z", "U"].map(String::from).to_vec(), Limits::default()).unwrap();
        let (z, u) = (k.var(0), k.var(1));
        let one_z2 = k.sub(&int(1), &k.mul(&z, &z).unwrap()).unwrap();
        let v = k.mul(&u, &one_z2).unwrap();
        let h = k.inv(&one_z2).unwrap();
        for (uu, n) in [(4i64, 0u32), (4, 2), (25, 1)] {
            let e = try_barrier(&k, &v, &h, &[val(0), val(uu)], None, (-1.0, 1.0), n).unwrap();
            let (uf, a) = (uu as f64, n as f64 + 0.5);
            assert!(e.peak.abs() < 1e-12, "peak at {}", e.peak);
            let expect_d = [-2.0 * uf, 0.0, 16.0 * uf, 0.0, -272.0 * uf];
            for (got, want) in e.derivs.iter().zip(expect_d) {
                assert!((got - want).norm() < 1e-9 * uf, "tortoise derivatives {:?}", e.derivs);
            }
            let w2 = e.wkb3 * e.wkb3;
            assert!((w2.re - (uf - 0.25 - a * a)).abs() < 1e-9 * uf, "U = {uu}, n = {n}: ω² = {w2}");
            let exact_im = -2.0 * a * (uf - 0.25).sqrt();
            assert!(close(w2.im, exact_im, 2.0 / (128.0 * uf * uf)), "U = {uu}, n = {n}: ω² = {w2}, exact Im {exact_im}");
            assert!(close(w2.im, -2.0 * a * uf.sqrt() * (1.0 - 1.0 / (8.0 * uf)), 1e-12));
        }
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
            let e = try_barrier(&k, v, &one, &vals, freq, domain, 0).unwrap_err();
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
        let e = try_barrier(&k, &vw, &one, &[val(0)], None, all, 0).unwrap_err();
        assert!(e.message.contains("no value"), "{:?}", e.message);
    }
}
