package factor

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestAlignment: the next night's window (shifted by five dates, two assets
// replaced) is rotated onto the previous model: loadings keep their order and
// sign, Σ is unchanged by the rotation, the rotation is orthogonal and the
// principal angles are small.
func TestAlignment(t *testing.T) {
	sim := simulate(61, 305, 60, 3)
	s := baseSettings()
	s.K = 3
	// Equal half-lives make F a plain weighted covariance, which rotates
	// with the factors; with different ones D·C·D is not rotation-equivariant
	// and the aligned Σ differs slightly from the unaligned one.
	s.Covariance.CorrHalfLife = s.Covariance.VolHalfLife
	prev, err := Fit(sim.x.Slice(0, 300, 0, 60), s)
	require.NoError(t, err)

	// Tonight: dates 5..304, assets 2..59 of yesterday plus the new 0 and 1
	// moved to the end; the seed differs too, so the raw basis may differ.
	cols := make([]int, 60)
	idx := make([]int, 60)
	for j := range cols {
		cols[j] = (j + 2) % 60
		idx[j] = cols[j]
	}
	idx[58], idx[59] = -1, -1
	x := mat.NewDense(300, 60, nil)
	for i := 0; i < 300; i++ {
		for j, c := range cols {
			x.Set(i, j, sim.x.At(i+5, c))
		}
	}
	s.Seed = 7
	raw, err := Fit(x, s)
	require.NoError(t, err)
	s.Previous, s.PreviousIndex = prev, idx
	now, err := Fit(x, s)
	require.NoError(t, err)

	al := now.Info().Alignment
	require.NotNil(t, al)
	require.Equal(t, 58, al.Common)
	require.Len(t, al.Angles, 3)
	t.Logf("principal angles %v", al.Angles)
	require.Less(t, al.Angles[2], 0.1)
	r := mat.NewDense(3, 3, al.Rotation)
	var rtr mat.Dense
	rtr.Mul(r.T(), r)
	require.True(t, mat.EqualApprox(&rtr, eye(3), 1e-12))

	// Rotation leaves Σ unchanged.
	require.True(t, mat.EqualApprox(raw.CovarianceTo(nil), now.CovarianceTo(nil), 1e-12*raw.At(0, 0)))

	// Each aligned factor points the same way as yesterday's (positive
	// correlation of loadings over common assets, near 1).
	bp, bn := prev.LoadingsTo(nil), now.LoadingsTo(nil)
	for k := 0; k < 3; k++ {
		var dot, np, nn float64
		for j := 0; j < 58; j++ {
			a, b := bp.At(idx[j], k), bn.At(j, k)
			dot += a * b
			np += a * a
			nn += b * b
		}
		require.Greater(t, dot/math.Sqrt(np*nn), 0.95, "factor %d", k)
	}

	_, err = Fit(x, Settings{K: 3, Covariance: s.Covariance, SpecificHalfLife: 90, Previous: prev.Submodel([]int{0, 1, 2})})
	require.ErrorIs(t, err, ErrPrevious)
}

func eye(n int) *mat.Dense {
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		m.Set(i, i, 1)
	}
	return m
}
