#!/usr/bin/python3
"""Reference timings for the shrink benchmarks (not a fixture).

scikit-learn 1.2.1, numpy 1.24.2 with Debian's OpenBLAS, 2 threads.
Run: /usr/bin/python3 bench_sklearn.py
Calls: LedoitWolf(store_precision=False).fit(x) and
OAS(store_precision=False).fit(x) on N x T = 500x250, 1000x500, 3000x1000
(T rows, N columns); the median of several runs is printed.
"""
import time

import numpy as np
import sklearn
from sklearn.covariance import OAS, LedoitWolf
from threadpoolctl import threadpool_info

print("scikit-learn", sklearn.__version__, "numpy", np.__version__)
for info in threadpool_info():
    print(info.get("internal_api"), info.get("version"), info.get("architecture"), "threads", info.get("num_threads"))
rng = np.random.default_rng(1)
for n, t in [(500, 250), (1000, 500), (3000, 1000)]:
    x = 0.01 * rng.standard_normal((t, n))
    for name, est in [("LedoitWolf", LedoitWolf), ("OAS", OAS)]:
        runs = 5 if n < 3000 else 3
        ts = []
        for _ in range(runs):
            s = time.perf_counter()
            est(store_precision=False).fit(x)
            ts.append(time.perf_counter() - s)
        print("%-10s N=%d T=%d %.4f s" % (name, n, t, float(np.median(ts))))
