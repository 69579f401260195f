package evaluate

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"
)

func methodsOf(names ...string) []Estimator {
	var m []Estimator
	for _, n := range names {
		m = append(m, Estimator{Build: riskmodel.BuildOptions{Method: n, Seed: 1}})
	}
	return m
}

func scoreOf(t *testing.T, ev *Result, name string) Score {
	t.Helper()
	for _, s := range ev.Scores {
		if s.Name == name {
			return s
		}
	}
	t.Fatalf("no score %q", name)
	return Score{}
}

// On a stationary market simulated from a known factor structure with N = 100
// assets and a window of T = 120 dates (N close to T), the truth ranks first,
// and the sample covariance ranks below the shrinkage estimators overall, on
// the realised volatility of the minimum-variance portfolio and on the
// Frobenius loss: the finding of Ledoit & Wolf (2004), J. Multivariate
// Analysis 88(2), Section 5 (simulations), and Ledoit & Wolf (2003), J.
// Empirical Finance 10(5), Section 5 (out-of-sample minimum-variance
// volatility). PRIAL of Ledoit–Wolf is between 0 and 100 %.
func TestEvaluateRanksTruthFirst(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 3, Assets: 100, Sectors: 5, Dates: 120 + 21*8, Stationary: true})
	require.NoError(t, err)
	ev, err := Run(d.Panel, &Options{
		Window: 120, Truth: TruthOf(d), Benchmark: d.Benchmark, Fund: d.Fund,
		Methods: methodsOf(riskmodel.MethodSample, riskmodel.MethodLedoitWolf, riskmodel.MethodOAS, riskmodel.MethodSingleIndex),
	})
	require.NoError(t, err)
	require.Len(t, ev.Periods, 8)
	require.Equal(t, 8*21, ev.TestDates)
	require.Equal(t, OracleName, ev.Scores[0].Name, "the truth ranks first")
	sample := scoreOf(t, ev, riskmodel.MethodSample)
	require.Equal(t, len(ev.Scores), sample.Rank, "the sample covariance ranks last")
	for _, name := range []string{riskmodel.MethodLedoitWolf, riskmodel.MethodOAS, riskmodel.MethodSingleIndex} {
		s := scoreOf(t, ev, name)
		require.Less(t, s.MinVariance.Realised.Value, sample.MinVariance.Realised.Value, name)
		require.Less(t, s.FrobeniusLoss, sample.FrobeniusLoss, name)
		require.Less(t, s.MVLoss, sample.MVLoss, name)
	}
	lw := scoreOf(t, ev, riskmodel.MethodLedoitWolf)
	require.Greater(t, lw.FrobeniusPRIAL, 0.0)
	require.Less(t, lw.FrobeniusPRIAL, 100.0)
	require.InDelta(t, 0, sample.FrobeniusPRIAL, 1e-12)
	require.InDelta(t, 100, scoreOf(t, ev, OracleName).FrobeniusPRIAL, 1e-9, "stationary truth: zero loss")
	require.NotNil(t, lw.Fund)
	require.Equal(t, ev.TestDates, lw.Fund.Observations)
	require.Contains(t, ev.Recommendation, "Use ")
	require.NotContains(t, ev.Recommendation, OracleName)
	for _, s := range ev.Scores {
		require.Zero(t, s.NotConverged, s.Name)
		require.LessOrEqual(t, s.MinVariance.Realised.Lower, s.MinVariance.Realised.Value)
		require.GreaterOrEqual(t, s.MinVariance.Realised.Upper, s.MinVariance.Realised.Value)
		require.Len(t, s.Ranks, len(ev.Metrics))
	}
}

// A bias statistic computed on forecasts from the true covariance falls inside
// the band 1 ± √(2/T) in about 95 % of tests: for normal returns the sample
// standard deviation of T standardized returns has a standard deviation of
// about 1/√(2T), so the band is ±2 of them and covers about 95.4 %
// (the band itself is common practice, no source; the normal approximation
// of the sample standard deviation is a textbook fact).
func TestEvaluateBiasBandWithTruth(t *testing.T) {
	if testing.Short() {
		t.Skip("60 simulated markets")
	}
	// Test portfolios on one market share its factor draws, so their bias
	// statistics are correlated; independent markets make the tests
	// (nearly) independent.
	const markets, perMarket = 60, 5
	long, active := 0, 0
	var meanBias float64
	for m := 0; m < markets; m++ {
		d, err := demo.Generate(&demo.Config{Seed: uint64(100 + m), Assets: 30, Sectors: 3, Dates: 40 + 21*10,
			Stationary: true, SpecificDoF: math.Inf(1)})
		require.NoError(t, err)
		ev, err := Run(d.Panel, &Options{
			Window: 40, Truth: TruthOf(d), Methods: []Estimator{}, RandomPortfolios: perMarket,
		})
		require.NoError(t, err)
		require.Len(t, ev.Scores, 1)
		s := ev.Scores[0]
		require.Equal(t, perMarket, s.RandomLongOnly.Tests)
		long += int(math.Round(s.RandomLongOnly.Inside.Value * perMarket))
		active += int(math.Round(s.RandomActive.Inside.Value * perMarket))
		meanBias += s.RandomLongOnly.MeanBias + s.RandomActive.MeanBias
	}
	n := markets * perMarket
	meanBias /= 2 * markets
	for name, k := range map[string]int{"long-only": long, "active": active} {
		iv := shareInterval(k, n)
		t.Logf("%s: %d of %d inside, %.3f [%.3f, %.3f]", name, k, n, iv.Value, iv.Lower, iv.Upper)
		require.InDelta(t, 0.954, iv.Value, 0.04, name)
	}
	// E[s] ≈ 1 − 1/(4T) for the sample standard deviation of T = 210 normal values.
	require.InDelta(t, 1, meanBias, 0.01)
}

// No look-ahead: perturbing every return after a rebalance date leaves every
// forecast made on or before that date unchanged, while the realised figures
// after it change.
func TestEvaluateNoLookAhead(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 5, Assets: 30, Sectors: 3, Dates: 80 + 21*4})
	require.NoError(t, err)
	opts := &Options{
		Window: 80, Benchmark: d.Benchmark, RandomPortfolios: 10, TrackingNames: 10,
		Methods: methodsOf(riskmodel.MethodSample, riskmodel.MethodEWMA, riskmodel.MethodLedoitWolf, riskmodel.MethodFactor),
	}
	base, err := Run(d.Panel, opts)
	require.NoError(t, err)
	cut := 79 + 2*21 // the third rebalance row
	require.Equal(t, d.Panel.Date(cut), base.Periods[2].AsOf)
	x := d.Panel.ReturnsTo(nil)
	tt, n := x.Dims()
	for i := cut + 1; i < tt; i++ {
		for j := 0; j < n; j++ {
			if v := x.At(i, j); !math.IsNaN(v) {
				x.Set(i, j, 1.5*v+0.001*math.Sin(float64(i*n+j)))
			}
		}
	}
	moved, err := riskmodel.NewPanel(d.Panel.Dates(), d.Panel.Assets(), x, 0)
	require.NoError(t, err)
	after, err := Run(moved, opts)
	require.NoError(t, err)
	require.Len(t, after.Periods, len(base.Periods))
	// Scores may reorder; compare by name through each period's order.
	pos := func(ev *Result) map[string]int {
		m := map[string]int{}
		for i, s := range ev.Scores {
			m[s.Name] = i
		}
		return m
	}
	pb, pa := pos(base), pos(after)
	for q, p := range base.Periods {
		for name, i := range pb {
			fb, fa := p.Forecasts[i], after.Periods[q].Forecasts[pa[name]]
			fb.FitSeconds, fa.FitSeconds = 0, 0 // timings differ; the losses are NaN without truth
			fb.FrobeniusLoss, fa.FrobeniusLoss, fb.MVLoss, fa.MVLoss = 0, 0, 0, 0
			if p.AsOf <= d.Panel.Date(cut) {
				require.Equal(t, fb, fa, "forecast of %s on %s changed", name, p.AsOf)
			} else {
				require.NotEqual(t, fb.Reference, fa.Reference, "%s on %s", name, p.AsOf)
			}
		}
		if p.AsOf < d.Panel.Date(cut) {
			require.Equal(t, p.ReferenceVol, after.Periods[q].ReferenceVol, "realised vol of period %d", q)
		} else {
			require.NotEqual(t, p.ReferenceVol, after.Periods[q].ReferenceVol, "realised vol of period %d", q)
		}
	}
}

// The evaluation is the same, bit for bit apart from the timings, whatever
// the number of workers, and the outputs carry every estimator.
func TestEvaluateDeterministicAndOutputs(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 8, Assets: 25, Sectors: 3, Dates: 60 + 21*3})
	require.NoError(t, err)
	opts := &Options{Window: 60, Benchmark: d.Benchmark, Fund: d.Fund, Truth: TruthOf(d),
		RandomPortfolios: 8, TrackingNames: 8, Methods: methodsOf(riskmodel.MethodLedoitWolf, riskmodel.MethodNonlinear, riskmodel.MethodFactor)}
	var runs []*Result
	for _, w := range []int{1, 3} {
		o := *opts
		o.Workers = w
		calls := 0
		o.Progress = func(done, total int) { calls++; require.Equal(t, 3, total) }
		ev, err := Run(d.Panel, &o)
		require.NoError(t, err)
		require.Equal(t, 3, calls)
		for i := range ev.Scores {
			ev.Scores[i].FitSeconds = 0
		}
		for _, p := range ev.Periods {
			for i := range p.Forecasts {
				p.Forecasts[i].FitSeconds = 0
			}
		}
		require.Positive(t, ev.Costs.Fits)
		ev.Elapsed, ev.Costs = 0, Costs{}
		runs = append(runs, ev)
	}
	var a, b bytes.Buffer
	require.NoError(t, runs[0].WriteJSON(&a))
	require.NoError(t, runs[1].WriteJSON(&b))
	require.Equal(t, a.String(), b.String())
	require.Equal(t, runs[0].Periods, runs[1].Periods)

	ev := runs[0]
	var js struct {
		Estimators     []map[string]any `json:"estimators"`
		Recommendation string           `json:"recommendation"`
		Caution        string           `json:"caution"`
	}
	require.NoError(t, json.Unmarshal(a.Bytes(), &js))
	require.Len(t, js.Estimators, 4)
	require.Equal(t, ev.Recommendation, js.Recommendation)
	require.Equal(t, riskmodel.Caution, js.Caution)

	var c bytes.Buffer
	require.NoError(t, ev.WriteCSV(&c))
	recs, err := csv.NewReader(&c).ReadAll()
	require.NoError(t, err)
	require.Len(t, recs, 5)
	require.Equal(t, evaluateColumns, recs[0])
	require.Equal(t, ev.Scores[0].Name, recs[1][1])

	var txt bytes.Buffer
	require.NoError(t, ev.WriteText(&txt))
	for _, s := range ev.Scores {
		require.Contains(t, txt.String(), s.Name)
	}
	require.Contains(t, txt.String(), ev.Recommendation)
	require.Contains(t, txt.String(), "Caution: "+riskmodel.Caution)
	require.Contains(t, a.String(), `"cost_seconds": {`)

	var svg bytes.Buffer
	require.NoError(t, ev.WriteSVG(&svg))
	out := svg.String()
	require.True(t, strings.HasPrefix(out, "<svg "))
	require.True(t, strings.HasSuffix(out, "</svg>\n"))
	require.Equal(t, len(ev.Scores)+1, strings.Count(out, "<polyline"))
	require.NotContains(t, out, "NaN")
}

func TestEvaluateErrors(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 8, Assets: 10, Sectors: 2, Dates: 60})
	require.NoError(t, err)
	for _, c := range []struct {
		name string
		opts *Options
		want error
	}{
		{"step 1", &Options{Step: 1}, ErrInput},
		{"no test period", &Options{Window: 50, Step: 21}, ErrInput},
		{"window 1", &Options{Window: 1, Step: 5}, ErrInput},
		{"unknown method", &Options{Methods: methodsOf("bogus")}, riskmodel.ErrMethod},
		{"no estimator", &Options{Methods: []Estimator{}}, ErrInput},
		{"repeated name", &Options{Methods: methodsOf(riskmodel.MethodOAS, riskmodel.MethodOAS)}, ErrInput},
		{"unknown holding", &Options{Benchmark: []riskmodel.Holding{{Asset: "ZZ9999", Weight: 1}}}, riskmodel.ErrUnknownAsset},
		{"bad weight", &Options{Benchmark: []riskmodel.Holding{{Asset: d.Panel.Asset(0), Weight: math.NaN()}}}, riskmodel.ErrNonFinite},
		{"tracking names", &Options{TrackingNames: -1}, ErrInput},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Run(d.Panel, c.opts)
			require.ErrorIs(t, err, c.want)
		})
	}
	// A short panel shrinks the default window to what fits: 60 − 21 dates.
	ev, err := Run(d.Panel, &Options{Methods: methodsOf(riskmodel.MethodLedoitWolf), RandomPortfolios: -1})
	require.NoError(t, err)
	require.Equal(t, 39, ev.Window)
	require.Len(t, ev.Periods, 1)
	require.Equal(t, 0, ev.Scores[0].RandomLongOnly.Tests)
}

// The input panel is not modified, and a truth function's matrix is only read.
func TestEvaluateInputsUnchanged(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 4, Assets: 12, Sectors: 2, Dates: 40 + 2*10})
	require.NoError(t, err)
	before := d.Panel.ReturnsTo(nil)
	_, err = Run(d.Panel, &Options{Window: 40, Step: 10, Truth: TruthOf(d),
		Methods: methodsOf(riskmodel.MethodSample, riskmodel.MethodOAS), RandomPortfolios: 3})
	require.NoError(t, err)
	require.True(t, slices.EqualFunc(before.RawMatrix().Data, d.Panel.ReturnsTo(nil).RawMatrix().Data,
		func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }))
}
