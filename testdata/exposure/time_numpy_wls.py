#!/usr/bin/python3
"""Reference timing for BenchmarkExposure: the cross-sectional regressions alone.

numpy 1.24.2 with Debian's OpenBLAS (2 threads on the benchmark machine):
for each of 750 dates (T = 1000 less the 250-date look-back), 3000 assets,
10 sectors and 3 styles, build the reduced design (sector constraint
substituted out), scale by sqrt(w) with w = sqrt(cap) and solve with
np.linalg.lstsq; then the residuals. Styles are drawn at random here (their
construction is not timed). Run:

    /usr/bin/python3 testdata/exposure/time_numpy_wls.py
"""
import time

import numpy as np

rng = np.random.default_rng(1)
T, N, S, P = 750, 3000, 10, 3
sec = np.arange(N) % S
cap = np.exp(8 + 1.2 * rng.standard_normal(N))
ret = 0.02 * rng.standard_normal((T, N))
ret[rng.random((T, N)) < 0.01] = np.nan
styles = rng.standard_normal((N, P))
D = np.eye(S)[sec]

t0 = time.perf_counter()
f = np.empty((T, 1 + S + P))
for t in range(T):
    ok = ~np.isnan(ret[t])
    c = cap[ok]
    csum = np.bincount(sec[ok], weights=c, minlength=S)
    ratio = csum / csum[-1]
    Dt = D[ok]
    X = np.column_stack([np.ones(ok.sum()), Dt[:, :-1] - np.outer(Dt[:, -1], ratio[:-1]), styles[ok]])
    sw = np.sqrt(np.sqrt(c))
    g, *_ = np.linalg.lstsq(X * sw[:, None], ret[t, ok] * sw, rcond=None)
    u = ret[t, ok] - X @ g
    f[t, 0] = g[0]
    f[t, 1:S] = g[1:S]
    f[t, S] = -ratio[:-1] @ g[1:S]
    f[t, S + 1:] = g[S:]
elapsed = time.perf_counter() - t0
print("numpy %s: %d regressions of %d assets x %d parameters: %.3f s" % (np.__version__, T, N, S + P, elapsed))
