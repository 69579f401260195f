package shrink

import (
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// OAS sets dst to the oracle approximating shrinkage of the sample covariance
// toward a scaled identity and returns dst with its diagnostics:
//
//	Σ = (1 − ρ) S + ρ μ I,   μ = tr(S)/N,
//	ρ = min(1, (tr(S²) + tr(S)²) / ((n + 1)(tr(S²) − tr(S)²/N))),
//
// with S the divisor-T covariance of LedoitWolf and n = T (Kish's effective
// size 1/Σω_t² with weights). A zero denominator gives ρ = 1; one asset gives
// ρ = 0.
//
// Departure from the paper: Chen et al. (2010), eq. (23), have
// ((1 − 2/N) tr(S²) + tr(S)²) / ((n + 1 − 2/N)(tr(S²) − tr(S)²/N)). The 2/N
// terms are dropped here, as in scikit-learn 1.2.1 OAS() (which says it
// follows the authors' implementation), and this function matches it.
//
// Panics and errors are those of LedoitWolf. Cost: one N×N cross-product,
// O(T·N²); OASImplicit needs only the T×T Gram matrix.
//
// References: Chen, Y., Wiesel, A., Eldar, Y. C. and Hero, A. O. (2010),
// "Shrinkage algorithms for MMSE covariance estimation", IEEE Trans. Signal
// Processing 58(10):5016–5029.
func OAS(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, LinearResult, error) {
	dense.CheckSym(dst, colsOf(x))
	s, err := newSample(x, w, 2)
	if err != nil {
		return dst, LinearResult{}, err
	}
	cov := s.covTo(dst)
	raw := cov.RawSymmetric()
	var tr float64
	for i := 0; i < s.n; i++ {
		tr += raw.Data[i*raw.Stride+i]
	}
	res := oasIntensity(s, tr, frob2(cov))
	blendIdentity(cov, res.Intensity, res.Mu)
	return cov, res, nil
}

// OASIntensity returns the intensity ρ and scale μ of OAS without the
// estimate itself, working in the smaller space: the T×T Gram matrix when
// N > T (no N×N matrix is formed), the N×N sample covariance otherwise.
// Cost O(min(T, N)²·max(T, N)).
//
// References: as for OAS.
func OASIntensity(x mat.Matrix, w []float64) (LinearResult, error) {
	s, err := newSample(x, w, 2)
	if err != nil {
		return LinearResult{}, err
	}
	if s.n <= s.t {
		cov := s.covTo(nil)
		var tr float64
		for i := 0; i < s.n; i++ {
			tr += cov.At(i, i)
		}
		return oasIntensity(s, tr, frob2(cov)), nil
	}
	g := s.gram()
	return oasIntensity(s, g.trace, g.frob2), nil
}

func oasIntensity(s *sample, tr, fro2 float64) LinearResult {
	p := float64(s.n)
	mu := tr / p
	res := LinearResult{Mu: mu}
	if s.n == 1 {
		return res
	}
	// scikit-learn's form: α = mean(S∘S) = ‖S‖²/N², num = α + μ², den = (n+1)(α − μ²/N).
	alpha := fro2 / (p * p)
	num := alpha + mu*mu
	den := (1/s.w2 + 1) * (alpha - mu*mu/p)
	if den == 0 {
		res.Intensity = 1
	} else {
		res.Intensity = min(num/den, 1)
	}
	res.Floor = res.Intensity * mu
	return res
}
