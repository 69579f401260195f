package dense

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// viaBLAS routes the products to blas64 instead of the kernels of this
// package. It is set in the openblas build, where blas64 is OpenBLAS; the
// default build leaves it off (gonum's blas64 runs on one core for Syrk)
// and its tests switch it on to check the route.
var viaBLAS = openBLAS

// backend names what computes the products: a kernel or blas64.
func backend() string {
	switch {
	case viaBLAS && openBLAS:
		return "openblas"
	case viaBLAS:
		return "blas64"
	}
	return best.name
}

// blasArg describes the r×c matrix x that rowMajor returned as data,
// stride and trans in blas64's terms: the stored matrix, which is xᵀ when
// trans is set.
func blasArg(data []float64, stride int, trans bool, r, c int) blas64.General {
	if trans {
		r, c = c, r
	}
	return blas64.General{Rows: r, Cols: c, Stride: stride, Data: data}
}

func flag(trans bool) blas.Transpose {
	if trans {
		return blas.Trans
	}
	return blas.NoTrans
}

// blasGemm sets c to op(a)·op(b), or c − op(a)·op(b) with sub, where op
// transposes the stored matrix when ta (tb) is set and k is the inner size.
func blasGemm(c blas64.General, a blas64.General, ta bool, b blas64.General, tb bool, k int, sub bool) {
	if c.Rows == 0 || c.Cols == 0 {
		return
	}
	if k == 0 {
		if !sub {
			for i := 0; i < c.Rows; i++ {
				clear(c.Data[i*c.Stride : i*c.Stride+c.Cols])
			}
		}
		return
	}
	alpha, beta := 1.0, 0.0
	if sub {
		alpha, beta = -1, 1
	}
	blas64.Gemm(flag(ta), flag(tb), alpha, a, b, beta, c)
}

// blasXtWX sets the upper triangle of c (N×N) to XᵀWX by Syrk, on a copy
// of X with rows scaled by √w when there are weights.
func blasXtWX(c blas64.Symmetric, data []float64, stride int, trans bool, t, n int, w []float64) {
	if n == 0 {
		return
	}
	if t == 0 {
		clearUpper(c)
		return
	}
	g := blasArg(data, stride, trans, t, n)
	tr := !trans // XᵀX of a stored X, or G·Gᵀ of a stored G = Xᵀ
	if w != nil {
		g, tr = scaledRows(data, stride, trans, t, n, w), true
	}
	blas64.Syrk(flag(tr), 1, g, 0, c)
}

// blasXWXt sets the upper triangle of c (T×T) to diag(√w)·X·Xᵀ·diag(√w).
func blasXWXt(c blas64.Symmetric, data []float64, stride int, trans bool, t, n int, w []float64) {
	if t == 0 {
		return
	}
	if n == 0 {
		clearUpper(c)
		return
	}
	g := blasArg(data, stride, trans, t, n)
	tr := trans
	if w != nil {
		g, tr = scaledRows(data, stride, trans, t, n, w), false
	}
	blas64.Syrk(flag(tr), 1, g, 0, c)
}

// scaledRows returns the T×N row-major copy of X with row t scaled by √w_t.
func scaledRows(data []float64, stride int, trans bool, t, n int, w []float64) blas64.General {
	y := make([]float64, t*n)
	for i := 0; i < t; i++ {
		s := math.Sqrt(w[i])
		row := y[i*n : i*n+n]
		for j := range row {
			if trans {
				row[j] = s * data[j*stride+i]
			} else {
				row[j] = s * data[i*stride+j]
			}
		}
	}
	return blas64.General{Rows: t, Cols: n, Stride: n, Data: y}
}

func clearUpper(c blas64.Symmetric) {
	for i := 0; i < c.N; i++ {
		clear(c.Data[i*c.Stride+i : i*c.Stride+c.N])
	}
}
