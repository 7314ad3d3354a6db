#!/usr/bin/env python3
"""Compare normal-form timings: sympy.cancel, python-flint gcds, canonode.

    python3 scripts/reference/bench_compare.py
    python3 scripts/reference/bench_compare.py --canonode target/release/canonode
    python3 scripts/reference/bench_compare.py --skip-slow --repeat 20 samples/bessel.ode

Columns (per sample):
  sympy.cancel   Q = cancel(q - p'/2 - p^2/4) from the parsed sympy coefficients,
                 run once in a child process with a timeout (default 60 s);
                 "timeout" if exceeded, "skipped" for samples known to exceed
                 it when --skip-slow is given (teukolsky_radial).
  flint          the gcd-based normalisation with python-flint only: from p and
                 q as reduced flint rational functions, Q = q - p'/2 - p^2/4
                 with a gcd reduction after every operation, then the
                 canonical scaling of N/D; best of --repeat runs.
  flint+conv     the same plus converting the sympy coefficients to flint
                 (what the reference does end to end after parsing); best of N.
  canonode       `canonode reduce SAMPLE --format json` as a whole process
                 (start-up, parse, normal form, output); best of N. "n/a" when
                 no binary was given or it does not exist; "error(rc)" when it
                 fails; "no JSON" when its output is not JSON (a stub).
Ratios: sympy/flint and canonode/flint (a whole process against the bare
normalisation, so the canonode ratio includes process start-up).
"""

from __future__ import annotations

import argparse
import json
import multiprocessing as mp
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import ode_reference as ref  # noqa: E402

ROOT = HERE.parent.parent
KNOWN_SLOW_FOR_SYMPY = {"teukolsky_radial"}


def _sympy_child(path: str, conn):
    try:
        low = ref.load(path)
        t0 = time.perf_counter()
        ref.sympy_Q(low)
        conn.send(("ok", time.perf_counter() - t0))
    except Exception as exc:  # report, never hang
        conn.send(("error", repr(exc)))
    finally:
        conn.close()


def time_sympy(path: Path, timeout: float):
    parent, child = mp.Pipe(duplex=False)
    proc = mp.get_context("fork").Process(target=_sympy_child, args=(str(path), child))
    proc.start()
    child.close()
    if parent.poll(timeout):
        status, val = parent.recv()
        proc.join()
        return val if status == "ok" else "error"
    proc.terminate()
    proc.join(5)
    if proc.is_alive():
        proc.kill()
        proc.join()
    return "timeout"


def _raw_pq(low: ref.Lowered):
    """p and q as (reduced) flint rational functions; not timed."""
    c = ref.make_ctx(low)
    p = ref.to_rf_cancelling(low.a1 / low.a2, c)
    q = ref.to_rf_cancelling(low.a0 / low.a2, c)
    return p, q, c


def time_flint(low: ref.Lowered, repeat: int):
    p, q, c = _raw_pq(low)
    var = low.prog.var
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        ref.canonical(ref.q_from_pq(p, q, var))
        best = min(best, time.perf_counter() - t0)
    best_conv = float("inf")
    for _ in range(max(1, repeat // 4)):
        t0 = time.perf_counter()
        ref.normal_form(low)
        best_conv = min(best_conv, time.perf_counter() - t0)
    return best, best_conv


def time_canonode(binary: str | None, path: Path, repeat: int):
    if not binary:
        return "n/a"
    b = Path(binary)
    if not b.is_absolute():
        b = (Path.cwd() / b)
    if not b.exists():
        return "n/a"
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        try:
            res = subprocess.run([str(b), "reduce", str(path), "--format", "json"],
                                 stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, timeout=120)
        except subprocess.TimeoutExpired:
            return "timeout"
        except OSError:
            return "n/a"
        dt = time.perf_counter() - t0
        if res.returncode != 0:
            return f"error({res.returncode})"
        try:
            json.loads(res.stdout)
        except ValueError:
            return "no JSON"  # e.g. a stub binary that prints nothing
        best = min(best, dt)
    return best


def fmt(v) -> str:
    if isinstance(v, str):
        return v
    if v < 1e-3:
        return f"{v * 1e6:.0f} µs"
    if v < 1:
        return f"{v * 1e3:.2f} ms"
    return f"{v:.2f} s"


def ratio(a, b) -> str:
    if isinstance(a, str) or isinstance(b, str) or b == 0:
        return "–"
    return f"{a / b:.1f}×"


def main() -> int:
    ap = argparse.ArgumentParser(description="normal-form timing comparison")
    ap.add_argument("samples", nargs="*", help="sample files (default: samples/*.ode)")
    ap.add_argument("--canonode", help="path to the canonode binary (optional)")
    ap.add_argument("--repeat", type=int, default=10, help="best of N (default 10)")
    ap.add_argument("--timeout", type=float, default=60.0, help="sympy per-sample timeout, s")
    ap.add_argument("--skip-slow", action="store_true",
                    help="skip sympy on samples known to exceed the timeout: " + ", ".join(sorted(KNOWN_SLOW_FOR_SYMPY)))
    ap.add_argument("--no-sympy", action="store_true", help="skip the sympy column entirely")
    args = ap.parse_args()
    paths = [Path(p) for p in args.samples] or sorted((ROOT / "samples").glob("*.ode"))
    print("| sample | sympy.cancel | flint | flint+conv | canonode | sympy/flint | canonode/flint |")
    print("|---|---:|---:|---:|---:|---:|---:|")
    for path in paths:
        low = ref.load(str(path))
        if args.no_sympy or (args.skip_slow and path.stem in KNOWN_SLOW_FOR_SYMPY):
            ts = "skipped"
        else:
            ts = time_sympy(path, args.timeout)
        tf, tfc = time_flint(low, args.repeat)
        tc = time_canonode(args.canonode, path, args.repeat)
        print(f"| {path.stem} | {fmt(ts)} | {fmt(tf)} | {fmt(tfc)} | {fmt(tc)} | {ratio(ts, tf)} | {ratio(tc, tf)} |",
              flush=True)
    note = "" if args.canonode and Path(args.canonode).exists() else " (canonode binary not given or not found)"
    print(f"\nbest of {args.repeat}; sympy timeout {args.timeout:.0f} s{note}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
