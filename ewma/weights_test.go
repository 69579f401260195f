package ewma

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestPublishedDecays: J.P. Morgan/Reuters (1996), RiskMetrics — Technical
// Document, 4th ed., chapter 5, set λ = 0.94 for daily and 0.97 for monthly
// data; ln 0.5/ln λ gives half-lives of 11.20 days and 22.76 months (the
// 2-decimal values as listed in the project's REFERENCES.md).
func TestPublishedDecays(t *testing.T) {
	for _, tc := range []struct {
		name   string
		lambda float64
		want   float64
		tol    float64
	}{
		{name: "daily 0.94", lambda: 0.94, want: 11.20, tol: 0.005},
		{name: "monthly 0.97", lambda: 0.97, want: 22.76, tol: 0.005},
	} {
		t.Run(tc.name, func(t *testing.T) {
			h := HalfLife(tc.lambda)
			require.InDelta(t, tc.want, h, tc.tol)
			require.InDelta(t, tc.lambda, Decay(h), 1e-15)
		})
	}
	require.True(t, math.IsInf(HalfLife(1), 1))
	require.True(t, math.IsNaN(HalfLife(0)))
	require.True(t, math.IsNaN(HalfLife(1.1)))
	require.True(t, math.IsNaN(Decay(0)))
	require.True(t, math.IsNaN(Decay(math.Inf(1))))
	// By definition a day one half-life old weighs half as much.
	require.InDelta(t, 0.5, math.Pow(Decay(7), 7), 1e-15)
}

func TestWeights(t *testing.T) {
	w, err := Weights(nil, 50, 10)
	require.NoError(t, err)
	require.Len(t, w, 50)
	var s float64
	for i, v := range w {
		s += v
		if i > 0 {
			require.InDelta(t, Decay(10), w[i-1]/v, 1e-14, "older weight is λ times the newer")
		}
	}
	require.InDelta(t, 1, s, 1e-15)
	require.InDelta(t, 2, w[49]/w[39], 1e-13, "ten periods back, half the weight")

	// dst reuse: the same backing array, the same numbers.
	buf := make([]float64, 50)
	w2, err := Weights(buf, 50, 10)
	require.NoError(t, err)
	require.Equal(t, w, w2)
	require.Same(t, &buf[0], &w2[0])

	eq, err := DecayWeights(nil, 4, 1)
	require.NoError(t, err)
	require.InDeltaSlice(t, []float64{0.25, 0.25, 0.25, 0.25}, eq, 1e-16)
	require.InDelta(t, 4, EffectiveObs(eq), 1e-14)
	// A long exponential window has n_eff → (1+λ)/(1−λ) (sum of a geometric
	// series; definition of Kish's n_eff).
	l := 0.94
	long, err := DecayWeights(nil, 5000, l)
	require.NoError(t, err)
	require.InDelta(t, (1+l)/(1-l), EffectiveObs(long), 1e-9)
	require.Zero(t, EffectiveObs(nil))

	rw, err := RecursionWeights(nil, 30, 0.9)
	require.NoError(t, err)
	s = 0
	for _, v := range rw {
		s += v
	}
	require.InDelta(t, 1, s, 1e-15)
	require.InDelta(t, math.Pow(0.9, 29), rw[0], 1e-15)
	require.InDelta(t, 0.1, rw[29], 1e-16)

	for _, tc := range []struct {
		name string
		err  error
		f    func() error
	}{
		{"zero half-life", ErrHalfLife, func() error { _, e := Weights(nil, 5, 0); return e }},
		{"negative half-life", ErrHalfLife, func() error { _, e := Weights(nil, 5, -1); return e }},
		{"infinite half-life", ErrHalfLife, func() error { _, e := Weights(nil, 5, math.Inf(1)); return e }},
		{"NaN half-life", ErrHalfLife, func() error { _, e := Weights(nil, 5, math.NaN()); return e }},
		{"no weights", ErrLength, func() error { _, e := Weights(nil, 0, 5); return e }},
		{"decay above 1", ErrDecay, func() error { _, e := DecayWeights(nil, 5, 1.5); return e }},
		{"decay 0", ErrDecay, func() error { _, e := RecursionWeights(nil, 5, 0); return e }},
	} {
		require.ErrorIs(t, tc.f(), tc.err, tc.name)
	}
}
