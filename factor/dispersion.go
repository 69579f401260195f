package factor

import (
	"math"

	"github.com/riskmodel/riskmodel/internal/dense"
	"gonum.org/v1/gonum/mat"
)

// Dispersion reports the dispersion-bias correction of the leading
// eigenvector (see DispersionCorrect).
type Dispersion struct {
	Shrink float64 // c in [0, 1]; 1 leaves the eigenvector unchanged
	Mean   float64 // m(h) of the sample eigenvector, sign fixed so that m ≥ 0
	// Eigenvalue is λ², the leading eigenvalue of S; Noise is ℓ², the mean
	// of the non-zero eigenvalues that belong to no factor.
	Eigenvalue, Noise float64
	Angle             float64 // between the sample and the corrected eigenvector, radians
}

// DispersionCorrect sets dst to the James–Stein-type estimator of the
// leading eigenvector of Goldberg, Papanicolaou & Shkolnik (2022) and returns
// it with the report:
//
//	m = (1/N)·Σᵢ hᵢ,   c = max(0, 1 − ℓ² / (λ²·‖h − m·1‖²)),
//	h_JS = (m·1 + c·(h − m·1)) / ‖m·1 + c·(h − m·1)‖,
//
// for the unit sample eigenvector h with eigenvalue lambda2 = λ² of the
// sample covariance and noise = ℓ², the average of its other non-zero
// eigenvalues. The sample eigenvector of a market-like factor is too
// dispersed when N ≫ T: its noise, ℓ²/λ² of its squared length, is spread
// over all directions, almost all orthogonal to 1, so c removes that share
// from the dispersion ‖h − m·1‖². The sign of h is taken so that m ≥ 0, and
// the result has that sign. h is not modified.
//
// DispersionCorrect panics with mat.ErrShape if dst is neither nil nor of
// length N. Cost O(N).
//
// References:
// Goldberg, L.R., Papanicolaou, A. and Shkolnik, A. (2022), "The dispersion
// bias", SIAM J. Financial Mathematics 13(2) (issue from memory; the formula
// as recalled in the project's references, checked by simulation in the
// tests).
func DispersionCorrect(dst, h []float64, lambda2, noise float64) ([]float64, Dispersion) {
	n := len(h)
	dst = dense.SizeVec(dst, n)
	var m, norm2 float64
	for _, v := range h {
		m += v
		norm2 += v * v
	}
	m /= float64(n)
	sign := 1.0
	if m < 0 {
		sign, m = -1, -m
	}
	var disp float64
	for _, v := range h {
		e := sign*v - m
		disp += e * e
	}
	rep := Dispersion{Mean: m, Eigenvalue: lambda2, Noise: noise, Shrink: 1}
	if disp > 0 && lambda2 > 0 {
		rep.Shrink = math.Max(0, math.Min(1, 1-noise/(lambda2*disp)))
	}
	var out2 float64
	for i, v := range h {
		dst[i] = m + rep.Shrink*(sign*v-m)
		out2 += dst[i] * dst[i]
	}
	s := 1 / math.Sqrt(out2)
	var dot float64
	for i, v := range h {
		dst[i] *= s
		dot += dst[i] * sign * v
	}
	rep.Angle = math.Acos(math.Max(-1, math.Min(1, dot/math.Sqrt(norm2))))
	return dst, rep
}

// correctDispersion replaces the first column of the orthonormal N×K
// loadings b by its dispersion-corrected version (sign kept) and
// re-orthonormalizes the other columns against it by modified Gram–Schmidt,
// so BᵀB = I still holds. Cost O(N·K²).
func correctDispersion(b *mat.Dense, lambda2, noise float64) Dispersion {
	n, k := b.Dims()
	h := mat.Col(nil, 0, b)
	hjs, rep := DispersionCorrect(nil, h, lambda2, noise)
	var dot float64
	for i := range h {
		dot += h[i] * hjs[i]
	}
	if dot < 0 {
		for i := range hjs {
			hjs[i] = -hjs[i]
		}
	}
	b.SetCol(0, hjs)
	col := make([]float64, n)
	for j := 1; j < k; j++ {
		mat.Col(col, j, b)
		for q := 0; q < j; q++ {
			var p float64
			for i := 0; i < n; i++ {
				p += col[i] * b.At(i, q)
			}
			for i := 0; i < n; i++ {
				col[i] -= p * b.At(i, q)
			}
		}
		var s float64
		for _, v := range col {
			s += v * v
		}
		s = 1 / math.Sqrt(s)
		for i := range col {
			col[i] *= s
		}
		b.SetCol(j, col)
	}
	return rep
}
