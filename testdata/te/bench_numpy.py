#!/usr/bin/python3
"""Reference timing for te's benchmarks: numpy 1.24.2 dense tracking error.

Times the dense ex-ante tracking error sqrt(a @ S @ a) on an N×N covariance
(N = 500, 3000), and a @ S @ a with the full dense Euler decomposition
(S @ a, a * Sa / te), the work te's dense path does. Prints the median of
repeated runs in ms and the BLAS threadpool in use (threadpoolctl). Run with
/usr/bin/python3 in the same session as `go test -bench`.
"""
import timeit
import numpy as np
from threadpoolctl import threadpool_info

rng = np.random.default_rng(1)
print("numpy", np.__version__, [(i["internal_api"], i.get("architecture"), i["num_threads"]) for i in threadpool_info()])
for n in (500, 3000):
    X = rng.standard_normal((n // 2, n)) * 0.01
    S = X.T @ X / X.shape[0] + np.diag(rng.uniform(1e-4, 4e-4, n))
    p = rng.uniform(0, 1, n); p /= p.sum()
    b = rng.uniform(0, 1, n); b /= b.sum()
    a = p - b

    def te():
        return np.sqrt(a @ S @ a)

    def decomp():
        sa = S @ a
        t = np.sqrt(a @ sa)
        return t, sa / t, a * sa / t

    for name, f in (("te", te), ("te+marginal+contribution", decomp)):
        reps = 20 if n == 3000 else 200
        times = timeit.repeat(f, number=1, repeat=reps)
        print(f"N={n} {name}: median {1e3 * np.median(times):.3f} ms, min {1e3 * min(times):.3f} ms")
