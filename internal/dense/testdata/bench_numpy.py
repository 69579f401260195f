#!/usr/bin/python3
"""Times numpy's X.T @ X and X @ X.T on the matrices the Go benchmarks use.

Run with Debian's interpreter, in the same session as the Go benchmarks
(bench_report.py does both and prints the table):

    /usr/bin/python3 internal/dense/testdata/bench_numpy.py [repeats]

The matrices are those of benchMatrix in dense_bench_test.go, element
x[t, j] = 0.01 * (((t*7919 + j*104729) % 10007) / 10007 - 0.5), so both sides
multiply the same numbers. Prints the median and best time of the repeats
and GFLOP/s counting N*N*T flops for X.T @ X (T*T*N for the Gram X @ X.T),
half of the 2*N*N*T of a general product, as the Go benchmarks do.
Versions used for the committed report: numpy 1.24.2 with Debian's OpenBLAS
0.3.21, /usr/bin/python3 3.11.
"""
import statistics
import sys
import time

import numpy as np


def bench_matrix(t, n):
    i = np.arange(t, dtype=np.int64)[:, None]
    j = np.arange(n, dtype=np.int64)[None, :]
    return 0.01 * (((i * 7919 + j * 104729) % 10007) / 10007 - 0.5)


def timeit(f, repeats):
    f()  # warm up: thread pool, page faults
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        f()
        times.append(time.perf_counter() - start)
    return statistics.median(times), min(times)


def main():
    repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 5
    print(f"numpy {np.__version__}, {repeats} repeats")
    for t, n in [(250, 500), (500, 1000), (1000, 3000)]:
        x = bench_matrix(t, n)
        med, best = timeit(lambda: x.T @ x, repeats)
        flops = n * n * t
        print(f"XtX  {t}x{n}  median {med*1e3:9.2f} ms  best {best*1e3:9.2f} ms  {flops/med/1e9:7.2f} GFLOP/s (median)")
    x = bench_matrix(1000, 3000)
    med, best = timeit(lambda: x @ x.T, repeats)
    flops = 1000 * 1000 * 3000
    print(f"Gram 1000x3000  median {med*1e3:9.2f} ms  best {best*1e3:9.2f} ms  {flops/med/1e9:7.2f} GFLOP/s (median)")


if __name__ == "__main__":
    main()
