package shrink

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// NonlinearResult holds the diagnostics of Nonlinear.
type NonlinearResult struct {
	// Sample holds the min(N, T−1) nonzero sample eigenvalues in ascending
	// order and Shrunk the shrunk eigenvalues in the same order (each
	// belongs to the same eigenvector), after the monotone step.
	Sample, Shrunk []float64
	// Null is the shrunk value given to the N − (T−1) null eigenvalues
	// when N > T−1 (0 otherwise), after the monotone step.
	Null float64
	// Formula and FormulaNull are the paper's d̃_i and d̃₀ before the
	// monotone step; Pooled counts the eigenvalues (the null ones each
	// counted) that the step changed.
	Formula     []float64
	FormulaNull float64
	Pooled      int
	// Condition is the condition number of the estimate.
	Condition float64
}

// Nonlinear sets dst to the analytical nonlinear shrinkage estimate of
// Ledoit & Wolf (2020) and returns dst with its diagnostics. The sample
// covariance S = YᵀY/n, n = T − 1, of the centred data is decomposed as
// Σ λ_i u_i u_iᵀ; the eigenvectors are kept and each eigenvalue replaced by
//
//	h = n^(−1/3),   x_ij = (λ_i − λ_j)/(h λ_j),
//	f̃_i = (1/m) Σ_j (3/(4√5)) max(1 − x_ij²/5, 0) / (h λ_j),
//	H̃_i = (1/m) Σ_j [−(3/(10π)) x_ij + (3/(4√5π))(1 − x_ij²/5) ln|(√5 − x_ij)/(√5 + x_ij)|] / (h λ_j),
//	p ≤ n:  d̃_i = λ_i / [(π c λ_i f̃_i)² + (1 − c − π c λ_i H̃_i)²],   c = p/n,
//	p > n:  d̃_i = λ_i / [π² λ_i² (f̃_i² + H̃_i²)] for the n nonzero λ_i, and
//	        d̃₀ = 1 / [π (p − n)/n · H̃₀],
//	        H̃₀ = (1/π)[3/(10h²) + (3/(4√5h))(1 − 1/(5h²)) ln((1 + √5h)/(1 − √5h))] · mean(1/λ_j)
//	        for the p − n null ones,
//
// the Epanechnikov kernel density f̃ and its Hilbert transform H̃ of the
// sample spectrum with the variable bandwidth hλ_j (m eigenvalues in the
// sums). The formula does not guarantee that the d̃ keep the order of the
// λ (in small samples it often does not), so as a last step, not in the
// paper, the d̃ are replaced by their isotonic (non-decreasing) regression in
// the order of the λ, the d̃₀ of the p − n null eigenvalues first with weight
// p − n (pool-adjacent-violators; scikit-learn's isotonic_regression gives
// the same); Pooled reports how many values moved. Divisor T − 1, as in the paper's demeaned case. With weights, S is
// T/(T−1)·Σ_t ω_t y_t y_tᵀ and n stays T − 1 (the paper assumes equal
// weights; this is our extension and has no reference).
//
// Where N > T − 1 it works in the T×T Gram space (no N×N
// eigendecomposition) and the estimate is d̃₀I + Σ_i (d̃_i − d̃₀) u_i u_iᵀ.
//
// Errors: those of LedoitWolf, ErrTooFewObs below 13 rows (the kernel needs
// √5·h < 1, n ≥ 12), and ErrRankDeficient when S has fewer than
// min(N, T−1) positive eigenvalues (a constant or duplicated asset). Panics
// as LedoitWolf. Cost O(min(N,T)³ + T·N·min(N,T) + N²·min(N,T)).
//
// References: Ledoit, O. and Wolf, M. (2020), "Analytical nonlinear
// shrinkage of large-dimensional covariance matrices", Annals of Statistics
// 48(5):3043–3065, section 4 (volume and pages from memory).
func Nonlinear(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, NonlinearResult, error) {
	dense.CheckSym(dst, colsOf(x))
	s, err := newSample(x, w, 13)
	if err != nil {
		return dst, NonlinearResult{}, err
	}
	p := s.n
	nn := s.t - 1
	b := scaledRows(s.y, func(t int) float64 { return math.Sqrt(s.weight(t) * float64(s.t) / float64(nn)) })
	vals, u, err := rowSpectrum(b)
	if err != nil {
		return dst, NonlinearResult{}, err
	}
	m := min(p, nn)
	lambda := vals[len(vals)-m:]
	vecs := mat.NewDense(m, p, nil)
	for i := 0; i < m; i++ {
		vecs.SetRow(i, u.RawRowView(len(vals)-m+i))
	}
	if lim := lambda[m-1] * float64(p) * eps * 16; !(lambda[0] > lim) {
		return dst, NonlinearResult{}, &DataError{Row: -1, Col: -1, Value: lambda[0], Err: ErrRankDeficient}
	}
	res := NonlinearResult{Sample: append([]float64(nil), lambda...)}
	res.Formula, res.FormulaNull = nonlinearShrink(lambda, p, nn)
	res.Shrunk, res.Null, res.Pooled = monotone(res.Formula, res.FormulaNull, p-m)
	dst = dense.SizeSym(dst, p)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range res.Shrunk {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if p > nn {
		d := make([]float64, m)
		for i, v := range res.Shrunk {
			d[i] = v - res.Null
		}
		recompose(dst, vecs, d, res.Null)
		lo, hi = math.Min(lo, res.Null), math.Max(hi, res.Null)
	} else {
		recompose(dst, vecs, res.Shrunk, 0)
	}
	res.Condition = condition([]float64{lo, hi})
	return dst, res, nil
}

// nonlinearShrink applies the formulas of Nonlinear to the m ascending
// nonzero eigenvalues lambda of a p-dimensional sample of size n.
func nonlinearShrink(lambda []float64, p, n int) (shrunk []float64, null float64) {
	m := len(lambda)
	h := math.Pow(float64(n), -1.0/3)
	s5 := math.Sqrt(5)
	ft := make([]float64, m)
	ht := make([]float64, m)
	for i, li := range lambda {
		var f, hs float64
		for _, lj := range lambda {
			bw := h * lj
			x := (li - lj) / bw
			f += math.Max(1-x*x/5, 0) / bw
			hx := hilbertKernel(x)
			hs += hx / bw
		}
		ft[i] = 3 / (4 * s5) * f / float64(m)
		ht[i] = hs / float64(m)
	}
	shrunk = make([]float64, m)
	if p <= n {
		c := float64(p) / float64(n)
		for i, l := range lambda {
			a := math.Pi * c * l * ft[i]
			b := 1 - c - math.Pi*c*l*ht[i]
			shrunk[i] = l / (a*a + b*b)
		}
		return shrunk, 0
	}
	var inv float64
	for _, l := range lambda {
		inv += 1 / l
	}
	inv /= float64(m)
	h0 := (3/(10*h*h) + 3/(4*s5*h)*(1-1/(5*h*h))*math.Log((1+s5*h)/(1-s5*h))) * inv / math.Pi
	null = 1 / (math.Pi * float64(p-n) / float64(n) * h0)
	for i, l := range lambda {
		shrunk[i] = l / (math.Pi * math.Pi * l * l * (ft[i]*ft[i] + ht[i]*ht[i]))
	}
	return shrunk, null
}

// monotone returns the weighted isotonic regression of (null with weight
// nNull, then d with unit weights), by pool-adjacent-violators, and the
// number of values it changed. nNull = 0 leaves out the null value.
func monotone(d []float64, null float64, nNull int) ([]float64, float64, int) {
	type block struct {
		sum, w float64
		n      int
	}
	var st []block
	push := func(v, w float64, cnt int) {
		st = append(st, block{v * w, w, cnt})
		for len(st) > 1 {
			a, b := st[len(st)-2], st[len(st)-1]
			if a.sum/a.w <= b.sum/b.w {
				break
			}
			st = st[:len(st)-2]
			st = append(st, block{a.sum + b.sum, a.w + b.w, a.n + b.n})
		}
	}
	if nNull > 0 {
		push(null, float64(nNull), 1)
	}
	for _, v := range d {
		push(v, 1, 1)
	}
	out := make([]float64, 0, len(d)+1)
	for _, b := range st {
		for k := 0; k < b.n; k++ {
			out = append(out, b.sum/b.w)
		}
	}
	pooled := 0
	newNull := null
	if nNull > 0 {
		newNull = out[0]
		if newNull != null {
			pooled += nNull
		}
		out = out[1:]
	}
	for i, v := range out {
		if v != d[i] {
			pooled++
		}
	}
	return out, newNull, pooled
}

// hilbertKernel returns the Hilbert transform of the Epanechnikov kernel,
//
//	g(x) = −(3/(10π)) x + (3/(4√5π))(1 − x²/5) ln|(√5 − x)/(√5 + x)|,
//
// with g(±√5) = ∓3√5/(10π). For |x| > 20 the two terms cancel to about
// 1/x and lose up to x² of precision in floating point, so there it uses
// the expansion of ln|(x − √5)/(x + √5)| = −2 artanh(√5/x):
//
//	g(x) = −(3/(√5π)) Σ_{k≥1} (√5/x)^(2k−1) / ((2k−1)(2k+1)).
func hilbertKernel(x float64) float64 {
	s5 := math.Sqrt(5)
	if math.Abs(x) <= 20 {
		if math.Abs(x) == s5 {
			return -3 / (10 * math.Pi) * x
		}
		return -3/(10*math.Pi)*x + 3/(4*s5*math.Pi)*(1-x*x/5)*math.Log(math.Abs((s5-x)/(s5+x)))
	}
	r := s5 / x
	r2 := r * r
	var sum float64
	term := r
	for k := 1; k <= 12; k++ {
		sum += term / float64((2*k-1)*(2*k+1))
		term *= r2
	}
	return -3 / (s5 * math.Pi) * sum
}
