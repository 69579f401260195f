package dense

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// withTriBlock runs f with the triangular products' block width set to w.
func withTriBlock(w int, f func()) {
	saved := triBlock
	triBlock = w
	defer func() { triBlock = saved }()
	f()
}

// TestInverseAgainstGonum compares InverseTo with gonum v0.17.0's
// mat.Cholesky.InverseTo (LAPACK's dpotri algorithm) on seeded positive
// definite matrices, at sizes around the recursion's base and the kernels'
// slivers, for every kernel, the blas64 route, and a recursion base and
// block width small enough to split every product several times; and
// checks A·A⁻¹ = I.
func TestInverseAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	sizes := []int{1, 2, 5, 47, 48, 49, 97, 130, 301}
	if testing.Short() {
		sizes = []int{1, 5, 49, 130}
	}
	routes := cholRoutes()
	routes["base 8, block 24"] = func(f func()) { withBase(8, func() { withTriBlock(unit, f) }) }
	routes["block 24"] = func(f func()) { withTriBlock(unit, f) }
	for _, n := range sizes {
		a := randSPD(rng, n)
		var ref mat.Cholesky
		require.True(t, ref.Factorize(a))
		var want mat.SymDense
		require.NoError(t, ref.InverseTo(&want))
		// Rounding of the inverse grows with the size and the condition
		// number (at most ~1e4 here) times its norm.
		tol := 1e-13 * float64(n) * 1e4 * mat.Norm(&want, math.Inf(1))
		for name, route := range routes {
			route(func() {
				var c Cholesky
				require.True(t, c.Factorize(a))
				got := c.InverseTo(nil)
				require.Equal(t, n, got.SymmetricDim())
				require.LessOrEqual(t, maxAbsDiff(got, &want), tol, "n=%d %s", n, name)
				var id mat.Dense
				id.Mul(a, got)
				for i := 0; i < n; i++ {
					id.Set(i, i, id.At(i, i)-1)
				}
				require.LessOrEqual(t, mat.Norm(&id, math.Inf(1)), 1e-13*float64(n)*1e4, "A·A⁻¹ − I, n=%d %s", n, name)
			})
		}
	}
}

// TestInverseAgainstNumpy checks InverseTo against np.linalg.inv (numpy
// 1.24.2, testdata/numpy_inverse.py) of the 100×100 matrix of
// numpy_cholesky.json, at the default recursion and at a base and block
// width that split it several times; and that dst is reused, and one of
// another size panics.
func TestInverseAgainstNumpy(t *testing.T) {
	var chol choleskyFixture
	raw, err := os.ReadFile("testdata/numpy_cholesky.json")
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(raw, &chol))
	var inv struct{ Inv [][]float64 }
	raw, err = os.ReadFile("testdata/numpy_inverse.json")
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(raw, &inv))
	a, want := symFromRows(chol.A), symFromRows(inv.Inv)
	n := a.SymmetricDim()
	scale := mat.Norm(want, math.Inf(1))
	for _, base := range []int{8, cholBase} {
		withBase(base, func() {
			withTriBlock(unit, func() {
				var c Cholesky
				require.True(t, c.Factorize(a))
				dst := mat.NewSymDense(n, nil)
				got := c.InverseTo(dst)
				require.Same(t, dst, got)
				require.LessOrEqual(t, maxAbsDiff(got, want), 1e-9*scale, "base %d", base)
				require.Panics(t, func() { c.InverseTo(mat.NewSymDense(n+1, nil)) })
			})
		})
	}
}
