package factor_test

import (
	"math"
	"testing"

	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
)

// TestDemoMarket fits the stationary demo market (its generator's market,
// sector and style factors, Student-t specific returns) and checks against
// its true covariance: the loading space is close to the true exposures'
// span in its strong directions and Σ beats the sample covariance in
// Frobenius loss. The demo's sector and style factors are weak, so K is fixed
// at the true count here; Bai–Ng's choice (2 with seed 5) is logged.
func TestDemoMarket(t *testing.T) {
	if testing.Short() {
		t.Skip("demo market fit")
	}
	d, err := demo.Generate(&demo.Config{Seed: 5, Assets: 200, Sectors: 4, Dates: 750, Stationary: true})
	require.NoError(t, err)
	x := d.Panel.ReturnsTo(nil)
	k := len(d.FactorNames)
	s := factor.Settings{K: k, Covariance: ewma.Settings{VolHalfLife: 1e6, CorrHalfLife: 1e6}, SpecificHalfLife: 1e6}
	m, err := factor.Fit(x, s)
	require.NoError(t, err)
	t.Logf("true K = %d; %s", k, m.Info().Reason)

	truth := d.TrueCovarianceTo(nil, 0)
	est := m.CovarianceTo(nil)
	tt, n := x.Dims()
	sample := mat.NewSymDense(n, nil)
	c := mat.DenseCopyOf(x)
	for j := 0; j < n; j++ {
		mu := mat.Sum(c.ColView(j)) / float64(tt)
		for i := 0; i < tt; i++ {
			c.Set(i, j, c.At(i, j)-mu)
		}
	}
	sample.SymOuterK(1/float64(tt), c.T())
	var de, ds mat.Dense
	de.Sub(est, truth)
	ds.Sub(sample, truth)
	fe, fs := mat.Norm(&de, 2), mat.Norm(&ds, 2)
	t.Logf("Frobenius loss: model %.4g, sample %.4g", fe, fs)
	require.Less(t, fe, fs)

	// Largest principal angle between the loadings and the true exposures'
	// column space.
	var ab mat.Dense
	qa := orth(m.LoadingsTo(nil))
	qb := orth(d.ExposuresTo(nil))
	ab.Mul(qa.T(), qb)
	var svd mat.SVD
	require.True(t, svd.Factorize(&ab, mat.SVDNone))
	sv := svd.Values(nil)
	t.Logf("cosines of the principal angles: %.3f", sv)
	// The market and the sector factors are strong enough to be found; the
	// three style factors (5–8 % volatility) sit near the noise of 200
	// assets and 750 dates, so only six of nine directions are required.
	angle := math.Acos(math.Min(1, sv[5]))
	t.Logf("sixth principal angle to the true exposures: %.3f rad", angle)
	require.Less(t, angle, 0.75)
}

func orth(a *mat.Dense) *mat.Dense {
	var qr mat.QR
	qr.Factorize(a)
	var q mat.Dense
	qr.QTo(&q)
	_, c := a.Dims()
	r, _ := q.Dims()
	return mat.DenseCopyOf(q.Slice(0, r, 0, c))
}
