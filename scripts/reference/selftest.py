#!/usr/bin/env python3
"""Self-test of the reference implementation (ode_reference.py).

    python3 scripts/reference/selftest.py

* Normal forms with a published closed form:
    - Regge–Wheeler (Regge & Wheeler 1957): Q = quartic in r / (r (r - 2M))^2;
    - Bessel, DLMF 10.2.1: Q = 1 + (1/4 - nu^2)/z^2;
    - Legendre, DLMF 14.2.1: Q = ((1 - x^2) nu (nu+1) + 1 - mu^2)/(1 - x^2)^2.
* The python-flint route equals sympy.cancel on every sample except
  teukolsky_radial (sympy.cancel takes minutes there; verify_samples.py
  checks it another way).
* Canonical-form invariants (D integer, primitive, positive leading
  coefficient in lex order; gcd(Re N, Im N, D) = 1) and that the golden
  texts parse back, with this parser, to the same canonical form.
* Parser details from grammar/canonode.ebnf.
"""

from __future__ import annotations

import json
import sys
import time
from pathlib import Path

import flint
import sympy as sp

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import ode_reference as ref  # noqa: E402

ROOT = HERE.parent.parent
SAMPLES = ROOT / "samples"
GOLDEN = ROOT / "tests" / "golden"
SLOW_FOR_SYMPY = {"teukolsky_radial"}

passed = 0
failed = 0


def check(name: str, cond: bool, detail: str = ""):
    global passed, failed
    if cond:
        passed += 1
    else:
        failed += 1
        print(f"FAIL {name} {detail}")


def nf_expr(low, nf):
    gens = [low.x] + low.params
    N = ref.poly_to_sympy(nf.num_re, gens) + sp.I * ref.poly_to_sympy(nf.num_im, gens)
    D = ref.poly_to_sympy(nf.den, gens)
    return N, D


def test_closed_forms():
    low = ref.load(str(SAMPLES / "regge_wheeler.ode"))
    nf = ref.normal_form(low)
    N, D = nf_expr(low, nf)
    r, M = low.x, low.params[0]
    check("RW den = (r(r-2M))^2", sp.expand(D - (r * (r - 2 * M)) ** 2) == 0, str(D))
    check("RW num quartic in r", sp.Poly(N, r).degree() == 4, str(N))
    check("RW num real", nf.num_im.is_zero())

    low = ref.load(str(SAMPLES / "bessel.ode"))
    N, D = nf_expr(low, ref.normal_form(low))
    z, nu = low.x, low.params[0]
    check("Bessel Q (DLMF 10.2.1)", sp.cancel(N / D - (1 + (sp.Rational(1, 4) - nu**2) / z**2)) == 0)

    low = ref.load(str(SAMPLES / "legendre.ode"))
    N, D = nf_expr(low, ref.normal_form(low))
    x, nu, mu = low.x, low.params[0], low.params[1]
    target = ((1 - x**2) * nu * (nu + 1) + 1 - mu**2) / (1 - x**2) ** 2
    check("Legendre Q (DLMF 14.2.1)", sp.cancel(N / D - target) == 0)
    check("Legendre den = (x^2-1)^2 (positive lead)", sp.expand(D - (x**2 - 1) ** 2) == 0, str(D))


def invariants(nf) -> bool:
    d = nf.den
    coeffs = d.coeffs()
    if any(c.denom() != 1 for c in coeffs):
        return False
    g = 0
    for c in coeffs:
        g = ref._gcd(g, abs(int(c.numer())))
    if g != 1 or coeffs[0] <= 0:
        return False
    gg = d.gcd(nf.num_re)
    if not nf.num_im.is_zero():
        gg = gg.gcd(nf.num_im)
    return gg.is_one()


def test_flint_vs_sympy():
    rows = []
    for path in sorted(SAMPLES.glob("*.ode")):
        low = ref.load(str(path))
        t0 = time.perf_counter()
        nf = ref.normal_form(low)
        t1 = time.perf_counter()
        check(f"invariants {path.name}", invariants(nf))
        if path.stem in SLOW_FOR_SYMPY:
            rows.append((path.name, t1 - t0, None))
            continue
        Qs = ref.sympy_Q(low)
        t2 = time.perf_counter()
        check(f"flint == sympy.cancel {path.name}", ref.sympy_matches(low, nf, Qs))
        rows.append((path.name, t1 - t0, t2 - t1))
    return rows


def test_golden_roundtrip():
    files = sorted(GOLDEN.glob("*.json"))
    check("goldens exist", len(files) == len(list(SAMPLES.glob("*.ode"))), str(len(files)))
    for gp in files:
        g = json.loads(gp.read_text(encoding="utf-8"))
        low = ref.load(str(SAMPLES / g["sample"]))
        nf = ref.normal_form(low)
        # parse the golden back: y'' + (num)/(den) y = 0 has Q = num/den
        src = f"var {g['var']}\n"
        if g["params"]:
            src += "param " + ", ".join(g["params"]) + "\n"
        src += f"ode __y'' + ({g['num']})/({g['den']})*__y = 0\n".replace("__y", "yy_")
        low2 = ref.load_text(src)
        nf2 = ref.normal_form(low2)
        check(f"golden round trip {gp.name}",
              nf2.num_re == nf.num_re and nf2.num_im == nf.num_im and nf2.den == nf.den)
        # den_factors multiply back to den
        c = ref.make_ctx(low)
        prod = ref.RF(c, c.const(flint.fmpq(*map(int, (g["den_content"] + "/1").split("/")[:2]))), c.zero, c.one, reduce=False)
        for ftext, mult in g["den_factors"]:
            fr = ref.load_text(src.replace(f"ode yy_'' + ({g['num']})/({g['den']})*yy_ = 0",
                                           f"let F_ = {ftext}\node yy_'' + F_*yy_ = 0"))
            fr_nf = ref.normal_form(fr)
            prod = prod * ref.RF(c, fr_nf.num_re, c.zero, c.one, reduce=False) ** mult
        check(f"den_factors product {gp.name}", prod.nr == nf.den and prod.d.is_one())


def parse_Q(src: str):
    low = ref.load_text(src)
    nf = ref.normal_form(low)
    return ref.poly_text(nf.num_re, nf.num_im, nf.names), ref.poly_text(nf.den, None, nf.names)


def expect_error(name: str, src: str):
    try:
        ref.normal_form(ref.load_text(src))
    except (ref.OdeSyntaxError, ref.NotRational):
        check(name, True)
        return
    check(name, False, "no error raised")


def test_parser():
    # exact decimals, exponent, unary minus, right-assoc power, r^-2
    check("decimal", ref.decimal_to_rational("0.25") == sp.Rational(1, 4))
    check("exponent", ref.decimal_to_rational("1e-3") == sp.Rational(1, 1000))
    check("leading dot", ref.decimal_to_rational(".5E+1") == 5)
    check("trailing dot", ref.decimal_to_rational("2.") == 2)
    n, d = parse_Q("var x\node y'' + -x^2*y = 0")
    check("-x^2 is -(x^2)", (n, d) == ("-x^2", "1"), str((n, d)))
    n, d = parse_Q("var x\node y'' + 2^3^2*x^-2*y = 0")
    check("right assoc ^ and x^-2", (n, d) == ("512", "x^2"), str((n, d)))
    # continuation after a binary operator, newlines inside parentheses, ';'
    n, d = parse_Q("var x; param a,\n b\nlet f = (x\n + a*b)\node 2*y'' + f*y +\n 0 = y'' -\n x*y")
    check("continuation", (n, d) == ("2*x + a*b", "1"), str((n, d)))
    # primes on lets and parenthesised expressions; prime of a parameter is 0
    n, d = parse_Q("var x\nparam a\nlet g = x^3\node y'' + (g' + a' + (x^2)'' + x')*y = 0")
    check("primes", (n, d) == ("3*x^2 + 3", "1"), str((n, d)))
    # I and sqrt of a perfect square
    n, d = parse_Q("var x\nparam k\node y'' + (I*k + sqrt(4*x^2))*y = 0")
    check("I and sqrt", (n, d) == ("2*x + I*k", "1"), str((n, d)))
    # explicit unknown, unicode names, comments
    n, d = parse_Q("var ξ # comment\nparam ω\nunknown ψ\node ψ'' + ω^2*ψ = 0 # more")
    check("unicode + unknown", (n, d) == ("ω^2", "1"), str((n, d)))
    # symbolic powers that cancel
    n, d = parse_Q("var r\nparam s\nlet D = r^2 + 1\node D^(-s)*(D^(s+1)*y')' = 0")
    check("symbolic powers cancel", d == "r^4 + 2*r^2 + 1", str((n, d)))
    # errors
    expect_error("two vars", "var x\nvar z\node y'' = 0")
    expect_error("no ode", "var x")
    expect_error("nonlinear", "var x\node y'' + y^2 = 0")
    expect_error("inhomogeneous", "var x\node y'' + y = x")
    expect_error("undeclared", "var x\node y'' + k*y = 0")
    expect_error("exponent with var", "var x\node y'' + 2^x*y = 0")
    expect_error("non-cancelling power", "var x\nparam s\node y'' + x^s*y = 0")
    expect_error("third derivative", "var x\node y''' + y = 0")
    expect_error("reserved word", "var I\node y'' = 0")
    expect_error("unbalanced", "var x\node (y'' = 0")


def main() -> int:
    t0 = time.perf_counter()
    test_closed_forms()
    test_parser()
    rows = test_flint_vs_sympy()
    test_golden_roundtrip()
    if "-v" in sys.argv:
        for name, tf, ts in rows:
            print(f"  {name:40s} flint {tf * 1e3:8.2f} ms   sympy.cancel "
                  + ("skipped" if ts is None else f"{ts * 1e3:9.1f} ms"))
    print(f"selftest ({time.perf_counter() - t0:.1f} s): {passed} passed, {failed} failed")
    return 0 if failed == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
