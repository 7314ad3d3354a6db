//! The LaTeX reader: mathematics as physicists type it (the subset is
//! documented in `grammar/latex.md`) turned into the same [`Program`] as the
//! input language, with every span pointing into the LaTeX text.
//!
//! The text is cut into tokens, split into relations (at top-level commas,
//! `\quad`, `\qquad`, `\\` and line breaks that end a relation), and each
//! relation is read by recursive descent with a bounded depth. Letters are
//! single-letter names and juxtaposition is multiplication, as in LaTeX;
//! `\frac{d…}{d…}`, `d/dr`, `\partial_r` and primes are derivatives. A
//! relation whose left side is a lone name (or `f(r)`, a name of the
//! variable) is a definition and becomes a `let`; the one other relation is
//! the equation. The variable is the name derivatives are taken with
//! respect to (or the argument of the unknown, `R(r)`); every other name is
//! left for the lowering stage to take as a parameter.

use super::{BinOp, Expr, ExprKind, Func, Ident, ParseLimits, Program, Span, Statement};
use crate::error::{Error, ErrorKind, Result};
use std::collections::BTreeSet;

/// The deepest nesting of groups, fractions and powers read (the reader
/// recurses; LaTeX from papers nests a handful of levels).
const MAX_LATEX_DEPTH: usize = 200;

/// The Greek letters with their own names; `\var…` forms and `\ell` map to these.
pub const GREEK_LETTERS: &[&str] = &[
    "alpha",
    "beta",
    "gamma",
    "delta",
    "epsilon",
    "varepsilon",
    "zeta",
    "eta",
    "theta",
    "vartheta",
    "iota",
    "kappa",
    "lambda",
    "mu",
    "nu",
    "xi",
    "pi",
    "rho",
    "sigma",
    "tau",
    "upsilon",
    "phi",
    "varphi",
    "varpi",
    "varrho",
    "varsigma",
    "chi",
    "psi",
    "omega",
    "Gamma",
    "Delta",
    "Theta",
    "Lambda",
    "Xi",
    "Pi",
    "Sigma",
    "Upsilon",
    "Phi",
    "Psi",
    "Omega",
];

/// Words that, spelled by juxtaposed letters, surely meant something else.
const SPELLED_WORDS: &[&str] = &[
    "sqrt", "frac", "cdot", "left", "right", "partial", "hbar", "ell", "exp", "sin", "cos", "tan", "sinh", "cosh", "tanh", "sech", "coth", "csch",
    "cot", "csc", "sec", "log", "ln",
];

/// Commands that only size or space, dropped where they stand.
const IGNORED: &[&str] = &[
    "left",
    "right",
    "big",
    "Big",
    "bigg",
    "Bigg",
    "bigl",
    "bigr",
    "Bigl",
    "Bigr",
    "biggl",
    "biggr",
    "Biggl",
    "Biggr",
    "middle",
    "displaystyle",
    "textstyle",
    "nonumber",
    "notag",
    "limits",
];

/// Transcendental functions, named in the message that they are not read here.
const FUNCTIONS: &[&str] = &["log", "ln", "arctan", "arcsin", "arccos"];

#[derive(Clone, Debug, PartialEq)]
enum T {
    /// `\name` (letters).
    Cmd(String),
    Letter(char),
    Number,
    Open(char),
    Close(char),
    Caret,
    Under,
    Plus,
    Minus,
    Star,
    Slash,
    Equals,
    Comma,
    Prime(u32),
    /// A relation break: `\\`, or a newline (decided later).
    Break,
    Newline,
    Period,
}

#[derive(Clone, Debug)]
struct Tok {
    t: T,
    span: Span,
}

fn syntax(message: impl Into<String>, span: Span) -> Error {
    Error::new(ErrorKind::Syntax, message).at(span)
}

/// Cuts the text into tokens, dropping comments, spacing, math delimiters,
/// alignment marks, labels and environment markers.
fn tokens(src: &str) -> Result<Vec<Tok>> {
    let b = src.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let c = src[i..].chars().next().unwrap_or(' ');
        let w = c.len_utf8();
        let one = |t: T| Tok { t, span: Span::new(i, i + w) };
        match c {
            '%' => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
                continue;
            }
            '\n' => out.push(one(T::Newline)),
            c if c.is_whitespace() => {}
            '$' | '&' | '~' => {}
            '\\' => {
                let start = i + 1;
                let mut j = start;
                while j < b.len() && b[j].is_ascii_alphabetic() {
                    j += 1;
                }
                if j == start {
                    let Some(s) = src[start..].chars().next() else {
                        return Err(syntax("a lone '\\' at the end of the text", Span::new(i, i + 1)));
                    };
                    let span = Span::new(i, start + s.len_utf8());
                    i = span.end;
                    match s {
                        ',' | ';' | ':' | '!' | ' ' | '>' | '\n' | '[' | ']' => {}
                        '\\' => out.push(Tok { t: T::Break, span }),
                        '{' => out.push(Tok { t: T::Open('{'), span }),
                        '}' => out.push(Tok { t: T::Close('}'), span }),
                        '|' => {}
                        _ => return Err(syntax(format!("unknown LaTeX control symbol '\\{s}'"), span)),
                    }
                    continue;
                }
                let name = &src[start..j];
                let span = Span::new(i, j);
                i = j;
                match name {
                    n if IGNORED.contains(&n) => {
                        // `\left.` and `\right.` are invisible brackets.
                        let rest = &src[i..];
                        let trimmed = rest.trim_start();
                        if (n == "left" || n == "right") && trimmed.starts_with('.') {
                            i += rest.len() - trimmed.len() + 1;
                        }
                    }
                    "label" | "tag" | "begin" | "end" => {
                        // The braced argument goes with the command.
                        let rest = &src[i..];
                        let trimmed = rest.trim_start();
                        if trimmed.starts_with('{') {
                            let from = i + rest.len() - trimmed.len();
                            match src[from..].find('}') {
                                Some(k) => i = from + k + 1,
                                None => return Err(syntax(format!("unbalanced braces: '\\{name}{{' is not closed"), Span::new(from, from + 1))),
                            }
                        }
                    }
                    // Definitions are often written with ≡ or ≔.
                    "equiv" | "coloneqq" => out.push(Tok { t: T::Equals, span }),
                    _ => out.push(Tok { t: T::Cmd(name.to_string()), span }),
                }
                continue;
            }
            c if c.is_ascii_digit() => {
                let mut j = i;
                while j < b.len() && b[j].is_ascii_digit() {
                    j += 1;
                }
                if j + 1 < b.len() && b[j] == b'.' && b[j + 1].is_ascii_digit() {
                    j += 1;
                    while j < b.len() && b[j].is_ascii_digit() {
                        j += 1;
                    }
                }
                out.push(Tok { t: T::Number, span: Span::new(i, j) });
                i = j;
                continue;
            }
            c if c.is_alphabetic() => out.push(one(T::Letter(c))),
            '(' | '[' | '{' => out.push(one(T::Open(c))),
            ')' | ']' | '}' => out.push(one(T::Close(c))),
            '^' => out.push(one(T::Caret)),
            '_' => out.push(one(T::Under)),
            '+' => out.push(one(T::Plus)),
            '-' | '\u{2212}' => out.push(one(T::Minus)),
            '*' => out.push(one(T::Star)),
            '/' => out.push(one(T::Slash)),
            '=' => out.push(one(T::Equals)),
            ':' if src[i + 1..].starts_with('=') => {
                out.push(Tok { t: T::Equals, span: Span::new(i, i + 2) });
                i += 2;
                continue;
            }
            ',' => out.push(one(T::Comma)),
            '.' => out.push(one(T::Period)),
            '\'' | '\u{2032}' => {
                let mut n = 0;
                let mut j = i;
                while j < b.len() && (b[j] == b'\'') {
                    n += 1;
                    j += 1;
                }
                let (n, j) = if n == 0 { (1, i + w) } else { (n, j) };
                out.push(Tok { t: T::Prime(n), span: Span::new(i, j) });
                i = j;
                continue;
            }
            _ => return Err(syntax(format!("unexpected character '{}' in LaTeX", c.escape_debug()), Span::new(i, i + w))),
        }
        i += w;
    }
    Ok(out)
}

/// The closing character of an opening one.
fn closer(open: char) -> char {
    match open {
        '(' => ')',
        '[' => ']',
        _ => '}',
    }
}

/// Checks that brackets balance, reporting the first that does not.
fn check_balance(toks: &[Tok]) -> Result<()> {
    let mut stack: Vec<&Tok> = Vec::new();
    for t in toks {
        match t.t {
            T::Open(_) => stack.push(t),
            T::Close(c) => match stack.pop() {
                Some(o) => {
                    let T::Open(oc) = o.t else { unreachable!("only openings are pushed") };
                    // `\left[ … \right)` style half-open brackets are not used in ODEs.
                    if closer(oc) != c {
                        return Err(syntax(format!("unbalanced brackets: '{c}' closes '{oc}'"), t.span)
                            .note(format!("'{oc}' was opened here and needs '{}'", closer(oc))));
                    }
                }
                None => return Err(syntax(format!("unbalanced brackets: '{c}' closes nothing"), t.span)),
            },
            _ => {}
        }
    }
    match stack.pop() {
        Some(o) => {
            let T::Open(oc) = o.t else { unreachable!("only openings are pushed") };
            Err(syntax(format!("unbalanced brackets: '{oc}' is never closed"), o.span))
        }
        None => Ok(()),
    }
}

/// True for tokens after which (or before which) a line break cannot end a relation.
fn binary_like(t: &T) -> bool {
    matches!(t, T::Plus | T::Minus | T::Star | T::Slash | T::Equals | T::Caret | T::Under) || matches!(t, T::Cmd(c) if c == "cdot" || c == "times")
}

/// Splits the token list into relations.
fn relations(toks: Vec<Tok>) -> Vec<Vec<Tok>> {
    let mut out: Vec<Vec<Tok>> = Vec::new();
    let mut cur: Vec<Tok> = Vec::new();
    let mut depth = 0usize;
    let n = toks.len();
    let mut k = 0;
    let next_real = |k: usize, toks: &[Tok]| toks[k..].iter().find(|t| t.t != T::Newline).map(|t| t.t.clone());
    while k < n {
        let t = &toks[k];
        let separator = depth == 0
            && match &t.t {
                T::Comma | T::Break => true,
                T::Cmd(c) if c == "quad" || c == "qquad" => true,
                T::Cmd(c) if c == "text" || c == "mathrm" || c == "textrm" => {
                    // `\text{where}` between relations.
                    is_word_group(&toks[k + 1..])
                }
                T::Newline => {
                    let has_eq = cur.iter().any(|t| t.t == T::Equals);
                    let prev_ok = cur.last().is_some_and(|p| !binary_like(&p.t));
                    let next_ok = next_real(k + 1, &toks).is_some_and(|t| !binary_like(&t));
                    has_eq && prev_ok && next_ok
                }
                _ => false,
            };
        if separator {
            if let T::Cmd(_) = t.t {
                if is_word_group(&toks[k + 1..]) {
                    // Skip the word's group.
                    let close = toks[k + 1..].iter().position(|t| matches!(t.t, T::Close(_))).unwrap_or(0);
                    k += close + 2;
                    if !cur.is_empty() {
                        out.push(std::mem::take(&mut cur));
                    }
                    continue;
                }
            }
            if !cur.is_empty() {
                out.push(std::mem::take(&mut cur));
            }
            k += 1;
            continue;
        }
        match t.t {
            T::Open(_) => depth += 1,
            T::Close(_) => depth = depth.saturating_sub(1),
            _ => {}
        }
        if t.t != T::Newline && !matches!(&t.t, T::Cmd(c) if c == "quad" || c == "qquad") {
            cur.push(t.clone());
        }
        k += 1;
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    // A full stop ends a sentence, not an expression.
    for r in &mut out {
        while r.last().is_some_and(|t| t.t == T::Period) {
            r.pop();
        }
    }
    out.retain(|r| !r.is_empty());
    out
}

/// True when the tokens start with `{word}` of two or more letters that reads as prose.
fn is_word_group(toks: &[Tok]) -> bool {
    if toks.first().map(|t| &t.t) != Some(&T::Open('{')) {
        return false;
    }
    let letters: String =
        toks[1..].iter().take_while(|t| matches!(t.t, T::Letter(_))).map(|t| if let T::Letter(c) = t.t { c } else { ' ' }).collect();
    matches!(letters.as_str(), "where" | "with" | "and" | "for" | "if")
        || toks[1..].iter().position(|t| matches!(t.t, T::Close(_))).is_some_and(|p| {
            p > 0 && toks[1..=p].iter().all(|t| matches!(t.t, T::Letter(_))) && {
                // Letters separated by spaces in the source: prose.
                toks[1..=p].windows(2).any(|w| w[0].span.end != w[1].span.start)
            }
        })
}

/// An expression with the height of its tree.
struct Node {
    expr: Expr,
    height: usize,
}

/// Where a derivative operator is waiting for its operand.
struct DerivOp {
    wrt: Ident,
    order: u32,
    start: usize,
}

/// The recursive-descent reader of one relation.
struct Reader<'a> {
    src: &'a str,
    toks: &'a [Tok],
    pos: usize,
    depth: usize,
    limits: &'a ParseLimits,
    /// Spans of products written as `f(x)`: applications if x is the variable.
    applications: &'a mut Vec<Span>,
}

impl<'a> Reader<'a> {
    fn peek(&self) -> Option<&'a Tok> {
        self.toks.get(self.pos)
    }
    fn end_span(&self) -> Span {
        let end = self.toks.last().map_or(0, |t| t.span.end);
        Span::new(end, end)
    }
    fn here(&self) -> Span {
        self.peek().map_or_else(|| self.end_span(), |t| t.span)
    }
    fn text(&self, s: Span) -> &'a str {
        &self.src[s.start..s.end]
    }

    fn node(&self, kind: ExprKind, span: Span, child: usize) -> Result<Node> {
        let height = child + 1;
        if height > self.limits.max_depth {
            return Err(Error::new(ErrorKind::Limit, format!("expression is nested more than {} levels deep", self.limits.max_depth)).at(span));
        }
        Ok(Node { expr: Expr { kind, span }, height })
    }

    fn binary(&self, op: BinOp, a: Node, b: Node) -> Result<Node> {
        let span = a.expr.span.to(b.expr.span);
        let h = a.height.max(b.height);
        self.node(ExprKind::Binary(op, Box::new(a.expr), Box::new(b.expr)), span, h)
    }

    fn enter(&mut self, at: Span) -> Result<()> {
        self.depth += 1;
        if self.depth > MAX_LATEX_DEPTH.min(self.limits.max_depth) {
            return Err(Error::new(
                ErrorKind::Limit,
                format!("LaTeX is nested more than {} levels deep", MAX_LATEX_DEPTH.min(self.limits.max_depth)),
            )
            .at(at));
        }
        Ok(())
    }

    /// expr = [sign] term { (+|-) term }
    fn expr(&mut self) -> Result<Node> {
        let first = self.signed(Self::term)?;
        self.chain(
            first,
            |t| match t {
                T::Plus => Some(BinOp::Add),
                T::Minus => Some(BinOp::Sub),
                _ => None,
            },
            |r| r.signed(Self::term),
        )
    }

    /// term = product { (* | \cdot | \times | /) [sign] product }
    fn term(&mut self) -> Result<Node> {
        let first = self.product()?;
        self.chain(
            first,
            |t| match t {
                T::Star => Some(BinOp::Mul),
                T::Cmd(c) if c == "cdot" || c == "times" => Some(BinOp::Mul),
                T::Slash => Some(BinOp::Div),
                _ => None,
            },
            |r| r.signed(Self::product),
        )
    }

    /// Left-associative operators between operands.
    fn chain(&mut self, first: Node, op_of: fn(&T) -> Option<BinOp>, operand: fn(&mut Self) -> Result<Node>) -> Result<Node> {
        let mut acc = first;
        while let Some(op) = self.peek().and_then(|t| op_of(&t.t)) {
            self.pos += 1;
            let rhs = operand(self)?;
            acc = self.binary(op, acc, rhs)?;
        }
        Ok(acc)
    }

    /// An operand with an optional leading sign.
    fn signed(&mut self, operand: fn(&mut Self) -> Result<Node>) -> Result<Node> {
        match self.peek().map(|t| (&t.t, t.span)) {
            Some((T::Minus, s)) => {
                self.pos += 1;
                let inner = operand(self)?;
                let span = s.to(inner.expr.span);
                self.node(ExprKind::Neg(Box::new(inner.expr)), span, inner.height)
            }
            Some((T::Plus, _)) => {
                self.pos += 1;
                operand(self)
            }
            _ => operand(self),
        }
    }

    /// True when the next token can start a factor (for juxtaposition).
    fn starts_factor(&self) -> bool {
        match self.peek().map(|t| &t.t) {
            Some(T::Letter(_) | T::Number | T::Open(_)) => true,
            Some(T::Cmd(c)) => !matches!(c.as_str(), "cdot" | "times" | "quad" | "qquad"),
            _ => false,
        }
    }

    /// product = factor { factor }: juxtaposition, tighter than `/` and `\cdot`.
    fn product(&mut self) -> Result<Node> {
        let first_at = self.pos;
        let mut acc = self.factor()?;
        while self.starts_factor() {
            let rhs = self.factor()?;
            acc = self.binary(BinOp::Mul, acc, rhs)?;
        }
        self.check_spelled(first_at, self.pos)?;
        Ok(acc)
    }

    /// Letters written side by side that spell a Greek letter or a function
    /// name were surely not meant as a product of single letters.
    fn check_spelled(&self, from: usize, to: usize) -> Result<()> {
        let mut k = from;
        while k < to {
            if matches!(&self.toks[k].t, T::Cmd(c) if matches!(c.as_str(), "mathrm" | "text" | "textrm" | "operatorname" | "mathit" | "mathcal" | "mathbf" | "mathsf" | "mathtt"))
            {
                // An upright word is one name: skip its group.
                if self.toks.get(k + 1).map(|t| &t.t) == Some(&T::Open('{')) {
                    k = self.group_range(k + 1).map_or(k + 1, |(_, close)| close + 1);
                } else {
                    k += 2;
                }
                continue;
            }
            if !matches!(self.toks[k].t, T::Letter(_)) {
                k += 1;
                continue;
            }
            let mut j = k + 1;
            while j < to && matches!(self.toks[j].t, T::Letter(_)) && self.toks[j].span.start == self.toks[j - 1].span.end {
                j += 1;
            }
            let span = self.toks[k].span.to(self.toks[j - 1].span);
            let word = self.text(span);
            if j - k >= 2 && (GREEK_LETTERS.contains(&word) || SPELLED_WORDS.contains(&word)) {
                let shown: Vec<String> = word.chars().map(String::from).collect();
                let hint = if FUNCTIONS.contains(&word)
                    || GREEK_LETTERS.contains(&word)
                    || word == "sqrt"
                    || word == "frac"
                    || word == "ell"
                    || word == "hbar"
                {
                    format!("write \\{word} for the symbol, or \\mathrm{{{word}}} for a name of several letters")
                } else {
                    format!("write \\mathrm{{{word}}} for a name of several letters")
                };
                return Err(syntax(format!("ambiguous juxtaposition '{word}': LaTeX reads it as the product {}", shown.join("·")), span).note(hint));
            }
            k = j;
        }
        Ok(())
    }

    /// factor = postfix [ ^ superscript ], or a derivative operator applied to the next factor.
    fn factor(&mut self) -> Result<Node> {
        let start = self.here();
        self.enter(start)?;
        let r = self.factor_inner();
        self.depth -= 1;
        r
    }

    fn factor_inner(&mut self) -> Result<Node> {
        if let Some(op) = self.derivative_operator()? {
            let operand = self.factor()?;
            let span = Span::new(op.start, operand.expr.span.end);
            return self.node(ExprKind::Derivative { body: Box::new(operand.expr), wrt: op.wrt, order: op.order }, span, operand.height);
        }
        let mut base = self.postfix()?;
        if let Some(Tok { t: T::Caret, .. }) = self.peek() {
            self.pos += 1;
            // `^{\prime}` and `^{\prime\prime}` are primes.
            if let Some(n) = self.prime_superscript() {
                let span = base.expr.span.to(self.toks[self.pos - 1].span);
                base = self.node(ExprKind::Prime(Box::new(base.expr), n), span, base.height)?;
                return self.application(base);
            }
            let exp = self.superscript()?;
            base = self.binary(BinOp::Pow, base, exp)?;
            if let Some(t) = self.peek().filter(|t| t.t == T::Caret) {
                return Err(syntax("double superscript: write a^{b c} or (a^b)^c", t.span));
            }
        }
        Ok(base)
    }

    /// `\prime` or `{\prime…}` after a `^`: the number of primes.
    fn prime_superscript(&mut self) -> Option<u32> {
        let is_prime = |t: Option<&Tok>| matches!(t.map(|t| &t.t), Some(T::Cmd(c)) if c == "prime");
        if is_prime(self.peek()) {
            self.pos += 1;
            return Some(1);
        }
        if self.peek().map(|t| &t.t) == Some(&T::Open('{')) {
            let mut k = self.pos + 1;
            let mut n = 0;
            while is_prime(self.toks.get(k)) {
                n += 1;
                k += 1;
            }
            if n > 0 && self.toks.get(k).map(|t| &t.t) == Some(&T::Close('}')) {
                self.pos = k + 1;
                return Some(n);
            }
        }
        None
    }

    /// A superscript: a braced group, or one token (`r^2`, `r^n`, `r^\nu`).
    fn superscript(&mut self) -> Result<Node> {
        match self.peek().map(|t| (&t.t, t.span)) {
            Some((T::Open('{'), _)) => self.group(),
            Some((T::Number, s)) => {
                // LaTeX takes a single digit: r^23 is r^2·3.
                self.pos += 1;
                let text = self.text(s);
                let first = Span::new(s.start, s.start + 1);
                if text.len() > 1 {
                    return Err(syntax(format!("LaTeX reads '^{text}' as '^{}' followed by '{}'", &text[..1], &text[1..]), s)
                        .note(format!("write ^{{{text}}}")));
                }
                Ok(Node { expr: Expr { kind: ExprKind::Number(self.text(first).to_string()), span: first }, height: 0 })
            }
            Some((T::Minus, s)) => Err(syntax("a signed exponent needs braces", s).note("write r^{-2}")),
            Some(_) => self.atom(),
            None => Err(syntax("expected an exponent after '^'", self.end_span())),
        }
    }

    /// `{ expr }`
    fn group(&mut self) -> Result<Node> {
        let open = self.here();
        self.pos += 1;
        let mut inner = self.expr()?;
        match self.peek() {
            Some(Tok { t: T::Close('}'), span }) => {
                inner.expr.span = open.to(*span);
                self.pos += 1;
                Ok(inner)
            }
            Some(t) => Err(self.unexpected(t)),
            None => Err(syntax("unbalanced braces: '{' is never closed", open)),
        }
    }

    fn unexpected(&self, t: &Tok) -> Error {
        let text = self.text(t.span);
        match &t.t {
            T::Cmd(c) => unknown_command(c, t.span),
            T::Equals => syntax("unexpected second '=' in one relation", t.span).note("separate relations with a comma, \\quad or a new line"),
            _ => syntax(format!("unexpected '{text}'"), t.span),
        }
    }

    /// postfix = atom { ' } [ (var) ]
    fn postfix(&mut self) -> Result<Node> {
        let mut a = self.atom()?;
        if let Some(Tok { t: T::Prime(n), span }) = self.peek() {
            let span = a.expr.span.to(*span);
            self.pos += 1;
            a = self.node(ExprKind::Prime(Box::new(a.expr), *n), span, a.height)?;
        }
        self.application(a)
    }

    /// A name (or primed name) directly followed by `(` one name `)`:
    /// remembered, for it is `f(r)` when r turns out to be the variable.
    fn application(&mut self, a: Node) -> Result<Node> {
        let head_is_name = match &a.expr.kind {
            ExprKind::Name(_) => true,
            ExprKind::Prime(inner, _) => matches!(inner.kind, ExprKind::Name(_)),
            _ => false,
        };
        if !head_is_name || self.peek().map(|t| &t.t) != Some(&T::Open('(')) {
            return Ok(a);
        }
        let mut arg = self.atom()?;
        if matches!(arg.expr.kind, ExprKind::Name(_)) {
            let app = self.binary(BinOp::Mul, a, arg)?;
            self.applications.push(app.expr.span);
            return Ok(app);
        }
        // Not `f(r)`: a product, whose power belongs to the bracket alone
        // (D(1 + x)^2 is D·(1 + x)², as in print).
        if self.peek().is_some_and(|t| t.t == T::Caret) && !self.caret_is_prime() {
            self.pos += 1;
            let exp = self.superscript()?;
            arg = self.binary(BinOp::Pow, arg, exp)?;
            if let Some(t) = self.peek().filter(|t| t.t == T::Caret) {
                return Err(syntax("double superscript: write a^{b c} or (a^b)^c", t.span));
            }
        }
        self.binary(BinOp::Mul, a, arg)
    }

    /// Whether the `^` at the cursor opens a prime superscript (`^{\prime}`).
    fn caret_is_prime(&self) -> bool {
        let at = |k: usize| self.toks.get(self.pos + k).map(|t| &t.t);
        let prime = |t: Option<&T>| matches!(t, Some(T::Cmd(c)) if c == "prime");
        prime(at(1)) || (at(1) == Some(&T::Open('{')) && prime(at(2)))
    }

    /// A name: a letter or a Greek command, with a subscript as part of it.
    fn name_at(&mut self, base: String, span: Span) -> Result<Node> {
        let mut name = greek_name(&base).to_string();
        let mut span = span;
        if let Some(Tok { t: T::Under, .. }) = self.peek() {
            self.pos += 1;
            let (sub, end) = self.subscript()?;
            name = format!("{name}_{sub}");
            span = span.to(end);
        }
        Ok(Node { expr: Expr { kind: ExprKind::Name(name), span }, height: 0 })
    }

    /// A subscript's text as part of a name: letters and digits as written,
    /// `+` as `plus`, `-` as `minus`, `*` as `star`.
    fn subscript(&mut self) -> Result<(String, Span)> {
        let piece = |t: &Tok, src: &str| -> Option<String> {
            Some(match &t.t {
                T::Letter(_) | T::Number => src[t.span.start..t.span.end].to_string(),
                T::Plus => "plus".into(),
                T::Minus => "minus".into(),
                T::Star => "star".into(),
                T::Cmd(c) if c == "ast" || c == "star" => "star".into(),
                T::Cmd(c) if GREEK_LETTERS.contains(&c.as_str()) => greek_name(c).to_string(),
                _ => return None,
            })
        };
        let Some(t) = self.peek() else { return Err(syntax("expected a subscript after '_'", self.end_span())) };
        if t.t == T::Open('{') {
            // A braced subscript may hold a subscripted name itself
            // (`\partial_{r_*}`, `\partial_{r_{*}}`): its `_` kept, the
            // inner braces dropped, so that it names what `r_*` names.
            let open = t.span;
            let (mut k, mut depth, mut text) = (self.pos + 1, 0usize, String::new());
            let bad = "a subscript is part of a name: letters, digits, +, - or *";
            // A font command (`r_{\rm h}`, `r_{\mathrm{h}}`) only styles the letters.
            let style = |t: &T| matches!(t, T::Cmd(c) if matches!(c.as_str(), "rm" | "mathrm" | "text" | "textrm" | "mathit" | "it"));
            let mut styled = false;
            loop {
                let Some(t) = self.toks.get(k) else { return Err(syntax("unbalanced braces: '{' is never closed", open)) };
                if style(&t.t) {
                    styled = true;
                    k += 1;
                    continue;
                }
                match &t.t {
                    T::Close('}') if depth == 0 => break,
                    T::Close('}') => depth -= 1,
                    T::Open('{') if !text.is_empty() || styled => depth += 1,
                    T::Under if !text.is_empty() && !text.ends_with('_') => text.push('_'),
                    _ => match piece(t, self.src) {
                        Some(p) => text.push_str(&p),
                        None => return Err(syntax(bad, t.span)),
                    },
                }
                k += 1;
            }
            let close = self.toks[k].span;
            if text.is_empty() || text.ends_with('_') || depth != 0 {
                return Err(syntax(if text.is_empty() { "an empty subscript" } else { bad }, open.to(close)));
            }
            self.pos = k + 1;
            return Ok((text, close));
        }
        match piece(t, self.src) {
            Some(p) => {
                self.pos += 1;
                // A number subscript is one digit in LaTeX.
                Ok((if t.t == T::Number { p[..1].to_string() } else { p }, t.span))
            }
            None => Err(syntax("a subscript is part of a name: letters, digits, +, - or *", t.span)),
        }
    }

    fn atom(&mut self) -> Result<Node> {
        let Some(t) = self.peek() else {
            return Err(syntax("expected an expression", self.end_span()));
        };
        let span = t.span;
        match &t.t {
            T::Number => {
                self.pos += 1;
                Ok(Node { expr: Expr { kind: ExprKind::Number(self.text(span).to_string()), span }, height: 0 })
            }
            T::Letter(c) => {
                self.pos += 1;
                if let Some(d) = self.leibniz_slash(self.pos - 1)? {
                    return Ok(d);
                }
                if *c == 'i' && self.peek().map(|t| &t.t) != Some(&T::Under) {
                    return Ok(Node { expr: Expr { kind: ExprKind::Imag, span }, height: 0 });
                }
                if *c == 'e' && self.peek().map(|t| &t.t) == Some(&T::Caret) {
                    // Euler's number: e^{…} is exp(…).
                    self.pos += 1;
                    let arg = self.superscript()?;
                    let s = span.to(arg.expr.span);
                    return self.node(ExprKind::Call(Func::Exp, Box::new(arg.expr)), s, arg.height);
                }
                self.name_at(c.to_string(), span)
            }
            T::Open(c) => {
                let c = *c;
                let open = span;
                self.pos += 1;
                self.enter(open)?;
                let inner = self.expr();
                self.depth -= 1;
                let mut inner = inner?;
                match self.peek() {
                    Some(Tok { t: T::Close(d), span }) if *d == closer(c) => {
                        inner.expr.span = open.to(*span);
                        self.pos += 1;
                        Ok(inner)
                    }
                    Some(t) => Err(self.unexpected(t)),
                    None => Err(syntax(format!("unbalanced brackets: '{c}' is never closed"), open)),
                }
            }
            T::Cmd(name) => {
                let name = name.clone();
                let at = self.pos;
                self.pos += 1;
                self.command(&name, span, at)
            }
            T::Minus => Err(syntax("a sign inside a product needs brackets", span).note("write a\\,(-b)")),
            _ => Err(self.unexpected(t)),
        }
    }

    /// A command at token `at` (already consumed).
    fn command(&mut self, name: &str, span: Span, at: usize) -> Result<Node> {
        match name {
            "frac" | "dfrac" | "tfrac" => self.fraction(span),
            "sqrt" => {
                if self.peek().map(|t| &t.t) == Some(&T::Open('[')) {
                    let k = self.pos;
                    let ok = matches!(self.toks.get(k + 1), Some(t) if self.text(t.span) == "2")
                        && self.toks.get(k + 2).map(|t| &t.t) == Some(&T::Close(']'));
                    if !ok {
                        return Err(syntax("only square roots are read: \\sqrt{…} or \\sqrt[2]{…}", self.here()));
                    }
                    self.pos += 3;
                }
                if self.peek().map(|t| &t.t) != Some(&T::Open('{')) {
                    let inner = self.atom()?;
                    let s = span.to(inner.expr.span);
                    return self.node(ExprKind::Sqrt(Box::new(inner.expr)), s, inner.height);
                }
                let inner = self.group()?;
                let s = span.to(inner.expr.span);
                self.node(ExprKind::Sqrt(Box::new(inner.expr)), s, inner.height)
            }
            "ell" => self.name_at("l".into(), span),
            "varepsilon" | "epsilon" => self.name_at("epsilon".into(), span),
            "vartheta" => self.name_at("theta".into(), span),
            "varphi" => self.name_at("phi".into(), span),
            "hbar" => self.name_at("hbar".into(), span),
            g if GREEK_LETTERS.contains(&g) => self.name_at(g.to_string(), span),
            "mathrm" | "text" | "textrm" | "operatorname" | "mathit" | "mathcal" | "mathbf" | "mathsf" | "mathtt" => {
                let (word, end) = self.word()?;
                if word == "d" {
                    if let Some(d) = self.leibniz_slash(at)? {
                        return Ok(d);
                    }
                }
                if word == "i" {
                    return Ok(Node { expr: Expr { kind: ExprKind::Imag, span: span.to(end) }, height: 0 });
                }
                if word == "e" && self.peek().map(|t| &t.t) == Some(&T::Caret) {
                    self.pos += 1;
                    let arg = self.superscript()?;
                    let s = span.to(arg.expr.span);
                    return self.node(ExprKind::Call(Func::Exp, Box::new(arg.expr)), s, arg.height);
                }
                if let Some(f) = Func::of(&word) {
                    return self.function(f, span.to(end));
                }
                self.name_at(word, span.to(end))
            }
            f if Func::of(f).is_some() => self.function(Func::of(f).expect("checked"), span),
            f if FUNCTIONS.contains(&f) => Err(transcendental(&format!("\\{f}"), span)),
            "prime" => Err(syntax("a prime goes in a superscript: R^{\\prime}, or write R'", span)),
            _ => Err(unknown_command(name, span)),
        }
    }

    /// `\cosh^2(\alpha x)`, `\cos 2z`, `\exp(…)`: a function with an optional
    /// power written on it, of a bracketed argument or of the product after it.
    fn function(&mut self, f: Func, span: Span) -> Result<Node> {
        let mut power = None;
        if self.peek().map(|t| &t.t) == Some(&T::Caret) {
            self.pos += 1;
            power = Some(self.superscript()?);
        }
        if !self.starts_factor() {
            return Err(syntax(format!("\\{} needs an argument", f.name()), span));
        }
        let arg = if self.peek().map(|t| &t.t) == Some(&T::Open('(')) { self.atom()? } else { self.function_argument()? };
        let s = span.to(arg.expr.span);
        let call = self.node(ExprKind::Call(f, Box::new(arg.expr)), s, arg.height)?;
        match power {
            Some(p) => self.binary(BinOp::Pow, call, p),
            None => Ok(call),
        }
    }

    /// The argument of a function written without parentheses: its first
    /// factor, then the numbers, letters and Greek letters juxtaposed to it
    /// (`\sin 2\theta`, `\cos\omega t`, `\sinh kx`), as physicists read
    /// it. It stops at anything else — a fraction, a derivative, another
    /// function, a bracket — and before a letter that carries a prime or an
    /// argument of its own (`\sin\theta\,S'`, `\sin\theta\frac{dS}{d\theta}`,
    /// `\sin\theta\cos\theta` are products).
    fn function_argument(&mut self) -> Result<Node> {
        let first_at = self.pos;
        let mut acc = self.factor()?;
        loop {
            let simple = match self.peek().map(|t| &t.t) {
                Some(T::Number | T::Letter(_)) => true,
                Some(T::Cmd(c)) => GREEK_LETTERS.contains(&c.as_str()) || matches!(c.as_str(), "ell" | "hbar"),
                _ => false,
            };
            // A letter with a prime or a bracket after it is an unknown or
            // a function of its own, not part of the argument.
            let applied = matches!(self.toks.get(self.pos + 1).map(|t| &t.t), Some(T::Prime(_) | T::Open('(')));
            // A spacing command (`\sin^2 x\, y`) ends the argument as it is typeset.
            let spaced = match (self.pos.checked_sub(1).and_then(|k| self.toks.get(k)), self.toks.get(self.pos)) {
                (Some(a), Some(b)) if a.span.end <= b.span.start => self.src[a.span.end..b.span.start].contains('\\'),
                _ => false,
            };
            if !simple || applied || spaced {
                break;
            }
            let rhs = self.factor()?;
            acc = self.binary(BinOp::Mul, acc, rhs)?;
        }
        self.check_spelled(first_at, self.pos)?;
        Ok(acc)
    }

    /// The letters of `\mathrm{…}` and its kin (or one letter after `\mathrm `).
    fn word(&mut self) -> Result<(String, Span)> {
        let Some(t) = self.peek() else { return Err(syntax("expected '{' and a name", self.end_span())) };
        if let T::Letter(c) = t.t {
            self.pos += 1;
            return Ok((c.to_string(), t.span));
        }
        if t.t != T::Open('{') {
            return Err(syntax("expected '{' and a name", t.span));
        }
        let src = self.src;
        let open = t.span;
        let (word, close) = self.braced_word(
            |t| match &t.t {
                T::Letter(c) => Some(c.to_string()),
                T::Number => Some(src[t.span.start..t.span.end].to_string()),
                _ => None,
            },
            "an upright name holds letters and digits only",
            "an empty name",
        )?;
        if !word.starts_with(char::is_alphabetic) {
            return Err(syntax("an upright name starts with a letter", open.to(close)));
        }
        Ok((word, close))
    }

    /// The text of a braced group at the current `{`, each token turned into
    /// text by `piece`; returns it with the closing brace's span.
    fn braced_word(&mut self, piece: impl Fn(&Tok) -> Option<String>, bad: &str, empty: &str) -> Result<(String, Span)> {
        let open = self.here();
        let mut k = self.pos + 1;
        let mut text = String::new();
        while let Some(t) = self.toks.get(k) {
            if t.t == T::Close('}') {
                break;
            }
            match piece(t) {
                Some(p) => text.push_str(&p),
                None => return Err(syntax(bad, t.span)),
            }
            k += 1;
        }
        let Some(close) = self.toks.get(k) else { return Err(syntax("unbalanced braces: '{' is never closed", open)) };
        if text.is_empty() {
            return Err(syntax(empty, open.to(close.span)));
        }
        self.pos = k + 1;
        Ok((text, close.span))
    }

    /// The token range of a braced group starting at `k` (its `{`): (inner start, close index).
    fn group_range(&self, k: usize) -> Result<(usize, usize)> {
        let Some(t) = self.toks.get(k) else { return Err(syntax("expected '{'", self.end_span())) };
        if t.t != T::Open('{') {
            return Err(syntax(format!("expected '{{', found '{}'", self.text(t.span)), t.span).note("write \\frac{a}{b}"));
        }
        let mut depth = 0usize;
        for (j, u) in self.toks.iter().enumerate().skip(k) {
            match u.t {
                T::Open(_) => depth += 1,
                T::Close(_) => {
                    depth -= 1;
                    if depth == 0 {
                        return Ok((k + 1, j));
                    }
                }
                _ => {}
            }
        }
        Err(syntax("unbalanced braces: '{' is never closed", t.span))
    }

    /// Whether tokens `k..end` begin with a differential `d`, `\mathrm{d}` or
    /// `\partial`; returns the index after it.
    fn differential(&self, k: usize, end: usize) -> Option<usize> {
        let t = self.toks.get(k).filter(|_| k < end)?;
        match &t.t {
            T::Letter('d') => Some(k + 1),
            T::Cmd(c) if c == "partial" => Some(k + 1),
            T::Cmd(c) if matches!(c.as_str(), "mathrm" | "text" | "operatorname") => {
                let a = self.toks.get(k + 1)?;
                if a.t == T::Letter('d') {
                    return Some(k + 2);
                }
                let (b, c2) = (self.toks.get(k + 2)?, self.toks.get(k + 3)?);
                (a.t == T::Open('{') && b.t == T::Letter('d') && c2.t == T::Close('}')).then_some(k + 4)
            }
            _ => None,
        }
    }

    /// `^n` or `^{n}` at `k` (before `end`): the order and the index after it.
    fn order_at(&self, k: usize, end: usize) -> Option<(u32, usize)> {
        if k >= end || self.toks.get(k)?.t != T::Caret {
            return None;
        }
        let t = self.toks.get(k + 1)?;
        if t.t == T::Number {
            return Some((self.text(t.span)[..1].parse().ok()?, k + 2));
        }
        if t.t == T::Open('{') && self.toks.get(k + 2)?.t == T::Number && self.toks.get(k + 3)?.t == T::Close('}') {
            return Some((self.text(self.toks[k + 2].span).parse().ok()?, k + 4));
        }
        None
    }

    /// The variable of a lower differential: `d r`, `dr^2`, `d r_*`,
    /// `d\omega` in tokens `k..end`. Returns it with its order and the index after.
    fn lower_differential(&mut self, k: usize, end: usize) -> Result<Option<(Ident, u32, usize)>> {
        let Some(after_d) = self.differential(k, end) else { return Ok(None) };
        let Some(t) = self.toks.get(after_d).filter(|_| after_d < end) else { return Ok(None) };
        let base = match &t.t {
            T::Letter(c) => c.to_string(),
            T::Cmd(c) if GREEK_LETTERS.contains(&c.as_str()) => c.clone(),
            _ => return Ok(None),
        };
        let save = self.pos;
        self.pos = after_d + 1;
        let name = self.name_at(base, t.span)?;
        let mut j = self.pos;
        self.pos = save;
        let ExprKind::Name(n) = name.expr.kind else { return Ok(None) };
        let mut order = 1;
        if let Some((o, after)) = self.order_at(j, end) {
            order = o;
            j = after;
        }
        Ok(Some((Ident { name: n, span: name.expr.span }, order, j)))
    }

    /// `\frac{a}{b}`, or a derivative `\frac{d^2R}{dr^2}` / `\frac{d}{dr}` (an operator on the next factor).
    fn fraction(&mut self, span: Span) -> Result<Node> {
        // `\frac14`: LaTeX takes one digit for each argument.
        if let Some(t) = self.peek().filter(|t| t.t == T::Number && t.span.end - t.span.start == 2) {
            let s = t.span;
            if self.text(s).bytes().all(|b| b.is_ascii_digit()) {
                self.pos += 1;
                let digit = |k: usize| Expr {
                    kind: ExprKind::Number(self.text(Span::new(s.start + k, s.start + k + 1)).to_string()),
                    span: Span::new(s.start + k, s.start + k + 1),
                };
                let (num, den) = (Node { expr: digit(0), height: 0 }, Node { expr: digit(1), height: 0 });
                let mut out = self.binary(BinOp::Div, num, den)?;
                out.expr.span = span.to(s);
                return Ok(out);
            }
        }
        let (ns, ne) = self.group_range(self.pos)?;
        let (ds, de) = self.group_range(ne + 1)?;
        if let (Some(after_d), Some((wrt, below, end))) = (self.differential(ns, ne), self.lower_differential(ds, de)?) {
            if end == de {
                let (above, body_start) = self.order_at(after_d, ne).unwrap_or((1, after_d));
                if above != below {
                    return Err(syntax(
                        format!("the orders of the derivative do not match: {above} above, {below} below"),
                        span.to(self.toks[de].span),
                    ));
                }
                let whole = span.to(self.toks[de].span);
                if body_start == ne {
                    // `\frac{d}{dr}`: applies to the next factor.
                    self.pos = de + 1;
                    if !self.starts_factor() {
                        return Err(syntax(format!("\\frac{{d}}{{d{}}} needs something to differentiate after it", wrt.name), whole)
                            .note("an operator in brackets applied to the unknown, [d²/dr² + ω² − V]Ψ, is not read: write it term by term, \\frac{d^2\\Psi}{dr^2} + (\\omega^2 - V)\\Psi = 0"));
                    }
                    let operand = self.factor()?;
                    let s = whole.to(operand.expr.span);
                    return self.node(ExprKind::Derivative { body: Box::new(operand.expr), wrt, order: above }, s, operand.height);
                }
                let body = self.sub_expr(body_start, ne)?;
                self.pos = de + 1;
                return self.node(ExprKind::Derivative { body: Box::new(body.expr), wrt, order: above }, whole, body.height);
            }
        }
        let num = self.sub_expr(ns, ne)?;
        let den = self.sub_expr(ds, de)?;
        self.pos = de + 1;
        let mut n = self.binary(BinOp::Div, num, den)?;
        n.expr.span = span.to(self.toks[de].span);
        Ok(n)
    }

    /// Reads tokens `from..to` as one whole expression.
    fn sub_expr(&mut self, from: usize, to: usize) -> Result<Node> {
        if from == to {
            return Err(syntax("an empty group", self.toks[from].span));
        }
        let save_toks = self.toks;
        let save_pos = self.pos;
        self.toks = &save_toks[..to];
        self.pos = from;
        self.enter(self.toks[from].span)?;
        let r = self.expr();
        self.depth -= 1;
        let left = self.pos;
        self.toks = save_toks;
        self.pos = save_pos;
        let r = r?;
        if left < to {
            return Err(self.unexpected(&save_toks[left]));
        }
        Ok(r)
    }

    /// `d^nR/dr^n`, `dR/dr`, `d/dr` (then an operand) at the differential
    /// starting at token `at` (already consumed up to `self.pos`).
    fn leibniz_slash(&mut self, at: usize) -> Result<Option<Node>> {
        let end = self.toks.len();
        let Some(after_d) = self.differential(at, end) else { return Ok(None) };
        let (above, k) = self.order_at(after_d, end).unwrap_or((1, after_d));
        // An optional name between the differential and the slash.
        let (body, k) = match self.toks.get(k).map(|t| &t.t) {
            Some(T::Slash) => (None, k),
            Some(T::Letter(_)) | Some(T::Cmd(_)) => {
                let save = self.pos;
                self.pos = k;
                let body = match &self.toks[k].t {
                    T::Letter(c) => self.name_at(c.to_string(), self.toks[k].span),
                    T::Cmd(c) if GREEK_LETTERS.contains(&c.as_str()) => self.name_at(c.clone(), self.toks[k].span),
                    _ => {
                        self.pos = save;
                        return Ok(None);
                    }
                }?;
                let after = self.pos;
                self.pos = save;
                (Some(body), after)
            }
            _ => return Ok(None),
        };
        if self.toks.get(k).map(|t| &t.t) != Some(&T::Slash) {
            return Ok(None);
        }
        let Some((wrt, below, after)) = self.lower_differential(k + 1, end)? else { return Ok(None) };
        let start = self.toks[at].span;
        if above != below {
            return Err(syntax(
                format!("the orders of the derivative do not match: {above} above, {below} below"),
                start.to(self.toks[after - 1].span),
            ));
        }
        self.pos = after;
        match body {
            Some(b) => {
                let s = start.to(self.toks[after - 1].span);
                Ok(Some(self.node(ExprKind::Derivative { body: Box::new(b.expr), wrt, order: above }, s, 0)?))
            }
            None => {
                if !self.starts_factor() {
                    return Err(syntax(format!("d/d{} needs something to differentiate after it", wrt.name), start.to(self.toks[after - 1].span)));
                }
                let operand = self.factor()?;
                let s = start.to(operand.expr.span);
                Ok(Some(self.node(ExprKind::Derivative { body: Box::new(operand.expr), wrt, order: above }, s, operand.height)?))
            }
        }
    }

    /// `\partial_r`, `\partial_r^2`, `\partial^2_r`, `\partial_{r_*}` at the current token.
    fn derivative_operator(&mut self) -> Result<Option<DerivOp>> {
        let Some(t) = self.peek() else { return Ok(None) };
        if !matches!(&t.t, T::Cmd(c) if c == "partial") {
            return Ok(None);
        }
        let start = t.span.start;
        let mut k = self.pos + 1;
        let mut order = 1;
        if let Some((o, after)) = self.order_at(k, self.toks.len()) {
            order = o;
            k = after;
        }
        if self.toks.get(k).map(|t| &t.t) != Some(&T::Under) {
            return Ok(None);
        }
        self.pos = k + 1;
        let (sub, end) = self.subscript()?;
        let wrt_span = Span::new(self.toks[k + 1].span.start, end.end);
        let wrt_name = sub;
        if let Some((o, after)) = self.order_at(self.pos, self.toks.len()) {
            order = o;
            self.pos = after;
        }
        Ok(Some(DerivOp { wrt: Ident { name: wrt_name, span: wrt_span }, order, start }))
    }
}

/// The name a Greek command stands for: the `\\var…` forms of ε, θ, φ, ρ
/// and ς are the letters themselves (ϖ stays its own letter).
fn greek_name(c: &str) -> &str {
    match c {
        "varepsilon" => "epsilon",
        "vartheta" => "theta",
        "varphi" => "phi",
        "varrho" => "rho",
        "varsigma" => "sigma",
        other => other,
    }
}

fn unknown_command(name: &str, span: Span) -> Error {
    syntax(format!("unknown LaTeX command '\\{name}'"), span).note("the LaTeX subset read is listed in grammar/latex.md")
}

fn transcendental(what: &str, span: Span) -> Error {
    Error::new(
        ErrorKind::NotRational,
        format!("{what} is not read: of the transcendental functions only exp and the hyperbolic and trigonometric functions (sinh, cosh, tanh, coth, sech, csch, sin, cos, tan, cot, sec, csc) are"),
    )
    .at(span)
    .note("write the equation through those, or change the variable by hand")
}

/// One relation read: its two sides and where it was written.
struct Relation {
    lhs: Expr,
    rhs: Expr,
    span: Span,
}

/// The head name of `f`, `f'` or `f(x)` (an application candidate).
fn definition_name(e: &Expr, applications: &[Span]) -> Option<Ident> {
    match &e.kind {
        ExprKind::Name(n) => Some(Ident { name: n.clone(), span: e.span }),
        ExprKind::Binary(BinOp::Mul, a, b) if applications.contains(&e.span) && matches!(b.kind, ExprKind::Name(_)) => match &a.kind {
            ExprKind::Name(n) => Some(Ident { name: n.clone(), span: a.span }),
            _ => None,
        },
        _ => None,
    }
}

fn walk<'e>(e: &'e Expr, f: &mut dyn FnMut(&'e Expr)) {
    // Iterative, so a tall tree cannot exhaust the stack.
    let mut stack = vec![e];
    while let Some(e) = stack.pop() {
        f(e);
        match &e.kind {
            ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Prime(a, _) | ExprKind::Call(_, a) | ExprKind::Derivative { body: a, .. } => {
                stack.push(a)
            }
            ExprKind::Binary(_, a, b) => {
                stack.push(b);
                stack.push(a);
            }
            _ => {}
        }
    }
}

/// Replaces `f(x)` by `f` where x is the variable and f a defined name or the unknown.
fn resolve_applications(e: &mut Expr, var: &str, functions: &BTreeSet<String>, applications: &[Span]) -> Result<()> {
    let mut stack: Vec<&mut Expr> = vec![e];
    while let Some(e) = stack.pop() {
        if let ExprKind::Binary(BinOp::Mul, a, b) = &e.kind {
            if applications.contains(&e.span) {
                if let (ExprKind::Name(arg), Some(head)) = (&b.kind, head_name(a)) {
                    if arg == var {
                        if !functions.contains(&head) {
                            return Err(syntax(format!("'{head}({var})' reads as a function of {var}, but '{head}' is not defined"), e.span)
                                .note(format!("define it ({head}({var}) = …) or write the product as {head}\\cdot {var}")));
                        }
                        let ExprKind::Binary(_, a, _) = std::mem::replace(&mut e.kind, ExprKind::Imag) else { unreachable!("matched above") };
                        let a = *a;
                        e.kind = a.kind;
                        stack.push(e);
                        continue;
                    }
                }
            }
        }
        match &mut e.kind {
            ExprKind::Neg(a) | ExprKind::Sqrt(a) | ExprKind::Prime(a, _) | ExprKind::Call(_, a) | ExprKind::Derivative { body: a, .. } => {
                stack.push(a)
            }
            ExprKind::Binary(_, a, b) => {
                stack.push(b);
                stack.push(a);
            }
            _ => {}
        }
    }
    Ok(())
}

fn head_name(e: &Expr) -> Option<String> {
    match &e.kind {
        ExprKind::Name(n) => Some(n.clone()),
        ExprKind::Prime(a, _) => head_name(a),
        _ => None,
    }
}

/// Reads LaTeX mathematics into a program (see the module documentation),
/// in steps: the relations read, sorted into definitions, coordinates and
/// the one equation, the unknown and the variable found, and the program
/// written with the definitions in the order of their use.
pub(super) fn parse(src: &str, limits: &ParseLimits) -> Result<Program> {
    let mut applications = Vec::new();
    let read = read_relations(src, limits, &mut applications)?;
    let Sorted { ode, defs, coords } = sort_relations(src, read, &applications)?;
    let def_names: BTreeSet<String> = defs.iter().map(|(d, _)| d.name.clone()).collect();
    let carried = unknown_names(&ode, &def_names);
    let var = variable(&ode, &defs, &coords, &carried, &def_names, &applications)?;
    let mut functions = def_names;
    functions.extend(carried.iter().map(|(n, _)| n.clone()));
    program(var, ode, defs, coords, &functions, &applications)
}

/// The name a LaTeX symbol such as `\ell`, `\mu_0` or `r_{+}` reads as in an
/// equation (`l`, `mu_0`, `r_plus`); `None` when the text is not one name.
/// Values on the command line may name parameters as the paper writes them.
pub(super) fn name_of(text: &str) -> Option<String> {
    let toks = tokens(text).ok()?;
    check_balance(&toks).ok()?;
    let limits = ParseLimits::default();
    let mut applications = Vec::new();
    let mut reader = Reader { src: text, toks: &toks, pos: 0, depth: 0, limits: &limits, applications: &mut applications };
    let node = reader.sub_expr(0, toks.len()).ok()?;
    match node.expr.kind {
        ExprKind::Name(n) => Some(n),
        _ => None,
    }
}

/// The relations of the text, each read into its two sides; the spans of
/// products written as `f(x)` are collected in `applications`.
fn read_relations(src: &str, limits: &ParseLimits, applications: &mut Vec<Span>) -> Result<Vec<Relation>> {
    let toks = tokens(src)?;
    check_balance(&toks)?;
    let rels = relations(toks);
    if rels.is_empty() {
        return Err(Error::new(ErrorKind::Structure, "no equation in the LaTeX text").at(Span::new(0, src.len().min(1))));
    }
    if rels.len() > limits.max_statements {
        return Err(Error::new(ErrorKind::Limit, format!("more than {} relations", limits.max_statements)).at(rels[limits.max_statements][0].span));
    }
    let mut read = Vec::new();
    for r in &rels {
        let span = r[0].span.to(r[r.len() - 1].span);
        let Some(eq) = r.iter().position(|t| t.t == T::Equals) else {
            return Err(
                syntax("a relation without '='", span).note("write the equation as LHS = RHS; separate relations with a comma, \\quad or a new line")
            );
        };
        let mut reader = Reader { src, toks: r, pos: 0, depth: 0, limits, applications: &mut *applications };
        let lhs = reader.sub_expr(0, eq)?;
        if eq + 1 >= r.len() {
            return Err(syntax("nothing after '='", r[eq].span));
        }
        let rhs = reader.sub_expr(eq + 1, r.len())?;
        read.push(Relation { lhs: lhs.expr, rhs: rhs.expr, span });
    }
    Ok(read)
}

/// A coordinate declaration `\frac{dr_*}{dr} = …`: the differentiated name,
/// the name it is differentiated by, and the relation.
type Coordinate = (Ident, Ident, Relation);

/// The relations sorted: the differential equation, the definitions (a
/// name, or `f(x)`, on the left) and the coordinate declarations.
struct Sorted {
    ode: Relation,
    defs: Vec<(Ident, Relation)>,
    coords: Vec<Coordinate>,
}

/// Sorts the relations: a first derivative of a lone name is a coordinate,
/// a lone name (or f(x)) on the left a definition, the rest the equation;
/// when every relation looks like a definition, the one with derivatives is
/// the equation.
fn sort_relations(src: &str, read: Vec<Relation>, applications: &[Span]) -> Result<Sorted> {
    let mut defs: Vec<(Ident, Relation)> = Vec::new();
    let mut equations: Vec<Relation> = Vec::new();
    let mut coords: Vec<Coordinate> = Vec::new();
    for rel in read {
        // `N^{2} = …` (a lapse squared, as printed): N = (…)^(1/2), whose
        // even powers in the equation are then exact.
        let rel = match &rel.lhs.kind {
            ExprKind::Binary(BinOp::Pow, base, k) if matches!(base.kind, ExprKind::Name(_)) && !has_derivative(&rel.rhs) => match &k.kind {
                ExprKind::Number(t) if t.parse::<u32>().is_ok_and(|k| k >= 2) => {
                    let one = Expr { kind: ExprKind::Number("1".into()), span: k.span };
                    let root = Expr { kind: ExprKind::Binary(BinOp::Div, Box::new(one), k.clone()), span: k.span };
                    let rhs = Expr { kind: ExprKind::Binary(BinOp::Pow, Box::new(rel.rhs.clone()), Box::new(root)), span: rel.rhs.span };
                    Relation { lhs: (**base).clone(), rhs, span: rel.span }
                }
                _ => rel,
            },
            _ => rel,
        };
        if let ExprKind::Derivative { body, wrt, order: 1 } = &rel.lhs.kind {
            if let (ExprKind::Name(top), false) = (&body.kind, has_derivative(&rel.rhs)) {
                coords.push((Ident { name: top.clone(), span: body.span }, wrt.clone(), rel));
                continue;
            }
        }
        match definition_name(&rel.lhs, applications) {
            Some(name) if !has_derivative(&rel.lhs) => {
                if let Some((first, _)) = defs.iter().find(|(d, _)| d.name == name.name) {
                    return Err(
                        syntax(format!("'{}' is defined twice", name.name), name.span).note(format!("first defined at byte {}", first.span.start))
                    );
                }
                defs.push((name, rel));
            }
            _ => equations.push(rel),
        }
    }
    let ode = match equations.len() {
        1 => equations.remove(0),
        0 => {
            // Every relation looked like a definition: the one with derivatives is the equation.
            match defs.iter().position(|(_, r)| has_derivative(&r.rhs)) {
                Some(i) => defs.remove(i).1,
                None => {
                    return Err(Error::new(ErrorKind::Structure, "no relation carries a derivative: there is no differential equation")
                        .at(Span::new(0, src.len().min(1))))
                }
            }
        }
        _ => {
            return Err(syntax("a second equation: besides the differential equation, relations must be definitions NAME = …", equations[1].span)
                .note("define names as K = …, \\Delta = … or f(r) = …"))
        }
    };
    Ok(Sorted { ode, defs, coords })
}

/// The unknown: the undefined names that carry derivatives in the equation.
fn unknown_names(ode: &Relation, def_names: &BTreeSet<String>) -> Vec<(String, Span)> {
    let mut carried: Vec<(String, Span)> = Vec::new();
    for side in [&ode.lhs, &ode.rhs] {
        walk(side, &mut |e| match &e.kind {
            ExprKind::Prime(a, _) | ExprKind::Derivative { body: a, .. } => {
                if let ExprKind::Name(n) = &a.kind {
                    carried.push((n.clone(), a.span));
                }
            }
            _ => {}
        });
    }
    carried.retain(|(n, _)| !def_names.contains(n));
    carried
}

/// The variable: what derivatives are taken with respect to (a declared
/// coordinate the equation differentiates by is not the variable: the
/// other name of its declaration is), else the argument of the unknown.
fn variable(
    ode: &Relation,
    defs: &[(Ident, Relation)],
    coords: &[Coordinate],
    carried: &[(String, Span)],
    def_names: &BTreeSet<String>,
    applications: &[Span],
) -> Result<Ident> {
    let mut wrts: Vec<Ident> = Vec::new();
    for side in [&ode.lhs, &ode.rhs].into_iter().chain(defs.iter().flat_map(|(_, r)| [&r.lhs, &r.rhs])) {
        walk(side, &mut |e| {
            if let ExprKind::Derivative { wrt, .. } = &e.kind {
                wrts.push(wrt.clone());
            }
        });
    }
    let mut coordinate_var = None;
    for (top, bottom, _) in coords {
        let (new, other) = if wrts.iter().any(|w| w.name == top.name) { (top, bottom) } else { (bottom, top) };
        wrts.retain(|w| w.name != new.name);
        coordinate_var.get_or_insert_with(|| other.clone());
    }
    if wrts.is_empty() {
        if let Some(v) = coordinate_var {
            wrts.push(v);
        }
    }
    match wrts.first() {
        Some(first) => {
            if let Some(other) = wrts.iter().find(|w| w.name != first.name) {
                return Err(syntax(format!("derivatives with respect to both '{}' and '{}'", first.name, other.name), other.span)
                    .note("an equation has one independent variable"));
            }
            Ok(first.clone())
        }
        None => variable_from_arguments(ode, defs, carried, def_names, applications),
    }
}

/// Primes only: the variable is the argument of the unknown, R(r) or
/// R''(r), else of a defined function, f(r).
fn variable_from_arguments(
    ode: &Relation,
    defs: &[(Ident, Relation)],
    carried: &[(String, Span)],
    def_names: &BTreeSet<String>,
    applications: &[Span],
) -> Result<Ident> {
    let mut arg = None;
    let mut def_arg = None;
    for side in [&ode.lhs, &ode.rhs].into_iter().chain(defs.iter().flat_map(|(_, r)| [&r.lhs, &r.rhs])) {
        walk(side, &mut |e| {
            if let ExprKind::Binary(BinOp::Mul, a, b) = &e.kind {
                if applications.contains(&e.span) {
                    if let (Some(h), ExprKind::Name(x)) = (head_name(a), &b.kind) {
                        let found = Some(Ident { name: x.clone(), span: b.span });
                        if carried.iter().any(|(n, _)| *n == h) {
                            arg = arg.take().or(found);
                        } else if def_names.contains(&h) {
                            def_arg = def_arg.take().or(found);
                        }
                    }
                }
            }
        });
    }
    if let Some(a) = arg.or(def_arg) {
        return Ok(a);
    }
    // Else the name inside the transcendental functions' arguments
    // (`\cos 2x`, `\cosh^2(\alpha x)`): the only one, or the only
    // conventional variable name among several.
    let mut inside: Vec<Ident> = Vec::new();
    for side in [&ode.lhs, &ode.rhs].into_iter().chain(defs.iter().flat_map(|(_, r)| [&r.lhs, &r.rhs])) {
        walk(side, &mut |e| {
            if let ExprKind::Call(_, a) = &e.kind {
                walk(a, &mut |x| {
                    if let ExprKind::Name(n) = &x.kind {
                        if !def_names.contains(n) && !inside.iter().any(|i| i.name == *n) {
                            inside.push(Ident { name: n.clone(), span: x.span });
                        }
                    }
                });
            }
        });
    }
    const CONVENTIONAL: [&str; 10] = ["x", "r", "z", "t", "u", "y", "theta", "rho", "xi", "eta"];
    let conventional: Vec<&Ident> = inside.iter().filter(|i| CONVENTIONAL.contains(&i.name.as_str())).collect();
    let chosen = match (inside.as_slice(), conventional.as_slice()) {
        ([only], _) => Some(only.clone()),
        (_, [only]) => Some((*only).clone()),
        _ => None,
    };
    // Else the one conventional variable name among all the names written
    // (`r(r-2M)\Psi'' + 2M\Psi' + …`), the primed ones (unknowns) aside.
    let chosen = chosen.or_else(|| {
        let mut primed: Vec<String> = Vec::new();
        let mut names: Vec<Ident> = Vec::new();
        for side in [&ode.lhs, &ode.rhs].into_iter().chain(defs.iter().flat_map(|(_, r)| [&r.lhs, &r.rhs])) {
            walk(side, &mut |e| match &e.kind {
                ExprKind::Prime(a, _) => {
                    if let ExprKind::Name(n) = &a.kind {
                        primed.push(n.clone());
                    }
                }
                ExprKind::Name(n) if !def_names.contains(n) && !names.iter().any(|i| i.name == *n) => {
                    names.push(Ident { name: n.clone(), span: e.span })
                }
                _ => {}
            });
        }
        let candidates: Vec<Ident> = names.into_iter().filter(|i| CONVENTIONAL.contains(&i.name.as_str()) && !primed.contains(&i.name)).collect();
        match candidates.as_slice() {
            [only] => Some(only.clone()),
            _ => None,
        }
    });
    match chosen {
        Some(v) => Ok(v),
        None => Err(syntax("cannot tell the variable: no derivative names it", ode.span)
            .note("write the unknown with its argument, e.g. R''(r), or use Leibniz derivatives, \\frac{d^2R}{dr^2}")),
    }
}

/// The program: the variable, the definitions in an order where each uses
/// only earlier ones, the coordinates, then the equation, with every `f(x)`
/// of the variable resolved as an application.
fn program(
    var: Ident,
    mut ode: Relation,
    defs: Vec<(Ident, Relation)>,
    coords: Vec<Coordinate>,
    functions: &BTreeSet<String>,
    applications: &[Span],
) -> Result<Program> {
    let order = definition_order(&defs)?;
    let mut statements = vec![Statement::Var(var.clone())];
    let mut slots: Vec<Option<(Ident, Relation)>> = defs.into_iter().map(Some).collect();
    for i in order {
        let Some((name, mut rel)) = slots[i].take() else { continue };
        if name.name == var.name {
            return Err(syntax(format!("'{}' is the variable and cannot be defined", name.name), name.span));
        }
        resolve_applications(&mut rel.rhs, &var.name, functions, applications)?;
        statements.push(Statement::Let { name, value: rel.rhs });
    }
    for (top, bottom, mut rel) in coords {
        resolve_applications(&mut rel.rhs, &var.name, functions, applications)?;
        statements.push(Statement::Coordinate { top, bottom, rate: rel.rhs, span: rel.span });
    }
    resolve_applications(&mut ode.lhs, &var.name, functions, applications)?;
    resolve_applications(&mut ode.rhs, &var.name, functions, applications)?;
    statements.push(Statement::Ode { lhs: ode.lhs, rhs: ode.rhs, span: ode.span });
    Ok(Program { statements })
}

fn has_derivative(e: &Expr) -> bool {
    let mut found = false;
    walk(e, &mut |x| found |= matches!(x.kind, ExprKind::Prime(..) | ExprKind::Derivative { .. }));
    found
}

/// A topological order of the definitions by use; a cycle is an error.
fn definition_order(defs: &[(Ident, Relation)]) -> Result<Vec<usize>> {
    let names: Vec<&str> = defs.iter().map(|(d, _)| d.name.as_str()).collect();
    let uses: Vec<Vec<usize>> = defs
        .iter()
        .map(|(_, r)| {
            let mut u = Vec::new();
            walk(&r.rhs, &mut |e| {
                if let ExprKind::Name(n) = &e.kind {
                    if let Some(i) = names.iter().position(|m| m == n) {
                        u.push(i);
                    }
                }
            });
            u
        })
        .collect();
    // 0 unvisited, 1 in progress, 2 done; iterative depth-first search.
    let mut state = vec![0u8; defs.len()];
    let mut order = Vec::new();
    for root in 0..defs.len() {
        if state[root] != 0 {
            continue;
        }
        let mut stack = vec![(root, 0usize)];
        state[root] = 1;
        while let Some((node, next)) = stack.pop() {
            if next < uses[node].len() {
                stack.push((node, next + 1));
                let child = uses[node][next];
                match state[child] {
                    0 => {
                        state[child] = 1;
                        stack.push((child, 0));
                    }
                    1 => {
                        let (d, _) = &defs[child];
                        return Err(Error::new(
                            ErrorKind::Structure,
                            format!("the definition of '{}' refers to itself (through the definitions)", d.name),
                        )
                        .at(d.span));
                    }
                    _ => {}
                }
            } else {
                state[node] = 2;
                order.push(node);
            }
        }
    }
    Ok(order)
}

#[cfg(test)]
mod tests {
    use super::super::{parse_latex, ParseLimits};
    use super::*;

    fn shape(src: &str) -> Vec<String> {
        let p = parse_latex(src, &ParseLimits::default()).unwrap_or_else(|e| panic!("{src}: {e:?}"));
        p.statements
            .iter()
            .map(|s| match s {
                Statement::Var(v) => format!("var {}", v.name),
                Statement::Let { name, value } => format!("let {} = {}", name.name, &src[value.span.start..value.span.end]),
                Statement::Ode { lhs, rhs, .. } => format!("ode {} = {}", &src[lhs.span.start..lhs.span.end], &src[rhs.span.start..rhs.span.end]),
                other => format!("{other:?}"),
            })
            .collect()
    }

    #[test]
    fn definitions_come_first_in_dependency_order() {
        let src = "V(r) = f(r)\\frac{1}{r}, \\quad R'' + (\\omega^2 - V)R = 0 \\quad f(r) = 1 - \\frac{2M}{r}";
        let src = src.replace("\\\\", "\\");
        let got = shape(&src);
        assert_eq!(got[0], "var r");
        assert!(got[1].starts_with("let f = "), "{got:?}");
        assert!(got[2].starts_with("let V = "), "{got:?}");
        assert!(got[3].starts_with("ode R''"), "{got:?}");
    }

    #[test]
    fn subscripts_are_part_of_names() {
        let src = r"\frac{d^2R}{dr_*^2} + (r - r_+)(r - r_{-})M_1 R = 0";
        let p = parse_latex(src, &ParseLimits::default()).unwrap();
        let Statement::Var(v) = &p.statements[0] else { panic!() };
        assert_eq!(v.name, "r_star");
        let mut names = Vec::new();
        if let Statement::Ode { lhs, .. } = &p.statements[1] {
            walk(lhs, &mut |e| {
                if let ExprKind::Name(n) = &e.kind {
                    names.push(n.clone());
                }
            });
        }
        assert!(names.contains(&"r_plus".to_string()) && names.contains(&"r_minus".to_string()) && names.contains(&"M_1".to_string()), "{names:?}");
    }

    #[test]
    fn cycles_and_limits_are_errors() {
        let e = parse_latex(r"R''(x) + a R = 0, a = b, b = a", &ParseLimits::default()).unwrap_err();
        assert_eq!(e.kind, ErrorKind::Structure);
        let deep = format!("R'' + {}x{} R = 0", "(".repeat(5000), ")".repeat(5000));
        let e = parse_latex(&deep, &ParseLimits::default()).unwrap_err();
        assert_eq!(e.kind, ErrorKind::Limit);
    }

    /// Random LaTeX-like text never panics, and every error points into the text.
    #[test]
    fn random_text_never_panics() {
        const PIECES: &[&str] = &[
            "\\frac",
            "{",
            "}",
            "(",
            ")",
            "[",
            "]",
            "\\left(",
            "\\right)",
            "d",
            "R",
            "r",
            "^",
            "_",
            "2",
            "'",
            "=",
            ",",
            "+",
            "-",
            "\\partial",
            "\\mathrm{d}",
            "\\omega",
            "\\sqrt",
            "i",
            "/",
            "\\cdot",
            " ",
            "\n",
            "\\quad",
            "f",
            "\\Delta",
            ".",
            "\\ell",
            "%",
            "\\",
        ];
        let mut state = 0x2545_f491_4f6c_dd1du64;
        for _ in 0..3000 {
            let mut text = String::new();
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            let len = (state % 40) as usize;
            for _ in 0..len {
                state ^= state << 13;
                state ^= state >> 7;
                state ^= state << 17;
                text.push_str(PIECES[(state % PIECES.len() as u64) as usize]);
            }
            if let Err(e) = parse_latex(&text, &ParseLimits::default()) {
                if let Some(s) = e.span {
                    assert!(s.start <= s.end && s.end <= text.len(), "{text:?}: {e:?}");
                }
            }
        }
    }
}
