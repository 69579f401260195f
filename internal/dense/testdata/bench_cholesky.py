#!/usr/bin/python3
"""Times numpy's Cholesky factorization and solves on the matrices that
BenchmarkCholesky (cholesky_bench_test.go) factors, in the same session:

    /usr/bin/python3 internal/dense/testdata/bench_cholesky.py [repeats]

A = X.T @ X + 1e-4 * I with X = bench_matrix(1000, N) of bench_numpy.py.
Timed: np.linalg.cholesky(A) (LAPACK dpotrf on OpenBLAS), and
scipy.linalg.cho_solve((L, True), b) for one and 100 right-hand sides.
numpy 1.24.2, scipy 1.10.1, OpenBLAS 0.3.21 (Debian), 2 threads. Prints the
median of the repeats and GFLOP/s counting N³/3 flops.
"""
import sys

import numpy as np
import scipy
import scipy.linalg
from threadpoolctl import threadpool_info

from bench_numpy import bench_matrix, timeit


def main():
    repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 3
    blas = [(i.get("internal_api"), i.get("version"), i.get("num_threads")) for i in threadpool_info()]
    print(f"numpy {np.__version__}, scipy {scipy.__version__}, BLAS {blas}")
    for n in (1000, 3000, 6000):
        x = bench_matrix(1000, n)
        a = x.T @ x + 1e-4 * np.eye(n)
        med, _ = timeit(lambda: np.linalg.cholesky(a), repeats)
        print(f"cholesky N={n} {med * 1e3:.3f} ms {n ** 3 / 3 / med / 1e9:.1f} GFLOP/s")
        # Fortran order and no finiteness check, so that cho_solve copies nothing.
        low = np.asfortranarray(np.linalg.cholesky(a))
        b1 = np.ones(n)
        b100 = bench_matrix(n, 100)
        med, _ = timeit(lambda: scipy.linalg.cho_solve((low, True), b1, check_finite=False), max(repeats, 20))
        print(f"solve-vec N={n} {med * 1e3:.3f} ms")
        med, _ = timeit(lambda: scipy.linalg.cho_solve((low, True), b100, check_finite=False), repeats)
        print(f"solve-100 N={n} {med * 1e3:.3f} ms")


if __name__ == "__main__":
    main()
