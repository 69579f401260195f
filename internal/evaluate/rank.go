package evaluate

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// The metrics that rank the estimators, all "lower is better". The loss
// metrics take part only with a known truth.
const (
	MetricMinVariance   = "min-variance vol"      // realised volatility of the unconstrained minimum-variance portfolio
	MetricLongOnly      = "long-only vol"         // realised volatility of the long-only minimum-variance portfolio
	MetricTracking      = "tracking TE"           // realised tracking error of the minimum-TE tracking portfolio
	MetricRandomLong    = "long-only |bias-1|"    // mean |bias − 1| of the random long-only portfolios
	MetricRandomActive  = "active |bias-1|"       // mean |bias − 1| of the random active portfolios
	MetricFrobeniusLoss = "Frobenius loss"        // against the truth
	MetricMVLoss        = "minimum-variance loss" // against the truth
	// The forecast's accuracy on the portfolios an optimizer builds, and
	// the trades its noise causes.
	MetricMinVarianceRatio = "min-variance |realised/forecast-1|"
	MetricTrackingRatio    = "tracking |realised/forecast-1|"
	MetricTurnover         = "tracking turnover"
)

// gather pools the dates, in date order, into the scores and ranks them.
func gather(o gatherSpec, res []*dateResult) *Result {
	ann := math.Sqrt(o.PeriodsPerYear)
	out := &Result{
		Step: o.Step, Window: o.Window, PeriodsPerYear: o.PeriodsPerYear,
		TestDates: len(res) * o.Step,
	}
	for _, r := range res {
		out.Periods = append(out.Periods, r.period)
		out.Costs.Fits += seconds(r.fitSecs)
		out.Costs.Scoring += seconds(r.scoreSecs)
		out.Costs.Truth += seconds(r.truthSecs)
	}
	var sampleFrob, sampleMV float64
	for _, r := range res {
		sampleFrob += r.est[0].sampleFrob
		sampleMV += r.est[0].sampleMV
	}
	sampleFrob /= float64(len(res))
	sampleMV /= float64(len(res))
	for e, name := range o.Names {
		s := Score{Name: name, Method: o.Methods[e]}
		var gmv, gmvZ, long, longZ, trk, trkZ, fundZ []float64
		var fGMV, fLong, fTrk, frob, mv, secs float64
		randLong := make([][]float64, o.RandomPortfolios)
		randActive := make([][]float64, o.RandomPortfolios)
		for _, r := range res {
			d := r.est[e]
			gmv, gmvZ = append(gmv, d.gmv...), append(gmvZ, d.gmvZ...)
			long, longZ = append(long, d.long...), append(longZ, d.longZ...)
			trk, trkZ = append(trk, d.trk...), append(trkZ, d.trkZ...)
			fundZ = append(fundZ, d.fundZ...)
			f := d.forecast
			fGMV += f.MinVariance * f.MinVariance
			fLong += f.LongOnly * f.LongOnly
			fTrk += f.Tracking * f.Tracking
			frob += f.FrobeniusLoss
			mv += f.MVLoss
			secs += f.FitSeconds
			for j := range randLong {
				randLong[j] = append(randLong[j], d.randLong[j]...)
				randActive[j] = append(randActive[j], d.randActive[j]...)
			}
			if d.ridged {
				s.Ridged++
			}
			s.NotConverged += d.notConverged
		}
		nd := float64(len(res))
		port := func(ret, z []float64, f2 float64) PortfolioScore {
			iv := volInterval(ret)
			return PortfolioScore{
				Realised: Interval{iv.Value * ann, iv.Lower * ann, iv.Upper * ann},
				Forecast: math.Sqrt(f2 / nd),
				Bias:     biasOf(z),
			}
		}
		s.MinVariance = port(gmv, gmvZ, fGMV)
		s.LongOnly = port(long, longZ, fLong)
		s.Tracking = port(trk, trkZ, fTrk)
		s.RandomLongOnly = biasScore(randLong)
		s.RandomActive = biasScore(randActive)
		if o.Fund {
			b := biasOf(fundZ)
			s.Fund = &b
		}
		s.FrobeniusLoss, s.MVLoss = frob/nd, mv/nd
		s.FrobeniusPRIAL, s.MVPRIAL = math.NaN(), math.NaN()
		if o.Truth {
			s.FrobeniusPRIAL = prial(sampleFrob, s.FrobeniusLoss)
			s.MVPRIAL = prial(sampleMV, s.MVLoss)
		}
		s.FitSeconds = secs / nd
		s.TrackingTurnover = turnover(res, e)
		out.Scores = append(out.Scores, s)
	}
	rank(out, o.Truth, o.RandomPortfolios > 0)
	out.Recommendation = recommend(out)
	return out
}

// turnover returns the mean one-way turnover of estimator e's tracking
// portfolio between consecutive rebalance dates; NaN with one date.
func turnover(res []*dateResult, e int) float64 {
	if len(res) < 2 {
		return math.NaN()
	}
	var sum float64
	for q := 1; q < len(res); q++ {
		prev := make(map[string]float64, len(res[q-1].universe))
		for i, a := range res[q-1].universe {
			prev[a] = res[q-1].est[e].trkW[i]
		}
		var tv float64
		for i, a := range res[q].universe {
			tv += math.Abs(res[q].est[e].trkW[i] - prev[a])
			delete(prev, a)
		}
		for _, v := range prev {
			tv += math.Abs(v)
		}
		sum += tv / 2
	}
	return sum / float64(len(res)-1)
}

func biasScore(z [][]float64) BiasScore {
	s := BiasScore{Tests: len(z), MeanBias: math.NaN(), MeanAbsError: math.NaN()}
	if len(z) == 0 {
		s.Inside = Interval{math.NaN(), math.NaN(), math.NaN()}
		return s
	}
	inside := 0
	var mb, mae float64
	for _, x := range z {
		b := biasOf(x)
		mb += b.Value
		mae += math.Abs(b.Value - 1)
		if b.Inside {
			inside++
		}
	}
	s.MeanBias, s.MeanAbsError = mb/float64(len(z)), mae/float64(len(z))
	s.Inside = shareInterval(inside, len(z))
	return s
}

// metricValue returns the value of a ranked metric; NaN ranks last.
func metricValue(s *Score, metric string) float64 {
	switch metric {
	case MetricMinVariance:
		return s.MinVariance.Realised.Value
	case MetricLongOnly:
		return s.LongOnly.Realised.Value
	case MetricTracking:
		return s.Tracking.Realised.Value
	case MetricRandomLong:
		return s.RandomLongOnly.MeanAbsError
	case MetricRandomActive:
		return s.RandomActive.MeanAbsError
	case MetricFrobeniusLoss:
		return s.FrobeniusLoss
	case MetricMVLoss:
		return s.MVLoss
	case MetricMinVarianceRatio:
		return math.Abs(s.MinVariance.Realised.Value/s.MinVariance.Forecast - 1)
	case MetricTrackingRatio:
		return math.Abs(s.Tracking.Realised.Value/s.Tracking.Forecast - 1)
	case MetricTurnover:
		return s.TrackingTurnover
	}
	panic("riskmodel: unknown metric " + metric)
}

// rank orders the scores by their mean rank over the metrics. Each metric
// ranks the estimators 1, 2, … by value (NaN last, ties in the options'
// order); the mean of those ranks orders the estimators, ties broken by the
// realised minimum-variance volatility and then the options' order. Fit
// times take no part, so the ranking is deterministic.
func rank(ev *Result, truth, random bool) {
	ev.Metrics = []string{MetricMinVariance, MetricLongOnly, MetricTracking, MetricMinVarianceRatio, MetricTrackingRatio, MetricTurnover}
	if random {
		ev.Metrics = append(ev.Metrics, MetricRandomLong, MetricRandomActive)
	}
	if truth {
		ev.Metrics = append(ev.Metrics, MetricFrobeniusLoss, MetricMVLoss)
	}
	sc := ev.Scores
	idx := make([]int, len(sc))
	for i := range idx {
		idx[i] = i
	}
	for i := range sc {
		sc[i].Ranks = make([]int, len(ev.Metrics))
	}
	for m, metric := range ev.Metrics {
		order := slices.Clone(idx)
		slices.SortStableFunc(order, func(a, b int) int {
			return compareNaNLast(metricValue(&sc[a], metric), metricValue(&sc[b], metric))
		})
		for r, i := range order {
			sc[i].Ranks[m] = r + 1
		}
	}
	for i := range sc {
		var t int
		for _, r := range sc[i].Ranks {
			t += r
		}
		sc[i].MeanRank = float64(t) / float64(len(ev.Metrics))
	}
	slices.SortStableFunc(idx, func(a, b int) int {
		if c := compareNaNLast(sc[a].MeanRank, sc[b].MeanRank); c != 0 {
			return c
		}
		return compareNaNLast(sc[a].MinVariance.Realised.Value, sc[b].MinVariance.Realised.Value)
	})
	sorted := make([]Score, len(sc))
	for r, i := range idx {
		sorted[r] = sc[i]
		sorted[r].Rank = r + 1
	}
	ev.Scores = sorted
	// Keep the periods' forecasts in the order of the scores.
	for p := range ev.Periods {
		f := ev.Periods[p].Forecasts
		g := make([]PeriodForecast, len(f))
		for r, i := range idx {
			g[r] = f[i]
		}
		ev.Periods[p].Forecasts = g
	}
}

func compareNaNLast(a, b float64) int {
	switch {
	case math.IsNaN(a) && math.IsNaN(b):
		return 0
	case math.IsNaN(a):
		return 1
	case math.IsNaN(b):
		return -1
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// recommend names the best estimator other than the oracle and why.
func recommend(ev *Result) string {
	var cands []int
	for i, s := range ev.Scores {
		if s.Method != OracleName {
			cands = append(cands, i)
		}
	}
	if len(cands) == 0 {
		return "No estimator to recommend: only the oracle was evaluated."
	}
	s := ev.Scores[cands[0]]
	var firsts []string
	for m := range ev.Metrics {
		best := true
		for _, i := range cands[1:] {
			if ev.Scores[i].Ranks[m] < s.Ranks[m] {
				best = false
			}
		}
		if best {
			firsts = append(firsts, ev.Metrics[m])
		}
	}
	why := fmt.Sprintf("best mean rank %.2f over %d metrics", s.MeanRank, len(ev.Metrics))
	if len(firsts) > 0 {
		why += " (best estimator on " + strings.Join(firsts, ", ") + ")"
	}
	why += fmt.Sprintf("; realised min-variance volatility %.2f %% against a forecast of %.2f %%",
		100*s.MinVariance.Realised.Value, 100*s.MinVariance.Forecast)
	if b := s.RandomLongOnly; b.Tests > 0 {
		why += fmt.Sprintf("; %.0f %% of random long-only portfolios inside the bias band", 100*b.Inside.Value)
	}
	return fmt.Sprintf("Use %s: %s.", s.Name, why)
}
