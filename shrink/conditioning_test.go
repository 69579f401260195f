package shrink

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestNearestCorrelationHigham checks the worked example of Higham (2002),
// section 4: A = [[1 1 0] [1 1 1] [0 1 1]] has nearest correlation matrix
// with off-diagonals 0.7607 (entries (1,2), (2,3)) and 0.1573 (entry (1,3)),
// to the 4 decimals printed in the paper (values as quoted in
// shared/REFERENCES.md).
func TestNearestCorrelationHigham(t *testing.T) {
	a := mat.NewSymDense(3, []float64{1, 1, 0, 1, 1, 1, 0, 1, 1})
	orig := symCopy(a)
	got, res, err := NearestCorrelation(nil, a, nil)
	require.NoError(t, err)
	require.True(t, mat.Equal(orig, a), "input modified")
	const tol = 0.5e-4
	require.InDelta(t, 0.7607, got.At(0, 1), tol)
	require.InDelta(t, 0.7607, got.At(1, 2), tol)
	require.InDelta(t, 0.1573, got.At(0, 2), tol)
	for i := 0; i < 3; i++ {
		require.Equal(t, 1.0, got.At(i, i))
	}
	requirePSD(t, got, 1e-12)
	// The paper: ten iterations are not enough. Convergence is tested by
	// tolerance, so a tighter tolerance must take more iterations.
	require.Greater(t, res.Iter, 10)
	_, loose, err := NearestCorrelation(nil, a, &NearCorrOptions{Tol: 1e-5})
	require.NoError(t, err)
	require.Less(t, loose.Iter, res.Iter)
	_, _, err = NearestCorrelation(nil, a, &NearCorrOptions{MaxIter: 5})
	require.ErrorIs(t, err, ErrNotConverged)

	// A correlation matrix is its own nearest correlation matrix.
	c := mat.NewSymDense(3, []float64{1, 0.3, 0.1, 0.3, 1, -0.2, 0.1, -0.2, 1})
	same, _, err := NearestCorrelation(nil, c, nil)
	require.NoError(t, err)
	require.True(t, mat.EqualApprox(c, same, 1e-9))
	require.PanicsWithValue(t, mat.ErrShape, func() { NearestCorrelation(mat.NewSymDense(2, nil), c, nil) })
	bad := symCopy(c)
	bad.SetSym(0, 2, math.NaN())
	_, _, err = NearestCorrelation(nil, bad, nil)
	require.ErrorIs(t, err, ErrNonFinite)
	var de *DataError
	require.ErrorAs(t, err, &de)
	require.Equal(t, 0, de.Row)
	require.Equal(t, 2, de.Col)
}

// TestNearestPSD: the nearest PSD matrix in Frobenius norm keeps the
// eigenvectors and floors the eigenvalues (Higham 1988, theorem 2.1).
func TestNearestPSD(t *testing.T) {
	// Eigenvalues 3, 1, −1 with known eigenvectors: a = Q diag(3, 1, −1) Qᵀ.
	q := mat.NewDense(3, 3, []float64{
		1 / math.Sqrt(2), 1 / math.Sqrt(2), 0,
		-1 / math.Sqrt(2), 1 / math.Sqrt(2), 0,
		0, 0, 1,
	})
	build := func(d ...float64) *mat.SymDense {
		var m mat.Dense
		m.Mul(q, mat.NewDiagDense(3, d))
		m.Mul(&m, q.T())
		s := mat.NewSymDense(3, nil)
		for i := 0; i < 3; i++ {
			for j := i; j < 3; j++ {
				s.SetSym(i, j, (m.At(i, j)+m.At(j, i))/2)
			}
		}
		return s
	}
	a := build(3, 1, -1)
	for _, tc := range []struct {
		name    string
		floor   float64
		want    *mat.SymDense
		changed int
		shift   float64
		tol     float64
	}{
		{"floor 0", 0, build(3, 1, 0), 1, 1, 1e-14},
		{"floor 1.5", 1.5, build(3, 1.5, 1.5), 2, 2.5, 1e-14},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, rep, err := NearestPSD(nil, a, tc.floor)
			require.NoError(t, err)
			require.True(t, mat.EqualApprox(tc.want, got, tc.tol))
			require.Equal(t, tc.changed, rep.Changed)
			require.InDelta(t, tc.shift, rep.MaxShift, tc.tol)
			require.InDelta(t, -1, rep.MinBefore, tc.tol)
			require.InDelta(t, tc.floor, rep.MinAfter, tc.tol)
			require.InDelta(t, diffNorm(got, a), rep.Norm, 1e-13)
			require.True(t, math.IsInf(rep.CondBefore, 1))
		})
	}
	got, rep, err := CapCondition(nil, a, 10)
	require.NoError(t, err)
	require.True(t, mat.EqualApprox(build(3, 1, 0.3), got, 1e-14))
	require.Equal(t, 1, rep.Changed)
	require.InDelta(t, 10, rep.CondAfter, 1e-12)
	cond, err := Condition(got)
	require.NoError(t, err)
	require.InDelta(t, 10, cond, 1e-10)

	// Nothing to repair: a copy comes back.
	ok := build(3, 2, 1)
	same, rep, err := CapCondition(nil, ok, 10)
	require.NoError(t, err)
	require.Equal(t, 0, rep.Changed)
	require.True(t, mat.Equal(ok, same))

	_, _, err = NearestPSD(nil, a, -1)
	require.ErrorIs(t, err, ErrBadParameter)
	_, _, err = CapCondition(nil, a, 0.5)
	require.ErrorIs(t, err, ErrBadParameter)
	_, _, err = CapCondition(nil, build(-1, -2, -3), 10)
	require.ErrorIs(t, err, ErrBadParameter)
	require.PanicsWithValue(t, mat.ErrShape, func() { NearestPSD(mat.NewSymDense(2, nil), a, 0) })
	// Shape misuse panics before the parameters are checked.
	require.PanicsWithValue(t, mat.ErrShape, func() { NearestPSD(mat.NewSymDense(2, nil), a, -1) })
	require.PanicsWithValue(t, mat.ErrShape, func() { CapCondition(mat.NewSymDense(2, nil), a, 0.5) })
	// dst reuse gives the same answer.
	dst := mat.NewSymDense(3, nil)
	r1, _, _ := NearestPSD(dst, a, 0)
	r2, _, _ := NearestPSD(dst, a, 0)
	require.True(t, mat.Equal(r1, r2))
}

func symCopy(a *mat.SymDense) *mat.SymDense {
	c := mat.NewSymDense(a.SymmetricDim(), nil)
	c.CopySym(a)
	return c
}
