package factor_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"github.com/riskmodel/riskmodel/factor"
)

// TestHybridFindsMissingFactor leaves the demo's betas out of the styles:
// the demo's market exposures β ~ 1 + 0.2·N(0,1) then leave (β − β̄)·f_market
// in the specific returns, a one-factor structure the hybrid's statistical
// factor should find. Its return follows the market's, and Σ moves closer to
// the truth than the exposure model's. Bounds are simulation results with
// margin (no outside source).
func TestHybridFindsMissingFactor(t *testing.T) {
	if testing.Short() {
		t.Skip("demo market regression")
	}
	const n, ns, dates = 1000, 6, 500
	in := demoExposure(t, 7, n, ns, dates, false)
	me, _, err := factor.FitExposure(in.x, in.s)
	require.NoError(t, err)
	mh, reg, err := factor.FitHybrid(in.x, in.s, factor.HybridSettings{K: 1, Seed: 3})
	require.NoError(t, err)
	k := me.NumFactors()
	require.Equal(t, k+1, mh.NumFactors())
	require.Equal(t, append(me.FactorNames(), "stat1"), mh.FactorNames())
	require.Equal(t, factor.MethodHybrid, mh.Info().Method)

	c := stat.Correlation(mat.Col(nil, k, reg.FactorReturns), mat.Col(nil, 0, in.truth), nil)
	t.Logf("stat1: correlation with the true market return %.4f", c)
	require.Greater(t, math.Abs(c), 0.8)

	le, lh := frobeniusLoss(me, in.sigma), frobeniusLoss(mh, in.sigma)
	t.Logf("Frobenius loss: exposure %.4f, hybrid %.4f", le, lh)
	require.Less(t, lh, 0.8*le)

	// The hybrid's loadings are the exposure model's plus unit-norm
	// statistical ones; its specific returns are those of the exposure
	// regression less the statistical fit.
	be, bh := me.LoadingsTo(nil), mh.LoadingsTo(nil)
	require.True(t, mat.Equal(be, bh.Slice(0, n, 0, k)))
	require.InDelta(t, 1, mat.Norm(bh.Slice(0, n, k, k+1), 2), 1e-10)
	var before, after float64
	_, regE, err := factor.FitExposure(in.x, in.s)
	require.NoError(t, err)
	for i := regE.First; i < dates; i++ {
		for j := 0; j < n; j++ {
			u, e := regE.SpecificReturns.At(i, j), reg.SpecificReturns.At(i, j)
			require.InDelta(t, u-reg.FactorReturns.At(i, k)*bh.At(j, k), e, 1e-12)
			before += u * u
			after += e * e
		}
	}
	require.Less(t, after, before)
}

// TestHybridBadSettings: K must be at least 1 and below the data's size.
func TestHybridBadSettings(t *testing.T) {
	x, s := smallExposureProblem(3)
	for _, c := range []struct {
		name string
		k    int
		err  error
	}{
		{name: "zero", k: 0, err: factor.ErrSettings},
		{name: "too many", k: 30, err: factor.ErrTooManyFactors},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, _, err := factor.FitHybrid(x, s, factor.HybridSettings{K: c.k})
			require.ErrorIs(t, err, c.err)
		})
	}
	m, reg, err := factor.FitHybrid(x, s, factor.HybridSettings{K: 2})
	require.NoError(t, err)
	require.Equal(t, []string{"stat1", "stat2"}, m.FactorNames()[7:])
	require.True(t, math.IsNaN(reg.SpecificReturns.At(20, 7)), "a missing return stays missing in the hybrid residuals")
}
