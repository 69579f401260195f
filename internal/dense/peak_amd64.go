//go:build amd64 && !purego

package dense

// peakAVX2 and peakAVX512 run n iterations of the loops in peak_amd64.s;
// only the benchmarks call them, to measure what the FMA units reach.
func peakAVX2(n int)
func peakAVX512(n int)
