//! Sparse multivariate polynomials with Gaussian-integer coefficients.
//!
//! A monomial packs up to [`MAX_VARS`] exponents of at most [`MAX_EXP`] into
//! one `u128`, variable 0 in the most significant byte, so that comparing two
//! monomials as integers is the lexicographic order with variable 0 (the
//! independent variable) first. Terms are kept sorted in decreasing order,
//! without zero coefficients, which makes equality structural.

use super::int::Int;
use super::rational::{GRat, Rat};
use std::cmp::Ordering;

/// The most variables a polynomial ring may have.
pub const MAX_VARS: usize = 16;
/// The largest exponent of any one variable.
pub const MAX_EXP: u32 = 127;

const HIGH: u128 = 0x8080_8080_8080_8080_8080_8080_8080_8080;

/// A monomial: a packed exponent vector.
#[derive(Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Debug, Default)]
pub struct Mono(u128);

impl Mono {
    /// The monomial 1.
    pub const ONE: Mono = Mono(0);

    fn shift(i: usize) -> u32 {
        debug_assert!(i < MAX_VARS);
        ((MAX_VARS - 1 - i) * 8) as u32
    }
    /// `x_i^e`.
    pub fn var(i: usize, e: u32) -> Mono {
        debug_assert!(e <= MAX_EXP);
        Mono((e as u128) << Mono::shift(i))
    }
    /// The exponent of variable `i`.
    pub fn exp(self, i: usize) -> u32 {
        ((self.0 >> Mono::shift(i)) & 0xff) as u32
    }
    /// The same monomial with the exponent of `i` replaced.
    pub fn with_exp(self, i: usize, e: u32) -> Mono {
        let s = Mono::shift(i);
        Mono((self.0 & !(0xffu128 << s)) | ((e as u128) << s))
    }
    /// The product. Callers check degree bounds first (see `Field`).
    #[allow(clippy::should_implement_trait)] // a method of the packed exponents, not `*` on monomials in general
    pub fn mul(self, o: Mono) -> Mono {
        let r = self.0 + o.0;
        debug_assert!(r & HIGH == 0, "monomial exponent overflow");
        Mono(r)
    }
    /// True when every exponent of `self` is at most that of `o`.
    pub fn divides(self, o: Mono) -> bool {
        ((o.0 | HIGH) - self.0) & HIGH == HIGH
    }
    /// `o / self` when it is a monomial.
    pub fn div_of(self, o: Mono) -> Option<Mono> {
        if self.divides(o) {
            Some(Mono(o.0 - self.0))
        } else {
            None
        }
    }
    /// The elementwise minimum.
    pub fn gcd(self, o: Mono) -> Mono {
        let mut r = Mono::ONE;
        for i in 0..MAX_VARS {
            r = r.with_exp(i, self.exp(i).min(o.exp(i)));
        }
        r
    }
    /// The elementwise maximum.
    pub fn lcm(self, o: Mono) -> Mono {
        let mut r = Mono::ONE;
        for i in 0..MAX_VARS {
            r = r.with_exp(i, self.exp(i).max(o.exp(i)));
        }
        r
    }
    /// True when the product `self · o` stays within [`MAX_EXP`] in every variable.
    pub fn fits_mul(self, o: Mono) -> bool {
        (self.0 + o.0) & HIGH == 0
    }
    /// Sum of exponents.
    pub fn total_degree(self) -> u32 {
        (0..MAX_VARS).map(|i| self.exp(i)).sum()
    }
    /// True for the monomial 1.
    pub fn is_one(self) -> bool {
        self.0 == 0
    }
}

/// A Gaussian integer `re + im·i`.
#[derive(Clone, PartialEq, Eq, Hash, Debug, PartialOrd, Ord)]
pub struct GInt {
    /// Real part.
    pub re: Int,
    /// Imaginary part.
    pub im: Int,
}

impl GInt {
    /// Zero.
    pub fn zero() -> GInt {
        GInt { re: Int::ZERO, im: Int::ZERO }
    }
    /// One.
    pub fn one() -> GInt {
        GInt { re: Int::ONE, im: Int::ZERO }
    }
    /// The imaginary unit.
    pub fn i() -> GInt {
        GInt { re: Int::ZERO, im: Int::ONE }
    }
    /// A real integer.
    pub fn real(n: Int) -> GInt {
        GInt { re: n, im: Int::ZERO }
    }
    /// True for zero.
    pub fn is_zero(&self) -> bool {
        self.re.is_zero() && self.im.is_zero()
    }
    /// True for a real integer.
    pub fn is_real(&self) -> bool {
        self.im.is_zero()
    }
    /// Sum.
    pub fn add(&self, o: &GInt) -> GInt {
        GInt { re: self.re.add(&o.re), im: self.im.add(&o.im) }
    }
    /// Difference.
    pub fn sub(&self, o: &GInt) -> GInt {
        GInt { re: self.re.sub(&o.re), im: self.im.sub(&o.im) }
    }
    /// Product.
    pub fn mul(&self, o: &GInt) -> GInt {
        if self.im.is_zero() && o.im.is_zero() {
            return GInt::real(self.re.mul(&o.re));
        }
        GInt { re: self.re.mul(&o.re).sub(&self.im.mul(&o.im)), im: self.re.mul(&o.im).add(&self.im.mul(&o.re)) }
    }
    /// Product with a real integer.
    pub fn mul_int(&self, k: &Int) -> GInt {
        GInt { re: self.re.mul(k), im: self.im.mul(k) }
    }
    /// Negation.
    pub fn neg(&self) -> GInt {
        GInt { re: self.re.neg(), im: self.im.neg() }
    }
    /// Complex conjugate.
    pub fn conj(&self) -> GInt {
        GInt { re: self.re.clone(), im: self.im.neg() }
    }
    /// Exact quotient by a real integer.
    pub fn div_exact_int(&self, k: &Int) -> Option<GInt> {
        Some(GInt { re: self.re.div_exact(k)?, im: self.im.div_exact(k)? })
    }
    /// Exact quotient in the Gaussian integers.
    pub fn div_exact(&self, o: &GInt) -> Option<GInt> {
        if o.im.is_zero() {
            return self.div_exact_int(&o.re);
        }
        let n = o.re.mul(&o.re).add(&o.im.mul(&o.im));
        self.mul(&o.conj()).div_exact_int(&n)
    }
    /// The square root in the Gaussian integers with positive real part (or
    /// a non-negative multiple of i), when one exists.
    pub fn sqrt_exact(&self) -> Option<GInt> {
        if self.im.is_zero() {
            if self.re.is_negative() {
                return Some(GInt { re: Int::ZERO, im: self.re.neg().sqrt_exact()? });
            }
            return Some(GInt::real(self.re.sqrt_exact()?));
        }
        // (x + iy)² = a + ib: x² = (a + |c|)/2, y = b/(2x).
        let n = self.re.mul(&self.re).add(&self.im.mul(&self.im)).sqrt_exact()?;
        let x2 = self.re.add(&n).div_exact(&Int::from(2))?;
        let x = x2.sqrt_exact()?;
        if x.is_zero() {
            return None;
        }
        let y = self.im.div_exact(&x.mul(&Int::from(2)))?;
        Some(GInt { re: x, im: y })
    }
    /// As a Gaussian rational.
    pub fn to_grat(&self) -> GRat {
        GRat { re: Rat::int(self.re.clone()), im: Rat::int(self.im.clone()) }
    }
    /// Larger bit length of the two parts.
    pub fn bits(&self) -> u64 {
        self.re.bits().max(self.im.bits())
    }
}

/// A polynomial: terms in decreasing monomial order, no zero coefficients.
#[derive(Clone, PartialEq, Eq, Hash, Debug, Default)]
pub struct Poly {
    terms: Vec<(Mono, GInt)>,
}

impl PartialOrd for Poly {
    fn partial_cmp(&self, o: &Poly) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}

impl Ord for Poly {
    /// Total degree first, then term by term: a deterministic order for printing factors.
    fn cmp(&self, o: &Poly) -> Ordering {
        self.total_degree().cmp(&o.total_degree()).then_with(|| self.len().cmp(&o.len())).then_with(|| self.terms.cmp(&o.terms))
    }
}

impl Poly {
    /// The zero polynomial.
    pub fn zero() -> Poly {
        Poly { terms: Vec::new() }
    }
    /// A constant.
    pub fn constant(c: GInt) -> Poly {
        if c.is_zero() {
            Poly::zero()
        } else {
            Poly { terms: vec![(Mono::ONE, c)] }
        }
    }
    /// An integer constant.
    pub fn int(n: i64) -> Poly {
        Poly::constant(GInt::real(Int::from(n)))
    }
    /// The variable `x_i`.
    pub fn var(i: usize) -> Poly {
        Poly { terms: vec![(Mono::var(i, 1), GInt::one())] }
    }
    /// A single term.
    pub fn term(m: Mono, c: GInt) -> Poly {
        if c.is_zero() {
            Poly::zero()
        } else {
            Poly { terms: vec![(m, c)] }
        }
    }
    /// Builds a polynomial from terms in any order, merging duplicates.
    pub fn from_terms(mut terms: Vec<(Mono, GInt)>) -> Poly {
        terms.sort_unstable_by_key(|t| std::cmp::Reverse(t.0));
        let mut out: Vec<(Mono, GInt)> = Vec::with_capacity(terms.len());
        for (m, c) in terms {
            match out.last_mut() {
                Some((lm, lc)) if *lm == m => *lc = lc.add(&c),
                _ => {
                    if let Some((_, lc)) = out.last() {
                        if lc.is_zero() {
                            out.pop();
                        }
                    }
                    out.push((m, c));
                }
            }
        }
        if let Some((_, lc)) = out.last() {
            if lc.is_zero() {
                out.pop();
            }
        }
        Poly { terms: out }
    }
    /// The terms, in decreasing monomial order.
    pub fn terms(&self) -> &[(Mono, GInt)] {
        &self.terms
    }
    /// Number of terms.
    pub fn len(&self) -> usize {
        self.terms.len()
    }
    /// True when there is no term (the zero polynomial).
    pub fn is_empty(&self) -> bool {
        self.terms.is_empty()
    }
    /// True for the zero polynomial.
    pub fn is_zero(&self) -> bool {
        self.terms.is_empty()
    }
    /// The value if the polynomial is constant (zero included).
    pub fn as_constant(&self) -> Option<GInt> {
        match self.terms.as_slice() {
            [] => Some(GInt::zero()),
            [(m, c)] if m.is_one() => Some(c.clone()),
            _ => None,
        }
    }
    /// True for 1.
    pub fn is_one(&self) -> bool {
        matches!(self.terms.as_slice(), [(m, c)] if m.is_one() && *c == GInt::one())
    }
    /// The leading term in the monomial order.
    pub fn lead(&self) -> Option<&(Mono, GInt)> {
        self.terms.first()
    }
    /// True when every coefficient is real.
    pub fn is_real(&self) -> bool {
        self.terms.iter().all(|(_, c)| c.is_real())
    }
    /// Degree in variable `i` (0 for the zero polynomial).
    pub fn degree(&self, i: usize) -> u32 {
        self.terms.iter().map(|(m, _)| m.exp(i)).max().unwrap_or(0)
    }
    /// The largest exponent of each variable, packed as a monomial.
    pub fn degrees(&self) -> Mono {
        self.terms.iter().fold(Mono::ONE, |d, (m, _)| d.lcm(*m))
    }
    /// True when `self · o` keeps every exponent within `MAX_EXP` (127, the packing's limit).
    pub fn fits_mul(&self, o: &Poly) -> bool {
        self.degrees().fits_mul(o.degrees())
    }
    /// True when `self^e` keeps every exponent within `MAX_EXP` (127, the packing's limit).
    pub fn fits_pow(&self, e: u32) -> bool {
        let d = self.degrees();
        (0..MAX_VARS).all(|i| d.exp(i) as u64 * e as u64 <= MAX_EXP as u64)
    }
    /// Total degree.
    pub fn total_degree(&self) -> u32 {
        self.terms.iter().map(|(m, _)| m.total_degree()).max().unwrap_or(0)
    }
    /// True when variable `i` occurs.
    pub fn uses_var(&self, i: usize) -> bool {
        self.terms.iter().any(|(m, _)| m.exp(i) > 0)
    }
    /// The smallest-index variable that occurs.
    pub fn first_var(&self) -> Option<usize> {
        (0..MAX_VARS).find(|&i| self.uses_var(i))
    }
    /// Largest coefficient bit length.
    pub fn max_bits(&self) -> u64 {
        self.terms.iter().map(|(_, c)| c.bits()).max().unwrap_or(0)
    }
    /// Sum.
    pub fn add(&self, o: &Poly) -> Poly {
        let mut out = Vec::with_capacity(self.len() + o.len());
        let (mut i, mut j) = (0, 0);
        while i < self.len() && j < o.len() {
            let (a, b) = (&self.terms[i], &o.terms[j]);
            match a.0.cmp(&b.0) {
                Ordering::Greater => {
                    out.push(a.clone());
                    i += 1;
                }
                Ordering::Less => {
                    out.push(b.clone());
                    j += 1;
                }
                Ordering::Equal => {
                    let c = a.1.add(&b.1);
                    if !c.is_zero() {
                        out.push((a.0, c));
                    }
                    i += 1;
                    j += 1;
                }
            }
        }
        out.extend_from_slice(&self.terms[i..]);
        out.extend_from_slice(&o.terms[j..]);
        Poly { terms: out }
    }
    /// Negation.
    pub fn neg(&self) -> Poly {
        Poly { terms: self.terms.iter().map(|(m, c)| (*m, c.neg())).collect() }
    }
    /// Difference.
    pub fn sub(&self, o: &Poly) -> Poly {
        self.add(&o.neg())
    }
    /// `self − c·m·o`, the step of division, in one merge pass.
    fn sub_scaled(&self, c: &GInt, m: Mono, o: &Poly) -> Poly {
        let mut out = Vec::with_capacity(self.len() + o.len());
        let mut j = 0;
        let shifted = |k: usize| (m.mul(o.terms[k].0), &o.terms[k].1);
        let mut i = 0;
        while i < self.len() && j < o.len() {
            let (bm, bc) = shifted(j);
            let a = &self.terms[i];
            match a.0.cmp(&bm) {
                Ordering::Greater => {
                    out.push(a.clone());
                    i += 1;
                }
                Ordering::Less => {
                    out.push((bm, c.mul(bc).neg()));
                    j += 1;
                }
                Ordering::Equal => {
                    let v = a.1.sub(&c.mul(bc));
                    if !v.is_zero() {
                        out.push((bm, v));
                    }
                    i += 1;
                    j += 1;
                }
            }
        }
        out.extend_from_slice(&self.terms[i..]);
        while j < o.len() {
            let (bm, bc) = shifted(j);
            out.push((bm, c.mul(bc).neg()));
            j += 1;
        }
        Poly { terms: out }
    }
    /// Product.
    pub fn mul(&self, o: &Poly) -> Poly {
        if self.is_zero() || o.is_zero() {
            return Poly::zero();
        }
        if let Some(c) = o.as_constant() {
            return self.mul_coeff(&c);
        }
        if let Some(c) = self.as_constant() {
            return o.mul_coeff(&c);
        }
        let (small, big) = if self.len() <= o.len() { (self, o) } else { (o, self) };
        if small.len() == 1 {
            let (m, c) = &small.terms[0];
            return Poly { terms: big.terms.iter().map(|(bm, bc)| (m.mul(*bm), c.mul(bc))).collect() };
        }
        let mut terms = Vec::with_capacity(self.len() * o.len());
        for (am, ac) in &self.terms {
            for (bm, bc) in &o.terms {
                terms.push((am.mul(*bm), ac.mul(bc)));
            }
        }
        Poly::from_terms(terms)
    }
    /// Product with a constant.
    pub fn mul_coeff(&self, c: &GInt) -> Poly {
        if c.is_zero() {
            return Poly::zero();
        }
        Poly { terms: self.terms.iter().map(|(m, a)| (*m, a.mul(c))).collect() }
    }
    /// Product with a real integer.
    pub fn mul_int(&self, k: &Int) -> Poly {
        self.mul_coeff(&GInt::real(k.clone()))
    }
    /// Product with a monomial.
    pub fn mul_mono(&self, m: Mono) -> Poly {
        Poly { terms: self.terms.iter().map(|(a, c)| (a.mul(m), c.clone())).collect() }
    }
    /// A non-negative integer power, by squaring.
    pub fn pow(&self, mut e: u32) -> Poly {
        let mut base = self.clone();
        let mut acc = Poly::int(1);
        while e > 0 {
            if e & 1 == 1 {
                acc = acc.mul(&base);
            }
            e >>= 1;
            if e > 0 {
                base = base.mul(&base);
            }
        }
        acc
    }
    /// Exact quotient by a real integer (every coefficient must be divisible).
    pub fn div_exact_int(&self, k: &Int) -> Option<Poly> {
        let mut t = Vec::with_capacity(self.len());
        for (m, c) in &self.terms {
            t.push((*m, c.div_exact_int(k)?));
        }
        Some(Poly { terms: t })
    }
    /// The exact quotient `self / d`, or `None` when `d` does not divide `self`
    /// over the Gaussian integers.
    pub fn div_exact(&self, d: &Poly) -> Option<Poly> {
        if d.is_zero() {
            return None;
        }
        if self.is_zero() {
            return Some(Poly::zero());
        }
        if let Some(c) = d.as_constant() {
            let mut t = Vec::with_capacity(self.len());
            for (m, a) in &self.terms {
                t.push((*m, a.div_exact(&c)?));
            }
            return Some(Poly { terms: t });
        }
        let (dm, dc) = d.terms[0].clone();
        // Cheap necessary conditions before the division proper.
        for i in 0..MAX_VARS {
            if d.degree(i) > self.degree(i) {
                return None;
            }
        }
        if self.len() > 48 && !super::gcd::image_divides(self, d) {
            // A modular image already shows that d does not divide.
            return None;
        }
        if self.len() > 16 && d.len() * 4 <= self.len() {
            return self.div_exact_sparse(d);
        }
        let mut r = self.clone();
        let mut q = Vec::new();
        while let Some((rm, rc)) = r.terms.first().cloned() {
            let m = dm.div_of(rm)?;
            let c = rc.div_exact(&dc)?;
            r = r.sub_scaled(&c, m, d);
            q.push((m, c));
        }
        Some(Poly { terms: q })
    }
    /// Exact division by a polynomial with few terms: the remainder lives in
    /// an ordered map so that each step touches only |d| entries.
    fn div_exact_sparse(&self, d: &Poly) -> Option<Poly> {
        use std::collections::btree_map::Entry;
        let (dm, dc) = d.terms[0].clone();
        let mut r: std::collections::BTreeMap<Mono, GInt> = self.terms.iter().cloned().collect();
        let mut q = Vec::new();
        while let Some((rm, rc)) = r.pop_last() {
            let m = dm.div_of(rm)?;
            let c = rc.div_exact(&dc)?;
            for (tm, tc) in &d.terms[1..] {
                let delta = c.mul(tc);
                match r.entry(m.mul(*tm)) {
                    Entry::Occupied(mut e) => {
                        let v = e.get().sub(&delta);
                        if v.is_zero() {
                            e.remove();
                        } else {
                            *e.get_mut() = v;
                        }
                    }
                    Entry::Vacant(e) => {
                        e.insert(delta.neg());
                    }
                }
            }
            q.push((m, c));
        }
        Some(Poly { terms: q })
    }
    /// Partial derivative with respect to variable `i`.
    pub fn derivative(&self, i: usize) -> Poly {
        let mut t = Vec::with_capacity(self.len());
        for (m, c) in &self.terms {
            let e = m.exp(i);
            if e > 0 {
                t.push((m.with_exp(i, e - 1), c.mul_int(&Int::from(e as i64))));
            }
        }
        // Lowering the same exponent in every surviving term keeps their order.
        Poly::from_sorted(t)
    }
    /// The non-negative gcd of all integer parts of all coefficients.
    pub fn content_int(&self) -> Int {
        let mut g = Int::ZERO;
        for (_, c) in &self.terms {
            g = g.gcd(&c.re).gcd(&c.im);
            if g.is_one() {
                break;
            }
        }
        g
    }
    /// Real part (coefficientwise).
    pub fn re(&self) -> Poly {
        Poly::from_sorted(self.terms.iter().filter(|(_, c)| !c.re.is_zero()).map(|(m, c)| (*m, GInt::real(c.re.clone()))).collect())
    }
    /// Imaginary part (coefficientwise).
    pub fn im(&self) -> Poly {
        Poly::from_sorted(self.terms.iter().filter(|(_, c)| !c.im.is_zero()).map(|(m, c)| (*m, GInt::real(c.im.clone()))).collect())
    }
    /// Complex conjugate of the coefficients.
    pub fn conj(&self) -> Poly {
        Poly { terms: self.terms.iter().map(|(m, c)| (*m, c.conj())).collect() }
    }
    fn from_sorted(terms: Vec<(Mono, GInt)>) -> Poly {
        Poly { terms }
    }
    /// The coefficients as a polynomial in variable `i`: entry `k` is the
    /// coefficient of `x_i^k`, free of `x_i`.
    pub fn to_univariate(&self, i: usize) -> Vec<Poly> {
        let n = self.degree(i) as usize;
        let mut buckets: Vec<Vec<(Mono, GInt)>> = vec![Vec::new(); n + 1];
        for (m, c) in &self.terms {
            buckets[m.exp(i) as usize].push((m.with_exp(i, 0), c.clone()));
        }
        // Within one bucket every term loses the same exponent, so order is kept.
        buckets.into_iter().map(Poly::from_sorted).collect()
    }
    /// Inverse of [`Poly::to_univariate`].
    pub fn from_univariate(i: usize, coeffs: &[Poly]) -> Poly {
        let mut t = Vec::new();
        for (k, c) in coeffs.iter().enumerate() {
            for (m, a) in &c.terms {
                t.push((m.with_exp(i, k as u32), a.clone()));
            }
        }
        Poly::from_terms(t)
    }
    /// Evaluates at a point given for every variable (missing ones count as 0).
    pub fn eval(&self, point: &[GRat]) -> GRat {
        let mut acc = GRat::zero();
        // Powers are cached per variable since monomials repeat exponents.
        let mut cache: Vec<Vec<GRat>> = vec![vec![GRat::one()]; point.len()];
        for (m, c) in &self.terms {
            let mut t = c.to_grat();
            for (v, x) in point.iter().enumerate() {
                let e = m.exp(v) as usize;
                if e == 0 {
                    continue;
                }
                while cache[v].len() <= e {
                    let next = cache[v].last().expect("nonempty").mul(x);
                    cache[v].push(next);
                }
                t = t.mul(&cache[v][e]);
            }
            acc = acc.add(&t);
        }
        acc
    }
    /// The monomial gcd of all terms.
    pub fn mono_content(&self) -> Mono {
        let mut it = self.terms.iter();
        let Some((first, _)) = it.next() else {
            return Mono::ONE;
        };
        it.fold(*first, |g, (m, _)| g.gcd(*m))
    }
    /// Divides every term by a monomial that divides all of them.
    pub fn div_mono(&self, m: Mono) -> Poly {
        Poly::from_terms(self.terms.iter().map(|(a, c)| (m.div_of(*a).expect("monomial divides"), c.clone())).collect())
    }
    /// The polynomial scaled to have a positive leading real coefficient
    /// (leading coefficient made positive real when it is real, or with
    /// positive real part otherwise), with the sign used.
    pub fn normalize_sign(&self) -> (Poly, bool) {
        match self.terms.first() {
            Some((_, c)) if c.re.is_negative() || (c.re.is_zero() && c.im.is_negative()) => (self.neg(), true),
            _ => (self.clone(), false),
        }
    }
    /// The square root over the Gaussian integers, by the schoolbook
    /// algorithm on the monomial order; the root's leading coefficient has a
    /// positive real part (or is a positive multiple of i). `None` when the
    /// polynomial is not a perfect square.
    pub fn sqrt_exact(&self) -> Option<Poly> {
        let p = self;
        if p.is_zero() {
            return Some(Poly::zero());
        }
        let (lm, lc) = p.lead()?.clone();
        let c0 = lc.sqrt_exact()?;
        let mut m0 = Mono::ONE;
        for i in 0..MAX_VARS {
            let e = lm.exp(i);
            if e % 2 != 0 {
                return None;
            }
            m0 = m0.with_exp(i, e / 2);
        }
        let mut root = Poly::term(m0, c0.clone());
        let two_lead = c0.mul_int(&Int::from(2));
        let mut rest = p.sub(&root.mul(&root));
        let mut guard = 0;
        while let Some((rm, rc)) = rest.lead().cloned() {
            guard += 1;
            if guard > 10_000 {
                return None;
            }
            let m = m0.div_of(rm)?;
            // The next term t satisfies 2·lead(root)·t = lead(rest).
            let c = rc.div_exact(&two_lead)?;
            let t = Poly::term(m, c);
            if !root.fits_mul(&t) {
                return None;
            }
            let new_root = root.add(&t);
            rest = p.sub(&new_root.mul(&new_root));
            root = new_root;
            if let Some((nm, _)) = rest.lead() {
                if *nm >= rm {
                    return None;
                }
            }
        }
        Some(root)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn x() -> Poly {
        Poly::var(0)
    }
    fn y() -> Poly {
        Poly::var(1)
    }

    #[test]
    fn monomial_order_is_lex_with_var0_first() {
        assert!(Mono::var(0, 1) > Mono::var(1, 5));
        assert!(Mono::var(0, 1).divides(Mono::var(0, 2).mul(Mono::var(1, 1))));
        assert!(!Mono::var(1, 2).divides(Mono::var(1, 1)));
    }

    #[test]
    fn arithmetic_and_exact_division() {
        let a = x().add(&y()).add(&Poly::int(1));
        let b = x().sub(&y());
        let p = a.mul(&b);
        assert_eq!(p.div_exact(&a), Some(b.clone()));
        assert_eq!(p.div_exact(&b), Some(a.clone()));
        assert_eq!(p.add(&Poly::int(1)).div_exact(&a), None);
        assert_eq!(a.pow(3), a.mul(&a).mul(&a));
        assert!(p.sub(&p).is_zero());
    }

    #[test]
    fn derivative_and_univariate_round_trip() {
        let p = x().pow(3).mul(&y()).add(&y().pow(2)).add(&x());
        assert_eq!(p.derivative(0), Poly::int(3).mul(&x().pow(2)).mul(&y()).add(&Poly::int(1)));
        let u = p.to_univariate(1);
        assert_eq!(Poly::from_univariate(1, &u), p);
        assert_eq!(u.len(), 3);
    }

    #[test]
    fn exact_square_roots() {
        let m = Poly::var(1);
        let w = Poly::var(2);
        let p = m.mul(&w).mul_int(&Int::from(4)).mul_coeff(&GInt::i());
        assert_eq!(p.mul(&p).sqrt_exact().map(|r| r.mul(&r)), Some(p.mul(&p)));
        let q = x().add(&y()).pow(2).add(&Poly::int(1));
        assert_eq!(q.sqrt_exact(), None);
        assert_eq!(GInt { re: Int::from(3), im: Int::from(4) }.sqrt_exact(), Some(GInt { re: Int::from(2), im: Int::from(1) }));
    }

    #[test]
    fn gaussian_division() {
        let i = Poly::constant(GInt::i());
        let a = x().add(&i);
        let b = x().sub(&i);
        assert_eq!(a.mul(&b), x().pow(2).add(&Poly::int(1)));
        assert_eq!(a.mul(&b).div_exact(&a), Some(b));
    }
}
