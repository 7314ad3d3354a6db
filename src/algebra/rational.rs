//! Exact rationals and Gaussian rationals a + b·i. These are the numbers of
//! the exact layer outside polynomial coefficients: decimal literals,
//! exponents, evaluation points and printed coefficients.

use super::int::{ratio_to_f64, Int};
use std::fmt;

/// A reduced fraction with a positive denominator.
#[derive(Clone, PartialEq, Eq, Hash, Debug)]
pub struct Rat {
    num: Int,
    den: Int,
}

impl Rat {
    /// Zero.
    pub fn zero() -> Rat {
        Rat { num: Int::ZERO, den: Int::ONE }
    }
    /// One.
    pub fn one() -> Rat {
        Rat { num: Int::ONE, den: Int::ONE }
    }
    /// An integer.
    pub fn int(n: Int) -> Rat {
        Rat { num: n, den: Int::ONE }
    }
    /// `n / d` reduced; `None` when `d` is zero.
    pub fn new(n: Int, d: Int) -> Option<Rat> {
        if d.is_zero() {
            return None;
        }
        let g = n.gcd(&d);
        let (mut n, mut d) = (n.div_exact(&g)?, d.div_exact(&g)?);
        if d.is_negative() {
            n = n.neg();
            d = d.neg();
        }
        Some(Rat { num: n, den: d })
    }
    /// Numerator.
    pub fn numer(&self) -> &Int {
        &self.num
    }
    /// Denominator (positive).
    pub fn denom(&self) -> &Int {
        &self.den
    }
    /// True for zero.
    pub fn is_zero(&self) -> bool {
        self.num.is_zero()
    }
    /// True for an integer.
    pub fn is_integer(&self) -> bool {
        self.den.is_one()
    }
    /// Sum.
    pub fn add(&self, o: &Rat) -> Rat {
        if self.den == o.den {
            return Rat::new(self.num.add(&o.num), self.den.clone()).expect("nonzero denominator");
        }
        Rat::new(self.num.mul(&o.den).add(&o.num.mul(&self.den)), self.den.mul(&o.den)).expect("nonzero denominator")
    }
    /// Difference.
    pub fn sub(&self, o: &Rat) -> Rat {
        self.add(&o.neg())
    }
    /// Product.
    pub fn mul(&self, o: &Rat) -> Rat {
        Rat::new(self.num.mul(&o.num), self.den.mul(&o.den)).expect("nonzero denominator")
    }
    /// Quotient; `None` for a zero divisor.
    pub fn div(&self, o: &Rat) -> Option<Rat> {
        Rat::new(self.num.mul(&o.den), self.den.mul(&o.num))
    }
    /// Negation.
    pub fn neg(&self) -> Rat {
        Rat { num: self.num.neg(), den: self.den.clone() }
    }
    /// Nearest double.
    pub fn to_f64(&self) -> f64 {
        match (&self.num, &self.den) {
            (Int::Small(a), Int::Small(b)) if a.unsigned_abs() < (1 << 53) && *b < (1 << 53) => *a as f64 / *b as f64,
            _ => ratio_to_f64(&self.num.to_big(), &self.den.to_big()),
        }
    }
    /// Parses a decimal literal exactly: `0.25` is 1/4, `1e-3` is 1/1000, `2.` is 2.
    pub fn parse_decimal(text: &str) -> Option<Rat> {
        let (mantissa, exp) = match text.find(['e', 'E']) {
            Some(i) => (&text[..i], text[i + 1..].parse::<i64>().ok()?),
            None => (text, 0),
        };
        let (ip, fp) = match mantissa.find('.') {
            Some(i) => (&mantissa[..i], &mantissa[i + 1..]),
            None => (mantissa, ""),
        };
        if ip.is_empty() && fp.is_empty() {
            return None;
        }
        if !ip.chars().chain(fp.chars()).all(|c| c.is_ascii_digit()) {
            return None;
        }
        let digits = format!("{ip}{fp}");
        let n: num_bigint::BigInt = if digits.is_empty() { 0.into() } else { digits.parse().ok()? };
        let e10 = exp.checked_sub(fp.len() as i64)?;
        if e10.abs() > 100_000 {
            return None;
        }
        let p = Int::from(10).pow(e10.unsigned_abs() as u32);
        let n = Int::from_big(n);
        if e10 >= 0 {
            Some(Rat::int(n.mul(&p)))
        } else {
            Rat::new(n, p)
        }
    }
}

impl PartialOrd for Rat {
    fn partial_cmp(&self, o: &Rat) -> Option<std::cmp::Ordering> {
        Some(self.cmp(o))
    }
}

impl Ord for Rat {
    /// The exact order: a/b < c/d ⇔ ad < cb (denominators are positive).
    fn cmp(&self, o: &Rat) -> std::cmp::Ordering {
        self.num.mul(&o.den).cmp(&o.num.mul(&self.den))
    }
}

impl fmt::Display for Rat {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.den.is_one() {
            write!(f, "{}", self.num)
        } else {
            write!(f, "{}/{}", self.num, self.den)
        }
    }
}

/// A Gaussian rational `re + im·i`.
#[derive(Clone, PartialEq, Eq, Hash, Debug)]
pub struct GRat {
    /// Real part.
    pub re: Rat,
    /// Imaginary part.
    pub im: Rat,
}

impl GRat {
    /// Zero.
    pub fn zero() -> GRat {
        GRat { re: Rat::zero(), im: Rat::zero() }
    }
    /// One.
    pub fn one() -> GRat {
        GRat { re: Rat::one(), im: Rat::zero() }
    }
    /// A real rational.
    pub fn real(r: Rat) -> GRat {
        GRat { re: r, im: Rat::zero() }
    }
    /// True for zero.
    pub fn is_zero(&self) -> bool {
        self.re.is_zero() && self.im.is_zero()
    }
    /// Sum.
    pub fn add(&self, o: &GRat) -> GRat {
        GRat { re: self.re.add(&o.re), im: self.im.add(&o.im) }
    }
    /// Difference.
    pub fn sub(&self, o: &GRat) -> GRat {
        GRat { re: self.re.sub(&o.re), im: self.im.sub(&o.im) }
    }
    /// Product.
    pub fn mul(&self, o: &GRat) -> GRat {
        GRat { re: self.re.mul(&o.re).sub(&self.im.mul(&o.im)), im: self.re.mul(&o.im).add(&self.im.mul(&o.re)) }
    }
    /// Quotient; `None` for a zero divisor.
    pub fn div(&self, o: &GRat) -> Option<GRat> {
        let n2 = o.re.mul(&o.re).add(&o.im.mul(&o.im));
        let c = GRat { re: o.re.clone(), im: o.im.neg() };
        let p = self.mul(&c);
        Some(GRat { re: p.re.div(&n2)?, im: p.im.div(&n2)? })
    }
    /// Negation.
    pub fn neg(&self) -> GRat {
        GRat { re: self.re.neg(), im: self.im.neg() }
    }
    /// Nearest pair of doubles.
    pub fn to_f64(&self) -> (f64, f64) {
        (self.re.to_f64(), self.im.to_f64())
    }
}

/// Parses `a`, `bi`, `a+bi`, `a-bi` (also with `I`, `j` as engineers write it, `*i`, or a bare `i`) exactly; parts may be fractions (`13/4`).
pub fn parse_complex(text: &str) -> Option<GRat> {
    let t: String = text.chars().filter(|c| !c.is_whitespace()).collect();
    if t.is_empty() {
        return None;
    }
    let imag_suffix = |s: &str| -> Option<String> {
        let s = s.strip_suffix(['i', 'I', 'j'])?;
        let s = s.strip_suffix('*').unwrap_or(s);
        Some(if s.is_empty() || s == "+" || s == "-" { format!("{s}1") } else { s.to_string() })
    };
    let signed = |s: &str| -> Option<Rat> {
        let (neg, body) = match s.strip_prefix('-') {
            Some(b) => (true, b),
            None => (false, s.strip_prefix('+').unwrap_or(s)),
        };
        // A fraction of two decimals (`13/4`, `1/3`) is exact too.
        let r = match body.split_once('/') {
            Some((n, d)) => Rat::parse_decimal(n)?.div(&Rat::parse_decimal(d)?)?,
            None => Rat::parse_decimal(body)?,
        };
        Some(if neg { r.neg() } else { r })
    };
    // The split between real and imaginary parts: the last sign not after an exponent mark.
    let bytes = t.as_bytes();
    let mut split = None;
    for i in (1..bytes.len()).rev() {
        if (bytes[i] == b'+' || bytes[i] == b'-') && !matches!(bytes[i - 1], b'e' | b'E') {
            split = Some(i);
            break;
        }
    }
    if let Some(im) = imag_suffix(&t) {
        match split {
            Some(i) => {
                let re = signed(&t[..i])?;
                let im = signed(imag_suffix(&t[i..])?.as_str())?;
                Some(GRat { re, im })
            }
            None => Some(GRat { re: Rat::zero(), im: signed(&im)? }),
        }
    } else {
        Some(GRat::real(signed(&t)?))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimals_are_exact() {
        assert_eq!(Rat::parse_decimal("0.25"), Rat::new(1.into(), 4.into()));
        assert_eq!(Rat::parse_decimal("1e-3"), Rat::new(1.into(), 1000.into()));
        assert_eq!(Rat::parse_decimal("2."), Some(Rat::int(2.into())));
        assert_eq!(Rat::parse_decimal(".5"), Rat::new(1.into(), 2.into()));
        assert_eq!(Rat::parse_decimal("1.5E2"), Some(Rat::int(150.into())));
        assert_eq!(Rat::parse_decimal("."), None);
    }

    #[test]
    fn gaussian_division() {
        let a = GRat { re: Rat::one(), im: Rat::one() };
        let q = GRat::one().div(&a).unwrap();
        assert_eq!(q.re, Rat::new(1.into(), 2.into()).unwrap());
        assert_eq!(q.im, Rat::new((-1).into(), 2.into()).unwrap());
    }
}
