"""Timings of the Python package (numbers for the README; nothing asserted).

1. Import time of `canonode` (a fresh interpreter each run; minimum over
   runs of `import canonode` measured inside the interpreter).
2. The Schwarzschild s = l = 2, n = 0..7 spectrum: the wall time of
   `canonode.spectrum(...)` from Python against the time the library itself
   spent (`Spectrum.seconds`, measured in-process around the Rust calls);
   medians over runs.
3. Two threads on two problems against one thread on one (GIL release), and
   the same work done sequentially.

Usage (from the repository root, with the package installed):
    python python/bench/bench.py [--runs N]
"""

import argparse
import os
import pathlib
import statistics
import subprocess
import sys
import threading
import time

ROOT = pathlib.Path(__file__).resolve().parents[2]


def import_time(runs):
    code = "import time; t = time.perf_counter(); import canonode; print(time.perf_counter() - t)"
    out = [float(subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout) for _ in range(runs)]
    return min(out), statistics.median(out)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--runs", type=int, default=10)
    a = ap.parse_args()
    import canonode

    os.chdir(ROOT)
    rw = pathlib.Path("samples/regge_wheeler.ode")
    at = {"M": 1, "l": 2, "s": 2}
    imin, imed = import_time(a.runs)
    print(f"import canonode: min {imin * 1e3:.1f} ms, median {imed * 1e3:.1f} ms ({a.runs} fresh interpreters)")

    canonode.spectrum(rw, at=at, overtones=range(8))  # warm-up
    wall, lib = [], []
    for _ in range(a.runs):
        t = time.perf_counter()
        s = canonode.spectrum(rw, at=at, overtones=range(8))
        wall.append(time.perf_counter() - t)
        lib.append(s.seconds)
    w, l = statistics.median(wall), statistics.median(lib)
    over = statistics.median(x - y for x, y in zip(wall, lib))
    print(
        f"spectrum Schwarzschild s=l=2 n=0..7: Python call {w * 1e3:.1f} ms, in-process Rust {l * 1e3:.1f} ms, "
        f"ratio {w / l:.3f}, overhead per call {over * 1e3:.2f} ms (medians of {a.runs})"
    )

    jobs = [dict(at={"M": 1, "l": 2, "s": 2}, overtones=range(8)), dict(at={"M": 1, "l": 3, "s": 2}, overtones=range(8))]

    def one(j):
        canonode.spectrum(rw, **j)

    def timed(f):
        t = time.perf_counter()
        f()
        return time.perf_counter() - t

    def two_threads():
        ts = [threading.Thread(target=one, args=(j,)) for j in jobs]
        for t in ts:
            t.start()
        for t in ts:
            t.join()

    single = statistics.median(timed(lambda: one(jobs[0])) for _ in range(a.runs))
    seq = statistics.median(timed(lambda: [one(j) for j in jobs]) for _ in range(a.runs))
    par = statistics.median(timed(two_threads) for _ in range(a.runs))
    print(
        f"two problems: one alone {single * 1e3:.1f} ms, both sequential {seq * 1e3:.1f} ms, "
        f"both on two threads {par * 1e3:.1f} ms ({par / single:.2f}× one; {os.cpu_count()} cores)"
    )


if __name__ == "__main__":
    main()
