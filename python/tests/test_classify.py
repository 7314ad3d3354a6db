"""`canonode.classify` against `canonode classify --format json`."""

import pathlib
from fractions import Fraction

import pytest

import canonode
from conftest import SAMPLES, cli_json, rel


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_every_sample_matches_the_command_line(sample):
    c = canonode.classify(pathlib.Path(rel(sample)))
    assert c.json == cli_json("classify", rel(sample))


def test_values_and_boundary_match_the_command_line():
    c = canonode.classify(pathlib.Path("samples/regge_wheeler.ode"), at={"M": 1, "omega": 0.37 - 0.09j, "l": 2, "s": 2}, boundary="qnm")
    assert c.json == cli_json("classify", "samples/regge_wheeler.ode", "--at", "M=1,omega=0.37-0.09i,l=2,s=2", "--boundary", "qnm")


def test_regge_wheeler_structure():
    # Regge–Wheeler: regular singular points at r = 0 and r = 2M, an
    # irregular point of rank 1 at infinity (confluent Heun; Leaver 1985).
    c = canonode.classify(pathlib.Path("samples/regge_wheeler.ode"), at={"M": 1, "omega": 0.5, "l": 2, "s": 2})
    kinds = {p.where: (p.kind, p.rank) for p in c.points}
    assert kinds["r = 0"][0] == "regular" and kinds["r = 2*M"][0] == "regular"
    inf = [p for p in c.points if p.infinity][0]
    assert inf.kind == "irregular" and inf.rank == Fraction(1)
    assert c.class_id == "confluent-heun"
    horizon = [p for p in c.points if p.where == "r = 2*M"][0]
    # ±2iMω at the horizon for the unknown (Leaver 1985): ±i at M = 1, ω = 1/2.
    assert sorted(abs(v.imag) for v in horizon.unknown_exponent_values) == [1.0, 1.0]
    assert "<table>" in c._repr_html_() and c._repr_latex_()


def test_exponent_choices_match_the_command_line():
    c = canonode.classify(pathlib.Path("samples/hypergeometric.ode"), exponents="0=2")
    assert c.json == cli_json("classify", "samples/hypergeometric.ode", "--exponents", "0=2")


def test_a_root_of_a_quadratic_factor_is_named_theta():
    # Reissner–Nordström: the horizons are the roots of r² − 2Mr + q²
    # (common practice), a factor of degree 2, so the boundary choices name
    # the point θ, as the command line and `exponents=` do — not ∞.
    c = canonode.classify(pathlib.Path("samples/reissner_nordstrom_scalar.ode"), boundary="qnm")
    choices = c.json["boundary"]["choices"]
    assert choices[0].startswith("at θ:") and choices[1].startswith("at ∞:")
    assert c.json == cli_json("classify", "samples/reissner_nordstrom_scalar.ode", "--boundary", "qnm")
