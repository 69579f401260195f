#!/usr/bin/python3
"""Runs the dense-kernel benchmarks and numpy's timings in one session and
prints a table of medians, GFLOP/s, share of the measured FMA peak and
ratios to gonum and numpy.

    /usr/bin/python3 internal/dense/testdata/bench_report.py [count]

count (default 5) is the number of runs of each benchmark; medians are
reported because the machine is shared and noisy. The small sizes run 10
operations per benchmark run, 1000x3000 one. numpy multiplies the same
matrices (bench_numpy.py). Flops: N*N*T for XtX, T*T*N for the Gram.
"""
import os
import re
import statistics
import subprocess
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import bench_numpy  # noqa: E402

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", "..", ".."))
LINE = re.compile(r"^Benchmark(\S+?)(-\d+)?\s+\d+\s+([\d.]+) ns/op(.*)$")


def go_bench(pattern, benchtime, count):
    cmd = ["go", "test", "./internal/dense", "-run", "^$", "-bench", pattern,
           f"-benchtime={benchtime}", f"-count={count}", "-benchmem"]
    out = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, check=True).stdout
    runs = {}
    for line in out.splitlines():
        m = LINE.match(line)
        if m:
            gf = re.search(r"([\d.]+) GFLOP/s", m.group(4))
            mem = re.search(r"(\d+) B/op", m.group(4))
            runs.setdefault(m.group(1), []).append(
                (float(m.group(3)) / 1e6, float(gf.group(1)) if gf else 0.0, int(mem.group(1)) if mem else 0))
    return runs


def main():
    count = int(sys.argv[1]) if len(sys.argv) > 1 else 5
    runs = go_bench("Peak", "3x", count)
    runs.update(go_bench("(XtX|XWXt|XtWXWeighted)/(250x500|500x1000)/", "10x", count))
    runs.update(go_bench("(XtX|XWXt|XtWXWeighted)/1000x3000/", "1x", count))
    numpy = {}
    for t, n in [(250, 500), (500, 1000), (1000, 3000)]:
        x = bench_numpy.bench_matrix(t, n)
        numpy[f"XtX/{t}x{n}"] = bench_numpy.timeit(lambda: x.T @ x, count)[0] * 1e3
    x = bench_numpy.bench_matrix(1000, 3000)
    numpy["XWXt/1000x3000"] = bench_numpy.timeit(lambda: x @ x.T, count)[0] * 1e3

    med = {k: (statistics.median(r[0] for r in v), statistics.median(r[1] for r in v),
               statistics.median(r[2] for r in v)) for k, v in runs.items()}
    peak = max(v[1] for k, v in med.items() if k.startswith("Peak/"))
    print(f"medians of {count} runs; machine shared and loaded; numpy {np.__version__} (OpenBLAS)")
    for k in sorted(k for k in med if k.startswith("Peak/")):
        print(f"{k:28s} {med[k][1]:8.1f} GFLOP/s  (FMA loop, all cores)")
    print(f"{'benchmark':28s} {'ms':>9s} {'GFLOP/s':>8s} {'%peak':>6s} {'MB/op':>7s} {'numpy/this':>10s}")
    for k in sorted(k for k in med if not k.startswith("Peak/")):
        ms, gf, mem = med[k]
        size = "/".join(k.split("/")[:2]).replace("XtWXWeighted", "XtX")
        ratio = f"{numpy[size] / ms:10.2f}" if size in numpy else ""
        print(f"{k:28s} {ms:9.2f} {gf:8.2f} {100 * gf / peak:6.1f} {mem / 1e6:7.1f} {ratio}")
    for k, ms in numpy.items():
        flops = {"XtX/250x500": 500**2 * 250, "XtX/500x1000": 1000**2 * 500,
                 "XtX/1000x3000": 3000**2 * 1000, "XWXt/1000x3000": 1000**2 * 3000}[k]
        print(f"{'numpy ' + k:28s} {ms:9.2f} {flops / ms / 1e6:8.2f} {100 * flops / ms / 1e6 / peak:6.1f}")


if __name__ == "__main__":
    main()
