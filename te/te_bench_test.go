package te

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// benchSetup builds a factor model of n assets and k factors, a portfolio,
// a benchmark and 10 group labels.
func benchSetup(b *testing.B, n, k int) (*factorModel, []float64, []float64, []string) {
	b.Helper()
	rng := rand.New(rand.NewPCG(uint64(n), uint64(k)))
	m := randomModel(rng, n, k)
	return m, randomWeights(rng, n, n/5), randomWeights(rng, n, n), randomLabels(rng, n, 10)
}

// BenchmarkDecompose is the full decomposition with 10 groups on a factor
// model: DecomposeTo (allocating and in place) followed by Groups.
func BenchmarkDecompose(b *testing.B) {
	for _, n := range []int{500, 3000, 10000} {
		const k = 20
		m, p, bm, labels := benchSetup(b, n, k)
		an, err := NewAnalyzer(m)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(fmt.Sprintf("N=%d/K=%d/alloc", n, k), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				d, err := an.Decompose(p, bm)
				if err != nil {
					b.Fatal(err)
				}
				_ = d.Groups(labels)
			}
		})
		b.Run(fmt.Sprintf("N=%d/K=%d/inplace", n, k), func(b *testing.B) {
			b.ReportAllocs()
			d := &Decomposition{}
			gr := NewGrouping(labels)
			var gs []Group
			for b.Loop() {
				if _, err := an.DecomposeTo(d, p, bm); err != nil {
					b.Fatal(err)
				}
				gs = d.GroupsTo(gs, gr)
			}
		})
	}
}

// BenchmarkTrackingError is the optimizer's call: TE alone, factor form.
func BenchmarkTrackingError(b *testing.B) {
	for _, n := range []int{500, 3000, 10000} {
		const k = 20
		m, p, bm, _ := benchSetup(b, n, k)
		an, err := NewAnalyzer(m)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(fmt.Sprintf("N=%d/K=%d", n, k), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := an.TrackingError(p, bm); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkDense is the same decomposition on the dense Σ (N×N), and TE
// alone, to compare with numpy's dense aᵀΣa (testdata/te/bench_numpy.py).
func BenchmarkDense(b *testing.B) {
	for _, n := range []int{500, 3000} {
		const k = 20
		m, p, bm, labels := benchSetup(b, n, k)
		an, err := NewAnalyzer(m.dense())
		if err != nil {
			b.Fatal(err)
		}
		b.Run(fmt.Sprintf("N=%d/decompose", n), func(b *testing.B) {
			b.ReportAllocs()
			d := &Decomposition{}
			gr := NewGrouping(labels)
			var gs []Group
			for b.Loop() {
				if _, err := an.DecomposeTo(d, p, bm); err != nil {
					b.Fatal(err)
				}
				gs = d.GroupsTo(gs, gr)
			}
		})
		b.Run(fmt.Sprintf("N=%d/te", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := an.TrackingError(p, bm); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkNewAnalyzer is the one-off cost of taking a factor model in.
func BenchmarkNewAnalyzer(b *testing.B) {
	m, _, _, _ := benchSetup(b, 3000, 20)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := NewAnalyzer(m); err != nil {
			b.Fatal(err)
		}
	}
}
