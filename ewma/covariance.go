package ewma

import (
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Covariance sets dst to the weighted covariance of the columns of the T×N
// matrix x (rows are dates, NaN is missing) and returns it with diagnostics:
//
//	Σ_ij = Σ_t w_t m_ti m_tj (x_ti − μ_i)(x_tj − μ_j) / Σ_t w_t m_ti m_tj
//
// where m_ti is 1 if x_ti is present. μ = 0 by default (zero mean); with
// opts.Demean, μ_i and μ_j are the weighted means over the dates the pair
// shares. The divisor is the pair's total weight, so the weights are
// renormalised over the dates used and need not sum to 1; opts.Unbiased
// multiplies by (Σw)²/((Σw)² − Σw²) over those dates (pandas' bias=False).
// A nil w means equal weights.
//
// Missing data are handled pairwise unless opts.CompleteCase is set. When a
// value is missing the pairwise matrix is checked for positive
// semidefiniteness (a Cholesky factorization on all cores, then an
// eigendecomposition if that fails) and repaired if needed; Report.Repair
// says how. The eigendecomposition is of order N only when it must be: the
// F×F block of the columns observed on every used date has rank at most U,
// the number of used dates, so with |P| gapped columns the matrix lives in
// a subspace of dimension at most U + 8 + 2|P|, found and checked by a
// sketch and a probe (see the repair in psd.go); when that is at most 2N/3
// the decomposition is of that order and the N − (U + 8 + 2|P|) others are
// exactly zero.
//
// A nil or empty dst is allocated. Covariance panics with mat.ErrShape if
// len(w) ≠ T or dst is neither nil, empty nor N×N. It returns an error wrapping ErrWeight,
// ErrNonFinite (an Inf in x, or an entry that overflows), ErrAllMissing, ErrTooFewObs (a column or pair with
// fewer than 2 common observations) or ErrEffectiveObs (a pair below
// opts.MinEffectiveObs). Cost: one to four O(T·N²) products on all cores
// through internal/dense; when data are missing, N³/3 flops on all cores for
// the Cholesky check and, if it fails, O(N²·k) on all cores plus a k×k
// eigendecomposition (gonum, single-threaded) with k ≤ U + 8 + 2|P| when
// k ≤ 2N/3, else one of order N (O(N³), single-threaded).
//
// References: pandas 1.5.3, DataFrame.ewm(halflife=h, adjust=True).cov();
// Higham, N. J. (1988), "Computing a nearest symmetric positive semidefinite
// matrix", Linear Algebra Appl. 103:103–118 (eigenvalue clipping).
func Covariance(dst *mat.SymDense, x mat.Matrix, w []float64, opts *Options) (*mat.SymDense, *Report, error) {
	_, n := x.Dims()
	dst = dense.SizeSym(dst, n)
	o := opts.orZero()
	d, err := load(x, w, o)
	if err != nil {
		return dst, nil, err
	}
	m := d.products(o.Demean, false)
	rep := &Report{}
	if err := finishCov(dst, m, o, o.Unbiased, rep); err != nil {
		return dst, rep, err
	}
	if m.wt != nil {
		rep.Checked = true
		rep.Repair = makePSD(dst, m)
	}
	return dst, rep, nil
}

// Correlation sets dst to the weighted correlation of the columns of x and
// returns it with diagnostics:
//
//	C_ij = Σ_ij / √(Σ_ii Σ_jj)
//
// with Σ the biased covariance of Covariance (opts.Unbiased is ignored: it
// would cancel without missing data). With pairwise data all three moments
// of an entry use the dates both assets share (and, with Demean, the means
// over those dates), so |C_ij| ≤ 1: pandas' convention, whose pairwise
// DataFrame.ewm().corr() masks each column with the other's gaps. A pairwise
// correlation matrix can still fail to be positive semidefinite; it is then
// repaired as in Covariance, which keeps the unit diagonal, and the repair
// is reported.
//
// Panics and errors as for Covariance, plus ErrZeroVariance for a column of
// zero variance. Cost as for Covariance.
//
// References: pandas 1.5.3, DataFrame.ewm(halflife=h, adjust=True).corr();
// Higham, N. J. (1988), "Computing a nearest symmetric positive semidefinite
// matrix", Linear Algebra Appl. 103:103–118.
func Correlation(dst *mat.SymDense, x mat.Matrix, w []float64, opts *Options) (*mat.SymDense, *Report, error) {
	_, n := x.Dims()
	dst = dense.SizeSym(dst, n)
	o := opts.orZero()
	d, err := load(x, w, o)
	if err != nil {
		return dst, nil, err
	}
	m := d.products(o.Demean, true)
	rep := &Report{}
	if err := finishCorr(dst, m, o, rep); err != nil {
		return dst, rep, err
	}
	return dst, rep, nil
}

func finishCorr(dst *mat.SymDense, m *sums, o Options, rep *Report) error {
	if err := finishCov(dst, m, o, false, rep); err != nil {
		return err
	}
	if err := correlate(dst, m); err != nil {
		return err
	}
	if m.wt != nil {
		rep.Checked = true
		rep.Repair = makePSD(dst, m)
	}
	return nil
}
