"""Shared helpers: the repository root, the samples and the command-line
binary of the root crate (`cargo build --release`; override with
$CANONODE_BIN), run with JSON output for comparison with the package."""

import json
import os
import pathlib
import subprocess

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "samples").glob("*.ode"))


def cli_path():
    exe = os.environ.get("CANONODE_BIN") or str(ROOT / "target" / "release" / "canonode")
    if not pathlib.Path(exe).exists():
        pytest.fail(f"the command-line binary {exe} is missing: run `cargo build --release` at the root (or set CANONODE_BIN)")
    return exe


def cli(*args, code=0):
    """Runs the binary from the root (paths relative to it); returns (stdout, stderr)."""
    p = subprocess.run([cli_path(), *args], cwd=ROOT, capture_output=True, text=True, timeout=600)
    assert p.returncode == code, f"{args}: exit {p.returncode}\n{p.stderr}"
    return p.stdout, p.stderr


def cli_json(*args):
    out, _ = cli(*args, "--format", "json")
    return json.loads(out)


def rel(path):
    """A sample's path relative to the root, as the command line is given it."""
    return str(pathlib.Path(path).relative_to(ROOT))


@pytest.fixture(autouse=True)
def _at_root(monkeypatch):
    # Paths given to the package are relative to the root, like the binary's.
    monkeypatch.chdir(ROOT)
