//! The e-graph side of choosing an evaluation form: the expression language
//! (sums, differences, products, quotients, negation, integer powers and a
//! list of outputs over variables and exact constants), its rewrite rules,
//! the floating-point cost model and the bounded run of egg's `Runner`.

use super::{Cost, SearchLimits};
use egg::{define_language, rewrite, CostFunction, EGraph, Extractor, Id, Language, RecExpr, Rewrite, Runner, StopReason};
use std::fmt;
use std::str::FromStr;

/// A leaf of an expression: variable `i` of the field, constant `k` of the
/// constant table, or a non-negative integer exponent (only as the second
/// child of `pow`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub(crate) enum Leaf {
    Var(usize),
    Const(usize),
    Exp(u32),
}

impl fmt::Display for Leaf {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Leaf::Var(i) => write!(f, "x{i}"),
            Leaf::Const(k) => write!(f, "k{k}"),
            Leaf::Exp(e) => write!(f, "e{e}"),
        }
    }
}

impl FromStr for Leaf {
    type Err = String;
    fn from_str(s: &str) -> Result<Leaf, String> {
        let bad = || format!("not a leaf: {s}");
        let (head, rest) = s.split_at(s.char_indices().nth(1).map(|(i, _)| i).ok_or_else(bad)?);
        match head {
            "x" => rest.parse().map(Leaf::Var).map_err(|_| bad()),
            "k" => rest.parse().map(Leaf::Const).map_err(|_| bad()),
            "e" => rest.parse().map(Leaf::Exp).map_err(|_| bad()),
            _ => Err(bad()),
        }
    }
}

define_language! {
    /// The evaluation language.
    pub(crate) enum Op {
        "+" = Add([Id; 2]),
        "-" = Sub([Id; 2]),
        "*" = Mul([Id; 2]),
        "/" = Div([Id; 2]),
        "neg" = Neg([Id; 1]),
        "pow" = Pow([Id; 2]),
        "list" = List(Box<[Id]>),
        Leaf(Leaf),
    }
}

/// The rules: commutativity, one direction of associativity (enough, with
/// commutativity, to regroup a sum or product without a mirror rule that
/// would double the e-graph each iteration), and distribution/factoring of a
/// product over a sum or difference in both directions.
fn rules() -> Vec<Rewrite<Op, ()>> {
    vec![
        rewrite!("comm-add"; "(+ ?a ?b)" => "(+ ?b ?a)"),
        rewrite!("comm-mul"; "(* ?a ?b)" => "(* ?b ?a)"),
        rewrite!("assoc-add"; "(+ ?a (+ ?b ?c))" => "(+ (+ ?a ?b) ?c)"),
        rewrite!("assoc-mul"; "(* ?a (* ?b ?c))" => "(* (* ?a ?b) ?c)"),
        rewrite!("add-sub"; "(+ ?a (- ?b ?c))" => "(- (+ ?a ?b) ?c)"),
        rewrite!("factor-add"; "(+ (* ?a ?b) (* ?a ?c))" => "(* ?a (+ ?b ?c))"),
        rewrite!("factor-sub"; "(- (* ?a ?b) (* ?a ?c))" => "(* ?a (- ?b ?c))"),
        rewrite!("distribute-add"; "(* ?a (+ ?b ?c))" => "(+ (* ?a ?b) (* ?a ?c))"),
        rewrite!("distribute-sub"; "(* ?a (- ?b ?c))" => "(- (* ?a ?b) (* ?a ?c))"),
    ]
}

/// Number of multiplications of x^e by repeated squaring.
pub(crate) fn squaring_muls(e: u32) -> u64 {
    if e <= 1 {
        return 0;
    }
    (31 - e.leading_zeros() + e.count_ones() - 1) as u64
}

/// The cost model (in real floating-point operations) on e-nodes; a
/// multiplication is cheap when one side is a real constant.
struct Flops<'a> {
    egraph: &'a EGraph<Op, ()>,
    real_const: &'a [bool],
}

impl Flops<'_> {
    fn is_real_const(&self, id: Id) -> bool {
        self.egraph[id].nodes.iter().any(|n| matches!(n, Op::Leaf(Leaf::Const(k)) if self.real_const[*k]))
    }
    fn exponent(&self, id: Id) -> u32 {
        self.egraph[id].nodes.iter().find_map(|n| if let Op::Leaf(Leaf::Exp(e)) = n { Some(*e) } else { None }).unwrap_or(1)
    }
}

impl CostFunction<Op> for Flops<'_> {
    type Cost = u64;
    fn cost<C>(&mut self, enode: &Op, mut costs: C) -> u64
    where
        C: FnMut(Id) -> u64,
    {
        let own = match enode {
            Op::Add(_) | Op::Sub(_) | Op::Neg(_) => Cost::ADD,
            Op::Mul([a, b]) => {
                if self.is_real_const(*a) || self.is_real_const(*b) {
                    Cost::SCALE
                } else {
                    Cost::MUL
                }
            }
            Op::Div(_) => Cost::DIV,
            Op::Pow([_, e]) => Cost::MUL * squaring_muls(self.exponent(*e)),
            Op::List(_) | Op::Leaf(_) => 0,
        };
        enode.fold(own, |s, id| s.saturating_add(costs(id)))
    }
}

/// What one bounded e-graph run did.
pub(crate) struct Run {
    pub best: RecExpr<Op>,
    pub stop: String,
    pub nodes: usize,
    pub iterations: usize,
}

/// Puts the seeds (each a list of the same outputs) into one e-class, runs
/// the rules within the limits and extracts the cheapest tree.
pub(crate) fn run(seeds: &[RecExpr<Op>], real_const: &[bool], limits: &SearchLimits) -> Run {
    let mut egraph: EGraph<Op, ()> = EGraph::default();
    let roots: Vec<Id> = seeds.iter().map(|s| egraph.add_expr(s)).collect();
    for r in &roots[1..] {
        egraph.union(roots[0], *r);
    }
    egraph.rebuild();
    let runner = Runner::default()
        .with_egraph(egraph)
        .with_node_limit(limits.nodes)
        .with_iter_limit(limits.iterations)
        .with_time_limit(limits.time)
        .run(&rules());
    let stop = match &runner.stop_reason {
        Some(StopReason::Saturated) => "saturated".to_string(),
        Some(StopReason::IterationLimit(n)) => format!("iteration limit ({n})"),
        Some(StopReason::NodeLimit(n)) => format!("node limit ({n})"),
        Some(StopReason::TimeLimit(t)) => format!("time limit ({t} s)"),
        Some(StopReason::Other(s)) => s.clone(),
        None => "not run".to_string(),
    };
    let root = runner.egraph.find(roots[0]);
    let cost = Flops { egraph: &runner.egraph, real_const };
    let extractor = Extractor::new(&runner.egraph, cost);
    let (_, best) = extractor.find_best(root);
    Run { best, stop, nodes: runner.egraph.total_number_of_nodes(), iterations: runner.iterations.len() }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn leaves_round_trip_through_text() {
        for l in [Leaf::Var(3), Leaf::Const(12), Leaf::Exp(4)] {
            assert_eq!(l.to_string().parse::<Leaf>().unwrap(), l);
        }
        assert!("q1".parse::<Leaf>().is_err());
    }

    #[test]
    fn squarings() {
        // x^2: 1, x^3: 2, x^4: 2, x^5: 3, x^8: 3 (binary powering, common practice).
        assert_eq!([1, 2, 3, 4, 5, 8].map(squaring_muls), [0, 1, 2, 2, 3, 3]);
    }
}
