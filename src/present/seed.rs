//! Starting forms of a rational function for the e-graph and for the
//! baselines of `--stats`: the naive expanded form, plain Horner in the
//! variable, and a greedy multivariate Horner scheme that pulls out common
//! constants and monomials and keeps the denominator factored.

use super::egraph::{Leaf, Op};
use crate::algebra::{GRat, Int, Mono, Poly, Rat, RatFunc, MAX_VARS};
use egg::{Id, RecExpr};
use std::collections::HashMap;

/// The exact constants of one set of forms, each stored once.
#[derive(Default)]
pub(crate) struct Consts {
    pub list: Vec<GRat>,
    index: HashMap<GRat, usize>,
}

impl Consts {
    fn id(&mut self, c: GRat) -> usize {
        if let Some(k) = self.index.get(&c) {
            return *k;
        }
        self.list.push(c.clone());
        self.index.insert(c, self.list.len() - 1);
        self.list.len() - 1
    }
}

/// How a seed is shaped.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Shape {
    /// Numerator and denominator expanded into monomials, each monomial a
    /// chain of multiplications.
    Naive,
    /// Horner in variable 0 over the expanded numerator and denominator,
    /// coefficients expanded in the parameters.
    PlainHorner,
    /// Greedy multivariate Horner, variable 0 first when `true`; the
    /// denominator a product of powers of its factors.
    Greedy(bool),
    /// The numerator written in powers of its denominator's main factor f
    /// (N = Σ Aₖ fᵏ with deg Aₖ < deg f in variable 0), Horner in f, each Aₖ
    /// greedy with variable 0 first; f is computed once for both.
    Adic,
}

type Terms = Vec<(Mono, GRat)>;
/// A value that may still need a sign: (negated?, node).
type Signed = (bool, Id);

/// An expression under construction (hash-consed, so it is a DAG).
pub(crate) struct Builder<'c> {
    pub expr: RecExpr<Op>,
    memo: HashMap<Op, Id>,
    consts: &'c mut Consts,
}

fn is_one(c: &GRat) -> bool {
    *c == GRat::one()
}

/// The constant with its sign taken out: real part positive, or zero real part and positive imaginary part.
fn unsigned(c: &GRat) -> (bool, GRat) {
    let neg = c.re.numer().is_negative() || (c.re.is_zero() && c.im.numer().is_negative());
    (neg, if neg { c.neg() } else { c.clone() })
}

fn rat_content(terms: &Terms) -> Rat {
    // gcd of the numerators over the lcm of the denominators of every real and imaginary part.
    let (mut g, mut l) = (Int::ZERO, Int::ONE);
    for (_, c) in terms {
        for r in [&c.re, &c.im] {
            if r.is_zero() {
                continue;
            }
            g = g.gcd(r.numer());
            let d = r.denom();
            l = l.div_exact(&l.gcd(d)).expect("gcd divides").mul(d);
        }
    }
    if g.is_zero() {
        return Rat::one();
    }
    Rat::new(g, l).expect("positive lcm")
}

impl<'c> Builder<'c> {
    pub(crate) fn new(consts: &'c mut Consts) -> Builder<'c> {
        Builder { expr: RecExpr::default(), memo: HashMap::new(), consts }
    }

    fn add_node(&mut self, op: Op) -> Id {
        if let Some(id) = self.memo.get(&op) {
            return *id;
        }
        let id = self.expr.add(op.clone());
        self.memo.insert(op, id);
        id
    }
    fn leaf(&mut self, l: Leaf) -> Id {
        self.add_node(Op::Leaf(l))
    }
    fn konst(&mut self, c: GRat) -> Id {
        let k = self.consts.id(c);
        self.leaf(Leaf::Const(k))
    }
    fn mul(&mut self, a: Id, b: Id) -> Id {
        self.add_node(Op::Mul([a, b]))
    }
    fn resolve(&mut self, s: Signed) -> Id {
        if s.0 {
            self.add_node(Op::Neg([s.1]))
        } else {
            s.1
        }
    }
    fn pow(&mut self, x: Id, e: u32) -> Id {
        if e == 1 {
            return x;
        }
        let ex = self.leaf(Leaf::Exp(e));
        self.add_node(Op::Pow([x, ex]))
    }

    /// A signed sum, starting from a positive part so that the rest are added or subtracted.
    fn sum(&mut self, parts: &[Signed]) -> Signed {
        let start = parts.iter().position(|(n, _)| !n);
        let (neg, k) = match start {
            Some(k) => (false, k),
            None => (true, 0),
        };
        let mut acc = parts[k].1;
        for (j, (n, id)) in parts.iter().enumerate() {
            if j == k {
                continue;
            }
            let op = if *n != neg { Op::Sub([acc, *id]) } else { Op::Add([acc, *id]) };
            acc = self.add_node(op);
        }
        (neg, acc)
    }

    /// `c·m`, the monomial as a chain of single multiplications (`chain`) or of powers.
    fn term(&mut self, c: &GRat, m: Mono, chain: bool) -> Signed {
        let (neg, mag) = unsigned(c);
        let mut acc: Option<Id> = None;
        for v in 0..MAX_VARS {
            let e = m.exp(v);
            if e == 0 {
                continue;
            }
            let x = self.leaf(Leaf::Var(v));
            let reps: Vec<Id> = if chain { vec![x; e as usize] } else { vec![self.pow(x, e)] };
            for f in reps {
                acc = Some(match acc {
                    None => f,
                    Some(a) => self.mul(a, f),
                });
            }
        }
        let id = match acc {
            None => self.konst(mag),
            Some(a) if is_one(&mag) => a,
            Some(a) => {
                let k = self.konst(mag);
                self.mul(k, a)
            }
        };
        (neg, id)
    }

    /// `a · s`, without multiplying by a unit.
    fn times(&mut self, a: Id, s: Signed) -> Signed {
        let one = self.konst(GRat::one());
        if s.1 == one {
            return (s.0, a);
        }
        (s.0, self.mul(a, s.1))
    }

    fn naive(&mut self, terms: &Terms) -> Signed {
        let parts: Vec<Signed> = terms.iter().map(|(m, c)| self.term(c, *m, true)).collect();
        self.sum(&parts)
    }

    fn plain_horner(&mut self, terms: &Terms) -> Signed {
        let d = terms.iter().map(|(m, _)| m.exp(0)).max().unwrap_or(0);
        let mut by_power: Vec<Terms> = vec![Vec::new(); d as usize + 1];
        for (m, c) in terms {
            by_power[m.exp(0) as usize].push((m.with_exp(0, 0), c.clone()));
        }
        let z = self.leaf(Leaf::Var(0));
        let mut acc = self.naive(&by_power[d as usize]);
        for k in (0..d as usize).rev() {
            acc = self.times(z, acc);
            if !by_power[k].is_empty() {
                let c = self.naive(&by_power[k]);
                acc = self.sum(&[acc, c]);
            }
        }
        acc
    }

    fn greedy(&mut self, terms: &Terms, z_first: bool) -> Signed {
        if terms.len() == 1 {
            return self.term(&terms[0].1, terms[0].0, false);
        }
        // A constant factor pays when it removes more than one constant multiplication.
        let g = rat_content(terms);
        if g != Rat::one() {
            let g = GRat::real(g);
            let scaled: Terms = terms.iter().map(|(m, c)| (*m, c.div(&g).expect("nonzero content"))).collect();
            let units = |t: &Terms| t.iter().filter(|(_, c)| !is_one(&unsigned(c).1)).count();
            if units(&scaled) + 1 < units(terms) {
                let inner = self.greedy(&scaled, z_first);
                let k = self.konst(g);
                return (inner.0, self.mul(k, inner.1));
            }
        }
        let m0 = terms.iter().skip(1).fold(terms[0].0, |g, (m, _)| g.gcd(*m));
        if !m0.is_one() {
            let rest: Terms = terms.iter().map(|(m, c)| (m0.div_of(*m).expect("monomial content divides"), c.clone())).collect();
            let inner = self.greedy(&rest, z_first);
            let (_, mono) = self.term(&GRat::one(), m0, false);
            return self.times(mono, inner);
        }
        // Split on the variable in most terms (variable 0 first when asked).
        let count = |v: usize| terms.iter().filter(|(m, _)| m.exp(v) > 0).count();
        let v = if z_first && count(0) > 0 { 0 } else { (0..MAX_VARS).max_by_key(|&v| (count(v), std::cmp::Reverse(v))).expect("variables") };
        let k = terms.iter().filter(|(m, _)| m.exp(v) > 0).map(|(m, _)| m.exp(v)).min().expect("some term uses the variable");
        let with: Terms = terms.iter().filter(|(m, _)| m.exp(v) > 0).map(|(m, c)| (m.with_exp(v, m.exp(v) - k), c.clone())).collect();
        let without: Terms = terms.iter().filter(|(m, _)| m.exp(v) == 0).cloned().collect();
        let inner = self.greedy(&with, z_first);
        let x = self.leaf(Leaf::Var(v));
        let xk = self.pow(x, k);
        let prod = self.times(xk, inner);
        if without.is_empty() {
            return prod;
        }
        let rest = self.greedy(&without, z_first);
        self.sum(&[prod, rest])
    }

    fn poly(&mut self, terms: &Terms, shape: Shape) -> Signed {
        match shape {
            Shape::Naive => self.naive(terms),
            Shape::PlainHorner => self.plain_horner(terms),
            Shape::Greedy(z_first) => self.greedy(terms, z_first),
            Shape::Adic => self.greedy(terms, true),
        }
    }

    /// The numerator of `r` in powers of its main denominator factor, Horner in that factor.
    fn adic(&mut self, r: &RatFunc) -> Option<Signed> {
        let (f, _) = r
            .den_factors()
            .iter()
            .filter(|(f, _)| f.poly().degree(0) >= 1 && f.poly().to_univariate(0).last().is_some_and(|c| c.is_one()))
            .max_by_key(|(f, e)| (*e * f.poly().degree(0), f.poly().degree(0)))?;
        let digits = base_digits(r.num(), f.poly());
        if digits.len() < 2 {
            return None;
        }
        let fs = self.greedy(&scaled_terms(f.poly(), &Int::ONE), true);
        let fx = self.resolve(fs);
        let mut acc: Option<Signed> = None;
        for d in digits.iter().rev() {
            if let Some(a) = acc {
                acc = Some((a.0, self.mul(a.1, fx)));
            }
            if !d.is_zero() {
                let t = self.greedy(&scaled_terms(d, r.scale()), true);
                acc = Some(match acc {
                    None => t,
                    Some(a) => self.sum(&[a, t]),
                });
            }
        }
        acc
    }

    /// One rational function in the given shape.
    pub(crate) fn ratfunc(&mut self, r: &RatFunc, shape: Shape) -> Id {
        if r.is_zero() {
            return self.konst(GRat::zero());
        }
        let adic = if shape == Shape::Adic { self.adic(r) } else { None };
        let num = match adic {
            Some(n) => n,
            None => self.poly(&scaled_terms(r.num(), r.scale()), shape),
        };
        if r.den_factors().is_empty() {
            return self.resolve(num);
        }
        let den = match shape {
            Shape::Naive | Shape::PlainHorner => self.poly(&scaled_terms(&r.den_expanded(), &Int::ONE), shape),
            Shape::Greedy(_) | Shape::Adic => {
                let mut parts: Option<Signed> = None;
                for (f, e) in r.den_factors() {
                    let fs = self.poly(&scaled_terms(f.poly(), &Int::ONE), shape);
                    let fx = self.resolve(fs);
                    let p = self.pow(fx, *e);
                    parts = Some(match parts {
                        None => (false, p),
                        Some((n, a)) => (n, self.mul(a, p)),
                    });
                }
                parts.expect("a factored denominator")
            }
        };
        // Put the sign on the quotient: -(a/b) rather than a/(-b).
        let neg = num.0 != den.0;
        let q = self.add_node(Op::Div([num.1, den.1]));
        self.resolve((neg, q))
    }

    /// The list of outputs, the root of a seed.
    pub(crate) fn outputs(&mut self, items: Vec<Id>) -> Id {
        self.add_node(Op::List(items.into_boxed_slice()))
    }
}

/// The digits of `n` in base `f` (monic in variable 0): n = Σ dₖ fᵏ with deg dₖ < deg f in variable 0.
fn base_digits(n: &Poly, f: &Poly) -> Vec<Poly> {
    let fu = f.to_univariate(0);
    let df = fu.len() - 1;
    let mut digits = Vec::new();
    let mut rest = n.clone();
    while !rest.is_zero() {
        let mut nu = rest.to_univariate(0);
        let mut q = vec![Poly::zero(); nu.len().saturating_sub(df)];
        for d in (df..nu.len()).rev() {
            let c = nu[d].clone();
            if c.is_zero() {
                continue;
            }
            for (j, fj) in fu.iter().enumerate() {
                nu[d - df + j] = nu[d - df + j].sub(&c.mul(fj));
            }
            q[d - df] = c;
        }
        nu.truncate(df);
        digits.push(Poly::from_univariate(0, &nu));
        rest = Poly::from_univariate(0, &q);
    }
    digits
}

fn scaled_terms(p: &Poly, scale: &Int) -> Terms {
    crate::algebra::print::scaled_terms(p, scale).into_iter().map(|(c, m)| (m, c)).collect()
}
