package shrink

import (
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// LinearResult holds the diagnostics of a shrinkage toward a scaled identity.
type LinearResult struct {
	// Intensity is the weight δ ∈ [0, 1] of the target.
	Intensity float64
	// Mu is the scale of the target μI, μ = tr(S)/N.
	Mu float64
	// Floor is δμ, a lower bound on every eigenvalue of the estimate: the
	// estimate is positive definite whenever Floor > 0, and its condition
	// number is at most ((1−δ)λ_max(S) + δμ)/(δμ).
	Floor float64
}

// LedoitWolf sets dst to the Ledoit–Wolf (2004) shrinkage of the sample
// covariance toward a scaled identity and returns dst with its diagnostics:
//
//	Σ = (1 − δ) S + δ μ I,   μ = tr(S)/N,   δ = b²/d²,
//	d² = ‖S − μI‖²,   b̄² = Σ_t ω_t² ‖y_t y_tᵀ − S‖²,   b² = min(b̄², d²),
//
// with ‖A‖² = tr(AAᵀ)/N, y_t the row t of x centred on the (weighted) column
// means, and S = Σ_t ω_t y_t y_tᵀ. Divisor T (ω_t = 1/T) with equal
// weights, as in the paper and scikit-learn 1.2.1
// LedoitWolf(assume_centered=False), which it matches; with weights b̄² is
// the variance of S as a weighted mean of the y_t y_tᵀ (reducing to the
// paper's (1/T²)Σ with equal weights). One asset gives δ = 0, as in
// scikit-learn.
//
// A nil or empty dst is allocated; a wrong-sized dst or a w whose length is
// not T panics with mat.ErrShape. Errors: a *DataError wrapping ErrNonFinite
// (row and column of the first non-finite value), ErrTooFewObs (fewer than 2
// rows or positive weights) or ErrWeights (a negative or non-finite weight,
// or all zero).
//
// Cost: one N×N cross-product, O(T·N²) on all cores; with weights also the
// T×T Gram matrix, O(T²·N). When only Σx is needed, LedoitWolfImplicit costs
// O(T²·N) and never forms the N×N matrix.
//
// References: Ledoit, O. and Wolf, M. (2004), "A well-conditioned estimator
// for large-dimensional covariance matrices", J. Multivariate Analysis
// 88(2):365–411, section 3.
func LedoitWolf(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, LinearResult, error) {
	dense.CheckSym(dst, colsOf(x))
	s, err := newSample(x, w, 2)
	if err != nil {
		return dst, LinearResult{}, err
	}
	cov := s.covTo(dst)
	res := lwIntensity(s, cov.RawSymmetric(), frob2(cov), s.quadW2(cov))
	blendIdentity(cov, res.Intensity, res.Mu)
	return cov, res, nil
}

// LedoitWolfIntensity returns the Ledoit–Wolf (2004) shrinkage intensity δ
// and target scale μ of LedoitWolf without the estimate itself. It works in
// the smaller space: from the T×T Gram matrix of the centred rows and their
// sums of squares when N > T (no N×N matrix is formed), from the N×N sample
// covariance otherwise. Arguments, conventions and errors are those of
// LedoitWolf. Cost O(min(T, N)²·max(T, N)).
//
// References: as for LedoitWolf.
func LedoitWolfIntensity(x mat.Matrix, w []float64) (LinearResult, error) {
	s, err := newSample(x, w, 2)
	if err != nil {
		return LinearResult{}, err
	}
	if s.n <= s.t {
		cov := s.covTo(nil)
		return lwIntensity(s, cov.RawSymmetric(), frob2(cov), s.quadW2(cov)), nil
	}
	return lwFromGram(s, s.gram()), nil
}

func lwFromGram(s *sample, g gramMoments) LinearResult {
	n := float64(s.n)
	mu := g.trace / n
	d2 := (g.frob2 - n*mu*mu) / n
	return lwFinish(s, mu, d2, g.frob2, g.quadW2)
}

// lwIntensity computes δ from the dense S (upper triangle in raw).
func lwIntensity(s *sample, raw blas64.Symmetric, fro2, quad float64) LinearResult {
	var tr float64
	for i := 0; i < s.n; i++ {
		tr += raw.Data[i*raw.Stride+i]
	}
	n := float64(s.n)
	mu := tr / n
	// d² straight from the entries avoids the cancellation in ‖S‖² − Nμ².
	var diag, off float64
	for i := 0; i < s.n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+s.n]
		d := row[i] - mu
		diag += d * d
		for _, v := range row[i+1:] {
			off += v * v
		}
	}
	return lwFinish(s, mu, (diag+2*off)/n, fro2, quad)
}

func lwFinish(s *sample, mu, d2, fro2, quad float64) LinearResult {
	res := LinearResult{Mu: mu}
	if s.n > 1 {
		b2 := s.varCov(s.rowSq(), fro2, quad) / float64(s.n)
		b2 = max(0, min(b2, d2))
		if b2 > 0 {
			res.Intensity = b2 / d2
		}
	}
	res.Floor = res.Intensity * mu
	return res
}

// blendIdentity sets a to (1−δ)a + δμI in place.
func blendIdentity(a *mat.SymDense, delta, mu float64) {
	raw := a.RawSymmetric()
	forTriBlocks(raw.N, func(_, lo, hi int) {
		for i := lo; i < hi; i++ {
			row := raw.Data[i*raw.Stride+i : i*raw.Stride+raw.N]
			for j := range row {
				row[j] *= 1 - delta
			}
			row[0] += delta * mu
		}
	})
}
