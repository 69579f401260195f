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

// TestRangeFinderAndSubspaceEigen: on a 150×150 symmetric matrix of rank
// 20 with eigenvalues of both signs, RangeFinder finds a basis of rank 20
// to 32 holding it, and SubspaceEigen gives its nonzero eigenvalues as
// gonum's EigenSym of the whole matrix does, with a residual at rounding
// and eigenvectors that reconstruct the matrix. A full-rank matrix makes
// RangeFinder give up at maxRank, and a basis that misses part of the
// range shows in Residual.
func TestRangeFinderAndSubspaceEigen(t *testing.T) {
	const n, r = 150, 20
	g := Gaussian(n, r, 4)
	var qr mat.QR
	qr.Factorize(g)
	var u mat.Dense
	qr.QTo(&u)
	a := mat.NewSymDense(n, nil)
	want := make([]float64, r)
	for k := 0; k < r; k++ {
		want[k] = math.Pow(10, -3*float64(k)/r)
		if k%5 == 0 {
			want[k] = -want[k]
		}
		a.SymRankOne(a, want[k], u.ColView(k))
	}
	ac := mat.NewSymDense(n, nil)
	ac.CopySym(a)
	av := SymView(ac)
	q, ok := RangeFinder(av, n/2)
	require.True(t, ok)
	_, rq := q.Dims()
	require.GreaterOrEqual(t, rq, r)
	require.LessOrEqual(t, rq, r+12)

	var se SubspaceEigen
	require.True(t, se.Factorize(av, q))
	require.Less(t, se.Residual, 1e-13)
	var full mat.EigenSym
	require.True(t, full.Factorize(a, false))
	all := full.Values(nil)
	// The rq values of the subspace against the rq values of the whole
	// matrix of largest magnitude, both sorted ascending.
	big := append([]float64(nil), all...)
	sortByAbs(big)
	big = big[len(big)-rq:]
	sortAsc(big)
	require.InDeltaSlice(t, big, se.Values, 1e-14)
	// U·Λ·Uᵀ = a.
	back := signedGram(se.Vectors, se.Values)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			require.InDelta(t, a.At(i, j), back.At(i, j), 1e-14)
		}
	}

	full2 := Gaussian(n, n, 5)
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s.SetSym(i, j, full2.At(i, j))
		}
	}
	_, ok = RangeFinder(SymView(s), n/2)
	require.False(t, ok, "rank above maxRank")

	half := q.Slice(0, n, 0, r/2).(*mat.Dense)
	require.True(t, se.Factorize(av, mat.DenseCopyOf(half)))
	require.Greater(t, se.Residual, 1e-4, "a basis missing half the range")
}

func sortByAbs(v []float64) {
	for i := 1; i < len(v); i++ {
		for j := i; j > 0 && math.Abs(v[j]) < math.Abs(v[j-1]); j-- {
			v[j], v[j-1] = v[j-1], v[j]
		}
	}
}

func sortAsc(v []float64) {
	for i := 1; i < len(v); i++ {
		for j := i; j > 0 && v[j] < v[j-1]; j-- {
			v[j], v[j-1] = v[j-1], v[j]
		}
	}
}

// signedGram returns U·diag(d)·Uᵀ for any signs of d, by gonum.
func signedGram(u *mat.Dense, d []float64) *mat.Dense {
	var ud, out mat.Dense
	ud.Scale(1, u)
	n, k := u.Dims()
	for j := 0; j < k; j++ {
		for i := 0; i < n; i++ {
			ud.Set(i, j, ud.At(i, j)*d[j])
		}
	}
	out.Mul(&ud, u.T())
	return &out
}
