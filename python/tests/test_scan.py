"""`canonode.scan` against `canonode scan --format json`."""

import pathlib

import numpy as np
import pytest

import canonode
from conftest import cli_json

DEMO = pathlib.Path("samples/demo_tamarind_halo.ode")


def test_scan_matches_the_command_line():
    sc = canonode.scan(DEMO, "h", [0, 0.1, 0.2, 0.3], at={"M": 1, "l": 2}, overtones=(0, 1))
    doc = cli_json("scan", "samples/demo_tamarind_halo.ode", "--vary", "h=0:0.3:0.1", "--at", "M=1,l=2", "--overtones", "0..1")
    assert sc.json == doc
    assert sc["omega"].shape == (4, 2) and sc["converged"].all()
    assert list(sc["value"]) == [0, 0.1, 0.2, 0.3] and list(sc["n"]) == [0, 1]
    # h = 0 is Schwarzschild: the scalar l = 2 mode 0.48364387 − 0.09675878i (Leaver 1985).
    assert abs(sc["omega"][0, 0] - (0.48364387 - 0.09675878j)) < 1e-8
    assert np.allclose(sc["check"], sc["omega"], rtol=1e-6)


def test_numpy_grid_and_no_check():
    sc = canonode.scan(DEMO, "h", np.linspace(0, 0.2, 3), at={"M": 1, "l": 2}, check=False)
    assert np.isnan(sc["check"]).all() and sc["converged"].all()


def test_to_pandas():
    pd = pytest.importorskip("pandas")
    sc = canonode.scan(DEMO, "h", [0, 0.5], at={"M": 1, "l": 2})
    df = sc.to_pandas()
    assert isinstance(df, pd.DataFrame) and len(df) == 2 and set(["h", "n", "omega", "converged"]) <= set(df.columns)
