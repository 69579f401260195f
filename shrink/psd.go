package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Repair reports what a conditioning step changed.
type Repair struct {
	// Changed is the number of eigenvalues moved, MaxShift the largest
	// move and Norm the Frobenius norm of the change, ‖result − a‖_F.
	Changed        int
	MaxShift, Norm float64
	// MinBefore and MinAfter are the smallest eigenvalues, CondBefore and
	// CondAfter the condition numbers λ_max/λ_min (+Inf when λ_min ≤ 0).
	MinBefore, MinAfter   float64
	CondBefore, CondAfter float64
}

// NearestPSD sets dst to the nearest symmetric matrix to a, in Frobenius
// norm, whose eigenvalues are all at least floor, and returns dst with what
// was changed:
//
//	a = V diag(λ) Vᵀ,   result = V diag(max(λ_i, floor)) Vᵀ.
//
// With floor = 0 this is the nearest positive semidefinite matrix (Higham
// 1988); eigenvectors are kept and eigenvalues at or above floor are
// untouched, so a matrix that is already fine comes back unchanged up to
// rounding (Changed = 0 and dst is a copy of a).
//
// A nil or empty dst is allocated; a wrong-sized dst panics with
// mat.ErrShape. Errors: a *DataError wrapping ErrNonFinite naming the first
// non-finite entry, ErrBadParameter for a negative or non-finite floor,
// ErrNoEigen. Cost O(N³) (one eigendecomposition), except for a singular a
// of rank k ≤ 2N/3 (see Low rank below).
//
// Low rank: when a is not positive definite (a Cholesky factorization on
// all cores, N³/3 flops, fails) and its range has dimension k ≤ 2N/3 (an
// adaptive randomized range finder, Halko, Martinsson and Tropp 2011,
// Algorithm 4.2), a = UΛUᵀ comes from the k×k matrix QᵀaQ for the
// orthonormal basis Q of that range, accepted when a probe puts the part of
// a outside it at rounding (64·N·ε·max|λ|); the other N − k eigenvalues are
// zero, and
//
//	result = a + f·I − Σ_k min(λ_k, f)·u_k u_kᵀ,   f = floor,
//
// raises them with the others below f without forming their eigenvectors.
// The report then counts the N − k zeros as Changed when f > 0, and
// MinBefore is min(λ_1, 0) with CondBefore = +Inf (the full route reports
// the rounding-level values it computes for them instead). Cost O(N²·k) on
// all cores plus a k×k eigendecomposition (gonum, single-threaded).
//
// References: Higham, N. J. (1988), "Computing a nearest symmetric positive
// semidefinite matrix", Linear Algebra Appl. 103:103–118; Halko, N.,
// Martinsson, P. G. and Tropp, J. A. (2011), "Finding structure with
// randomness", SIAM Review 53(2):217–288.
func NearestPSD(dst *mat.SymDense, a mat.Symmetric, floor float64) (*mat.SymDense, Repair, error) {
	dense.CheckSym(dst, a.SymmetricDim())
	if !(floor >= 0) || math.IsInf(floor, 0) {
		return dst, Repair{}, &DataError{Row: -1, Col: -1, Value: floor, Err: ErrBadParameter}
	}
	return floorEigen(dst, a, floor, 0)
}

// CapCondition sets dst to a with its condition number capped at maxCond and
// returns dst with what was changed: eigenvalues below λ_max/maxCond are
// raised to it, eigenvectors are kept,
//
//	result = V diag(max(λ_i, λ_max/maxCond)) Vᵀ,
//
// the smallest change in Frobenius norm that keeps λ_max and the
// eigenvectors. Negative eigenvalues are raised too, so the result is
// positive definite.
//
// Panics as NearestPSD. Errors: as NearestPSD, ErrBadParameter when maxCond
// < 1 or is NaN, and a *DataError wrapping ErrBadParameter when λ_max ≤ 0
// (no positive eigenvalue to scale from). Cost as NearestPSD, low rank
// included: a rank-deficient a, such as a repaired pairwise estimate with
// N above the number of dates, costs O(N²·k) and a k×k eigendecomposition.
//
// References: common practice, no single source (eigenvalue floor relative
// to the largest eigenvalue); see also Higham (1988) for the nearest PSD.
func CapCondition(dst *mat.SymDense, a mat.Symmetric, maxCond float64) (*mat.SymDense, Repair, error) {
	dense.CheckSym(dst, a.SymmetricDim())
	if !(maxCond >= 1) {
		return dst, Repair{}, &DataError{Row: -1, Col: -1, Value: maxCond, Err: ErrBadParameter}
	}
	return floorEigen(dst, a, 0, maxCond)
}

// floorEigen raises the eigenvalues of a to floor, or to λ_max/maxCond when
// maxCond > 0.
func floorEigen(dst *mat.SymDense, a mat.Symmetric, floor, maxCond float64) (*mat.SymDense, Repair, error) {
	n := a.SymmetricDim()
	c, err := checkSym(a)
	if err != nil {
		return dst, Repair{}, err
	}
	if vals, u, ok := lowRankEigen(c); ok {
		return floorLowRank(dst, c, vals, u, floor, maxCond)
	}
	vals, vecs, err := eigen(c)
	if err != nil {
		return dst, Repair{}, err
	}
	top := vals[n-1]
	if maxCond > 0 {
		if !(top > 0) {
			return dst, Repair{}, &DataError{Row: -1, Col: -1, Value: top, Err: ErrBadParameter}
		}
		floor = top / maxCond
	}
	rep := Repair{MinBefore: vals[0], CondBefore: condition(vals)}
	shift := make([]float64, n)
	var ss float64
	for k, v := range vals {
		if v < floor {
			shift[k] = floor - v
			rep.Changed++
			rep.MaxShift = math.Max(rep.MaxShift, shift[k])
			ss += shift[k] * shift[k]
			vals[k] = floor
		}
	}
	rep.Norm = math.Sqrt(ss)
	rep.MinAfter = math.Max(rep.MinBefore, floor)
	rep.CondAfter = condition([]float64{rep.MinAfter, math.Max(top, floor)})
	dst = dense.SizeSym(dst, n)
	if rep.Changed == 0 {
		dst.CopySym(c)
		return dst, rep, nil
	}
	// Adding the shifts to a keeps the untouched part of a exactly.
	recompose(dst, vecs, shift, 0)
	dst.AddSym(dst, c)
	return dst, rep, nil
}
