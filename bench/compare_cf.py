"""Side-by-side timing of the Schwarzschild continued fraction (s = l = 2,
overtones 0..7 to 1e-10): canonode's in-process figure from the criterion
bench `cf/schwarzschild_l2_n0-7`, against the plain Python reference in
bench/leaver_reference.py (complex floats). Prints both and the ratio.

    python3 bench/compare_cf.py [--no-cargo]
"""

import json
import os
import subprocess
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, HERE)
import leaver_reference  # noqa: E402


def python_best(repeat=5):
    best = float("inf")
    for _ in range(repeat):
        t = time.perf_counter()
        leaver_reference.overtones()
        best = min(best, time.perf_counter() - t)
    return best


def canonode_seconds(run_cargo=True):
    if run_cargo:
        subprocess.run(
            ["cargo", "bench", "--bench", "normal_form", "--", "--warm-up-time", "1", "--measurement-time", "3", "cf/"],
            cwd=ROOT, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
        )
    path = os.path.join(ROOT, "target", "criterion", "cf_schwarzschild_l2_n0-7", "new", "estimates.json")
    with open(path) as f:
        est = json.load(f)
    return est["median"]["point_estimate"] * 1e-9


if __name__ == "__main__":
    py = python_best()
    cn = canonode_seconds("--no-cargo" not in sys.argv)
    print("| implementation | 8 overtones, s = l = 2, to 1e-10 |")
    print("|---|---:|")
    print(f"| canonode (in process, criterion median) | {cn * 1e3:.3f} ms |")
    print(f"| Python reference, complex floats (best of 5) | {py * 1e3:.1f} ms |")
    print(f"\nratio: canonode is {py / cn:.0f}x faster")
