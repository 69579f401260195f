package factor

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
)

// DefaultRegimeHalfLife is the half-life, in periods, of the volatility-regime
// multiplier: four weeks of daily dates (common practice, no source; values
// of 20 to 42 days are used in the trade, from memory).
const DefaultRegimeHalfLife = 21

// RegimeSettings configure VolatilityRegime.
type RegimeSettings struct {
	// HalfLife weights the squared cross-sectional biases B_t²; 0 means
	// DefaultRegimeHalfLife.
	HalfLife float64
	// ForecastHalfLife is the half-life of the rolling variance forecast
	// σ²_{n,t−} that standardizes the returns: the half-life of the estimate
	// being adjusted. 0 means equal weights (the expanding mean of the
	// window's earlier dates), the forecast of an equally weighted estimate.
	ForecastHalfLife float64
	// Burn is the number of first dates that only start the rolling
	// forecast; 0 means min(T/2, max(21, ⌈ForecastHalfLife⌉)) (21 with
	// equal weights).
	Burn int
}

// Regime reports a volatility-regime multiplier and its history.
type Regime struct {
	HalfLife, ForecastHalfLife float64
	Burn                       int
	// Multiplier is λ², the factor applied to the forecast variances: the
	// last entry of History.
	Multiplier float64
	// Bias holds B_t for the dates t = Burn..T−1 of the window, and History
	// the multiplier λ²_t as it stood after each of them.
	Bias, History []float64
}

func (r *Regime) clone() *Regime {
	if r == nil {
		return nil
	}
	c := *r
	c.Bias = slices.Clone(r.Bias)
	c.History = slices.Clone(r.History)
	return &c
}

// VolatilityRegime measures how far recent returns stray from their
// forecast volatility, across the columns of the T×N matrix x (rows are
// dates, oldest first; NaN is missing), and returns the multiplier:
//
//	σ²_{n,t} = λ_f·σ²_{n,t−1} + (1 − λ_f)·x²_{n,t−1}   (rolling forecast, σ² at Burn the mean over the first Burn dates)
//	z_{n,t} = x_{n,t}/σ_{n,t},   B_t² = mean_n z²_{n,t}   (observed n only)
//	λ²_t = Σ_{s≤t} w_s·B_s² / Σ_{s≤t} w_s,   w_s = 0.5^((t−s)/HalfLife),
//
// with λ_f = 0.5^(1/ForecastHalfLife) (an expanding mean when it is 0).
// The adjusted forecast variance is λ²·σ̂² with λ² = λ²_{T−1}: λ² > 1 when
// the recent returns were larger than forecast. Each column's forecast uses
// only earlier dates, so B_t is an out-of-sample bias statistic; a missing
// x_{n,t} leaves σ²_{n,t+1} = σ²_{n,t}.
//
// It panics with mat.ErrShape for an empty x. It returns an error wrapping
// ErrSettings for a bad half-life or Burn, and ErrTooFewObs when fewer than
// two dates follow the burn-in or no column has a positive forecast there.
// Cost O(T·N).
//
// References: the cross-sectional bias statistic and its exponentially
// weighted square as a volatility multiplier are common practice in equity
// risk models, no single source; the forecast is that of J.P. Morgan/Reuters
// (1996), RiskMetrics — Technical Document, 4th ed., chapter 5.
func VolatilityRegime(x mat.Matrix, s RegimeSettings) (*Regime, error) {
	t, n := x.Dims()
	if t == 0 || n == 0 {
		panic(mat.ErrShape)
	}
	if s.HalfLife == 0 {
		s.HalfLife = DefaultRegimeHalfLife
	}
	if !(s.HalfLife > 0) || math.IsInf(s.HalfLife, 0) || !(s.ForecastHalfLife >= 0) || math.IsInf(s.ForecastHalfLife, 0) || s.Burn < 0 {
		return nil, fmt.Errorf("%w: regime half-lives %v, %v, burn %d", ErrSettings, s.HalfLife, s.ForecastHalfLife, s.Burn)
	}
	if s.Burn == 0 {
		s.Burn = min(t/2, max(21, int(math.Ceil(s.ForecastHalfLife))))
	}
	if t-s.Burn < 2 || s.Burn < 1 {
		return nil, fmt.Errorf("%w: %d dates leave fewer than 2 after a burn-in of %d", ErrTooFewObs, t, s.Burn)
	}
	lf := 0.0
	if s.ForecastHalfLife > 0 {
		lf = ewma.Decay(s.ForecastHalfLife)
	}
	lr := ewma.Decay(s.HalfLife)
	sig2 := make([]float64, n) // running forecast
	cnt := make([]float64, n)  // observations in the expanding mean
	for i := 0; i < s.Burn; i++ {
		for j := 0; j < n; j++ {
			if v := x.At(i, j); !math.IsNaN(v) {
				sig2[j] += v * v
				cnt[j]++
			}
		}
	}
	for j := range sig2 {
		if cnt[j] > 0 {
			sig2[j] /= cnt[j]
		}
	}
	rep := &Regime{HalfLife: s.HalfLife, ForecastHalfLife: s.ForecastHalfLife, Burn: s.Burn}
	var num, den float64
	for i := s.Burn; i < t; i++ {
		var b2 float64
		var used int
		for j := 0; j < n; j++ {
			v := x.At(i, j)
			if math.IsNaN(v) {
				continue
			}
			if sig2[j] > 0 {
				b2 += v * v / sig2[j]
				used++
			}
			if lf > 0 && cnt[j] > 0 {
				sig2[j] = lf*sig2[j] + (1-lf)*v*v
			} else {
				sig2[j] = (cnt[j]*sig2[j] + v*v) / (cnt[j] + 1)
				cnt[j]++
			}
		}
		if used == 0 {
			continue
		}
		b2 /= float64(used)
		num = lr*num + b2
		den = lr*den + 1
		rep.Bias = append(rep.Bias, math.Sqrt(b2))
		rep.History = append(rep.History, num/den)
	}
	if len(rep.History) < 2 {
		return nil, fmt.Errorf("%w: no column has a positive variance forecast after the burn-in", ErrTooFewObs)
	}
	rep.Multiplier = rep.History[len(rep.History)-1]
	return rep, nil
}
