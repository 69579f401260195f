#!/usr/bin/env bash
# One benchmark report: the library's key benchmarks (go test -bench, -benchmem)
# and the reference libraries' timings (numpy 1.24, scikit-learn 1.2.1, pandas
# 1.5.3 from Debian, /usr/bin/python3) on the same sizes in the same run, and
# one table of ratios (reference time / our time: above 1 means faster than
# the reference).
#
#   bash testdata/bench/run.sh            # prints the table
#   bash testdata/bench/run.sh --save     # also writes testdata/bench/latest.txt
#
# About 4-6 minutes on the 2-core machine. Set BENCH_TAGS=openblas (with
# CGO_LDFLAGS=-lopenblas) to measure the OpenBLAS build. Each benchmark runs
# BENCH_COUNT times (default 3) and the table shows medians; the machine is
# shared, so its load average is printed with the table.
set -euo pipefail
cd "$(dirname "$0")/../.."
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT
count=${BENCH_COUNT:-3}
tags=${BENCH_TAGS:-}
py=/usr/bin/python3

bench() { # file package pattern benchtime
	go test -tags "$tags" -run '^$' -bench "$3" -benchtime="$4" -count="$count" -benchmem "$2" >"$out/$1" 2>&1 || {
		cat "$out/$1" >&2
		exit 1
	}
}

load_before=$(cut -d' ' -f1-3 /proc/loadavg)
# The references run before and after the Go benchmarks, and the table takes
# the mean of the two medians, so both sides span the same stretch of load.
echo "== reference timings (before)" >&2
"$py" testdata/bench/reference.py "$count" >"$out/reference.txt"
echo "== go benchmarks" >&2
bench dense.txt ./internal/dense '^BenchmarkXtX$/^1000x3000$/^(XtWX-alloc|gonum-Syrk)$' 1x
bench peak.txt ./internal/dense '^BenchmarkPeak$' 3x
bench symvec.txt ./internal/dense '^BenchmarkSymVec$/^N=3000$/^SymVec$' 2000x
bench chol.txt ./internal/dense '^BenchmarkCholesky$/^N=3000$/^factorize$' 3x
bench ewma.txt ./ewma '^BenchmarkCovariance$/^T=1000$/^N=3000$/^demean=true$/^inplace$' 3x
bench shrink.txt ./shrink '^Benchmark(LedoitWolf|OAS)$/^N=3000,T=1000$/^inplace$' 3x
bench implicit.txt ./shrink '^BenchmarkImplicit$/^(LedoitWolf|OAS)$/^N=3000,T=1000$' 3x
bench fit.txt ./factor '^BenchmarkFit$/^T=1000$/^N=3000$/^K=20$/^missing=false$/^iters=0$/^(auto|pca-randomized)$' 3x
bench mulvec.txt ./factor '^BenchmarkMulVec$/^factor$/^N=3000$' 2000x
bench te.txt ./te '^BenchmarkDecompose$/^N=3000$/^K=20$/^inplace$' 2000x
bench read.txt . '^BenchmarkReadReturns$/^(parquet|csv)$/^1000x3000$' 3x
echo "== reference timings (after)" >&2
"$py" testdata/bench/reference.py "$count" >>"$out/reference.txt"
load_after=$(cut -d' ' -f1-3 /proc/loadavg)

table=$("$py" testdata/bench/table.py "$out" "$load_before" "$load_after")
echo "$table"
if [ "${1:-}" = "--save" ]; then
	echo "$table" >testdata/bench/latest.txt
fi
