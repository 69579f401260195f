package factor

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

func TestBadInput(t *testing.T) {
	sim := simulate(51, 60, 20, 2)
	with := func(f func(x *mat.Dense)) *mat.Dense {
		x := mat.DenseCopyOf(sim.x)
		f(x)
		return x
	}
	nan := math.NaN()
	for _, tc := range []struct {
		name string
		x    *mat.Dense
		edit func(*Settings)
		err  error
	}{
		{name: "K = min(N, T)", x: sim.x, edit: func(s *Settings) { s.K = 20 }, err: ErrTooManyFactors},
		{name: "K > min(N, T)", x: sim.x, edit: func(s *Settings) { s.K = 25 }, err: ErrTooManyFactors},
		{name: "K negative", x: sim.x, edit: func(s *Settings) { s.K = -1 }, err: ErrSettings},
		{name: "asset without observations", x: with(func(x *mat.Dense) {
			for i := 0; i < 60; i++ {
				x.Set(i, 7, nan)
			}
		}), err: ErrNoObservations},
		{name: "asset with one observation", x: with(func(x *mat.Dense) {
			for i := 1; i < 60; i++ {
				x.Set(i, 3, nan)
			}
		}), err: ErrNoObservations},
		{name: "all-missing date", x: with(func(x *mat.Dense) {
			for j := 0; j < 20; j++ {
				x.Set(11, j, nan)
			}
		}), err: ErrEmptyDate},
		{name: "+Inf", x: with(func(x *mat.Dense) { x.Set(4, 5, math.Inf(1)) }), err: ErrNonFinite},
		{name: "-Inf", x: with(func(x *mat.Dense) { x.Set(0, 0, math.Inf(-1)) }), err: ErrNonFinite},
		{name: "one date", x: mat.NewDense(1, 5, nil), err: ErrTooFewObs},
		{name: "missing half-life", x: sim.x, edit: func(s *Settings) { s.SpecificHalfLife = 0 }, err: ErrSettings},
		{name: "missing vol half-life", x: sim.x, edit: func(s *Settings) { s.Covariance.VolHalfLife = math.NaN() }, err: ErrSettings},
		{name: "shrink above 1", x: sim.x, edit: func(s *Settings) { s.SpecificShrink = 1.5 }, err: ErrSettings},
		{name: "rank below K", x: with(func(x *mat.Dense) {
			// Every asset follows one return series: rank 1 after centering.
			for i := 0; i < 60; i++ {
				for j := 0; j < 20; j++ {
					x.Set(i, j, float64(j+1)*sim.x.At(i, 0))
				}
			}
		}), edit: func(s *Settings) { s.K = 3 }, err: ErrTooManyFactors},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := baseSettings()
			if tc.edit != nil {
				tc.edit(&s)
			}
			_, err := Fit(tc.x, s)
			require.ErrorIs(t, err, tc.err)
			t.Log(err)
		})
	}
	require.PanicsWithValue(t, mat.ErrShape, func() {
		s := baseSettings()
		s.Groups = []string{"a"}
		_, _ = Fit(sim.x, s)
	})
}

// TestEdgeCases: a constant column (zero variance) and fewer dates than
// assets still give a positive definite model; the floor keeps the constant
// asset's specific risk positive.
func TestEdgeCases(t *testing.T) {
	sim := simulate(53, 30, 80, 2)
	x := mat.DenseCopyOf(sim.x)
	for i := 0; i < 30; i++ {
		x.Set(i, 9, 0.001)
	}
	s := baseSettings()
	s.K = 2
	m, err := Fit(x, s)
	require.NoError(t, err)
	d := m.SpecificVariancesTo(nil)
	require.Greater(t, d[9], 0.0) // pulled up by the shrinkage toward the mean
	s.NoSpecificShrink = true
	m, err = Fit(x, s)
	require.NoError(t, err)
	d = m.SpecificVariancesTo(nil)
	require.Equal(t, m.Info().Specific.Floor, d[9])
	require.GreaterOrEqual(t, m.Info().Specific.Floored, 1)
	require.InDelta(t, 0, m.LoadingsTo(nil).At(9, 0), 1e-12)
}

// TestSpecificShrinkage checks the group shrinkage against its formula:
// with a fixed intensity λ every d̃_i = (1 − λ)d̂_i + λ·d̄_g, where d̂ are the
// unshrunk variances (NoSpecificShrink) and d̄_g their plain group mean.
func TestSpecificShrinkage(t *testing.T) {
	sim := simulate(55, 200, 30, 2)
	groups := make([]string, 30)
	for i := range groups {
		groups[i] = []string{"alpha", "beta", "gamma"}[i%3]
	}
	s := baseSettings()
	s.K, s.Groups, s.NoSpecificShrink, s.SpecificFloor = 2, groups, true, 1e-300
	raw, err := Fit(sim.x, s)
	require.NoError(t, err)
	dr := raw.SpecificVariancesTo(nil)
	s.NoSpecificShrink, s.SpecificShrink = false, 0.3
	fixed, err := Fit(sim.x, s)
	require.NoError(t, err)
	mean := map[string]float64{}
	for i, v := range dr {
		mean[groups[i]] += v / 10
	}
	for i, v := range fixed.SpecificVariancesTo(nil) {
		require.InDelta(t, 0.7*dr[i]+0.3*mean[groups[i]], v, 1e-15)
	}
	sp := fixed.Info().Specific
	require.Equal(t, []string{"alpha", "beta", "gamma"}, sp.Groups)
	require.Equal(t, []float64{0.3, 0.3, 0.3}, sp.Shrink)

	s.SpecificShrink = 0
	est, err := Fit(sim.x, s)
	require.NoError(t, err)
	for _, l := range est.Info().Specific.Shrink {
		require.True(t, l > 0 && l <= 1, "estimated intensity %v", l)
	}
	t.Logf("estimated intensities %v", est.Info().Specific.Shrink)
}

func TestMPEdge(t *testing.T) {
	// REFERENCES.md check value (Laloux et al. 1999): 10 stocks, T = 252,
	// unit variance: (1 + √(10/252))² = 1.438.
	require.InDelta(t, 1.438, mpEdge(1, 10, 252), 5e-4)
}
