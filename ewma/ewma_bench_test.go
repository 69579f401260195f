package ewma

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

var benchSizes = []struct{ t, n int }{{250, 100}, {500, 1000}, {1000, 3000}}

// BenchmarkCovariance: batch weighted covariance, complete data, zero mean
// and demeaned, allocating and in place.
func BenchmarkCovariance(b *testing.B) {
	for _, sz := range benchSizes {
		rng := rand.New(rand.NewPCG(1, uint64(sz.n)))
		x := randomPanel(rng, sz.t, sz.n, 0)
		w, _ := Weights(nil, sz.t, 90)
		for _, demean := range []bool{false, true} {
			o := &Options{Demean: demean}
			b.Run(fmt.Sprintf("T=%d/N=%d/demean=%v/alloc", sz.t, sz.n, demean), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					var c mat.SymDense
					_, _, _ = Covariance(&c, x, w, o)
				}
			})
			b.Run(fmt.Sprintf("T=%d/N=%d/demean=%v/inplace", sz.t, sz.n, demean), func(b *testing.B) {
				b.ReportAllocs()
				c := mat.NewSymDense(sz.n, nil)
				for b.Loop() {
					_, _, _ = Covariance(c, x, w, o)
				}
			})
		}
	}
}

// BenchmarkCovarianceGaps: pairwise with 2 % missing, which adds the mask
// products and the O(N³) PSD check.
func BenchmarkCovarianceGaps(b *testing.B) {
	for _, sz := range benchSizes[:2] {
		rng := rand.New(rand.NewPCG(2, uint64(sz.n)))
		x := randomPanel(rng, sz.t, sz.n, 0.02)
		w, _ := Weights(nil, sz.t, 90)
		b.Run(fmt.Sprintf("T=%d/N=%d", sz.t, sz.n), func(b *testing.B) {
			b.ReportAllocs()
			c := mat.NewSymDense(sz.n, nil)
			for b.Loop() {
				_, _, _ = Covariance(c, x, w, nil)
			}
		})
	}
}

// BenchmarkSyrkBaseline is gonum's single-core Syrk on the same product, the
// baseline internal/dense is measured against.
func BenchmarkSyrkBaseline(b *testing.B) {
	for _, sz := range benchSizes {
		rng := rand.New(rand.NewPCG(1, uint64(sz.n)))
		x := randomPanel(rng, sz.t, sz.n, 0)
		b.Run(fmt.Sprintf("T=%d/N=%d", sz.t, sz.n), func(b *testing.B) {
			c := blas64.Symmetric{N: sz.n, Stride: sz.n, Data: make([]float64, sz.n*sz.n), Uplo: blas.Upper}
			for b.Loop() {
				blas64.Syrk(blas.Trans, 1, x.RawMatrix(), 0, c)
			}
		})
	}
}

// BenchmarkRecursiveUpdate: one daily update with a full window (the oldest
// day is dropped), complete data and one gap, covariance and variances only.
func BenchmarkRecursiveUpdate(b *testing.B) {
	for _, n := range []int{100, 1000, 3000} {
		rng := rand.New(rand.NewPCG(3, uint64(n)))
		const window = 20 // the update cost does not depend on the window
		x := randomPanel(rng, window+1, n, 0.001)
		for _, varOnly := range []bool{false, true} {
			for _, demean := range []bool{false, true} {
				if varOnly && demean {
					continue
				}
				r, _ := NewRecursive(n, RecursiveSettings{HalfLife: 90, Window: window, VariancesOnly: varOnly, Options: Options{Demean: demean}})
				for d := 0; d < window; d++ {
					_ = r.Update(x.RawRowView(d))
				}
				today := x.RawRowView(window)
				b.Run(fmt.Sprintf("N=%d/variancesOnly=%v/demean=%v", n, varOnly, demean), func(b *testing.B) {
					b.ReportAllocs()
					for b.Loop() {
						_ = r.Update(today)
					}
				})
			}
		}
	}
}
