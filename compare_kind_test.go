package riskmodel

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestCompareAcrossFormsIsTotalAgainstTotal: after a change of method from
// a factor model to a dense one, the changes are in total volatility for
// both models, √(b_iᵀ·F·b_i + d_i) for the factor model (computed here by
// hand), not its specific volatility √d_i.
func TestCompareAcrossFormsIsTotalAgainstTotal(t *testing.T) {
	assets := []string{"QA", "QB", "QC"}
	fm := factorTestModel(t, assets, [][]float64{{1, 0}, {0.5, 2}, {-1, 1}}) // F = 1e-4·I, d_i = 1e-4·(i+1)
	dense := &Model{AsOf: DateOf(2031, 1, 3), Assets: assets, PeriodsPerYear: 252, Method: MethodNonlinear,
		Dense: mat.NewSymDense(3, []float64{4e-4, 0, 0, 0, 5e-4, 0, 0, 0, 6e-4})}
	wantPrev := map[string]float64{
		"QA": math.Sqrt(252 * (1e-4*1 + 1e-4)),
		"QB": math.Sqrt(252 * (1e-4*(0.25+4) + 2e-4)),
		"QC": math.Sqrt(252 * (1e-4*2 + 3e-4)),
	}
	for _, pair := range [][2]*Model{{fm, dense}, {dense, fm}} {
		c, err := Compare(pair[0], pair[1], nil)
		require.NoError(t, err)
		require.Equal(t, "total", c.RiskKind)
		require.Len(t, c.Changes, 3)
		for _, x := range c.Changes {
			factorSide, denseSide := x.Previous, x.Current
			if pair[0] == dense {
				factorSide, denseSide = x.Current, x.Previous
			}
			require.InDelta(t, wantPrev[x.Asset], factorSide, 1e-12, x.Asset)
			i := map[string]int{"QA": 0, "QB": 1, "QC": 2}[x.Asset]
			require.InDelta(t, math.Sqrt(252*dense.Dense.At(i, i)), denseSide, 1e-12, x.Asset)
		}
	}
	// Two factor models still compare specific against specific.
	c, err := Compare(fm, fm, nil)
	require.NoError(t, err)
	require.Equal(t, "specific", c.RiskKind)
	require.InDelta(t, math.Sqrt(252*1e-4), c.Changes[0].Previous, 1e-12, "√d_1 of the first asset")
}
