package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// NearCorrOptions tunes NearestCorrelation. The zero value (or nil) is the
// default.
type NearCorrOptions struct {
	// Tol is the relative change, in Frobenius norm, at which the
	// iteration stops: both projections moved less than Tol and lie within
	// Tol of each other. Zero means 1e-10.
	Tol float64
	// MaxIter bounds the number of iterations. Zero means 10000.
	MaxIter int
}

// NearCorrResult reports how NearestCorrelation converged and what it
// changed.
type NearCorrResult struct {
	Iter int     // iterations used
	Norm float64 // ‖result − a‖_F, the size of the change
	// MinEig is the smallest eigenvalue of the result's PSD iterate
	// before its diagonal was rescaled to one.
	MinEig float64
}

// NearestCorrelation sets dst to the correlation matrix (symmetric, positive
// semidefinite, unit diagonal) nearest to a in Frobenius norm, and returns
// dst with its diagnostics. It alternates the projections onto the PSD cone
// and onto unit-diagonal matrices, with Dykstra's correction on the first:
//
//	ΔS₀ = 0, Y₀ = a;   R_k = Y_{k−1} − ΔS_{k−1},   X_k = P_S(R_k),
//	ΔS_k = X_k − R_k,   Y_k = P_U(X_k),
//
// until ‖X_k − X_{k−1}‖, ‖Y_k − Y_{k−1}‖ and ‖Y_k − X_k‖ are all below Tol
// relative to ‖Y_k‖. P_S floors the eigenvalues at 0, P_U sets the diagonal
// to 1. The returned matrix is X_k with its diagonal rescaled to one,
// D^{-1/2} X_k D^{-1/2}, which keeps it exactly positive semidefinite and
// moves it by O(Tol) from Y_k. Convergence is linear: tens to hundreds of
// iterations are common. Unweighted Frobenius norm only (Higham's W-norm is
// not offered).
//
// A nil or empty dst is allocated; a wrong-sized dst panics with
// mat.ErrShape. Errors: a *DataError wrapping ErrNonFinite, ErrBadParameter
// for a negative Tol or MaxIter, ErrNoEigen, and ErrNotConverged (the last
// iterate is still returned, rescaled as above, with the result). Cost
// O(N³) per iteration.
//
// References: Higham, N. J. (2002), "Computing the nearest correlation
// matrix — a problem from finance", IMA J. Numer. Anal. 22(3):329–343,
// algorithm 3.3.
func NearestCorrelation(dst *mat.SymDense, a mat.Symmetric, opt *NearCorrOptions) (*mat.SymDense, NearCorrResult, error) {
	n := a.SymmetricDim()
	dense.CheckSym(dst, n)
	var o NearCorrOptions
	if opt != nil {
		o = *opt
	}
	if o.Tol < 0 || math.IsNaN(o.Tol) || o.MaxIter < 0 {
		return dst, NearCorrResult{}, &DataError{Row: -1, Col: -1, Value: o.Tol, Err: ErrBadParameter}
	}
	if o.Tol == 0 {
		o.Tol = 1e-10
	}
	if o.MaxIter == 0 {
		o.MaxIter = 10000
	}
	a0, err := checkSym(a)
	if err != nil {
		return dst, NearCorrResult{}, err
	}
	y := mat.NewSymDense(n, nil)
	y.CopySym(a0)
	ds := mat.NewSymDense(n, nil)
	r := mat.NewSymDense(n, nil)
	x := mat.NewSymDense(n, nil)
	xOld := mat.NewSymDense(n, nil)
	yOld := mat.NewSymDense(n, nil)
	var res NearCorrResult
	converged := false
	for res.Iter < o.MaxIter {
		res.Iter++
		xOld.CopySym(x)
		yOld.CopySym(y)
		subSym(r, y, ds)
		minEig, err := projectPSD(x, r)
		if err != nil {
			return dst, res, err
		}
		res.MinEig = minEig
		subSym(ds, x, r)
		y.CopySym(x)
		for i := 0; i < n; i++ {
			y.SetSym(i, i, 1)
		}
		ny := frobNorm(y)
		if res.Iter > 1 &&
			diffNorm(x, xOld) <= o.Tol*ny &&
			diffNorm(y, yOld) <= o.Tol*ny &&
			diffNorm(y, x) <= o.Tol*ny {
			converged = true
			break
		}
	}
	dst = dense.SizeSym(dst, n)
	unitDiag(dst, x)
	res.Norm = diffNorm(dst, a0)
	if !converged {
		return dst, res, ErrNotConverged
	}
	return dst, res, nil
}

// projectPSD sets dst to r with its negative eigenvalues set to 0 and returns
// the smallest eigenvalue kept.
func projectPSD(dst, r *mat.SymDense) (float64, error) {
	vals, vecs, err := eigen(r)
	if err != nil {
		return 0, err
	}
	d := make([]float64, len(vals))
	minKept := math.Inf(1)
	for k, v := range vals {
		d[k] = math.Max(v, 0)
		minKept = math.Min(minKept, d[k])
	}
	recompose(dst, vecs, d, 0)
	return minKept, nil
}

// unitDiag sets dst to D^{-1/2} x D^{-1/2}, D = diag(x); a zero diagonal
// entry gives a zero row and column with 1 on the diagonal.
func unitDiag(dst, x *mat.SymDense) {
	n := x.SymmetricDim()
	s := make([]float64, n)
	for i := range s {
		if d := x.At(i, i); d > 0 {
			s[i] = 1 / math.Sqrt(d)
		}
	}
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			dst.SetSym(i, j, x.At(i, j)*s[i]*s[j])
		}
		dst.SetSym(i, i, 1)
	}
}

func frobNorm(a *mat.SymDense) float64 { return math.Sqrt(frob2(a)) }

func diffNorm(a, b *mat.SymDense) float64 {
	n := a.SymmetricDim()
	var sum float64
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			d := a.At(i, j) - b.At(i, j)
			sum += d * d
		}
	}
	return math.Sqrt(sum)
}

// subSym sets dst = a − b.
func subSym(dst, a, b *mat.SymDense) {
	n := a.SymmetricDim()
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			dst.SetSym(i, j, a.At(i, j)-b.At(i, j))
		}
	}
}
