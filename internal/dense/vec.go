package dense

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// SymVec sets dst to A·x for the symmetric N×N matrix a and returns dst:
//
//	dst_i = Σ_j a_ij x_j
//
// It reads the stored triangle once, on all cores. Each stored row i of an
// upper triangle gives, in one pass, the dot product of its part right of
// the diagonal with x (the row's own element of dst) and that part times
// x_i (the mirrored column, the elements of dst below i). The rows are cut
// into blocks whose number and bounds depend on N alone; each block adds
// its mirrored columns into a vector of its own, and the vectors are added
// to dst block after block, so the result is bit-identical for any
// GOMAXPROCS. A lower triangle goes to blas64.Symv on one core.
//
// A nil dst is allocated; a dst or x whose length is not N panics with
// mat.ErrShape. dst must not share memory with x. Cost 2·N² flops and one
// pass over N²/2 values, the memory traffic of half of a dense A·x; a
// scratch vector of N values per block (from a pool).
func SymVec(dst []float64, a blas64.Symmetric, x []float64) []float64 {
	n := a.N
	if len(x) != n || (dst != nil && len(dst) != n) {
		panic(mat.ErrShape)
	}
	if dst == nil {
		dst = make([]float64, n)
	}
	if n == 0 {
		return dst
	}
	if a.Uplo != blas.Upper {
		blas64.Symv(1, a, blas64.Vector{N: n, Inc: 1, Data: x}, 0, blas64.Vector{N: n, Inc: 1, Data: dst})
		return dst
	}
	nb := symvBlocks(n)
	bounds := make([]int, nb+1)
	for b := range bounds {
		// Equal shares of the triangle: rows above bound b hold a
		// fraction b/nb of its elements.
		bounds[b] = n - int(math.Round(float64(n)*math.Sqrt(1-float64(b)/float64(nb))))
	}
	bounds[nb] = n
	buf := getBuf(nb * n)
	defer (&packed{buf: buf}).release()
	parallel(nb, procs(), func(b int) {
		lo, hi := bounds[b], bounds[b+1]
		z := buf[b*n : (b+1)*n]
		clear(z[lo:])
		symvBlock(dst, a, x, z, lo, hi)
	})
	// dst_j gets the mirrored columns of the blocks above row j, in order.
	for b := 0; b < nb; b++ {
		z := buf[b*n : (b+1)*n]
		for j := bounds[b] + 1; j < n; j++ {
			dst[j] += z[j]
		}
	}
	return dst
}

// symvBlock sets dst_i, lo ≤ i < hi, to the row's part on and right of
// the diagonal times x, and adds the mirrored columns x_i·a_ij (j > i) to
// z. Four rows at a time share each pass over x and z: their 4×4 triangle
// element by element, the rectangle to its right on the kernel.
func symvBlock(dst []float64, a blas64.Symmetric, x, z []float64, lo, hi int) {
	n, ld := a.N, a.Stride
	i := lo
	for ; i+4 <= hi; i += 4 {
		var out [4]float64
		s := [4]float64{x[i], x[i+1], x[i+2], x[i+3]}
		for r := range 4 {
			row := a.Data[(i+r)*ld:]
			for c := i + r + 1; c < i+4; c++ {
				out[r] += row[c] * x[c]
				z[c] += s[r] * row[c]
			}
		}
		if c0 := i + 4; c0 < n {
			a4 := a.Data[i*ld+c0:]
			if !symvRows4(n-c0, a4, ld, x[c0:], z[c0:], &s, &out) {
				for r := range 4 {
					out[r] += dotAxpyGo(a4[r*ld:r*ld+n-c0], x[c0:], z[c0:], s[r])
				}
			}
		}
		for r := range 4 {
			dst[i+r] = a.Data[(i+r)*ld+i+r]*s[r] + out[r]
		}
	}
	for ; i < hi; i++ {
		row := a.Data[i*ld+i : i*ld+n]
		xi := x[i]
		dst[i] = row[0]*xi + dotAxpyVec(row[1:], x[i+1:], z[i+1:], xi)
	}
}

// symvBlocks is the number of row blocks of SymVec: one below 256 rows,
// where the goroutines cost more than they save, else eight, enough for
// the cores of a small machine to finish together.
func symvBlocks(n int) int {
	if n < 256 {
		return 1
	}
	return 8
}

// MulVecT sets dst to Bᵀ·x for the N×K matrix b and returns dst:
//
//	dst_c = Σ_i b_ic x_i
//
// summed in order of i. It is meant for the thin loadings of a factor
// model (K ≪ N) and runs on one core. A nil dst is allocated; an x whose
// length is not N, or a dst whose length is not K, panics with
// mat.ErrShape. Cost 2·N·K flops.
func MulVecT(dst []float64, b blas64.General, x []float64) []float64 {
	if len(x) != b.Rows || (dst != nil && len(dst) != b.Cols) {
		panic(mat.ErrShape)
	}
	if dst == nil {
		dst = make([]float64, b.Cols)
	}
	clear(dst)
	mulTAdd(b.Rows, b.Cols, b.Data, b.Stride, x, dst)
	return dst
}

// MulVecDiag sets dst to B·z + diag(d)·x for the N×K matrix b and returns
// dst:
//
//	dst_i = Σ_c b_ic z_c + d_i x_i
//
// A nil d drops the diagonal term (x is then not read and may be nil).
// dst may be x. A nil dst is allocated; a z whose length is not K, or d, x
// or dst whose length is not N, panics with mat.ErrShape. One core; cost
// 2·N·K flops.
func MulVecDiag(dst []float64, b blas64.General, z, d, x []float64) []float64 {
	n := b.Rows
	if len(z) != b.Cols || (dst != nil && len(dst) != n) || (d != nil && (len(d) != n || len(x) != n)) {
		panic(mat.ErrShape)
	}
	if dst == nil {
		dst = make([]float64, n)
	}
	mulRows(n, b.Cols, b.Data, b.Stride, z, d, x, dst)
	return dst
}

func dotAxpyGo(a, x, z []float64, s float64) float64 {
	x, z = x[:len(a)], z[:len(a)]
	var acc float64
	for j, v := range a {
		acc += v * x[j]
		z[j] += s * v
	}
	return acc
}

// mulTAddGo adds Σ_i x_i b_ic to y_c for columns c0 ≤ c < k.
func mulTAddGo(rows, c0, k int, b []float64, ldb int, x, y []float64) {
	if c0 >= k {
		return
	}
	y = y[c0:k]
	for i := 0; i < rows; i++ {
		row := b[i*ldb+c0 : i*ldb+k]
		xi := x[i]
		for c, v := range row {
			y[c] += xi * v
		}
	}
}

// mulRowsGo sets dst_i = b_i·z (+ d_i x_i) for r0 ≤ i < rows.
func mulRowsGo(r0, rows, k int, b []float64, ldb int, z, d, x, dst []float64) {
	for i := r0; i < rows; i++ {
		row := b[i*ldb : i*ldb+k]
		var s float64
		for c, v := range row {
			s += v * z[c]
		}
		if d != nil {
			s += d[i] * x[i]
		}
		dst[i] = s
	}
}
