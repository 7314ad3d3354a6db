#!/usr/bin/env python3
"""Independent reference implementation for canonode's normal form.

This module does NOT call canonode.  It has its own recursive-descent parser
for the input language (written from grammar/canonode.ebnf), builds sympy
expressions from it, extracts the coefficients a2, a1, a0 of

    a2 y'' + a1 y' + a0 y = 0,

and computes the Liouville normal form  psi'' + Q psi = 0,

    p = a1/a2,  q = a0/a2,  Q = q - p'/2 - p^2/4,

in the canonical form Q = N/D used by the project (see shared DESIGN.md,
"The exact layer"):

  * D is a real polynomial over Q in (var, params), with integer coefficients,
    primitive (content 1) and positive leading coefficient, where "leading"
    means the first term in lexicographic order with the generators ordered
    [var, param_1, param_2, ...] (declaration order);
  * N has Gaussian-rational coefficients (N = Re N + i Im N);
  * gcd(Re N, Im N, D) = 1, i.e. D is the minimal real denominator.

Two routes are provided:

  * the fast route: rational-function arithmetic with python-flint's
    multivariate polynomials over Q (fmpq_mpoly), a number in Q(i) being kept
    as a pair (real part, imaginary part) and every rational function as
    (Re N, Im N, D) with D real; every operation is reduced by
    gcd(Re N, Im N, D);
  * the slow route: sympy.cancel on the sympy expression (used to cross-check
    the fast route on small samples and in bench_compare.py).

Usage as a script:
    python3 scripts/reference/ode_reference.py samples/bessel.ode
prints the canonical N and D in the input language's syntax.

Dependencies: sympy, python-flint (PyPI).  Python 3.11.
"""

from __future__ import annotations

import sys
from dataclasses import dataclass, field
from fractions import Fraction

import flint
import sympy

# --------------------------------------------------------------------------
# Lexer
# --------------------------------------------------------------------------

KEYWORDS = {"var", "param", "let", "unknown", "ode", "sqrt", "I"}
BINOPS = {"+", "-", "*", "/", "^", "="}


class OdeSyntaxError(Exception):
    """Any error in the input text (lexing, parsing, meaning)."""


@dataclass
class Tok:
    kind: str  # 'num', 'ident', 'kw', 'op', 'nl', 'eof'
    text: str
    line: int
    col: int


def _is_ident_start(c: str) -> bool:
    return c.isalpha()


def _is_ident_cont(c: str) -> bool:
    return c.isalpha() or c.isdigit() or c == "_"


def tokenize(src: str) -> list[Tok]:
    """Tokens, with newline tokens only where a newline ends a statement."""
    toks: list[Tok] = []
    i, n = 0, len(src)
    line, col0 = 1, 0
    depth = 0
    while i < n:
        c = src[i]
        col = i - col0 + 1
        if c == "#":
            while i < n and src[i] != "\n":
                i += 1
            continue
        if c == "\n":
            # A newline ends a statement unless inside ( ) or after a binary
            # operator or a comma.
            prev = toks[-1] if toks else None
            cont = depth > 0 or (
                prev is not None and prev.kind == "op" and (prev.text in BINOPS or prev.text == ",")
            )
            if not cont:
                toks.append(Tok("nl", "\n", line, col))
            i += 1
            line += 1
            col0 = i
            continue
        if c in " \t\r":
            i += 1
            continue
        if c == ";":
            toks.append(Tok("nl", ";", line, col))
            i += 1
            continue
        if c.isdigit() or (c == "." and i + 1 < n and src[i + 1].isdigit()):
            j = i
            while j < n and src[j].isdigit():
                j += 1
            if j < n and src[j] == ".":
                j += 1
                while j < n and src[j].isdigit():
                    j += 1
            # exponent only if it is complete: e[+-]digits
            if j < n and src[j] in "eE":
                k = j + 1
                if k < n and src[k] in "+-":
                    k += 1
                if k < n and src[k].isdigit():
                    while k < n and src[k].isdigit():
                        k += 1
                    j = k
            toks.append(Tok("num", src[i:j], line, col))
            i = j
            continue
        if _is_ident_start(c):
            j = i + 1
            while j < n and _is_ident_cont(src[j]):
                j += 1
            word = src[i:j]
            toks.append(Tok("kw" if word in KEYWORDS else "ident", word, line, col))
            i = j
            continue
        if c in "+-*/^=,'":
            toks.append(Tok("op", c, line, col))
            i += 1
            continue
        if c == "(":
            depth += 1
            toks.append(Tok("op", c, line, col))
            i += 1
            continue
        if c == ")":
            depth -= 1
            if depth < 0:
                raise OdeSyntaxError(f"line {line}:{col}: unbalanced ')'")
            toks.append(Tok("op", c, line, col))
            i += 1
            continue
        raise OdeSyntaxError(f"line {line}:{col}: unexpected character {c!r}")
    if depth != 0:
        raise OdeSyntaxError("unbalanced '(' at end of input")
    toks.append(Tok("eof", "", line, i - col0 + 1))
    return toks


def decimal_to_rational(text: str) -> sympy.Rational:
    """Exact value of a number literal: 0.25 -> 1/4, 1e-3 -> 1/1000."""
    mant, exp = text, 0
    for e in "eE":
        if e in text:
            mant, ex = text.split(e)
            exp = int(ex)
            break
    if "." in mant:
        ip, fp = mant.split(".")
    else:
        ip, fp = mant, ""
    ip = ip or "0"
    val = Fraction(int(ip + fp), 10 ** len(fp)) * (Fraction(10) ** exp)
    return sympy.Rational(val.numerator, val.denominator)


# --------------------------------------------------------------------------
# Parser -> small AST
# --------------------------------------------------------------------------
# AST nodes are tuples:
#   ('num', Rational) ('I',) ('name', str) ('neg', e) ('add', a, b) ('sub', a, b)
#   ('mul', a, b) ('div', a, b) ('pow', a, b) ('prime', e) ('sqrt', e)


@dataclass
class Program:
    var: str
    params: list[str]
    lets: list[tuple[str, tuple]]
    unknown: str | None
    lhs: tuple
    rhs: tuple


class Parser:
    def __init__(self, toks: list[Tok]):
        self.toks = toks
        self.i = 0

    def peek(self) -> Tok:
        return self.toks[self.i]

    def next(self) -> Tok:
        t = self.toks[self.i]
        self.i += 1
        return t

    def err(self, msg: str, t: Tok | None = None):
        t = t or self.peek()
        raise OdeSyntaxError(f"line {t.line}:{t.col}: {msg} (found {t.text!r})")

    def expect_op(self, op: str) -> Tok:
        t = self.peek()
        if t.kind == "op" and t.text == op:
            return self.next()
        self.err(f"expected {op!r}")

    def is_op(self, *ops: str) -> bool:
        t = self.peek()
        return t.kind == "op" and t.text in ops

    def ident(self) -> str:
        t = self.peek()
        if t.kind != "ident":
            self.err("expected a name")
        self.next()
        return t.text

    # program = { statement , terminator }
    def program(self) -> Program:
        var = None
        params: list[str] = []
        lets: list[tuple[str, tuple]] = []
        unknown = None
        ode = None
        declared: set[str] = set()

        def declare(name: str, tok: Tok):
            if name in declared:
                raise OdeSyntaxError(f"line {tok.line}:{tok.col}: name {name!r} declared twice")
            declared.add(name)

        while True:
            t = self.peek()
            if t.kind == "eof":
                break
            if t.kind == "nl":
                self.next()
                continue
            if t.kind != "kw" or t.text not in ("var", "param", "let", "unknown", "ode"):
                self.err("expected a statement (var, param, let, unknown, ode)")
            self.next()
            if t.text == "var":
                if var is not None:
                    raise OdeSyntaxError(f"line {t.line}: second 'var' statement")
                tt = self.peek()
                var = self.ident()
                declare(var, tt)
            elif t.text == "param":
                tt = self.peek()
                name = self.ident()
                declare(name, tt)
                params.append(name)
                while self.is_op(","):
                    self.next()
                    tt = self.peek()
                    name = self.ident()
                    declare(name, tt)
                    params.append(name)
            elif t.text == "let":
                tt = self.peek()
                name = self.ident()
                self.expect_op("=")
                e = self.expr()
                declare(name, tt)
                lets.append((name, e))
            elif t.text == "unknown":
                if unknown is not None:
                    raise OdeSyntaxError(f"line {t.line}: second 'unknown' statement")
                tt = self.peek()
                unknown = self.ident()
                declare(unknown, tt)
            else:  # ode
                if ode is not None:
                    raise OdeSyntaxError(f"line {t.line}: second 'ode' statement")
                lhs = self.expr()
                self.expect_op("=")
                rhs = self.expr()
                ode = (lhs, rhs)
            t2 = self.peek()
            if t2.kind not in ("nl", "eof"):
                self.err("expected end of statement")
        if var is None:
            raise OdeSyntaxError("no 'var' statement")
        if ode is None:
            raise OdeSyntaxError("no 'ode' statement")
        return Program(var, params, lets, unknown, ode[0], ode[1])

    # expr = term , { ( "+" | "-" ) , term }
    def expr(self):
        e = self.term()
        while self.is_op("+", "-"):
            op = self.next().text
            r = self.term()
            e = ("add" if op == "+" else "sub", e, r)
        return e

    # term = unary , { ( "*" | "/" ) , unary }
    def term(self):
        e = self.unary()
        while self.is_op("*", "/"):
            op = self.next().text
            r = self.unary()
            e = ("mul" if op == "*" else "div", e, r)
        return e

    # unary = { "-" | "+" } , power
    def unary(self):
        neg = False
        while self.is_op("-", "+"):
            if self.next().text == "-":
                neg = not neg
        e = self.power()
        return ("neg", e) if neg else e

    # power = postfix , [ "^" , unary_pow ] ;  unary_pow = { "-" | "+" } , power
    def power(self):
        base = self.postfix()
        if self.is_op("^"):
            self.next()
            neg = False
            while self.is_op("-", "+"):
                if self.next().text == "-":
                    neg = not neg
            ex = self.power()
            if neg:
                ex = ("neg", ex)
            return ("pow", base, ex)
        return base

    # postfix = atom , { "'" }
    def postfix(self):
        e = self.atom()
        while self.is_op("'"):
            self.next()
            e = ("prime", e)
        return e

    # atom = number | "I" | ident | call | "(" , expr , ")"
    def atom(self):
        t = self.peek()
        if t.kind == "num":
            self.next()
            return ("num", decimal_to_rational(t.text))
        if t.kind == "kw" and t.text == "I":
            self.next()
            return ("I",)
        if t.kind == "kw" and t.text == "sqrt":
            self.next()
            self.expect_op("(")
            e = self.expr()
            self.expect_op(")")
            return ("sqrt", e)
        if t.kind == "ident":
            self.next()
            return ("name", t.text)
        if self.is_op("("):
            self.next()
            e = self.expr()
            self.expect_op(")")
            return e
        self.err("expected a number, a name, I, sqrt(...) or '('")


def parse(src: str) -> Program:
    return Parser(tokenize(src)).program()


# --------------------------------------------------------------------------
# Lowering to sympy
# --------------------------------------------------------------------------


def _names_in(e: tuple, acc: set[str], primed: set[str], under_prime: bool = False):
    k = e[0]
    if k == "name":
        acc.add(e[1])
        if under_prime:
            primed.add(e[1])
    elif k in ("num", "I"):
        pass
    elif k == "prime":
        # a name directly primed (possibly several primes)
        inner = e[1]
        while inner[0] == "prime":
            inner = inner[1]
        if inner[0] == "name":
            primed.add(inner[1])
        _names_in(e[1], acc, primed)
    else:
        for sub in e[1:]:
            _names_in(sub, acc, primed)


@dataclass
class Lowered:
    prog: Program
    x: sympy.Symbol
    params: list[sympy.Symbol]
    unknown: str
    y: sympy.Expr  # y(x)
    lhs_minus_rhs: sympy.Expr
    a2: sympy.Expr = field(default=None)
    a1: sympy.Expr = field(default=None)
    a0: sympy.Expr = field(default=None)


def lower(prog: Program) -> Lowered:
    x = sympy.Symbol(prog.var)
    psyms = [sympy.Symbol(p) for p in prog.params]
    env: dict[str, sympy.Expr] = {prog.var: x}
    for p, s in zip(prog.params, psyms):
        env[p] = s
    let_names = {n for n, _ in prog.lets}

    # find the unknown
    acc: set[str] = set()
    primed: set[str] = set()
    _names_in(prog.lhs, acc, primed)
    _names_in(prog.rhs, acc, primed)
    if prog.unknown is not None:
        unknown = prog.unknown
    else:
        cands = sorted(n for n in primed if n not in env and n not in let_names)
        if len(cands) != 1:
            raise OdeSyntaxError(
                "cannot determine the unknown: primed undeclared names are " + repr(cands)
            )
        unknown = cands[0]
    undeclared = sorted(n for n in acc if n not in env and n not in let_names and n != unknown)
    if undeclared:
        raise OdeSyntaxError("undeclared names in ode: " + ", ".join(undeclared))
    y = sympy.Function(unknown)(x)

    def ev(e: tuple, scope: dict[str, sympy.Expr]) -> sympy.Expr:
        k = e[0]
        if k == "num":
            return e[1]
        if k == "I":
            return sympy.I
        if k == "name":
            n = e[1]
            if n in scope:
                return scope[n]
            if n == unknown:
                return y
            raise OdeSyntaxError(f"undeclared name {n!r}")
        if k == "neg":
            return -ev(e[1], scope)
        if k == "add":
            return ev(e[1], scope) + ev(e[2], scope)
        if k == "sub":
            return ev(e[1], scope) - ev(e[2], scope)
        if k == "mul":
            return ev(e[1], scope) * ev(e[2], scope)
        if k == "div":
            d = ev(e[2], scope)
            if d == 0:
                raise OdeSyntaxError("division by zero")
            return ev(e[1], scope) / d
        if k == "pow":
            b = ev(e[1], scope)
            ex = ev(e[2], scope)
            if ex.has(x) or ex.has(y):
                raise OdeSyntaxError("exponent depends on the variable or the unknown")
            return b**ex
        if k == "sqrt":
            return sympy.sqrt(ev(e[1], scope))
        if k == "prime":
            return sympy.diff(ev(e[1], scope), x)
        raise AssertionError(k)

    scope = dict(env)
    for n, e in prog.lets:
        val = ev(e, scope)
        if val.has(y):
            raise OdeSyntaxError(f"let {n!r} uses the unknown")
        scope[n] = val
    expr = ev(prog.lhs, scope) - ev(prog.rhs, scope)
    low = Lowered(prog, x, psyms, unknown, y, expr)
    _extract_coefficients(low)
    return low


def _extract_coefficients(low: Lowered) -> None:
    x, y = low.x, low.y
    Y0, Y1, Y2 = sympy.symbols("__Y0 __Y1 __Y2")
    e = low.lhs_minus_rhs
    for d in e.atoms(sympy.Derivative):
        if d.expr == y and d.derivative_count > 2:
            raise OdeSyntaxError("derivative of order > 2 of the unknown")
    e = e.subs(sympy.Derivative(y, (x, 2)), Y2)
    e = e.subs(sympy.Derivative(y, x), Y1)
    e = e.subs(y, Y0)
    if e.has(low.y.func):
        raise OdeSyntaxError("the unknown appears in an unsupported way")
    a = []
    for Y in (Y2, Y1, Y0):
        c = sympy.diff(e, Y)
        if c.has(Y0) or c.has(Y1) or c.has(Y2):
            raise OdeSyntaxError("the equation is not linear in the unknown")
        a.append(c)
    rest = e.subs({Y0: 0, Y1: 0, Y2: 0})
    if rest != 0:
        # may be a zero in disguise; check exactly with the flint route
        ctx = make_ctx(low)
        if not to_rf(rest, ctx).is_zero():
            raise OdeSyntaxError("the equation is not homogeneous (a term without the unknown)")
    low.a2, low.a1, low.a0 = a
    if low.a2 == 0:
        raise OdeSyntaxError("no second derivative of the unknown")


def load(path: str) -> Lowered:
    with open(path, encoding="utf-8") as fh:
        return lower(parse(fh.read()))


def load_text(src: str) -> Lowered:
    return lower(parse(src))


# --------------------------------------------------------------------------
# Exact rational functions with a real denominator, on python-flint
# --------------------------------------------------------------------------


class RFCtx:
    def __init__(self, names: list[str]):
        self.names = list(names)
        # flint wants ASCII generator names; user names may be Unicode (ω)
        self.mctx = flint.fmpq_mpoly_ctx.get(tuple(f"g{k}" for k in range(len(self.names))), "lex")
        self.zero = self.mctx.from_dict({})
        self.one = self.mctx.from_dict({(0,) * len(self.names): 1})
        self.gens = dict(zip(self.names, self.mctx.gens()))

    def const(self, c) -> "flint.fmpq_mpoly":
        if c == 0:
            return self.zero
        return self.mctx.from_dict({(0,) * len(self.names): c})


def make_ctx(low: Lowered) -> RFCtx:
    return RFCtx([low.prog.var] + list(low.prog.params))


class RF:
    """(nr + i*ni)/d with nr, ni, d in Q[gens], d != 0, reduced:
    gcd(nr, ni, d) = 1 and d monic (leading coefficient 1 in lex order)."""

    __slots__ = ("c", "nr", "ni", "d")

    def __init__(self, c: RFCtx, nr, ni, d, reduce: bool = True):
        self.c, self.nr, self.ni, self.d = c, nr, ni, d
        if reduce:
            self._reduce()

    def _reduce(self):
        c = self.c
        if self.nr.is_zero() and self.ni.is_zero():
            self.d = c.one
            return
        g = self.d.gcd(self.nr)
        if not self.ni.is_zero():
            g = g.gcd(self.ni)
        if not g.is_one():
            self.nr = self.nr / g
            self.ni = self.ni / g
            self.d = self.d / g
        lc = self.d.leading_coefficient()
        if lc != 1:
            self.nr = self.nr / lc
            self.ni = self.ni / lc
            self.d = self.d / lc

    def is_zero(self) -> bool:
        return self.nr.is_zero() and self.ni.is_zero()

    def __add__(self, o: "RF") -> "RF":
        if self.d == o.d:
            return RF(self.c, self.nr + o.nr, self.ni + o.ni, self.d)
        g = self.d.gcd(o.d)
        d1 = self.d / g
        d2 = o.d / g
        return RF(self.c, self.nr * d2 + o.nr * d1, self.ni * d2 + o.ni * d1, d1 * d2 * g)

    def __neg__(self) -> "RF":
        return RF(self.c, -self.nr, -self.ni, self.d, reduce=False)

    def __sub__(self, o: "RF") -> "RF":
        return self + (-o)

    def __mul__(self, o: "RF") -> "RF":
        nr = self.nr * o.nr - self.ni * o.ni
        ni = self.nr * o.ni + self.ni * o.nr
        return RF(self.c, nr, ni, self.d * o.d)

    def scale(self, q) -> "RF":
        return RF(self.c, self.nr * q, self.ni * q, self.d, reduce=False) if q != 0 else RF(
            self.c, self.c.zero, self.c.zero, self.c.one, reduce=False
        )

    def inv(self) -> "RF":
        if self.is_zero():
            raise ZeroDivisionError("division by zero rational function")
        # 1/((a+ib)/d) = d (a - ib) / (a^2 + b^2)
        if self.ni.is_zero():
            return RF(self.c, self.d, self.c.zero, self.nr)
        norm = self.nr * self.nr + self.ni * self.ni
        return RF(self.c, self.d * self.nr, -(self.d * self.ni), norm)

    def __truediv__(self, o: "RF") -> "RF":
        return self * o.inv()

    def __pow__(self, n: int) -> "RF":
        if n < 0:
            return self.inv() ** (-n)
        result = RF(self.c, self.c.one, self.c.zero, self.c.one, reduce=False)
        base = self
        while n:
            if n & 1:
                result = result * base
            n >>= 1
            if n:
                base = base * base
        return result

    def deriv(self, name: str) -> "RF":
        k = self.c.names.index(name)
        dd = self.d.derivative(k)
        nr = self.nr.derivative(k) * self.d - self.nr * dd
        ni = self.ni.derivative(k) * self.d - self.ni * dd
        return RF(self.c, nr, ni, self.d * self.d)

    def sqrt(self) -> "RF":
        """Exact square root where numerator and denominator are squares
        (real case only); raises NotRational otherwise."""
        if not self.ni.is_zero():
            raise NotRational("sqrt of a non-real expression")
        try:
            return RF(self.c, self.nr.sqrt(), self.c.zero, self.d.sqrt())
        except Exception as exc:  # flint raises ValueError/DomainError
            raise NotRational("sqrt of a non-square") from exc

    def __eq__(self, o) -> bool:
        return self.nr == o.nr and self.ni == o.ni and self.d == o.d

    def __hash__(self):
        return hash((str(self.nr), str(self.ni), str(self.d)))


class NotRational(Exception):
    """A sub-expression is not a rational function of (var, params)."""


def to_rf(e: sympy.Expr, c: RFCtx, memo: dict | None = None) -> RF:
    """Convert a sympy expression to RF; symbolic / fractional powers must
    have been cancelled already (NotRational otherwise)."""
    if memo is None:
        memo = {}
    hit = memo.get(e)
    if hit is not None:
        return hit
    if e.is_Rational:
        r = RF(c, c.const(flint.fmpq(int(e.p), int(e.q))), c.zero, c.one, reduce=False)
    elif e is sympy.I:
        r = RF(c, c.zero, c.one, c.one, reduce=False)
    elif e.is_Symbol:
        if e.name not in c.gens:
            raise NotRational(f"unknown symbol {e}")
        r = RF(c, c.gens[e.name], c.zero, c.one, reduce=False)
    elif e.is_Add:
        args = [to_rf(a, c, memo) for a in e.args]
        r = args[0]
        for a in args[1:]:
            r = r + a
    elif e.is_Mul:
        args = [to_rf(a, c, memo) for a in e.args]
        r = args[0]
        for a in args[1:]:
            r = r * a
    elif e.is_Pow:
        b, ex = e.args
        if ex.is_Integer:
            r = to_rf(b, c, memo) ** int(ex)
        elif ex.is_Rational and ex.q == 2:
            r = to_rf(b, c, memo).sqrt() ** int(ex.p)
        else:
            raise NotRational(f"non-integer power {e}")
    elif isinstance(e, sympy.Number) and e.is_complex:
        re_, im_ = e.as_real_imag()
        if not (re_.is_Rational and im_.is_Rational):
            raise NotRational(f"non-rational number {e}")
        r = RF(c, c.const(flint.fmpq(int(re_.p), int(re_.q))), c.const(flint.fmpq(int(im_.p), int(im_.q))), c.one)
    else:
        raise NotRational(f"unsupported expression {type(e).__name__}: {e}")
    memo[e] = r
    return r


def power_variants(e: sympy.Expr):
    """e, then rewritings of e in which sympy merges powers of equal bases
    (symbolic exponents like Delta^(s+1)*Delta^(-s) cancel there)."""
    yield e
    yield sympy.powsimp(e, combine="exp", force=True)
    e2 = sympy.expand_power_base(e, force=True)
    yield sympy.powsimp(e2, combine="exp", force=True)
    e3 = sympy.expand(e2, power_base=True, power_exp=True, mul=False, multinomial=False)
    yield sympy.powsimp(e3, combine="exp", force=True)
    yield sympy.powsimp(e3, force=True)


def cancel_powers(e: sympy.Expr, c: RFCtx) -> sympy.Expr:
    """The first of power_variants(e) that is a rational function."""
    last = None
    for v in power_variants(e):
        try:
            to_rf(v, c)
            return v
        except NotRational as exc:
            last = exc
    raise NotRational(
        f"a coefficient is not rational in {c.names[0]} after dividing by a2: {last}"
    )


def to_rf_cancelling(e: sympy.Expr, c: RFCtx) -> RF:
    """to_rf, after letting sympy merge powers of equal bases."""
    last = None
    for v in power_variants(e):
        try:
            return to_rf(v, c)
        except NotRational as exc:
            last = exc
    raise NotRational(
        f"a coefficient is not rational in {c.names[0]} after dividing by a2: {last}"
    )


# --------------------------------------------------------------------------
# Normal form
# --------------------------------------------------------------------------


@dataclass
class NormalForm:
    names: list[str]  # [var, params...]
    ctx: RFCtx
    num_re: "flint.fmpq_mpoly"
    num_im: "flint.fmpq_mpoly"
    den: "flint.fmpq_mpoly"  # integer, primitive, positive leading coeff


def p_q_rf(low: Lowered, c: RFCtx | None = None) -> tuple[RF, RF, RFCtx]:
    c = c or make_ctx(low)
    p = to_rf_cancelling(low.a1 / low.a2, c)
    q = to_rf_cancelling(low.a0 / low.a2, c)
    return p, q, c


def q_from_pq(p: RF, q: RF, var: str) -> RF:
    """Q = q - p'/2 - p^2/4 (exact, reduced)."""
    half = flint.fmpq(1, 2)
    quarter = flint.fmpq(1, 4)
    return q - p.deriv(var).scale(half) - (p * p).scale(quarter)


def canonical(Q: RF) -> NormalForm:
    """Scale (N, D) so that D has integer coprime coefficients and a positive
    leading coefficient (lex order, generators [var, params...])."""
    c = Q.c
    d = Q.d
    coeffs = d.coeffs()
    den_lcm = 1
    for co in coeffs:
        den_lcm = _lcm(den_lcm, int(co.denom()))
    ints = [int(co.numer()) * (den_lcm // int(co.denom())) for co in coeffs]
    g = 0
    for v in ints:
        g = _gcd(g, abs(v))
    scale = flint.fmpq(den_lcm, g)
    if ints[0] < 0:
        scale = -scale
    return NormalForm(c.names, c, Q.nr * scale, Q.ni * scale, d * scale)


def _gcd(a: int, b: int) -> int:
    while b:
        a, b = b, a % b
    return a


def _lcm(a: int, b: int) -> int:
    return a // _gcd(a, b) * b


def normal_form(low: Lowered) -> NormalForm:
    p, q, c = p_q_rf(low)
    return canonical(q_from_pq(p, q, low.prog.var))


# --- the slow route (sympy only) -------------------------------------------


def sympy_Q(low: Lowered) -> sympy.Expr:
    x = low.x
    c = make_ctx(low)
    p = cancel_powers(low.a1 / low.a2, c)
    q = cancel_powers(low.a0 / low.a2, c)
    return sympy.cancel(q - sympy.diff(p, x) / 2 - p**2 / 4)


def sympy_matches(low: Lowered, nf: NormalForm, Qs: sympy.Expr) -> bool:
    """Is the sympy-cancelled Q equal to the flint canonical N/D?"""
    gens = [low.x] + low.params
    n_s, d_s = sympy.fraction(sympy.together(Qs))
    N = poly_to_sympy(nf.num_re, gens) + sympy.I * poly_to_sympy(nf.num_im, gens)
    D = poly_to_sympy(nf.den, gens)
    return sympy.expand(N * d_s - n_s * D) == 0


def poly_to_sympy(pol, gens: list[sympy.Symbol]) -> sympy.Expr:
    out = []
    for mon, co in pol.terms():
        t = sympy.Rational(int(co.numer()), int(co.denom()))
        for g, k in zip(gens, mon):
            if k:
                t = t * g**k
        out.append(t)
    return sympy.Add(*out)


def sympy_to_poly(e: sympy.Expr, c: RFCtx):
    """A polynomial sympy expression (real coefficients) to fmpq_mpoly."""
    r = to_rf(sympy.expand(e), c)
    if not r.d.is_one() or not r.ni.is_zero():
        raise ValueError("not a real polynomial")
    return r.nr


# --------------------------------------------------------------------------
# Printing in the input language
# --------------------------------------------------------------------------


def _q_text(q) -> str:
    n, d = int(q.numer()), int(q.denom())
    return str(n) if d == 1 else f"{n}/{d}"


def _mono_text(mon, names) -> str:
    parts = []
    for nm, k in zip(names, mon):
        if k == 1:
            parts.append(nm)
        elif k > 1:
            parts.append(f"{nm}^{k}")
    return "*".join(parts)


def poly_text(re_pol, im_pol, names) -> str:
    """Expanded polynomial text: terms in descending lex order of the
    monomial (generators [var, params...]), real part before imaginary
    part; factors in generator order; '^' for powers; rationals as p/q; the
    imaginary unit as I.  Zero is '0'."""
    terms: dict[tuple, list] = {}
    for mon, co in re_pol.terms():
        terms.setdefault(tuple(mon), [None, None])[0] = co
    if im_pol is not None:
        for mon, co in im_pol.terms():
            terms.setdefault(tuple(mon), [None, None])[1] = co
    out = []
    for mon in sorted(terms, reverse=True):
        mtext = _mono_text(mon, names)
        for part, co in enumerate(terms[mon]):
            if co is None or co == 0:
                continue
            neg = co < 0
            a = -co if neg else co
            factors = []
            if a != 1 or (not mtext and part == 0):
                factors.append(_q_text(a))
            if part == 1:
                factors.append("I")
            if mtext:
                factors.append(mtext)
            body = "*".join(factors)
            if not out:
                out.append(("-" if neg else "") + body)
            else:
                out.append((" - " if neg else " + ") + body)
    return "".join(out) if out else "0"


def main(argv: list[str]) -> int:
    if len(argv) != 2:
        print("usage: ode_reference.py FILE.ode", file=sys.stderr)
        return 2
    try:
        low = load(argv[1])
        nf = normal_form(low)
    except (OdeSyntaxError, NotRational) as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 1
    print("var   :", low.prog.var)
    print("params:", ", ".join(low.prog.params))
    print("num   :", poly_text(nf.num_re, nf.num_im, nf.names))
    print("den   :", poly_text(nf.den, None, nf.names))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
