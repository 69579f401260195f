package factor_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
)

// benchSectorMarket is a T×N invented market with a market factor, ten
// sectors and a size effect, 1 % of returns missing, static caps.
func benchSectorMarket(t, n, sectors int) (*mat.Dense, factor.ExposureSettings) {
	rng := rand.New(rand.NewPCG(31, 32))
	sec := make([]string, n)
	caps := make([]float64, n)
	size := make([]float64, n)
	beta := make([]float64, n)
	for j := range sec {
		sec[j] = fmt.Sprintf("sector%02d", j%sectors)
		size[j] = rng.NormFloat64()
		caps[j] = math.Exp(8 + 1.2*size[j])
		beta[j] = 1 + 0.2*rng.NormFloat64()
	}
	x := mat.NewDense(t, n, nil)
	f := make([]float64, sectors)
	for i := 0; i < t; i++ {
		m, sz := 0.01*rng.NormFloat64(), 0.003*rng.NormFloat64()
		for q := range f {
			f[q] = 0.005 * rng.NormFloat64()
		}
		row := x.RawRowView(i)
		for j := range row {
			row[j] = beta[j]*m + f[j%sectors] + sz*size[j] + 0.018*rng.NormFloat64()
			if rng.Float64() < 0.01 {
				row[j] = math.NaN()
			}
		}
	}
	return x, factor.ExposureSettings{
		Sectors: sec, StaticCaps: caps,
		Covariance:       ewma.Settings{VolHalfLife: 63, CorrHalfLife: 126},
		SpecificHalfLife: 63,
	}
}

// BenchmarkExposure builds the exposure model (10 sectors; size, volatility
// over 63 dates, momentum over 252 skipping 21: 750 regressions after the
// look-back) and the hybrid with 5 statistical factors, next to the
// statistical model of Fit with K = 20 on the same returns (the settings of
// BenchmarkFit). The reference timing of the regressions alone in numpy is
// testdata/exposure/time_numpy_wls.py.
func BenchmarkExposure(b *testing.B) {
	for _, c := range []struct{ t, n, sectors int }{{t: 1000, n: 3000, sectors: 10}, {t: 500, n: 1000, sectors: 10}} {
		x, s := benchSectorMarket(c.t, c.n, c.sectors)
		name := fmt.Sprintf("T=%d/N=%d/S=%d", c.t, c.n, c.sectors)
		b.Run(name+"/exposure", func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, _, err := factor.FitExposure(x, s); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(name+"/hybrid-K=5", func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, _, err := factor.FitHybrid(x, s, factor.HybridSettings{K: 5, Seed: 1}); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(name+"/statistical-K=20", func(b *testing.B) {
			b.ReportAllocs()
			st := factor.Settings{K: 20, Solver: factor.SolverRandomized, Covariance: s.Covariance, SpecificHalfLife: s.SpecificHalfLife}
			for i := 0; i < b.N; i++ {
				if _, err := factor.Fit(x, st); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
