package ewma

import (
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Means sets dst to the weighted mean of each column of the T×N matrix x
// over its own observations and returns dst:
//
//	μ_j = Σ_t w_t m_tj x_tj / Σ_t w_t m_tj
//
// where m_tj is 1 if x_tj is present (not NaN) and 0 otherwise. A nil w means
// equal weights. With opts.CompleteCase only the rows with no missing value
// are used. A nil or empty dst is allocated.
//
// Means panics with mat.ErrShape if len(w) ≠ T or dst is neither nil, empty
// nor of length N. It returns an error wrapping ErrWeight for a negative or
// non-finite weight, ErrNonFinite for an Inf, ErrAllMissing for a column with
// no observation and ErrTooFewObs for one with a single observation. Cost
// O(T·N).
//
// References: pandas 1.5.3, DataFrame.ewm(halflife=h, adjust=True).mean().
func Means(dst []float64, x mat.Matrix, w []float64, opts *Options) ([]float64, error) {
	_, n := x.Dims()
	dst = dense.SizeVec(dst, n)
	d, err := load(x, w, opts.orZero())
	if err != nil {
		return dst, err
	}
	copy(dst, d.columnMeans())
	return dst, nil
}

// Variances sets dst to the weighted variance of each column of the T×N
// matrix x over its own observations (NaN is missing, the weights are
// renormalised over the column's observations) and returns dst:
//
//	σ²_j = Σ_t w_t m_tj (x_tj − μ_j)² / Σ_t w_t m_tj
//
// with μ_j = 0 by default and the weighted mean with opts.Demean. The divisor
// is the total weight Σ_t w_t m_tj; opts.Unbiased multiplies by
// (Σw)²/((Σw)² − Σw²) over the column's observations (pandas' bias=False). A
// nil w means equal weights; a nil or empty dst is allocated.
//
// Variances panics with mat.ErrShape if len(w) ≠ T or dst is neither nil, empty nor
// of length N. It returns an error wrapping ErrWeight, ErrNonFinite,
// ErrAllMissing, ErrTooFewObs (a column with fewer than 2 observations) or
// ErrEffectiveObs (below opts.MinEffectiveObs). Cost O(T·N).
//
// References: pandas 1.5.3, DataFrame.ewm(halflife=h, adjust=True).var().
func Variances(dst []float64, x mat.Matrix, w []float64, opts *Options) ([]float64, error) {
	_, n := x.Dims()
	dst = dense.SizeVec(dst, n)
	o := opts.orZero()
	if raw, ok := x.(*mat.Dense); ok && !o.CompleteCase {
		return variancesDense(dst, raw, w, o)
	}
	d, err := load(x, w, o)
	if err != nil {
		return dst, err
	}
	mu := make([]float64, n)
	if o.Demean {
		mu = d.columnMeans()
	}
	ss := make([]float64, n)
	tot := make([]float64, n)
	tot2 := make([]float64, n)
	for i := 0; i < d.t; i++ {
		wi := d.w[i]
		if wi == 0 {
			continue
		}
		row := d.x0[i*n : (i+1)*n]
		for j, v := range row {
			if d.mask != nil && d.mask[i*n+j] == 0 {
				continue
			}
			e := v - mu[j]
			ss[j] += wi * e * e
			tot[j] += wi
			tot2[j] += wi * wi
		}
	}
	return finishVariances(dst, ss, tot, tot2, o)
}
