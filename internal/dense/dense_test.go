package dense

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// naive computes Σ_t w_t x_t x_tᵀ by its definition.
func naive(x *mat.Dense, w []float64) *mat.SymDense {
	t, n := x.Dims()
	out := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			var s float64
			for k := 0; k < t; k++ {
				wk := 1.0
				if w != nil {
					wk = w[k]
				}
				s += wk * x.At(k, i) * x.At(k, j)
			}
			out.SetSym(i, j, s)
		}
	}
	return out
}

// naiveGram computes √w_s √w_t x_s·x_t by its definition.
func naiveGram(x *mat.Dense, w []float64) *mat.SymDense {
	t, n := x.Dims()
	out := mat.NewSymDense(t, nil)
	for s := 0; s < t; s++ {
		for u := s; u < t; u++ {
			var d float64
			for j := 0; j < n; j++ {
				d += x.At(s, j) * x.At(u, j)
			}
			if w != nil {
				d *= math.Sqrt(w[s]) * math.Sqrt(w[u])
			}
			out.SetSym(s, u, d)
		}
	}
	return out
}

func TestProductsMatchDefinition(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct{ t, n int }{{1, 1}, {3, 500}, {400, 7}, {250, 450}} {
		x := mat.NewDense(tc.t, tc.n, nil)
		for i := 0; i < tc.t; i++ {
			for j := 0; j < tc.n; j++ {
				x.Set(i, j, rng.NormFloat64())
			}
		}
		w := make([]float64, tc.t)
		for i := range w {
			w[i] = rng.Float64()
		}
		for _, wt := range [][]float64{nil, w} {
			got := XtWX(nil, x, wt)
			require.True(t, mat.EqualApprox(got, naive(x, wt), 1e-9), "XtWX %v", tc)
			require.True(t, mat.EqualApprox(XWXt(nil, x, wt), naiveGram(x, wt), 1e-9), "XWXt %v", tc)
		}
	}
}
