#!/usr/bin/env bash
# Builds and tests the Python package from a clean clone on a machine with
# Rust and Python 3: a virtual environment in python/.venv (python3-venv is
# installed with apt-get when `python3 -m venv` cannot make one), the test
# tools from PyPI, the package built by maturin through `pip install
# ./python`, the command-line binary the tests compare against (`cargo
# build --release` at the root), then pytest (including the notebook in
# docs/, run headless). Usage: bash python/ci.sh
set -euo pipefail
cd "$(dirname "$0")/.."
root=$(pwd)
venv="$root/python/.venv"

echo "== virtual environment ($venv)"
if ! python3 -m venv "$venv" >/dev/null 2>&1; then
    rm -rf "$venv"
    echo "   python3 -m venv failed: installing python3-venv"
    if command -v apt-get >/dev/null; then
        apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends python3-venv >/dev/null
    fi
    python3 -m venv "$venv"
fi
py="$venv/bin/python"
# maturin (the build backend, run without build isolation) and the
# notebook's kernel are this environment's.
export PATH="$venv/bin:$PATH"

echo "== build and test tools (PyPI)"
"$py" -m pip install --quiet --disable-pip-version-check --upgrade pip
"$py" -m pip install --quiet --disable-pip-version-check maturin numpy pytest sympy nbclient nbformat ipykernel matplotlib pandas

echo "== the command-line binary the tests compare against"
cargo build --release --quiet

echo "== the package (pip install ./python: maturin, release profile)"
# The root's target directory: the dependencies shared with the binary
# (same release profile) are not compiled twice.
CARGO_TARGET_DIR="$root/target" "$py" -m pip install --quiet --disable-pip-version-check --no-build-isolation ./python

echo "== pytest"
export MPLBACKEND=Agg
CANONODE_BIN="$root/target/release/canonode" "$py" -m pytest -q python/tests
