"""Writes the tables of a sharded survey for timing `canonode merge`.

    python3 bench/make_shards.py DIR [SHARDS] [POINTS_PER_SHARD]

The tables have the layout `canonode scan -o` writes (src/cli/table.rs):
a survey of two parameters (x slow, y fast, walked as a snake) whose one
mode moves smoothly, omega = 0.4 + 0.1 x + 0.05 y - (0.09 + 0.01 y) i, so
that every check of `merge` passes. The numbers are invented; only the
size and the layout matter for the timing.
"""

import os
import sys


def main():
    out = sys.argv[1]
    shards = int(sys.argv[2]) if len(sys.argv) > 2 else 100
    per = int(sys.argv[3]) if len(sys.argv) > 3 else 1000
    total = shards * per
    fast = 400
    os.makedirs(out, exist_ok=True)
    for k in range(1, shards + 1):
        a, b = total * (k - 1) // shards, total * k // shards
        lines = [
            f"# canonode scan survey=0123456789abcdef points={total} shard={k}/{shards} rows={a}..{b} frequency=omega",
            "index,x,y,n,re,im,converged,check_re,check_im,reason",
        ]
        for s in range(a, b):
            i, j = divmod(s, fast)
            if i % 2:
                j = fast - 1 - j
            x, y = i / 100, j / 400
            re, im = 0.4 + 0.1 * x + 0.05 * y, -(0.09 + 0.01 * y)
            lines.append(f"{s},{x!r},{y!r},0,{re:.17e},{im:.17e},true,,,")
        with open(os.path.join(out, f"part-{k:03d}.csv"), "w") as f:
            f.write("\n".join(lines) + "\n")


if __name__ == "__main__":
    main()
