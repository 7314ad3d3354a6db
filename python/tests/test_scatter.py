"""`canonode.scatter` against `canonode scatter --format json` (the same
library set-up and renderer) and against the exact Pöschl–Teller
transmission."""

import math
import pathlib

import numpy as np
import pytest

import canonode
from conftest import cli_json

RW = pathlib.Path("samples/regge_wheeler.ode")


def test_document_matches_the_command_line():
    s = canonode.scatter(RW, at={"M": 1, "l": 2, "s": 2}, omega=(0.1, 0.8, 0.1))
    doc = cli_json("scatter", "samples/regge_wheeler.ode", "--at", "M=1,l=2,s=2", "--omega", "0.1:0.8:0.1")
    assert s.json == doc
    assert s["omega"].shape == (8,)
    # The built-in check: |R|² + |T|² = 1 for a real potential (flux conservation).
    assert np.all(np.abs(s["flux_error"]) < 1e-8)
    # The greybody factor rises through the barrier top.
    assert np.all(np.diff(s["transmission"]) > 0)


def test_cross_section_sum_matches_the_command_line():
    s = canonode.scatter(RW, at={"M": 1, "s": 0}, omega=(0.2, 0.4, 0.1), sum_l=(0, 3))
    doc = cli_json("scatter", "samples/regge_wheeler.ode", "--at", "M=1,s=0", "--omega", "0.2:0.4:0.1", "--sum-l", "0..3")
    assert s.json == doc
    assert np.all(s["cross_section"] > 0)


def test_poschl_teller_transmission_is_exact():
    # Pöschl–Teller barrier V = V0/cosh²(αx): |T|² = sinh²(πω/α) /
    # (sinh²(πω/α) + cosh²(π√(V0/α² − ¼))) for V0/α² > ¼ (Landau & Lifshitz,
    # Quantum Mechanics §25, problem 4; common practice), as in tests/scatter.rs.
    doc = cli_json("scatter", "samples/poschl_teller.ode", "--at", "V0=1,alpha=1", "--omega", "0.5:1.5:0.5")
    s = canonode.scatter(pathlib.Path("samples/poschl_teller.ode"), at={"V0": 1, "alpha": 1}, omega=(0.5, 1.5, 0.5))
    assert s.json == doc
    for w, t in zip(s["omega"], s["transmission"]):
        sh = math.sinh(math.pi * w) ** 2
        exact = sh / (sh + math.cosh(math.pi * math.sqrt(1 - 0.25)) ** 2)
        assert abs(t - exact) < 1e-8, (w, t, exact)


def test_bad_grid_is_an_input_error():
    with pytest.raises(canonode.InputError, match="start, stop, step") as e:
        canonode.scatter(RW, at={"M": 1, "l": 2, "s": 2}, omega=(0.5, 0.1, -0.1))
    assert e.value.source == "omega"


def test_coupled_scatter_matches_the_command_line():
    # Kerr scalar a = 0.99, l = m = 1, the separation constant from the
    # spheroidal eigenvalue at each frequency (as tests/scatter.rs):
    # superradiant below mΩ_H, about 0.4 % at the peak (Brito, Cardoso & Pani, from memory).
    links = ["lam = A + a^2*omega^2 - 2*a*m*omega", "c = a*omega"]
    s = canonode.scatter(
        pathlib.Path("samples/teukolsky_radial.ode"),
        at={"M": 1, "a": 0.99, "m": 1, "s": 0},
        omega=("0.36", "0.40", "0.02"),
        couple=pathlib.Path("samples/spheroidal_spin_weighted.ode"),
        link=links,
    )
    doc = cli_json(
        "scatter", "samples/teukolsky_radial.ode", "--at", "M=1,a=0.99,m=1,s=0",
        "--couple", "samples/spheroidal_spin_weighted.ode", "--link", links[0], "--link", links[1],
        "--omega", "0.36:0.40:0.02",
    )
    assert s.json["points"] == doc["points"]
    assert all(t < 0 for t in s["transmission"]) and 0.003 < max(s["reflection"]) - 1 < 0.0045
