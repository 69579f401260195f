package dense

import "gonum.org/v1/gonum/mat"

// SizeSym returns dst ready to receive an n×n symmetric result, the gonum
// convention every package of the library follows: a nil dst is allocated, an
// empty one is resized, one of another size panics with mat.ErrShape. For
// n = 0 it returns an empty matrix rather than allocating one.
func SizeSym(dst *mat.SymDense, n int) *mat.SymDense {
	switch {
	case dst == nil:
		if n == 0 {
			return &mat.SymDense{}
		}
		return mat.NewSymDense(n, nil)
	case dst.IsEmpty():
		if n > 0 {
			dst.ReuseAsSym(n)
		}
		return dst
	}
	CheckSym(dst, n)
	return dst
}

// CheckSym panics with mat.ErrShape unless dst is nil, empty or n×n: the
// check of SizeSym without the allocation, for a function that must reject a
// wrong-sized dst before it reads its data.
func CheckSym(dst *mat.SymDense, n int) {
	if dst != nil && !dst.IsEmpty() && dst.SymmetricDim() != n {
		panic(mat.ErrShape)
	}
}

// SizeDense is SizeSym for an r×c general matrix.
func SizeDense(dst *mat.Dense, r, c int) *mat.Dense {
	switch {
	case dst == nil:
		if r == 0 || c == 0 {
			return &mat.Dense{}
		}
		return mat.NewDense(r, c, nil)
	case dst.IsEmpty():
		if r > 0 && c > 0 {
			dst.ReuseAs(r, c)
		}
		return dst
	}
	if rr, cc := dst.Dims(); rr != r || cc != c {
		panic(mat.ErrShape)
	}
	return dst
}

// SizeVec is SizeSym for a slice of length n: a nil or zero-length dst is
// allocated, one of length n is returned as it is, one of another length
// panics with mat.ErrShape. The capacity of an empty dst is not reused, so a
// dst of x[:0] cannot overwrite an input x.
func SizeVec[T any](dst []T, n int) []T {
	switch {
	case len(dst) == n:
		return dst
	case len(dst) != 0:
		panic(mat.ErrShape)
	}
	return make([]T, n)
}
