"""A plain reference implementation of Leaver's continued fraction for the
Regge–Wheeler equation, for side-by-side timing with canonode.

The recurrence coefficients are Leaver's (E. W. Leaver, Proc. R. Soc. Lond.
A 402 (1985) 285) in units 2M = 1, ρ = −iω, ε = s² − 1:
    α_n = n² + (2ρ + 2)n + 2ρ + 1
    β_n = −(2n² + (8ρ + 2)n + 8ρ² + 4ρ + l(l + 1) − ε)
    γ_n = n² + 4ρn + 4ρ² − ε − 1
typed here from the paper, not derived: canonode derives them itself. The
mode condition is the n-th inversion; the remainder beyond the depth is the
large-n expansion of a_{N+1}/a_N in powers of N^(−1/2) (Nollert 1993),
solved order by order as canonode does. Frequencies are returned in units
M = 1 (ω_M = ω_{2M=1} / 2). Roots by Muller's method. Plain Python complex
floats, or mpmath at a chosen precision.
"""

import cmath
import math
import sys
import time


def coefficients(w_half, l, s, ops):
    rho = -1j * w_half
    eps = s * s - 1
    a = [2 * rho + 1, 2 * rho + 2, 1]
    b = [-(8 * rho * rho + 4 * rho + l * (l + 1) - eps), -(8 * rho + 2), -2]
    g = [4 * rho * rho - eps - 1, 4 * rho, 1]
    return a, b, g


def poly(c, n):
    return c[0] + n * (c[1] + n * c[2])


def tail(a, b, g, K, sqrt):
    """Coefficients C_k of r_n = a_{n+1}/a_n ~ Σ C_k n^(-k/2)."""
    N = K + 3
    sa = [0j] * N
    sb = [0j] * N
    sg = [0j] * N
    for i in range(3):
        sa[2 * (2 - i)] += a[i]
        sb[2 * (2 - i)] += b[i]
        sg[2 * (2 - i)] += g[i]

    def residual(c, n):
        r = [0j] * n
        rt = [0j] * n
        for k, ck in enumerate(c[:n]):
            r[k] = ck
            coef = 1.0
            j = 0
            while k + 2 * j < n:
                rt[k + 2 * j] += ck * coef
                coef *= (k / 2 + j) / (j + 1)
                j += 1

        def mul(x, y):
            out = [0j] * n
            for i in range(n):
                if x[i] != 0:
                    for jj in range(n - i):
                        out[i + jj] += x[i] * y[jj]
            return out

        rr = mul(r, rt)
        e = mul(sa, rr)
        br = mul(sb, rt)
        return [e[i] + br[i] + sg[i] for i in range(n)]

    a2, b2, c2 = a[2], b[2], g[2]
    disc = sqrt(b2 * b2 - 4 * a2 * c2)
    c = [-b2 / (2 * a2)]
    degenerate = abs(disc) <= 1e-9 * (abs(b2) + abs(a2))
    if not degenerate:
        r1, r2 = (-b2 + disc) / (2 * a2), (-b2 - disc) / (2 * a2)
        c = [r1 if abs(r1) <= abs(r2) else r2]
    else:
        e = lambda x: residual([c[0], x], 3)[2]
        e0, e1, em = e(0), e(1), e(-1)
        qa = (e1 + em) / 2 - e0
        qb = (e1 - em) / 2
        d = sqrt(qb * qb - 4 * qa * e0)
        s1, s2 = (-qb + d) / (2 * qa), (-qb - d) / (2 * qa)
        c.append(s1 if (s1 / c[0]).real < (s2 / c[0]).real else s2)
    slope = None
    while len(c) < K:
        idx = len(c)
        order = idx + 1 if degenerate else idx
        e0 = residual(c + [0], order + 1)[order]
        if slope is None:
            slope = residual(c + [1], order + 1)[order] - e0
        c.append(-e0 / slope)
    return c


def cf(w_m, l, s, k, depth, sqrt=cmath.sqrt):
    """The k-th inversion at ω (units M = 1), divided by β_k."""
    a, b, g = coefficients(2 * w_m, l, s, None)
    c = tail(a, b, g, 10, sqrt)
    x = depth ** -0.5
    r = sum(ci * x ** i for i, ci in enumerate(c))
    for n in range(depth, k, -1):
        r = -poly(g, n) / (poly(b, n) + poly(a, n) * r)
    inv = 0
    for n in range(k):
        rn = -(poly(b, n) + poly(g, n) * inv) / poly(a, n)
        inv = 1 / rn
    bk = poly(b, k)
    return (bk + poly(a, k) * r + poly(g, k) * inv) / bk


def muller(f, x2, spread, tol, maxit=200):
    h = spread * max(abs(x2), 1e-3)
    x = [x2 - h, x2 + h, x2]
    y = [f(v) for v in x]
    for _ in range(maxit):
        h1, h2 = x[1] - x[0], x[2] - x[1]
        d1, d2 = (y[1] - y[0]) / h1, (y[2] - y[1]) / h2
        A = (d2 - d1) / (h2 + h1)
        B = A * h2 + d2
        C = y[2]
        disc = (B * B - 4 * A * C) ** 0.5
        den = B + disc if abs(B + disc) > abs(B - disc) else B - disc
        dx = -2 * C / den
        xn = x[2] + dx
        x = [x[1], x[2], xn]
        y = [y[1], y[2], f(xn)]
        if abs(dx) <= tol * abs(xn):
            return xn
    raise RuntimeError("Muller did not converge")


def mode(l, s, k, seed, tol=1e-10):
    depth, prev, w, spread = 64, None, seed, 1e-3
    while True:
        w = muller(lambda x: cf(x, l, s, k, depth), w, spread, tol * 0.1)
        if prev is not None and abs(w - prev) <= tol * abs(w):
            return w, depth
        spread = 1e-6 if prev is None else min(max(abs(w - prev) / abs(w) * 10, 1e-9), 1e-3)
        prev = w
        depth *= 2


def overtones(l=2, s=2, count=8):
    found = []
    for n in range(count):
        if len(found) >= 2:
            seed = 2 * found[-1] - found[-2]
        else:
            seed = [0.3732 - 0.0892j, 0.3460 - 0.2749j][n]
        w, _ = mode(l, s, n, seed)
        found.append(w)
    return found


if __name__ == "__main__":
    t = time.perf_counter()
    ws = overtones()
    dt = time.perf_counter() - t
    for n, w in enumerate(ws):
        print(n, f"{w.real:.10f} {w.imag:+.10f}i")
    print(f"{dt * 1e3:.1f} ms", file=sys.stderr)
