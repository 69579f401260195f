package demo

import (
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// The truth behind a Demo. Each method copies into a destination, so that the
// caller may modify the result; methods that take a row panic with
// mat.ErrRowAccess for a row outside the panel, and every method panics with
// mat.ErrShape for a destination of the wrong size.

// ExposuresTo copies the N×K true exposures B into dst and returns it: column
// 0 is the market beta, then one 0/1 column per sector, then the style
// scores, in the order of FactorNames. Exposures do not change over time. A
// nil or empty dst is allocated.
func (d *Market) ExposuresTo(dst *mat.Dense) *mat.Dense {
	return copyDense(dst, d.b)
}

// FactorReturnsTo copies the T×K true factor returns into dst and returns
// it. A nil or empty dst is allocated.
func (d *Market) FactorReturnsTo(dst *mat.Dense) *mat.Dense {
	return copyDense(dst, d.f)
}

// SpecificReturnsTo copies the T×N true specific returns into dst and returns
// it; they are defined on every cell, listed or not. A nil or empty dst is
// allocated.
func (d *Market) SpecificReturnsTo(dst *mat.Dense) *mat.Dense {
	return copyDense(dst, d.e)
}

// TrueReturnsTo sets dst to the T×N true returns B·f_i + e_i of every cell,
// before rounding, missing days and data faults, and returns it. A nil or
// empty dst is allocated. Cost O(T·N·K).
func (d *Market) TrueReturnsTo(dst *mat.Dense) *mat.Dense {
	t, n := d.e.Dims()
	dst = dense.SizeDense(dst, t, n)
	dense.Mul(dst, d.f, d.b.T())
	dst.Add(dst, d.e)
	return dst
}

// FactorCovarianceTo sets dst to the K×K conditional factor covariance F_i of
// row i and returns it:
//
//	F_i = diag(s_i) C diag(s_i)
//
// with C the factor correlation and s_i the factor volatilities of row i
// (base volatility, GARCH multiplier and stress multiplier). A nil or empty
// dst is allocated.
func (d *Market) FactorCovarianceTo(dst *mat.SymDense, i int) *mat.SymDense {
	s := d.fsdRow(i)
	k := len(s)
	dst = dense.SizeSym(dst, k)
	for a := 0; a < k; a++ {
		for b := a; b < k; b++ {
			dst.SetSym(a, b, s[a]*d.corr.At(a, b)*s[b])
		}
	}
	return dst
}

// SpecificVariancesTo copies the N conditional specific variances d_i of row
// i into dst and returns it. A nil dst is allocated.
func (d *Market) SpecificVariancesTo(dst []float64, i int) []float64 {
	t, n := d.svar.Dims()
	if i < 0 || i >= t {
		panic(mat.ErrRowAccess)
	}
	if dst == nil {
		dst = make([]float64, n)
	} else if len(dst) != n {
		panic(mat.ErrShape)
	}
	copy(dst, d.svar.RawRowView(i))
	return dst
}

// TrueCovarianceTo sets dst to the N×N true conditional covariance of row i,
// the one the simulation drew that row from, and returns it:
//
//	Σ_i = B F_i Bᵀ + diag(d_i)
//
// It changes from row to row with the volatility clustering and the stress
// episode (unless the demo is Stationary). It covers every asset, listed on
// row i or not. A nil or empty dst is allocated. Cost O(N²·K), split across
// cores.
func (d *Market) TrueCovarianceTo(dst *mat.SymDense, i int) *mat.SymDense {
	s := d.fsdRow(i)
	n, k := d.b.Dims()
	if dst != nil && !dst.IsEmpty() && dst.SymmetricDim() != n {
		panic(mat.ErrShape)
	}
	// Σ_i − D_i = M Mᵀ with M = B·diag(s_i)·L and L the Cholesky factor of
	// C: the Gram matrix of the rows of M.
	var sl mat.Dense
	sl.Scale(1, d.chol)
	for a := 0; a < k; a++ {
		row := sl.RawRowView(a)
		for b := range row {
			row[b] *= s[a]
		}
	}
	var m mat.Dense
	m.Mul(d.b, &sl)
	dst = dense.XWXt(dst, &m, nil)
	v := d.svar.RawRowView(i)
	for j := 0; j < n; j++ {
		dst.SetSym(j, j, dst.At(j, j)+v[j])
	}
	return dst
}

func (d *Market) fsdRow(i int) []float64 {
	if t, _ := d.fsd.Dims(); i < 0 || i >= t {
		panic(mat.ErrRowAccess)
	}
	return d.fsd.RawRowView(i)
}

func copyDense(dst *mat.Dense, src *mat.Dense) *mat.Dense {
	r, c := src.Dims()
	dst = dense.SizeDense(dst, r, c)
	dst.Copy(src)
	return dst
}
