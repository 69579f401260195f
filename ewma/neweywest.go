package ewma

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// AutoLags asks for the automatic Newey–West lag NeweyWestLag(T).
const AutoLags = -1

// NeweyWestLag returns the automatic lag of the Newey–West estimator for T
// observations:
//
//	L = ⌊4 (T/100)^(2/9)⌋
//
// the rule of statsmodels' sandwich_covariance.S_hac_simple (4 for T = 252).
// It returns 0 for T < 1.
//
// References: Newey, W. K. and West, K. D. (1994), "Automatic lag selection
// in covariance matrix estimation", Review of Economic Studies 61(4):631–653;
// statsmodels 0.13.5, sandwich_covariance.S_hac_simple.
func NeweyWestLag(t int) int {
	if t < 1 {
		return 0
	}
	return int(math.Floor(4 * math.Pow(float64(t)/100, 2.0/9.0)))
}

// NeweyWest sets dst to the weighted covariance of Covariance adjusted
// for serial correlation with Bartlett weights, and returns it with
// diagnostics:
//
//	Σ_NW = Γ_0 + Σ_{j=1..L} (1 − j/(L+1)) (Γ_j + Γ_jᵀ)
//	Γ_j  = Σ_{t=j..T−1} w_t y_t y_{t−j}ᵀ / Σ_t w_t
//
// with y_t = x_t (zero mean) or x_t − μ (opts.Demean, μ the weighted column
// means), the weight of a lagged product being that of its later date, and
// the divisor the total weight of Γ_0 (not of the T−j pairs, as in Newey and
// West's 1/T). With missing data the missing values enter the lagged
// products as zero and each entry is divided by its pair's Γ_0 weight; with
// opts.Unbiased the whole entry takes Γ_0's factor. With equal weights and
// complete data this is statsmodels' S_hac_simple(x, nlags=L) divided by T.
// lags = AutoLags uses NeweyWestLag(T); lags = 0 gives Covariance.
//
// Exponential weights or missing data can make Σ_NW indefinite, so the result
// is checked and, if needed, repaired as in Covariance whenever L > 0 or a
// value is missing.
//
// Panics as for Covariance. Errors as for Covariance, plus ErrLags for
// lags < 0 other than AutoLags or lags ≥ T. Cost: Covariance plus O(T·N·L)
// and one T×N×N matrix product.
//
// References: Newey, W. K. and West, K. D. (1987), "A simple, positive
// semi-definite, heteroskedasticity and autocorrelation consistent covariance
// matrix", Econometrica 55(3):703–708; statsmodels 0.13.5,
// sandwich_covariance.S_hac_simple.
func NeweyWest(dst *mat.SymDense, x mat.Matrix, w []float64, lags int, opts *Options) (*mat.SymDense, *Report, error) {
	t, n := x.Dims()
	dst = dense.SizeSym(dst, n)
	lags, err := resolveLags(lags, t)
	if err != nil {
		return dst, nil, err
	}
	o := opts.orZero()
	d, err := load(x, w, o)
	if err != nil {
		return dst, nil, err
	}
	m := d.products(o.Demean, false)
	rep := &Report{NeweyWestLags: lags}
	if err := finishCov(dst, m, o, o.Unbiased, rep); err != nil {
		return dst, rep, err
	}
	if lags > 0 {
		addLagTerms(dst, d, m, lags, o)
	}
	if m.wt != nil || lags > 0 {
		rep.Checked = true
		rep.Repair = makePSD(dst, m)
	}
	return dst, rep, nil
}

func resolveLags(lags, t int) (int, error) {
	if lags == AutoLags {
		lags = NeweyWestLag(t)
	}
	if lags < 0 || (lags > 0 && lags >= t) {
		return 0, errAt(ErrLags, -1, -1, -1, float64(lags))
	}
	return lags, nil
}

// centred returns the row-major T×N data with missing values 0 and, with
// demean, the weighted column means subtracted from the present values.
func (d *panelData) centred(demean bool) []float64 {
	if !demean {
		return d.x0
	}
	mu := d.columnMeans()
	y := make([]float64, len(d.x0))
	for i := 0; i < d.t; i++ {
		for j := 0; j < d.n; j++ {
			k := i*d.n + j
			if d.mask == nil || d.mask[k] == 1 {
				y[k] = d.x0[k] - mu[j]
			}
		}
	}
	return y
}

// lagZ returns z_t = w_t Σ_{j=1..L, j≤t} (1 − j/(L+1)) y_{t−j}, so that
// Σ_j b_j Γ_j (unnormalised) is Yᵀ Z: one product instead of L.
func (d *panelData) lagZ(y []float64, lags int) []float64 {
	t, n := d.t, d.n
	z := make([]float64, t*n)
	for i := 1; i < t; i++ {
		zi := z[i*n : (i+1)*n]
		for j := 1; j <= lags && j <= i; j++ {
			b := 1 - float64(j)/float64(lags+1)
			yr := y[(i-j)*n : (i-j+1)*n]
			for k, v := range yr {
				zi[k] += b * v
			}
		}
		for k := range zi {
			zi[k] *= d.w[i]
		}
	}
	return z
}

// addLagTerms adds Σ_j b_j (Γ_j + Γ_jᵀ), each entry divided by its pair's
// Γ_0 weight (and scaled by the Unbiased factor), to the covariance in dst.
func addLagTerms(dst *mat.SymDense, d *panelData, m *sums, lags int, o Options) {
	t, n := d.t, d.n
	y := d.centred(o.Demean)
	z := d.lagZ(y, lags)
	var g mat.Dense
	dense.MulTA(&g, mat.NewDense(t, n, y), mat.NewDense(t, n, z))
	raw := dst.RawSymmetric()
	for i := 0; i < n; i++ {
		for k := i; k < n; k++ {
			wt, w2, _ := m.pair(i*n + k)
			v := (g.At(i, k) + g.At(k, i)) / wt
			if o.Unbiased {
				v *= wt * wt / (wt*wt - w2)
			}
			raw.Data[i*raw.Stride+k] += v
		}
	}
}

// lagDiag returns the diagonal of Σ_j b_j (Γ_j + Γ_jᵀ) divided by each
// column's own weight: the Newey–West correction of the variances alone, in
// O(T·N·L).
func (d *panelData) lagDiag(lags int, demean bool) []float64 {
	t, n := d.t, d.n
	y := d.centred(demean)
	z := d.lagZ(y, lags)
	out := make([]float64, n)
	tot := make([]float64, n)
	for i := 0; i < t; i++ {
		for k := 0; k < n; k++ {
			out[k] += 2 * y[i*n+k] * z[i*n+k]
			if d.mask == nil || d.mask[i*n+k] == 1 {
				tot[k] += d.w[i]
			}
		}
	}
	for k := range out {
		out[k] /= tot[k]
	}
	return out
}
