//! The `present` stage: choosing how an exact value is written out. For
//! evaluation code, a list of rational functions in one [`Field`] becomes a
//! straight-line [`Program`] (each shared subexpression computed once),
//! chosen by e-graph extraction (egg) among rewrites of several starting
//! forms, under a floating-point cost model ([`Cost`]).
//!
//! The starting forms are plain Horner in the variable, a greedy
//! multivariate Horner scheme that pulls out common constants and monomials
//! and keeps the denominator factored as the canonical [`RatFunc`] stores it
//! (`num / (scale · ∏ fᵢ^eᵢ)`), Horner in the denominator's main factor,
//! and a form over the user's named polynomials (a file's `let`s) as atoms,
//! each computed once, the outputs reduced modulo them; the rules commute,
//! regroup, distribute and factor. Whatever is chosen is converted back into exact rational
//! functions and compared with the canonical forms before anyone sees it: a
//! difference is an internal error, never output.

mod egraph;
mod seed;

use crate::algebra::{Field, GRat, RatFunc};
use crate::error::{Error, ErrorKind, Result};
use egraph::{Leaf, Op};
use seed::{Builder, Consts, Shape};
use std::collections::HashMap;
use std::time::Duration;

/// The cost model, in real floating-point operations per complex operation
/// (the schoolbook formulas; a compiler may do better or worse).
pub struct Cost;

impl Cost {
    /// A complex addition, subtraction or negation: 2 real additions.
    pub const ADD: u64 = 2;
    /// A complex product by a real constant: 2 real multiplications.
    pub const SCALE: u64 = 2;
    /// A complex product: 4 real multiplications and 2 additions.
    pub const MUL: u64 = 6;
    /// A complex quotient a/b = a·conj(b)/|b|²: a product (6), |b|² (3) and 2 real divisions.
    pub const DIV: u64 = 11;
}

/// Bounds on one e-graph run (the run reports which one stopped it).
#[derive(Clone, Debug)]
pub struct SearchLimits {
    /// Most e-nodes.
    pub nodes: usize,
    /// Most rewrite iterations.
    pub iterations: usize,
    /// Wall-clock bound; set well above what the node and iteration limits
    /// allow so that output does not depend on the machine's speed.
    pub time: Duration,
}

impl Default for SearchLimits {
    fn default() -> SearchLimits {
        SearchLimits { nodes: 12_000, iterations: 12, time: Duration::from_secs(20) }
    }
}

/// One step of a straight-line program; operands are indices of earlier steps.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub enum Step {
    /// Variable `i` of the field (0 is the independent variable).
    Var(usize),
    /// Constant `k` of [`Program::consts`].
    Const(usize),
    /// Sum.
    Add(usize, usize),
    /// Difference.
    Sub(usize, usize),
    /// Product.
    Mul(usize, usize),
    /// Quotient.
    Div(usize, usize),
    /// Negation.
    Neg(usize),
}

/// A straight-line evaluation program over exact constants: every step is
/// computed once, in order; `outputs` name the steps that are the results.
#[derive(Clone, Debug)]
pub struct Program {
    /// The steps, each using only earlier ones.
    pub steps: Vec<Step>,
    /// The exact constants (Gaussian rationals).
    pub consts: Vec<GRat>,
    /// The result steps, one per output.
    pub outputs: Vec<usize>,
}

/// Operation counts of a program. Subtractions and negations count as
/// additions; every product counts as a multiplication (of which `scale`
/// are by a real constant).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct OpCount {
    /// Multiplications.
    pub mul: u64,
    /// Of the multiplications, those by a real constant.
    pub scale: u64,
    /// Additions, subtractions and negations.
    pub add: u64,
    /// Divisions.
    pub div: u64,
}

impl OpCount {
    /// All operations.
    pub fn total(&self) -> u64 {
        self.mul + self.add + self.div
    }
    /// The weighted cost in real floating-point operations ([`Cost`]).
    pub fn flops(&self) -> u64 {
        (self.mul - self.scale) * Cost::MUL + self.scale * Cost::SCALE + self.add * Cost::ADD + self.div * Cost::DIV
    }
    fn plus(self, o: OpCount) -> OpCount {
        OpCount { mul: self.mul + o.mul, scale: self.scale + o.scale, add: self.add + o.add, div: self.div + o.div }
    }
}

impl Program {
    fn step_count(&self, s: &Step) -> OpCount {
        let real = |i: usize| matches!(self.steps[i], Step::Const(k) if self.consts[k].im.is_zero());
        match s {
            Step::Var(_) | Step::Const(_) => OpCount::default(),
            Step::Add(..) | Step::Sub(..) | Step::Neg(_) => OpCount { add: 1, ..OpCount::default() },
            Step::Mul(a, b) => OpCount { mul: 1, scale: u64::from(real(*a) || real(*b)), ..OpCount::default() },
            Step::Div(..) => OpCount { div: 1, ..OpCount::default() },
        }
    }

    fn operands(s: &Step) -> Vec<usize> {
        match s {
            Step::Var(_) | Step::Const(_) => vec![],
            Step::Add(a, b) | Step::Sub(a, b) | Step::Mul(a, b) | Step::Div(a, b) => vec![*a, *b],
            Step::Neg(a) => vec![*a],
        }
    }

    /// The operations of the program as emitted: each step once.
    pub fn dag_count(&self) -> OpCount {
        let mut live = vec![false; self.steps.len()];
        for &o in &self.outputs {
            live[o] = true;
        }
        let mut total = OpCount::default();
        for i in (0..self.steps.len()).rev() {
            if live[i] {
                total = total.plus(self.step_count(&self.steps[i]));
                for j in Program::operands(&self.steps[i]) {
                    live[j] = true;
                }
            }
        }
        total
    }

    /// The operations when nothing is shared: each use of a step recomputes it.
    pub fn tree_count(&self) -> OpCount {
        let mut below: Vec<OpCount> = Vec::with_capacity(self.steps.len());
        for s in &self.steps {
            let c = Program::operands(s).into_iter().fold(self.step_count(s), |acc, j| acc.plus(below[j]));
            below.push(c);
        }
        self.outputs.iter().fold(OpCount::default(), |acc, &o| acc.plus(below[o]))
    }

    /// Evaluates the program exactly in `k`: the rational function of every output.
    pub fn to_ratfuncs(&self, k: &Field) -> Result<Vec<RatFunc>> {
        let mut vals: Vec<RatFunc> = Vec::with_capacity(self.steps.len());
        for s in &self.steps {
            let v = match s {
                Step::Var(i) => k.var(*i),
                Step::Const(c) => RatFunc::constant(&self.consts[*c]),
                Step::Add(a, b) => k.add(&vals[*a], &vals[*b])?,
                Step::Sub(a, b) => k.sub(&vals[*a], &vals[*b])?,
                Step::Mul(a, b) => k.mul(&vals[*a], &vals[*b])?,
                Step::Div(a, b) => k.div(&vals[*a], &vals[*b])?,
                Step::Neg(a) => k.neg(&vals[*a]),
            };
            vals.push(v);
        }
        Ok(self.outputs.iter().map(|&o| vals[o].clone()).collect())
    }

    /// Number of uses of each step by later steps and by the outputs.
    pub fn uses(&self) -> Vec<usize> {
        let mut n = vec![0; self.steps.len()];
        for s in &self.steps {
            for j in Program::operands(s) {
                n[j] += 1;
            }
        }
        for &o in &self.outputs {
            n[o] += 1;
        }
        n
    }

    /// Lowers an expression of the e-graph language: powers become
    /// repeated squaring, equal steps are merged.
    fn from_expr(expr: &egg::RecExpr<Op>, consts: &[GRat]) -> Program {
        let mut p = Program { steps: Vec::new(), consts: consts.to_vec(), outputs: Vec::new() };
        let mut memo: HashMap<Step, usize> = HashMap::new();
        let mut push = |p: &mut Program, s: Step| -> usize {
            if let Some(i) = memo.get(&s) {
                return *i;
            }
            p.steps.push(s.clone());
            memo.insert(s, p.steps.len() - 1);
            p.steps.len() - 1
        };
        fn power(p: &mut Program, push: &mut dyn FnMut(&mut Program, Step) -> usize, x: usize, e: u32) -> usize {
            match e {
                0 | 1 => x,
                e if e % 2 == 0 => {
                    let h = power(p, push, x, e / 2);
                    push(p, Step::Mul(h, h))
                }
                e => {
                    let h = power(p, push, x, e - 1);
                    push(p, Step::Mul(h, x))
                }
            }
        }
        let nodes = expr.as_ref();
        let mut at: Vec<usize> = Vec::with_capacity(nodes.len());
        let exp_of = |id: egg::Id| match nodes[usize::from(id)] {
            Op::Leaf(Leaf::Exp(e)) => e,
            _ => 1,
        };
        for node in nodes {
            let idx = |id: &egg::Id| at[usize::from(*id)];
            let i = match node {
                Op::Leaf(Leaf::Var(v)) => push(&mut p, Step::Var(*v)),
                Op::Leaf(Leaf::Const(c)) => push(&mut p, Step::Const(*c)),
                Op::Leaf(Leaf::Exp(_)) => usize::MAX,
                Op::Add([a, b]) => push(&mut p, Step::Add(idx(a), idx(b))),
                Op::Sub([a, b]) => push(&mut p, Step::Sub(idx(a), idx(b))),
                Op::Mul([a, b]) => push(&mut p, Step::Mul(idx(a), idx(b))),
                Op::Div([a, b]) => push(&mut p, Step::Div(idx(a), idx(b))),
                Op::Neg([a]) => push(&mut p, Step::Neg(idx(a))),
                Op::Pow([x, e]) => {
                    let x = idx(x);
                    power(&mut p, &mut push, x, exp_of(*e))
                }
                Op::List(items) => {
                    p.outputs = items.iter().map(idx).collect();
                    usize::MAX
                }
            };
            at.push(i);
        }
        p
    }
}

/// The chosen program with its evidence.
#[derive(Clone, Debug)]
pub struct Choice {
    /// The program to emit (verified exactly).
    pub program: Program,
    /// Its operations, each step once.
    pub emitted: OpCount,
    /// The naive form: numerator and denominator expanded into monomials in
    /// the variable and the parameters, each monomial computed by repeated
    /// multiplication, nothing shared, one division.
    pub naive: OpCount,
    /// Plain Horner: Horner in the variable over the expanded numerator and
    /// expanded denominator, coefficients expanded in the parameters with
    /// monomials as in the naive form, nothing shared, one division.
    pub horner: OpCount,
    /// Which candidate won: the e-graph's extraction or one of its seeds
    /// (the extraction minimises a tree cost, so a seed whose shared
    /// subexpressions make it cheaper as a DAG can win).
    pub origin: String,
    /// Why the e-graph run stopped.
    pub stop: String,
    /// E-nodes at the end of the run.
    pub egraph_nodes: usize,
    /// Rewrite iterations run.
    pub iterations: usize,
}

/// Chooses an evaluation program for `outputs` (rational functions in `k`)
/// and checks it exactly against them. `named` are the user's named
/// subexpressions (a file's `let`s, in `k`): the numerators that involve the
/// variable may become atoms, each computed once, over which the outputs
/// are rewritten (an empty list skips that seed).
pub fn choose(k: &Field, outputs: &[RatFunc], named: &[RatFunc], limits: &SearchLimits) -> Result<Choice> {
    let mut consts = Consts::default();
    let build = |shape: Shape, consts: &mut Consts| {
        let mut b = Builder::new(consts);
        let items: Vec<egg::Id> = outputs.iter().map(|r| b.ratfunc(r, shape)).collect();
        b.outputs(items);
        b.expr
    };
    let naive = build(Shape::Naive, &mut consts);
    let horner = build(Shape::PlainHorner, &mut consts);
    let greedy_z = build(Shape::Greedy(true), &mut consts);
    let greedy = build(Shape::Greedy(false), &mut consts);
    let adic = build(Shape::Adic, &mut consts);
    let atoms = over_atoms(outputs, named, k.names().len(), &mut consts);
    let real: Vec<bool> = consts.list.iter().map(|c| c.im.is_zero()).collect();
    let mut seeds = vec![adic.clone(), greedy_z.clone(), greedy.clone(), horner.clone()];
    seeds.extend(atoms.iter().cloned());
    let run = egraph::run(&seeds, &real, limits);
    let lowered = |e: &egg::RecExpr<Op>| Program::from_expr(e, &consts.list);
    let mut candidates = vec![
        ("e-graph extraction", lowered(&run.best)),
        ("Horner in the denominator's factor", lowered(&adic)),
        ("greedy Horner, variable first", lowered(&greedy_z)),
        ("greedy Horner", lowered(&greedy)),
        ("plain Horner", lowered(&horner)),
    ];
    if let Some(a) = &atoms {
        candidates.push(("Horner over the named subexpressions", lowered(a)));
    }
    let (origin, program) = candidates
        .into_iter()
        .min_by_key(|(_, p)| {
            let c = p.dag_count();
            (c.flops(), c.total())
        })
        .expect("candidates");
    let back = program.to_ratfuncs(k)?;
    for (j, (got, want)) in back.iter().zip(outputs).enumerate() {
        if got != want {
            return Err(Error::new(ErrorKind::Internal, format!("the chosen evaluation form of output {j} differs from the canonical form")));
        }
    }
    if back.len() != outputs.len() {
        return Err(Error::new(ErrorKind::Internal, "the chosen evaluation form has the wrong number of outputs"));
    }
    Ok(Choice {
        emitted: program.dag_count(),
        naive: lowered(&naive).tree_count(),
        horner: lowered(&horner).tree_count(),
        program,
        origin: origin.to_string(),
        stop: run.stop,
        egraph_nodes: run.nodes,
        iterations: run.iterations,
    })
}

/// The cheapest (as a DAG) of the seeds over the named polynomials' atoms
/// ([`seed::atom_plans`]), or `None` when there are none or every plan ran
/// out of its reduction budget.
fn over_atoms(outputs: &[RatFunc], named: &[RatFunc], base: usize, consts: &mut Consts) -> Option<egg::RecExpr<Op>> {
    let polys: Vec<crate::algebra::Poly> = named.iter().map(|r| r.num().clone()).collect();
    let mut best: Option<((u64, u64), egg::RecExpr<Op>)> = None;
    for plan in seed::atom_plans(&polys, base) {
        let mut b = Builder::new(consts);
        if b.over_atoms(outputs, &plan).is_none() {
            continue;
        }
        let expr = b.expr;
        let c = Program::from_expr(&expr, &consts.list).dag_count();
        let key = (c.flops(), c.total());
        if best.as_ref().is_none_or(|(k, _)| key < *k) {
            best = Some((key, expr));
        }
    }
    best.map(|(_, e)| e)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::algebra::Poly;
    use crate::ode::{reduce, Input, ReduceOptions};

    #[test]
    fn chosen_form_is_exact_and_cheaper() {
        // DLMF 15.10.1 (Gauss), normal form.
        let src = "var z\nparam a, b, c\node z*(1 - z)*w'' + (c - (a + b + 1)*z)*w' - a*b*w = 0\n";
        let r = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
        let ch = choose(&r.field, std::slice::from_ref(&r.normal.q), &[], &SearchLimits::default()).unwrap();
        assert_eq!(ch.program.to_ratfuncs(&r.field).unwrap(), vec![r.normal.q.clone()]);
        assert!(ch.emitted.flops() <= ch.horner.flops() && ch.horner.flops() <= ch.naive.flops(), "{ch:?}");
    }

    #[test]
    fn teukolsky_form_over_its_lets_is_exact_and_cheap() {
        // Hand derivation from the sample's equation: p = (s+1)Δ'/Δ, q = (K² − 2is(r−M)K)/Δ² + (4isωr − λ)/Δ,
        // Q = q − p'/2 − p²/4 gives Q·Δ² = K² − 2is·x·K + (4isωr − λ − s − 1)·Δ + (1 − s²)·x² with x = r − M.
        let src = include_str!("../../samples/teukolsky_radial.ode");
        let red = reduce(&Input::Program(src), &ReduceOptions::default()).unwrap();
        let k = &red.field;
        let v = |i: usize| k.var(i);
        let c = |re: i64, im: i64| RatFunc::constant(&GRat { re: crate::algebra::Rat::int(re.into()), im: crate::algebra::Rat::int(im.into()) });
        let (r, mm, a, om, m, s, lam) = (v(0), v(1), v(2), v(3), v(4), v(5), v(6));
        let mul = |x: &RatFunc, y: &RatFunc| k.mul(x, y).unwrap();
        let add = |x: &RatFunc, y: &RatFunc| k.add(x, y).unwrap();
        let sub = |x: &RatFunc, y: &RatFunc| k.sub(x, y).unwrap();
        let delta = add(&sub(&mul(&r, &r), &mul(&c(2, 0), &mul(&mm, &r))), &mul(&a, &a));
        let kk = sub(&mul(&add(&mul(&r, &r), &mul(&a, &a)), &om), &mul(&a, &m));
        let x = sub(&r, &mm);
        let is2 = mul(&c(0, 2), &s);
        let mut n = sub(&mul(&kk, &kk), &mul(&is2, &mul(&x, &kk)));
        let coeff = sub(&sub(&sub(&mul(&mul(&c(2, 0), &is2), &mul(&om, &r)), &lam), &s), &c(1, 0));
        n = add(&n, &mul(&coeff, &delta));
        n = add(&n, &mul(&sub(&c(1, 0), &mul(&s, &s)), &mul(&x, &x)));
        assert_eq!(k.div(&n, &mul(&delta, &delta)).unwrap(), red.normal.q);
        // The lets as atoms: exact (checked inside `choose`) and over 3 times fewer operations than naive.
        let named: Vec<RatFunc> = red.ode.lets.iter().map(|(_, v)| v.clone()).collect();
        let ch = choose(k, std::slice::from_ref(&red.normal.q), &named, &SearchLimits::default()).unwrap();
        assert_eq!(ch.origin, "Horner over the named subexpressions");
        assert!(3 * ch.emitted.total() <= ch.naive.total(), "{ch:?}");
    }

    #[test]
    fn reduction_over_an_atom_expands_back() {
        // (z² + a)² + z over the atom Y = z² + a (variable 2 after z, a): Y² + z, built by the elimination steps.
        let z2a = Poly::var(0).mul(&Poly::var(0)).add(&Poly::var(1));
        let n = z2a.mul(&z2a).add(&Poly::var(0));
        let rel = seed::Relation::new(&z2a, 2).unwrap();
        let mut budget = 100;
        let got = seed::reduce_by(&n, &[rel], &mut budget).unwrap();
        assert_eq!(got, Poly::var(2).mul(&Poly::var(2)).add(&Poly::var(0)));
        // A budget too small drops the reduction instead of returning a partial one.
        let mut tiny = 1;
        assert!(seed::reduce_by(&n, &[seed::Relation::new(&z2a, 2).unwrap()], &mut tiny).is_none());
    }

    #[test]
    fn counts_share_steps_only_in_the_dag() {
        // (z·z) + (z·z): one product as a DAG, two as a tree.
        let p = Program { steps: vec![Step::Var(0), Step::Mul(0, 0), Step::Add(1, 1)], consts: vec![], outputs: vec![2] };
        assert_eq!(p.dag_count(), OpCount { mul: 1, scale: 0, add: 1, div: 0 });
        assert_eq!(p.tree_count(), OpCount { mul: 2, scale: 0, add: 1, div: 0 });
    }
}
