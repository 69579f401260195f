package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// rowSpectrum returns the eigenvalues (ascending) of S = BᵀB for the T×N
// matrix b and the matching eigenvectors as the rows of u. When N ≤ T it
// eigen-decomposes S (N values). When N > T it never forms S: it
// eigen-decomposes the T×T Gram matrix G = BBᵀ, which has the same nonzero
// eigenvalues, and maps each eigenvector v to u = Bᵀv/√λ; the T values are
// returned, values below rounding (and their vectors) set to zero, and the
// remaining N − T eigenvalues of S are zero. Cost O(min(N,T)³ + T·N·min(N,T)).
func rowSpectrum(b *mat.Dense) ([]float64, *mat.Dense, error) {
	t, n := b.Dims()
	if n <= t {
		return eigen(dense.XtWX(nil, b, nil))
	}
	vals, v, err := eigen(dense.XWXt(nil, b, nil))
	if err != nil {
		return nil, nil, err
	}
	top := vals[t-1]
	lim := float64(n) * eps * 16 * math.Abs(top)
	var u mat.Dense
	dense.Mul(&u, v, b) // row k: v_kᵀB = (Bᵀv_k)ᵀ
	for k, l := range vals {
		row := u.RawRowView(k)
		if l <= lim {
			vals[k] = 0
			clear(row)
			continue
		}
		s := 1 / math.Sqrt(l)
		for j := range row {
			row[j] *= s
		}
	}
	return vals, &u, nil
}

// scaledRows returns diag(f_t)·y as a new matrix.
func scaledRows(y *mat.Dense, f func(t int) float64) *mat.Dense {
	b := mat.DenseCopyOf(y)
	raw := b.RawMatrix()
	for t := 0; t < raw.Rows; t++ {
		s := f(t)
		row := raw.Data[t*raw.Stride : t*raw.Stride+raw.Cols]
		for j := range row {
			row[j] *= s
		}
	}
	return b
}
