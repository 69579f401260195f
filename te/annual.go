package te

import "math"

// Annualize scales a per-period volatility (a tracking error, a total risk,
// a contribution) to an annual one under the usual assumption of serially
// uncorrelated returns:
//
//	annual = perPeriod · √periodsPerYear
//
// 252 periods per year for daily data is common practice. Annualize panics if
// periodsPerYear is not positive and finite: it is a setting, not data.
func Annualize(perPeriod, periodsPerYear float64) float64 {
	if !(periodsPerYear > 0) || math.IsInf(periodsPerYear, 0) {
		panic("te: periods per year must be positive and finite")
	}
	return perPeriod * math.Sqrt(periodsPerYear)
}
