package dense

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// orthoErr returns max|QᵀQ − I| and the largest part of a column of k
// outside range(q), relative to the column's norm.
func orthoErr(q, k *mat.Dense) (float64, float64) {
	_, r := q.Dims()
	var g mat.Dense
	g.Mul(q.T(), q)
	e := 0.0
	for i := 0; i < r; i++ {
		for j := 0; j < r; j++ {
			d := g.At(i, j)
			if i == j {
				d--
			}
			e = math.Max(e, math.Abs(d))
		}
	}
	var c, p mat.Dense
	c.Mul(q.T(), k)
	p.Mul(q, &c)
	p.Sub(k, &p)
	_, m := k.Dims()
	out := 0.0
	for j := 0; j < m; j++ {
		if nk := mat.Norm(k.ColView(j), 2); nk > 0 {
			out = math.Max(out, mat.Norm(p.ColView(j), 2)/nk)
		}
	}
	return e, out
}

// TestOrthonormalize: for a 200×50 matrix of rank 30 whose directions
// span ten decades (scales 10^(−i/3)), Q is orthonormal to rounding, holds
// every column of k to rounding and has about the rank of k (a direction
// left by rounding may add one).
func TestOrthonormalize(t *testing.T) {
	a := Gaussian(200, 30, 1)
	b := Gaussian(30, 50, 2)
	for i := 0; i < 30; i++ {
		s := math.Pow(10, -float64(i)/3)
		for j := 0; j < 50; j++ {
			b.Set(i, j, b.At(i, j)*s)
		}
	}
	k := Mul(nil, a, b)
	q := Orthonormalize(k)
	_, r := q.Dims()
	e, out := orthoErr(q, k)
	require.LessOrEqual(t, e, 1e-14, "orthogonality")
	require.LessOrEqual(t, out, 1e-12, "columns of k outside range(Q)")
	require.GreaterOrEqual(t, r, 30)
	require.LessOrEqual(t, r, 32)

	require.True(t, Orthonormalize(mat.NewDense(5, 3, nil)).IsEmpty(), "zero k")
}
