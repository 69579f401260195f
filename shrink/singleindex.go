package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// SingleIndex sets dst to the Ledoit–Wolf (2003) shrinkage of the sample
// covariance toward the single-index (market model) target and returns dst
// with its diagnostics. The market m_t is the equally weighted average of the
// centred returns, as in the paper:
//
//	c_i = (1/T) Σ_t y_ti m_t,   s_m = (1/T) Σ_t m_t²,
//	f_ij = c_i c_j / s_m (i ≠ j),   f_ii = s_ii,
//	π̂ = Σ_ij (1/T) Σ_t (y_ti y_tj − s_ij)²,
//	ρ̂ = Σ_i π̂_ii + Σ_{i≠j} (1/T) Σ_t r_ijt,
//	r_ijt = (c_j s_m y_ti + c_i s_m y_tj − c_i c_j m_t) m_t y_ti y_tj / s_m² − f_ij s_ij,
//	γ̂ = ‖F − S‖²,   δ = max(0, min(1, (π̂ − ρ̂)/(γ̂ T))),   Σ = δF + (1 − δ)S.
//
// Divisor T throughout, as in the paper. With weights the covariances are
// weighted (Σ_t ω_t) and ρ̂/T is the covariance of the weighted means,
// Σ_t ω_t² g_ijt (y_ti y_tj − s_ij) with g_ijt the first-order change of
// f_ij in observation t; with equal weights it is the paper's expression
// exactly. γ̂ = 0 gives δ = 0.
//
// Errors: those of LedoitWolf, and a *DataError wrapping ErrZeroVariance
// when the market has zero variance (Col −1). Panics as LedoitWolf. Cost:
// one N×N cross-product, O(T·N²); the intensity adds O(T·N + N²) (O(T²·N)
// with weights).
//
// References: Ledoit, O. and Wolf, M. (2003), "Improved estimation of the
// covariance matrix of stock returns with an application to portfolio
// selection", J. Empirical Finance 10(5):603–621, section 2 and appendix B.
func SingleIndex(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, TargetResult, error) {
	dense.CheckSym(dst, colsOf(x))
	s, err := newSample(x, w, 2)
	if err != nil {
		return dst, TargetResult{}, err
	}
	cov := s.covTo(dst)
	n := s.n
	raw := s.y.RawMatrix()
	m := make([]float64, s.t)
	c := make([]float64, n)
	var sm, scale float64
	for t := 0; t < s.t; t++ {
		row := raw.Data[t*raw.Stride : t*raw.Stride+n]
		var v float64
		for _, y := range row {
			v += y
		}
		v /= float64(n)
		m[t] = v
		wt := s.weight(t)
		sm += wt * v * v
		for i, y := range row {
			c[i] += wt * y * v
		}
	}
	for t := 0; t < s.t; t++ {
		for j := 0; j < n; j++ {
			scale = math.Max(scale, math.Abs(x.At(t, j)))
		}
	}
	if lim := zeroVarTol * scale; sm <= lim*lim {
		return cov, TargetResult{}, &DataError{Row: -1, Col: -1, Value: sm, Err: ErrZeroVariance}
	}
	res := TargetResult{MarketVar: sm, Beta: make([]float64, n)}
	for i := range c {
		res.Beta[i] = c[i] / sm
	}
	res.Pi = s.varCov(s.rowSq(), frob2(cov), s.quadW2(cov))
	piDiag := s.varDiag(cov)

	// Σ_ij Σ_t ω_t² g_ijt h_ijt over all i, j separates into sums over t of
	// u_t = y_t·c, v_t = y_t·(Sc) and r_t = ‖y_t‖².
	sc := mat.NewVecDense(n, nil)
	sc.MulVec(cov, mat.NewVecDense(n, c))
	csc := mat.Dot(mat.NewVecDense(n, c), sc)
	var t1, t3, uu, diag float64
	for t := 0; t < s.t; t++ {
		row := raw.Data[t*raw.Stride : t*raw.Stride+n]
		var u, v, r float64
		for i, y := range row {
			u += c[i] * y
			v += sc.AtVec(i) * y
			r += y * y
		}
		wt := s.weight(t)
		w2 := wt * wt
		mt := m[t]
		t1 += w2 * mt * (r*u - v) / sm
		t3 -= w2 * mt * mt / (sm * sm) * (u*u - csc)
		uu += w2 * u * u
		var d float64
		for i, y := range row {
			g := 2*c[i]/sm*y*mt - c[i]*c[i]/(sm*sm)*mt*mt - c[i]*c[i]/sm
			d += g * (y*y - cov.At(i, i))
		}
		diag += w2 * d
	}
	t4 := -(uu - s.w2*csc) / sm
	res.Rho = piDiag + 2*t1 + t3 + t4 - diag
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			d := c[i]*c[j]/sm - cov.At(i, j)
			res.Gamma += 2 * d * d
		}
	}
	res.Intensity = targetIntensity(res)
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			cov.SetSym(i, j, res.Intensity*c[i]*c[j]/sm+(1-res.Intensity)*cov.At(i, j))
		}
	}
	return cov, res, nil
}
