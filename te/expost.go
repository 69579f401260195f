package te

import "math"

// ExPost is a realised tracking error.
type ExPost struct {
	TE    float64 // per period
	Mean  float64 // mean active return per period (0 with ZeroMean)
	Count int     // number of observations
}

// ExPostOptions are the settings of Realized. The zero value (or nil) is the
// default: deviations about the sample mean with divisor T − 1.
type ExPostOptions struct {
	// ZeroMean measures deviations about zero with divisor T instead, as
	// when a manager's mean active return is part of the risk taken.
	ZeroMean bool
}

// Realized returns the ex-post tracking error of a series of active returns
// r_t (portfolio return minus benchmark return per period), to compare with
// the ex-ante forecast:
//
//	TE = √( Σ_t (r_t − r̄)² / (T − 1) )       (default)
//	TE = √( Σ_t r_t² / T )                    (ZeroMean)
//
// The default divisor T − 1 matches numpy's std(ddof=1). Realized returns
// an *InputError wrapping ErrNonFinite for a non-finite return (naming its
// index) and ErrTooFewObs for fewer than 2 returns (1 with ZeroMean). Cost O(T).
func Realized(active []float64, opts *ExPostOptions) (ExPost, error) {
	zero := opts != nil && opts.ZeroMean
	t := len(active)
	if t < 2 && !(zero && t == 1) {
		return ExPost{}, ErrTooFewObs
	}
	var sum float64
	for i, v := range active {
		if !finite(v) {
			return ExPost{}, &InputError{Field: "active returns", Index: i, Column: -1, Value: v, Err: ErrNonFinite}
		}
		sum += v
	}
	e := ExPost{Count: t}
	div := float64(t)
	if !zero {
		e.Mean = sum / float64(t)
		div--
	}
	var ss float64
	for _, v := range active {
		dv := v - e.Mean
		ss += dv * dv
	}
	e.TE = math.Sqrt(ss / div)
	return e, nil
}

// Ratio returns the realised tracking error divided by a forecast one, the
// bias statistic of the forecast: near 1 for a good forecast, with an
// approximate 95 % band of 1 ± √(2/T) (common practice, no single source).
// It returns +Inf for a zero forecast with a non-zero realised TE and NaN for
// 0/0.
func (e ExPost) Ratio(forecast float64) float64 { return e.TE / forecast }
