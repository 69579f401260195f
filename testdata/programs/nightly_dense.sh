#!/usr/bin/env bash
# Times the whole nightly job `-method ledoit-wolf -dense` as a process
# against the pandas + scikit-learn script that does the same reading,
# fitting and writing (lw_reference.py), on a wide CSV of the invented demo
# market (widepanel: stationary, every cell observed, so no asset is
# dropped), with peak resident memory from /usr/bin/time.
#
#   bash testdata/programs/nightly_dense.sh [N] [T] [REPS]   # default 6000 1000 3
#
# The panel is written once into ${PANEL_CACHE:-/tmp/riskmodel-panels}/N-T
# (the demo simulator takes minutes at N = 6000). Each repetition runs the
# job, then the script, and prints the load average before each run: the
# machine is shared, so the best and the median of the repetitions are given.
# NIGHTLY_BIN=path times that binary instead of a build of the work tree;
# NIGHTLY_BEFORE=path also times that one (an older build) in every
# repetition, for a before/after ratio under the same load.
set -euo pipefail
cd "$(dirname "$0")/../.."
n=${1:-6000}
t=${2:-1000}
reps=${3:-3}
py=/usr/bin/python3
panel=${PANEL_CACHE:-/tmp/riskmodel-panels}/$n-$t
if [ ! -s "$panel/returns_wide.csv" ]; then
	go run ./testdata/programs/widepanel -assets "$n" -dates "$t" -out "$panel"
fi
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
# NIGHTLY_BIN times another build of the job (an older commit, say).
if [ -n "${NIGHTLY_BIN:-}" ]; then
	cp "$NIGHTLY_BIN" "$work/nightly"
else
	go build -o "$work/nightly" ./examples/nightly
fi
# run LABEL CMD...: one timed run; prints label, load, wall s, user+sys s, peak MB.
run() {
	local label=$1
	shift
	local load
	load=$(cut -d' ' -f1-3 /proc/loadavg)
	/usr/bin/time -f "%e %U %S %M" -o "$work/time" "$@" >"$work/$label.out" 2>"$work/$label.err" || {
		cat "$work/$label.err" >&2
		exit 1
	}
	read -r wall user sys rss <"$work/time"
	printf '%-8s load %-16s wall %6.2f s  cpu %6.2f s  peak %6.0f MB (%.2f × N²·8)\n' \
		"$label" "$load" "$wall" "$(echo "$user + $sys" | bc)" "$(echo "$rss / 1024" | bc)" \
		"$(echo "$rss * 1024 / (8 * $n * $n)" | bc -l)"
	echo "$wall" >>"$work/$label.walls"
}
for ((k = 1; k <= reps; k++)); do
	if [ -n "${NIGHTLY_BEFORE:-}" ]; then
		rm -rf "$work/store"
		run before "$NIGHTLY_BEFORE" -returns "$panel/returns_wide.csv" -assets "$panel/assets.csv" \
			-method ledoit-wolf -window "$t" -dense "$work/dense-before.csv" -out "$work/store"
	fi
	rm -rf "$work/store"
	run nightly "$work/nightly" -returns "$panel/returns_wide.csv" -assets "$panel/assets.csv" \
		-method ledoit-wolf -window "$t" -dense "$work/dense.csv" -out "$work/store"
	run sklearn "$py" testdata/programs/lw_reference.py "$panel/returns_wide.csv" "$work/sklearn.csv"
done
stats() { sort -n "$work/$1.walls" | awk '{a[NR]=$1} END {printf "%.2f %.2f", a[1], (NR%2 ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2)}'; }
read -r nb nm <<<"$(stats nightly)"
read -r sb sm <<<"$(stats sklearn)"
printf 'N = %d, T = %d, %d runs: nightly best %.2f s median %.2f s; sklearn best %.2f s median %.2f s; ratio (sklearn / nightly) of medians %.2f\n' \
	"$n" "$t" "$reps" "$nb" "$nm" "$sb" "$sm" "$(echo "$sm / $nm" | bc -l)"
if [ -n "${NIGHTLY_BEFORE:-}" ]; then
	read -r bb bm <<<"$(stats before)"
	printf 'before: best %.2f s median %.2f s; ratio (before / nightly) of medians %.2f; dense CSV identical: %s\n' \
		"$bb" "$bm" "$(echo "$bm / $nm" | bc -l)" "$(cmp -s "$work/dense-before.csv" "$work/dense.csv" && echo yes || echo no)"
fi
grep -E 'elapsed' "$work/nightly.err" | sed -E 's/^time=[^ ]+ level=[A-Z]+ //' | cut -c1-110
