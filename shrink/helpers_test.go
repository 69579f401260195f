package shrink

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// loadJSON reads a committed fixture from testdata/shrink.
func loadJSON(t *testing.T, name string, v any) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "testdata", "shrink", name))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, v))
}

func denseOf(rows [][]float64) *mat.Dense {
	m := mat.NewDense(len(rows), len(rows[0]), nil)
	for i, r := range rows {
		m.SetRow(i, r)
	}
	return m
}

// requireSymEqual checks a against want entry by entry, relative to the
// largest entry of want.
func requireSymEqual(t *testing.T, want [][]float64, got mat.Symmetric, rel float64) {
	t.Helper()
	n := got.SymmetricDim()
	require.Equal(t, len(want), n)
	scale := 0.0
	for _, r := range want {
		for _, v := range r {
			scale = math.Max(scale, math.Abs(v))
		}
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			require.InDelta(t, want[i][j], got.At(i, j), rel*scale, "entry (%d,%d)", i, j)
		}
	}
}

// randReturns draws T×N returns with one common factor, seeded.
func randReturns(seed uint64, t, n int) *mat.Dense {
	rng := rand.New(rand.NewPCG(seed, 7))
	x := mat.NewDense(t, n, nil)
	beta := make([]float64, n)
	vol := make([]float64, n)
	for j := range beta {
		beta[j] = 0.5 + rng.Float64()
		vol[j] = 0.5 + rng.Float64()
	}
	for i := 0; i < t; i++ {
		f := rng.NormFloat64()
		for j := 0; j < n; j++ {
			x.Set(i, j, 0.01*(beta[j]*f+vol[j]*rng.NormFloat64()))
		}
	}
	return x
}

func randWeights(seed uint64, t int) []float64 {
	rng := rand.New(rand.NewPCG(seed, 11))
	w := make([]float64, t)
	for i := range w {
		w[i] = 0.2 + rng.Float64()
	}
	return w
}

// requirePSD checks symmetry and that the smallest eigenvalue is not below
// −tol·λ_max.
func requirePSD(t *testing.T, a mat.Symmetric, tol float64) {
	t.Helper()
	n := a.SymmetricDim()
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			require.False(t, math.IsNaN(a.At(i, j)), "NaN at (%d,%d)", i, j)
			require.Equal(t, a.At(i, j), a.At(j, i))
		}
	}
	var eig mat.EigenSym
	require.True(t, eig.Factorize(a, false))
	v := eig.Values(nil)
	require.GreaterOrEqual(t, v[0], -tol*math.Max(1e-300, math.Abs(v[n-1])), "eigenvalues %v", v)
}

// naiveCov returns the centred S = Σ ω_t y_t y_tᵀ and y by definition.
func naiveCov(x *mat.Dense, w []float64) (*mat.SymDense, *mat.Dense, []float64) {
	t, n := x.Dims()
	om := make([]float64, t)
	var sw float64
	for i := range om {
		om[i] = 1
		if w != nil {
			om[i] = w[i]
		}
		sw += om[i]
	}
	for i := range om {
		om[i] /= sw
	}
	y := mat.DenseCopyOf(x)
	for j := 0; j < n; j++ {
		var m float64
		for i := 0; i < t; i++ {
			m += om[i] * x.At(i, j)
		}
		for i := 0; i < t; i++ {
			y.Set(i, j, x.At(i, j)-m)
		}
	}
	s := mat.NewSymDense(n, nil)
	for a := 0; a < n; a++ {
		for b := a; b < n; b++ {
			var v float64
			for i := 0; i < t; i++ {
				v += om[i] * y.At(i, a) * y.At(i, b)
			}
			s.SetSym(a, b, v)
		}
	}
	return s, y, om
}
