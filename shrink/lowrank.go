package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// lowRankEigen returns the eigenpairs of the symmetric c outside its null
// space when c is singular with rank at most 2N/3: the ascending nonzero
// eigenvalues and their eigenvectors as the rows of a k×N matrix; the other
// N − k eigenvalues of c are zero to rounding. It reports false for a
// positive definite c (a Cholesky factorization on all cores succeeds), for
// a rank above 2N/3, for N < 64, and when the decomposition does not hold c
// to rounding, so that the caller takes the full eigendecomposition. c's
// lower triangle is overwritten (dense.SymView).
//
// The range of c comes from the adaptive randomized range finder
// (dense.RangeFinder), the eigenpairs from the k×k matrix QᵀcQ
// (dense.SubspaceEigen), accepted when the probed part of c outside
// range(Q) is at most 64·N·ε·max|λ|. Cost O(N²·k) on all cores and one k×k
// eigendecomposition, against one of order N.
func lowRankEigen(c *mat.SymDense) ([]float64, *mat.Dense, bool) {
	n := c.SymmetricDim()
	if n < 64 || forceFullEigen {
		return nil, nil, false
	}
	var ch dense.Cholesky
	if ch.Factorize(c) {
		return nil, nil, false
	}
	av := dense.SymView(c)
	q, ok := dense.RangeFinder(av, 2*n/3)
	if !ok || q.IsEmpty() {
		return nil, nil, false
	}
	var se dense.SubspaceEigen
	if !se.Factorize(av, q) || !se.Exact() {
		return nil, nil, false
	}
	return se.Values, mat.DenseCopyOf(se.Vectors.T()), true
}

// forceFullEigen sends floorEigen to the full eigendecomposition, the
// reference route of the tests.
var forceFullEigen bool

// floorLowRank is floorEigen for a c with the k nonzero eigenpairs vals, u
// (rows) and N − k zero eigenvalues:
//
//	result = c + f·I − Σ_k min(λ_k, f)·u_k u_kᵀ
//
// which raises every eigenvalue below f, the zero ones included when f > 0,
// to f and leaves the others, without forming the null space.
func floorLowRank(dst *mat.SymDense, c *mat.SymDense, vals []float64, u *mat.Dense, floor, maxCond float64) (*mat.SymDense, Repair, error) {
	n := c.SymmetricDim()
	null := n - len(vals)
	lo, top := math.Min(vals[0], 0), math.Max(vals[len(vals)-1], 0)
	if maxCond > 0 {
		if !(top > 0) {
			return dst, Repair{}, &DataError{Row: -1, Col: -1, Value: top, Err: ErrBadParameter}
		}
		floor = top / maxCond
	}
	rep := Repair{MinBefore: lo, CondBefore: condition([]float64{lo, top})}
	d := make([]float64, len(vals))
	var ss float64
	for k, v := range vals {
		d[k] = -math.Min(v, floor)
		if v < floor {
			rep.Changed++
			ss += (floor - v) * (floor - v)
		}
	}
	if floor > 0 {
		rep.Changed += null
		ss += float64(null) * floor * floor
	} else {
		floor = 0 // a zero floor adds nothing on the null space
	}
	if lo < floor {
		rep.MaxShift = floor - lo
	}
	rep.Norm = math.Sqrt(ss)
	rep.MinAfter = math.Max(rep.MinBefore, floor)
	rep.CondAfter = condition([]float64{rep.MinAfter, math.Max(top, floor)})
	dst = dense.SizeSym(dst, n)
	if rep.Changed == 0 {
		dst.CopySym(c)
		return dst, rep, nil
	}
	recompose(dst, u, d, floor)
	dst.AddSym(dst, c)
	return dst, rep, nil
}
