package evaluate

import (
	"math"

	"github.com/riskmodel/riskmodel"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/internal/dense"
)

// Statistics of the evaluation: intervals with a known distribution, the bias
// statistic over a series of standardized returns, and the loss functions
// against a known true covariance.

// Level is the confidence level of every interval of an Result.
const Level = 0.95

// Interval is an estimate with a confidence interval at Level.
type Interval struct {
	Value, Lower, Upper float64
}

// volInterval returns the sample standard deviation of x (divisor T − 1,
// mean removed) with its chi-square interval, which is exact for normal
// returns:
//
//	(T − 1)s²/σ² ~ χ²(T − 1)  ⇒  σ ∈ [ s·√((T−1)/χ²₀.₉₇₅),  s·√((T−1)/χ²₀.₀₂₅) ]
//
// Fat tails make the true coverage lower; the interval is a guide to the
// noise, not a test. Fewer than 2 values give NaN.
//
// References: Casella, G. & Berger, R.L. (2002), Statistical Inference, 2nd
// ed., Duxbury, Example 9.2.10 (interval for a normal variance).
func volInterval(x []float64) Interval {
	t := len(x)
	if t < 2 {
		return Interval{math.NaN(), math.NaN(), math.NaN()}
	}
	s := evalStd(x)
	chi := distuv.ChiSquared{K: float64(t - 1)}
	a := (1 - Level) / 2
	return Interval{
		Value: s,
		Lower: s * math.Sqrt(float64(t-1)/chi.Quantile(1-a)),
		Upper: s * math.Sqrt(float64(t-1)/chi.Quantile(a)),
	}
}

// shareInterval returns the share k/n with its Wilson score interval
//
//	(p̂ + z²/2n ± z·√(p̂(1−p̂)/n + z²/4n²)) / (1 + z²/n),   z = Φ⁻¹(0.975).
//
// n = 0 gives NaN.
//
// References: Wilson, E.B. (1927), "Probable inference, the law of
// succession, and statistical inference", J. American Statistical
// Association 22(158):209–212.
func shareInterval(k, n int) Interval {
	if n == 0 {
		return Interval{math.NaN(), math.NaN(), math.NaN()}
	}
	z := distuv.UnitNormal.Quantile(1 - (1-Level)/2)
	nf := float64(n)
	p := float64(k) / nf
	den := 1 + z*z/nf
	mid := (p + z*z/(2*nf)) / den
	half := z * math.Sqrt(p*(1-p)/nf+z*z/(4*nf*nf)) / den
	return Interval{Value: p, Lower: math.Max(0, mid-half), Upper: math.Min(1, mid+half)}
}

// biasOf returns the bias statistic of a series of standardized returns
// z_t = r_t / σ̂_t: their standard deviation (divisor T − 1, mean removed, as
// riskmodel.BiasStatistic), with the band 1 ± √(2/T) (common practice, no source).
func biasOf(z []float64) riskmodel.Bias {
	t := len(z)
	b := riskmodel.Bias{Observations: t, Value: math.NaN(), Lower: math.NaN(), Upper: math.NaN()}
	if t < 2 {
		return b
	}
	b.Value = evalStd(z)
	half := math.Sqrt(2 / float64(t))
	b.Lower, b.Upper = 1-half, 1+half
	b.Inside = b.Value >= b.Lower && b.Value <= b.Upper
	return b
}

func evalStd(x []float64) float64 {
	var mean float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	var ss float64
	for _, v := range x {
		ss += (v - mean) * (v - mean)
	}
	return math.Sqrt(ss / float64(len(x)-1))
}

// frobeniusLoss returns Ledoit & Wolf's (2004) normalized Frobenius loss
//
//	L_F(Σ̂, Σ) = ‖Σ̂ − Σ‖² = tr((Σ̂ − Σ)(Σ̂ − Σ)ᵀ) / N
//
// (the norm of their Definition 1, divided by the dimension N). Cost O(N²)
// for a dense forecast, O(N²·K) for a factor model read element by element.
//
// References: Ledoit, O. & Wolf, M. (2004), "A well-conditioned estimator for
// large-dimensional covariance matrices", J. Multivariate Analysis
// 88(2):365–411, Section 2 (the norm) and Section 3.1 (the loss).
func frobeniusLoss(est *mat.SymDense, truth *mat.SymDense) float64 {
	n := truth.SymmetricDim()
	e, t := est.RawSymmetric(), truth.RawSymmetric()
	var s float64
	for i := 0; i < n; i++ {
		er, tr := e.Data[i*e.Stride:i*e.Stride+n], t.Data[i*t.Stride:i*t.Stride+n]
		d := er[i] - tr[i]
		s += d * d
		for j := i + 1; j < n; j++ {
			d := er[j] - tr[j]
			s += 2 * d * d
		}
	}
	return s / float64(n)
}

// fullBlock is the side of the square blocks evalFullTo mirrors the upper
// triangle in, so that the strided writes of a block stay in cache.
const fullBlock = 64

// evalFullTo writes the n×n symmetric s into dst (row-major, stride n,
// length n²), both triangles: each row's upper part by a copy, the lower
// part mirrored block by block.
func evalFullTo(dst []float64, s *mat.SymDense) {
	n := s.SymmetricDim()
	raw := s.RawSymmetric()
	for i := 0; i < n; i++ {
		copy(dst[i*n+i:i*n+n], raw.Data[i*raw.Stride+i:i*raw.Stride+n])
	}
	for i0 := 0; i0 < n; i0 += fullBlock {
		i1 := min(i0+fullBlock, n)
		for j0 := i0; j0 < n; j0 += fullBlock {
			j1 := min(j0+fullBlock, n)
			for i := i0; i < i1; i++ {
				row := dst[i*n : i*n+n]
				for j := max(j0, i+1); j < j1; j++ {
					dst[j*n+i] = row[j]
				}
			}
		}
	}
}

// prial returns Ledoit & Wolf's percentage relative improvement in average
// loss of an estimator over the sample covariance S,
//
//	PRIAL = 100 · (E[L(S)] − E[L(Σ̂)]) / E[L(S)]   (%),
//
// with the expectations replaced by averages over the rebalance dates: 0 for
// the sample covariance itself, 100 for a perfect forecast, negative for an
// estimator worse than S.
//
// References: Ledoit & Wolf (2004), J. Multivariate Analysis 88(2), Section
// 5.2 (the definition of the PRIAL, section number from memory).
func prial(lossSample, loss float64) float64 {
	return 100 * (lossSample - loss) / lossSample
}

// condTolerance is the condition number above which the minimum-variance
// loss of a dense forecast is NaN: its inverse has no correct digit left
// (gonum's mat.ConditionTolerance).
const condTolerance = 1e16

// truthFactor is what the losses against the truth of a test period need,
// computed once per date from its factor form Σ = WWᵀ + D (W = B·L with
// F = LLᵀ): Σ itself, dense, for the Frobenius loss; W and d for the
// minimum-variance loss's traces; and tr(Σ⁻¹)
// by the Woodbury identity (factorInverse). invTrace is NaN when the
// Woodbury inner matrix is not positive definite.
type truthFactor struct {
	sigma    *mat.SymDense
	w        *mat.Dense // N×K
	d        []float64
	invTrace float64
}

// newTruthFactor prepares the truth fm: Σ in O(N²·K), the rest in O(N·K²);
// no N×N factorization.
func newTruthFactor(fm *factor.Model) *truthFactor {
	g, _ := fm.SqrtTo(nil, nil) // Wᵀ
	tf := &truthFactor{sigma: fm.CovarianceTo(nil), w: mat.DenseCopyOf(g.T()), d: fm.SpecificVariancesTo(nil)}
	_, _, tf.invTrace = factorInverse(fm)
	return tf
}

// symFrob2 returns ‖a‖²_F.
func symFrob2(a *mat.Dense) float64 {
	r := a.RawMatrix()
	var s float64
	for i := 0; i < r.Rows; i++ {
		for _, v := range r.Data[i*r.Stride : i*r.Stride+r.Cols] {
			s += v * v
		}
	}
	return s
}

// mvLossOf returns the minimum-variance loss of the forecast behind op
// against the truth of tf (see mvLoss), NaN when either is not positive
// definite. A dense forecast reuses op's Cholesky factor for its inverse
// P = Σ̂⁻¹ (Cholesky.InverseTo, 2N³/3 flops on all cores); with the truth
// Σ = WWᵀ + D,
//
//	tr(Σ̂⁻¹) = tr(P),   tr(Σ̂⁻¹ΣΣ̂⁻¹) = ‖P·W‖²_F + Σᵢ dᵢ·‖P_i‖²,
//
// P_i the i-th row of P, in O(N²·K) more. A factor forecast stays in factor
// form (factorMVTraces), O(N·K²).
func mvLossOf(op *covOp, tf *truthFactor) float64 {
	if math.IsNaN(tf.invTrace) {
		return math.NaN()
	}
	n := tf.sigma.SymmetricDim()
	var tr, num float64
	switch {
	case op.fm != nil:
		tr, num = factorMVTraces(op.fm, tf)
	case op.chol != nil && op.cond <= condTolerance:
		op.sc.inv = grow(op.sc.inv, n*n)
		p := op.chol.InverseTo(mat.NewSymDense(n, op.sc.inv))
		rows := make([]float64, n) // ‖P_i‖², from the upper triangle
		raw := p.RawSymmetric()
		for i := 0; i < n; i++ {
			row := raw.Data[i*raw.Stride : i*raw.Stride+n]
			tr += row[i]
			rows[i] += row[i] * row[i]
			var s float64
			for j := i + 1; j < n; j++ {
				v := row[j] * row[j]
				s += v
				rows[j] += v
			}
			rows[i] += s
		}
		for i, v := range rows {
			num += tf.d[i] * v
		}
		if _, k := tf.w.Dims(); k > 0 {
			num += symFrob2(dense.Mul(nil, dense.SymView(p), tf.w))
		}
	default:
		return math.NaN()
	}
	nf := float64(n)
	return (num/nf)/((tr/nf)*(tr/nf)) - 1/(tf.invTrace/nf)
}

// symInner returns ⟨a, b⟩ = Σᵢⱼ aᵢⱼbᵢⱼ of two symmetric matrices, from their
// upper triangles.
func symInner(a, b *mat.SymDense) float64 {
	n := a.SymmetricDim()
	ra, rb := a.RawSymmetric(), b.RawSymmetric()
	var s float64
	for i := 0; i < n; i++ {
		x, y := ra.Data[i*ra.Stride:i*ra.Stride+n], rb.Data[i*rb.Stride:i*rb.Stride+n]
		s += x[i] * y[i]
		var off float64
		for j := i + 1; j < n; j++ {
			off += x[j] * y[j]
		}
		s += 2 * off
	}
	return s
}

// factorMVTraces returns tr(Σ̂⁻¹) and tr(Σ̂⁻¹ΣΣ̂⁻¹) for a factor forecast
// Σ̂ = WWᵀ + D (W = B·L, F = L·Lᵀ) by the Woodbury identity
//
//	Σ̂⁻¹ = D⁻¹ − YYᵀ,   Y = D⁻¹W·R⁻¹,   RᵀR = I + WᵀD⁻¹W,
//
// so that tr(Σ̂⁻¹) = Σᵢ 1/dᵢ − ‖Y‖²_F and, with Q = ΣY,
//
//	tr(Σ̂⁻¹ΣΣ̂⁻¹) = Σᵢ Σᵢᵢ/dᵢ² − 2·tr(YᵀD⁻¹Q) + tr(YᵀQ·YᵀY).
//
// Q comes from the truth's own factor form Σ = W_t·W_tᵀ + D_t as
// W_t·(W_tᵀY) + D_t·Y. Cost O(N·K²); no N×N matrix.
// Reference: Woodbury, M.A. (1950), "Inverting modified matrices",
// Memorandum Report 42, Statistical Research Group, Princeton University.
func factorMVTraces(fm *factor.Model, tf *truthFactor) (tr, num float64) {
	truth := tf.sigma
	n, k := fm.SymmetricDim(), fm.NumFactors()
	y, s, tr := factorInverse(fm)
	if math.IsNaN(tr) {
		return math.NaN(), math.NaN()
	}
	for i := 0; i < n; i++ {
		d := s[i] * s[i]
		num += truth.At(i, i) / (d * d)
	}
	if k == 0 {
		return tr, num
	}
	q := mat.NewDense(n, k, nil) // ΣY = W_t(W_tᵀY) + D_tY, N×K
	if _, kt := tf.w.Dims(); kt > 0 {
		var wy mat.Dense
		wy.Mul(tf.w.T(), y)
		q.Mul(tf.w, &wy)
	}
	for i, d := range tf.d {
		for j := 0; j < k; j++ {
			q.Set(i, j, q.At(i, j)+d*y.At(i, j))
		}
	}
	var yy, yq, ydq mat.Dense
	yy.Mul(y.T(), y)
	yq.Mul(y.T(), q)
	dq := mat.NewDense(n, k, nil)
	for i := 0; i < n; i++ {
		d := s[i] * s[i]
		for j := 0; j < k; j++ {
			dq.Set(i, j, q.At(i, j)/d)
		}
	}
	ydq.Mul(y.T(), dq)
	for j := 0; j < k; j++ {
		num -= 2 * ydq.At(j, j)
	}
	var m mat.Dense
	m.Mul(&yq, &yy)
	for j := 0; j < k; j++ {
		num += m.At(j, j)
	}
	return tr, num
}

// factorInverse returns the Woodbury form Σ̂⁻¹ = D⁻¹ − YYᵀ of the factor
// model fm (see factorMVTraces): Y (N×K, nil for K = 0), the specific
// volatilities s = √d and tr(Σ̂⁻¹) = Σᵢ 1/dᵢ − ‖Y‖²_F, NaN (and Y nil) when
// the inner matrix I + WᵀD⁻¹W is not positive definite. Cost O(N·K²).
func factorInverse(fm *factor.Model) (y *mat.Dense, s []float64, tr float64) {
	n, k := fm.SymmetricDim(), fm.NumFactors()
	g, s := fm.SqrtTo(nil, nil) // g = LᵀBᵀ (K×N) = Wᵀ, s = √d
	for i := 0; i < n; i++ {
		tr += 1 / (s[i] * s[i])
	}
	if k == 0 {
		return nil, s, tr
	}
	// H = D⁻¹W (N×K) and the K×K inner matrix I + WᵀD⁻¹W.
	h := mat.NewDense(n, k, nil)
	for i := 0; i < n; i++ {
		d := s[i] * s[i]
		for j := 0; j < k; j++ {
			h.Set(i, j, g.At(j, i)/d)
		}
	}
	inner := mat.NewSymDense(k, nil)
	for a := 0; a < k; a++ {
		for b := a; b < k; b++ {
			var v float64
			for i := 0; i < n; i++ {
				v += g.At(a, i) * h.At(i, b)
			}
			if a == b {
				v++
			}
			inner.SetSym(a, b, v)
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(inner) {
		return nil, s, math.NaN()
	}
	var r, rinv mat.TriDense
	ch.UTo(&r)
	if err := rinv.InverseTri(&r); err != nil {
		return nil, s, math.NaN()
	}
	// Y = H·R⁻¹.
	y = mat.NewDense(n, k, nil)
	y.Mul(h, &rinv)
	return y, s, tr - symFrob2(y)
}
