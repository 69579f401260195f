package riskmodel

import (
	"fmt"
	"math"
)

// ForecastMiss is the forecast's error relative to the realised volatility,
// forecast / realised − 1 = 1/b − 1 for a bias statistic b: −0.09 means the
// forecasts were about 9 % too low (b ≈ 1.10), +0.11 that they were about
// 11 % too high (b ≈ 0.90). It is +Inf for a bias statistic of zero (a test
// portfolio that did not move).
func (b *Bias) ForecastMiss() float64 { return 1/b.Value - 1 }

// Words says the bias in words a committee reads: the direction and size of
// the forecasts' miss over the dates measured (Miss), and the statistic with
// its band, e.g. "forecasts about 9 % too low over the last 252 dates
// (2024-01-02 to 2024-12-31): bias statistic 1.100, outside the band [0.911,
// 1.089]".
func (b *Bias) Words() string {
	state := "inside"
	if !b.Inside {
		state = "outside"
	}
	return b.Miss() + fmt.Sprintf(": bias statistic %.3f, %s the band [%.3f, %.3f]", b.Value, state, b.Lower, b.Upper)
}

// Miss says the direction and size of the forecasts' miss and the dates it
// was measured over, e.g. "forecasts about 9 % too low over the last 252
// dates (2024-01-02 to 2024-12-31)".
func (b *Bias) Miss() string {
	miss := b.ForecastMiss()
	var how string
	switch pct := math.Round(100 * math.Abs(miss)); {
	case math.IsInf(miss, 0):
		how = "forecasts far too high (the test portfolio did not move)"
	case pct == 0:
		how = "forecasts on target (within 0.5 %)"
	case miss < 0:
		how = fmt.Sprintf("forecasts about %.0f %% too low", pct)
	default:
		how = fmt.Sprintf("forecasts about %.0f %% too high", pct)
	}
	s := fmt.Sprintf("%s over the last %d dates", how, b.Observations)
	if b.First != 0 {
		s += fmt.Sprintf(" (%s to %s)", b.First, b.Last)
	}
	return s
}

// Problem is the validation problem a bias outside its band raises, in
// words; empty when the bias is inside the band.
func (b *Bias) Problem() string {
	if b.Inside {
		return ""
	}
	return "test portfolio " + b.Words()
}
