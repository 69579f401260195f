package dense

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// lanczosSteps bounds the Krylov space of TopEigenvalue.
const lanczosSteps = 300

// TopEigenvalue returns the largest eigenvalue of the symmetric positive
// semidefinite n×n operator mul (dst = A·x) by the Lanczos method with full
// reorthogonalization, from a fixed start (startVector). It stops
// when the residual ‖A·y − θ·y‖ = |β_j·s_j| of the top Ritz pair (θ, y) is
// at most 1e-9·θ — there is then an eigenvalue of A within that distance
// of θ — or after min(n, 300) steps. On a spectrum without a dominant
// eigenvalue it takes far fewer products than the power method: the
// Lanczos error falls with the square root of the relative gap where the
// power method's falls with the gap itself. A zero operator gives 0.
//
// Cost per step one product and O(n·j) for the reorthogonalization; the
// j×j tridiagonal's eigenvalues every fifth step, O(j³) at most.
//
// Reference: Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations,
// 4th ed., §10.1 (the Lanczos iteration) and §10.3 (the residual bound and
// full reorthogonalization). Johns Hopkins.
func TopEigenvalue(n int, mul func(dst, x []float64)) float64 {
	if n == 0 {
		return 0
	}
	steps := min(n, lanczosSteps)
	q := make([][]float64, 0, steps)
	x := startVector(n)
	var alpha, beta []float64
	w := make([]float64, n)
	theta := 0.0
	for j := 0; j < steps; j++ {
		q = append(q, x)
		mul(w, x)
		a := dotSum(x, w)
		alpha = append(alpha, a)
		// Full reorthogonalization, twice (classical Gram–Schmidt run two
		// times keeps the basis orthogonal to rounding).
		for range 2 {
			for _, qi := range q {
				axpy(-dotSum(qi, w), qi, w)
			}
		}
		b := math.Sqrt(dotSum(w, w))
		last := j == steps-1 || b <= 1e-300
		if j%5 == 4 || last {
			var s float64
			theta, s = topRitz(alpha, beta)
			if last || math.Abs(b*s) <= 1e-9*math.Abs(theta) {
				return theta
			}
		}
		beta = append(beta, b)
		x = make([]float64, n)
		for i, v := range w {
			x[i] = v / b
		}
	}
	return theta
}

// PlaneTopEigenvalue returns the largest eigenvalue of QAQ, Q = I − 11ᵀ/n
// the projection onto the vectors of zero sum, by TopEigenvalue, and
// 1ᵀA1/n, the scale of A along the direction Q removes. A gradient method
// that stays on the plane Σᵢ wᵢ = 1 (a fully invested portfolio) moves only
// along vectors of zero sum, so top is the Lipschitz constant its step needs
// for the quadratic form of A (Beck & Teboulle 2009: L on the feasible set);
// for a covariance whose largest eigenvector lies near the equal-weighted
// portfolio, as in an equity market, it is a few times below λmax(A).
// The caller decides what a zero top means (A zero off the equal-weighted
// direction): equal tells it how large A is there. Cost: TopEigenvalue's
// products, one more, and O(n) per product for the centering.
func PlaneTopEigenvalue(n int, mul func(dst, x []float64)) (top, equal float64) {
	if n == 0 {
		return 0, 0
	}
	x, y := make([]float64, n), make([]float64, n)
	center := func(v []float64) {
		var m float64
		for _, a := range v {
			m += a
		}
		m /= float64(n)
		for i := range v {
			v[i] -= m
		}
	}
	top = TopEigenvalue(n, func(dst, v []float64) {
		copy(x, v)
		center(x)
		mul(dst, x)
		center(dst)
	})
	for i := range x {
		x[i] = 1
	}
	mul(y, x)
	for _, a := range y {
		equal += a
	}
	return top, equal / float64(n)
}

// topRitz returns the largest eigenvalue of the symmetric tridiagonal
// matrix with diagonal alpha and off-diagonal beta, and the last component
// of its unit eigenvector.
func topRitz(alpha, beta []float64) (theta, last float64) {
	m := len(alpha)
	t := mat.NewSymDense(m, nil)
	for i, a := range alpha {
		t.SetSym(i, i, a)
		if i+1 < m {
			t.SetSym(i, i+1, beta[i])
		}
	}
	var e EigenSym
	if !e.Factorize(t, true) {
		return math.NaN(), 0
	}
	vals := e.Values(nil)
	var v mat.Dense
	e.VectorsTo(&v)
	top := len(vals) - 1 // ascending
	return vals[top], v.At(m-1, top)
}

// startVector returns the unit start of the iterations: fixed, so that the
// result is deterministic, with weight on every direction.
func startVector(n int) []float64 {
	x := make([]float64, n)
	var s float64
	for i := range x {
		x[i] = 1 + 0.5*math.Sin(float64(i+1))
		s += x[i] * x[i]
	}
	s = math.Sqrt(s)
	for i := range x {
		x[i] /= s
	}
	return x
}
