package te

import (
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// symv sets y = Σx for the dense symmetric Σ, and y2 = Σx2 as well when x2
// is not nil, reading Σ once. Each stored row of the triangle gives one dot
// product (the row's own element of y) and one axpy (the mirrored column),
// both on gonum's assembly kernels; gonum's Dsymv runs a scalar loop and
// is several times slower here. Cost O(N²), one pass over the triangle.
func symv(s blas64.Symmetric, x, y, x2, y2 []float64) {
	n := s.N
	clear(y)
	if x2 != nil {
		clear(y2)
	}
	for i := 0; i < n; i++ {
		if s.Uplo == blas.Upper {
			row := s.Data[i*s.Stride+i : i*s.Stride+n]
			y[i] += blas64.Dot(vec(row), vec(x[i:]))
			if n-i > 1 {
				blas64.Axpy(x[i], vec(row[1:]), vec(y[i+1:]))
			}
			if x2 != nil {
				y2[i] += blas64.Dot(vec(row), vec(x2[i:]))
				if n-i > 1 {
					blas64.Axpy(x2[i], vec(row[1:]), vec(y2[i+1:]))
				}
			}
			continue
		}
		row := s.Data[i*s.Stride : i*s.Stride+i+1]
		y[i] += blas64.Dot(vec(row), vec(x[:i+1]))
		if i > 0 {
			blas64.Axpy(x[i], vec(row[:i]), vec(y[:i]))
		}
		if x2 != nil {
			y2[i] += blas64.Dot(vec(row), vec(x2[:i+1]))
			if i > 0 {
				blas64.Axpy(x2[i], vec(row[:i]), vec(y2[:i]))
			}
		}
	}
}
