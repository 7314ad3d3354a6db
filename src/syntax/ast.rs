//! The abstract syntax tree of the input language: what the parser produces
//! and the lowering stage consumes. It knows nothing of algebra; numbers stay
//! as their literal text so that no precision is lost before the exact layer.

/// A half-open byte range `start..end` into the source text.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub struct Span {
    /// Offset of the first byte.
    pub start: usize,
    /// Offset one past the last byte.
    pub end: usize,
}

impl Span {
    /// A span from `start` to `end`.
    pub fn new(start: usize, end: usize) -> Span {
        Span { start, end }
    }
    /// The smallest span covering both.
    pub fn to(self, other: Span) -> Span {
        Span::new(self.start.min(other.start), self.end.max(other.end))
    }
}

/// A name with where it was written.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Ident {
    /// The name as written.
    pub name: String,
    /// Where it was written.
    pub span: Span,
}

/// A whole input file.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Program {
    /// The statements in source order.
    pub statements: Vec<Statement>,
}

/// One statement of the input language.
#[derive(Clone, Debug, PartialEq)]
pub enum Statement {
    /// `var NAME`: the independent variable.
    Var(Ident),
    /// `param A, B, ...`: symbolic parameters.
    Param(Vec<Ident>),
    /// `let NAME = EXPR`.
    Let {
        /// The name being defined.
        name: Ident,
        /// Its value.
        value: Expr,
    },
    /// `unknown NAME`: names the unknown function explicitly.
    Unknown(Ident),
    /// `dX/dV = EXPR`: a second coordinate related to the variable, written
    /// either way round (`drs/dr = 1/f` or `dr/drs = f`); derivatives with
    /// respect to it are then read through the chain rule.
    Coordinate {
        /// The name above (X in dX/dV).
        top: Ident,
        /// The name below (V in dX/dV).
        bottom: Ident,
        /// dX/dV.
        rate: Expr,
        /// The whole statement.
        span: Span,
    },
    /// `ode LHS = RHS`.
    Ode {
        /// Left-hand side.
        lhs: Expr,
        /// Right-hand side.
        rhs: Expr,
        /// The whole statement, keyword included.
        span: Span,
    },
}

/// An expression with its source span.
#[derive(Clone, Debug, PartialEq)]
pub struct Expr {
    /// What the expression is.
    pub kind: ExprKind,
    /// Where it was written.
    pub span: Span,
}

/// Binary operators.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BinOp {
    /// `+`
    Add,
    /// `-`
    Sub,
    /// `*`
    Mul,
    /// `/`
    Div,
    /// `^`
    Pow,
}

/// Transcendental functions of one argument, read so that a change of
/// variable can make them rational.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Func {
    /// `exp`
    Exp,
    /// `sinh`
    Sinh,
    /// `cosh`
    Cosh,
    /// `tanh`
    Tanh,
    /// `sech`
    Sech,
    /// `sin`
    Sin,
    /// `cos`
    Cos,
    /// `tan`
    Tan,
    /// `coth`
    Coth,
    /// `csch`
    Csch,
    /// `cot`
    Cot,
    /// `csc`
    Csc,
    /// `sec`
    Sec,
}

impl Func {
    /// The function a name stands for.
    pub fn of(name: &str) -> Option<Func> {
        Some(match name {
            "exp" => Func::Exp,
            "sinh" => Func::Sinh,
            "cosh" => Func::Cosh,
            "tanh" => Func::Tanh,
            "sech" => Func::Sech,
            "sin" => Func::Sin,
            "cos" => Func::Cos,
            "tan" => Func::Tan,
            "coth" => Func::Coth,
            "csch" => Func::Csch,
            "cot" => Func::Cot,
            "csc" => Func::Csc,
            "sec" => Func::Sec,
            _ => return None,
        })
    }
    /// The name as written in the input language.
    pub fn name(self) -> &'static str {
        match self {
            Func::Exp => "exp",
            Func::Sinh => "sinh",
            Func::Cosh => "cosh",
            Func::Tanh => "tanh",
            Func::Sech => "sech",
            Func::Sin => "sin",
            Func::Cos => "cos",
            Func::Tan => "tan",
            Func::Coth => "coth",
            Func::Csch => "csch",
            Func::Cot => "cot",
            Func::Csc => "csc",
            Func::Sec => "sec",
        }
    }
    /// True for sin, cos, tan and their reciprocals.
    pub fn is_trigonometric(self) -> bool {
        matches!(self, Func::Sin | Func::Cos | Func::Tan | Func::Cot | Func::Csc | Func::Sec)
    }
}

/// The kinds of expression.
#[derive(Clone, Debug, PartialEq)]
pub enum ExprKind {
    /// A decimal literal exactly as written, e.g. `"0.25"` or `"1e-3"`.
    Number(String),
    /// The imaginary unit `I`.
    Imag,
    /// A name: the variable, a parameter, a `let` name or the unknown.
    Name(String),
    /// Unary minus.
    Neg(Box<Expr>),
    /// A binary operation.
    Binary(BinOp, Box<Expr>, Box<Expr>),
    /// `e'`, `e''`, ...: the derivative of the given order with respect to the variable.
    Prime(Box<Expr>, u32),
    /// `sqrt(e)`.
    Sqrt(Box<Expr>),
    /// `exp(e)`, `cosh(e)`, …: a transcendental function of a linear argument.
    Call(Func, Box<Expr>),
    /// A Leibniz derivative: `dR/dr`, `d^2R/dr^2` (the body is the name) or
    /// `d/dr(e)`, `d^2/dr^2(e)` (the body is the bracketed expression), of the
    /// given order with respect to the name `wrt`.
    Derivative {
        /// What is differentiated.
        body: Box<Expr>,
        /// The name after the lower `d`.
        wrt: Ident,
        /// How many times.
        order: u32,
    },
}
