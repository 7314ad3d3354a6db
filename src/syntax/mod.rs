//! The first stage of the pipeline: input text to abstract syntax tree. This
//! module knows the grammar of `grammar/canonode.ebnf` and nothing of algebra;
//! it checks only the form of the text, leaving the meaning of names and the
//! structure of a file (one `var`, one `ode`, ...) to the lowering stage.
//! Every failure is an [`Error`] of kind [`ErrorKind::Syntax`] or
//! [`ErrorKind::Limit`] carrying a byte span into the text; no input makes it
//! panic, recurse without bound or allocate more than a small multiple of the
//! input's size.

mod ast;
mod latex;
mod parser;

pub use ast::*;
pub use latex::GREEK_LETTERS;

use crate::error::{Error, ErrorKind, Result};

/// Bounds on what the parser accepts (defaults: max_bytes 1_000_000, max_depth 2_000, max_statements 10_000, max_number_len 2_000).
///
/// `max_depth` bounds two things: how many parentheses, signs and powers may
/// be open at once while reading, and the height of every expression tree the
/// parser returns. The second keeps the recursive walks of later stages (and
/// the tree's own drop) within the stack, so a very long chain such as
/// `a + b + c + ...` also counts one level per operator.
#[derive(Clone, Debug)]
pub struct ParseLimits {
    /// The longest input accepted, in bytes.
    pub max_bytes: usize,
    /// The deepest nesting accepted (see the type's documentation).
    pub max_depth: usize,
    /// The most non-empty statements a program may have.
    pub max_statements: usize,
    /// The longest number literal accepted, in bytes.
    pub max_number_len: usize,
}

impl Default for ParseLimits {
    fn default() -> ParseLimits {
        ParseLimits { max_bytes: 1_000_000, max_depth: 2_000, max_statements: 10_000, max_number_len: 2_000 }
    }
}

/// Parses a whole input file into its statements.
pub fn parse_program(src: &str, limits: &ParseLimits) -> Result<Program> {
    check_size(src, limits)?;
    parser::Parser::new(src, limits).program()
}

/// A single expression (used for command-line values such as a change of variable).
pub fn parse_expr(src: &str, limits: &ParseLimits) -> Result<Expr> {
    check_size(src, limits)?;
    parser::Parser::new(src, limits).lone_expr()
}

/// A bare equation `LHS = RHS` (an optional leading `ode` keyword is allowed) for inline use; returns (lhs, rhs, span of whole).
pub fn parse_equation(src: &str, limits: &ParseLimits) -> Result<(Expr, Expr, Span)> {
    check_size(src, limits)?;
    parser::Parser::new(src, limits).lone_equation()
}

/// Reads LaTeX mathematics (the subset of `grammar/latex.md`) into a
/// program: a `var` statement for the variable the derivatives name, a `let`
/// for each definition (ordered so that each uses only earlier ones) and the
/// `ode`. Other names are left undeclared, to be taken as parameters.
pub fn parse_latex(src: &str, limits: &ParseLimits) -> Result<Program> {
    check_size(src, limits)?;
    latex::parse(src, limits)
}

/// The name a LaTeX symbol reads as in an equation (`\ell` → `l`,
/// `r_{+}` → `r_plus`); `None` when the text is not one name.
pub fn latex_name(text: &str) -> Option<String> {
    latex::name_of(text)
}

/// Rejects an input longer than `limits.max_bytes` before any work is done,
/// pointing at the first character past the limit.
fn check_size(src: &str, limits: &ParseLimits) -> Result<()> {
    if src.len() <= limits.max_bytes {
        return Ok(());
    }
    let mut start = limits.max_bytes;
    while !src.is_char_boundary(start) {
        start -= 1;
    }
    let width = src[start..].chars().next().map_or(0, char::len_utf8);
    Err(Error::new(ErrorKind::Limit, format!("input is {} bytes long, more than the limit of {} bytes", src.len(), limits.max_bytes))
        .at(Span::new(start, start + width)))
}
