//! Canonical rational functions over Q(i) in the variable and parameters,
//! with a factored real denominator.
//!
//! A value is `num / (scale · ∏ fᵢ^eᵢ)`: `num` has Gaussian-integer
//! coefficients, `scale` is a positive integer, and the `fᵢ` are real,
//! primitive, non-constant polynomials with positive leading coefficient,
//! pairwise coprime over Q, none dividing `num` (in the sense
//! gcd(Re num, Im num, fᵢ) = 1) and `gcd(content(num), scale) = 1`. The
//! expanded denominator is then the unique minimal real denominator.
//!
//! Denominators stay factored: sums and products only need the factors
//! refined to a common coprime base (gcds of small polynomials), and
//! cancellation is trial division by those factors. A general gcd against a
//! large numerator is needed only for a factor not known to be irreducible.

use super::gcd::{content_in, gcd, primitive, split_linear, squarefree_in, surely_irreducible};
use super::int::Int;
use super::poly::{GInt, Mono, Poly, MAX_EXP, MAX_VARS};
use super::rational::{GRat, Rat};
use crate::error::{Error, ErrorKind, Result};
use std::cell::RefCell;
use std::collections::BTreeMap;
use std::sync::Arc;

/// A denominator factor: real, primitive, non-constant, positive leading coefficient.
#[derive(Debug, PartialEq, Eq, Hash)]
pub struct Factor {
    poly: Poly,
    irreducible: bool,
}

impl Factor {
    fn new(poly: Poly) -> Factor {
        let irreducible = surely_irreducible(&poly);
        Factor { poly, irreducible }
    }
    /// The factor's polynomial.
    pub fn poly(&self) -> &Poly {
        &self.poly
    }
    /// True when the factor is known to be irreducible over Q.
    pub fn is_irreducible(&self) -> bool {
        self.irreducible
    }
}

/// A canonical rational function (see the module documentation).
#[derive(Clone, Debug)]
pub struct RatFunc {
    num: Poly,
    scale: Int,
    den: Vec<(Arc<Factor>, u32)>,
}

impl PartialEq for RatFunc {
    fn eq(&self, o: &RatFunc) -> bool {
        self.scale == o.scale && self.num == o.num && self.den_expanded() == o.den_expanded()
    }
}

impl RatFunc {
    /// Zero.
    pub fn zero() -> RatFunc {
        RatFunc { num: Poly::zero(), scale: Int::ONE, den: Vec::new() }
    }
    /// One.
    pub fn one() -> RatFunc {
        RatFunc::from_poly(Poly::int(1))
    }
    /// A polynomial.
    pub fn from_poly(p: Poly) -> RatFunc {
        RatFunc { num: p, scale: Int::ONE, den: Vec::new() }
    }
    /// A Gaussian-rational constant.
    pub fn constant(c: &GRat) -> RatFunc {
        // (a/b + (c/d) i) = (a·d·… ) over the lcm of b and d.
        let l = lcm(c.re.denom(), c.im.denom());
        let re = c.re.numer().mul(&l.div_exact(c.re.denom()).expect("lcm"));
        let im = c.im.numer().mul(&l.div_exact(c.im.denom()).expect("lcm"));
        RatFunc::normalized_content(Poly::constant(GInt { re, im }), l, Vec::new())
    }
    /// A rational constant.
    pub fn rat(r: &Rat) -> RatFunc {
        RatFunc::constant(&GRat::real(r.clone()))
    }
    /// True for zero.
    pub fn is_zero(&self) -> bool {
        self.num.is_zero()
    }
    /// The value when free of every variable.
    pub fn as_constant(&self) -> Option<GRat> {
        if !self.den.is_empty() {
            return None;
        }
        let c = self.num.as_constant()?;
        Some(GRat {
            re: Rat::new(c.re, self.scale.clone()).expect("positive scale"),
            im: Rat::new(c.im, self.scale.clone()).expect("positive scale"),
        })
    }
    /// The numerator with Gaussian-integer coefficients.
    pub fn num(&self) -> &Poly {
        &self.num
    }
    /// The positive integer part of the denominator.
    pub fn scale(&self) -> &Int {
        &self.scale
    }
    /// The polynomial factors of the denominator with multiplicities.
    pub fn den_factors(&self) -> &[(Arc<Factor>, u32)] {
        &self.den
    }
    /// The primitive expanded denominator ∏ fᵢ^eᵢ (without `scale`).
    pub fn den_expanded(&self) -> Poly {
        let mut d = Poly::int(1);
        for (f, e) in &self.den {
            d = d.mul(&f.poly.pow(*e));
        }
        d
    }
    /// True when variable `i` occurs.
    pub fn uses_var(&self, i: usize) -> bool {
        self.num.uses_var(i) || self.den.iter().any(|(f, _)| f.poly.uses_var(i))
    }
    /// True when every coefficient is real.
    pub fn is_real(&self) -> bool {
        self.num.is_real()
    }
    /// Evaluates at a point (one value per variable); `None` where the denominator vanishes.
    pub fn eval(&self, point: &[GRat]) -> Option<GRat> {
        let mut d = GRat::real(Rat::int(self.scale.clone()));
        for (f, e) in &self.den {
            let v = f.poly.eval(point);
            for _ in 0..*e {
                d = d.mul(&v);
            }
        }
        if d.is_zero() {
            return None;
        }
        self.num.eval(point).div(&d)
    }
    /// Total number of terms in numerator and factors (a size measure).
    pub fn size(&self) -> usize {
        self.num.len() + self.den.iter().map(|(f, _)| f.poly.len()).sum::<usize>()
    }

    fn normalized_content(num: Poly, scale: Int, den: Vec<(Arc<Factor>, u32)>) -> RatFunc {
        if num.is_zero() {
            return RatFunc::zero();
        }
        let g = num.content_int().gcd(&scale);
        if g.is_one() {
            return RatFunc { num, scale, den };
        }
        RatFunc { num: num.div_exact_int(&g).expect("content divides"), scale: scale.div_exact(&g).expect("gcd divides"), den }
    }
}

fn lcm(a: &Int, b: &Int) -> Int {
    let g = a.gcd(b);
    a.div_exact(&g).expect("gcd divides").mul(b).abs()
}

/// Bounds on the size of exact computations, so that bad or huge input
/// ends with a clear error instead of running away.
#[derive(Clone, Debug)]
pub struct Limits {
    /// Largest degree of any one variable in any intermediate polynomial (at most 127).
    pub max_degree: u32,
    /// Most terms in any one polynomial.
    pub max_terms: usize,
    /// Largest coefficient size in bits.
    pub max_bits: u64,
    /// Most term-by-term products in one multiplication.
    pub max_work: usize,
}

impl Default for Limits {
    fn default() -> Limits {
        Limits { max_degree: 100, max_terms: 50_000, max_bits: 20_000, max_work: 20_000_000 }
    }
}

/// The field Q(i)(variables): names of the variables, limits, and a cache of
/// Factors with their multiplicities, in canonical order.
pub type Factors = Vec<(Arc<Factor>, u32)>;

/// The union of two factor lists and each side's exponents over it.
type CommonBase = (Vec<Arc<Factor>>, Vec<u32>, Vec<u32>);

/// known denominator factors used as hints when a new denominator is split.
#[derive(Debug)]
pub struct Field {
    names: Vec<String>,
    limits: Limits,
    hints: RefCell<Vec<Arc<Factor>>>,
}

fn limit(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Limit, msg)
}

impl Field {
    /// A field in the named variables (variable 0 is the independent variable).
    pub fn new(names: Vec<String>, limits: Limits) -> Result<Field> {
        if names.len() > MAX_VARS {
            return Err(limit(format!("too many symbols: {} (at most {MAX_VARS}, the variable included)", names.len())));
        }
        Ok(Field { names, limits, hints: RefCell::new(Vec::new()) })
    }
    /// The variable names, variable 0 first.
    pub fn names(&self) -> &[String] {
        &self.names
    }
    /// The limits in force.
    pub fn limits(&self) -> &Limits {
        &self.limits
    }
    /// Variable `i` as a rational function.
    pub fn var(&self, i: usize) -> RatFunc {
        RatFunc::from_poly(Poly::var(i))
    }

    fn check_poly(&self, p: &Poly) -> Result<()> {
        if p.len() > self.limits.max_terms {
            return Err(limit(format!("an intermediate polynomial has {} terms (limit {})", p.len(), self.limits.max_terms)));
        }
        if p.max_bits() > self.limits.max_bits {
            return Err(limit(format!("a coefficient has more than {} bits", self.limits.max_bits)));
        }
        Ok(())
    }

    /// Checked polynomial product.
    pub(crate) fn pmul(&self, a: &Poly, b: &Poly) -> Result<Poly> {
        let (da, db) = (a.degrees(), b.degrees());
        for i in 0..self.names.len().max(1) {
            let e = da.exp(i) + db.exp(i);
            if e > self.limits.max_degree.min(MAX_EXP) {
                let name = self.names.get(i).map(String::as_str).unwrap_or("?");
                return Err(limit(format!("degree {e} in {name} exceeds the limit of {}", self.limits.max_degree)));
            }
        }
        if a.len().saturating_mul(b.len()) > self.limits.max_work {
            return Err(limit(format!("a product of polynomials with {} and {} terms is too large", a.len(), b.len())));
        }
        let words = super::budget::words(a.max_bits(), b.max_bits());
        if !super::budget::charge((a.len() as u64).saturating_mul(b.len() as u64).saturating_mul(words)) {
            return Err(super::budget::exceeded());
        }
        let p = a.mul(b);
        self.check_poly(&p)?;
        Ok(p)
    }

    fn ppow(&self, a: &Poly, e: u32) -> Result<Poly> {
        // The number of terms of a^e is at most C(e + t − 1, t − 1) for t terms,
        // and at most ∏ (e·deg_v + 1): refuse before computing what cannot fit.
        let t = a.len() as f64;
        let mut multinomial = 1f64;
        for i in 1..(a.len().max(1) as u64) {
            multinomial *= (e as f64 + i as f64) / i as f64;
            if multinomial > 1e12 {
                break;
            }
        }
        let d = a.degrees();
        let box_bound: f64 = (0..MAX_VARS).map(|i| (e as f64) * d.exp(i) as f64 + 1.0).product();
        let bound = multinomial.min(box_bound);
        if t > 1.0 && bound > self.limits.max_terms as f64 {
            return Err(limit(format!("a power with up to {bound:.0} terms exceeds the limit of {} terms", self.limits.max_terms)));
        }
        let mut acc = Poly::int(1);
        for _ in 0..e {
            acc = self.pmul(&acc, a)?;
        }
        Ok(acc)
    }

    fn pgcd(&self, a: &Poly, b: &Poly) -> Result<Poly> {
        gcd(a, b).ok_or_else(|| {
            if super::budget::charge(0) {
                limit("a polynomial gcd grew beyond the exponent range")
            } else {
                super::budget::exceeded()
            }
        })
    }

    /// Rewrites two factor lists over one pairwise coprime base.
    fn common_base(&self, a: &[(Arc<Factor>, u32)], b: &[(Arc<Factor>, u32)]) -> Result<CommonBase> {
        let mut r = Refiner::default();
        let ia: Vec<(usize, u32)> = a.iter().map(|(f, e)| (r.id_of(f.clone()), *e)).collect();
        let ib: Vec<(usize, u32)> = b.iter().map(|(f, e)| (r.id_of(f.clone()), *e)).collect();
        r.refine(self)?;
        let base_ids = r.alive_ids();
        let pos: BTreeMap<usize, usize> = base_ids.iter().enumerate().map(|(k, id)| (*id, k)).collect();
        let mut ea = vec![0u32; base_ids.len()];
        let mut eb = vec![0u32; base_ids.len()];
        for (list, out) in [(&ia, &mut ea), (&ib, &mut eb)] {
            for &(id, e) in list.iter() {
                let mut acc = BTreeMap::new();
                r.expand(id, e, &mut acc);
                for (bid, m) in acc {
                    out[pos[&bid]] += m;
                }
            }
        }
        let base = base_ids.iter().map(|&id| r.items[id].clone()).collect();
        Ok((base, ea, eb))
    }

    /// Cancels common factors of a numerator and a factored denominator and
    /// returns the canonical value.
    fn cancel(&self, mut num: Poly, scale: Int, base: Vec<Arc<Factor>>, mut exps: Vec<u32>) -> Result<RatFunc> {
        if num.is_zero() {
            return Ok(RatFunc::zero());
        }
        let mut k = 0;
        let mut base = base;
        while k < base.len() {
            while exps[k] > 0 {
                // A trial division costs about as much as the product it undoes.
                let (n, d) = (&num, &base[k].poly);
                let units = (n.len() as u64).saturating_mul(d.len() as u64).saturating_mul(super::budget::words(n.max_bits(), d.max_bits()));
                if !super::budget::charge(units) {
                    return Err(super::budget::exceeded());
                }
                match num.div_exact(&base[k].poly) {
                    Some(q) => {
                        num = q;
                        exps[k] -= 1;
                    }
                    None => break,
                }
            }
            if exps[k] > 0 && !base[k].irreducible {
                // The factor may share a proper divisor with the numerator.
                let g = self.pgcd(&self.pgcd(&num.re(), &base[k].poly)?, &num.im())?;
                if g.as_constant().is_none() && g != base[k].poly {
                    let rest = base[k].poly.div_exact(&g).expect("gcd divides");
                    let e = exps[k];
                    let mut r = Refiner::default();
                    let ig = r.id_of(Arc::new(Factor::new(g)));
                    let ir = r.id_of(Arc::new(Factor::new(rest)));
                    r.refine(self)?;
                    let mut acc = BTreeMap::new();
                    r.expand(ig, e, &mut acc);
                    r.expand(ir, e, &mut acc);
                    base.remove(k);
                    exps.remove(k);
                    for (id, m) in acc {
                        base.push(r.items[id].clone());
                        exps.push(m);
                    }
                    continue;
                }
            }
            k += 1;
        }
        let mut den: Vec<(Arc<Factor>, u32)> = base.into_iter().zip(exps).filter(|(_, e)| *e > 0).collect();
        den.sort_by(|a, b| a.0.poly.cmp(&b.0.poly));
        self.check_poly(&num)?;
        let r = RatFunc::normalized_content(num, scale, den);
        // The integer part of the denominator is bounded like the numerator's
        // coefficients: without this, 1e-5000*1e-5000*... grew without limit.
        if r.scale.bits() > self.limits.max_bits {
            return Err(limit(format!("a coefficient has more than {} bits", self.limits.max_bits)));
        }
        Ok(r)
    }

    /// Sum.
    pub fn add(&self, a: &RatFunc, b: &RatFunc) -> Result<RatFunc> {
        if a.is_zero() {
            return Ok(b.clone());
        }
        if b.is_zero() {
            return Ok(a.clone());
        }
        let (base, ea, eb) = self.common_base(&a.den, &b.den)?;
        let l = lcm(&a.scale, &b.scale);
        let mut na = a.num.mul_int(&l.div_exact(&a.scale).expect("lcm"));
        let mut nb = b.num.mul_int(&l.div_exact(&b.scale).expect("lcm"));
        let mut e = Vec::with_capacity(base.len());
        for k in 0..base.len() {
            let m = ea[k].max(eb[k]);
            e.push(m);
            if m > ea[k] {
                na = self.pmul(&na, &self.ppow(&base[k].poly, m - ea[k])?)?;
            }
            if m > eb[k] {
                nb = self.pmul(&nb, &self.ppow(&base[k].poly, m - eb[k])?)?;
            }
        }
        self.cancel(na.add(&nb), l, base, e)
    }

    /// Negation.
    pub fn neg(&self, a: &RatFunc) -> RatFunc {
        RatFunc { num: a.num.neg(), scale: a.scale.clone(), den: a.den.clone() }
    }

    /// Difference.
    pub fn sub(&self, a: &RatFunc, b: &RatFunc) -> Result<RatFunc> {
        self.add(a, &self.neg(b))
    }

    /// Product.
    pub fn mul(&self, a: &RatFunc, b: &RatFunc) -> Result<RatFunc> {
        if a.is_zero() || b.is_zero() {
            return Ok(RatFunc::zero());
        }
        let (base, ea, eb) = self.common_base(&a.den, &b.den)?;
        let e: Vec<u32> = ea.iter().zip(&eb).map(|(x, y)| x + y).collect();
        let num = self.pmul(&a.num, &b.num)?;
        self.cancel(num, a.scale.mul(&b.scale), base, e)
    }

    /// Product with a Gaussian-rational constant.
    pub fn scale_by(&self, a: &RatFunc, c: &GRat) -> Result<RatFunc> {
        self.mul(a, &RatFunc::constant(c))
    }

    /// Reciprocal; a division-by-zero error for zero.
    pub fn inv(&self, a: &RatFunc) -> Result<RatFunc> {
        if a.is_zero() {
            return Err(Error::new(ErrorKind::DivisionByZero, "division by zero"));
        }
        // 1/(n/d) = d·conj(n) / |n|², so that the new denominator is real.
        let mut top = Poly::constant(GInt::real(a.scale.clone()));
        for (f, e) in &a.den {
            top = self.pmul(&top, &self.ppow(&f.poly, *e)?)?;
        }
        let bottom = if a.num.is_real() {
            a.num.clone()
        } else {
            top = self.pmul(&top, &a.num.conj())?;
            let re = a.num.re();
            let im = a.num.im();
            self.pmul(&re, &re)?.add(&self.pmul(&im, &im)?)
        };
        let (c, factors) = self.factorize(&bottom)?;
        if c.is_negative() {
            top = top.neg();
        }
        let (base, exps): (Vec<_>, Vec<_>) = factors.into_iter().unzip();
        self.cancel(top, c.abs(), base, exps)
    }

    /// Quotient.
    pub fn div(&self, a: &RatFunc, b: &RatFunc) -> Result<RatFunc> {
        self.mul(a, &self.inv(b)?)
    }

    /// An integer power (negative powers invert).
    pub fn pow(&self, a: &RatFunc, e: i64) -> Result<RatFunc> {
        if e < 0 {
            return self.pow(&self.inv(a)?, -e);
        }
        if e == 0 {
            return Ok(RatFunc::one());
        }
        let e32 = u32::try_from(e).map_err(|_| limit(format!("exponent {e} is too large")))?;
        if e32 > self.limits.max_degree && a.as_constant().is_none() {
            return Err(limit(format!("exponent {e} exceeds the degree limit of {}", self.limits.max_degree)));
        }
        // Powers of a canonical value stay canonical: no factor can appear.
        let num = self.ppow(&a.num, e32)?;
        let den = a.den.iter().map(|(f, k)| (f.clone(), k * e32)).collect::<Vec<_>>();
        for (_, k) in &den {
            if *k > self.limits.max_degree {
                return Err(limit(format!("a denominator power {k} exceeds the degree limit of {}", self.limits.max_degree)));
            }
        }
        let scale = a.scale.pow(e32);
        if scale.bits() > self.limits.max_bits {
            return Err(limit(format!("a coefficient has more than {} bits", self.limits.max_bits)));
        }
        Ok(RatFunc { num, scale, den })
    }

    /// Partial derivative with respect to variable `v`.
    pub fn deriv(&self, a: &RatFunc, v: usize) -> Result<RatFunc> {
        // (N/∏fᵢ^eᵢ)' = (N'·F − N·Σ eᵢ fᵢ' F/fᵢ) / (F·∏fᵢ^eᵢ), F = ∏ fᵢ over the factors using v.
        let using: Vec<usize> = (0..a.den.len()).filter(|&k| a.den[k].0.poly.uses_var(v)).collect();
        let mut f_all = Poly::int(1);
        for &k in &using {
            f_all = self.pmul(&f_all, &a.den[k].0.poly)?;
        }
        let mut num = self.pmul(&a.num.derivative(v), &f_all)?;
        for &k in &using {
            let (f, e) = &a.den[k];
            let others = f_all.div_exact(&f.poly).expect("factor divides the product");
            let t = self.pmul(&self.pmul(&a.num, &f.poly.derivative(v))?, &others)?;
            num = num.sub(&t.mul_int(&Int::from(*e as i64)));
        }
        let base: Vec<Arc<Factor>> = a.den.iter().map(|(f, _)| f.clone()).collect();
        let exps: Vec<u32> = (0..a.den.len()).map(|k| a.den[k].1 + u32::from(using.contains(&k))).collect();
        self.cancel(num, a.scale.clone(), base, exps)
    }

    /// Evaluates a polynomial at `x_v = g` (Horner in `v`).
    fn compose_poly(&self, p: &Poly, v: usize, g: &RatFunc) -> Result<RatFunc> {
        let coeffs = p.to_univariate(v);
        let mut acc = RatFunc::zero();
        for c in coeffs.iter().rev() {
            acc = self.mul(&acc, g)?;
            acc = self.add(&acc, &RatFunc::from_poly(c.clone()))?;
        }
        Ok(acc)
    }

    /// Substitutes `x_v = g` in `a`.
    pub fn compose(&self, a: &RatFunc, v: usize, g: &RatFunc) -> Result<RatFunc> {
        let mut num = self.compose_poly(&a.num, v, g)?;
        let mut den = RatFunc::constant(&GRat::real(Rat::int(a.scale.clone())));
        for (f, e) in &a.den {
            let fg = self.compose_poly(&f.poly, v, g)?;
            den = self.mul(&den, &self.pow(&fg, *e as i64)?)?;
        }
        if den.is_zero() {
            return Err(Error::new(ErrorKind::DivisionByZero, "the substitution makes a denominator vanish identically"));
        }
        num = self.div(&num, &den)?;
        Ok(num)
    }

    /// Records a polynomial's factors as hints for splitting later denominators.
    pub fn add_hint(&self, p: &Poly) -> Result<()> {
        if !p.is_real() || p.as_constant().is_some() {
            return Ok(());
        }
        let pp = primitive(p);
        let mono = pp.mono_content();
        let rest = pp.div_mono(mono);
        let mut hints = self.hints.borrow_mut();
        if hints.len() > 256 {
            return Ok(());
        }
        for i in 0..MAX_VARS {
            if mono.exp(i) > 0 {
                let f = Poly::var(i);
                if !hints.iter().any(|h| h.poly == f) {
                    hints.push(Arc::new(Factor::new(f)));
                }
            }
        }
        if rest.as_constant().is_none() && !hints.iter().any(|h| h.poly == rest) {
            hints.push(Arc::new(Factor::new(rest)));
        }
        Ok(())
    }

    /// Splits a real polynomial into a signed integer content and pairwise
    /// coprime factors with multiplicities: monomial content, known factors
    /// (hints), square-free parts.
    pub fn factorize(&self, p: &Poly) -> Result<(Int, Factors)> {
        debug_assert!(p.is_real());
        let c0 = p.content_int();
        let mut rest = p.div_exact_int(&c0).expect("content divides");
        let (r2, neg) = rest.normalize_sign();
        rest = r2;
        let c = if neg { c0.neg() } else { c0 };
        let mut pieces: Vec<(Poly, u32)> = Vec::new();
        let mono = rest.mono_content();
        rest = rest.div_mono(mono);
        for i in 0..MAX_VARS {
            if mono.exp(i) > 0 {
                pieces.push((Poly::var(i), mono.exp(i)));
            }
        }
        let hints: Vec<Arc<Factor>> = self.hints.borrow().clone();
        for h in &hints {
            if rest.as_constant().is_some() {
                break;
            }
            let mut m = 0;
            while let Some(q) = rest.div_exact(&h.poly) {
                rest = q;
                m += 1;
            }
            if m > 0 {
                pieces.push((h.poly.clone(), m));
            }
        }
        if rest.as_constant().is_none() {
            self.split_squarefree(&rest, 1, &mut pieces)?;
        }
        let mut r = Refiner::default();
        let mut ids: Vec<(usize, u32)> = Vec::new();
        for (p, m) in pieces {
            for f in split_linear(&p) {
                ids.push((r.id_of(Arc::new(Factor::new(f))), m));
            }
        }
        r.refine(self)?;
        let mut acc = BTreeMap::new();
        for (id, m) in ids {
            r.expand(id, m, &mut acc);
        }
        let mut out: Vec<(Arc<Factor>, u32)> = acc.into_iter().map(|(id, m)| (r.items[id].clone(), m)).collect();
        out.sort_by(|a, b| a.0.poly.cmp(&b.0.poly));
        {
            let mut hints = self.hints.borrow_mut();
            for (f, _) in &out {
                if hints.len() < 256 && !hints.iter().any(|h| h.poly == f.poly) {
                    hints.push(f.clone());
                }
            }
        }
        Ok((c, out))
    }

    fn split_squarefree(&self, p: &Poly, mult: u32, out: &mut Vec<(Poly, u32)>) -> Result<()> {
        let Some(v) = p.first_var() else {
            return Ok(());
        };
        let too_big = || limit("a denominator is too large to split into factors");
        let cont = content_in(p, v).ok_or_else(too_big)?;
        let prim = primitive(&p.div_exact(&cont).ok_or_else(too_big)?);
        if cont.as_constant().is_none() {
            self.split_squarefree(&primitive(&cont), mult, out)?;
        }
        let sf = squarefree_in(&prim, v).ok_or_else(too_big)?;
        for (f, k) in sf {
            out.push((f, k * mult));
        }
        Ok(())
    }

    /// Numeric-free exact evaluation of all variables but keeps the structure:
    /// substitutes rational values for some variables.
    pub fn substitute_values(&self, a: &RatFunc, values: &[(usize, GRat)]) -> Result<RatFunc> {
        let mut r = a.clone();
        for (v, x) in values {
            r = self.compose(&r, *v, &RatFunc::constant(x))?;
        }
        Ok(r)
    }

    /// The exact square root of a rational function over Q(i), when it is a
    /// perfect square there (root chosen with its numerator's leading
    /// coefficient of positive real part), else `None`.
    pub fn sqrt_exact(&self, r: &RatFunc) -> Result<Option<RatFunc>> {
        if r.is_zero() {
            return Ok(Some(RatFunc::zero()));
        }
        // r = num / (scale · ∏ f^e): every e even, num·scale a square.
        let mut den = RatFunc::one();
        for (f, e) in r.den_factors() {
            if e % 2 != 0 {
                return Ok(None);
            }
            den = self.mul(&den, &self.pow(&RatFunc::from_poly(f.poly().clone()), (*e / 2) as i64)?)?;
        }
        // sqrt(num/scale) = sqrt(num·scale)/scale
        let n = r.num().mul_int(r.scale());
        let Some(root) = n.sqrt_exact() else {
            return Ok(None);
        };
        let top = self.div(&RatFunc::from_poly(root), &RatFunc::rat(&Rat::int(r.scale().clone())))?;
        Ok(Some(self.div(&top, &den)?))
    }

    /// The monomial `x_v^e` as a rational function.
    pub fn monomial(&self, v: usize, e: u32) -> RatFunc {
        RatFunc::from_poly(Poly::term(Mono::var(v, e), GInt::one()))
    }
}

/// Refines a set of factors into a pairwise coprime base, remembering how
/// each original factor splits.
#[derive(Default)]
struct Refiner {
    items: Vec<Arc<Factor>>,
    alive: Vec<bool>,
    splits: BTreeMap<usize, Vec<(usize, u32)>>,
    coprime: std::collections::BTreeSet<(usize, usize)>,
}

impl Refiner {
    fn id_of(&mut self, f: Arc<Factor>) -> usize {
        if let Some(k) = (0..self.items.len()).find(|&k| self.alive[k] && self.items[k].poly == f.poly) {
            return k;
        }
        self.items.push(f);
        self.alive.push(true);
        self.items.len() - 1
    }

    fn alive_ids(&self) -> Vec<usize> {
        (0..self.items.len()).filter(|&k| self.alive[k]).collect()
    }

    fn refine(&mut self, field: &Field) -> Result<()> {
        let mut rounds = 0;
        'outer: loop {
            rounds += 1;
            if rounds > 10_000 {
                return Err(limit("splitting denominators into coprime factors did not finish"));
            }
            let ids = self.alive_ids();
            for (x, &i) in ids.iter().enumerate() {
                for &j in &ids[x + 1..] {
                    if self.coprime.contains(&(i, j)) {
                        continue;
                    }
                    let (fi, fj) = (self.items[i].clone(), self.items[j].clone());
                    if fi.irreducible && fj.irreducible {
                        self.coprime.insert((i, j));
                        continue;
                    }
                    let g = field.pgcd(&fi.poly, &fj.poly)?;
                    if g.as_constant().is_some() {
                        self.coprime.insert((i, j));
                        continue;
                    }
                    self.split(i, &g);
                    self.split(j, &g);
                    continue 'outer;
                }
            }
            return Ok(());
        }
    }

    /// Splits item `i` as `g · (fᵢ/g)` unless it is `g` itself.
    fn split(&mut self, i: usize, g: &Poly) {
        if self.items[i].poly == *g {
            return;
        }
        let rest = self.items[i].poly.div_exact(g).expect("gcd divides");
        self.alive[i] = false;
        let ig = self.id_of(Arc::new(Factor::new(g.clone())));
        let mut parts = vec![(ig, 1)];
        if rest.as_constant().is_none() {
            let ir = self.id_of(Arc::new(Factor::new(rest)));
            parts.push((ir, 1));
        }
        self.splits.insert(i, parts);
    }

    fn expand(&self, id: usize, mult: u32, acc: &mut BTreeMap<usize, u32>) {
        match self.splits.get(&id) {
            None => *acc.entry(id).or_insert(0) += mult,
            Some(parts) => {
                for &(p, m) in parts {
                    self.expand(p, mult * m, acc);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn field() -> Field {
        Field::new(vec!["z".into(), "a".into(), "b".into()], Limits::default()).unwrap()
    }

    #[test]
    fn sums_cancel_to_canonical_form() {
        let k = field();
        let z = k.var(0);
        let one = RatFunc::one();
        // 1/(z-1) - 1/(z+1) = 2/(z^2-1)
        let zm = k.sub(&z, &one).unwrap();
        let zp = k.add(&z, &one).unwrap();
        let lhs = k.sub(&k.inv(&zm).unwrap(), &k.inv(&zp).unwrap()).unwrap();
        let rhs = k.div(&RatFunc::from_poly(Poly::int(2)), &k.mul(&zm, &zp).unwrap()).unwrap();
        assert_eq!(lhs, rhs);
        // (z^2-1)/(z-1) = z+1
        let q = k.div(&k.mul(&zm, &zp).unwrap(), &zm).unwrap();
        assert_eq!(q, zp);
        assert!(q.den_factors().is_empty());
    }

    #[test]
    fn minimal_real_denominator() {
        let k = field();
        let z = k.var(0);
        let i = RatFunc::constant(&GRat { re: Rat::zero(), im: Rat::one() });
        // 1/(z+i) = (z-i)/(z^2+1)
        let r = k.inv(&k.add(&z, &i).unwrap()).unwrap();
        assert_eq!(r.den_expanded(), Poly::var(0).pow(2).add(&Poly::int(1)));
        // (1/(z+i))·(z+i) = 1 and (1/(z+i))·(z-i)... = (z-i)^2/(z^2+1) keeps its real denominator
        assert_eq!(k.mul(&r, &k.add(&z, &i).unwrap()).unwrap(), RatFunc::one());
        let s = k.mul(&r, &k.sub(&z, &i).unwrap()).unwrap();
        assert_eq!(s.den_expanded(), Poly::var(0).pow(2).add(&Poly::int(1)));
    }

    #[test]
    fn derivative_matches_quotient_rule() {
        let k = field();
        let z = k.var(0);
        let a = k.var(1);
        let f = k.div(&k.mul(&z, &z).unwrap(), &k.sub(&z, &a).unwrap()).unwrap();
        let d = k.deriv(&f, 0).unwrap();
        // (z^2/(z-a))' = (z^2 - 2az)/(z-a)^2
        let expect = k
            .div(
                &k.sub(&k.mul(&z, &z).unwrap(), &k.mul(&RatFunc::from_poly(Poly::int(2)), &k.mul(&a, &z).unwrap()).unwrap()).unwrap(),
                &k.pow(&k.sub(&z, &a).unwrap(), 2).unwrap(),
            )
            .unwrap();
        assert_eq!(d, expect);
    }

    #[test]
    fn factorize_finds_squares_and_monomials() {
        let k = field();
        let z = Poly::var(0);
        let a = Poly::var(1);
        let p = z.pow(2).mul(&z.sub(&a).pow(2)).mul(&Poly::int(-6));
        let (c, f) = k.factorize(&p).unwrap();
        assert_eq!(c, Int::from(-6));
        let polys: Vec<(Poly, u32)> = f.iter().map(|(f, e)| (f.poly().clone(), *e)).collect();
        assert_eq!(polys, vec![(z.clone(), 2), (z.sub(&a), 2)]);
    }

    #[test]
    fn degree_limit_is_an_error_not_a_panic() {
        let k = Field::new(vec!["z".into()], Limits { max_degree: 10, ..Limits::default() }).unwrap();
        let z = k.var(0);
        let e = k.pow(&z, 50).unwrap_err();
        assert_eq!(e.kind, ErrorKind::Limit);
    }
}
