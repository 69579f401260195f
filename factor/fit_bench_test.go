package factor

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// benchReturns is a T×N market of 20 factors with 3 % of returns missing when
// missing is set.
func benchReturns(t, n int, missing bool) *mat.Dense {
	sim := simulate(21, t, n, 20)
	if missing {
		rng := rand.New(rand.NewPCG(4, 5))
		raw := sim.x.RawMatrix().Data
		for i := range raw {
			if rng.Float64() < 0.03 {
				raw[i] = math.NaN()
			}
		}
	}
	return sim.x
}

// BenchmarkFit builds the whole model (principal components, factor
// covariance, specific variances). The reference is scikit-learn 1.2.1
// PCA(20, svd_solver="randomized").fit on the same size (testdata/factor/
// time_sklearn_pca.py), which does only the first of these steps.
func BenchmarkFit(b *testing.B) {
	for _, c := range []struct {
		t, n, k    int
		missing    bool
		powerIters int
		method     Solver
	}{
		{t: 1000, n: 3000, k: 20, method: SolverAuto},
		{t: 1000, n: 3000, k: 20, method: SolverRandomized},
		{t: 1000, n: 3000, k: 20, powerIters: 2, method: SolverRandomized},
		{t: 1000, n: 3000, k: 20, missing: true},
	} {
		x := benchReturns(c.t, c.n, c.missing)
		name := fmt.Sprintf("T=%d/N=%d/K=%d/missing=%v/iters=%d/%v", c.t, c.n, c.k, c.missing, c.powerIters, c.method)
		b.Run(name, func(b *testing.B) {
			s := baseSettings()
			s.K, s.Solver, s.PowerIters = c.k, c.method, c.powerIters
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				m, err := Fit(x, s)
				if err != nil {
					b.Fatal(err)
				}
				if c.missing && i == 0 {
					b.ReportMetric(float64(m.Info().Imputation.Iterations), "impute-iters")
				}
			}
		})
	}
}

// BenchmarkFitHuge measures peak heap at N×T = 10000×2500, K = 30. The input
// matrix (200 MB) is counted in the peak.
func BenchmarkFitHuge(b *testing.B) {
	if testing.Short() {
		b.Skip("huge")
	}
	rng := rand.New(rand.NewPCG(8, 9))
	const t, n, k = 2500, 10000, 30
	x := mat.NewDense(t, n, nil)
	fr := make([]float64, k)
	load := make([]float64, n*k)
	for i := range load {
		load[i] = rng.NormFloat64()
	}
	for r := 0; r < t; r++ {
		for j := range fr {
			fr[j] = 0.01 * rng.NormFloat64()
		}
		row := x.RawRowView(r)
		for i := range row {
			v := 0.02 * rng.NormFloat64()
			for j, f := range fr {
				v += load[i*k+j] * f
			}
			row[i] = v
		}
	}
	s := baseSettings()
	s.K = k
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		runtime.GC()
		var before runtime.MemStats
		runtime.ReadMemStats(&before)
		stop := make(chan struct{})
		peak := make(chan uint64)
		go func() {
			var m runtime.MemStats
			var hi uint64
			for {
				select {
				case <-stop:
					peak <- hi
					return
				default:
				}
				runtime.ReadMemStats(&m)
				hi = max(hi, m.HeapInuse)
				runtime.Gosched()
			}
		}()
		if _, err := Fit(x, s); err != nil {
			b.Fatal(err)
		}
		close(stop)
		hi := <-peak
		b.ReportMetric(float64(hi)/(1<<20), "peak-heap-MiB")
		b.ReportMetric(float64(before.HeapInuse)/(1<<20), "heap-before-MiB")
	}
}

// BenchmarkMulVec compares Σx in factor form with the dense N×N product
// (blas64.Symv on the model's CovarianceTo).
func BenchmarkMulVec(b *testing.B) {
	sim := simulate(2, 300, 3000, 20)
	s := baseSettings()
	s.K = 20
	m, err := Fit(sim.x, s)
	if err != nil {
		b.Fatal(err)
	}
	x := make([]float64, 3000)
	for i := range x {
		x[i] = 1.0 / 3000
	}
	dst := make([]float64, 3000)
	b.Run("factor/N=3000/K=20", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			m.MulVecTo(dst, x)
		}
	})
	b.Run("factor-alloc/N=3000/K=20", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			_ = m.MulVecTo(nil, x)
		}
	})
	sigma := m.CovarianceTo(nil)
	b.Run("dense/N=3000", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			blas64.Symv(1, sigma.RawSymmetric(), blas64.Vector{N: 3000, Inc: 1, Data: x}, 0, blas64.Vector{N: 3000, Inc: 1, Data: dst})
		}
	})
	b.Run("quadform/N=3000/K=20", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			_ = m.QuadForm(x)
		}
	})
}
