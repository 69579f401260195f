package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// TargetResult holds the diagnostics of a shrinkage toward a structured
// target F: Σ = δF + (1 − δ)S.
type TargetResult struct {
	// Intensity is δ = max(0, min(1, κ̂/T)) with κ̂ = (π̂ − ρ̂)/γ̂.
	Intensity float64
	// Pi, Rho and Gamma are π̂/T, ρ̂/T and γ̂ of the papers: the summed
	// variance of the entries of S, their summed covariance with the
	// entries of F, and the squared Frobenius distance ‖F − S‖².
	Pi, Rho, Gamma float64
	// MeanCorr is r̄ of the constant-correlation target (0 otherwise).
	MeanCorr float64
	// MarketVar is s_m, the variance of the equally weighted market of
	// the single-index target, and Beta its betas c_i/s_m (nil otherwise).
	MarketVar float64
	Beta      []float64
}

// zeroVarTol is how small a variance must be, relative to the size of the
// column, to count as zero: a constant column centres to rounding noise.
const zeroVarTol = 64 * 2.220446049250313e-16

// checkVariances returns a *DataError wrapping ErrZeroVariance for the first
// column of x whose variance in cov is zero up to rounding.
func checkVariances(x mat.Matrix, cov *mat.SymDense) error {
	t, n := x.Dims()
	for j := 0; j < n; j++ {
		var scale float64
		for i := 0; i < t; i++ {
			scale = math.Max(scale, math.Abs(x.At(i, j)))
		}
		lim := zeroVarTol * scale
		if v := cov.At(j, j); v <= lim*lim {
			return &DataError{Row: -1, Col: j, Value: v, Err: ErrZeroVariance}
		}
	}
	return nil
}

// ConstantCorrelation sets dst to the Ledoit–Wolf (2004) shrinkage of the
// sample covariance toward the constant-correlation target and returns dst
// with its diagnostics:
//
//	f_ii = s_ii,   f_ij = r̄ √(s_ii s_jj),   r̄ = 2/(N(N−1)) Σ_{i<j} s_ij/√(s_ii s_jj),
//	π̂ = Σ_ij π̂_ij,   π̂_ij = (1/T) Σ_t (y_ti y_tj − s_ij)²,
//	ρ̂ = Σ_i π̂_ii + Σ_{i≠j} (r̄/2)(√(s_jj/s_ii) θ̂_ii,ij + √(s_ii/s_jj) θ̂_jj,ij),
//	θ̂_ii,ij = (1/T) Σ_t (y_ti² − s_ii)(y_ti y_tj − s_ij),
//	γ̂ = Σ_ij (f_ij − s_ij)²,   δ = max(0, min(1, (π̂ − ρ̂)/(γ̂ T))),
//	Σ = δF + (1 − δ)S.
//
// Divisor T throughout (S = YᵀY/T on centred data), as in the paper. With
// weights, every (1/T²)Σ_t above becomes Σ_t ω_t² (variances of weighted
// means). γ̂ = 0 (one asset, or S already of the target's form) gives δ = 0.
//
// Errors: those of LedoitWolf, and a *DataError wrapping ErrZeroVariance
// naming the first column with zero variance (the target divides by it).
// Panics as LedoitWolf. Cost: one N×N cross-product, O(T·N²); the
// intensity adds O(T·N + N²) (O(T²·N) with weights).
//
// References: Ledoit, O. and Wolf, M. (2004), "Honey, I shrunk the sample
// covariance matrix", J. Portfolio Management 30(4):110–119, appendix.
func ConstantCorrelation(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, TargetResult, error) {
	dense.CheckSym(dst, colsOf(x))
	s, err := newSample(x, w, 2)
	if err != nil {
		return dst, TargetResult{}, err
	}
	cov := s.covTo(dst)
	if err := checkVariances(x, cov); err != nil {
		return cov, TargetResult{}, err
	}
	n := s.n
	sd := make([]float64, n)
	for i := range sd {
		sd[i] = math.Sqrt(cov.At(i, i))
	}
	var rbar float64
	if n > 1 {
		for i := 0; i < n; i++ {
			for j := i + 1; j < n; j++ {
				rbar += cov.At(i, j) / (sd[i] * sd[j])
			}
		}
		rbar *= 2 / float64(n*(n-1))
	}
	res := TargetResult{MeanCorr: rbar}
	res.Pi = s.varCov(s.rowSq(), frob2(cov), s.quadW2(cov))
	piDiag := s.varDiag(cov)

	// Σ_{i≠j} √(s_jj/s_ii) θ_ii,ij: with a_i = 1/sd_i and b_j = sd_j the
	// double sum separates, Σ_t ω_t² Σ_i a_i (y_ti² − s_ii)(y_ti u_t −
	// (Sb)_i) with u_t = Σ_j b_j y_tj, less its diagonal, which is Σπ_ii.
	sb := mat.NewVecDense(n, nil)
	sb.MulVec(cov, mat.NewVecDense(n, sd))
	raw := s.y.RawMatrix()
	var theta float64
	for t := 0; t < s.t; t++ {
		row := raw.Data[t*raw.Stride : t*raw.Stride+n]
		var u float64
		for j, v := range row {
			u += sd[j] * v
		}
		var sum float64
		for i, v := range row {
			sum += (v*v - cov.At(i, i)) * (v*u - sb.AtVec(i)) / sd[i]
		}
		wt := s.weight(t)
		theta += wt * wt * sum
	}
	res.Rho = piDiag + rbar*(theta-piDiag)
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			d := rbar*sd[i]*sd[j] - cov.At(i, j)
			res.Gamma += 2 * d * d
		}
	}
	res.Intensity = targetIntensity(res)
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			cov.SetSym(i, j, res.Intensity*rbar*sd[i]*sd[j]+(1-res.Intensity)*cov.At(i, j))
		}
	}
	return cov, res, nil
}

// varDiag returns Σ_i Σ_t ω_t² (y_ti² − s_ii)².
func (s *sample) varDiag(cov *mat.SymDense) float64 {
	raw := s.y.RawMatrix()
	var sum float64
	for t := 0; t < s.t; t++ {
		wt := s.weight(t)
		var r float64
		for i, v := range raw.Data[t*raw.Stride : t*raw.Stride+s.n] {
			d := v*v - cov.At(i, i)
			r += d * d
		}
		sum += wt * wt * r
	}
	return sum
}

func targetIntensity(r TargetResult) float64 {
	if !(r.Gamma > 0) {
		return 0
	}
	return math.Max(0, math.Min(1, (r.Pi-r.Rho)/r.Gamma))
}
