package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// eigen returns the eigenvalues of a in ascending order and the eigenvectors
// as the rows of an n×n matrix (row k belongs to value k). Cost O(n³).
func eigen(a mat.Symmetric) ([]float64, *mat.Dense, error) {
	var e dense.EigenSym
	if !e.Factorize(a, true) {
		return nil, nil, ErrNoEigen
	}
	vals := e.Values(nil)
	var v mat.Dense
	e.VectorsTo(&v)
	rows := mat.DenseCopyOf(v.T())
	return vals, rows, nil
}

// recompose sets dst to Σ_k d_k u_k u_kᵀ + c·I for the rows u_k of u, and
// returns it. Coefficients of either sign are split so that the products
// still go through the multi-core kernel, which takes non-negative weights;
// each product takes only the rows of its sign, so a zero coefficient costs
// nothing.
func recompose(dst *mat.SymDense, u *mat.Dense, d []float64, c float64) *mat.SymDense {
	_, n := u.Dims()
	dst = dense.SizeSym(dst, n)
	var pos, neg []int
	for k, v := range d {
		switch {
		case v > 0:
			pos = append(pos, k)
		case v < 0:
			neg = append(neg, k)
		}
	}
	part := func(rows []int, sign float64) (*mat.Dense, []float64) {
		m := mat.NewDense(len(rows), n, nil)
		w := make([]float64, len(rows))
		for i, k := range rows {
			m.SetRow(i, u.RawRowView(k))
			w[i] = sign * d[k]
		}
		return m, w
	}
	if len(pos) > 0 {
		m, w := part(pos, 1)
		dense.XtWX(dst, m, w)
	} else {
		dst.Zero()
	}
	if len(neg) > 0 {
		m, w := part(neg, -1)
		s := dense.XtWX(nil, m, w)
		s.ScaleSym(-1, s)
		dst.AddSym(dst, s)
	}
	if c != 0 {
		for i := 0; i < n; i++ {
			dst.SetSym(i, i, dst.At(i, i)+c)
		}
	}
	return dst
}

// condition returns λ_max/λ_min of ascending eigenvalues, +Inf when
// λ_min ≤ 0.
func condition(vals []float64) float64 {
	if len(vals) == 0 {
		return math.NaN()
	}
	lo, hi := vals[0], vals[len(vals)-1]
	if lo <= 0 {
		return math.Inf(1)
	}
	return hi / lo
}

// Condition returns the 2-norm condition number λ_max/λ_min of the
// symmetric matrix a (+Inf when λ_min ≤ 0), from its eigenvalues. Errors:
// a *DataError wrapping ErrNonFinite, or ErrNoEigen. Cost O(N³): it
// eigen-decomposes a, so avoid it for large N.
func Condition(a mat.Symmetric) (float64, error) {
	c, err := checkSym(a)
	if err != nil {
		return 0, err
	}
	var e mat.EigenSym
	if !valuesOnly(&e, c) && !e.Factorize(c, true) {
		return 0, ErrNoEigen
	}
	return condition(e.Values(nil)), nil
}

// valuesOnly factorizes c for its eigenvalues alone, reporting false on
// failure: gonum v0.17.0's values-only path (Dsterf) panics with "lapack:
// insufficient length of a" on some matrices of extreme range (entries from
// 1e-17 to 1e283), where the path with vectors succeeds.
func valuesOnly(e *mat.EigenSym, c mat.Symmetric) (ok bool) {
	defer func() {
		if recover() != nil {
			ok = false
		}
	}()
	return e.Factorize(c, false)
}
