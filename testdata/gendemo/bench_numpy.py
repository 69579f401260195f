"""Reference timing for internal/demo BenchmarkGenerate and BenchmarkTrueCovariance.

numpy 1.24 (Debian python3-numpy) does the same work as demo.Generate's
simulation loop: per date, correlated factor shocks, GARCH(1,1) updates of
factor and specific variance multipliers, Student-t specific returns
(standard_t scaled to unit variance) and r = B f + e; then B F Bᵀ + D for one
date. It is vectorised across assets, as a numpy user would write it; it does
not write the events, benchmark or fund. Run: /usr/bin/python3 bench_numpy.py
"""
import time

import numpy as np


def simulate(n, t, k, rng):
    b = rng.standard_normal((n, k))
    corr = np.eye(k)
    chol = np.linalg.cholesky(corr)
    fvol = np.full(k, 0.01)
    svol = np.full(n, 0.018)
    h, g = np.ones(k), np.ones(n)
    r = np.empty((t, n))
    for i in range(t):
        u = chol @ rng.standard_normal(k)
        f = fvol * np.sqrt(h) * u
        x = rng.standard_t(5, n) * np.sqrt(3 / 5)
        e = svol * np.sqrt(g) * x
        r[i] = b @ f + e
        g = 0.05 + 0.05 * g * np.minimum(x * x, 25) + 0.90 * g
        h = 0.02 + 0.07 * h * np.minimum(u * u, 25) + 0.91 * h
    return r, b


def best(fn, reps=3):
    times = []
    for _ in range(reps):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


rng = np.random.default_rng(1)
for n, t in [(500, 1008), (3000, 1000)]:
    print(f"simulate {n}x{t}: {best(lambda: simulate(n, t, 15, rng)) * 1e3:.1f} ms")
for n in [500, 3000]:
    b = rng.standard_normal((n, 15))
    f = np.eye(15) * 1e-4
    d = np.full(n, 3e-4)
    print(f"B F B^T + D {n}: {best(lambda: b @ f @ b.T + np.diag(d)) * 1e3:.2f} ms")
