package factor

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
)

// TestRegimeHand works VolatilityRegime's formula by hand on two assets with
// an expanding-mean forecast (ForecastHalfLife 0), a burn-in of two dates and
// a regime half-life of one date (weights halve each date).
func TestRegimeHand(t *testing.T) {
	nan := math.NaN()
	x := mat.NewDense(5, 2, []float64{
		0.01, 0.02,
		0.03, -0.02,
		0.02, 0.04,
		-0.04, 0.00,
		0.05, nan,
	})
	got, err := VolatilityRegime(x, RegimeSettings{HalfLife: 1, Burn: 2})
	require.NoError(t, err)
	// Forecasts after the burn-in: (0.01² + 0.03²)/2 = 5e-4 and (0.02² + 0.02²)/2 = 4e-4.
	b2 := []float64{
		(0.02*0.02/5e-4 + 0.04*0.04/4e-4) / 2,   // date 2: (0.8 + 4)/2
		(0.04*0.04/(14e-4/3) + 0/(24e-4/3)) / 2, // date 3: forecasts (2·5e-4 + 4e-4)/3 and (2·4e-4 + 16e-4)/3
		0.05 * 0.05 / (30e-4 / 4),               // date 4: asset 2 missing; asset 1's forecast (14e-4 + 16e-4)/4
	}
	hist := []float64{b2[0], (0.5*b2[0] + b2[1]) / 1.5, (0.25*b2[0] + 0.5*b2[1] + b2[2]) / 1.75}
	require.InDeltaSlice(t, []float64{math.Sqrt(b2[0]), math.Sqrt(b2[1]), math.Sqrt(b2[2])}, got.Bias, 1e-12)
	require.InDeltaSlice(t, hist, got.History, 1e-12)
	require.InDelta(t, 2.737415, got.Multiplier, 1e-6)
	require.Equal(t, 2, got.Burn)

	_, err = VolatilityRegime(x, RegimeSettings{HalfLife: -1})
	require.ErrorIs(t, err, ErrSettings)
	_, err = VolatilityRegime(x, RegimeSettings{Burn: 4})
	require.ErrorIs(t, err, ErrTooFewObs)
}

// regimeMarket is a 4-factor market of N = 150 assets over T dates whose
// volatility doubles (every return ×2) on the dates [from, to): a known
// covariance scale(t)²·Σ on every date.
type regimeMarket struct {
	market
	from, to int
}

func (m regimeMarket) scale(d int) float64 {
	if d >= m.from && d < m.to {
		return 2
	}
	return 1
}

func simulateRegime(seed uint64, t, n, k, from, to int) regimeMarket {
	m := regimeMarket{market: simulate(seed, t, n, k), from: from, to: to}
	for d := from; d < to; d++ {
		row := m.x.RawRowView(d)
		for j := range row {
			row[j] *= 2
		}
	}
	return m
}

// TestRegimeVolatilityStep: on a simulated market whose volatility doubles
// for 120 dates, the forecasts of 40 random long-only portfolios, made every
// 5 dates from the trailing 300, are compared with the true volatility of the
// next date. With the regime multiplier the mean |true/forecast − 1| is back
// inside 10 % sooner after the step up and after the step down, and its
// average over the whole stretch is lower.
func TestRegimeVolatilityStep(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation")
	}
	const dates, n, k, from, to, window = 800, 150, 4, 450, 570, 300
	sim := simulateRegime(21, dates, n, k, from, to)
	rng := rand.New(rand.NewPCG(4, 4))
	ports := make([][]float64, 40)
	for p := range ports {
		w := make([]float64, n)
		var s float64
		for i := range w {
			w[i] = rng.ExpFloat64()
			s += w[i]
		}
		for i := range w {
			w[i] /= s
		}
		ports[p] = w
	}
	base := Settings{K: k, Covariance: ewma.Settings{VolHalfLife: 42, CorrHalfLife: 126}, SpecificHalfLife: 42}
	trueVar := make([]float64, len(ports))
	sw := mat.NewVecDense(n, nil)
	for p, w := range ports {
		sw.SetRawVector(mat.NewVecDense(n, w).RawVector())
		trueVar[p] = mat.Inner(sw, sim.sigma, sw)
	}
	type run struct {
		errs             []float64
		upBack, downBack int
		mean             float64
	}
	measure := func(regime bool) run {
		r := run{upBack: -1, downBack: -1}
		s := base
		s.Adjust.Regime = regime
		for a := from - 20; a < to+160; a += 5 {
			m, err := Fit(sim.x.Slice(a-window+1, a+1, 0, n), s)
			require.NoError(t, err)
			sc := sim.scale(a + 1)
			var e float64
			for p, w := range ports {
				e += math.Abs(sc*math.Sqrt(trueVar[p]/m.QuadForm(w))-1) / float64(len(ports))
			}
			r.errs = append(r.errs, e)
			r.mean += e
			if a >= from && a < to && r.upBack < 0 && e < 0.1 {
				r.upBack = a - from
			}
			if a >= to && r.downBack < 0 && e < 0.1 {
				r.downBack = a - to
			}
		}
		r.mean /= float64(len(r.errs))
		return r
	}
	plain, adj := measure(false), measure(true)
	t.Logf("plain:  back inside 10 %% after %d dates (up), %d (down); mean error %.3f", plain.upBack, plain.downBack, plain.mean)
	t.Logf("regime: back inside 10 %% after %d dates (up), %d (down); mean error %.3f", adj.upBack, adj.downBack, adj.mean)
	require.GreaterOrEqual(t, adj.upBack, 0)
	require.GreaterOrEqual(t, adj.downBack, 0)
	require.True(t, plain.upBack < 0 || adj.upBack < plain.upBack)
	require.True(t, plain.downBack < 0 || adj.downBack < plain.downBack)
	require.Less(t, adj.mean, plain.mean)
}
