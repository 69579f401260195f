// Package dense holds the dense products that the estimators share: the
// weighted cross-product XᵀWX (N×N) and the weighted Gram matrix W½XXᵀW½
// (T×T) of a T×N matrix X with observation weights w on its rows, and the
// plain products AᵀB, AB and C − AB.
//
// The products are computed the way optimized BLAS libraries compute them
// (Goto & van de Geijn 2008): the operands are packed once into contiguous
// slivers, the output is cut into cache-sized tiles shared among all cores,
// and a register-blocked micro-kernel — Go assembly using AVX-512 or AVX2
// with FMA where the CPU and operating system support them, portable Go
// otherwise or with the purego build tag — does the arithmetic. Only the
// upper triangle of a symmetric product is computed.
//
// Every element is summed in a fixed order that depends on the sizes and the
// kernel only, never on the number of cores, so the results are
// bit-identical for any GOMAXPROCS on a given machine.
//
// Built with the openblas tag (cgo, Debian's libopenblas-dev,
// CGO_LDFLAGS=-lopenblas), the products go to OpenBLAS through blas64
// instead, and gonum's own products in every package use it too. OpenBLAS
// picks its own summation order and threads: its results agree with the
// default build to rounding, not bit for bit.
//
// References:
//
//	Goto, K. & van de Geijn, R. A. (2008). Anatomy of high-performance matrix
//	multiplication. ACM Transactions on Mathematical Software 34(3), 12.
package dense

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// XtWX sets dst to Xᵀ·diag(w)·X and returns dst:
//
//	dst_ij = Σ_t w_t x_ti x_tj
//
// where x is T×N (rows are observations). A nil w means unit weights. There
// is no divisor. A nil or empty dst is allocated; a dst of the wrong size
// panics with mat.ErrShape, as does a w whose length is not T. x must be
// finite and w non-negative: the callers validate data. x and w are not
// modified. Cost T·N² flops on all cores, and a packed copy of x (two
// with weights).
func XtWX(dst *mat.SymDense, x mat.Matrix, w []float64) *mat.SymDense {
	t, n := x.Dims()
	if w != nil && len(w) != t {
		panic(mat.ErrShape)
	}
	dst = SizeSym(dst, n)
	data, stride, trans := rowMajor(x)
	p := &operand{data: data, stride: stride, trans: trans, kw: w}
	q := p
	if w != nil {
		q = &operand{data: data, stride: stride, trans: trans}
	}
	raw := dst.RawSymmetric()
	if viaBLAS {
		blasXtWX(raw, data, stride, trans, t, n, w)
		return dst
	}
	product(raw.Data, raw.Stride, n, n, t, p, q, true, best)
	return dst
}

// XWXt sets dst to the T×T weighted Gram matrix diag(√w)·X·Xᵀ·diag(√w) and
// returns dst:
//
//	dst_st = √w_s √w_t Σ_j x_sj x_tj
//
// Arguments are as for XtWX. Cost T²·N flops on all cores, and a packed
// copy of x.
func XWXt(dst *mat.SymDense, x mat.Matrix, w []float64) *mat.SymDense {
	t, n := x.Dims()
	if w != nil && len(w) != t {
		panic(mat.ErrShape)
	}
	dst = SizeSym(dst, t)
	data, stride, trans := rowMajor(x)
	if viaBLAS {
		blasXWXt(dst.RawSymmetric(), data, stride, trans, t, n, w)
		return dst
	}
	var sw []float64
	if w != nil {
		sw = make([]float64, t)
		for i, v := range w {
			sw[i] = math.Sqrt(v)
		}
	}
	// The Gram matrix of the rows of X is PᵀP with P = Xᵀ.
	p := &operand{data: data, stride: stride, trans: !trans, iw: sw}
	raw := dst.RawSymmetric()
	product(raw.Data, raw.Stride, t, t, n, p, p, true, best)
	return dst
}

// MulTA sets dst to aᵀb and returns dst:
//
//	dst_ij = Σ_t a_ti b_tj
//
// where a is T×M and b is T×N. A nil or empty dst is allocated; a dst that
// is not M×N, or a and b with different numbers of rows, panic with
// mat.ErrShape. dst must not share memory with a or b. Cost 2·T·M·N flops on
// all cores, and packed copies of a and b.
func MulTA(dst *mat.Dense, a, b mat.Matrix) *mat.Dense {
	t, m := a.Dims()
	tb, n := b.Dims()
	if t != tb {
		panic(mat.ErrShape)
	}
	dst = SizeDense(dst, m, n)
	ad, as, at := rowMajor(a)
	bd, bs, bt := rowMajor(b)
	raw := dst.RawMatrix()
	if viaBLAS {
		blasGemm(raw, blasArg(ad, as, at, t, m), !at, blasArg(bd, bs, bt, t, n), bt, t, false)
		return dst
	}
	p := &operand{data: ad, stride: as, trans: at}
	q := &operand{data: bd, stride: bs, trans: bt}
	product(raw.Data, raw.Stride, m, n, t, p, q, false, best)
	return dst
}

// Mul sets dst to a·b and returns dst:
//
//	dst_ij = Σ_k a_ik b_kj
//
// where a is M×K and b is K×N. A nil or empty dst is allocated; a dst that
// is not M×N, or a and b whose inner sizes differ, panic with mat.ErrShape.
// dst must not share memory with a or b. Cost 2·M·K·N flops on all cores,
// and packed copies of a and b.
func Mul(dst *mat.Dense, a, b mat.Matrix) *mat.Dense {
	m, k := a.Dims()
	kb, n := b.Dims()
	if k != kb {
		panic(mat.ErrShape)
	}
	dst = SizeDense(dst, m, n)
	mulAdd(dst, a, b, false)
	return dst
}

// SubMul sets dst to dst − a·b and returns dst:
//
//	dst_ij ← dst_ij − Σ_k a_ik b_kj
//
// where a is M×K, b is K×N and dst is M×N: a dst of another size, or a and
// b whose inner sizes differ, panic with mat.ErrShape. It needs no M×N
// scratch: each element starts from its old value. dst must not share
// memory with a or b. Cost 2·M·K·N flops on all cores, and packed copies of
// a and b.
func SubMul(dst *mat.Dense, a, b mat.Matrix) *mat.Dense {
	m, k := a.Dims()
	kb, n := b.Dims()
	if r, c := dst.Dims(); k != kb || r != m || c != n {
		panic(mat.ErrShape)
	}
	mulAdd(dst, a, b, true)
	return dst
}

// mulAdd sets dst to a·b, or to dst − a·b when sub is set. The product is
// PᵀQ with P = aᵀ; the subtraction negates P as it is packed, which is
// exact, so every element is its old value plus the same sum as Mul forms.
func mulAdd(dst *mat.Dense, a, b mat.Matrix, sub bool) {
	m, k := a.Dims()
	_, n := b.Dims()
	if m == 0 || n == 0 {
		return
	}
	ad, as, at := rowMajor(a)
	bd, bs, bt := rowMajor(b)
	raw := dst.RawMatrix()
	if viaBLAS {
		blasGemm(raw, blasArg(ad, as, at, m, k), at, blasArg(bd, bs, bt, k, n), bt, k, sub)
		return
	}
	p := &operand{data: ad, stride: as, trans: !at}
	if sub {
		p.kw = make([]float64, k)
		for i := range p.kw {
			p.kw[i] = -1
		}
	}
	q := &operand{data: bd, stride: bs, trans: bt}
	accumulate(raw.Data, raw.Stride, m, n, k, p, q, false, sub, best)
}

// rowMajor returns the elements of x without copying when x is a *mat.Dense
// or the transpose of one: x_ij = data[i*stride+j], or data[j*stride+i] when
// trans is set. Any other matrix is copied once.
func rowMajor(x mat.Matrix) (data []float64, stride int, trans bool) {
	if r, c := x.Dims(); r == 0 || c == 0 {
		return nil, 0, false // nothing to read
	}
	switch v := x.(type) {
	case mat.RawMatrixer:
		raw := v.RawMatrix()
		return raw.Data, raw.Stride, false
	case mat.Transpose:
		if u, ok := v.Matrix.(mat.RawMatrixer); ok {
			raw := u.RawMatrix()
			return raw.Data, raw.Stride, true
		}
	}
	raw := mat.DenseCopyOf(x).RawMatrix()
	return raw.Data, raw.Stride, false
}
