//! Quasi-rational values met while lowering: sums of rational functions times
//! products of symbolic or fractional powers ("atoms"), such as Δ^(s+1).
//! Such powers are allowed in input as long as they cancel once the equation
//! is divided by the coefficient of its second derivative; this module keeps
//! them exact until then.

use crate::algebra::{Field, GRat, RatFunc};
use crate::error::{Error, ErrorKind, Result};
use crate::syntax::Span;

/// A base raised to a non-integer or symbolic power: the base is a real
/// primitive polynomial or a positive rational constant.
#[derive(Clone, Debug)]
pub(crate) struct Atom {
    /// The base.
    pub base: RatFunc,
    /// Where the power was first written.
    pub span: Span,
}

/// A product of atom powers: (atom index, exponent), sorted by index, no
/// zero or integer exponents.
pub(crate) type AtomMono = Vec<(usize, RatFunc)>;

/// Σ coefficient · atom-monomial.
#[derive(Clone, Debug, Default)]
pub(crate) struct Quasi {
    pub terms: Vec<(AtomMono, RatFunc)>,
}

fn mono_eq(a: &AtomMono, b: &AtomMono) -> bool {
    a.len() == b.len() && a.iter().zip(b).all(|(x, y)| x.0 == y.0 && x.1 == y.1)
}

impl Quasi {
    pub fn zero() -> Quasi {
        Quasi { terms: Vec::new() }
    }
    pub fn rat(r: RatFunc) -> Quasi {
        if r.is_zero() {
            Quasi::zero()
        } else {
            Quasi { terms: vec![(Vec::new(), r)] }
        }
    }
    pub fn is_zero(&self) -> bool {
        self.terms.is_empty()
    }
    /// The value when it is a plain rational function.
    pub fn as_rat(&self) -> Option<RatFunc> {
        match self.terms.as_slice() {
            [] => Some(RatFunc::zero()),
            [(m, r)] if m.is_empty() => Some(r.clone()),
            _ => None,
        }
    }
    fn push(&mut self, k: &Field, m: AtomMono, r: RatFunc) -> Result<()> {
        if r.is_zero() {
            return Ok(());
        }
        if let Some(pos) = self.terms.iter().position(|(tm, _)| mono_eq(tm, &m)) {
            let s = k.add(&self.terms[pos].1, &r)?;
            if s.is_zero() {
                self.terms.remove(pos);
            } else {
                self.terms[pos].1 = s;
            }
        } else {
            self.terms.push((m, r));
        }
        Ok(())
    }
    pub fn add(&self, k: &Field, o: &Quasi) -> Result<Quasi> {
        let mut out = self.clone();
        for (m, r) in &o.terms {
            out.push(k, m.clone(), r.clone())?;
        }
        Ok(out)
    }
    pub fn neg(&self, k: &Field) -> Quasi {
        Quasi { terms: self.terms.iter().map(|(m, r)| (m.clone(), k.neg(r))).collect() }
    }
}

/// The atom table and the operations that need it.
#[derive(Default)]
pub(crate) struct Atoms {
    pub atoms: Vec<Atom>,
}

impl Atoms {
    fn id_of(&mut self, base: RatFunc, span: Span) -> usize {
        if let Some(k) = self.atoms.iter().position(|a| a.base == base) {
            return k;
        }
        self.atoms.push(Atom { base, span });
        self.atoms.len() - 1
    }

    /// Multiplies two atom monomials, folding integer exponents into a rational factor.
    fn mono_mul(&self, k: &Field, a: &AtomMono, b: &AtomMono) -> Result<(AtomMono, RatFunc)> {
        let mut out: AtomMono = a.clone();
        for (id, e) in b {
            match out.iter().position(|(i, _)| i == id) {
                Some(p) => out[p].1 = k.add(&out[p].1, e)?,
                None => out.push((*id, e.clone())),
            }
        }
        out.sort_by_key(|(i, _)| *i);
        self.fold(k, out)
    }

    /// Removes zero exponents and turns integer exponents into plain powers.
    fn fold(&self, k: &Field, m: AtomMono) -> Result<(AtomMono, RatFunc)> {
        let mut factor = RatFunc::one();
        let mut out = Vec::new();
        for (id, e) in m {
            if e.is_zero() {
                continue;
            }
            if let Some(c) = e.as_constant() {
                if c.im.is_zero() && c.re.is_integer() {
                    let n = c.re.numer().to_i64().ok_or_else(|| Error::new(ErrorKind::Limit, "an exponent is too large"))?;
                    factor = k.mul(&factor, &k.pow(&self.atoms[id].base, n)?)?;
                    continue;
                }
            }
            out.push((id, e));
        }
        Ok((out, factor))
    }

    pub fn mul(&self, k: &Field, a: &Quasi, b: &Quasi) -> Result<Quasi> {
        let mut out = Quasi::zero();
        for (ma, ra) in &a.terms {
            for (mb, rb) in &b.terms {
                let (m, f) = self.mono_mul(k, ma, mb)?;
                out.push(k, m, k.mul(&k.mul(ra, rb)?, &f)?)?;
            }
        }
        Ok(out)
    }

    /// The reciprocal of a single-term value.
    pub fn inv(&self, k: &Field, a: &Quasi, span: Span) -> Result<Quasi> {
        match a.terms.as_slice() {
            [] => Err(Error::new(ErrorKind::DivisionByZero, "division by zero: the denominator is identically zero").at(span)),
            [(m, r)] => {
                let inv_m: AtomMono = m.iter().map(|(i, e)| (*i, k.neg(e))).collect();
                Ok(Quasi { terms: vec![(inv_m, k.inv(r)?)] })
            }
            _ => Err(self.not_rational(k, a, span, "a sum containing non-integer powers cannot be divided by")),
        }
    }

    /// An error naming the first non-rational power in `a`.
    pub fn not_rational(&self, k: &Field, a: &Quasi, span: Span, why: &str) -> Error {
        let atom = a.terms.iter().flat_map(|(m, _)| m.iter()).next();
        match atom {
            Some((id, e)) => {
                let at = &self.atoms[*id];
                let text = power_text(k, &at.base, e);
                Error::new(ErrorKind::NotRational, format!("{why}: it contains {text}, which is not rational"))
                    .at(at.span)
                    .note("non-integer and symbolic powers must cancel once the equation is divided by the coefficient of the second derivative")
                    .or_at(span)
            }
            None => Error::new(ErrorKind::NotRational, why.to_string()).at(span),
        }
    }

    /// The derivative with respect to variable 0.
    pub fn deriv(&self, k: &Field, a: &Quasi) -> Result<Quasi> {
        let mut out = Quasi::zero();
        for (m, r) in &a.terms {
            // (r · ∏ Bᵢ^eᵢ)' = (r' + r Σ eᵢ Bᵢ'/Bᵢ) · ∏ Bᵢ^eᵢ
            let mut c = k.deriv(r, 0)?;
            for (id, e) in m {
                let b = &self.atoms[*id].base;
                let db = k.deriv(b, 0)?;
                if db.is_zero() {
                    continue;
                }
                let t = k.mul(&k.mul(r, e)?, &k.div(&db, b)?)?;
                c = k.add(&c, &t)?;
            }
            out.push(k, m.clone(), c)?;
        }
        Ok(out)
    }

    /// `a^e` for an exponent free of the variable. Integer exponents are
    /// plain powers; others become atoms unless an exact root exists.
    pub fn pow(&mut self, k: &Field, a: &Quasi, e: &RatFunc, span: Span) -> Result<Quasi> {
        if let Some(c) = e.as_constant() {
            if c.im.is_zero() && c.re.is_integer() {
                let n = c.re.numer();
                if n.bits() > 16 {
                    return Err(Error::new(ErrorKind::Limit, format!("exponent {n} is too large")).at(span));
                }
                let n = n.to_i64().ok_or_else(|| Error::new(ErrorKind::Limit, format!("exponent {n} is too large")).at(span))?;
                return self.int_pow(k, a, n, span);
            }
            // An exact square root of a rational function, where one exists.
            if c.im.is_zero() && c.re.denom() == &crate::algebra::Int::from(2) {
                if let Some(r) = a.as_rat() {
                    if let Some(root) = k.sqrt_exact(&r)? {
                        let n = c.re.numer().to_i64().ok_or_else(|| Error::new(ErrorKind::Limit, "an exponent is too large").at(span))?;
                        return self.int_pow(k, &Quasi::rat(root), n, span);
                    }
                }
            }
        }
        match a.terms.as_slice() {
            [] => {
                if e.as_constant().is_some_and(|c| c.re.numer().is_negative()) {
                    return Err(Error::new(ErrorKind::DivisionByZero, "zero raised to a negative power").at(span));
                }
                Ok(Quasi::zero())
            }
            [(m, r)] => {
                let mut mono: AtomMono = m.iter().map(|(i, x)| Ok((*i, k.mul(x, e)?))).collect::<Result<_>>()?;
                let (bases, unit) = self.atomize(k, r, span)?;
                for (id, mult) in bases {
                    let ex = k.mul(e, &RatFunc::rat(&crate::algebra::Rat::int(mult.into())))?;
                    mono.push((id, ex));
                }
                let mut merged: AtomMono = Vec::new();
                for (id, x) in mono {
                    match merged.iter().position(|(i, _)| *i == id) {
                        Some(p) => merged[p].1 = k.add(&merged[p].1, &x)?,
                        None => merged.push((id, x)),
                    }
                }
                merged.sort_by_key(|(i, _)| *i);
                let (mono, f) = self.fold(k, merged)?;
                let coeff = k.mul(&f, &unit)?;
                Ok(Quasi { terms: vec![(mono, coeff)] })
            }
            _ => Err(self.not_rational(k, a, span, "a sum containing non-integer powers cannot be raised to a non-integer power")),
        }
    }

    fn int_pow(&self, k: &Field, a: &Quasi, n: i64, span: Span) -> Result<Quasi> {
        if n == 0 {
            return Ok(Quasi::rat(RatFunc::one()));
        }
        if let Some(r) = a.as_rat() {
            if r.is_zero() && n < 0 {
                return Err(Error::new(ErrorKind::DivisionByZero, "zero raised to a negative power").at(span));
            }
            return Ok(Quasi::rat(k.pow(&r, n).map_err(|e| e.or_at(span))?));
        }
        let base = if n < 0 { self.inv(k, a, span)? } else { a.clone() };
        let n = n.unsigned_abs();
        if n > k.limits().max_degree as u64 {
            return Err(Error::new(ErrorKind::Limit, format!("exponent {n} exceeds the degree limit")).at(span));
        }
        let mut acc = Quasi::rat(RatFunc::one());
        for _ in 0..n {
            acc = self.mul(k, &acc, &base)?;
        }
        Ok(acc)
    }

    /// Splits a rational function into atom bases (with integer
    /// multiplicities) and a leftover unit factor (±1 or a Gaussian constant
    /// that stays outside, when it is 1 or −1 with an integer-valued use).
    fn atomize(&mut self, k: &Field, r: &RatFunc, span: Span) -> Result<(Vec<(usize, i64)>, RatFunc)> {
        let mut out = Vec::new();
        if r.is_zero() {
            return Ok((out, RatFunc::zero()));
        }
        if !r.num().is_real() {
            let id = self.id_of(r.clone(), span);
            return Ok((vec![(id, 1)], RatFunc::one()));
        }
        let (c, factors) = k.factorize(r.num())?;
        let mut constant = GRat::real(crate::algebra::Rat::new(c.abs(), r.scale().clone()).expect("positive scale"));
        for (f, m) in factors {
            let id = self.id_of(RatFunc::from_poly(f.poly().clone()), span);
            out.push((id, m as i64));
        }
        for (f, m) in r.den_factors() {
            let id = self.id_of(RatFunc::from_poly(f.poly().clone()), span);
            out.push((id, -(*m as i64)));
        }
        let unit = if c.is_negative() {
            // (−x)^e: the sign is kept as its own atom base −1.
            let id = self.id_of(RatFunc::constant(&GRat::real(crate::algebra::Rat::int((-1).into()))), span);
            out.push((id, 1));
            RatFunc::one()
        } else {
            RatFunc::one()
        };
        if !(constant.re.is_integer() && constant.re.numer().is_one()) {
            let id = self.id_of(RatFunc::constant(&constant), span);
            out.push((id, 1));
            constant = GRat::one();
        }
        let _ = constant;
        Ok((out, unit))
    }
}

/// Text for `base^(e)` in error messages.
fn power_text(k: &Field, base: &RatFunc, e: &RatFunc) -> String {
    use crate::algebra::print::{ratfunc_text, Style};
    let names = k.names();
    let b = ratfunc_text(base, names, Style::Text);
    let x = ratfunc_text(e, names, Style::Text);
    let b = if b.chars().all(|c| c.is_alphanumeric() || c == '_') { b } else { format!("({b})") };
    let x = if x.chars().all(|c| c.is_alphanumeric() || c == '_') { x } else { format!("({x})") };
    format!("{b}^{x}")
}
