"""`canonode.spectrum` against `canonode spectrum --format json` and
against Leaver 1985 (values as in tests/spectrum.rs)."""

import math
import pathlib

import numpy as np
import pytest

import canonode

from conftest import cli_json

RW = pathlib.Path("samples/regge_wheeler.ode")


def test_schwarzschild_document_matches_the_command_line():
    s = canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, overtones=range(0, 8))
    doc = cli_json("spectrum", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", "--overtones", "0..7")
    # The same numbers, bit for bit, as the command line's document.
    assert s.json == doc


def test_schwarzschild_overtones_match_leaver():
    s = canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, overtones=range(0, 8))
    assert s.omega.dtype == np.complex128 and s.omega.shape == (8,)
    assert all(s.converged)
    # Leaver 1985; Berti, Cardoso & Starinets 2009 tables (M = 1), 8 decimals
    # (as in tests/spectrum.rs): n = 0..3 to half a unit in the last place.
    leaver = [0.37367168 - 0.08896232j, 0.34671100 - 0.27391488j, 0.30105345 - 0.47827698j, 0.25150496 - 0.70514820j]
    for n, w in enumerate(leaver):
        assert abs(s.omega[n].real - w.real) <= 5.1e-9 and abs(s.omega[n].imag - w.imag) <= 5.1e-9, (n, s.omega[n])
    # n = 7 from Leaver 1985 (from memory, as in tests/spectrum.rs): about 0.0928 − 1.7038i.
    assert abs(s.omega[7] - (0.0928 - 1.7038j)) < 7e-4
    # Damping grows with the overtone number.
    assert np.all(np.diff(s.omega.imag) < 0)
    for m in s.modes:
        assert m.method == "cf" and m.check["agreement"] < 1e-6 and m.evidence["change_on_doubling"] < 1e-9


def test_other_spins_and_multipoles():
    # Leaver 1985 / Berti, Cardoso & Starinets 2009 (M = 1), as in tests/spectrum.rs.
    for at, w in [({"M": 1, "l": 3, "s": 2}, 0.59944329 - 0.09270305j), ({"M": 1, "l": 1, "s": 1}, 0.24826326 - 0.09248772j)]:
        s = canonode.spectrum(RW, at=at)
        assert abs(s.omega[0].real - w.real) <= 5.1e-9 and abs(s.omega[0].imag - w.imag) <= 5.1e-9


@pytest.mark.parametrize("method", ["integrate", "wkb", "eikonal"])
def test_methods_match_the_command_line(method):
    s = canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, overtones=(0, 1), method=method)
    doc = cli_json("spectrum", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", "--overtones", "0..1", "--method", method)
    assert s.json == doc


def test_bound_states_match_the_command_line():
    s = canonode.spectrum(pathlib.Path("samples/hydrogen_radial.ode"), at={"Z": 1, "l": 0}, overtones=(0, 2), boundary="bound")
    doc = cli_json("spectrum", "samples/hydrogen_radial.ode", "--at", "Z=1,l=0", "--overtones", "0..2", "--boundary", "bound")
    assert s.json == doc
    assert s.boundary == "bound"


def test_demo_scenario_matches_the_command_line():
    s = canonode.spectrum(pathlib.Path("samples/demo_tamarind_halo.ode"), at={"M": 1, "h": 0.3, "l": 2}, overtones=(0, 1))
    doc = cli_json("spectrum", "samples/demo_tamarind_halo.ode", "--at", "M=1,h=0.3,l=2", "--overtones", "0..1")
    assert s.json == doc


def test_unconverged_mode_is_nan_with_a_reason():
    # As tests/spectrum.rs: a seed far from every mode; if it does not
    # converge the value is nan and the reason is given, never a number.
    s = canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, guess=-3 + 40j)
    doc = cli_json("spectrum", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", "--guess", "-3+40i")
    assert s.json == doc
    m = s.modes[0]
    if not m.converged:
        assert np.isnan(s.omega[0]) and np.isnan(m.omega.real) and isinstance(m.reason, str) and m.reason
    else:
        assert s.omega[0].real > 0 and s.omega[0].imag < 0


def test_display():
    s = canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, overtones=1)
    assert "<table>" in s._repr_html_() and "0.34671" in s._repr_html_()
    assert s.seconds > 0


KERR = dict(
    couple=pathlib.Path("samples/spheroidal_spin_weighted.ode"),
    link=["lam = A + a^2*omega^2 - 2*a*m*omega", "c = a*omega"],
)
KERR_CLI = ["--couple", "samples/spheroidal_spin_weighted.ode", "--link", "lam = A + a^2*omega^2 - 2*a*m*omega", "--link", "c = a*omega"]


def test_kerr_coupled_matches_the_command_line_and_leaver():
    # Leaver 1985, table for s = −2, l = m = 2, n = 0 (M = 1): a = 0.9 →
    # 0.67161 − 0.06487i (as tests/spectrum.rs), through the Teukolsky
    # radial equation coupled to the spin-weighted spheroidal eigenvalue.
    s = canonode.spectrum(pathlib.Path("samples/teukolsky_radial.ode"), at={"M": 1, "a": 0.9, "m": 2, "s": -2}, guess=0.67 - 0.065j, **KERR)
    doc = cli_json("spectrum", "samples/teukolsky_radial.ode", "--at", "M=1,a=0.9,m=2,s=-2", "--guess", "0.67-0.065i", *KERR_CLI)
    # The command line builds the coupled document by printing its JSON and
    # reading it back, and serde_json's default float reading may land one
    # unit in the last place away: the numbers of the angular evidence are
    # compared to 1 ulp, everything else exactly.
    assert s.modes[0].json["coupled"]["eigenvalue"] == "A"
    mine, theirs = s.json["modes"][0].pop("coupled"), doc["modes"][0].pop("coupled")
    assert s.json == doc
    assert within_ulp(mine, theirs)
    assert abs(s.omega[0].real - 0.67161) <= 5e-6 and abs(s.omega[0].imag + 0.06487) <= 5e-6


def within_ulp(a, b):
    """Equal structure, floats within one unit in the last place."""
    if isinstance(a, dict):
        return a.keys() == b.keys() and all(within_ulp(a[k], b[k]) for k in a)
    if isinstance(a, list):
        return len(a) == len(b) and all(within_ulp(x, y) for x, y in zip(a, b))
    if isinstance(a, float):
        return abs(a - b) <= math.ulp(max(abs(a), abs(b)))
    return a == b


def test_bad_links_point_into_the_link():
    with pytest.raises(canonode.InputError) as e:
        canonode.spectrum(
            pathlib.Path("samples/teukolsky_radial.ode"),
            at={"M": 1, "a": 0.9, "m": 2, "s": -2},
            couple=KERR["couple"],
            link=["lam = A + a^2*omega^2 - 2*a*m*omega", "c = a*)"],
        )
    assert e.value.source == "link[1]" and "^" in str(e.value)
    with pytest.raises(ValueError):
        canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, link="lam = 1")


def test_boundary_problems_match_the_command_line():
    # The same library call as the command line: anti-de Sitter (the AdS
    # boundary a regular singular point) and a massive field's quasi-bound
    # states. Horowitz & Hubeny 2000 (from memory): r+ = 1 (M = 1), l = 0
    # gives about 2.7982 - 2.6712i, as in tests/spectrum.rs.
    s = canonode.spectrum(pathlib.Path("tests/boundary/schwarzschild_ads_scalar.ode"), at={"M": 1, "L": 1, "l": 0})
    doc = cli_json("spectrum", "tests/boundary/schwarzschild_ads_scalar.ode", "--at", "M=1,L=1,l=0")
    assert s.json == doc
    assert abs(s.omega[0] - (2.7982 - 2.6712j)) < 2e-3
    q = canonode.spectrum(pathlib.Path("tests/boundary/massive_scalar_schwarzschild.ode"), at={"M": 1, "mu": 0.1, "l": 0}, boundary="quasi-bound")
    doc = cli_json("spectrum", "tests/boundary/massive_scalar_schwarzschild.ode", "--at", "M=1,mu=0.1,l=0", "--boundary", "quasi-bound")
    assert q.json == doc and q.boundary == "quasi-bound"
    # Hydrogen-like (Detweiler 1980): Re ω ≈ μ(1 − (Mμ)²/2) for n = l = 0.
    assert abs(q.omega[0].real - 0.1 * (1 - 0.01 / 2)) < 2e-4 and q.omega[0].imag < 0


def test_ends_are_given_as_on_the_command_line():
    with pytest.raises(canonode.InputError, match="nowhere") as e:
        canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, ends="2..nowhere")
    assert e.value.source == "ends"


def test_periodic_characteristic_values_as_written():
    # Mathieu's equation as DLMF 28.2.1 prints it: the periodic problem is the
    # default for trigonometric coefficients. a0, b1, a1 at q = 1 (Abramowitz &
    # Stegun table 20.1, from memory, 8 decimals), as in tests/paste.rs.
    eq = "y'' + (a - 2*q*cos(2*x))*y = 0"
    s = canonode.spectrum(eq, at={"q": 1}, overtones=range(0, 3), var="x")
    doc = cli_json("spectrum", "-e", eq, "--var", "x", "--at", "q=1", "--overtones", "0..2")
    assert s.json == doc
    assert s.boundary == "periodic"
    for got, want in zip(s.omega, [-0.45513860, -0.11024882, 1.85910807]):
        assert abs(got.real - want) < 5.1e-9 and got.imag == 0.0
    assert [m.family["parity"] for m in s.modes] == ["even", "odd", "even"]


def test_region_matches_the_command_line():
    # Every mode in a rectangle with no guess (as `spectrum --region`):
    # Schwarzschild s = l = 2, n = 0 and 1 (Leaver 1985, as tests/global.rs).
    s = canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, region=(0, 1, -0.4, 0))
    doc = cli_json("spectrum", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", "--region=0..1,-0.4..0")
    assert s.json == doc
    assert abs(s.omega[0] - (0.37367168 - 0.08896232j)) < 1e-7 and abs(s.omega[1] - (0.34671100 - 0.27391488j)) < 1e-7
    assert s.modes[0].json["family"] == "oscillating"
    with pytest.raises(canonode.InputError):
        canonode.spectrum(RW, at={"M": 1, "l": 2, "s": 2}, region=(1, 0, -0.4, 0))
