package te

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestTwoAssetsByHand checks a one-factor, two-asset model worked by hand
// from the formulas of the Euler allocation (REFERENCES.md, "Tracking error
// and its decomposition"; Menchero & Davis 2011 for x·σ·ρ; Litterman 1996
// for the hedge):
//
//	B = [1, 2]ᵀ, F = [0.01], D = diag(0.03, 0.05)
//	Σ = B F Bᵀ + D = [[0.04, 0.02], [0.02, 0.09]]
//	p = (0.6, 0.4), b = (0.5, 0.5), a = (0.1, −0.1)
//	x = Bᵀa = 0.1 − 0.2 = −0.1,  Fx = −0.001
//	xᵀFx = 0.0001,  aᵀDa = 0.01·0.03 + 0.01·0.05 = 0.0008
//	TE² = 0.0009, TE = 0.03
//	Σa = (0.004 − 0.002, 0.002 − 0.009) = (0.002, −0.007);  aᵀΣa = 0.0002 + 0.0007 = 0.0009 ✓
//	marginal = Σa/TE = (0.0666…, −0.2333…)
//	contribution = a∘Σa/TE = (0.0002, 0.0007)/0.03 = (0.00666…, 0.02333…)
//	percent = (22.22…, 77.77…)
//	BFx = (−0.001, −0.002): factor parts a∘BFx/TE = (−0.0001, 0.0002)/0.03
//	specific parts a²∘d/TE = (0.0003, 0.0005)/0.03
//	factor: exposure −0.1, σ = 0.1, ρ = Fx/(σ TE) = −1/3, contribution 0.0001/0.03
//	specific: σ = √0.0008, contribution 0.0008/0.03
//	pᵀΣp = 0.36·0.04 + 0.16·0.09 + 2·0.24·0.02 = 0.0384
//	bᵀΣb = 0.25·0.04 + 0.25·0.09 + 2·0.25·0.02 = 0.0425
//	pᵀΣb = 0.3·0.04 + 0.2·0.09 + (0.3 + 0.2)·0.02 = 0.04;  β = 0.04/0.0425
//	hedge_1 = −0.002/0.04 = −0.05,  TE after = √(0.0009 − 0.002²/0.04) = √0.0008
//	hedge_2 = 0.007/0.09,           TE after = √(0.0009 − 0.007²/0.09)
func TestTwoAssetsByHand(t *testing.T) {
	m := &factorModel{
		b: mat.NewDense(2, 1, []float64{1, 2}),
		f: mat.NewSymDense(1, []float64{0.01}),
		d: []float64{0.03, 0.05},
	}
	p, b := []float64{0.6, 0.4}, []float64{0.5, 0.5}
	const tol = 1e-15
	for _, c := range []struct {
		name string
		cov  Covariance
	}{
		{"factor form", m},
		{"dense", mat.NewSymDense(2, []float64{0.04, 0.02, 0.02, 0.09})},
	} {
		t.Run(c.name, func(t *testing.T) {
			an, err := NewAnalyzer(c.cov)
			require.NoError(t, err)
			d, err := an.Decompose(p, b)
			require.NoError(t, err)
			require.InDelta(t, 0.03, d.TE, tol)
			require.InDeltaSlice(t, []float64{0.1, -0.1}, d.Active, tol)
			require.InDeltaSlice(t, []float64{0.002 / 0.03, -0.007 / 0.03}, d.Marginal, tol)
			require.InDeltaSlice(t, []float64{0.0002 / 0.03, 0.0007 / 0.03}, d.Contribution, tol)
			require.InDeltaSlice(t, []float64{200.0 / 9, 700.0 / 9}, d.Percent, 1e-12)
			require.InDelta(t, math.Sqrt(0.0384), d.PortfolioRisk, tol)
			require.InDelta(t, math.Sqrt(0.0425), d.BenchmarkRisk, tol)
			require.InDelta(t, 0.04/0.0425, d.Beta, 1e-14)
			require.InDeltaSlice(t, []float64{0.2, 0.3}, d.Volatility, tol)
			require.InDeltaSlice(t, []float64{-0.05, 0.07 / 0.9}, d.Hedge, 1e-14)
			require.InDeltaSlice(t, []float64{math.Sqrt(0.0008), math.Sqrt(0.0009 - 0.007*0.007/0.09)}, d.HedgedTE, tol)
			best, after := d.BestHedge()
			require.Equal(t, 1, best)
			require.InDelta(t, math.Sqrt(0.0009-0.007*0.007/0.09), after, tol)
			require.Equal(t, []int{1, 0}, d.HotSpots(5))
			// Menchero–Davis: contribution = exposure · σ · ρ per asset.
			for i := range d.Active {
				require.InDelta(t, d.Contribution[i], d.Active[i]*d.Volatility[i]*d.Correlation[i], tol)
			}
			if c.name == "dense" {
				require.False(t, d.Factored)
				require.Nil(t, d.Factors)
				return
			}
			require.True(t, d.Factored)
			require.InDelta(t, 0.0001, d.FactorVariance, tol)
			require.InDelta(t, 0.0008, d.SpecificVariance, tol)
			require.InDeltaSlice(t, []float64{-0.0001 / 0.03, 0.0002 / 0.03}, d.FactorPart, tol)
			require.InDeltaSlice(t, []float64{0.0003 / 0.03, 0.0005 / 0.03}, d.SpecificPart, tol)
			f := d.Factors[0]
			require.InDelta(t, -0.1, f.Exposure, tol)
			require.InDelta(t, 0.1, f.Volatility, tol)
			require.InDelta(t, -1.0/3, f.Correlation, 1e-14)
			require.InDelta(t, 0.0001/0.03, f.Contribution, tol)
			require.InDelta(t, 0.0008/0.03, d.Specific.Contribution, tol)
			require.InDelta(t, math.Sqrt(0.0008), d.Specific.Volatility, tol)
		})
	}
}
