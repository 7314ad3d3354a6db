//! The parser of the input language (`grammar/canonode.ebnf`). A lexer built
//! from nom combinators cuts the text into tokens one at a time; statements are
//! read by plain recursive descent (they never nest); expressions are read by
//! an operator-precedence loop with explicit stacks, so that no input, however
//! deeply parenthesised, can grow the machine stack. Operator precedence lives
//! in [`binding`] alone.

use super::{BinOp, Expr, ExprKind, Func, Ident, ParseLimits, Program, Span, Statement};
use crate::error::RequestInput;
use crate::error::{Error, ErrorKind, Result};
use nom::branch::alt;
use nom::bytes::complete::{take_till, take_while};
use nom::character::complete::{char, digit0, digit1, one_of, satisfy};
use nom::combinator::{opt, recognize};
use nom::sequence::{pair, tuple};
use nom::IResult;

/// The longest piece of source text quoted inside a message.
const QUOTE_MAX_CHARS: usize = 32;

/// What a token is; its text is found through its span.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Tok {
    Number,
    Ident,
    Plus,
    Minus,
    Star,
    Slash,
    Caret,
    Equals,
    Comma,
    Semi,
    LParen,
    RParen,
    /// One or more primes written as a single character (`″` is two).
    Prime(u32),
    Newline,
    Eof,
}

#[derive(Clone, Copy, Debug)]
struct Token {
    tok: Tok,
    span: Span,
}

/// The reserved words of the grammar.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Keyword {
    Var,
    Param,
    Let,
    Unknown,
    Ode,
    Sqrt,
    Imag,
    Function(Func),
}

impl Keyword {
    fn of(text: &str) -> Option<Keyword> {
        Some(match text {
            "var" => Keyword::Var,
            "param" => Keyword::Param,
            "let" => Keyword::Let,
            "unknown" => Keyword::Unknown,
            "ode" => Keyword::Ode,
            "sqrt" => Keyword::Sqrt,
            "I" => Keyword::Imag,
            f => Keyword::Function(Func::of(f)?),
        })
    }

    /// True for the words that begin a statement; these also end an expression.
    fn starts_statement(self) -> bool {
        !matches!(self, Keyword::Sqrt | Keyword::Imag | Keyword::Function(_))
    }
}

// ---------------------------------------------------------------------------
// Lexer
// ---------------------------------------------------------------------------

/// Blanks other than the newline, which is a token.
fn blanks(i: &str) -> IResult<&str, &str> {
    take_while(|c: char| c.is_whitespace() && c != '\n')(i)
}

fn comment(i: &str) -> IResult<&str, &str> {
    recognize(pair(char('#'), take_till(|c| c == '\n')))(i)
}

fn exponent(i: &str) -> IResult<&str, &str> {
    recognize(tuple((one_of("eE"), opt(one_of("+-")), digit1)))(i)
}

fn number(i: &str) -> IResult<&str, &str> {
    alt((recognize(tuple((digit1, opt(pair(char('.'), digit0)), opt(exponent)))), recognize(tuple((char('.'), digit1, opt(exponent))))))(i)
}

fn ident(i: &str) -> IResult<&str, &str> {
    recognize(pair(satisfy(char::is_alphabetic), take_while(|c: char| c.is_alphabetic() || c.is_ascii_digit() || c == '_')))(i)
}

/// The run of characters shown when a number is malformed, e.g. `1.2.3`.
fn number_run(i: &str) -> IResult<&str, &str> {
    take_while(|c: char| c.is_ascii_alphanumeric() || c == '.')(i)
}

/// Single-character tokens, including the look-alikes that text pasted from
/// papers brings: the minus sign, the middle dot and the multiplication sign,
/// and the typographic primes and apostrophe.
fn punct(c: char) -> Option<Tok> {
    Some(match c {
        '+' => Tok::Plus,
        '-' | '\u{2212}' => Tok::Minus,
        '*' | '\u{b7}' | '\u{d7}' => Tok::Star,
        '/' => Tok::Slash,
        '^' => Tok::Caret,
        '=' => Tok::Equals,
        ',' => Tok::Comma,
        ';' => Tok::Semi,
        '(' => Tok::LParen,
        ')' => Tok::RParen,
        '\'' | '\u{2032}' | '\u{2019}' => Tok::Prime(1),
        '\u{2033}' => Tok::Prime(2),
        '\n' => Tok::Newline,
        _ => return None,
    })
}

/// A help note for a character that cannot start a token, when one helps.
fn stray_char_note(c: char) -> Option<String> {
    Some(match c {
        '\u{2070}' | '\u{b9}' | '\u{b2}' | '\u{b3}' | '\u{2074}'..='\u{207b}' => "write powers with '^', e.g. r^2 or r^-1".into(),
        '[' | ']' | '{' | '}' => "only '(' and ')' group expressions".into(),
        '_' => "a name starts with a letter".into(),
        '\\' => format!(
            "LaTeX is read from a .tex file or with {opt_latex}; in this language write names such as omega or \u{3c9} directly",
            opt_latex = RequestInput::Latex.mention()
        ),
        '.' => "a number needs a digit next to its '.', e.g. 0.5 or .5".into(),
        _ => return None,
    })
}

/// A character as shown in a message: itself if it is visible, else escaped.
fn shown_char(c: char) -> String {
    if matches!(c, '\\' | '\'' | '"') {
        c.to_string()
    } else {
        c.escape_debug().to_string()
    }
}

/// Quotes source text for a message, shortened if it is long.
fn quote(text: &str) -> String {
    match text.char_indices().nth(QUOTE_MAX_CHARS) {
        Some((cut, _)) => format!("'{}...'", &text[..cut]),
        None => format!("'{text}'"),
    }
}

/// Cuts the text into tokens on demand, skipping blanks and comments.
#[derive(Clone)]
struct Lexer<'a> {
    src: &'a str,
    pos: usize,
    /// End of the last token that is not a newline: where "end of input" points.
    last_end: usize,
    max_number_len: usize,
}

impl<'a> Lexer<'a> {
    fn offset(&self, rest: &str) -> usize {
        self.src.len() - rest.len()
    }

    /// A span of one character at `at`, or an empty one at the end of the text.
    fn char_span(&self, at: usize) -> Span {
        let width = self.src[at..].chars().next().map_or(0, char::len_utf8);
        Span::new(at, at + width)
    }

    fn next(&mut self) -> Result<Token> {
        let mut rest = &self.src[self.pos..];
        if let Ok((r, _)) = blanks(rest) {
            rest = r;
        }
        // A newline or the end after a comment points at the comment's '#':
        // that is where the line visibly ends.
        let mut comment_at = None;
        if let Ok((r, _)) = comment(rest) {
            comment_at = Some(self.offset(rest));
            rest = r;
        }
        let start = self.offset(rest);
        let Some(c) = rest.chars().next() else {
            self.pos = start;
            let span = match comment_at {
                Some(at) => Span::new(at, at + 1),
                None => self.char_span(self.last_end),
            };
            return Ok(Token { tok: Tok::Eof, span });
        };
        let (tok, end) = if c.is_ascii_digit() || (c == '.' && rest[1..].starts_with(|d: char| d.is_ascii_digit())) {
            (Tok::Number, self.number(rest, start)?)
        } else if c.is_alphabetic() {
            match ident(rest) {
                Ok((r, _)) => (Tok::Ident, self.offset(r)),
                Err(_) => (Tok::Ident, start + c.len_utf8()),
            }
        } else if let Some(tok) = punct(c) {
            (tok, start + c.len_utf8())
        } else {
            let mut error =
                Error::new(ErrorKind::Syntax, format!("unexpected character '{}'", shown_char(c))).at(Span::new(start, start + c.len_utf8()));
            if let Some(note) = stray_char_note(c) {
                error = error.note(note);
            }
            return Err(error);
        };
        self.pos = end;
        let span = match (tok, comment_at) {
            (Tok::Newline, Some(at)) => Span::new(at, at + 1),
            _ => Span::new(start, end),
        };
        if tok != Tok::Newline {
            self.last_end = end;
        }
        Ok(Token { tok, span })
    }

    /// Reads a number starting at `start`, returning where it ends.
    fn number(&self, rest: &str, start: usize) -> Result<usize> {
        let Ok((after, text)) = number(rest) else {
            return Err(Error::new(ErrorKind::Syntax, "malformed number").at(self.char_span(start)));
        };
        let end = start + text.len();
        if text.len() > self.max_number_len {
            return Err(Error::new(
                ErrorKind::Limit,
                format!("number literal is {} bytes long, more than the limit of {}", text.len(), self.max_number_len),
            )
            .at(Span::new(start, end)));
        }
        if after.starts_with('.') {
            let run_end = match number_run(after) {
                Ok((r, _)) => self.offset(r),
                Err(_) => end + 1,
            };
            return Err(Error::new(ErrorKind::Syntax, format!("malformed number {}", quote(&self.src[start..run_end])))
                .at(Span::new(start, run_end))
                .note("a number has at most one decimal point, e.g. 1.25 or 1.5e-3"));
        }
        Ok(end)
    }
}

// ---------------------------------------------------------------------------
// Operator table
// ---------------------------------------------------------------------------

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Assoc {
    Left,
    Right,
    Prefix,
}

/// Operators that wait on the stack for their right operand.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Operator {
    Binary(BinOp),
    /// A prefix sign; `negate` is false for a unary plus.
    Sign {
        negate: bool,
    },
}

/// The operator table of the grammar, loosest first: binding power and
/// associativity. Postfix primes bind tighter than every entry here and are
/// applied as soon as they are read, so they need no row.
fn binding(op: Operator) -> (u8, Assoc) {
    match op {
        Operator::Binary(BinOp::Add | BinOp::Sub) => (1, Assoc::Left),
        Operator::Binary(BinOp::Mul | BinOp::Div) => (2, Assoc::Left),
        Operator::Sign { .. } => (3, Assoc::Prefix),
        Operator::Binary(BinOp::Pow) => (4, Assoc::Right),
    }
}

/// The binary operator a token stands for.
fn binary_op(tok: Tok) -> Option<BinOp> {
    Some(match tok {
        Tok::Plus => BinOp::Add,
        Tok::Minus => BinOp::Sub,
        Tok::Star => BinOp::Mul,
        Tok::Slash => BinOp::Div,
        Tok::Caret => BinOp::Pow,
        _ => return None,
    })
}

/// An entry of the operator stack.
#[derive(Clone, Copy, Debug)]
enum Pending {
    Op(Operator, Span),
    /// An open parenthesis; `call` is what it is the argument of, if anything.
    Open {
        paren: Span,
        call: Option<Call>,
    },
}

/// What an open parenthesis is the argument of.
#[derive(Clone, Copy, Debug)]
enum Call {
    /// `sqrt(`, written from `start`.
    Sqrt { start: usize },
    /// `exp(`, `cosh(`, …, written from `start`.
    Function { start: usize, func: Func },
    /// `d/dx(` or `d^n/dx^n(`, written from `start`; `wrt` spans the name x.
    Deriv { start: usize, wrt: Span, order: u32 },
}

/// A Leibniz form read ahead at an operand.
enum Leibniz {
    /// `dR/dr` or `d^nR/dr^n`: a finished operand.
    Leaf(Expr),
    /// `d/dr` or `d^n/dr^n` followed by `(`, which has been read.
    Operator { paren: Span, call: Call },
}

impl Pending {
    /// Whether this entry counts toward the nesting depth.
    fn nests(self) -> bool {
        !matches!(self, Pending::Op(Operator::Binary(BinOp::Add | BinOp::Sub | BinOp::Mul | BinOp::Div), _))
    }
}

/// An expression with the height of its tree: the number of operator
/// levels above its deepest leaf (a name or number alone has height 0).
struct Node {
    expr: Expr,
    height: usize,
}

/// The two stacks of the operator-precedence loop for one expression.
struct Stacks {
    operands: Vec<Node>,
    ops: Vec<Pending>,
    /// How many entries of `ops` nest (parentheses, signs, powers).
    nesting: usize,
    /// How many entries of `ops` are open parentheses.
    opens: usize,
}

fn internal(what: &str) -> Error {
    Error::new(ErrorKind::Internal, format!("parser invariant broken: {what}"))
}

// ---------------------------------------------------------------------------
// Parser
// ---------------------------------------------------------------------------

/// Reads statements and expressions from a token stream.
pub(super) struct Parser<'a> {
    src: &'a str,
    lexer: Lexer<'a>,
    peeked: Option<Token>,
    /// The last token consumed, for messages such as "after '+'".
    prev: Option<Token>,
    limits: &'a ParseLimits,
}

impl<'a> Parser<'a> {
    pub(super) fn new(src: &'a str, limits: &'a ParseLimits) -> Parser<'a> {
        Parser { src, lexer: Lexer { src, pos: 0, last_end: 0, max_number_len: limits.max_number_len }, peeked: None, prev: None, limits }
    }

    fn peek(&mut self) -> Result<Token> {
        match self.peeked {
            Some(t) => Ok(t),
            None => {
                let t = self.lexer.next()?;
                self.peeked = Some(t);
                Ok(t)
            }
        }
    }

    fn bump(&mut self) -> Result<Token> {
        let t = self.peek()?;
        self.peeked = None;
        self.prev = Some(t);
        Ok(t)
    }

    fn text(&self, span: Span) -> &'a str {
        &self.src[span.start..span.end]
    }

    fn keyword(&self, t: Token) -> Option<Keyword> {
        if t.tok == Tok::Ident {
            Keyword::of(self.text(t.span))
        } else {
            None
        }
    }

    fn skip_newlines(&mut self) -> Result<()> {
        while self.peek()?.tok == Tok::Newline {
            self.bump()?;
        }
        Ok(())
    }

    /// How a found token is named in a message.
    fn found(&self, t: Token) -> String {
        match t.tok {
            Tok::Newline => "end of line".to_string(),
            Tok::Eof => "end of input".to_string(),
            Tok::Prime(_) => format!("a prime ({})", self.text(t.span)),
            _ => quote(self.text(t.span)),
        }
    }

    fn syntax(&self, message: String, span: Span) -> Error {
        Error::new(ErrorKind::Syntax, message).at(span)
    }

    // -- statements ---------------------------------------------------------

    pub(super) fn program(mut self) -> Result<Program> {
        let mut statements = Vec::new();
        loop {
            let t = self.bump()?;
            match t.tok {
                Tok::Newline | Tok::Semi => continue,
                Tok::Eof => break,
                _ => {}
            }
            if statements.len() >= self.limits.max_statements {
                return Err(Error::new(ErrorKind::Limit, format!("more than {} statements", self.limits.max_statements)).at(t.span));
            }
            statements.push(self.statement(t)?);
            self.end_of_statement()?;
        }
        Ok(Program { statements })
    }

    fn statement(&mut self, first: Token) -> Result<Statement> {
        match self.keyword(first) {
            Some(Keyword::Var) => Ok(Statement::Var(self.name(first)?)),
            Some(Keyword::Unknown) => Ok(Statement::Unknown(self.name(first)?)),
            Some(Keyword::Param) => {
                let mut names = vec![self.name(first)?];
                loop {
                    let t = self.peek()?;
                    match t.tok {
                        Tok::Comma => {
                            let comma = self.bump()?;
                            self.skip_newlines()?;
                            names.push(self.name(comma)?);
                        }
                        Tok::Ident if self.keyword(t).is_none() => {
                            return Err(self
                                .syntax(format!("expected ',' or the end of the statement, found {}", self.found(t)), t.span)
                                .note("separate parameters with ',', e.g. param M, a"));
                        }
                        _ => return Ok(Statement::Param(names)),
                    }
                }
            }
            Some(Keyword::Let) => {
                let name = self.name(first)?;
                let eq = self.bump()?;
                if eq.tok != Tok::Equals {
                    return Err(self.syntax(format!("expected '=' after 'let {}', found {}", name.name, self.found(eq)), eq.span));
                }
                self.skip_newlines()?;
                let value = self.expr(Some(eq))?;
                Ok(Statement::Let { name, value })
            }
            Some(Keyword::Ode) => {
                let (lhs, rhs) = self.equation(Some(first), "expected '=' in ode statement")?;
                let span = first.span.to(rhs.span);
                Ok(Statement::Ode { lhs, rhs, span })
            }
            None if first.tok == Tok::Ident && self.text(first.span).starts_with('d') => {
                // `dX/dV = EXPR`: a coordinate declaration.
                let Some(Leibniz::Leaf(Expr { kind: ExprKind::Derivative { body, wrt, order: 1 }, .. })) = self.leibniz(first)? else {
                    return Err(
                        self.syntax(format!("expected a statement (var, param, let, unknown or ode), found {}", self.found(first)), first.span)
                    );
                };
                let ExprKind::Name(top) = body.kind else { return Err(internal("a Leibniz leaf without a name")) };
                let eq = self.bump()?;
                if eq.tok != Tok::Equals {
                    return Err(self.syntax(format!("expected '=' after d{top}/d{}, found {}", wrt.name, self.found(eq)), eq.span));
                }
                self.skip_newlines()?;
                let rate = self.expr(Some(eq))?;
                let span = first.span.to(rate.span);
                Ok(Statement::Coordinate { top: Ident { name: top, span: body.span }, bottom: wrt, rate, span })
            }
            _ => Err(self
                .syntax(format!("expected a statement (var, param, let, unknown or ode), found {}", self.found(first)), first.span)
                .note("an equation is written as: ode LHS = RHS")),
        }
    }

    /// `LHS = RHS` after `after` (the `ode` keyword, or nothing).
    fn equation(&mut self, after: Option<Token>, missing_equals: &str) -> Result<(Expr, Expr)> {
        let lhs = self.expr(after)?;
        let eq = self.bump()?;
        if eq.tok != Tok::Equals {
            let mut error = self.syntax(format!("{missing_equals}, found {}", self.found(eq)), eq.span);
            if eq.tok == Tok::Newline {
                error = error.note("a line continues only when it ends in an operator or ','");
            }
            return Err(error);
        }
        self.skip_newlines()?;
        let rhs = self.expr(Some(eq))?;
        if self.peek()?.tok == Tok::Equals {
            let t = self.peek()?;
            return Err(self.syntax("unexpected second '='".to_string(), t.span).note("an equation has exactly one '='"));
        }
        Ok((lhs, rhs))
    }

    /// The name a `var`, `param`, `let` or `unknown` keyword (or a comma) is followed by.
    fn name(&mut self, after: Token) -> Result<Ident> {
        let t = self.bump()?;
        if t.tok != Tok::Ident {
            let mut error = self.syntax(format!("expected a name after {}, found {}", quote(self.text(after.span)), self.found(t)), t.span);
            if t.tok == Tok::Number {
                error = error.note("a name starts with a letter");
            }
            return Err(error);
        }
        if let Some(keyword) = self.keyword(t) {
            return Err(self.reserved(t, keyword));
        }
        Ok(Ident { name: self.text(t.span).to_string(), span: t.span })
    }

    fn reserved(&self, t: Token, keyword: Keyword) -> Error {
        let error = self.syntax(format!("'{}' is a reserved word and cannot be a name", self.text(t.span)), t.span);
        match keyword {
            Keyword::Imag => error.note("'I' is the imaginary unit"),
            Keyword::Sqrt => error.note("'sqrt' is the square root, written sqrt(x)"),
            Keyword::Function(f) => error.note(format!("'{}' is a function, written {}(x)", f.name(), f.name())),
            _ => error,
        }
    }

    /// Checks that a statement ends here (without consuming the terminator).
    fn end_of_statement(&mut self) -> Result<()> {
        let t = self.peek()?;
        match t.tok {
            Tok::Newline | Tok::Semi | Tok::Eof => Ok(()),
            _ => Err(self
                .syntax(format!("expected the end of the statement, found {}", self.found(t)), t.span)
                .note("statements are separated by a newline or ';'")),
        }
    }

    /// A whole text that is one expression.
    pub(super) fn lone_expr(mut self) -> Result<Expr> {
        self.skip_newlines()?;
        let expr = self.expr(None)?;
        self.end_of_text("expression")?;
        Ok(expr)
    }

    /// A whole text that is one equation, `ode` optional.
    pub(super) fn lone_equation(mut self) -> Result<(Expr, Expr, Span)> {
        self.skip_newlines()?;
        let first = self.peek()?;
        let after = if self.keyword(first) == Some(Keyword::Ode) { Some(self.bump()?) } else { None };
        let (lhs, rhs) = self.equation(after, "expected '=' in the equation")?;
        let span = after.map_or(lhs.span, |t| t.span).to(rhs.span);
        self.end_of_text("equation")?;
        Ok((lhs, rhs, span))
    }

    fn end_of_text(&mut self, what: &str) -> Result<()> {
        loop {
            let t = self.bump()?;
            match t.tok {
                Tok::Newline | Tok::Semi => continue,
                Tok::Eof => return Ok(()),
                _ => return Err(self.syntax(format!("expected the end of the {what}, found {}", self.found(t)), t.span)),
            }
        }
    }

    // -- expressions --------------------------------------------------------

    /// Reads one expression. `after` is the token before it, for messages;
    /// the expression ends (unconsumed) at a newline outside parentheses, ';',
    /// '=', ',', a statement keyword or the end of input.
    fn expr(&mut self, after: Option<Token>) -> Result<Expr> {
        let mut st = Stacks { operands: Vec::new(), ops: Vec::new(), nesting: 0, opens: 0 };
        let mut after = after;
        loop {
            self.operand(&mut st, &mut after)?;
            if let Some(expr) = self.operators(&mut st, &mut after)? {
                return Ok(expr);
            }
        }
    }

    /// Operand position: reads signs and open parentheses, then one atom.
    fn operand(&mut self, st: &mut Stacks, after: &mut Option<Token>) -> Result<()> {
        loop {
            let t = self.bump()?;
            if t.tok == Tok::Ident && self.text(t.span).starts_with('d') {
                match self.leibniz(t)? {
                    Some(Leibniz::Leaf(expr)) => {
                        let span = expr.span;
                        let node = self.node(expr.kind, span, 0)?;
                        st.operands.push(node);
                        return Ok(());
                    }
                    Some(Leibniz::Operator { paren, call }) => {
                        self.push(st, Pending::Open { paren, call: Some(call) }, paren)?;
                        *after = self.prev;
                        continue;
                    }
                    None => {}
                }
            }
            let leaf = match t.tok {
                Tok::Number => ExprKind::Number(self.text(t.span).to_string()),
                Tok::Ident => match self.keyword(t) {
                    None => ExprKind::Name(self.text(t.span).to_string()),
                    Some(Keyword::Imag) => ExprKind::Imag,
                    Some(keyword @ (Keyword::Sqrt | Keyword::Function(_))) => {
                        let paren = self.bump()?;
                        if paren.tok != Tok::LParen {
                            return Err(self.syntax(format!("expected '(' after '{}', found {}", self.text(t.span), self.found(paren)), paren.span));
                        }
                        let call = match keyword {
                            Keyword::Function(func) => Call::Function { start: t.span.start, func },
                            _ => Call::Sqrt { start: t.span.start },
                        };
                        self.push(st, Pending::Open { paren: paren.span, call: Some(call) }, paren.span)?;
                        *after = Some(paren);
                        continue;
                    }
                    Some(keyword) => return Err(self.reserved(t, keyword)),
                },
                Tok::LParen => {
                    self.push(st, Pending::Open { paren: t.span, call: None }, t.span)?;
                    *after = Some(t);
                    continue;
                }
                Tok::Minus | Tok::Plus => {
                    let op = Operator::Sign { negate: t.tok == Tok::Minus };
                    self.push(st, Pending::Op(op, t.span), t.span)?;
                    *after = Some(t);
                    continue;
                }
                Tok::Newline if after.is_some_and(|a| continues_line(a.tok)) => continue,
                _ => return Err(self.missing_operand(*after, t)),
            };
            st.operands.push(Node { expr: Expr { kind: leaf, span: t.span }, height: 0 });
            return Ok(());
        }
    }

    /// Reads a Leibniz derivative starting at the name `first` (which begins
    /// with `d`): `dR/dr`, `d^2R/dr^2`, `d/dr(`, `d^2/dr^2(`. Anything else
    /// leaves the input untouched and returns `None`. A form that is clearly
    /// meant (both differentials read) but whose orders disagree is an error.
    fn leibniz(&mut self, first: Token) -> Result<Option<Leibniz>> {
        let saved = (self.lexer.clone(), self.peeked, self.prev);
        match self.try_leibniz(first) {
            Ok(Ok(Some(form))) => Ok(Some(form)),
            Ok(Err(bad)) => Err(bad),
            // Not a Leibniz form (or a token error further on, which the
            // ordinary reading will meet and report in its own words).
            Ok(Ok(None)) | Err(_) => {
                (self.lexer, self.peeked, self.prev) = saved;
                Ok(None)
            }
        }
    }

    /// The look-ahead of [`Parser::leibniz`]: the outer error is a token
    /// error, the inner one a Leibniz form written wrongly.
    fn try_leibniz(&mut self, first: Token) -> Result<Result<Option<Leibniz>>> {
        let name = self.text(first.span);
        // The order written as `^n` after a `d`, when there is one.
        let order_after = |p: &mut Self| -> Result<Option<(u32, Span)>> {
            if p.peek()?.tok != Tok::Caret {
                return Ok(None);
            }
            p.bump()?;
            let n = p.bump()?;
            if n.tok != Tok::Number {
                return Ok(Some((0, n.span)));
            }
            Ok(Some((p.text(n.span).parse::<u32>().unwrap_or(0), n.span)))
        };
        let (order, body) = if name == "d" {
            let order = match order_after(self)? {
                None => 1,
                Some((0, _)) => return Ok(Ok(None)),
                Some((n, _)) => n,
            };
            let t = self.peek()?;
            let body = if t.tok == Tok::Ident && self.keyword(t).is_none() {
                self.bump()?;
                Some(t)
            } else {
                None
            };
            (order, body)
        } else {
            let body = Token { tok: Tok::Ident, span: Span::new(first.span.start + 1, first.span.end) };
            (1, Some(body))
        };
        if self.bump()?.tok != Tok::Slash {
            return Ok(Ok(None));
        }
        let den = self.bump()?;
        let den_text = self.text(den.span);
        if den.tok != Tok::Ident || den_text.len() < 2 || !den_text.starts_with('d') || self.keyword(den).is_some() {
            return Ok(Ok(None));
        }
        let wrt = Span::new(den.span.start + 1, den.span.end);
        let den_order = match order_after(self)? {
            None => 1,
            Some((0, _)) => return Ok(Ok(None)),
            Some((n, _)) => n,
        };
        if den_order != order {
            let end = self.prev.map_or(den.span, |p| p.span);
            return Ok(Err(self
                .syntax(
                    format!("the orders of the derivative do not match: d^{order} above, d{}^{den_order} below", self.text(wrt)),
                    first.span.to(end),
                )
                .note("write d^2y/dx^2 for a second derivative")));
        }
        match body {
            Some(body) => {
                let end = self.prev.map_or(den.span, |p| p.span);
                let body = Expr { kind: ExprKind::Name(self.text(body.span).to_string()), span: body.span };
                let wrt = Ident { name: self.text(wrt).to_string(), span: wrt };
                let kind = ExprKind::Derivative { body: Box::new(body), wrt, order };
                Ok(Ok(Some(Leibniz::Leaf(Expr { kind, span: first.span.to(end) }))))
            }
            None => {
                let paren = self.bump()?;
                if paren.tok != Tok::LParen {
                    return Ok(Err(self
                        .syntax(format!("expected '(' after d/d{}, found {}", self.text(wrt), self.found(paren)), paren.span)
                        .note("the derivative applies to a bracketed expression: d/dr(r^2*y')")));
                }
                Ok(Ok(Some(Leibniz::Operator { paren: paren.span, call: Call::Deriv { start: first.span.start, wrt, order } })))
            }
        }
    }

    fn missing_operand(&self, after: Option<Token>, t: Token) -> Error {
        let message = match after {
            Some(a) => format!("expected an expression after {}, found {}", quote(self.text(a.span)), self.found(t)),
            None => format!("expected an expression, found {}", self.found(t)),
        };
        let error = self.syntax(message, t.span);
        match (after.map(|a| a.tok), t.tok) {
            (Some(Tok::Star), Tok::Star) => error.note("write powers with '^', not '**'"),
            (_, Tok::Prime(_)) => error.note("a prime follows what it differentiates, as in y'"),
            _ => error,
        }
    }

    /// Operator position: applies primes and closing parentheses until a
    /// binary operator (which it pushes, returning `None`) or the end of the
    /// expression (returning the finished expression).
    fn operators(&mut self, st: &mut Stacks, after: &mut Option<Token>) -> Result<Option<Expr>> {
        let mut primed = false;
        loop {
            let t = self.peek()?;
            match t.tok {
                Tok::Prime(count) => {
                    self.bump()?;
                    self.prime(st, count, t.span, primed)?;
                    primed = true;
                    continue;
                }
                Tok::RParen => {
                    self.bump()?;
                    self.close(st, t.span)?;
                }
                Tok::Plus | Tok::Minus | Tok::Star | Tok::Slash | Tok::Caret => {
                    self.bump()?;
                    let Some(op) = binary_op(t.tok) else {
                        return Err(internal("binary token"));
                    };
                    let (power, assoc) = binding(Operator::Binary(op));
                    while let Some(&Pending::Op(top, _)) = st.ops.last() {
                        let (top_power, _) = binding(top);
                        if top_power > power || (top_power == power && assoc == Assoc::Left) {
                            self.reduce_top(st)?;
                        } else {
                            break;
                        }
                    }
                    self.push(st, Pending::Op(Operator::Binary(op), t.span), t.span)?;
                    *after = Some(t);
                    return Ok(None);
                }
                Tok::Newline if st.opens > 0 => {
                    self.bump()?;
                }
                Tok::Number | Tok::LParen => return Err(self.implicit_multiplication(st, t)),
                Tok::Ident if !self.keyword(t).is_some_and(Keyword::starts_statement) => {
                    return Err(self.implicit_multiplication(st, t));
                }
                _ => {
                    if st.opens > 0 {
                        return Err(self.unclosed(st, t));
                    }
                    while !st.ops.is_empty() {
                        self.reduce_top(st)?;
                    }
                    let node = st.operands.pop().ok_or_else(|| internal("no operand at the end"))?;
                    if !st.operands.is_empty() {
                        return Err(internal("operands left at the end"));
                    }
                    return Ok(Some(node.expr));
                }
            }
            primed = false;
        }
    }

    /// Pushes an operator, failing early once nesting passes the limit.
    fn push(&self, st: &mut Stacks, entry: Pending, at: Span) -> Result<()> {
        if entry.nests() {
            st.nesting += 1;
            if st.nesting > self.limits.max_depth {
                return Err(Error::new(ErrorKind::Limit, format!("expression is nested more than {} levels deep", self.limits.max_depth))
                    .at(at)
                    .note("every '(', sign and '^' that is still open counts one level"));
            }
        }
        if matches!(entry, Pending::Open { .. }) {
            st.opens += 1;
        }
        st.ops.push(entry);
        Ok(())
    }

    fn pop_operand(st: &mut Stacks) -> Result<Node> {
        st.operands.pop().ok_or_else(|| internal("missing operand"))
    }

    /// Builds a node from children, enforcing the height limit.
    fn node(&self, kind: ExprKind, span: Span, child_height: usize) -> Result<Node> {
        let height = child_height + 1;
        if height > self.limits.max_depth {
            return Err(Error::new(ErrorKind::Limit, format!("expression is nested more than {} levels deep", self.limits.max_depth))
                .at(span)
                .note("every operator in a chain such as a + b + c counts one level; split long chains with let statements"));
        }
        Ok(Node { expr: Expr { kind, span }, height })
    }

    /// Applies the operator on top of the stack to its operands.
    fn reduce_top(&self, st: &mut Stacks) -> Result<()> {
        let Some(Pending::Op(op, op_span)) = st.ops.pop() else {
            return Err(internal("reducing a parenthesis"));
        };
        let node = match op {
            Operator::Binary(bin) => {
                st.nesting -= usize::from(bin == BinOp::Pow);
                let rhs = Self::pop_operand(st)?;
                let lhs = Self::pop_operand(st)?;
                let span = lhs.expr.span.to(rhs.expr.span);
                let height = lhs.height.max(rhs.height);
                self.node(ExprKind::Binary(bin, Box::new(lhs.expr), Box::new(rhs.expr)), span, height)?
            }
            Operator::Sign { negate } => {
                st.nesting -= 1;
                let mut inner = Self::pop_operand(st)?;
                let span = op_span.to(inner.expr.span);
                if negate {
                    self.node(ExprKind::Neg(Box::new(inner.expr)), span, inner.height)?
                } else {
                    // A unary plus leaves no node; its operand takes in the sign's text.
                    inner.expr.span = span;
                    inner
                }
            }
        };
        st.operands.push(node);
        Ok(())
    }

    /// Applies `count` primes to the operand just read, merging with primes
    /// written directly before.
    fn prime(&self, st: &mut Stacks, count: u32, at: Span, merge: bool) -> Result<()> {
        let top = Self::pop_operand(st)?;
        let span = top.expr.span.to(at);
        let node = match top.expr.kind {
            ExprKind::Prime(inner, n) if merge => {
                let Some(total) = n.checked_add(count) else {
                    return Err(Error::new(ErrorKind::Limit, "too many primes in a row").at(at));
                };
                Node { expr: Expr { kind: ExprKind::Prime(inner, total), span }, height: top.height }
            }
            kind => {
                let height = top.height;
                self.node(ExprKind::Prime(Box::new(Expr { kind, span: top.expr.span }), count), span, height)?
            }
        };
        st.operands.push(node);
        Ok(())
    }

    /// Closes the innermost parenthesis at `at`.
    fn close(&self, st: &mut Stacks, at: Span) -> Result<()> {
        if st.opens == 0 {
            return Err(self.syntax("unexpected ')'".to_string(), at).note("there is no '(' before it for it to close"));
        }
        while let Some(Pending::Op(..)) = st.ops.last() {
            self.reduce_top(st)?;
        }
        let Some(Pending::Open { paren, call }) = st.ops.pop() else {
            return Err(internal("no open parenthesis"));
        };
        st.opens -= 1;
        st.nesting -= 1;
        let inner = Self::pop_operand(st)?;
        let node = match call {
            Some(Call::Sqrt { start }) => {
                let height = inner.height;
                self.node(ExprKind::Sqrt(Box::new(inner.expr)), Span::new(start, at.end), height)?
            }
            Some(Call::Function { start, func }) => {
                let height = inner.height;
                self.node(ExprKind::Call(func, Box::new(inner.expr)), Span::new(start, at.end), height)?
            }
            Some(Call::Deriv { start, wrt, order }) => {
                let height = inner.height;
                let mut body = inner.expr;
                body.span = paren.to(at);
                let wrt = Ident { name: self.text(wrt).to_string(), span: wrt };
                self.node(ExprKind::Derivative { body: Box::new(body), wrt, order }, Span::new(start, at.end), height)?
            }
            None => {
                let mut inner = inner;
                inner.expr.span = paren.to(at);
                inner
            }
        };
        st.operands.push(node);
        Ok(())
    }

    fn unclosed(&self, st: &Stacks, found: Token) -> Error {
        let paren = st.ops.iter().rev().find_map(|p| match p {
            Pending::Open { paren, .. } => Some(*paren),
            Pending::Op(..) => None,
        });
        self.syntax("unclosed '('".to_string(), paren.unwrap_or(found.span)).note(format!("found {} before the matching ')'", self.found(found)))
    }

    /// The error for two operands side by side, e.g. `2x` or `)(`.
    fn implicit_multiplication(&self, st: &Stacks, next: Token) -> Error {
        let prev = self.prev.map_or(next.span, |p| p.span);
        // After primes the previous token alone would read badly ("'*y"), so the
        // whole primed operand is shown instead.
        let left = match (self.prev.map(|p| p.tok), st.operands.last()) {
            (Some(Tok::Prime(_)), Some(top)) => top.expr.span,
            _ => prev,
        };
        let right = self.text(next.span);
        let shown = |s: &str| {
            let q = quote(s);
            q[1..q.len() - 1].to_string()
        };
        let error =
            self.syntax(format!("implicit multiplication is not supported: write '{}*{}'", shown(self.text(left)), shown(right)), left.to(next.span));
        if self.prev.is_some_and(|p| p.tok == Tok::Number) && right.starts_with(['e', 'E']) {
            error.note("a power of ten needs digits after the 'e', e.g. 1e-3")
        } else if self.prev.is_some_and(|p| p.tok == Tok::Ident) && next.tok == Tok::LParen {
            let name = self.prev.map_or("", |p| self.text(p.span));
            error.note(format!(
                "if '{name}(…)' is a function of the variable, define it with 'let {name} = …' (or read LaTeX with {opt_latex}, where f(r) is allowed)", opt_latex = RequestInput::Latex.mention()))
        } else {
            error
        }
    }
}

/// True for tokens after which a newline does not end the statement.
fn continues_line(tok: Tok) -> bool {
    matches!(tok, Tok::Plus | Tok::Minus | Tok::Star | Tok::Slash | Tok::Caret | Tok::Equals | Tok::Comma | Tok::LParen)
}

#[cfg(test)]
mod tests {
    use super::super::{parse_equation, parse_expr, parse_program};
    use super::*;

    const EXAMPLE: &str = "# comment
var r
param M, omega, l, s
let f = 1 - 2*M/r
ode f*(f*y')' + (omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y = 0
";

    fn limits() -> ParseLimits {
        ParseLimits::default()
    }

    /// The structure of an expression as a prefix form, ignoring spans.
    fn sexp(e: &Expr) -> String {
        match &e.kind {
            ExprKind::Number(n) => n.clone(),
            ExprKind::Imag => "I".to_string(),
            ExprKind::Name(n) => n.clone(),
            ExprKind::Neg(a) => format!("(neg {})", sexp(a)),
            ExprKind::Binary(op, a, b) => {
                let op = match op {
                    BinOp::Add => "+",
                    BinOp::Sub => "-",
                    BinOp::Mul => "*",
                    BinOp::Div => "/",
                    BinOp::Pow => "^",
                };
                format!("({op} {} {})", sexp(a), sexp(b))
            }
            ExprKind::Prime(a, n) => format!("(d{n} {})", sexp(a)),
            ExprKind::Sqrt(a) => format!("(sqrt {})", sexp(a)),
            ExprKind::Call(f, a) => format!("({} {})", f.name(), sexp(a)),
            ExprKind::Derivative { body, wrt, order } => format!("(D{order}/{} {})", wrt.name, sexp(body)),
        }
    }

    /// Source text for an expression, fully parenthesised, for round trips.
    fn print(e: &Expr) -> String {
        match &e.kind {
            ExprKind::Number(n) => n.clone(),
            ExprKind::Imag => "I".to_string(),
            ExprKind::Name(n) => n.clone(),
            ExprKind::Neg(a) => format!("(-{})", print(a)),
            ExprKind::Binary(op, a, b) => {
                let op = match op {
                    BinOp::Add => "+",
                    BinOp::Sub => "-",
                    BinOp::Mul => "*",
                    BinOp::Div => "/",
                    BinOp::Pow => "^",
                };
                format!("({}{op}{})", print(a), print(b))
            }
            ExprKind::Prime(a, n) => format!("({}){}", print(a), "'".repeat(*n as usize)),
            ExprKind::Sqrt(a) => format!("sqrt({})", print(a)),
            ExprKind::Call(f, a) => format!("{}({})", f.name(), print(a)),
            ExprKind::Derivative { body, wrt, order } => format!("d^{order}/d{}^{order}({})", wrt.name, print(body)),
        }
    }

    fn children(e: &Expr) -> Vec<&Expr> {
        match &e.kind {
            ExprKind::Number(_) | ExprKind::Imag | ExprKind::Name(_) => vec![],
            ExprKind::Neg(a) | ExprKind::Prime(a, _) | ExprKind::Sqrt(a) | ExprKind::Call(_, a) | ExprKind::Derivative { body: a, .. } => vec![a],
            ExprKind::Binary(_, a, b) => vec![a, b],
        }
    }

    /// Every span lies in the text, on character boundaries, inside its parent;
    /// names and numbers span exactly their text.
    fn check_spans(src: &str, e: &Expr) {
        let s = e.span;
        assert!(s.start <= s.end && s.end <= src.len(), "span {s:?} out of {src:?}");
        assert!(src.is_char_boundary(s.start) && src.is_char_boundary(s.end));
        match &e.kind {
            // A leaf's span may also take in enclosing parentheses and a unary plus.
            ExprKind::Name(n) | ExprKind::Number(n) => {
                let bare = src[s.start..s.end].trim_end_matches(|c: char| c == ')' || c.is_whitespace());
                assert!(bare.ends_with(n.as_str()), "{:?} for {n:?}", &src[s.start..s.end]);
                if !src[s.start..s.end].starts_with(['(', '+']) {
                    assert_eq!(&src[s.start..s.end], n);
                }
            }
            _ => {}
        }
        for c in children(e) {
            assert!(s.start <= c.span.start && c.span.end <= s.end, "child {:?} outside {s:?} in {src:?}", c.span);
            check_spans(src, c);
        }
    }

    fn expr(src: &str) -> Expr {
        match parse_expr(src, &limits()) {
            Ok(e) => {
                check_spans(src, &e);
                e
            }
            Err(e) => panic!("{:?} failed: {e:?}", short(src)),
        }
    }

    /// The start of a text, for failure messages that must stay readable.
    fn short(src: &str) -> &str {
        &src[..src.char_indices().nth(200).map_or(src.len(), |(i, _)| i)]
    }

    fn shape(src: &str) -> String {
        sexp(&expr(src))
    }

    fn text(src: &str, span: Span) -> &str {
        &src[span.start..span.end]
    }

    fn program(src: &str) -> Program {
        match parse_program(src, &limits()) {
            Ok(p) => p,
            Err(e) => panic!("{:?} failed: {e:?}", short(src)),
        }
    }

    fn error(src: &str) -> Error {
        error_with(src, &limits())
    }

    fn error_with(src: &str, limits: &ParseLimits) -> Error {
        match parse_program(src, limits) {
            Ok(p) => panic!("{:?} parsed: {p:?}", short(src)),
            Err(e) => {
                let span = e.span.expect("every parse error has a span");
                assert!(span.start <= span.end && span.end <= src.len());
                assert!(src.is_char_boundary(span.start) && src.is_char_boundary(span.end));
                e
            }
        }
    }

    /// Checks an error's kind, message and the text its span covers.
    fn check(src: &str, message: &str, spanned: &str) {
        let e = error(src);
        assert_eq!(e.kind, ErrorKind::Syntax, "{src:?}: {e:?}");
        assert_eq!(e.message, message, "{src:?}");
        let span = e.span.unwrap_or_default();
        assert_eq!(text(src, span), spanned, "{src:?}: span {span:?}");
    }

    #[test]
    fn example_program_structure_and_spans() {
        let p = program(EXAMPLE);
        assert_eq!(p.statements.len(), 4);
        let Statement::Var(r) = &p.statements[0] else { panic!("{:?}", p.statements[0]) };
        assert_eq!(r.name, "r");
        assert_eq!(text(EXAMPLE, r.span), "r");
        let Statement::Param(names) = &p.statements[1] else { panic!() };
        let names: Vec<&str> = names.iter().map(|i| i.name.as_str()).collect();
        assert_eq!(names, ["M", "omega", "l", "s"]);
        let Statement::Let { name, value } = &p.statements[2] else { panic!() };
        assert_eq!(name.name, "f");
        assert_eq!(sexp(value), "(- 1 (/ (* 2 M) r))");
        assert_eq!(text(EXAMPLE, value.span), "1 - 2*M/r");
        let Statement::Ode { lhs, rhs, span } = &p.statements[3] else { panic!() };
        assert_eq!(
            sexp(lhs),
            "(+ (* f (d1 (* f (d1 y)))) (* (- (^ omega 2) (* f (+ (/ (* l (+ l 1)) (^ r 2)) \
             (/ (* (* (- 1 (^ s 2)) 2) M) (^ r 3))))) y))"
        );
        assert_eq!(sexp(rhs), "0");
        assert_eq!(text(EXAMPLE, *span), "ode f*(f*y')' + (omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y = 0");
        assert_eq!(text(EXAMPLE, lhs.span), "f*(f*y')' + (omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y");
        let ExprKind::Binary(BinOp::Add, first, second) = &lhs.kind else { panic!() };
        assert_eq!(text(EXAMPLE, first.span), "f*(f*y')'");
        assert_eq!(text(EXAMPLE, second.span), "(omega^2 - f*(l*(l+1)/r^2 + (1 - s^2)*2*M/r^3))*y");
        let ExprKind::Binary(BinOp::Mul, _, primed) = &first.kind else { panic!() };
        assert_eq!(text(EXAMPLE, primed.span), "(f*y')'");
        let ExprKind::Prime(inner, 1) = &primed.kind else { panic!() };
        assert_eq!(text(EXAMPLE, inner.span), "(f*y')");
        check_spans(EXAMPLE, lhs);
        check_spans(EXAMPLE, rhs);
    }

    #[test]
    fn spin_weighted_example_parses() {
        let src = "ode Delta^(-s)*(Delta^(s+1)*R')' + ((K^2 - 2*I*s*(r-M)*K)/Delta + 4*I*s*omega*r - lam)*R = 0";
        let p = program(src);
        let Statement::Ode { lhs, .. } = &p.statements[0] else { panic!() };
        assert_eq!(
            sexp(lhs),
            "(+ (* (^ Delta (neg s)) (d1 (* (^ Delta (+ s 1)) (d1 R)))) (* (- (+ (/ (- (^ K 2) \
             (* (* (* (* 2 I) s) (- r M)) K)) Delta) (* (* (* (* 4 I) s) omega) r)) lam) R))"
        );
        check_spans(src, lhs);
    }

    #[test]
    fn leibniz_derivatives() {
        assert_eq!(shape("dR/dr"), "(D1/r R)");
        assert_eq!(shape("d^2R/dr^2 + 2/r*dR/dr"), "(+ (D2/r R) (* (/ 2 r) (D1/r R)))");
        assert_eq!(shape("d/dr(r^2*dR/dr)"), "(D1/r (* (^ r 2) (D1/r R)))");
        assert_eq!(shape("d^2/dx^2(f*y)"), "(D2/x (* f y))");
        assert_eq!(shape("(dR/dr)^2"), "(^ (D1/r R) 2)");
        // Not Leibniz forms: ordinary names and quotients.
        assert_eq!(shape("delta/d"), "(/ delta d)");
        assert_eq!(shape("d/x"), "(/ d x)");
        assert_eq!(shape("d*(dx)"), "(* d dx)");
        let src = "x*d^2R/dr^3";
        let e = parse_expr(src, &limits()).unwrap_err();
        assert!(e.message.starts_with("the orders of the derivative do not match"), "{e:?}");
        assert_eq!(text(src, e.span.unwrap()), "d^2R/dr^3");
        assert!(parse_expr("dR/dr^2", &limits()).unwrap_err().message.starts_with("the orders"));
        let src = "d/dr y";
        let e = parse_expr(src, &limits()).unwrap_err();
        assert_eq!(text(src, e.span.unwrap()), "y");
        let src = "1 + d/dr(r*y)";
        let Expr { kind: ExprKind::Binary(_, _, d), .. } = expr(src) else { panic!() };
        assert_eq!(text(src, d.span), "d/dr(r*y)");
    }

    #[test]
    fn precedence_and_associativity() {
        let cases = [
            ("-x^2", "(neg (^ x 2))"),
            ("a/b*c", "(* (/ a b) c)"),
            ("a-b-c", "(- (- a b) c)"),
            ("a+b*c", "(+ a (* b c))"),
            ("a^b^c", "(^ a (^ b c))"),
            ("r^-2", "(^ r (neg 2))"),
            ("r^+2", "(^ r 2)"),
            ("y'^2", "(^ (d1 y) 2)"),
            ("(f*y')'", "(d1 (* f (d1 y)))"),
            ("y''", "(d2 y)"),
            ("y' '", "(d2 y)"),
            ("(y')'", "(d1 (d1 y))"),
            ("-y'", "(neg (d1 y))"),
            ("x^y'", "(^ x (d1 y))"),
            ("-a*b", "(* (neg a) b)"),
            ("a*-b", "(* a (neg b))"),
            ("a--b", "(- a (neg b))"),
            ("--x", "(neg (neg x))"),
            ("+x", "x"),
            ("2^-x^2", "(^ 2 (neg (^ x 2)))"),
            ("a^-b*c", "(* (^ a (neg b)) c)"),
            ("a^-b+c", "(+ (^ a (neg b)) c)"),
            ("-a^b^c", "(neg (^ a (^ b c)))"),
            ("(a+b)^2", "(^ (+ a b) 2)"),
            ("sqrt(x+1)'", "(d1 (sqrt (+ x 1)))"),
            ("sqrt(sqrt(x))", "(sqrt (sqrt x))"),
            ("2*I*x", "(* (* 2 I) x)"),
            ("3'", "(d1 3)"),
            ("I'", "(d1 I)"),
            ("((x))", "x"),
            ("y\u{2032}\u{2032}", "(d2 y)"),
            ("y\u{2033}", "(d2 y)"),
            ("y\u{2019}", "(d1 y)"),
            ("\u{2212}x\u{b7}y", "(* (neg x) y)"),
            ("a\u{d7}b", "(* a b)"),
        ];
        for (src, want) in cases {
            assert_eq!(shape(src), want, "{src:?}");
        }
    }

    #[test]
    fn spans_cover_whole_text() {
        let src = "2*(a+b)";
        let e = expr(src);
        assert_eq!(e.span, Span::new(0, 7));
        let ExprKind::Binary(_, _, rhs) = &e.kind else { panic!() };
        assert_eq!(text(src, rhs.span), "(a+b)");
        let src = "-x^2";
        let e = expr(src);
        assert_eq!(e.span, Span::new(0, 4));
        let ExprKind::Neg(p) = &e.kind else { panic!() };
        assert_eq!(text(src, p.span), "x^2");
        let src = " +  y'' ";
        assert_eq!(text(src, expr(src).span), "+  y''");
        let src = "1 + sqrt( r )'";
        let ExprKind::Binary(_, _, rhs) = &expr(src).kind else { panic!() };
        assert_eq!(text(src, rhs.span), "sqrt( r )'");
        let ExprKind::Prime(s, 1) = &rhs.kind else { panic!() };
        assert_eq!(text(src, s.span), "sqrt( r )");
        let src = "ω·λ^−2";
        let e = expr(src);
        assert_eq!(text(src, e.span), src);
        assert_eq!(sexp(&e), "(* ω (^ λ (neg 2)))");
    }

    #[test]
    fn numbers_keep_their_text() {
        for n in ["0.25", "1e-3", ".5", "2.", "2.e5", "1E+3", "007", ".5e2", "12345678901234567890"] {
            assert_eq!(shape(n), n);
        }
    }

    #[test]
    fn unicode_and_mixed_names() {
        let src = "var θ\nparam ω, λ, ℓ, ħ, a_1, Ψ2\nlet f = ω^2 - λ*ℓ/θ + a_1*Ψ2\node f*ψ'' + ψ = 0";
        let p = program(src);
        let Statement::Param(names) = &p.statements[1] else { panic!() };
        let names: Vec<&str> = names.iter().map(|i| i.name.as_str()).collect();
        assert_eq!(names, ["ω", "λ", "ℓ", "ħ", "a_1", "Ψ2"]);
        for (i, n) in names.iter().enumerate() {
            let Statement::Param(ids) = &p.statements[1] else { panic!() };
            assert_eq!(text(src, ids[i].span), *n);
        }
        let Statement::Let { value, .. } = &p.statements[2] else { panic!() };
        assert_eq!(sexp(value), "(+ (- (^ ω 2) (/ (* λ ℓ) θ)) (* a_1 Ψ2))");
        check_spans(src, value);
    }

    #[test]
    fn continuation_lines_comments_and_separators() {
        let src =
            "var r; param a,\n  b # the second\nlet f = 1 +\n\n  # a comment line\n  2*a\nlet g = (1\n - b\n)\nunknown u\node u'' - f*u =\n  g*u\n";
        let p = program(src);
        assert_eq!(p.statements.len(), 6);
        let Statement::Param(names) = &p.statements[1] else { panic!() };
        assert_eq!(names.len(), 2);
        let Statement::Let { value, .. } = &p.statements[2] else { panic!() };
        assert_eq!(sexp(value), "(+ 1 (* 2 a))");
        let Statement::Let { value, .. } = &p.statements[3] else { panic!() };
        assert_eq!(sexp(value), "(- 1 b)");
        assert_eq!(text(src, value.span), "(1\n - b\n)");
        let Statement::Unknown(u) = &p.statements[4] else { panic!() };
        assert_eq!(u.name, "u");
        let Statement::Ode { rhs, .. } = &p.statements[5] else { panic!() };
        assert_eq!(sexp(rhs), "(* g u)");
        for op in ["+", "-", "*", "/", "^"] {
            let src = format!("let f = a {op}\n b");
            let p = program(&src);
            assert_eq!(p.statements.len(), 1, "{src:?}");
        }
        assert_eq!(program("").statements.len(), 0);
        assert_eq!(program("\n\n;;# only comments\n  \r\n").statements.len(), 0);
        assert_eq!(program("var r\r\nparam a\r\n").statements.len(), 2);
        assert_eq!(program("var\tr \u{a0}").statements.len(), 1);
    }

    #[test]
    fn syntax_errors_say_what_and_where() {
        check("let f = 1 +\n", "expected an expression after '+', found end of input", "\n");
        check("let f = 1 + ", "expected an expression after '+', found end of input", " ");
        check("let f = 1 + # c", "expected an expression after '+', found end of input", "#");
        check("ode y'' + = 0", "expected an expression after '+', found '='", "=");
        check("ode\ny'' = 0", "expected an expression after 'ode', found end of line", "\n");
        check("let f = 2 * * 3", "expected an expression after '*', found '*'", "*");
        check("let f = ()", "expected an expression after '(', found ')'", ")");
        check("let f = a + 'y", "expected an expression after '+', found a prime (')", "'");
        check("let f = (1 + 2", "unclosed '('", "(");
        check("let f = (1 + (2)\nvar r", "unclosed '('", "(");
        check("let f = sqrt(1 + 2; var r", "unclosed '('", "(");
        check("let f = 1 + 2)", "unexpected ')'", ")");
        check("ode y'' + y", "expected '=' in ode statement, found end of input", "");
        check("ode y'' + y\n= 0", "expected '=' in ode statement, found end of line", "\n");
        check("ode y'' = 0 = 1", "unexpected second '='", "=");
        check("var ode", "'ode' is a reserved word and cannot be a name", "ode");
        check("param a, sqrt", "'sqrt' is a reserved word and cannot be a name", "sqrt");
        check("let I = 2", "'I' is a reserved word and cannot be a name", "I");
        check("let f = x + let", "'let' is a reserved word and cannot be a name", "let");
        check("let f = 2 $ 3", "unexpected character '$'", "$");
        check("let f = \\omega", "unexpected character '\\'", "\\");
        check("let f = \"a\"", "unexpected character '\"'", "\"");
        check("let f = r²", "unexpected character '²'", "²");
        check("let f = a.b", "unexpected character '.'", ".");
        check("let f = 2x", "implicit multiplication is not supported: write '2*x'", "2x");
        check("let f = (a)(b)", "implicit multiplication is not supported: write ')*('", ")(");
        check("let f = y' y", "implicit multiplication is not supported: write 'y'*y'", "y' y");
        check("let f = a sqrt(b)", "implicit multiplication is not supported: write 'a*sqrt'", "a sqrt");
        check("let f = 1e", "implicit multiplication is not supported: write '1*e'", "1e");
        check("let f = 1.2.3", "malformed number '1.2.3'", "1.2.3");
        check("let f = 2..", "malformed number '2..'", "2..");
        check("let f = sqrt 2", "expected '(' after 'sqrt', found '2'", "2");
        check("var", "expected a name after 'var', found end of input", "");
        check("var 2r", "expected a name after 'var', found '2'", "2");
        check("param a,", "expected a name after ',', found end of input", "");
        check("param a b", "expected ',' or the end of the statement, found 'b'", "b");
        check("let f 2", "expected '=' after 'let f', found '2'", "2");
        check("var r s", "expected the end of the statement, found 's'", "s");
        check("let f = 1, 2", "expected the end of the statement, found ','", ",");
        check("let f = x var r", "expected the end of the statement, found 'var'", "var");
        check("y'' + y = 0", "expected a statement (var, param, let, unknown or ode), found 'y'", "y");
        check(")", "expected a statement (var, param, let, unknown or ode), found ')'", ")");
        check("let ω = ω ^", "expected an expression after '^', found end of input", "");
        check("let f = −", "expected an expression after '−', found end of input", "");
    }

    #[test]
    fn errors_carry_help_notes() {
        let e = error("let f = 2**3");
        assert!(e.notes.iter().any(|n| n.contains("'^'")), "{e:?}");
        let e = error("let f = 1e");
        assert!(e.notes.iter().any(|n| n.contains("1e-3")), "{e:?}");
        let e = error("let f = (1 + 2");
        assert_eq!(e.notes, ["found end of input before the matching ')'"]);
        let e = error("y'' = 0");
        assert!(e.notes[0].contains("ode LHS = RHS"));
        let e = error("let f = x²");
        assert!(e.notes[0].contains("r^2"));
        let e = error("let f = \\omega");
        assert!(e.notes[0].contains("LaTeX"));
    }

    #[test]
    fn unexpected_characters_are_escaped_and_whole() {
        let e = error("let f = 1 + \u{200b}x");
        assert_eq!(e.message, "unexpected character '\\u{200b}'");
        assert_eq!(e.span, Some(Span::new(12, 15)));
        let e = error("let f = 1 \u{7}");
        assert_eq!(e.message, "unexpected character '\\u{7}'");
        let e = error("let f = \u{1F600}");
        assert_eq!(e.span, Some(Span::new(8, 12)));
    }

    #[test]
    fn long_text_in_messages_is_shortened() {
        let src = format!("let f = 1.{}.", "2".repeat(500));
        let e = error(&src);
        assert!(e.message.len() < 80, "{}", e.message);
        assert_eq!(e.span, Some(Span::new(8, src.len())));
    }

    #[test]
    fn lone_expressions_and_equations() {
        let l = limits();
        let e = parse_expr("r^2 - 1", &l).unwrap();
        assert_eq!(sexp(&e), "(- (^ r 2) 1)");
        assert_eq!(sexp(&parse_expr("\n (1 +\n 2)\n", &l).unwrap()), "(+ 1 2)");
        let e = parse_expr("x = 1", &l).unwrap_err();
        assert_eq!(e.message, "expected the end of the expression, found '='");
        let e = parse_expr("", &l).unwrap_err();
        assert_eq!(e.message, "expected an expression, found end of input");
        let e = parse_expr("x; y", &l).unwrap_err();
        assert_eq!(e.message, "expected the end of the expression, found 'y'");
        let src = "ode y'' + y = 0";
        let (lhs, rhs, span) = parse_equation(src, &l).unwrap();
        assert_eq!((sexp(&lhs), sexp(&rhs)), ("(+ (d2 y) y)".to_string(), "0".to_string()));
        assert_eq!(span, Span::new(0, src.len()));
        let src = "  y'' = -y ";
        let (_, rhs, span) = parse_equation(src, &l).unwrap();
        assert_eq!(sexp(&rhs), "(neg y)");
        assert_eq!(text(src, span), "y'' = -y");
        let e = parse_equation("y'' + y", &l).unwrap_err();
        assert_eq!(e.message, "expected '=' in the equation, found end of input");
        let e = parse_equation("y'' = y = 0", &l).unwrap_err();
        assert_eq!(e.message, "unexpected second '='");
        let e = parse_equation("y'' = y var", &l).unwrap_err();
        assert_eq!(e.message, "expected the end of the equation, found 'var'");
    }

    #[test]
    fn size_limits() {
        let small = ParseLimits { max_bytes: 10, ..limits() };
        let e = error_with("var r\nparam a", &small);
        assert_eq!(e.kind, ErrorKind::Limit);
        assert_eq!(e.span, Some(Span::new(10, 11)));
        let e = parse_expr("ωωωωωωωω", &ParseLimits { max_bytes: 5, ..limits() }).unwrap_err();
        assert_eq!((e.kind, e.span), (ErrorKind::Limit, Some(Span::new(4, 6))));
        assert!(parse_program("var r;;;;;", &small).is_ok());

        let few = ParseLimits { max_statements: 3, ..limits() };
        assert!(parse_program("var r\n\n;param a;let b = 1\n", &few).is_ok());
        let e = error_with("var r\nparam a\nlet b = 1\nunknown u", &few);
        assert_eq!((e.kind, e.message.as_str()), (ErrorKind::Limit, "more than 3 statements"));
        assert_eq!(e.span, Some(Span::new(24, 31)));

        let short = ParseLimits { max_number_len: 4, ..limits() };
        assert!(parse_program("let a = 1.25", &short).is_ok());
        let e = error_with("let a = 1.255", &short);
        assert_eq!(e.kind, ErrorKind::Limit);
        assert_eq!(e.span, Some(Span::new(8, 13)));
        let huge = format!("let a = {}", "9".repeat(100_000));
        assert_eq!(error(&huge).kind, ErrorKind::Limit);
    }

    #[test]
    fn depth_limit_is_exact() {
        let shallow = ParseLimits { max_depth: 3, ..limits() };
        let ok = |s: &str| parse_expr(s, &shallow).map(|e| sexp(&e));
        let deep = |s: &str| {
            let e = parse_expr(s, &shallow).unwrap_err();
            assert_eq!(e.kind, ErrorKind::Limit, "{s:?}");
            assert_eq!(e.message, "expression is nested more than 3 levels deep");
            e.span.unwrap_or_default()
        };
        assert!(ok("(((x)))").is_ok());
        assert_eq!(deep("((((x))))"), Span::new(3, 4));
        assert!(ok("---x").is_ok());
        assert_eq!(deep("----x"), Span::new(3, 4));
        assert_eq!(deep("(-(-x))"), Span::new(3, 4));
        assert!(ok("a^b^c^d").is_ok());
        assert_eq!(deep("a^b^c^d^e"), Span::new(7, 8));
        assert!(ok("a+b+c+d").is_ok());
        assert_eq!(deep("a+b+c+d+e"), Span::new(0, 9));
        assert!(ok("(a)+(b)+(c)+(d)").is_ok());
        assert_eq!(deep("(a)+(b)+(c)+(d)+(e)"), Span::new(0, 19));
        assert!(ok("(((a)))+(((b)))").is_ok());
        assert_eq!(ok("y'''''").unwrap(), "(d5 y)");
        assert!(ok("((y')')'").is_ok());
        assert_eq!(deep("(((y')')')'"), Span::new(0, 11));
    }

    /// Inputs far deeper than the limit fail early, using no more stack than a small thread has.
    #[test]
    fn deep_inputs_do_not_overflow_a_small_stack() {
        let run = || {
            let n = 100_000;
            let parens = format!("let f = {}x{}", "(".repeat(n), ")".repeat(n));
            let signs = format!("let f = {}x", "-".repeat(n));
            let powers = format!("let f = x{}", "^x".repeat(n));
            let sums = format!("let f = x{}", "+x".repeat(n));
            let exps = format!("let f = x{}", "^-x".repeat(n));
            let sqrts = format!("let f = {}x{}", "sqrt(".repeat(n), ")".repeat(n));
            let unclosed = format!("let f = {}", "(".repeat(n));
            for src in [&parens, &signs, &powers, &sums, &exps, &sqrts, &unclosed] {
                let e = parse_program(src, &ParseLimits::default()).unwrap_err();
                assert_eq!(e.kind, ErrorKind::Limit, "{}", &src[..20]);
            }
            // With the limit lifted, parentheses alone still cannot deepen the
            // stack or the tree.
            let unlimited = ParseLimits { max_depth: usize::MAX, ..ParseLimits::default() };
            let e = parse_expr(&parens[8..], &unlimited).unwrap();
            assert_eq!(e.kind, ExprKind::Name("x".to_string()));
            let primes = format!("y{}", "'".repeat(n));
            let e = parse_expr(&primes, &ParseLimits::default()).unwrap();
            assert!(matches!(e.kind, ExprKind::Prime(_, 100_000)));
        };
        let thread = std::thread::Builder::new().stack_size(2 << 20).spawn(run).unwrap();
        thread.join().unwrap();
    }

    #[test]
    fn a_megabyte_parses_quickly() {
        let mut src = String::from("var r\nparam a, b\n");
        let line = "let f = (1 - 2*a/r)^2*(b^2 + 0.25*r^-3 - sqrt(a*b)*(r - a)') + ω*λ^(-1/2)*(1 + 2*I*a*b)\n # filler\n";
        while src.len() + line.len() < 990_000 {
            src.push_str(line);
        }
        src.push_str("ode f*y'' + y = 0\n");
        let started = std::time::Instant::now();
        let p = program(&src);
        let elapsed = started.elapsed();
        assert_eq!(p.statements.len(), src.matches("let f").count() + 3);
        assert!(elapsed.as_secs_f64() < 2.0, "took {elapsed:?}");
    }

    /// A xorshift generator, enough for shuffling tokens.
    struct Rng(u64);

    impl Rng {
        fn next(&mut self) -> u64 {
            self.0 ^= self.0 << 13;
            self.0 ^= self.0 >> 7;
            self.0 ^= self.0 << 17;
            self.0
        }
        fn below(&mut self, n: usize) -> usize {
            (self.next() % n as u64) as usize
        }
    }

    const ALPHABET: &[&str] = &[
        "x", "y", "r", "ω", "λ1", "a_b", "2", "0.5", "1e-3", ".5", "2.", "+", "-", "−", "*", "·", "/", "^", "=", "(", "(", ")", ")", "'", "′", "″",
        ",", ";", "\n", " ", "\t", "# c\n", "var", "param", "let", "ode", "unknown", "sqrt(", "sqrt", "I", "$", "é", "1.2.3", "\r\n", "²",
        "\u{200b}", "😀", ".", "_", "e",
    ];

    fn random_text(rng: &mut Rng) -> String {
        let mut s = String::new();
        match rng.below(3) {
            0 => s.push_str("ode "),
            1 => s.push_str("let f = "),
            _ => {}
        }
        for _ in 0..rng.below(24) {
            s.push_str(ALPHABET[rng.below(ALPHABET.len())]);
            if rng.below(3) == 0 {
                s.push(' ');
            }
        }
        s
    }

    /// A random expression following the grammar, with random spacing.
    fn random_expr(rng: &mut Rng, budget: usize) -> String {
        const ATOMS: &[&str] = &["x", "y", "ω", "2", "0.25", "1e-3", ".5", "I", "a_1"];
        const OPS: &[&str] = &["+", "-", "*", "/", "^", "−", "·"];
        let space = |rng: &mut Rng| if rng.below(3) == 0 { " " } else { "" };
        let mut s = String::new();
        if rng.below(5) == 0 {
            s.push_str(["-", "+", "−"][rng.below(3)]);
        }
        match rng.below(if budget == 0 { 1 } else { 4 }) {
            0 => s.push_str(ATOMS[rng.below(ATOMS.len())]),
            1 => s = format!("{s}({}{}{})", space(rng), random_expr(rng, budget - 1), space(rng)),
            2 => s = format!("{s}sqrt({})", random_expr(rng, budget - 1)),
            _ => {
                let op = OPS[rng.below(OPS.len())];
                let (a, b) = (random_expr(rng, budget / 2), random_expr(rng, budget / 2));
                let (sa, sb) = (space(rng), space(rng));
                s = format!("{s}{a}{sa}{op}{sb}{b}");
            }
        }
        for _ in 0..[0, 0, 0, 1, 2][rng.below(5)] {
            s.push_str(["'", "′"][rng.below(2)]);
        }
        s
    }

    /// Either a grammatical expression, sometimes with one token spliced in, or token soup.
    fn random_case(rng: &mut Rng) -> String {
        if rng.below(2) == 0 {
            return random_text(rng);
        }
        let mut s = random_expr(rng, 12);
        if rng.below(3) == 0 {
            let mut at = rng.below(s.len() + 1);
            while !s.is_char_boundary(at) {
                at -= 1;
            }
            s.insert_str(at, ALPHABET[rng.below(ALPHABET.len())]);
        }
        if rng.below(2) == 0 {
            s = format!("var x\node {s} = {}", random_expr(rng, 3));
        }
        s
    }

    fn check_statement_spans(src: &str, p: &Program) {
        for s in &p.statements {
            match s {
                Statement::Let { value, .. } => check_spans(src, value),
                Statement::Coordinate { rate, span, .. } => {
                    check_spans(src, rate);
                    assert!(rate.span.end == span.end);
                }
                Statement::Ode { lhs, rhs, span } => {
                    check_spans(src, lhs);
                    check_spans(src, rhs);
                    assert!(span.start <= lhs.span.start && rhs.span.end == span.end);
                }
                Statement::Var(_) | Statement::Param(_) | Statement::Unknown(_) => {}
            }
        }
    }

    /// Random token soup never panics; errors point inside the text; what
    /// parses has sane spans and survives printing and reparsing.
    #[test]
    fn random_inputs_never_panic_and_round_trip() {
        let mut rng = Rng(0x9E37_79B9_7F4A_7C15);
        let (mut parsed, mut exprs) = (0, 0);
        let tiny = ParseLimits { max_depth: 6, max_number_len: 3, ..ParseLimits::default() };
        for case in 0..20_000 {
            let src = random_case(&mut rng);
            let limits = if case % 5 == 0 { tiny.clone() } else { ParseLimits::default() };
            match parse_program(&src, &limits) {
                Ok(p) => {
                    parsed += 1;
                    check_statement_spans(&src, &p);
                }
                Err(e) => {
                    assert!(matches!(e.kind, ErrorKind::Syntax | ErrorKind::Limit), "{src:?}: {e:?}");
                    let span = e.span.expect("span");
                    assert!(span.start <= span.end && span.end <= src.len(), "{src:?}: {e:?}");
                    assert!(src.is_char_boundary(span.start) && src.is_char_boundary(span.end));
                    assert!(!e.message.is_empty());
                }
            }
            if let Ok(e) = parse_expr(&src, &limits) {
                exprs += 1;
                check_spans(&src, &e);
                let again = parse_expr(&print(&e), &ParseLimits { max_depth: 10_000, ..limits.clone() })
                    .unwrap_or_else(|err| panic!("{src:?} printed as {:?}: {err:?}", print(&e)));
                assert_eq!(sexp(&again), sexp(&e), "{src:?}");
            }
        }
        assert!(parsed > 2_000 && exprs > 2_000, "only {parsed} programs and {exprs} expressions parsed");
    }

    /// Random characters from all over Unicode, not just the token alphabet.
    #[test]
    fn random_characters_never_panic() {
        let mut rng = Rng(0x2545_F491_4F6C_DD1D);
        for _ in 0..5_000 {
            let len = rng.below(16);
            let src: String = (0..len)
                .filter_map(|_| match rng.below(4) {
                    0 => char::from_u32(rng.below(0x80) as u32),
                    1 => char::from_u32(rng.below(0x3000) as u32),
                    _ => char::from_u32(rng.below(0x11_0000) as u32),
                })
                .collect();
            if let Err(e) = parse_program(&src, &ParseLimits::default()) {
                let span = e.span.expect("span");
                assert!(src.is_char_boundary(span.start) && src.is_char_boundary(span.end) && span.end <= src.len());
            }
        }
    }
}
