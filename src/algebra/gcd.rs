//! Polynomial gcd over the rationals, by recursion on the variables:
//! contents are split off recursively and the primitive parts are reduced
//! with the subresultant remainder sequence in the smallest-index variable
//! that occurs. The inputs met in physics equations are small (the factor
//! base of a denominator), so this simple algorithm is fast where it is used;
//! the hot paths avoid gcds altogether by trial division against known
//! factors (see `ratfunc`).

use super::int::Int;
use super::poly::{Mono, Poly};
use super::rational::{GRat, Rat};

/// Normalises to a primitive polynomial with a positive leading coefficient.
pub fn primitive(p: &Poly) -> Poly {
    if p.is_zero() {
        return Poly::zero();
    }
    let c = p.content_int();
    let q = p.div_exact_int(&c).expect("content divides");
    q.normalize_sign().0
}

/// The gcd over Q of two real polynomials, primitive with positive leading
/// coefficient; `gcd(0, 0) = 0`. `None` when an intermediate result would
/// exceed the exponent range of a monomial (callers report a size limit).
pub fn gcd(a: &Poly, b: &Poly) -> Option<Poly> {
    debug_assert!(a.is_real() && b.is_real());
    // The outermost call owns the work budget; nested calls share it.
    let outer = DEPTH.with(|d| {
        let v = d.get();
        d.set(v + 1);
        v == 0
    });
    if outer {
        WORK.with(|w| w.set(0));
    }
    let r = gcd_top(a, b);
    DEPTH.with(|d| d.set(d.get() - 1));
    r
}

thread_local! {
    static WORK: std::cell::Cell<u64> = const { std::cell::Cell::new(0) };
    static DEPTH: std::cell::Cell<u32> = const { std::cell::Cell::new(0) };
}

/// Term products one gcd may spend before it gives up (reported as a size limit).
const WORK_BUDGET: u64 = 30_000_000;

/// Charges `n` units of work; false once the budget is spent.
/// `words` is the cost of one coefficient product in machine-word
/// products, charged to the command's budget ([`super::budget`]).
fn charge(n: u64, words: u64) -> bool {
    let own = WORK.with(|w| {
        let v = w.get().saturating_add(n);
        w.set(v);
        v <= WORK_BUDGET
    });
    own && super::budget::charge(n.saturating_mul(words))
}

fn gcd_top(a: &Poly, b: &Poly) -> Option<Poly> {
    if a.is_zero() {
        return Some(primitive(b));
    }
    if b.is_zero() {
        return Some(primitive(a));
    }
    if a.as_constant().is_some() || b.as_constant().is_some() {
        return Some(Poly::int(1));
    }
    if a == b {
        return Some(primitive(a));
    }
    // Common monomial factor first: it is cheap and frequent (powers of z).
    let ma = a.mono_content();
    let mb = b.mono_content();
    let mg = ma.gcd(mb);
    let (a, b) = (a.div_mono(ma), b.div_mono(mb));
    let g = gcd_rec(&a, &b)?;
    Some(primitive(&g.mul_mono(mg)))
}

fn gcd_rec(a: &Poly, b: &Poly) -> Option<Poly> {
    if a.is_zero() {
        return Some(primitive(b));
    }
    if b.is_zero() {
        return Some(primitive(a));
    }
    if a.as_constant().is_some() || b.as_constant().is_some() {
        return Some(Poly::int(1));
    }
    let va = a.first_var().expect("non-constant");
    let vb = b.first_var().expect("non-constant");
    let v = va.min(vb);
    if !a.uses_var(v) {
        return gcd_rec(a, &content_in(b, v)?);
    }
    if !b.uses_var(v) {
        return gcd_rec(&content_in(a, v)?, b);
    }
    if coprime_image(a, b, v) {
        // The gcd is free of v: it is the gcd of the contents, and the
        // smaller polynomial's content is usually 1.
        let (s, l) = if a.len() <= b.len() { (a, b) } else { (b, a) };
        let cs = content_in(s, v)?;
        if cs.as_constant().is_some() {
            return Some(Poly::int(1));
        }
        let cl = content_in(l, v)?;
        return gcd_rec(&cs, &cl);
    }
    let ca = content_in(a, v)?;
    let cb = content_in(b, v)?;
    let pa = a.div_exact(&ca)?;
    let pb = b.div_exact(&cb)?;
    let gc = gcd_rec(&ca, &cb)?;
    let gp = prs_gcd(&pa, &pb, v)?;
    Some(gc.mul(&gp))
}

/// The gcd of the coefficients of `p` seen as a polynomial in `v`.
pub fn content_in(p: &Poly, v: usize) -> Option<Poly> {
    let coeffs = p.to_univariate(v);
    let mut g = Poly::zero();
    // Smallest coefficients first: their gcd is found fastest and is often 1.
    let mut order: Vec<&Poly> = coeffs.iter().filter(|c| !c.is_zero()).collect();
    order.sort_by_key(|c| c.len());
    for c in order {
        g = if g.is_zero() { primitive(c) } else { gcd_rec(&g, c)? };
        if g.as_constant().is_some() {
            return Some(Poly::int(1));
        }
    }
    Some(g)
}

/// Primitive part with respect to `v`.
fn primitive_in(p: &Poly, v: usize) -> Option<Poly> {
    let c = content_in(p, v)?;
    Some(primitive(&p.div_exact(&c)?))
}

/// The Mersenne prime 2⁶¹ − 1 used for modular images.
const P61: u64 = (1 << 61) - 1;

fn mulmod(a: u64, b: u64) -> u64 {
    ((a as u128 * b as u128) % P61 as u128) as u64
}

fn powmod(mut a: u64, mut e: u64) -> u64 {
    let mut r = 1u64;
    while e > 0 {
        if e & 1 == 1 {
            r = mulmod(r, a);
        }
        a = mulmod(a, a);
        e >>= 1;
    }
    r
}

fn int_mod(c: &super::int::Int) -> u64 {
    use num_traits::ToPrimitive;
    match c {
        super::int::Int::Small(v) => v.rem_euclid(P61 as i64) as u64,
        super::int::Int::Big(b) => {
            let m = num_bigint::BigInt::from(P61);
            ((&**b % &m + &m) % &m).to_u64().unwrap_or(0)
        }
    }
}

/// The image of `p` in F_p[x_v] at a fixed point for the other variables.
fn image(p: &Poly, v: usize, point: &[u64]) -> Vec<u64> {
    let n = p.degree(v) as usize;
    let mut out = vec![0u64; n + 1];
    for (m, c) in p.terms() {
        let mut t = int_mod(&c.re);
        for (i, x) in point.iter().enumerate() {
            if i != v {
                let e = m.exp(i);
                if e > 0 {
                    t = mulmod(t, powmod(*x, e as u64));
                }
            }
        }
        let k = m.exp(v) as usize;
        out[k] = (out[k] + t) % P61;
    }
    out
}

fn trim_mod(a: &mut Vec<u64>) {
    while matches!(a.last(), Some(0)) {
        a.pop();
    }
}

/// False when a modular image proves that `d` does not divide `n`: the images
/// in F_p[x_v] (v the first variable of d, the others at a fixed point) are
/// compared by univariate division when d's image keeps its degree.
pub(crate) fn image_divides(n: &Poly, d: &Poly) -> bool {
    let Some(v) = d.first_var() else { return true };
    let point = image_point();
    let y = image(d, v, &point);
    if y.last() == Some(&0) {
        return true;
    }
    let mut x = image(n, v, &point);
    trim_mod(&mut x);
    rem_mod(&mut x, &y);
    x.is_empty()
}

/// The fixed evaluation point of the modular images.
fn image_point() -> Vec<u64> {
    (0..super::poly::MAX_VARS).map(|i| 1_000_003 + 7_919 * i as u64 * (i as u64 + 3)).collect()
}

/// x ← x mod y in F_p[t] (dense, low degree first, y without trailing zeros).
fn rem_mod(x: &mut Vec<u64>, y: &[u64]) {
    let inv = powmod(*y.last().expect("nonempty"), P61 - 2);
    while x.len() >= y.len() && !x.is_empty() {
        let f = mulmod(*x.last().expect("nonempty"), inv);
        let shift = x.len() - y.len();
        for (j, yj) in y.iter().enumerate() {
            let t = mulmod(f, *yj);
            x[j + shift] = (x[j + shift] + P61 - t) % P61;
        }
        trim_mod(x);
    }
}

/// True when the images of `a` and `b` in F_p[x_v] keep their degrees and are
/// coprime: then gcd(a, b) is certainly free of x_v (an image gcd can only
/// be larger than the true one when a leading coefficient vanishes).
fn coprime_image(a: &Poly, b: &Poly, v: usize) -> bool {
    let point = image_point();
    let mut x = image(a, v, &point);
    let mut y = image(b, v, &point);
    if x.last() == Some(&0) || y.last() == Some(&0) {
        return false;
    }
    trim_mod(&mut x);
    trim_mod(&mut y);
    // Euclid over F_p.
    while !y.is_empty() {
        rem_mod(&mut x, &y);
        std::mem::swap(&mut x, &mut y);
    }
    x.len() == 1
}

/// Subresultant remainder sequence for two polynomials primitive in `v`.
fn prs_gcd(a: &Poly, b: &Poly, v: usize) -> Option<Poly> {
    let (mut a, mut b) = (a.to_univariate(v), b.to_univariate(v));
    if a.len() < b.len() {
        std::mem::swap(&mut a, &mut b);
    }
    let mut g = Poly::int(1);
    let mut h = Poly::int(1);
    loop {
        let delta = (a.len() - b.len()) as u32;
        let r = prem(&a, &b)?;
        if r.is_empty() {
            return primitive_in(&Poly::from_univariate(v, &b), v);
        }
        if r.len() == 1 {
            return Some(Poly::int(1));
        }
        // Divide by g·h^δ (exact by the subresultant theorem).
        if !h.fits_pow(delta) {
            return None;
        }
        let hd = h.pow(delta);
        if !g.fits_mul(&hd) {
            return None;
        }
        let divisor = g.mul(&hd);
        let mut rr = Vec::with_capacity(r.len());
        for c in &r {
            rr.push(c.div_exact(&divisor)?);
        }
        a = b;
        b = rr;
        g = a.last()?.clone();
        h = if delta == 0 {
            h
        } else {
            if !g.fits_pow(delta) {
                return None;
            }
            g.pow(delta).div_exact(&h.pow(delta - 1))?
        };
    }
}

/// Pseudo-remainder of univariate representations (coefficient lists, low
/// degree first, no trailing zeros): `lc(b)^(deg a − deg b + 1) · a mod b`.
fn prem(a: &[Poly], b: &[Poly]) -> Option<Vec<Poly>> {
    let db = b.len() - 1;
    let lb = &b[db];
    let mut r: Vec<Poly> = a.to_vec();
    let mut steps = (a.len() - b.len() + 1) as u32;
    let bdeg = b.iter().fold(Mono::ONE, |d, c| d.lcm(c.degrees()));
    while r.len() > db && !r.is_empty() {
        let k = r.len() - 1 - db;
        let lr = r.last()?.clone();
        let rdeg = r.iter().fold(Mono::ONE, |d, c| d.lcm(c.degrees()));
        if !rdeg.fits_mul(bdeg) {
            return None;
        }
        let rt: u64 = r.iter().map(|c| c.len() as u64).sum();
        let bt: u64 = b.iter().map(|c| c.len() as u64).sum();
        let rbits = r.iter().map(Poly::max_bits).max().unwrap_or(0);
        let bbits = b.iter().map(Poly::max_bits).max().unwrap_or(0);
        let words = super::budget::words(rbits, lb.max_bits().max(bbits).max(lr.max_bits()));
        if !charge(rt * lb.len() as u64 + lr.len() as u64 * bt, words) {
            return None;
        }
        for c in r.iter_mut() {
            *c = c.mul(lb);
        }
        for (j, bj) in b.iter().enumerate() {
            r[j + k] = r[j + k].sub(&lr.mul(bj));
        }
        trim(&mut r);
        steps -= 1;
        if r.len() <= db {
            break;
        }
    }
    if steps > 0 && !r.is_empty() {
        if !lb.fits_pow(steps) {
            return None;
        }
        let f = lb.pow(steps);
        let rdeg = r.iter().fold(Mono::ONE, |d, c| d.lcm(c.degrees()));
        if !rdeg.fits_mul(f.degrees()) {
            return None;
        }
        for c in r.iter_mut() {
            *c = c.mul(&f);
        }
    }
    trim(&mut r);
    Some(r)
}

fn trim(v: &mut Vec<Poly>) {
    while matches!(v.last(), Some(c) if c.is_zero()) {
        v.pop();
    }
}

/// Square-free decomposition of a real primitive polynomial with respect to
/// variable `v` (Yun's algorithm): returns `(f_k, k)` with `p = c · ∏ f_k^k`
/// up to a factor free of `v`, each `f_k` primitive and non-constant in `v`.
pub fn squarefree_in(p: &Poly, v: usize) -> Option<Vec<(Poly, u32)>> {
    let mut out = Vec::new();
    if !p.uses_var(v) {
        return Some(out);
    }
    let dp = p.derivative(v);
    let a = gcd(p, &dp)?;
    let mut b = p.div_exact(&a)?;
    let mut c = dp.div_exact(&a)?;
    let mut d = c.sub(&b.derivative(v));
    let mut k = 1;
    while b.uses_var(v) && k <= super::poly::MAX_EXP {
        let g = gcd(&b, &d)?;
        if g.uses_var(v) {
            out.push((primitive(&g), k));
        }
        b = b.div_exact(&g)?;
        c = d.div_exact(&g)?;
        d = c.sub(&b.derivative(v));
        k += 1;
    }
    Some(out)
}

/// True when `p` is certainly irreducible over Q: it has degree one in some
/// variable and is primitive with respect to it (then any factorisation would
/// need a factor free of that variable dividing both coefficients).
pub fn surely_irreducible(p: &Poly) -> bool {
    if p.total_degree() == 1 {
        return true;
    }
    for v in 0..super::poly::MAX_VARS {
        if p.degree(v) == 1 {
            let c = p.to_univariate(v);
            if matches!(gcd(&c[0], &c[1]), Some(g) if g.as_constant().is_some()) {
                return true;
            }
        }
    }
    false
}

/// Splits off factors of degree one in variable 0 where that is cheap and
/// exact: rational roots of a polynomial in variable 0 alone, and the two
/// roots of a quadratic (in variable 0, with parameter coefficients) whose
/// discriminant is a perfect square. Returns primitive factors whose product
/// is `p` up to a constant; `p` itself when nothing splits.
pub fn split_linear(p: &Poly) -> Vec<Poly> {
    let deg = p.degree(0);
    if deg < 2 {
        return vec![p.clone()];
    }
    let only_z = (1..super::poly::MAX_VARS).all(|i| !p.uses_var(i));
    if only_z && p.is_real() {
        return split_rational_roots(p);
    }
    if deg == 2 {
        let c = p.to_univariate(0);
        let (c0, c1, c2) = (&c[0], &c[1], &c[2]);
        if !(c0.fits_mul(c2) && c1.fits_mul(c1)) {
            return vec![p.clone()];
        }
        let disc = c1.mul(c1).sub(&c0.mul(c2).mul_int(&Int::from(4)));
        let Some(s) = disc.sqrt_exact().filter(Poly::is_real) else {
            return vec![p.clone()];
        };
        // 2·c2·z + c1 − s is, up to a factor free of z, a factor of p.
        let z = Poly::var(0);
        let f = z.mul(c2).mul_int(&Int::from(2)).add(c1).sub(&s);
        let Some(cont) = content_in(&f, 0) else {
            return vec![p.clone()];
        };
        let Some(f) = f.div_exact(&cont) else {
            return vec![p.clone()];
        };
        let f = primitive(&f);
        if let Some(rest) = p.div_exact(&f) {
            if rest.degree(0) == 1 {
                return vec![f, primitive(&rest)];
            }
        }
    }
    vec![p.clone()]
}

fn small_divisors(n: &Int) -> Option<Vec<i64>> {
    let Int::Small(v) = n.abs() else { return None };
    if v == 0 || v > 1_000_000_000_000 {
        return None;
    }
    let mut out = Vec::new();
    let mut d = 1i64;
    while d * d <= v {
        if v % d == 0 {
            out.push(d);
            if d != v / d {
                out.push(v / d);
            }
        }
        d += 1;
        if d > 1_000_000 {
            return None;
        }
    }
    out.sort_unstable();
    Some(out)
}

fn split_rational_roots(p: &Poly) -> Vec<Poly> {
    let mut rest = primitive(p);
    let mut out = Vec::new();
    loop {
        if rest.degree(0) < 2 {
            break;
        }
        let c = rest.to_univariate(0);
        let a0 = c[0].as_constant().map(|g| g.re).unwrap_or(Int::ZERO);
        let an = c[c.len() - 1].as_constant().map(|g| g.re).unwrap_or(Int::ZERO);
        if a0.is_zero() {
            // A root at zero: z itself.
            out.push(Poly::var(0));
            rest = rest.div_exact(&Poly::var(0)).expect("z divides");
            continue;
        }
        let (Some(ds), Some(es)) = (small_divisors(&a0), small_divisors(&an)) else {
            break;
        };
        let mut found = None;
        'search: for &e in &es {
            for &d in &ds {
                for sign in [1i64, -1] {
                    let r = Rat::new(Int::from(sign * d), Int::from(e)).expect("nonzero");
                    if r.denom() != &Int::from(e) {
                        continue;
                    }
                    if rest.eval(&[GRat::real(r.clone())]).is_zero() {
                        found = Some((sign * d, e));
                        break 'search;
                    }
                }
            }
        }
        let Some((d, e)) = found else { break };
        let f = Poly::var(0).mul_int(&Int::from(e)).sub(&Poly::int(d));
        rest = rest.div_exact(&f).expect("root gives a factor");
        out.push(f);
    }
    out.push(rest);
    out.into_iter().filter(|f| f.as_constant().is_none()).map(|f| primitive(&f)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(i: usize) -> Poly {
        Poly::var(i)
    }

    #[test]
    fn gcd_of_products() {
        let (x, y, z) = (v(0), v(1), v(2));
        let f = x.mul(&y).add(&z).add(&Poly::int(3));
        let g1 = x.sub(&y).pow(2);
        let g2 = x.add(&z.mul(&y));
        let a = f.mul(&g1).mul(&Poly::int(6));
        let b = f.mul(&g2).mul(&x).mul(&Poly::int(4));
        assert_eq!(gcd(&a, &b), Some(primitive(&f)));
        assert_eq!(gcd(&g1, &g2), Some(Poly::int(1)));
        let d = x.pow(2).sub(&Poly::int(2).mul(&v(1)).mul(&x)).add(&v(2).pow(2));
        assert_eq!(gcd(&d.mul(&x), &d.pow(2)), Some(d));
    }

    #[test]
    fn squarefree_splits_powers() {
        let (x, y) = (v(0), v(1));
        let a = x.sub(&y);
        let b = x.add(&Poly::int(1));
        let p = a.pow(3).mul(&b);
        let sf = squarefree_in(&p, 0).unwrap();
        assert_eq!(sf, vec![(b, 1), (a, 3)]);
    }

    #[test]
    fn linear_factors_split() {
        let (z, a) = (v(0), v(1));
        let one = Poly::int(1);
        // z^2 - 1 = (z - 1)(z + 1); 2z^2 - 3z + 1 = (2z - 1)(z - 1)
        let f = split_linear(&z.pow(2).sub(&one));
        assert_eq!(f.len(), 2);
        let g = split_linear(&z.pow(2).mul(&Poly::int(2)).sub(&z.mul(&Poly::int(3))).add(&one));
        assert_eq!(g.len(), 2);
        // z^2 - (1 + a) z + a = (z - 1)(z - a)
        let h = split_linear(&z.pow(2).sub(&z.mul(&one.add(&a))).add(&a));
        assert_eq!(h.len(), 2);
        assert_eq!(h[0].mul(&h[1]).normalize_sign().0, z.pow(2).sub(&z.mul(&one.add(&a))).add(&a));
        // r^2 - 2 M r + a^2 stays whole
        assert_eq!(split_linear(&z.pow(2).sub(&z.mul(&a).mul(&Poly::int(2))).add(&v(2).pow(2))).len(), 1);
    }

    #[test]
    fn irreducibility_heuristic() {
        let (r, m, a) = (v(0), v(1), v(2));
        let delta = r.pow(2).sub(&Poly::int(2).mul(&m).mul(&r)).add(&a.pow(2));
        assert!(surely_irreducible(&delta));
        assert!(!surely_irreducible(&r.pow(2).sub(&Poly::int(1))));
    }
}
