package factor

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestAlignmentAfterEstimation: with different volatility and correlation
// half-lives, Newey–West lags and missing returns, the model fitted with a
// previous model is the one fitted without it, re-expressed by the rotation:
// the specific variances are bit-identical, B_aligned = B·R and
// F_aligned = Rᵀ·F·R, and Σ = B·F·Bᵀ + D agrees to the rounding of the K×K
// products (1e-13 of the largest variance). Rotating the factor returns
// before estimating F, as Fit once did, moves Σ by about 1e-3 of it, since
// the EWMA of D·C·D with two half-lives does not commute with a rotation.
func TestAlignmentAfterEstimation(t *testing.T) {
	sim := simulate(62, 306, 50, 3)
	s := baseSettings() // vol half-life 90, correlation half-life 180
	s.K = 3
	s.Covariance.NeweyWestLags = 2
	prev, err := Fit(sim.x.Slice(0, 300, 0, 50), s)
	require.NoError(t, err)

	x := mat.DenseCopyOf(sim.x.Slice(6, 306, 0, 50))
	x.Set(10, 4, math.NaN())
	x.Set(200, 17, math.NaN())
	s.Seed = 3 // a different raw basis than yesterday's
	raw, err := Fit(x, s)
	require.NoError(t, err)
	s.Previous = prev
	now, err := Fit(x, s)
	require.NoError(t, err)
	al := now.Info().Alignment
	require.NotNil(t, al)
	rot := mat.NewDense(3, 3, al.Rotation)
	require.False(t, mat.EqualApprox(rot, eye(3), 1e-3), "the test needs a rotation that is not the identity")

	dRaw, dNow := raw.SpecificVariancesTo(nil), now.SpecificVariancesTo(nil)
	for i := range dRaw {
		require.Equal(t, math.Float64bits(dRaw[i]), math.Float64bits(dNow[i]), "specific variance %d", i)
	}
	var br mat.Dense
	br.Mul(raw.LoadingsTo(nil), rot)
	require.True(t, mat.Equal(&br, now.LoadingsTo(nil)), "B_aligned = B·R")
	var fr, rfr mat.Dense
	fr.Mul(raw.FactorCovarianceTo(nil), rot)
	rfr.Mul(rot.T(), &fr)
	require.True(t, mat.EqualApprox(&rfr, now.FactorCovarianceTo(nil), 1e-15*rfr.At(0, 0)), "F_aligned = Rᵀ·F·R")

	sRaw, sNow := raw.CovarianceTo(nil), now.CovarianceTo(nil)
	var top, worst float64
	for i := 0; i < 50; i++ {
		top = max(top, sRaw.At(i, i))
		for j := 0; j < 50; j++ {
			worst = max(worst, math.Abs(sRaw.At(i, j)-sNow.At(i, j)))
		}
	}
	t.Logf("largest |ΔΣ| %.3g of the largest variance", worst/top)
	require.Less(t, worst, 1e-13*top)
}
