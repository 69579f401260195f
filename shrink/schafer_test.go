package shrink

import (
	"testing"

	"github.com/stretchr/testify/require"
)

// TestSchaferStrimmerMatchesCorpcor checks against R 4.2.2 corpcor 1.6.10
// cov.shrink(x) and cov.shrink(x, w = w): the matrix and its attributes
// lambda and lambda.var (fixture made by testdata/shrink/schafer_corpcor.R).
func TestSchaferStrimmerMatchesCorpcor(t *testing.T) {
	var fx struct {
		Cases []struct {
			Name      string      `json:"name"`
			X         [][]float64 `json:"x"`
			W         []float64   `json:"w"`
			Cov       [][]float64 `json:"cov"`
			Lambda    float64     `json:"lambda"`
			LambdaVar float64     `json:"lambda_var"`
		}
	}
	loadJSON(t, "schafer_corpcor.json", &fx)
	require.Len(t, fx.Cases, 5)
	const tol = 1e-8
	for _, c := range fx.Cases {
		t.Run(c.Name, func(t *testing.T) {
			var w []float64
			if len(c.W) > 0 {
				w = c.W
			}
			cov, res, err := SchaferStrimmer(nil, denseOf(c.X), w)
			require.NoError(t, err)
			require.InDelta(t, c.Lambda, res.Lambda, tol)
			require.InDelta(t, c.LambdaVar, res.LambdaVar, tol)
			requireSymEqual(t, c.Cov, cov, tol)
			if c.Name == "constant column" {
				require.Equal(t, 1, res.ZeroVar)
			}
		})
	}
}
