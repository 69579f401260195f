package shrink

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// SchaferResult holds the diagnostics of SchaferStrimmer.
type SchaferResult struct {
	// Lambda is the intensity λ of the shrinkage of the correlations
	// toward 0; LambdaVar the intensity of the shrinkage of the variances
	// toward their median VarTarget.
	Lambda, LambdaVar, VarTarget float64
	// ZeroVar counts the assets whose variance was below machine epsilon:
	// their correlations are set to 0, as in corpcor.
	ZeroVar int
}

// SchaferStrimmer sets dst to the Schäfer–Strimmer (2005) shrinkage
// covariance with the separate variance shrinkage of Opgen-Rhein & Strimmer
// (2007) and returns dst with its diagnostics:
//
//	v_j = h Σ_t ω_t y_tj²,   h = 1/(1 − Σ_t ω_t²)          (divisor T − 1)
//	z_tj = y_tj / √v_j,   r_ij = h Σ_t ω_t z_ti z_tj,
//	λ = (Σ_{i≠j} Σ_t ω_t z_ti² z_tj² − Σ_{i≠j} (r_ij/h)²) / Σ_{i≠j} (r_ij/h)² · Σω²/(1 − Σω²),
//	λ_v = Σ_j (Σ_t ω_t y_tj⁴ − q_j²) / Σ_j (q_j − v_med/h)² · Σω²/(1 − Σω²),   q_j = Σ_t ω_t y_tj²,
//	r*_ij = (1 − λ) r_ij (i ≠ j),   v*_j = λ_v v_med + (1 − λ_v) v_j,
//	Σ_ij = r*_ij √(v*_i v*_j),
//
// with both intensities clipped to [0, 1] (a zero denominator gives 1) and
// v_med the median variance. This is R corpcor 1.6.10 cov.shrink(x, w),
// which it matches, weights included (corpcor takes weights; its divisor is
// the unbiased T − 1, or 1/(1 − Σω²) with weights). As in corpcor, a
// variance below machine epsilon counts as zero: that asset gets zero
// correlations and a variance shrunk toward the median (counted in
// ZeroVar); one asset gives λ = λ_v = 1.
//
// Errors: those of LedoitWolf, with ErrTooFewObs below 3 rows (as corpcor)
// or when one weight carries all the mass (1 − Σω² ≤ 1e−12).
// Panics as LedoitWolf. Cost: one N×N cross-product, O(T·N²).
//
// References: Schäfer, J. and Strimmer, K. (2005), "A shrinkage approach to
// large-scale covariance matrix estimation and implications for functional
// genomics", Stat. Appl. Genet. Mol. Biol. 4(1):32; Opgen-Rhein, R. and
// Strimmer, K. (2007), "Accurate ranking of differentially expressed genes
// by a distribution-free shrinkage approach", Stat. Appl. Genet. Mol. Biol.
// 6(1):9.
func SchaferStrimmer(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, SchaferResult, error) {
	dense.CheckSym(dst, colsOf(x))
	s, err := newSample(x, w, 3)
	if err != nil {
		return dst, SchaferResult{}, err
	}
	if !(1-s.w2 > 1e-12) {
		// One weight carries (nearly) all the mass: the unbiased divisor
		// 1 − Σω² vanishes, leaving one effective observation.
		return dst, SchaferResult{}, &DataError{Row: -1, Col: -1, Value: 1 / s.w2, Err: ErrTooFewObs}
	}
	cov := s.covTo(dst)
	n := s.n
	h := 1 / (1 - s.w2)
	ratio := s.w2 / (1 - s.w2)
	var res SchaferResult

	// Variances and their intensity (corpcor's estimate.lambda.var).
	q := make([]float64, n)
	q4 := make([]float64, n)
	raw := s.y.RawMatrix()
	for t := 0; t < s.t; t++ {
		wt := s.weight(t)
		for j, v := range raw.Data[t*raw.Stride : t*raw.Stride+n] {
			v2 := v * v
			q[j] += wt * v2
			q4[j] += wt * v2 * v2
		}
	}
	v := make([]float64, n)
	for j := range v {
		v[j] = h * q[j]
	}
	med := median(v)
	var num, den float64
	for j := range q {
		num += q4[j] - q[j]*q[j]
		d := q[j] - med/h
		den += d * d
	}
	res.LambdaVar = clampRatio(num, den, ratio)
	// corpcor's wt.moments zeroes variances below machine epsilon before
	// the target and the shrunk variances are formed.
	for j := range v {
		if v[j] < eps {
			v[j] = 0
			res.ZeroVar++
		}
	}
	res.VarTarget = median(v)

	// Correlations and their intensity (corpcor's estimate.lambda).
	sd := make([]float64, n)
	for j := range sd {
		sd[j] = math.Sqrt(v[j])
	}
	var e2r, er2 float64
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			if sd[i] > 0 && sd[j] > 0 {
				r := cov.At(i, j) / (sd[i] * sd[j])
				e2r += 2 * r * r
			}
		}
	}
	for t := 0; t < s.t; t++ {
		var z2, z4 float64
		for j, y := range raw.Data[t*raw.Stride : t*raw.Stride+n] {
			if sd[j] > 0 {
				z := y / sd[j]
				z2 += z * z
				z4 += z * z * z * z
			}
		}
		er2 += s.weight(t) * (z2*z2 - z4)
	}
	if n == 1 {
		res.Lambda = 1
	} else {
		res.Lambda = clampRatio(er2-e2r, e2r, ratio)
	}

	shrunkSD := make([]float64, n)
	for j := range shrunkSD {
		shrunkSD[j] = math.Sqrt(res.LambdaVar*res.VarTarget + (1-res.LambdaVar)*v[j])
	}
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			var r float64
			switch {
			case i == j:
				r = 1
			case sd[i] > 0 && sd[j] > 0:
				r = (1 - res.Lambda) * h * cov.At(i, j) / (sd[i] * sd[j])
			}
			cov.SetSym(i, j, r*shrunkSD[i]*shrunkSD[j])
		}
	}
	return cov, res, nil
}

const eps = 2.220446049250313e-16

// clampRatio returns max(0, min(1, num/den·f)), or 1 when den is zero.
func clampRatio(num, den, f float64) float64 {
	if den == 0 {
		return 1
	}
	return math.Max(0, math.Min(1, num/den*f))
}

// median returns the median of v (the mean of the middle two for even
// length, as R's median), without modifying v.
func median(v []float64) float64 {
	c := slices.Clone(v)
	slices.Sort(c)
	k := len(c) / 2
	if len(c)%2 == 1 {
		return c[k]
	}
	return (c[k-1] + c[k]) / 2
}
