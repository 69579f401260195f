package factor

import (
	"testing"

	"github.com/riskmodel/riskmodel/ewma"
)

// BenchmarkAdjust measures what each correction of Settings.Adjust adds to
// the factor build at 3000 assets × 1000 dates, K = 20 (the cost
// target: all together at most 25 % over "none"), and the held-out choice
// of K (Criterion HoldoutLikelihood, MaxFactors 20), which refits on the
// first three quarters of the window.
func BenchmarkAdjust(b *testing.B) {
	x := benchReturns(1000, 3000, false)
	for _, c := range []struct {
		name string
		adj  Adjustments
		crit Criterion
	}{
		{name: "none"},
		{name: "dispersion", adj: Adjustments{Dispersion: true}},
		{name: "eigen", adj: Adjustments{Eigen: true}},
		{name: "regime", adj: Adjustments{Regime: true}},
		{name: "weighted", adj: Adjustments{Weighted: true}},
		{name: "weighted+dispersion", adj: Adjustments{Weighted: true, Dispersion: true}},
		{name: "all", adj: Adjustments{Dispersion: true, Eigen: true, Regime: true}},
		{name: "holdout", crit: HoldoutLikelihood},
	} {
		b.Run(c.name, func(b *testing.B) {
			s := baseSettings()
			s.K, s.Adjust = 20, c.adj
			if c.crit != BaiNgICp2 {
				s.K, s.Criterion, s.MaxFactors = 0, c.crit, 20
			}
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, err := Fit(x, s); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkEigenAdjust is the eigen adjustment alone: K = 20, T = 1000,
// M = DefaultEigenSims.
func BenchmarkEigenAdjust(b *testing.B) {
	f := eigenMarket(1, 20)
	s := EigenAdjustSettings{Covariance: ewma.Settings{VolHalfLife: 90, CorrHalfLife: 180}, Dates: 1000}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, _, err := EigenAdjust(nil, f, s); err != nil {
			b.Fatal(err)
		}
	}
}
