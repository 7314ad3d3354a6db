//! Starting forms of a rational function for the e-graph and for the
//! baselines of `--stats`: the naive expanded form, plain Horner in the
//! variable, a greedy multivariate Horner scheme that pulls out common
//! constants and monomials and keeps the denominator factored, and forms
//! over atoms: named polynomials (a file's `let`s) standing for new
//! variables, the outputs reduced modulo `atom = polynomial` in an
//! elimination order, optionally in a shifted variable (bounded; a plan
//! whose reduction grows too large is dropped).

use super::egraph::{Leaf, Op};
use crate::algebra::{GInt, GRat, Int, Mono, Poly, Rat, RatFunc, MAX_VARS};
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
    /// Variables that stand for an already built node (a shifted variable, an atom).
    subst: HashMap<usize, Id>,
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
        Builder { expr: RecExpr::default(), memo: HashMap::new(), consts, subst: HashMap::new() }
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
    /// Variable `v`, or the node it stands for.
    fn var(&mut self, v: usize) -> Id {
        match self.subst.get(&v) {
            Some(id) => *id,
            None => self.leaf(Leaf::Var(v)),
        }
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
            let x = self.var(v);
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
        let z = self.var(0);
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
        let x = self.var(v);
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

    /// The polynomial `p` (in the atoms' shifted variable) reduced over the plan's atoms, greedy.
    fn reduced(&mut self, p: &Poly, scale: &Int, plan: &AtomPlan, budget: &mut usize) -> Option<Signed> {
        let shifted = match &plan.shift {
            Some(c) => shift_var0(p, c),
            None => p.clone(),
        };
        let r = reduce_by(&shifted, &plan.relations, budget)?;
        Some(self.greedy(&scaled_terms(&r, scale), plan.z_first))
    }

    /// Every output written over the plan's atoms: numerator and denominator
    /// factors reduced modulo the atoms' relations (in the shifted variable
    /// when the plan has a shift), each atom computed once from its own
    /// greedy form in the original variable. `None` when a reduction runs
    /// out of its budget.
    pub(crate) fn over_atoms(&mut self, outputs: &[RatFunc], plan: &AtomPlan) -> Option<Id> {
        // Only the atoms of the plan's relations are built (the others would be dead steps).
        let mut atoms = Vec::with_capacity(plan.relations.len());
        for r in &plan.relations {
            let s = self.greedy(&scaled_terms(&plan.atoms[r.atom - plan.base], &Int::ONE), true);
            atoms.push((r.atom, self.resolve(s)));
        }
        if let Some(c) = &plan.shift {
            let z = self.var(0);
            let cs = self.greedy(&scaled_terms(c, &Int::ONE), true);
            let x = self.sum(&[(false, z), (!cs.0, cs.1)]);
            let x = self.resolve(x);
            self.subst.insert(0, x);
        }
        for (v, id) in atoms {
            self.subst.insert(v, id);
        }
        let mut budget = REDUCE_STEPS;
        let items = self.atom_outputs(outputs, plan, &mut budget);
        self.subst.clear();
        let items = items?;
        Some(self.outputs(items))
    }

    fn atom_outputs(&mut self, outputs: &[RatFunc], plan: &AtomPlan, budget: &mut usize) -> Option<Vec<Id>> {
        let mut items = Vec::with_capacity(outputs.len());
        for r in outputs {
            if r.is_zero() {
                items.push(self.konst(GRat::zero()));
                continue;
            }
            let num = self.reduced(r.num(), r.scale(), plan, budget)?;
            let mut den: Option<Signed> = None;
            for (f, e) in r.den_factors() {
                let fs = self.reduced(f.poly(), &Int::ONE, plan, budget)?;
                let fx = self.resolve(fs);
                let p = self.pow(fx, *e);
                den = Some(match den {
                    None => (false, p),
                    Some((n, a)) => (n, self.mul(a, p)),
                });
            }
            items.push(match den {
                None => self.resolve(num),
                Some(d) => {
                    let q = self.add_node(Op::Div([num.1, d.1]));
                    self.resolve((num.0 != d.0, q))
                }
            });
        }
        Some(items)
    }
}

/// Most reduction steps for all outputs of one atom plan, and most terms of
/// a polynomial during a reduction: beyond them the plan is dropped.
const REDUCE_STEPS: usize = 20_000;
const REDUCE_TERMS: usize = 4_000;

/// The relation `P − Y = 0` between a named polynomial `P` and its atom `Y`,
/// used to rewrite monomials divisible by the leading monomial of `P`.
#[derive(Clone, Debug)]
pub(crate) struct Relation {
    lead: Mono,
    lead_coeff: GInt,
    rel: Poly,
    atom: usize,
}

impl Relation {
    /// The relation of `p` (in the variable the reduction uses) with atom variable `atom`;
    /// `None` for a constant `p`, which gives no rewriting.
    pub(crate) fn new(p: &Poly, atom: usize) -> Option<Relation> {
        let (lead, lead_coeff) = p.lead().cloned()?;
        if lead.is_one() || atom >= MAX_VARS {
            return None;
        }
        // Atom variables come after every variable of p, so the lead of P − Y is that of P.
        let rel = p.sub(&Poly::var(atom));
        Some(Relation { lead, lead_coeff, rel, atom })
    }
}

/// A seed over atoms: named polynomials standing for new variables
/// `base, base+1, …`, an optional shift of variable 0 and the relations in
/// the order they are tried.
#[derive(Clone, Debug)]
pub(crate) struct AtomPlan {
    /// The named polynomials, in the original variable; atom `i` is variable `base + i`.
    pub atoms: Vec<Poly>,
    /// The first atom variable (the field's number of variables).
    pub base: usize,
    /// Variable 0 = x + shift, the reduction and the forms in x.
    pub shift: Option<Poly>,
    /// The relations (in x when shifted), in the order a monomial tries them.
    pub relations: Vec<Relation>,
    /// Greedy Horner with variable 0 first.
    pub z_first: bool,
}

/// `p` with variable 0 replaced by `x + c` (x again variable 0, `c` free of it), by Horner.
pub(crate) fn shift_var0(p: &Poly, c: &Poly) -> Poly {
    let x = Poly::var(0).add(c);
    p.to_univariate(0).iter().rev().fold(Poly::zero(), |acc, k| acc.mul(&x).add(k))
}

/// The normal form of `n` modulo the relations: repeatedly, the leading term
/// is rewritten with the first relation whose leading monomial divides it
/// (when its coefficient divides exactly), else it is final. Atom variables
/// are last in the monomial order, so each step lowers the leading monomial
/// and the loop ends; `budget` bounds the steps and `REDUCE_TERMS` the size.
pub(crate) fn reduce_by(n: &Poly, relations: &[Relation], budget: &mut usize) -> Option<Poly> {
    let mut done: Vec<(Mono, GInt)> = Vec::new();
    let mut rest = n.clone();
    while let Some((m, c)) = rest.lead().cloned() {
        *budget = budget.checked_sub(1)?;
        let step = relations.iter().find_map(|r| Some((r, r.lead.div_of(m)?, c.div_exact(&r.lead_coeff)?)));
        let sub = match step {
            Some((r, t, q)) => {
                let qt = Poly::term(t, q);
                if !qt.fits_mul(&r.rel) {
                    return None;
                }
                qt.mul(&r.rel)
            }
            None => {
                done.push((m, c.clone()));
                Poly::term(m, c)
            }
        };
        rest = rest.sub(&sub);
        if rest.len() + done.len() > REDUCE_TERMS {
            return None;
        }
    }
    Some(Poly::from_terms(done))
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

/// At most this many named polynomials become atoms (the first in the file's order).
const MAX_ATOMS: usize = 4;
/// Every subset of the atoms in every order is tried up to this many atoms, else only all in the default order.
const MAX_PERMUTED: usize = 3;

/// The atom plans tried for the named polynomials `named` (in the field's
/// variables, the first `base` of them): the relations of every subset of
/// the atoms in every order when there are few (the default first: all
/// atoms, the leading monomial of highest degree in variable 0, then of
/// highest total degree, first), each without a shift and
/// with each shift to the vertex −b/(2a) of a named polynomial quadratic in
/// variable 0 with a constant leading coefficient a (when the quotient is
/// exact), each with greedy Horner taking variable 0 first or not.
pub(crate) fn atom_plans(named: &[Poly], base: usize) -> Vec<AtomPlan> {
    let mut atoms: Vec<Poly> = Vec::new();
    for p in named {
        let (p, _) = p.normalize_sign();
        if p.degree(0) >= 1
            && (base..MAX_VARS).all(|v| !p.uses_var(v))
            && !atoms.contains(&p)
            && atoms.len() < MAX_ATOMS
            && base + atoms.len() < MAX_VARS
        {
            atoms.push(p);
        }
    }
    if atoms.is_empty() {
        return Vec::new();
    }
    let mut shifts: Vec<Option<Poly>> = vec![None];
    for p in &atoms {
        let u = p.to_univariate(0);
        let Some(a) = u.get(2).filter(|_| u.len() == 3).and_then(|a| a.as_constant()) else { continue };
        let Some(c) = u[1].neg().div_exact(&Poly::constant(a.mul(&GInt::real(Int::from(2i64))))) else { continue };
        if !c.is_zero() && !shifts.contains(&Some(c.clone())) {
            shifts.push(Some(c));
        }
    }
    let mut default: Vec<usize> = (0..atoms.len()).collect();
    default.sort_by_key(|&i| {
        let lead = atoms[i].lead().map(|(m, _)| *m).unwrap_or(Mono::ONE);
        (std::cmp::Reverse(lead.exp(0)), std::cmp::Reverse(lead.total_degree()), i)
    });
    let orders = if atoms.len() <= MAX_PERMUTED {
        let mut all = arrangements(&default);
        all.sort_by_key(|o| std::cmp::Reverse(o.len()));
        all
    } else {
        vec![default]
    };
    let mut plans = Vec::new();
    for shift in &shifts {
        let moved: Vec<Poly> = atoms.iter().map(|p| shift.as_ref().map_or_else(|| p.clone(), |c| shift_var0(p, c))).collect();
        for order in &orders {
            let relations: Vec<Relation> = order.iter().filter_map(|&i| Relation::new(&moved[i], base + i)).collect();
            for z_first in [true, false] {
                plans.push(AtomPlan { atoms: atoms.clone(), base, shift: shift.clone(), relations: relations.clone(), z_first });
            }
        }
    }
    plans
}

/// Every ordering of every nonempty subset of `items`, in lexicographic
/// order of positions (so the orderings of all of `items` begin with `items` itself).
fn arrangements(items: &[usize]) -> Vec<Vec<usize>> {
    let mut out = Vec::new();
    for (j, &first) in items.iter().enumerate() {
        let rest: Vec<usize> = items.iter().enumerate().filter(|(i, _)| *i != j).map(|(_, &x)| x).collect();
        out.push(vec![first]);
        for mut tail in arrangements(&rest) {
            tail.insert(0, first);
            out.push(tail);
        }
    }
    out
}
