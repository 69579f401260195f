package ewma

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Settings for Estimate. VolHalfLife and CorrHalfLife have no sensible zero
// and are required.
type Settings struct {
	VolHalfLife  float64 // half-life of the volatility weights, in periods; required
	CorrHalfLife float64 // half-life of the correlation weights, in periods; required
	// NeweyWestLags is 0 for no adjustment, a positive number of lags, or
	// AutoLags for ⌊4(T/100)^(2/9)⌋.
	NeweyWestLags int
	Options       // missing data, mean and bias handling, as for Covariance
}

// Estimate sets dst to the risk forecast with separate half-lives for
// volatility and correlation and returns it with diagnostics:
//
//	Σ = D·C·D,   D = diag(σ_1 … σ_N)
//
// σ²_i is the weighted variance of column i (Variances, with its own
// observations) under Weights(T, VolHalfLife), and C the weighted correlation
// (Correlation) under Weights(T, CorrHalfLife), both over the T rows of x.
// With NeweyWestLags ≠ 0 both are computed from the Newey–West adjusted
// covariance of NeweyWest under their own weights (the variances from its
// diagonal, C by dividing it by the square roots of its diagonal, so with
// gaps an entry of C may leave [−1, 1] before the repair). C is checked and repaired as in
// Correlation when values are missing or lags are used, so Σ is positive
// semidefinite. The Report is that of the correlation step, with
// VolEffectiveObs from the volatility weights.
//
// A nil or empty dst is allocated; Estimate panics with mat.ErrShape if dst
// is neither nil, empty nor N×N.
// It returns an error wrapping ErrHalfLife for a missing or bad half-life,
// ErrLags for a bad lag count, ErrZeroVariance for a non-positive variance,
// and the errors of Covariance. Cost as for Covariance (NeweyWest).
//
// References: J.P. Morgan/Reuters (1996), RiskMetrics — Technical Document,
// 4th ed., chapter 5; Newey, W. K. and West, K. D. (1987), Econometrica
// 55(3):703–708.
func Estimate(dst *mat.SymDense, x mat.Matrix, s Settings) (*mat.SymDense, *Report, error) {
	t, n := x.Dims()
	dst = dense.SizeSym(dst, n)
	if !validHalfLife(s.VolHalfLife) {
		return dst, nil, errAt(ErrHalfLife, -1, -1, -1, s.VolHalfLife)
	}
	if !validHalfLife(s.CorrHalfLife) {
		return dst, nil, errAt(ErrHalfLife, -1, -1, -1, s.CorrHalfLife)
	}
	lags, err := resolveLags(s.NeweyWestLags, t)
	if err != nil {
		return dst, nil, err
	}
	if t < 1 {
		return dst, nil, errAt(ErrTooFewObs, -1, -1, -1, 0)
	}
	o := s.Options
	wv, _ := Weights(nil, t, s.VolHalfLife)
	wc, _ := Weights(nil, t, s.CorrHalfLife)

	vars, err := Variances(nil, x, wv, &o)
	if err != nil {
		return dst, nil, err
	}
	if lags > 0 {
		d, err := load(x, wv, o)
		if err != nil {
			return dst, nil, err
		}
		adj := d.lagDiag(lags, o.Demean)
		if o.Unbiased {
			// Variances applied the factor to Γ_0; give the lag terms the same.
			plain := o
			plain.Unbiased = false
			raw, _ := Variances(nil, x, wv, &plain)
			for i := range adj {
				adj[i] *= vars[i] / raw[i]
			}
		}
		for i := range vars {
			vars[i] += adj[i]
		}
	}
	for i, v := range vars {
		if !(v > 0) {
			return dst, nil, errAt(ErrZeroVariance, -1, i, -1, v)
		}
	}

	d, err := load(x, wc, o)
	if err != nil {
		return dst, nil, err
	}
	m := d.products(o.Demean, true)
	rep := &Report{NeweyWestLags: lags}
	if err := finishCov(dst, m, o, false, rep); err != nil {
		return dst, rep, err
	}
	if lags > 0 {
		plain := o
		plain.Unbiased = false
		addLagTerms(dst, d, m, lags, plain)
	}
	if lags > 0 {
		err = normalise(dst)
	} else {
		err = correlate(dst, m)
	}
	if err != nil {
		return dst, rep, err
	}
	if m.wt != nil || lags > 0 {
		rep.Checked = true
		rep.Repair = makePSD(dst, m)
	}
	rep.VolEffectiveObs = EffectiveObs(wv)

	raw := dst.RawSymmetric()
	sd := make([]float64, n)
	for i, v := range vars {
		sd[i] = math.Sqrt(v)
	}
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			raw.Data[i*raw.Stride+j] *= sd[i] * sd[j]
		}
	}
	return dst, rep, nil
}
