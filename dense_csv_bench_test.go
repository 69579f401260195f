package riskmodel

import (
	"fmt"
	"io"
	"testing"
)

// BenchmarkWriteDenseCSV measures formatting an N×N covariance, the -dense
// output of the nightly job, into a discarding writer.
func BenchmarkWriteDenseCSV(b *testing.B) {
	for _, n := range []int{500, 1000, 3000} {
		if n > 1000 && testing.Short() {
			continue
		}
		s := randomSym(n, 5)
		assets := labels(n)
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if err := WriteDenseCSV(io.Discard, assets, s); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
