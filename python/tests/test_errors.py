"""Bad input raises `canonode.InputError` (a ValueError) with the place and
the command line's located message."""

import pathlib

import pytest

import canonode
from conftest import ROOT, cli

BAD = sorted((ROOT / "tests" / "bad").glob("*.ode"))


@pytest.mark.parametrize("path", BAD, ids=lambda p: p.stem)
def test_bad_files_give_the_command_lines_message(path):
    r = str(path.relative_to(ROOT))
    _, err = cli("reduce", r, code=2)
    with pytest.raises(canonode.InputError) as e:
        canonode.reduce(pathlib.Path(r))
    assert isinstance(e.value, ValueError)
    assert str(e.value) == err.strip()
    assert e.value.source == r
    if e.value.line is not None:
        assert str(e.value).startswith(f"{r}:{e.value.line}:{e.value.column}: error:")


def test_line_column_and_caret_of_text():
    text = "var z\nparam a\node w'' + (a +* z)*w = 0\n"
    with pytest.raises(canonode.InputError) as e:
        canonode.reduce(text)
    err = e.value
    assert err.line == 3 and err.column >= 10 and err.source == "<input>"
    assert "^" in str(err).splitlines()[2]
    assert str(err).startswith(f"<input>:3:{err.column}: error:")


def test_option_errors_point_into_the_keyword():
    with pytest.raises(canonode.InputError) as e:
        canonode.reduce(pathlib.Path("samples/bessel.ode"), subst="z=1/")
    assert e.value.source == "subst" and e.value.line == 1 and "^" in str(e.value)


def test_parameter_value_errors():
    rw = pathlib.Path("samples/regge_wheeler.ode")
    with pytest.raises(canonode.InputError) as e:
        canonode.spectrum(rw, at={"M": 1, "l": 2, "s": 2, "q": 3})
    assert e.value.source == "at" and "'q' is not a parameter" in str(e.value) and e.value.column == 16
    with pytest.raises(canonode.InputError, match="no value given for s"):
        canonode.spectrum(rw, at={"M": 1, "l": 2})
    with pytest.raises(canonode.InputError, match="spectral parameter being solved for"):
        canonode.spectrum(rw, at={"M": 1, "l": 2, "s": 2, "omega": 1})
    with pytest.raises(canonode.InputError, match="not a finite number"):
        canonode.spectrum(rw, at={"M": float("inf"), "l": 2, "s": 2})
    with pytest.raises(canonode.InputError, match="tolerance"):
        canonode.spectrum(rw, at={"M": 1, "l": 2, "s": 2}, tol=0)
    with pytest.raises(canonode.InputError, match="overtones"):
        canonode.spectrum(rw, at={"M": 1, "l": 2, "s": 2}, overtones=(3, 1))
    with pytest.raises(canonode.InputError, match="not a method"):
        canonode.spectrum(rw, at={"M": 1, "l": 2, "s": 2}, method="magic")
    with pytest.raises(TypeError):
        canonode.spectrum(rw, at={"M": True, "l": 2, "s": 2})


def test_inline_equation_errors():
    with pytest.raises(canonode.InputError) as e:
        canonode.reduce("w'' + z*w = ", var="z")
    assert e.value.line == 1
