package riskmodel

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/shrink"
)

// BenchmarkValidateDense times, at N assets and T = 1000 dates, the dense
// Ledoit–Wolf estimate (the build's estimator step) and Validate of the
// model it gives: the target is validation ≤ 20 % of the build,
// that is Validate ≤ ¼ of the estimate.
func BenchmarkValidateDense(b *testing.B) {
	for _, n := range []int{2000, 6000} {
		const t = 1000
		rng := rand.New(rand.NewPCG(uint64(n), 7))
		x := mat.NewDense(t, n, nil)
		for i := 0; i < t; i++ {
			row := x.RawRowView(i)
			common := rng.NormFloat64()
			for j := range row {
				row[j] = 0.01 * (0.5*common + rng.NormFloat64())
			}
		}
		cov, _, err := shrink.LedoitWolf(nil, x, nil)
		if err != nil {
			b.Fatal(err)
		}
		assets := make([]string, n)
		for j := range assets {
			assets[j] = fmt.Sprintf("A%05d", j)
		}
		m := &Model{Assets: assets, PeriodsPerYear: 252, Method: "ledoit-wolf", Dense: cov}
		b.Run(fmt.Sprintf("N=%d/ledoit-wolf", n), func(b *testing.B) {
			b.ReportAllocs()
			dst := mat.NewSymDense(n, nil)
			for b.Loop() {
				if _, _, err := shrink.LedoitWolf(dst, x, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("N=%d/validate", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if v := Validate(m, nil); !v.PositiveDefinite {
					b.Fatal(v.Problems)
				}
			}
		})
	}
}
