package dense

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestTopEigenvalueAgainstGonum compares TopEigenvalue with the largest
// eigenvalue of gonum v0.17.0's mat.EigenSym on positive semidefinite
// matrices of several spectra: a Gram matrix of Gaussian columns (a
// Marchenko–Pastur bulk, no dominant eigenvalue), one with a dominant
// market-like direction, a rank-deficient one, a tied top (the identity
// plus a tiny perturbation) and n = 1; a zero operator gives 0. The
// residual stop guarantees an eigenvalue within 1e-9·θ.
func TestTopEigenvalueAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	gram := func(rows, n int, shift float64) *mat.SymDense {
		x := randMatrix(rng, rows, n)
		var s mat.SymDense
		s.SymOuterK(1/float64(rows), x.T())
		for i := 0; i < n; i++ {
			s.SetSym(i, i, s.At(i, i)+shift)
		}
		return &s
	}
	market := gram(500, 300, 0.1)
	ones := mat.NewVecDense(300, nil)
	for i := 0; i < 300; i++ {
		ones.SetVec(i, 1)
	}
	market.SymRankOne(market, 0.5, ones)
	tied := mat.NewSymDense(50, nil)
	for i := 0; i < 50; i++ {
		tied.SetSym(i, i, 1+1e-12*float64(i))
	}
	cases := map[string]*mat.SymDense{
		"bulk":          gram(500, 400, 0),
		"market":        market,
		"rank 20 of 80": gram(20, 80, 0),
		"tied":          tied,
		"one":           mat.NewSymDense(1, []float64{2.5}),
	}
	for name, a := range cases {
		var e mat.EigenSym
		require.True(t, e.Factorize(a, false))
		vals := e.Values(nil)
		want := vals[len(vals)-1]
		n := a.SymmetricDim()
		got := TopEigenvalue(n, func(dst, x []float64) {
			mat.NewVecDense(n, dst).MulVec(a, mat.NewVecDense(n, x))
		})
		require.InDelta(t, want, got, 1e-9*want, name)
	}
	require.Zero(t, TopEigenvalue(7, func(dst, _ []float64) { clear(dst) }))
	require.Zero(t, TopEigenvalue(0, nil))
	// The identity: the start vector is an eigenvector, the space stops
	// growing after one step.
	require.InDelta(t, 1, TopEigenvalue(3, func(dst, x []float64) { copy(dst, x) }), 1e-15)
}
