package factor

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestDispersionHand works Goldberg, Papanicolaou & Shkolnik (2022)'s
// estimator h_JS ∝ m·1 + c·(h − m·1), c = 1 − ℓ²/(λ²·‖h − m·1‖²), by hand
// on four assets: h = (0.7, 0.5, 0.4, 0.3)/‖·‖, λ² = 4, ℓ² = 0.05.
//
//	‖(0.7, 0.5, 0.4, 0.3)‖² = 0.49 + 0.25 + 0.16 + 0.09 = 0.99
//	m = 1.9/(4·√0.99) = 0.477394…
//	‖h − m·1‖² = 1 − 4·m² = 1 − 3.61/3.96 = 0.088384…
//	c = 1 − 0.05/(4·0.088384…) = 0.858571…
func TestDispersionHand(t *testing.T) {
	raw := []float64{0.7, 0.5, 0.4, 0.3}
	norm := math.Sqrt(0.99)
	h := make([]float64, 4)
	for i, v := range raw {
		h[i] = v / norm
	}
	m := 1.9 / (4 * norm)
	disp := 1 - 3.61/3.96
	c := 1 - 0.05/(4*disp)
	want := make([]float64, 4)
	var s float64
	for i := range h {
		want[i] = m + c*(h[i]-m)
		s += want[i] * want[i]
	}
	for i := range want {
		want[i] /= math.Sqrt(s)
	}
	got, rep := DispersionCorrect(nil, h, 4, 0.05)
	require.InDelta(t, 0.858571, c, 1e-6)
	require.InDelta(t, c, rep.Shrink, 1e-14)
	require.InDelta(t, m, rep.Mean, 1e-15)
	require.InDeltaSlice(t, want, got, 1e-15)
	// The sign of h does not matter: the result points toward +1.
	neg := make([]float64, 4)
	for i, v := range h {
		neg[i] = -v
	}
	got2, _ := DispersionCorrect(nil, neg, 4, 0.05)
	require.InDeltaSlice(t, want, got2, 1e-15)
	// No noise: unchanged; all noise: the equal-weighted vector.
	same, r0 := DispersionCorrect(nil, h, 4, 0)
	require.Equal(t, 1.0, r0.Shrink)
	require.InDeltaSlice(t, h, same, 1e-15)
	flat, r1 := DispersionCorrect(nil, h, 4, 100)
	require.Equal(t, 0.0, r1.Shrink)
	require.InDeltaSlice(t, []float64{0.5, 0.5, 0.5, 0.5}, flat, 1e-15)
	require.Panics(t, func() { DispersionCorrect(make([]float64, 3), h, 4, 0.05) })
}

// TestDispersionSimulation: a one-factor market with N ≫ T (N = 500, T = 60,
// betas 1 + 0.3·N(0,1), factor volatility 1 %, specific 2 % a day). The
// corrected leading loading vector is closer to the true beta direction than
// the sample eigenvector in every draw, and on average by more than 15 %
// (measured: about 25 %). The other loadings stay orthonormal.
func TestDispersionSimulation(t *testing.T) {
	const n, dates, reps = 500, 60, 6
	var before, after float64
	for rep := 0; rep < reps; rep++ {
		rng := rand.New(rand.NewPCG(uint64(rep), 5))
		beta := make([]float64, n)
		var bn float64
		for i := range beta {
			beta[i] = 1 + 0.3*rng.NormFloat64()
			bn += beta[i] * beta[i]
		}
		x := mat.NewDense(dates, n, nil)
		for d := 0; d < dates; d++ {
			f := 0.01 * rng.NormFloat64()
			for i := 0; i < n; i++ {
				x.Set(d, i, beta[i]*f+0.02*rng.NormFloat64())
			}
		}
		angle := func(m *Model) float64 {
			b := m.LoadingsTo(nil)
			var dot float64
			for i := range beta {
				dot += b.At(i, 0) * beta[i]
			}
			return math.Acos(math.Min(1, math.Abs(dot)/math.Sqrt(bn)))
		}
		s := baseSettings()
		s.K = 2
		plain, err := Fit(x, s)
		require.NoError(t, err)
		s.Adjust.Dispersion = true
		corr, err := Fit(x, s)
		require.NoError(t, err)
		a0, a1 := angle(plain), angle(corr)
		t.Logf("draw %d: angle to the true betas %.4f → %.4f rad (c = %.3f)", rep, a0, a1, corr.Info().Dispersion.Shrink)
		require.Less(t, a1, a0)
		before += a0 / reps
		after += a1 / reps
		b := corr.LoadingsTo(nil)
		var g mat.Dense
		g.Mul(b.T(), b)
		require.True(t, mat.EqualApprox(&g, eye(2), 1e-12), "BᵀB = I")
	}
	require.Less(t, after, 0.85*before)
}
