package te

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// TestSymv checks the one-pass symmetric product against gonum's
// blas64.Symv (gonum v0.17.0) for both stored triangles.
func TestSymv(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	for _, n := range []int{1, 2, 7, 64, 131} {
		for _, uplo := range []blas.Uplo{blas.Upper, blas.Lower} {
			stride := n + 3
			s := blas64.Symmetric{N: n, Stride: stride, Uplo: uplo, Data: make([]float64, n*stride)}
			for i := range s.Data {
				s.Data[i] = rng.NormFloat64()
			}
			x, x2 := make([]float64, n), make([]float64, n)
			for i := range x {
				x[i], x2[i] = rng.NormFloat64(), rng.NormFloat64()
			}
			want, want2 := make([]float64, n), make([]float64, n)
			blas64.Symv(1, s, vec(x), 0, vec(want))
			blas64.Symv(1, s, vec(x2), 0, vec(want2))
			got, got2 := make([]float64, n), make([]float64, n)
			for i := range got {
				got[i], got2[i] = 99, 99 // stale values must be overwritten
			}
			symv(s, x, got, x2, got2)
			require.InDeltaSlice(t, want, got, 1e-12)
			require.InDeltaSlice(t, want2, got2, 1e-12)
			symv(s, x2, got, nil, nil)
			require.InDeltaSlice(t, want2, got, 1e-12)
		}
	}
}
