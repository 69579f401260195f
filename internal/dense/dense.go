// Package dense holds the dense products that the estimators share: the
// weighted cross-product XᵀWX (N×N) and the weighted Gram matrix W½XXᵀW½
// (T×T) of a T×N matrix X with observation weights w on its rows.
//
// The products are split into blocks computed on all cores. Every block is
// computed by the same sequence of operations whatever the number of cores,
// so the results are bit-identical for any GOMAXPROCS.
package dense

import (
	"math"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// blockSize is the side of the square blocks of the output handed to workers.
const blockSize = 192

// XtWX sets dst to Xᵀ·diag(w)·X = Σ_t w_t x_t x_tᵀ, where x_t is row t of the
// T×N matrix x, and returns dst. A nil w means unit weights. A nil or empty
// dst is allocated; a dst of the wrong size panics with mat.ErrShape, as does
// a w whose length is not T. x must be finite and w non-negative: the callers
// validate data. Cost O(T·N²) flops, split across cores.
func XtWX(dst *mat.SymDense, x mat.Matrix, w []float64) *mat.SymDense {
	t, n := x.Dims()
	dst = prepare(dst, n)
	y := scaledRows(x, w)
	syrkT(dst, y, t, n)
	return dst
}

// XWXt sets dst to the T×T matrix with elements √w_s·√w_t·x_s·x_t, the Gram
// matrix of the rows of diag(√w)·X, and returns dst. Arguments are as for
// XtWX. Cost O(T²·N) flops, split across cores.
func XWXt(dst *mat.SymDense, x mat.Matrix, w []float64) *mat.SymDense {
	t, n := x.Dims()
	dst = prepare(dst, t)
	y := scaledRows(x, w)
	// The Gram matrix of rows is XᵀX of the transpose.
	yt := make([]float64, t*n)
	for i := 0; i < t; i++ {
		row := y[i*n : (i+1)*n]
		for j, v := range row {
			yt[j*t+i] = v
		}
	}
	syrkT(dst, yt, n, t)
	return dst
}

func prepare(dst *mat.SymDense, n int) *mat.SymDense {
	switch {
	case dst == nil:
		return mat.NewSymDense(n, nil)
	case dst.IsEmpty():
		dst.ReuseAsSym(n)
	case dst.SymmetricDim() != n:
		panic(mat.ErrShape)
	}
	return dst
}

// scaledRows returns diag(√w)·x as a fresh row-major slice.
func scaledRows(x mat.Matrix, w []float64) []float64 {
	t, n := x.Dims()
	if w != nil && len(w) != t {
		panic(mat.ErrShape)
	}
	y := make([]float64, t*n)
	raw, isDense := x.(*mat.Dense)
	for i := 0; i < t; i++ {
		row := y[i*n : (i+1)*n]
		if isDense {
			copy(row, raw.RawRowView(i))
		} else {
			for j := range row {
				row[j] = x.At(i, j)
			}
		}
		if w != nil {
			s := math.Sqrt(w[i])
			for j := range row {
				row[j] *= s
			}
		}
	}
	return y
}

// syrkT sets the upper triangle of dst to yᵀy for the r×c row-major y.
func syrkT(dst *mat.SymDense, y []float64, r, c int) {
	raw := dst.RawSymmetric()
	if r == 0 {
		for i := 0; i < c; i++ {
			row := raw.Data[i*raw.Stride+i : i*raw.Stride+c]
			clear(row)
		}
		return
	}
	type task struct{ i, j int }
	var tasks []task
	for i := 0; i < c; i += blockSize {
		for j := i; j < c; j += blockSize {
			tasks = append(tasks, task{i, j})
		}
	}
	work := make(chan task)
	var wg sync.WaitGroup
	workers := min(runtime.GOMAXPROCS(0), len(tasks))
	for k := 0; k < workers; k++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for tk := range work {
				bi := min(blockSize, c-tk.i)
				bj := min(blockSize, c-tk.j)
				a := blas64.General{Rows: r, Cols: bi, Stride: c, Data: y[tk.i:]}
				b := blas64.General{Rows: r, Cols: bj, Stride: c, Data: y[tk.j:]}
				out := blas64.General{Rows: bi, Cols: bj, Stride: raw.Stride, Data: raw.Data[tk.i*raw.Stride+tk.j:]}
				if tk.i == tk.j {
					sym := blas64.Symmetric{N: bi, Stride: raw.Stride, Data: out.Data, Uplo: blas.Upper}
					blas64.Syrk(blas.Trans, 1, a, 0, sym)
				} else {
					blas64.Gemm(blas.Trans, blas.NoTrans, 1, a, b, 0, out)
				}
			}
		}()
	}
	for _, tk := range tasks {
		work <- tk
	}
	close(work)
	wg.Wait()
}
