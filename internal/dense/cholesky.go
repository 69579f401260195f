package dense

import (
	"math"
	"runtime"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

// Cholesky is the factorization A = UᵀU of a symmetric positive definite
// N×N matrix, U upper triangular, computed on all cores by the products of
// this package. The zero value is an empty factorization; Factorize fills
// it and may be called again to reuse its storage for another matrix of the
// same size. It is read-only after Factorize and safe for concurrent use.
type Cholesky struct {
	n  int
	ok bool
	u  []float64 // N×N row-major, U in the upper triangle, the rest zero
}

// cholBase is the order at or below which a diagonal block is factored,
// and a triangular solve done, element by element; above it the work is
// split in two and the off-diagonal block goes to the products. A variable
// so that the tests can drive the recursion deep on small matrices.
var cholBase = 48

// copyRows is the block of rows Factorize copies on one core.
const copyRows = 64

// Factorize computes the Cholesky factor of a and reports whether a is
// positive definite:
//
//	A = UᵀU,   u_jj = √(a_jj − Σ_{p<j} u_pj²),   u_ji = (a_ji − Σ_{p<j} u_pj u_pi) / u_jj
//
// It reads only the upper triangle of a (a *mat.SymDense in place, any
// other mat.Symmetric through At) and does not modify it. It returns false,
// leaving the receiver unusable (Solve panics), when a pivot is not finite
// and positive: a is not positive definite, or is so near singular that
// rounding made it so, or holds NaN or ±Inf.
//
// The factorization is the recursive one of Gustavson (1997): the leading
// half is factored, the off-diagonal block solved against it (a triangular
// solve whose own off-diagonal part is a product), the trailing half
// updated by the symmetric product A22 − U12ᵀU12 on the multi-core kernel,
// then factored. Every split depends on N alone, and the products sum each
// element in a fixed order, so the factor is bit-identical for any
// GOMAXPROCS. Cost N³/3 flops, almost all in the products, and N² memory
// for the factor. Built with the openblas tag it runs LAPACK's dpotrf
// algorithm (gonum's lapack64.Potrf) on OpenBLAS instead.
//
// References:
//
//	Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed.,
//	§4.2 (Algorithm 4.2.1, and §4.2.9 on block Cholesky). Johns Hopkins.
//
//	Gustavson, F. G. (1997). Recursion leads to automatic variable blocking
//	for dense linear-algebra algorithms. IBM Journal of Research and
//	Development 41(6), 737–756.
func (c *Cholesky) Factorize(a mat.Symmetric) (ok bool) {
	n := a.SymmetricDim()
	// The factorization writes only the upper triangle, so a new buffer's
	// lower triangle stays as make left it, zero, and its pages are never
	// touched: nearly half of an N×N buffer the process never faults in. A
	// reused buffer may hold another size's factor there and is cleared.
	reused := cap(c.u) >= n*n
	if !reused {
		c.u = make([]float64, n*n)
	}
	c.n, c.u = n, c.u[:n*n]
	if s, isRaw := a.(mat.RawSymmetricer); isRaw && s.RawSymmetric().Uplo == blas.Upper {
		raw := s.RawSymmetric()
		// Rows in blocks on all cores: at large N the copy is the first
		// touch of the factor's pages, which costs more than the copy.
		parallel((n+copyRows-1)/copyRows, procs(), func(b int) {
			for i := b * copyRows; i < min(n, (b+1)*copyRows); i++ {
				if reused {
					clear(c.u[i*n : i*n+i])
				}
				copy(c.u[i*n+i:i*n+n], raw.Data[i*raw.Stride+i:i*raw.Stride+n])
			}
		})
	} else {
		for i := 0; i < n; i++ {
			if reused {
				clear(c.u[i*n : i*n+i])
			}
			for j := i; j < n; j++ {
				c.u[i*n+j] = a.At(i, j)
			}
		}
	}
	if viaBLAS {
		_, c.ok = lapack64.Potrf(blas64.Symmetric{N: n, Stride: n, Data: c.u, Uplo: blas.Upper})
		// dpotrf takes a +Inf pivot for positive; this package does not.
		for j := 0; j < n && c.ok; j++ {
			c.ok = !math.IsInf(c.u[j*n+j], 0)
		}
	} else {
		c.ok = cholRecursive(c.u, n, 0, n)
	}
	return c.ok
}

// cholRecursive factors the diagonal block [lo, hi)² of the upper triangle
// of u (N×N, stride n) in place, reading and updating nothing outside it.
func cholRecursive(u []float64, n, lo, hi int) bool {
	m := hi - lo
	if m <= cholBase {
		return cholUnblocked(u, n, lo, hi)
	}
	mid := lo + cholSplit(m)
	if !cholRecursive(u, n, lo, mid) {
		return false
	}
	// U12 = U11⁻ᵀ·A12, in place in the rows lo..mid, columns mid..hi.
	trsmUT(u, n, lo, mid-lo, u[lo*n+mid:], n, hi-mid)
	// A22 ← A22 − U12ᵀU12, upper triangle only.
	subSyrk(u[mid*n+mid:], n, hi-mid, mid-lo, u[lo*n+mid:], n)
	return cholRecursive(u, n, mid, hi)
}

// cholSplit returns the size of the leading part of an m×m split: half,
// rounded to a multiple of unit so that the products' slivers line up.
func cholSplit(m int) int {
	h := (m/2 + unit/2) / unit * unit
	return min(max(h, unit, 1), m-1)
}

// cholUnblocked is the right-looking outer-product Cholesky (Golub & Van
// Loan, Algorithm 4.2.1, by rows of U) of the block [lo, hi)².
func cholUnblocked(u []float64, n, lo, hi int) bool {
	for j := lo; j < hi; j++ {
		d := u[j*n+j]
		if !(d > 0) || math.IsInf(d, 1) {
			return false
		}
		d = math.Sqrt(d)
		u[j*n+j] = d
		row := u[j*n+j+1 : j*n+hi]
		inv := 1 / d
		for k := range row {
			row[k] *= inv
		}
		for i := j + 1; i < hi; i++ {
			s := row[i-j-1]
			if s == 0 {
				continue
			}
			dst := u[i*n+i : i*n+hi]
			src := row[i-j-1:]
			for k := range dst {
				dst[k] -= s * src[k]
			}
		}
	}
	return true
}

// trsmUT overwrites the m×w block b (stride ldb) with U⁻ᵀ·b, where U is
// the m×m upper triangle of u at (lo, lo) (stride n): forward substitution
// on Uᵀ·X = B. Above cholBase the triangle is split in two and
// X2 = U22⁻ᵀ·(B2 − U12ᵀ·X1), the product on the kernel.
func trsmUT(u []float64, n, lo, m int, b []float64, ldb, w int) {
	if m == 0 || w == 0 {
		return
	}
	if m <= cholBase {
		parallelCols(w, func(c0, c1 int) {
			for i := 0; i < m; i++ {
				ui := u[(lo+i)*n+lo:]
				xi := b[i*ldb+c0 : i*ldb+c1]
				inv := 1 / ui[i]
				for k := range xi {
					xi[k] *= inv
				}
				for p := i + 1; p < m; p++ {
					if s := ui[p]; s != 0 {
						axpy(-s, xi, b[p*ldb+c0:p*ldb+c1])
					}
				}
			}
		})
		return
	}
	m1 := cholSplit(m)
	trsmUT(u, n, lo, m1, b, ldb, w)
	// B2 ← B2 − U12ᵀ·X1 with U12 rows lo..lo+m1, columns lo+m1..lo+m.
	subMulTA(b[m1*ldb:], ldb, m-m1, w, m1, u[lo*n+lo+m1:], n, false, b, ldb)
	trsmUT(u, n, lo+m1, m-m1, b[m1*ldb:], ldb, w)
}

// trsmU overwrites the m×w block b (stride ldb) with U⁻¹·b: backward
// substitution on U·X = B, split like trsmUT with
// X1 = U11⁻¹·(B1 − U12·X2).
func trsmU(u []float64, n, lo, m int, b []float64, ldb, w int) {
	if m == 0 || w == 0 {
		return
	}
	if m <= cholBase {
		parallelCols(w, func(c0, c1 int) {
			for i := m - 1; i >= 0; i-- {
				ui := u[(lo+i)*n+lo:]
				xi := b[i*ldb+c0 : i*ldb+c1]
				for p := i + 1; p < m; p++ {
					if s := ui[p]; s != 0 {
						axpy(-s, b[p*ldb+c0:p*ldb+c1], xi)
					}
				}
				inv := 1 / ui[i]
				for k := range xi {
					xi[k] *= inv
				}
			}
		})
		return
	}
	m1 := cholSplit(m)
	trsmU(u, n, lo+m1, m-m1, b[m1*ldb:], ldb, w)
	// B1 ← B1 − U12·X2: the product PᵀQ with P = U12ᵀ, read transposed.
	subMulTA(b, ldb, m1, w, m-m1, u[lo*n+lo+m1:], n, true, b[m1*ldb:], ldb)
	trsmU(u, n, lo, m1, b, ldb, w)
}

// subMulTA sets the m×w block c (stride ldc) to c − PᵀQ, where Q is the
// k×w block q (stride ldq) and P is the k×m block p (stride ldp), or the
// m×k block p read transposed when trans is set.
func subMulTA(c []float64, ldc, m, w, k int, p []float64, ldp int, trans bool, q []float64, ldq int) {
	if m == 0 || w == 0 || k == 0 {
		return
	}
	if viaBLAS {
		pa := blas64.General{Rows: k, Cols: m, Stride: ldp, Data: p}
		if trans {
			pa.Rows, pa.Cols = m, k
		}
		blasGemm(blas64.General{Rows: m, Cols: w, Stride: ldc, Data: c}, pa, !trans,
			blas64.General{Rows: k, Cols: w, Stride: ldq, Data: q}, false, k, true)
		return
	}
	po := &operand{data: p, stride: ldp, trans: trans, kw: minusOnes(k)}
	qo := &operand{data: q, stride: ldq}
	accumulate(c, ldc, m, w, k, po, qo, false, true, best)
}

// subSyrk sets the upper triangle of the m×m block c (stride ldc) to
// c − PᵀP, where P is the k×m block p (stride ldp).
func subSyrk(c []float64, ldc, m, k int, p []float64, ldp int) {
	if m == 0 || k == 0 {
		return
	}
	// P is packed twice, once negated: a shared operand would square the
	// sign. The packing is O(k·m) against the product's O(k·m²).
	po := &operand{data: p, stride: ldp, kw: minusOnes(k)}
	qo := &operand{data: p, stride: ldp}
	accumulate(c, ldc, m, m, k, po, qo, true, true, best)
}

func minusOnes(k int) []float64 {
	s := make([]float64, k)
	for i := range s {
		s[i] = -1
	}
	return s
}

// colChunk is the width of the column blocks that the element-by-element
// triangular solves share among the cores; each column is computed by one
// goroutine in the same order whatever the number of cores.
const colChunk = 256

func parallelCols(w int, f func(c0, c1 int)) {
	chunks := (w + colChunk - 1) / colChunk
	parallel(chunks, procs(), func(t int) {
		f(t*colChunk, min(w, (t+1)*colChunk))
	})
}

func procs() int { return runtime.GOMAXPROCS(0) }

// dotSum returns Σ_k x_k y_k in four interleaved partial sums, added in a
// fixed order at the end.
func dotSum(x, y []float64) float64 {
	y = y[:len(x)]
	var s0, s1, s2, s3 float64
	k := 0
	for ; k+4 <= len(x); k += 4 {
		s0 += x[k] * y[k]
		s1 += x[k+1] * y[k+1]
		s2 += x[k+2] * y[k+2]
		s3 += x[k+3] * y[k+3]
	}
	for ; k < len(x); k++ {
		s0 += x[k] * y[k]
	}
	return (s0 + s1) + (s2 + s3)
}

// axpyGo sets y ← y + s·x, the product rounded before the sum (the
// conversion keeps the compiler from fusing them, as the AVX2 kernel does
// not).
func axpyGo(s float64, x, y []float64) {
	y = y[:len(x)]
	for k, v := range x {
		y[k] += float64(s * v)
	}
}

// Axpy sets y ← y + s·x (y at least as long as x), each product rounded
// before it is added (no fused multiply-add), so the digits are those of
// the loop y[k] += float64(s*x[k]) whichever kernel runs (AVX2 where the
// machine has it). It is the package's axpy, exported for the
// evaluation's sparse products.
func Axpy(s float64, x, y []float64) { axpy(s, x, y) }

// Size returns N, the order of the factored matrix.
func (c *Cholesky) Size() int { return c.n }

// ok panics unless the receiver holds a successful factorization.
func (c *Cholesky) check() {
	if !c.ok {
		panic("dense: Cholesky not factorized or not positive definite")
	}
}

// LogDet returns log det A = 2·Σ_j log u_jj. Cost O(N).
func (c *Cholesky) LogDet() float64 {
	c.check()
	var s float64
	for j := 0; j < c.n; j++ {
		s += math.Log(c.u[j*c.n+j])
	}
	return 2 * s
}

// UTo sets dst to the upper triangular factor U and returns it. A nil or
// empty dst is allocated; one of another size panics with mat.ErrShape.
func (c *Cholesky) UTo(dst *mat.TriDense) *mat.TriDense {
	c.check()
	n := c.n
	switch {
	case dst == nil:
		dst = mat.NewTriDense(max(n, 1), mat.Upper, nil)
		if n == 0 {
			dst = &mat.TriDense{}
		}
	case dst.IsEmpty():
		if n > 0 {
			dst.ReuseAsTri(n, mat.Upper)
		}
	default:
		if r, _ := dst.Dims(); r != n {
			panic(mat.ErrShape)
		}
	}
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			dst.SetTri(i, j, c.u[i*n+j])
		}
	}
	return dst
}

// SolveTo sets dst to A⁻¹·b = U⁻¹·(U⁻ᵀ·b) for the N×M right-hand sides b
// and returns it: two triangular solves, their off-diagonal blocks on the
// products of this package (all cores). dst may be b itself when b is a
// *mat.Dense; otherwise b is not modified. A nil or empty dst is allocated;
// a dst that is not N×M, or a b without N rows, panics with mat.ErrShape.
// Cost 2·N²·M flops.
func (c *Cholesky) SolveTo(dst *mat.Dense, b mat.Matrix) *mat.Dense {
	c.check()
	r, m := b.Dims()
	if r != c.n {
		panic(mat.ErrShape)
	}
	dst = SizeDense(dst, r, m)
	if r == 0 || m == 0 {
		return dst
	}
	if dst != b {
		dst.Copy(b)
	}
	raw := dst.RawMatrix()
	if viaBLAS {
		g := blas64.Triangular{N: c.n, Stride: c.n, Data: c.u, Uplo: blas.Upper, Diag: blas.NonUnit}
		blas64.Trsm(blas.Left, blas.Trans, 1, g, raw)
		blas64.Trsm(blas.Left, blas.NoTrans, 1, g, raw)
		return dst
	}
	trsmUT(c.u, c.n, 0, c.n, raw.Data, raw.Stride, m)
	trsmU(c.u, c.n, 0, c.n, raw.Data, raw.Stride, m)
	return dst
}

// SolveVecTo sets dst to A⁻¹·b = U⁻¹·(U⁻ᵀ·b) and returns it. dst may be b.
// A nil dst is allocated; a dst or b whose length is not N panics with
// mat.ErrShape. Cost 2·N² flops, one pass over U for each triangular solve,
// its blocks of rows shared among the cores.
func (c *Cholesky) SolveVecTo(dst, b []float64) []float64 {
	c.check()
	n := c.n
	if len(b) != n || (dst != nil && len(dst) != n) {
		panic(mat.ErrShape)
	}
	if dst == nil {
		dst = make([]float64, n)
	}
	copy(dst, b)
	c.solveUT(dst)
	c.solveU(dst)
	return dst
}

// vecBlock is the number of rows of U a triangular vector solve takes as a
// block: the block's triangle is solved element by element, its rectangle
// to the right of the triangle is a matrix–vector product shared among the
// cores by columns (solveUT) or rows (solveU), each element summed in a
// fixed order.
const vecBlock = 128

// solveUT overwrites x with U⁻ᵀ·x: for each block of rows, its triangle
// forward, then x2 ← x2 − U12ᵀ·x1 for the columns to the right.
func (c *Cholesky) solveUT(x []float64) {
	n, u := c.n, c.u
	for lo := 0; lo < n; lo += vecBlock {
		hi := min(n, lo+vecBlock)
		for i := lo; i < hi; i++ {
			row := u[i*n : i*n+hi]
			xi := x[i] / row[i]
			x[i] = xi
			for p := i + 1; p < hi; p++ {
				x[p] -= row[p] * xi
			}
		}
		rest := n - hi
		if rest == 0 {
			break
		}
		parallel((rest+colChunk*4-1)/(colChunk*4), procs(), func(t int) {
			c0 := hi + t*colChunk*4
			c1 := min(n, c0+colChunk*4)
			dst := x[c0:c1]
			for i := lo; i < hi; i++ {
				axpy(-x[i], u[i*n+c0:i*n+c1], dst)
			}
		})
	}
}

// solveU overwrites x with U⁻¹·x: for each block of rows from the bottom,
// x1 ← x1 − U12·x2 (one dot product per row), then its triangle backward.
func (c *Cholesky) solveU(x []float64) {
	n, u := c.n, c.u
	for hi := n; hi > 0; hi -= vecBlock {
		lo := max(0, hi-vecBlock)
		if hi < n {
			tail := x[hi:n]
			rows := hi - lo
			const per = 16
			parallel((rows+per-1)/per, procs(), func(t int) {
				for i := lo + t*per; i < min(hi, lo+(t+1)*per); i++ {
					x[i] -= dotSum(u[i*n+hi:i*n+n], tail)
				}
			})
		}
		for i := hi - 1; i >= lo; i-- {
			row := u[i*n : i*n+hi]
			s := x[i]
			for p := i + 1; p < hi; p++ {
				s -= row[p] * x[p]
			}
			x[i] = s / row[i]
		}
	}
}
