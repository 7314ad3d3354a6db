"""`emit`, `record` and `check` against the command line."""

import pathlib
import shutil

import pytest

import canonode
from conftest import SAMPLES, cli, rel


@pytest.mark.parametrize("sample", SAMPLES[:6], ids=lambda p: p.stem)
@pytest.mark.parametrize("lang", ["c", "rust"])
def test_emit_matches_the_command_line(sample, lang):
    out, _ = cli("emit", rel(sample), "--lang", lang)
    assert canonode.emit(pathlib.Path(rel(sample)), lang) == out


def test_emit_potential_matches_the_command_line():
    out, _ = cli("emit", "samples/regge_wheeler.ode", "--lang", "c", "--what", "all", "--dxdz", "1/f", "--name", "rw")
    assert canonode.emit(pathlib.Path("samples/regge_wheeler.ode"), "c", what="all", dxdz="1/f", name="rw") == out


def test_emit_recurrence_matches_the_command_line():
    # The recurrence coefficients (Leaver's three-term recurrence about the horizon), and all at once.
    for lang in ("c", "rust"):
        out, _ = cli("emit", "samples/regge_wheeler.ode", "--lang", lang, "--what", "recurrence", "--about", "2*M", "--exponents", "2*M=2,inf=1")
        got = canonode.emit(pathlib.Path("samples/regge_wheeler.ode"), lang, what="recurrence", about="2*M", exponents="2*M=2,inf=1")
        assert got == out
    out, _ = cli("emit", "samples/regge_wheeler.ode", "--lang", "c", "--what", "all", "--dxdz=1/f", "--about", "2*M", "--exponents", "2*M=2,inf=1")
    got = canonode.emit(pathlib.Path("samples/regge_wheeler.ode"), what="all", dxdz="1/f", about="2*M", exponents="2*M=2,inf=1")
    assert got == out
    with pytest.raises(canonode.InputError, match="about"):
        canonode.emit(pathlib.Path("samples/regge_wheeler.ode"), what="recurrence")


def test_emit_errors():
    with pytest.raises(canonode.InputError, match="not an identifier"):
        canonode.emit(pathlib.Path("samples/bessel.ode"), "c", name="1x")
    with pytest.raises(canonode.InputError, match="dxdz"):
        canonode.emit(pathlib.Path("samples/bessel.ode"), "c", what="potential")


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_record_matches_the_command_line(sample):
    out, _ = cli("record", rel(sample))
    assert canonode.record(pathlib.Path(rel(sample))) == out


def test_record_with_a_recurrence_matches_the_command_line():
    args = ["--about", "2*M"]
    out, _ = cli("record", "samples/regge_wheeler.ode", *args)
    assert canonode.record(pathlib.Path("samples/regge_wheeler.ode"), about="2*M") == out


def test_check_holds_then_names_the_changed_fields(tmp_path):
    src = tmp_path / "rw.ode"
    shutil.copy("samples/regge_wheeler.ode", src)
    rec = tmp_path / "rw.deriv"
    rec.write_text(canonode.record(src.read_text(), path="rw.ode"))
    res = canonode.check(rec)
    assert res.holds and bool(res) and res.changed == []
    # The same answer as `canonode check`.
    cli("check", str(rec))
    src.write_text(src.read_text().replace("(1 - s^2)*2*M/r^3", "(1 - s^2)*3*M/r^3"))
    res = canonode.check(rec)
    assert not res.holds and any(k.startswith("normal_form") or "Q" in k for k in res.changed), res.changed
    assert res.diff.startswith("---")
    out, _ = cli("check", str(rec), code=1)
    assert res.diff in out


def test_record_needs_a_path():
    with pytest.raises(ValueError):
        canonode.record("var z\nparam a\node w'' + a*w = 0\n")
