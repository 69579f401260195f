package te

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestFiguresBitwise: the per-asset figures (the AVX2 loop for the first
// N&^3 assets, Go for the rest) equal, bit for bit, the formulas of
// DecomposeTo's doc evaluated here in Go from TE and Σa, for a factor
// model and a dense one.
func TestFiguresBitwise(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	const n = 103
	m := randomModel(rng, n, 6)
	p, b := randomWeights(rng, n, 30), randomWeights(rng, n, n)
	for _, cov := range []Covariance{m, m.dense()} {
		an, err := NewAnalyzer(cov)
		require.NoError(t, err)
		d, err := an.Decompose(p, b)
		require.NoError(t, err)
		te2 := d.TE * d.TE
		inv := 1 / d.TE
		for i := 0; i < n; i++ {
			ai, sai := d.Active[i], d.sa[i]
			require.Equal(t, sai*inv, d.Marginal[i], "marginal %d", i)
			c := ai * sai * inv
			require.Equal(t, c, d.Contribution[i], "contribution %d", i)
			require.Equal(t, 100*c*inv, d.Percent[i], "percent %d", i)
			require.Equal(t, sai*inv*an.isd[i], d.Correlation[i], "correlation %d", i)
			h := -sai * an.idg[i]
			require.Equal(t, h, d.Hedge[i], "hedge %d", i)
			// TE² here is TE·TE, not the te2 DecomposeTo squared: compare
			// to rounding.
			require.InDelta(t, math.Sqrt(max(0, te2+sai*h)), d.HedgedTE[i], 1e-15*d.TE+1e-300, "hedged %d", i)
			if d.Factored {
				require.InDelta(t, d.Contribution[i], d.FactorPart[i]+d.SpecificPart[i], 1e-15*math.Abs(d.TE), "split %d", i)
				require.Equal(t, ai*(ai*an.d[i])*inv, d.SpecificPart[i], "specific %d", i)
			}
		}
	}
}
