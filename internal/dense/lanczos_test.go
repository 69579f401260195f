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

// TestPlaneTopEigenvalue checks the largest eigenvalue on the vectors of
// zero sum against numpy 1.24.2,
// np.linalg.eigvalsh(P @ np.diag(d) @ P).max() with
// P = np.eye(n) - np.ones((n, n))/n, and against gonum v0.17.0's
// mat.EigenSym of QAQ on a matrix with a market-like direction, where it is
// well below λmax(A); equal is 1ᵀA1/n.
func TestPlaneTopEigenvalue(t *testing.T) {
	diag := func(d []float64) func(dst, x []float64) {
		return func(dst, x []float64) {
			for i := range x {
				dst[i] = d[i] * x[i]
			}
		}
	}
	top, equal := PlaneTopEigenvalue(3, diag([]float64{1, 5, 2}))
	require.InDelta(t, 3.8685170918213303, top, 1e-9*3.87)
	require.InDelta(t, 8.0/3, equal, 1e-15)
	top, _ = PlaneTopEigenvalue(6, diag([]float64{1e-4, 4e-4, 2e-4, 9e-4, 1e-4, 3e-4}))
	require.InDelta(t, 0.0007910617541295482, top, 1e-9*7.9e-4)

	rng := rand.New(rand.NewPCG(11, 12))
	const n = 120
	x := randMatrix(rng, 200, n)
	var a mat.SymDense
	a.SymOuterK(1.0/200, x.T())
	ones := mat.NewVecDense(n, nil)
	for i := 0; i < n; i++ {
		ones.SetVec(i, 1)
	}
	a.SymRankOne(&a, 0.2, ones)
	q := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			q.Set(i, j, -1.0/n)
		}
		q.Set(i, i, q.At(i, i)+1)
	}
	var qa, qaq mat.Dense
	qa.Mul(q, &a)
	qaq.Mul(&qa, q)
	sym := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			sym.SetSym(i, j, (qaq.At(i, j)+qaq.At(j, i))/2)
		}
	}
	largest := func(s mat.Symmetric) float64 {
		var e mat.EigenSym
		require.True(t, e.Factorize(s, false))
		v := e.Values(nil)
		return v[len(v)-1]
	}
	want, whole := largest(sym), largest(&a)
	top, equal = PlaneTopEigenvalue(n, func(dst, x []float64) {
		mat.NewVecDense(n, dst).MulVec(&a, mat.NewVecDense(n, x))
	})
	require.InDelta(t, want, top, 1e-9*want)
	require.Less(t, top, whole/3, "the market direction is left out")
	require.InDelta(t, mat.Inner(ones, &a, ones)/n, equal, 1e-12*equal)

	top, equal = PlaneTopEigenvalue(0, nil)
	require.Zero(t, top)
	require.Zero(t, equal)
}
