#!/usr/bin/python3
"""Reference timings for testdata/bench/run.sh, one line each:

    REF <row> <median ms> <what was timed>

Debian's /usr/bin/python3 with numpy 1.24.2 (OpenBLAS 0.3.21, 2 threads),
scikit-learn 1.2.1 and pandas 1.5.3; the versions and BLAS are printed.
Sizes are those of the Go benchmarks: T = 1000 dates, N = 3000 assets,
K = 20 factors. The existing reference scripts are reused:
internal/dense/testdata/bench_numpy.py (X.T @ X on the very matrix of the Go
benchmark), testdata/shrink/bench_sklearn.py (LedoitWolf and OAS fit) and
testdata/factor/time_sklearn_pca.py (PCA(20, svd_solver="randomized").fit);
their printed medians are parsed. The rest is timed here with the calls
named in each line. Parquet has no reference: Debian 12 packages neither
pyarrow nor fastparquet, which pandas.read_parquet needs.

    /usr/bin/python3 testdata/bench/reference.py [count]
"""
import os
import re
import statistics
import subprocess
import sys
import tempfile
import time

import numpy as np
import pandas as pd
import sklearn
from threadpoolctl import threadpool_info

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
sys.path.insert(0, os.path.join(ROOT, "internal", "dense", "testdata"))
import bench_numpy  # noqa: E402

T, N, K = 1000, 3000, 20


def median_ms(f, count, reps=1):
    f()  # warm up: thread pool, page faults
    runs = []
    for _ in range(count):
        s = time.perf_counter()
        for _ in range(reps):
            f()
        runs.append((time.perf_counter() - s) / reps)
    return statistics.median(runs) * 1e3


def ref(row, ms, what):
    print(f"REF {row} {ms:.6f} {what}", flush=True)


def run_script(path):
    return subprocess.run(["/usr/bin/python3", os.path.join(ROOT, path)], capture_output=True,
                          text=True, check=True).stdout


def main():
    count = int(sys.argv[1]) if len(sys.argv) > 1 else 3
    blas = [(i.get("internal_api"), i.get("version"), i.get("architecture"), i.get("num_threads"))
            for i in threadpool_info()]
    print(f"INFO numpy {np.__version__}, scikit-learn {sklearn.__version__}, pandas {pd.__version__}, BLAS {blas}")

    x = bench_numpy.bench_matrix(T, N)
    ref("xtx", median_ms(lambda: x.T @ x, count), "numpy X.T @ X (bench_numpy.py's matrix)")

    rng = np.random.default_rng(1)
    r = 0.01 * rng.standard_normal((T, N))
    w = 0.5 ** ((T - 1 - np.arange(T)) / 90)
    ref("ewma", median_ms(lambda: np.cov(r, rowvar=False, aweights=w, bias=True), count),
        "numpy np.cov(x, rowvar=False, aweights=w, bias=True), half-life 90")

    out = run_script("testdata/shrink/bench_sklearn.py")
    for name in ("LedoitWolf", "OAS"):
        m = re.search(rf"^{name}\s+N=3000 T=1000 ([\d.]+) s", out, re.M)
        ref(name.lower(), float(m.group(1)) * 1e3, f"scikit-learn {name}(store_precision=False).fit (bench_sklearn.py)")

    out = run_script("testdata/factor/time_sklearn_pca.py")
    m = re.search(r"median ([\d.]+) s", out)
    ref("pca", float(m.group(1)) * 1e3, 'scikit-learn PCA(20, svd_solver="randomized").fit (time_sklearn_pca.py)')

    b = rng.standard_normal((N, K)) * 0.1
    f = np.cov(rng.standard_normal((200, K)), rowvar=False) * 1e-4
    d = np.full(N, 4e-4)
    sigma = b @ f @ b.T + np.diag(d)
    v = np.full(N, 1 / N)
    ref("sigmax-dense", median_ms(lambda: sigma @ v, count, reps=2000), "numpy sigma @ x, dense 3000x3000")
    chol = x.T @ x + 1e-4 * np.eye(N)  # BenchmarkCholesky's matrix at N = 3000
    ref("cholesky", median_ms(lambda: np.linalg.cholesky(chol), count),
        "numpy np.linalg.cholesky(X.T @ X + 1e-4 I), bench_numpy.py's X (dpotrf)")
    ref("sigmax-factor", median_ms(lambda: b @ (f @ (b.T @ v)) + d * v, count, reps=2000),
        "numpy b @ (f @ (b.T @ x)) + d * x")

    p = rng.random(N) * (rng.random(N) < 0.2)
    p /= p.sum()
    bm = rng.random(N)
    bm /= bm.sum()
    labels = rng.integers(0, 10, N)

    def decompose():
        a = p - bm
        y = b.T @ a
        sa = b @ (f @ y) + d * a
        te = np.sqrt(a @ sa)
        contrib = a * sa / te
        factor = y * (f @ y) / te
        return np.bincount(labels, weights=contrib, minlength=10), factor

    ref("te", median_ms(decompose, count, reps=2000),
        "numpy TE, per-asset and per-factor contributions, np.bincount over 10 groups")

    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "r.csv")
        ret = 0.02 * rng.standard_normal((T, N))
        keep = rng.integers(0, 20, (T, N)) != 0
        dates = pd.date_range("2020-01-01", periods=T).strftime("%Y-%m-%d").to_numpy()
        assets = np.array([f"QB{j:05d}" for j in range(N)])
        ii, jj = np.nonzero(keep)
        pd.DataFrame({"date": dates[ii], "asset": assets[jj], "return": ret[ii, jj]}).to_csv(path, index=False)
        ref("csv", median_ms(lambda: pd.read_csv(path, parse_dates=["date"]).pivot(
            index="date", columns="asset", values="return"), count),
            "pandas read_csv(parse_dates=['date']).pivot(...), long CSV, 5 % missing")


if __name__ == "__main__":
    main()
