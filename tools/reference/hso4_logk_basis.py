#!/usr/bin/env python3
"""Re-express Clegg, Rard & Pitzer (1994) eq. 21 for HSO4- in phdose's LogK basis.

CRP94, J. Chem. Soc. Faraday Trans. 90, 1875, eq. 21 (as transcribed in the Pytzer library,
pytzer/dissociation.py, HSO4_CRP94):

    log10 K = 562.69486 - 102.5154 ln T - 1.117033e-4 T^2 + 0.2477538 T - 13273.75 / T

phdose's LogK is log10 K = a + b/T + c T + d log10 T + e/T^2: it has no T^2 term. Only that term
is replaced here, by its least-squares image in the basis {1, 1/T, T, log10 T, 1/T^2} on a 0.25 K
grid over 273.15-373.15 K. Nothing is fitted to measurements. Prints the LogK coefficients
used in src/chem/catalogue.rs (SULFATE) and the largest difference from eq. 21 in pK.

Pure Python 3 (no packages): python3 tools/reference/hso4_logk_basis.py
"""
from math import log, log10


def crp94(t):
    return 562.69486 - 102.5154 * log(t) - 1.117033e-4 * t * t + 0.2477538 * t - 13273.75 / t


def main():
    n = 401
    ts = [273.15 + 100.0 * i / (n - 1) for i in range(n)]
    # Scaled columns keep the least-squares problem well conditioned.
    cols = [[1.0] * n, [300.0 / t for t in ts], [t / 300.0 for t in ts], [log10(t) for t in ts],
            [(300.0 / t) ** 2 for t in ts]]
    y = [-1.117033e-4 * t * t for t in ts]
    # Modified Gram-Schmidt QR, then back substitution.
    q = [list(c) for c in cols]
    m = len(q)
    r = [[0.0] * m for _ in range(m)]
    for j in range(m):
        for i in range(j):
            r[i][j] = sum(q[i][k] * q[j][k] for k in range(n))
            q[j] = [q[j][k] - r[i][j] * q[i][k] for k in range(n)]
        r[j][j] = sum(v * v for v in q[j]) ** 0.5
        q[j] = [v / r[j][j] for v in q[j]]
    qty = [sum(q[i][k] * y[k] for k in range(n)) for i in range(m)]
    x = [0.0] * m
    for i in reversed(range(m)):
        x[i] = (qty[i] - sum(r[i][j] * x[j] for j in range(i + 1, m))) / r[i][i]
    a = 562.69486 + x[0]
    b = -13273.75 + x[1] * 300.0
    c = 0.2477538 + x[2] / 300.0
    d = -102.5154 * log(10.0) + x[3]
    e = x[4] * 300.0 ** 2

    def ours(t):
        return a + b / t + c * t + d * log10(t) + e / (t * t)

    print(f"a = {a!r}\nb = {b!r}\nc = {c!r}\nd = {d!r}\ne = {e!r}")
    worst = max(abs(ours(t) - crp94(t)) for t in ts)
    print(f"largest |pK difference| from eq. 21 over 0-100 degC: {worst:.1e}")
    for celsius in range(0, 65, 5):
        t = celsius + 273.15
        print(f"{celsius:3d} degC  eq. 21 pK {-crp94(t):.4f}  LogK pK {-ours(t):.4f}")


if __name__ == "__main__":
    main()
