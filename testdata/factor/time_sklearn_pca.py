#!/usr/bin/python3
"""Reference timing for BenchmarkFit: scikit-learn 1.2.1 (numpy 1.24.2,
OpenBLAS) PCA(20, svd_solver="randomized").fit on a 1000 x 3000 matrix of
simulated returns (20 factors plus noise), median of 5 runs after a warm-up.
Run: /usr/bin/python3 time_sklearn_pca.py   (prints seconds; writes no file)
"""
import time
import numpy as np
import sklearn
from sklearn.decomposition import PCA

rng = np.random.default_rng(21)
t, n, k = 1000, 3000, 20
x = rng.standard_normal((t, k)) * 0.01 @ rng.standard_normal((k, n)) + 0.02 * rng.standard_normal((t, n))
PCA(k, svd_solver="randomized", random_state=0).fit(x)
runs = []
for _ in range(5):
    t0 = time.perf_counter()
    PCA(k, svd_solver="randomized", random_state=0).fit(x)
    runs.append(time.perf_counter() - t0)
print("sklearn %s numpy %s PCA(20, randomized).fit 1000x3000: median %.3f s, runs %s"
      % (sklearn.__version__, np.__version__, sorted(runs)[2], ["%.3f" % r for r in runs]))
