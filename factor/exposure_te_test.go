package factor_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/te"
)

// TestExposureTrackingErrorBySector runs an exposure model through package
// te as the attribution report does: the sector rows' factor and specific
// parts add up to each row's contribution, the rows to the tracking error,
// and the factor sources (market, each sector factor, the styles) plus the
// specific source to it as well. The identity is Euler's allocation,
// TE² = xᵀFx + aᵀDa with x = Bᵀa (the project's REFERENCES.md, "Tracking error and
// its decomposition"; Menchero & Davis 2011,
// J. Portfolio Management 37(2):97–106); TE itself is checked against
// √(aᵀΣa) formed element by element from the model.
func TestExposureTrackingErrorBySector(t *testing.T) {
	x, s := smallExposureProblem(8)
	m, _, err := factor.FitExposure(x, s)
	require.NoError(t, err)
	_, n := x.Dims()
	rng := rand.New(rand.NewPCG(3, 4))
	port, bench := make([]float64, n), make([]float64, n)
	var sp, sb float64
	for j := range port {
		port[j], bench[j] = rng.Float64(), rng.Float64()
		sp += port[j]
		sb += bench[j]
	}
	for j := range port {
		port[j] /= sp
		bench[j] /= sb
	}
	an, err := te.NewAnalyzer(m)
	require.NoError(t, err)
	require.True(t, an.Factored())
	d, err := an.Decompose(port, bench)
	require.NoError(t, err)

	var te2 float64
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			te2 += (port[i] - bench[i]) * m.At(i, j) * (port[j] - bench[j])
		}
	}
	const tol = 1e-12
	require.InDelta(t, math.Sqrt(te2), d.TE, tol)

	groups := d.Groups(s.Sectors)
	require.Len(t, groups, 3)
	var sum float64
	for _, g := range groups {
		require.InDelta(t, g.Contribution, g.Factor+g.Specific, tol, g.Label)
		sum += g.Contribution
	}
	require.InDelta(t, d.TE, sum, tol)

	names := m.FactorNames()
	require.Len(t, d.Factors, len(names))
	var bySource float64
	for k, src := range d.Factors {
		require.InDelta(t, src.Contribution, src.Exposure*src.Volatility*src.Correlation, tol, names[k])
		bySource += src.Contribution
	}
	require.InDelta(t, d.TE, bySource+d.Specific.Contribution, tol)
	// A sector factor's exposure is the portfolio's active weight in that sector.
	b := m.LoadingsTo(nil)
	for k := 1; k <= 3; k++ {
		var w float64
		for j := 0; j < n; j++ {
			w += (port[j] - bench[j]) * b.At(j, k)
		}
		require.InDelta(t, w, d.Factors[k].Exposure, tol, names[k])
	}
}
