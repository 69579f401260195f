package shrink

import (
	"fmt"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// benchSizes are N × T (assets × dates) as in the issue; the reference
// timings of scikit-learn 1.2.1 come from testdata/shrink/bench_sklearn.py.
var benchSizes = []struct{ n, t int }{{500, 250}, {1000, 500}, {3000, 1000}}

func benchDense(b *testing.B, f func(*mat.SymDense, mat.Matrix, []float64) (*mat.SymDense, error), maxN int) {
	for _, sz := range benchSizes {
		if sz.n > maxN {
			continue
		}
		x := randReturns(7, sz.t, sz.n)
		b.Run(fmt.Sprintf("N=%d,T=%d/alloc", sz.n, sz.t), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, err := f(nil, x, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("N=%d,T=%d/inplace", sz.n, sz.t), func(b *testing.B) {
			b.ReportAllocs()
			dst := mat.NewSymDense(sz.n, nil)
			for i := 0; i < b.N; i++ {
				if _, err := f(dst, x, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkLedoitWolf(b *testing.B) {
	benchDense(b, func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
		c, _, err := LedoitWolf(d, x, w)
		return c, err
	}, 3000)
}

func BenchmarkOAS(b *testing.B) {
	benchDense(b, func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
		c, _, err := OAS(d, x, w)
		return c, err
	}, 3000)
}

func BenchmarkConstantCorrelation(b *testing.B) {
	benchDense(b, func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
		c, _, err := ConstantCorrelation(d, x, w)
		return c, err
	}, 1000)
}

func BenchmarkSingleIndex(b *testing.B) {
	benchDense(b, func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
		c, _, err := SingleIndex(d, x, w)
		return c, err
	}, 1000)
}

func BenchmarkSchaferStrimmer(b *testing.B) {
	benchDense(b, func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
		c, _, err := SchaferStrimmer(d, x, w)
		return c, err
	}, 1000)
}

// The spectral estimators work in the T×T space when N > T: all sizes here.
func BenchmarkNonlinear(b *testing.B) {
	benchDense(b, func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
		c, _, err := Nonlinear(d, x, w)
		return c, err
	}, 1000)
}

func BenchmarkClipMarchenkoPastur(b *testing.B) {
	benchDense(b, func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
		c, _, err := ClipMarchenkoPastur(d, x, w)
		return c, err
	}, 1000)
}

func BenchmarkImplicit(b *testing.B) {
	for _, sz := range benchSizes {
		x := randReturns(7, sz.t, sz.n)
		b.Run(fmt.Sprintf("LedoitWolf/N=%d,T=%d", sz.n, sz.t), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, _, err := LedoitWolfImplicit(x, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("OAS/N=%d,T=%d", sz.n, sz.t), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, _, err := OASImplicit(x, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
		m, _, err := LedoitWolfImplicit(x, nil)
		if err != nil {
			b.Fatal(err)
		}
		v := make([]float64, sz.n)
		for i := range v {
			v[i] = 1 / float64(sz.n)
		}
		dst := make([]float64, sz.n)
		b.Run(fmt.Sprintf("MulVecTo/N=%d,T=%d", sz.n, sz.t), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				m.MulVecTo(dst, v)
			}
		})
	}
}

func BenchmarkNearestCorrelation(b *testing.B) {
	for _, n := range []int{50, 150} {
		x := randReturns(8, n/2, n)
		cov, _, _ := LedoitWolf(nil, x, nil)
		// Perturb the correlations so that the matrix is not PSD.
		c := mat.NewSymDense(n, nil)
		for i := 0; i < n; i++ {
			for j := i; j < n; j++ {
				v := cov.At(i, j) / (cov.At(i, i) * cov.At(j, j))
				if i != j {
					v = 0.9 * v / (1e-16 + v*v + 1)
					if (i+j)%7 == 0 {
						v = -0.5
					}
				} else {
					v = 1
				}
				c.SetSym(i, j, v)
			}
		}
		b.Run(fmt.Sprintf("N=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, _, err := NearestCorrelation(nil, c, &NearCorrOptions{Tol: 1e-8}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
