#!/usr/bin/python3
"""Prints the table of testdata/bench/run.sh from the go test -bench outputs
and reference.py's lines in the folder given: medians over the Go runs, and
the mean of reference.py's medians from before and after them.

    /usr/bin/python3 testdata/bench/table.py DIR [load-before] [load-after]
"""
import glob
import os
import re
import statistics
import subprocess
import sys
import time

LINE = re.compile(r"^Benchmark(\S+?)(-\d+)?\s+\d+\s+([\d.]+) ns/op(.*)$")

# Rows whose Go side is not the library's code but another library's, shown
# for scale: their ratio is printed in brackets and is not a target.
BASELINES = {"gonum Syrk XᵀX 1000×3000"}

# row, go benchmark name (without GOMAXPROCS suffix), reference row, work
ROWS = [
    ("kernel XᵀX 1000×3000", "XtX/1000x3000/XtWX-alloc", "xtx", "N×N from T×N"),
    ("gonum Syrk XᵀX 1000×3000", "XtX/1000x3000/gonum-Syrk", "xtx", "baseline: gonum's Syrk, not our code, not a target"),
    ("ewma covariance, demeaned", "Covariance/T=1000/N=3000/demean=true/inplace", "ewma", "weighted, dense N×N"),
    ("shrink Ledoit–Wolf dense", "LedoitWolf/N=3000,T=1000/inplace", "ledoitwolf", "N×N"),
    ("shrink OAS dense", "OAS/N=3000,T=1000/inplace", "oas", "N×N"),
    ("shrink Ledoit–Wolf implicit", "Implicit/LedoitWolf/N=3000,T=1000", "ledoitwolf", "no N×N (ref: dense)"),
    ("shrink OAS implicit", "Implicit/OAS/N=3000,T=1000", "oas", "no N×N (ref: dense)"),
    ("factor build, auto", "Fit/T=1000/N=3000/K=20/missing=false/iters=0/auto", "pca", "whole model (ref: PCA only)"),
    ("factor build, randomized", "Fit/T=1000/N=3000/K=20/missing=false/iters=0/pca-randomized", "pca", "whole model (ref: PCA only)"),
    ("factor Σx", "MulVec/factor/N=3000/K=20", "sigmax-factor", "O(NK)"),
    ("dense Σx (SymVec)", "SymVec/N=3000/SymVec", "sigmax-dense", "O(N²), upper triangle"),
    ("Cholesky 3000", "Cholesky/N=3000/factorize", "cholesky", "N³/3, blocked"),
    ("te decomposition", "Decompose/N=3000/K=20/inplace", "te", "10 groups"),
    ("read returns, Parquet", "ReadReturns/parquet/1000x3000", None, "2.85 M rows"),
    ("read returns, CSV", "ReadReturns/csv/1000x3000", "csv", "2.85 M rows"),
]


def main():
    folder = sys.argv[1]
    runs = {}
    for path in glob.glob(os.path.join(folder, "*.txt")):
        for line in open(path):
            m = LINE.match(line)
            if m:
                gf = re.search(r"([\d.]+) GFLOP/s", m.group(4))
                mem = re.search(r"(\d+) B/op", m.group(4))
                runs.setdefault(m.group(1), []).append(
                    (float(m.group(3)) / 1e6, float(gf.group(1)) if gf else 0.0, int(mem.group(1)) if mem else 0))
    med = {k: tuple(statistics.median(r[i] for r in v) for i in range(3)) for k, v in runs.items()}
    refs, what, info = {}, {}, ""
    for line in open(os.path.join(folder, "reference.txt")):
        if line.startswith("REF "):
            _, row, ms, desc = line.rstrip("\n").split(" ", 3)
            refs.setdefault(row, []).append(float(ms))
            what[row] = desc
        elif line.startswith("INFO "):
            info = line[5:].strip()
    go = subprocess.run(["go", "version"], capture_output=True, text=True).stdout.strip()
    cpu = next((l.split(":", 1)[1].strip() for l in open("/proc/cpuinfo") if l.startswith("model name")), "?")
    print(f"# testdata/bench/run.sh, {time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}, {os.cpu_count()} cores, {cpu}")
    print(f"# {go}; reference: {info}")
    if len(sys.argv) > 3:
        print(f"# load average (1, 5, 15 min) before: {sys.argv[2]}, after: {sys.argv[3]} (shared machine)")
    peaks = [v[1] for k, v in med.items() if k.startswith("Peak/")]
    if peaks:
        print(f"# measured FMA peak, all cores: {max(peaks):.1f} GFLOP/s")
    print("# ratio = reference time / our time (above 1: faster than the reference); Go: medians;")
    print("# reference: mean of its medians timed before and after the Go benchmarks")
    print("# [ratio] in brackets: a baseline row (another library's code on the Go side), not a target")
    print(f"{'benchmark':30s} {'ours ms':>10s} {'MB/op':>8s} {'ref ms':>10s} {'ratio':>7s}  note")
    below = []
    for name, bench, row, note in ROWS:
        if bench not in med:
            print(f"{name:30s} {'missing':>10s}")
            continue
        ms, gf, mem = med[bench]
        if gf:
            note += f", {gf:.1f} GFLOP/s"
        r = statistics.mean(refs[row]) if row in refs else None
        if r and name in BASELINES:
            rs = f"{r:10.3f} {'[' + format(r / ms, '.2f') + ']':>7s}"
        elif r:
            rs = f"{r:10.3f} {r / ms:7.2f}"
            if r / ms < 1:
                below.append(f"{name} {r / ms:.2f}")
        else:
            rs = f"{'none':>10s} {'':>7s}"
        print(f"{name:30s} {ms:10.3f} {mem / 1e6:8.1f} {rs}  {note}")
    print(f"# target rows below 1: {', '.join(below) if below else 'none'}")
    print("# references:")
    for row in sorted(what):
        print(f"#   {row}: {what[row]}")


if __name__ == "__main__":
    main()
