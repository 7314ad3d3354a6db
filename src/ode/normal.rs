//! The Liouville normal form: y = exp(−½∫p) ψ turns y'' + p y' + q y = 0
//! into ψ'' + Q ψ = 0 with Q = q − p'/2 − p²/4. Also the prefactor written as
//! powers of the denominator factors of p times an exponential, and the
//! principal parts of Q at each linear factor of its denominator.

use crate::algebra::{Field, Poly, Rat, RatFunc, UPoly};
use crate::error::Result;

/// The prefactor exp(−½∫p dz) = ∏ fᵢ^cᵢ · exp(E) · (unevaluated parts).
#[derive(Clone, Debug)]
pub struct Prefactor {
    /// Powers of denominator factors of p: (factor, exponent free of the variable).
    pub powers: Vec<(Poly, RatFunc)>,
    /// The exponent E of the exponential factor (zero when there is none).
    pub exponential: RatFunc,
    /// Parts of p at the roots θ of a factor f of higher degree whose integral
    /// has no closed form here: (f, multiplicity e, R) with R(θ) = N(θ)/G(θ),
    /// p = N/(f^e G); for e = 1 the factor is ∏_θ (z − θ)^(−R(θ)/(2 f'(θ))).
    pub unevaluated: Vec<(Poly, u32, RatFunc)>,
}

/// The principal part of Q at a root z₀ of a linear factor of its denominator.
#[derive(Clone, Debug)]
pub struct PrincipalPart {
    /// The linear factor.
    pub factor: Poly,
    /// The root z₀, free of the variable.
    pub point: RatFunc,
    /// Pole order k.
    pub order: u32,
    /// Laurent coefficients of (z − z₀)^(−k), …, (z − z₀)^(−1).
    pub coeffs: Vec<RatFunc>,
}

/// The normal form of an equation.
#[derive(Clone, Debug)]
pub struct NormalForm {
    /// Q in ψ'' + Q ψ = 0.
    pub q: RatFunc,
    /// y = prefactor · ψ.
    pub prefactor: Prefactor,
    /// Principal parts of Q at the linear factors of its denominator.
    pub principal: Vec<PrincipalPart>,
}

/// Q = q − p'/2 − p²/4.
pub fn normal_q(k: &Field, p: &RatFunc, q: &RatFunc) -> Result<RatFunc> {
    let half = RatFunc::rat(&Rat::new(1.into(), 2.into()).expect("nonzero"));
    let quarter = RatFunc::rat(&Rat::new(1.into(), 4.into()).expect("nonzero"));
    let dp = k.deriv(p, 0)?;
    let t = k.add(&k.mul(&half, &dp)?, &k.mul(&quarter, &k.mul(p, p)?)?)?;
    k.sub(q, &t)
}

/// The normal form of y'' + p y' + q y = 0.
pub fn normal_form(k: &Field, p: &RatFunc, q: &RatFunc) -> Result<NormalForm> {
    let qn = normal_q(k, p, q)?;
    let prefactor = prefactor(k, p)?;
    let principal = principal_parts(k, &qn)?;
    Ok(NormalForm { q: qn, prefactor, principal })
}

/// The root of a factor of degree one in the variable, c1·z + c0 → −c0/c1.
pub fn linear_root(k: &Field, f: &Poly) -> Result<Option<RatFunc>> {
    if f.degree(0) != 1 {
        return Ok(None);
    }
    let u = f.to_univariate(0);
    let c0 = RatFunc::from_poly(u[0].clone());
    let c1 = RatFunc::from_poly(u[1].clone());
    Ok(Some(k.neg(&k.div(&c0, &c1)?)))
}

/// Splits a rational function at one denominator factor: returns the Laurent
/// data at a linear factor's root, as coefficients of (z − z₀)^(−e..−1)
/// followed by `extra` regular Taylor coefficients.
pub(crate) fn laurent_at(k: &Field, r: &RatFunc, idx: usize, extra: usize) -> Result<Option<(RatFunc, Vec<RatFunc>)>> {
    let (f, e) = &r.den_factors()[idx];
    let Some(z0) = linear_root(k, f.poly())? else {
        return Ok(None);
    };
    // r = N / (scale · c1^e (z − z0)^e · G)
    let mut g = UPoly::constant(RatFunc::rat(&Rat::int(r.scale().clone())));
    for (j, (h, m)) in r.den_factors().iter().enumerate() {
        if j == idx {
            continue;
        }
        let hp = UPoly::from_poly(&h.poly().pow(*m));
        g = g.mul(k, &hp)?;
    }
    let c1 = RatFunc::from_poly(f.poly().to_univariate(0)[1].clone());
    g = g.scale(k, &k.pow(&c1, *e as i64)?)?;
    let n = UPoly::from_poly(r.num());
    let ns = n.taylor_shift(k, &z0)?;
    let gs = g.taylor_shift(k, &z0)?;
    let coeffs = ns.series_div(k, &gs, *e as usize + extra)?;
    Ok(coeffs.map(|c| (z0, c)))
}

/// Principal parts of Q at every linear factor of its denominator.
pub fn principal_parts(k: &Field, q: &RatFunc) -> Result<Vec<PrincipalPart>> {
    let mut out = Vec::new();
    for idx in 0..q.den_factors().len() {
        let (f, e) = &q.den_factors()[idx];
        if !f.poly().uses_var(0) {
            continue;
        }
        if let Some((z0, coeffs)) = laurent_at(k, q, idx, 0)? {
            out.push(PrincipalPart { factor: f.poly().clone(), point: z0, order: *e, coeffs });
        }
    }
    Ok(out)
}

/// exp(−½∫p dz) as powers, an exponential and unevaluated parts.
pub fn prefactor(k: &Field, p: &RatFunc) -> Result<Prefactor> {
    let minus_half = RatFunc::rat(&Rat::new((-1).into(), 2.into()).expect("nonzero"));
    let mut powers = Vec::new();
    let mut unevaluated = Vec::new();
    let mut integral = RatFunc::zero(); // ∫ of the rational (non-logarithmic) part
                                        // Polynomial part of p (in the variable) and the proper fraction.
    let num_u = UPoly::from_poly(p.num());
    // Factors free of the variable are constants in z: fold them into the numerator.
    let mut const_den = RatFunc::one();
    for (f, e) in p.den_factors() {
        if !f.poly().uses_var(0) {
            const_den = k.mul(&const_den, &k.pow(&RatFunc::from_poly(f.poly().clone()), *e as i64)?)?;
        }
    }
    let num_u = num_u.scale(k, &k.inv(&const_den)?)?;
    let scale_u = UPoly::constant(RatFunc::rat(&Rat::int(p.scale().clone())));
    let den_degree: usize = p.den_factors().iter().map(|(f, e)| f.poly().degree(0) as usize * *e as usize).sum();
    // The polynomial part exists only when the numerator's degree reaches the denominator's.
    let poly_part = if num_u.degree().is_some_and(|d| d >= den_degree) {
        let mut den_u = scale_u.clone();
        for (f, e) in p.den_factors() {
            if f.poly().uses_var(0) {
                den_u = den_u.mul(k, &UPoly::from_poly(&f.poly().pow(*e)))?;
            }
        }
        num_u.divrem(k, &den_u)?.map(|(q, _)| q).unwrap_or_else(UPoly::zero)
    } else {
        UPoly::zero()
    };
    // ∫ of the polynomial part.
    let mut ip = Vec::with_capacity(poly_part.coeffs.len() + 1);
    ip.push(RatFunc::zero());
    for (i, c) in poly_part.coeffs.iter().enumerate() {
        ip.push(k.div(c, &RatFunc::from_poly(Poly::int(i as i64 + 1)))?);
    }
    integral = k.add(&integral, &UPoly { coeffs: ip }.to_ratfunc(k)?)?;
    for idx in 0..p.den_factors().len() {
        let (f, e) = &p.den_factors()[idx];
        if !f.poly().uses_var(0) {
            continue;
        }
        if let Some((z0, c)) = laurent_at(k, p, idx, 0)? {
            // c[j] multiplies (z − z0)^(−e + j); the last is the residue.
            let _ = z0;
            let lin = RatFunc::from_poly(f.poly().clone());
            let c1 = RatFunc::from_poly(f.poly().to_univariate(0)[1].clone());
            let zz0 = k.div(&lin, &c1)?; // z − z0
            for (j, cj) in c.iter().enumerate() {
                let power = *e as i64 - j as i64; // pole order of this term
                if cj.is_zero() {
                    continue;
                }
                if power == 1 {
                    powers.push((f.poly().clone(), k.mul(&minus_half, cj)?));
                } else {
                    // ∫ c (z − z0)^(−m) = c (z − z0)^(1 − m) / (1 − m)
                    let t = k.div(&k.mul(cj, &k.pow(&zz0, 1 - power)?)?, &RatFunc::from_poly(Poly::int(1 - power)))?;
                    integral = k.add(&integral, &t)?;
                }
            }
            continue;
        }
        // A nonlinear factor: the part A/f^e of the partial fractions.
        // A ≡ num / (scale·∏ other factors) mod f^e, every product reduced as it is formed.
        let fe = UPoly::from_poly(&f.poly().pow(*e));
        let reduce = |u: &UPoly| -> Result<UPoly> { Ok(u.divrem(k, &fe)?.map(|(_, r)| r).unwrap_or_else(UPoly::zero)) };
        let mut rest = scale_u.clone();
        for (j, (g, m)) in p.den_factors().iter().enumerate() {
            if j == idx || !g.poly().uses_var(0) {
                continue;
            }
            let gm = reduce(&UPoly::from_poly(g.poly()))?;
            for _ in 0..*m {
                rest = reduce(&rest.mul(k, &gm)?)?;
            }
        }
        let nm = reduce(&num_u)?;
        if nm.is_zero() {
            continue;
        }
        if *e == 1 {
            // The part of p at the roots of f is Σ_θ res_θ/(z − θ) with
            // res_θ = N(θ)/(f'(θ)·G(θ)); it is c·f'/f (giving f^(−c/2)) iff
            // N ≡ c·f'·G (mod f) with c free of z — no inverse needed.
            let fp = UPoly::from_poly(&f.poly().derivative(0));
            let x = reduce(&fp.mul(k, &rest)?)?;
            if let (Some(dn), Some(dx)) = (nm.degree(), x.degree()) {
                if dn == dx {
                    let c = k.div(&nm.coeff(dn), &x.coeff(dx))?;
                    if nm.add(k, &x.scale(k, &k.neg(&c))?)?.is_zero() && !c.uses_var(0) {
                        powers.push((f.poly().clone(), k.mul(&minus_half, &c)?));
                        continue;
                    }
                }
            }
        }
        // No closed form here: keep R with R(θ) = N(θ)/G(θ) at the roots θ of f.
        let r = k.div(&nm.to_ratfunc(k)?, &rest.to_ratfunc(k)?)?;
        unevaluated.push((f.poly().clone(), *e, r));
    }
    let exponential = k.mul(&minus_half, &integral)?;
    Ok(Prefactor { powers, exponential, unevaluated })
}

/// The prefactor as one expression: y = (this) · ψ.
pub fn prefactor_text(var_name: &str, names: &[String], pf: &Prefactor, style: crate::algebra::print::Style) -> String {
    use crate::algebra::print::Style;
    let pt = |x: &crate::algebra::Poly| crate::algebra::print::poly_text(x, &crate::algebra::Int::ONE, names, style);
    let rt = |x: &RatFunc| crate::algebra::print::ratfunc_text(x, names, style);
    let mut parts = Vec::new();
    for (f, e) in &pf.powers {
        let base = crate::algebra::print::wrap(pt(f), style);
        let ex = rt(e);
        parts.push(match style {
            Style::Text => format!("{base}^{}", crate::algebra::print::wrap(ex, style)),
            Style::Latex => format!("{base}^{{{ex}}}"),
        });
    }
    if !pf.exponential.is_zero() {
        let ex = rt(&pf.exponential);
        parts.push(match style {
            Style::Text => format!("exp({ex})"),
            Style::Latex => format!("e^{{{ex}}}"),
        });
    }
    let var = match style {
        Style::Text => var_name.to_string(),
        Style::Latex => crate::algebra::print::latex_name(var_name),
    };
    for (f, e, a) in &pf.unevaluated {
        let ft = pt(f);
        let num = rt(a);
        let letter = crate::algebra::print::root_letter(names);
        let theta = match style {
            Style::Text => letter.text,
            Style::Latex => letter.latex,
        };
        parts.push(match (style, e) {
            (Style::Text, 1) => format!("prod[{theta} root of {ft}]((({var}) - {theta})^(-R({theta})/(2*F'({theta}))), R = {num}, F = {ft})"),
            (Style::Text, e) => format!("exp(-1/2*integral(part of p at the roots of ({ft})^{e}; R = {num}))"),
            (Style::Latex, _) => format!("\\prod_{{{theta}:\\,{ft}=0}} ({var} - {theta})^{{-R({theta})/(2F'({theta}))}}\\Big|_{{R = {num}}}"),
        });
    }
    if parts.is_empty() {
        return "1".to_string();
    }
    match style {
        Style::Text => parts.join("*"),
        Style::Latex => parts.join(" "),
    }
}
