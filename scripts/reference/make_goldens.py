#!/usr/bin/env python3
"""Write the reference goldens tests/golden/<stem>.json for samples/*.ode.

Every golden is computed here by the independent reference in
ode_reference.py (sympy + python-flint); nothing is typed in by hand.

    python3 scripts/reference/make_goldens.py           # (re)write goldens
    python3 scripts/reference/make_goldens.py --check   # exit 1 if stale

Golden schema (keys sorted, 2-space indent, UTF-8, trailing newline):
  "sample"      file name of the sample, e.g. "bessel.ode"
  "var"         the independent variable
  "params"      parameter names in declaration order
  "unknown"     the unknown function's name
  "gens"        generator order used for "leading term": [var, params...]
  "ordering"    "lex" (terms of num/den are printed in descending lex order)
  "num"         N, expanded, in the input language (Gaussian-rational
                coefficients, I for the imaginary unit)
  "den"         D, expanded, integer coefficients, primitive, positive
                leading coefficient in lex order over "gens"
                (Q = num/den, gcd(Re N, Im N, D) = 1)
  "den_content" the constant c with D = c * prod(factor^mult) (text)
  "den_factors" [[factor text, multiplicity], ...] from sympy.factor_list,
                each factor made integer, primitive, with positive leading
                coefficient (text as for "den"), sorted by total degree then
                text; parameter-only factors (e.g. alpha) are included
  "points"      4 points: {"at": {name: value text}, "Q": [re, im]} with
                value text a short exact decimal, "a", or "a+bi"/"a-bi";
                Q evaluated exactly (Gaussian rationals) and rounded to
                IEEE double, printed with 17 significant digits.
"""

from __future__ import annotations

import argparse
import random
import shutil
import sys
import tempfile
import time
from fractions import Fraction
from pathlib import Path

import sympy

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import ode_reference as ref  # noqa: E402

ROOT = HERE.parent.parent
SAMPLES = ROOT / "samples"
GOLDEN = ROOT / "tests" / "golden"

SEED_PREFIX = "canonode-goldens-v1:"
MIN_REL = Fraction(1, 20)  # |F(pt)| >= MIN_REL * sum |terms of F at pt|


# --------------------------------------------------------------------------
# Gaussian-rational evaluation
# --------------------------------------------------------------------------

def _cmul(a, b):
    return (a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0])


def eval_poly(pol, point):
    """Exact value of a real fmpq_mpoly at a point of Gaussian rationals,
    and the sum of the absolute values (squared-norm bound) of its terms."""
    degs = pol.degrees() if not pol.is_zero() else ()
    powers = []
    for v, d in zip(point, degs):
        pw = [(Fraction(1), Fraction(0))]
        for _ in range(d):
            pw.append(_cmul(pw[-1], v))
        powers.append(pw)
    re, im = Fraction(0), Fraction(0)
    mag = 0.0
    for mon, co in pol.terms():
        t = (Fraction(int(co.numer()), int(co.denom())), Fraction(0))
        for k, e in enumerate(mon):
            if e:
                t = _cmul(t, powers[k][e])
        re += t[0]
        im += t[1]
        mag += abs(complex(float(t[0]), float(t[1])))
    return (re, im), mag


def _dec_text(x: Fraction) -> str:
    """Exact short decimal text of x (x has a power-of-ten denominator)."""
    neg = x < 0
    x = -x if neg else x
    k = 0
    while (10**k) % x.denominator:
        k += 1
        assert k < 30, x
    n = x.numerator * (10**k // x.denominator)
    ip, fp = divmod(n, 10**k)
    s = str(ip)
    if k:
        fs = str(fp).rjust(k, "0").rstrip("0")
        if fs:
            s += "." + fs
    return ("-" if neg else "") + s


def value_text(v) -> str:
    re, im = v
    if im == 0:
        return _dec_text(re)
    sign = "+" if im > 0 else "-"
    return f"{_dec_text(re)}{sign}{_dec_text(abs(im))}i"


def _rand_real(rng: random.Random) -> Fraction:
    while True:
        k = rng.randint(-300, 300)
        if abs(k) >= 10:
            return Fraction(k, 100)


def _rand_imag(rng: random.Random) -> Fraction:
    while True:
        k = rng.randint(-999, 999)
        if abs(k) >= 20:
            return Fraction(k, 1000)


def choose_points(stem: str, names: list[str], factors, n: int = 4):
    """Deterministic points away from the zeros of every denominator factor.
    Point 0, 1: all real; point 2: complex variable; point 3: all complex."""
    rng = random.Random(SEED_PREFIX + stem)
    pts = []
    for k in range(n):
        for _attempt in range(1000):
            pt = []
            for j, _ in enumerate(names):
                re = _rand_real(rng)
                cplx = (k == 2 and j == 0) or k == 3
                im = _rand_imag(rng) if cplx else Fraction(0)
                pt.append((re, im))
            ok = True
            for f in factors:
                (fr, fi), mag = eval_poly(f, pt)
                val = abs(complex(float(fr), float(fi)))
                if mag == 0 or val < float(MIN_REL) * mag or val == 0:
                    ok = False
                    break
            if ok:
                pts.append(pt)
                break
        else:
            raise RuntimeError(f"{stem}: no point away from singularities")
    return pts


def fmt17(x: float) -> str:
    s = format(x, ".17g")
    if s in ("inf", "-inf", "nan"):
        raise ValueError("non-finite value")
    return s


# --------------------------------------------------------------------------
# Deterministic JSON
# --------------------------------------------------------------------------

class Raw(str):
    """Pre-formatted JSON number text."""


def dump(obj, indent=0) -> str:
    import json

    pad = "  " * indent
    pad1 = "  " * (indent + 1)
    if isinstance(obj, Raw):
        return str(obj)
    if isinstance(obj, dict):
        if not obj:
            return "{}"
        items = [f"{pad1}{json.dumps(k, ensure_ascii=False)}: {dump(obj[k], indent + 1)}" for k in sorted(obj)]
        return "{\n" + ",\n".join(items) + "\n" + pad + "}"
    if isinstance(obj, list):
        if not obj:
            return "[]"
        if all(isinstance(v, (Raw, int, str)) for v in obj):
            return "[" + ", ".join(dump(v, indent + 1) for v in obj) + "]"
        items = [pad1 + dump(v, indent + 1) for v in obj]
        return "[\n" + ",\n".join(items) + "\n" + pad + "]"
    if isinstance(obj, bool) or obj is None:
        return json.dumps(obj)
    if isinstance(obj, int):
        return str(obj)
    if isinstance(obj, str):
        return json.dumps(obj, ensure_ascii=False)
    raise TypeError(type(obj))


# --------------------------------------------------------------------------
# One golden
# --------------------------------------------------------------------------

def golden_for(path: Path) -> dict:
    low = ref.load(str(path))
    nf = ref.normal_form(low)
    names = nf.names
    gens = [low.x] + low.params
    D_sym = ref.poly_to_sympy(nf.den, gens)
    content, flist = sympy.factor_list(D_sym, *gens)
    content = sympy.Rational(content)
    facs = []
    for fac, mult in flist:
        fp = ref.sympy_to_poly(fac, nf.ctx)
        # each factor: integer, primitive, positive leading coefficient (lex),
        # so that the text does not depend on sympy's sign conventions
        fp_c = ref.canonical(ref.RF(nf.ctx, nf.ctx.one, nf.ctx.zero, fp)).den
        k = fp.leading_coefficient() / fp_c.leading_coefficient()
        content *= sympy.Rational(int(k.numer()), int(k.denom())) ** int(mult)
        facs.append((fp_c, int(mult)))
    # deterministic order: by total degree, then by text
    facs.sort(key=lambda fm: (fm[0].total_degree(), ref.poly_text(fm[0], None, names), fm[1]))
    fpolys = [f for f, _ in facs]
    factors = [[ref.poly_text(f, None, names), m] for f, m in facs]
    flist = [(ref.poly_to_sympy(f, gens), m) for f, m in facs]
    # consistency: the factorisation reproduces D
    prod = sympy.expand(content * sympy.Mul(*[f**m for f, m in flist]))
    assert sympy.expand(prod - D_sym) == 0, path
    if not fpolys:  # constant denominator: keep points generic anyway
        fpolys = []
    pts = choose_points(path.stem, names, fpolys)
    points = []
    for pt in pts:
        (nrr, nri), _ = eval_poly(nf.num_re, pt)
        (nir, nii), _ = eval_poly(nf.num_im, pt)
        n_re, n_im = nrr - nii, nri + nir  # Nr(pt) + i Ni(pt)
        (d_re, d_im), _ = eval_poly(nf.den, pt)
        den2 = d_re * d_re + d_im * d_im
        q_re = (n_re * d_re + n_im * d_im) / den2
        q_im = (n_im * d_re - n_re * d_im) / den2
        points.append(
            {
                "at": {nm: value_text(v) for nm, v in zip(names, pt)},
                "Q": [Raw(fmt17(float(q_re))), Raw(fmt17(float(q_im)))],
            }
        )
    c = content
    return {
        "sample": path.name,
        "var": low.prog.var,
        "params": list(low.prog.params),
        "unknown": low.unknown,
        "gens": names,
        "ordering": "lex",
        "num": ref.poly_text(nf.num_re, nf.num_im, names),
        "den": ref.poly_text(nf.den, None, names),
        "den_content": str(c.p) if c.q == 1 else f"{c.p}/{c.q}",
        "den_factors": factors,
        "points": points,
    }


def write_all(outdir: Path, verbose: bool = True) -> list[str]:
    outdir.mkdir(parents=True, exist_ok=True)
    written = []
    for path in sorted(SAMPLES.glob("*.ode")):
        t0 = time.perf_counter()
        g = golden_for(path)
        text = dump(g) + "\n"
        out = outdir / (path.stem + ".json")
        with open(out, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
        written.append(out.name)
        if verbose:
            print(f"{path.name:40s} {time.perf_counter() - t0:7.3f} s", file=sys.stderr)
    return written


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--check", action="store_true", help="regenerate into a temp dir and compare")
    ap.add_argument("--quiet", action="store_true")
    args = ap.parse_args()
    t0 = time.perf_counter()
    if not args.check:
        write_all(GOLDEN, verbose=not args.quiet)
        print(f"goldens written to {GOLDEN} in {time.perf_counter() - t0:.2f} s", file=sys.stderr)
        return 0
    tmp = Path(tempfile.mkdtemp(prefix="canonode-goldens-"))
    try:
        names = write_all(tmp, verbose=not args.quiet)
        bad = []
        for nm in names:
            new = (tmp / nm).read_bytes()
            old_p = GOLDEN / nm
            if not old_p.exists():
                bad.append(f"missing: tests/golden/{nm}")
            elif old_p.read_bytes() != new:
                bad.append(f"differs: tests/golden/{nm}")
        if GOLDEN.exists():
            for p in sorted(GOLDEN.glob("*.json")):
                if p.name not in names:
                    bad.append(f"stale (no sample): tests/golden/{p.name}")
        for b in bad:
            print(b)
        status = "FAILED" if bad else "ok"
        print(f"golden check {status}: {len(names)} samples, {len(bad)} problems, "
              f"{time.perf_counter() - t0:.2f} s")
        return 1 if bad else 0
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
