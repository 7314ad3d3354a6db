"""`canonode.reduce` against `canonode reduce --format json` for every
sample, the Regge–Wheeler Q, `to_sympy` against sympy's own derivation of
the Teukolsky normal form, and `Q_at` against sympy's evaluation."""

import pathlib

import pytest

import canonode
from conftest import SAMPLES, cli_json, rel


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_every_sample_matches_the_command_line(sample):
    r = canonode.reduce(pathlib.Path(rel(sample)))
    assert r.json == cli_json("reduce", rel(sample))


def test_regge_wheeler_q_equals_the_command_line_exactly():
    # Regge & Wheeler 1957 (samples/regge_wheeler.ode): the same exact text.
    r = canonode.reduce(pathlib.Path("samples/regge_wheeler.ode"))
    assert r.Q == cli_json("reduce", "samples/regge_wheeler.ode")["normal_form"]["Q"]
    assert r.variable == "r" and r.parameters == ["M", "omega", "l", "s"]


def test_inline_equation_and_options_match_the_command_line():
    eq = "z^2*w'' + z*w' + (z^2 - nu^2)*w = 0"  # DLMF 10.2.1 (Bessel)
    r = canonode.reduce(eq, var="z", subst="z=1/t")
    assert r.json == cli_json("reduce", "-e", eq, "--var", "z", "--subst", "z=1/t")
    # DLMF 10.2.1 in normal form: Q = 1 + (1/4 − ν²)/z².
    assert canonode.reduce(eq, var="z").Q == "(z^2 - nu^2 + 1/4)/z^2"


def test_schrodinger_form_matches_the_command_line():
    r = canonode.reduce(pathlib.Path("samples/regge_wheeler.ode"), dxdz="1/f")
    assert r.json == cli_json("reduce", "samples/regge_wheeler.ode", "--dxdz", "1/f")
    assert r.schrodinger["V"]


def test_teukolsky_q_minus_sympys_own_derivation_is_zero():
    # Teukolsky 1973, eq. (4.9) (samples/teukolsky_radial.ode), derived here
    # by sympy directly: Δ^(−s)(Δ^(s+1) R')' = Δ R'' + (s+1) Δ' R', so
    # p = (s+1)Δ'/Δ, q = [(K² − 2is(r−M)K)/Δ + 4isωr − λ]/Δ and
    # Q = q − p'/2 − p²/4 (the Liouville normal form, common practice).
    sympy = pytest.importorskip("sympy")
    r_, M, a, w, m, s, lam = sympy.symbols("r M a omega m s lam")
    Delta = r_**2 - 2 * M * r_ + a**2
    K = (r_**2 + a**2) * w - a * m
    p = (s + 1) * sympy.diff(Delta, r_) / Delta
    q = ((K**2 - 2 * sympy.I * s * (r_ - M) * K) / Delta + 4 * sympy.I * s * w * r_ - lam) / Delta
    Q_ref = q - sympy.diff(p, r_) / 2 - p**2 / 4
    red = canonode.reduce(pathlib.Path("samples/teukolsky_radial.ode"))
    Q = red.to_sympy()
    assert sympy.simplify(sympy.together(Q - Q_ref)) == 0
    assert Q.free_symbols == {red.symbols()[n] for n in ["r", "M", "a", "omega", "m", "s", "lam"]}


def test_q_at_is_vectorised_and_agrees_with_sympy():
    sympy = pytest.importorskip("sympy")
    np = pytest.importorskip("numpy")
    red = canonode.reduce(pathlib.Path("samples/regge_wheeler.ode"))
    z = np.linspace(2.5, 9.0, 12).reshape(3, 4) + 0.25j
    vals = dict(M=1, omega=0.37 - 0.09j, l=2, s=2)
    got = red.Q_at(z, **vals)
    assert got.shape == z.shape and got.dtype == np.complex128
    Q = red.to_sympy()
    syms = red.symbols()
    f = sympy.lambdify([syms["r"]], Q.subs({syms[k]: v for k, v in vals.items()}), "numpy")
    assert np.allclose(got, f(z), rtol=1e-13, atol=0)
    # A scalar gives a scalar; a pole gives nan.
    assert isinstance(complex(red.Q_at(3.0, **vals)), complex)
    assert np.isnan(red.Q_at(2.0, **vals))


def test_latex_display():
    red = canonode.reduce("y'' + x*y = 0", var="x")  # DLMF 9.2.1 (Airy, with x → −x)
    assert red._repr_latex_().startswith("$$") and "Q" in red._repr_latex_()
    assert "\\begin" in red.latex
