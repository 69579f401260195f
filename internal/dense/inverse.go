package dense

import (
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

// InverseTo sets dst to A⁻¹ = U⁻¹U⁻ᵀ and returns it, in dst's storage:
// the triangular inverse X = U⁻¹ in place, then the upper triangle of XXᵀ
// in place, the two steps of LAPACK's dpotri (dtrtri and dlauum). Each is
// recursive like Factorize: a split in two, the halves done by themselves
// and the off-diagonal block by the products of this package on all cores,
// the products with a triangular operand cut into column or row blocks that
// skip its zero half. Cost 2N³/3 flops (N³/3 for each step, against 2N³
// for SolveTo of the identity) and an N²/4 scratch. A nil or empty dst is
// allocated; one of another size panics with mat.ErrShape. Built with the
// openblas tag it runs lapack64.Potri on OpenBLAS instead.
//
// References:
//
//	Du Croz, J. J. & Higham, N. J. (1992). Stability of methods for matrix
//	inversion. IMA Journal of Numerical Analysis 12(1), 1–19 (the blocked
//	triangular inverse; which of their numbered methods it is, from memory).
//
//	Anderson, E. et al. (1999). LAPACK Users' Guide, 3rd ed., SIAM
//	(dpotri = dtrtri followed by dlauum).
func (c *Cholesky) InverseTo(dst *mat.SymDense) *mat.SymDense {
	c.check()
	n := c.n
	dst = SizeSym(dst, n)
	if n == 0 {
		return dst
	}
	// The work is done in dst's storage: U in its upper triangle, zeros
	// below (the products read them as the triangle's zero half).
	raw := dst.RawSymmetric()
	a, lda := raw.Data, raw.Stride
	for i := 0; i < n; i++ {
		clear(a[i*lda : i*lda+i])
		copy(a[i*lda+i:i*lda+n], c.u[i*n+i:i*n+n])
	}
	if viaBLAS {
		lapack64.Potri(blas64.Triangular{N: n, Stride: lda, Data: a, Uplo: blas.Upper, Diag: blas.NonUnit})
		return dst
	}
	// The off-diagonal block of the first split is the largest scratch any
	// level needs, one level at a time.
	var t []float64
	if n > cholBase {
		m1 := cholSplit(n)
		t = getBuf(m1 * (n - m1))
		defer bufs.Put(&t)
	}
	triInv(a, lda, 0, n, t)
	lauum(a, lda, 0, n, t)
	return dst
}

// triInv overwrites the upper triangle of the diagonal block [lo, hi)² of a
// (stride lda, zeros below the diagonal) with its inverse. With U split at
// mid,
//
//	X11 = U11⁻¹,   X22 = U22⁻¹,   T = U12·X22,   X12 = −X11·T,
//
// T in the scratch t.
func triInv(a []float64, lda, lo, hi int, t []float64) {
	m := hi - lo
	if m <= cholBase {
		triInvUnblocked(a, lda, lo, hi)
		return
	}
	mid := lo + cholSplit(m)
	m1, m2 := mid-lo, hi-mid
	triInv(a, lda, lo, mid, t)
	triInv(a, lda, mid, hi, t)
	mulUpperRight(t, m2, m1, m2, a[lo*lda+mid:], lda, a[mid*lda+mid:], lda)
	mulUpperLeft(a[lo*lda+mid:], lda, m1, m2, a[lo*lda+lo:], lda, t, m2, true)
}

// triInvUnblocked inverts the upper triangle of the block [lo, hi)² column
// by column: from X·U = I, x_jj = 1/u_jj and, for i < j,
// x_ij = −(Σ_{i≤p<j} x_ip·u_pj)/u_jj, with the columns left of j already
// inverted and column j still U's.
func triInvUnblocked(a []float64, lda, lo, hi int) {
	s := make([]float64, hi-lo)
	for j := lo; j < hi; j++ {
		for i := lo; i < j; i++ {
			var v float64
			for p := i; p < j; p++ {
				v += a[i*lda+p] * a[p*lda+j]
			}
			s[i-lo] = v
		}
		inv := 1 / a[j*lda+j]
		for i := lo; i < j; i++ {
			a[i*lda+j] = -s[i-lo] * inv
		}
		a[j*lda+j] = inv
	}
}

// lauum overwrites the upper triangle X of the diagonal block [lo, hi)² of
// a (stride lda) with the upper triangle of XXᵀ. With X split at mid,
//
//	(XXᵀ)11 = X11X11ᵀ + X12X12ᵀ,   (XXᵀ)12 = X12X22ᵀ,   (XXᵀ)22 = X22X22ᵀ,
//
// in that order, so that each step reads X12 and X22 before they change.
func lauum(a []float64, lda, lo, hi int, t []float64) {
	m := hi - lo
	if m <= cholBase {
		lauumUnblocked(a, lda, lo, hi)
		return
	}
	mid := lo + cholSplit(m)
	m1, m2 := mid-lo, hi-mid
	lauum(a, lda, lo, mid, t)
	x12 := a[lo*lda+mid:]
	p := &operand{data: x12, stride: lda, trans: true} // P(k, i) = X12(i, k)
	accumulate(a[lo*lda+lo:], lda, m1, m1, m2, p, p, true, true, best)
	mulUpperTRight(t, m2, m1, m2, x12, lda, a[mid*lda+mid:], lda)
	for i := 0; i < m1; i++ {
		copy(x12[i*lda:i*lda+m2], t[i*m2:(i+1)*m2])
	}
	lauum(a, lda, mid, hi, t)
}

// lauumUnblocked is lauum element by element, row after row: element
// (i, j ≥ i) of XXᵀ is Σ_{p≥j} x_ip·x_jp, which reads row i only at and
// right of j and the rows below i, none of them overwritten yet.
func lauumUnblocked(a []float64, lda, lo, hi int) {
	for i := lo; i < hi; i++ {
		for j := i; j < hi; j++ {
			var v float64
			for p := j; p < hi; p++ {
				v += a[i*lda+p] * a[j*lda+p]
			}
			a[i*lda+j] = v
		}
	}
}

// triBlock is the width of the column (or row) blocks of the products with
// a triangular operand: each block of the output needs only the reductions
// where the triangle is not zero, so narrower blocks skip more of its zero
// half (with b blocks, a share (b+1)/2b of the dense work is done) at the
// cost of more, smaller products. A variable so that the tests can cut
// small matrices into many blocks.
var triBlock = 2 * tile

// mulUpperRight sets the m×n block c (stride ldc) to B·R, B the m×n block b
// (stride ldb), R the upper triangular n×n block r (stride ldr, zeros
// below): column j of the product needs the reductions p ≤ j only.
func mulUpperRight(c []float64, ldc, m, n int, b []float64, ldb int, r []float64, ldr int) {
	for j0 := 0; j0 < n; j0 += triBlock {
		j1 := min(n, j0+triBlock)
		p := &operand{data: b, stride: ldb, trans: true} // P(k, i) = B(i, k)
		q := &operand{data: r[j0:], stride: ldr}         // Q(k, j) = R(k, j0+j)
		accumulate(c[j0:], ldc, m, j1-j0, j1, p, q, false, false, best)
	}
}

// mulUpperTRight sets the m×n block c (stride ldc) to B·Rᵀ, B the m×n block
// b (stride ldb), R the upper triangular n×n block r (stride ldr): column j
// of the product is Σ_{p≥j} B(:, p)·R(j, p).
func mulUpperTRight(c []float64, ldc, m, n int, b []float64, ldb int, r []float64, ldr int) {
	for j0 := 0; j0 < n; j0 += triBlock {
		j1 := min(n, j0+triBlock)
		p := &operand{data: b[j0:], stride: ldb, trans: true}        // P(k, i) = B(i, j0+k)
		q := &operand{data: r[j0*ldr+j0:], stride: ldr, trans: true} // Q(k, j) = R(j0+j, j0+k)
		accumulate(c[j0:], ldc, m, j1-j0, n-j0, p, q, false, false, best)
	}
}

// mulUpperLeft sets the m×n block c (stride ldc) to R·B, or −R·B with neg,
// R the upper triangular m×m block r (stride ldr), B the m×n block b
// (stride ldb): row i of the product is Σ_{p≥i} R(i, p)·B(p, :).
func mulUpperLeft(c []float64, ldc, m, n int, r []float64, ldr int, b []float64, ldb int, neg bool) {
	for i0 := 0; i0 < m; i0 += triBlock {
		i1 := min(m, i0+triBlock)
		p := &operand{data: r[i0*ldr+i0:], stride: ldr, trans: true} // P(k, i) = R(i0+i, i0+k)
		if neg {
			p.kw = minusOnes(m - i0)
		}
		q := &operand{data: b[i0*ldb:], stride: ldb} // Q(k, j) = B(i0+k, j)
		accumulate(c[i0*ldc:], ldc, i1-i0, n, m-i0, p, q, false, false, best)
	}
}
