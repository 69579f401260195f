package shrink

import (
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// covTo sets dst to S = Σ_t ω_t y_t y_tᵀ through the shared dense kernel.
func (s *sample) covTo(dst *mat.SymDense) *mat.SymDense {
	dst = dense.SizeSym(dst, s.n)
	dense.XtWX(dst, s.y, s.omega)
	if s.omega == nil {
		// Dividing after the product, as scikit-learn does, keeps equal
		// weights bit-close to the reference.
		raw := dst.RawSymmetric()
		inv := 1 / float64(s.t)
		forTriBlocks(s.n, func(_, lo, hi int) {
			for i := lo; i < hi; i++ {
				row := raw.Data[i*raw.Stride+i : i*raw.Stride+s.n]
				for j := range row {
					row[j] *= inv
				}
			}
		})
	}
	return dst
}

// rowSq returns r_t = ‖y_t‖².
func (s *sample) rowSq() []float64 {
	r := make([]float64, s.t)
	raw := s.y.RawMatrix()
	for i := range r {
		var sum float64
		for _, v := range raw.Data[i*raw.Stride : i*raw.Stride+s.n] {
			sum += v * v
		}
		r[i] = sum
	}
	return r
}

// frob2 returns ‖a‖²_F = Σ_ij a_ij²: per block of rows (forTriBlocks) the
// diagonal and the off-diagonal squares, then Σ diag + 2·Σ off in block
// order.
func frob2(a *mat.SymDense) float64 {
	raw := a.RawSymmetric()
	b := triBlocks(raw.N)
	diag := make([]float64, len(b))
	off := make([]float64, len(b))
	forTriBlocks(raw.N, func(k, lo, hi int) {
		var d, o float64
		for i := lo; i < hi; i++ {
			row := raw.Data[i*raw.Stride : i*raw.Stride+raw.N]
			d += row[i] * row[i]
			o += sumSquares(row[i+1:])
		}
		diag[k], off[k] = d, o
	})
	var d, o float64
	for k := range diag {
		d += diag[k]
		o += off[k]
	}
	return d + 2*o
}

// sumSquares returns Σ v², in four interleaved partial sums added in a
// fixed order (one chain of additions would wait on each other).
func sumSquares(x []float64) float64 {
	var s0, s1, s2, s3 float64
	j := 0
	for ; j+4 <= len(x); j += 4 {
		s0 += x[j] * x[j]
		s1 += x[j+1] * x[j+1]
		s2 += x[j+2] * x[j+2]
		s3 += x[j+3] * x[j+3]
	}
	for ; j < len(x); j++ {
		s0 += x[j] * x[j]
	}
	return (s0 + s1) + (s2 + s3)
}

// gramMoments holds what the linear intensities need, computed from the T×T
// Gram matrix G_st = y_s·y_t without forming S.
type gramMoments struct {
	trace  float64 // tr S = Σ ω_t G_tt
	frob2  float64 // ‖S‖²_F = Σ_st ω_s ω_t G_st²
	quadW2 float64 // Σ_t ω_t² y_tᵀ S y_t = Σ_t ω_t² Σ_s ω_s G_ts²
}

// gram computes the moments from the Gram matrix, O(T²·N).
func (s *sample) gram() gramMoments {
	g := dense.XWXt(nil, s.y, nil)
	raw := g.RawSymmetric()
	var m gramMoments
	q := make([]float64, s.t) // q_t = Σ_s ω_s G_ts²
	for i := 0; i < s.t; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+s.t]
		wi := s.weight(i)
		m.trace += wi * row[i]
		q[i] += wi * row[i] * row[i]
		for j := i + 1; j < s.t; j++ {
			v := row[j] * row[j]
			q[i] += s.weight(j) * v
			q[j] += wi * v
		}
	}
	for i, v := range q {
		wi := s.weight(i)
		m.frob2 += wi * v
		m.quadW2 += wi * wi * v
	}
	return m
}

// quadW2 returns Σ_t ω_t² y_tᵀ S y_t for the covariance S of s. With equal
// weights it is ‖S‖²/T and costs nothing; with weights it takes the Gram
// matrix, O(T²·N).
func (s *sample) quadW2(cov *mat.SymDense) float64 {
	if s.omega == nil {
		return frob2(cov) / float64(s.t)
	}
	return s.gram().quadW2
}

// varCov returns Σ_ij Σ_t ω_t² (y_ti y_tj − s_ij)², the summed variance of
// the entries of S as weighted means (T·π̂/T² of Ledoit & Wolf 2003, 2004).
func (s *sample) varCov(r []float64, fro2, quad float64) float64 {
	var r4 float64
	for i, v := range r {
		wi := s.weight(i)
		r4 += wi * wi * v * v
	}
	return r4 - 2*quad + s.w2*fro2
}
