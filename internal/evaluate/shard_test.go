package evaluate

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"testing"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"
)

// withoutTimings zeroes the wall-clock fields of a Result, the only ones
// that differ between runs.
func withoutTimings(ev *Result) *Result {
	c := *ev
	c.Elapsed, c.Costs = 0, Costs{}
	c.Scores = append([]Score(nil), ev.Scores...)
	for k := range c.Scores {
		c.Scores[k].FitSeconds = 0
	}
	c.Periods = append([]Period(nil), ev.Periods...)
	for k := range c.Periods {
		c.Periods[k].Forecasts = append([]PeriodForecast(nil), c.Periods[k].Forecasts...)
		for e := range c.Periods[k].Forecasts {
			c.Periods[k].Forecasts[e].FitSeconds = 0
		}
	}
	return &c
}

// requireSameBits fails unless a and b hold the same values, bit for bit
// (NaN equal to NaN): JSON cannot carry NaN, so the comparison walks the
// figures of the tables and periods.
func requireSameBits(t *testing.T, a, b *Result) {
	t.Helper()
	var ta, tb bytes.Buffer
	require.NoError(t, a.WriteText(&ta))
	require.NoError(t, b.WriteText(&tb))
	require.Equal(t, ta.String(), tb.String(), "printed tables")
	var ca, cb bytes.Buffer
	require.NoError(t, a.WriteCSV(&ca))
	require.NoError(t, b.WriteCSV(&cb))
	require.Equal(t, ca.String(), cb.String(), "CSV tables")
	require.Len(t, b.Scores, len(a.Scores))
	for k := range a.Scores {
		ra, rb := a.Scores[k].row(), b.Scores[k].row()
		for c := range ra {
			if x, ok := ra[c].(float64); ok {
				y := rb[c].(float64)
				require.Equal(t, math.Float64bits(x), math.Float64bits(y), "%s %s: %v and %v", a.Scores[k].Name, evaluateColumns[c], x, y)
			} else {
				require.Equal(t, ra[c], rb[c])
			}
		}
	}
	require.Equal(t, len(a.Periods), len(b.Periods))
	for k := range a.Periods {
		pa, pb := a.Periods[k], b.Periods[k]
		require.Equal(t, math.Float64bits(pa.ReferenceVol), math.Float64bits(pb.ReferenceVol))
		for e := range pa.Forecasts {
			fa, fb := pa.Forecasts[e], pb.Forecasts[e]
			for _, v := range [][2]float64{{fa.Reference, fb.Reference}, {fa.MinVariance, fb.MinVariance}, {fa.LongOnly, fb.LongOnly},
				{fa.Tracking, fb.Tracking}, {fa.FrobeniusLoss, fb.FrobeniusLoss}, {fa.MVLoss, fb.MVLoss}} {
				require.Equal(t, math.Float64bits(v[0]), math.Float64bits(v[1]), "period %d estimator %d", k, e)
			}
		}
	}
	require.Equal(t, a.Recommendation, b.Recommendation)
}

// Three shards, written to files and read back, merge (in any order) into
// the Result of one run, bit for bit apart from the timings; so do shards
// run with another number of workers.
func TestShardsMergeToOneRun(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 5, Assets: 60, Sectors: 4, Dates: 80 + 10*7})
	require.NoError(t, err)
	opts := &Options{
		Window: 80, Step: 10, Truth: TruthOf(d), Benchmark: d.Benchmark, Fund: d.Fund, RandomPortfolios: 20,
		Methods: methodsOf(riskmodel.MethodSample, riskmodel.MethodLedoitWolf, riskmodel.MethodFactor),
	}
	one, err := Run(d.Panel, opts)
	require.NoError(t, err)
	require.Len(t, one.Periods, 7)
	require.Positive(t, one.Costs.Fits)
	require.Positive(t, one.Costs.Scoring)
	require.Positive(t, one.Costs.Truth)
	var files [][]byte
	for i := 1; i <= 3; i++ {
		o := *opts
		o.Workers = i // the split of the work must not matter
		sh, err := RunShard(d.Panel, &o, i, 3)
		require.NoError(t, err)
		first, end, total := sh.Dates()
		require.Equal(t, [3]int{(i - 1) * 7 / 3, i * 7 / 3, 7}, [3]int{first, end, total})
		var buf bytes.Buffer
		require.NoError(t, sh.Write(&buf))
		files = append(files, buf.Bytes())
	}
	read := func(k int) *Shard {
		sh, err := ReadShard(bytes.NewReader(files[k]))
		require.NoError(t, err)
		return sh
	}
	merged, err := Merge(read(2), read(0), read(1))
	require.NoError(t, err)
	requireSameBits(t, withoutTimings(one), withoutTimings(merged))
	require.Equal(t, withoutTimings(one), withoutTimings(merged))

	// Mismatches.
	_, err = Merge(read(0), read(2))
	require.ErrorIs(t, err, ErrShard, "a missing shard")
	require.ErrorContains(t, err, "shard 2/3 is missing")
	_, err = Merge(read(0), read(0), read(1), read(2))
	require.ErrorIs(t, err, ErrShard, "a repeated shard")
	other := *opts
	other.Seed = 2
	sh, err := RunShard(d.Panel, &other, 2, 3)
	require.NoError(t, err)
	_, err = Merge(read(0), sh, read(2))
	require.ErrorIs(t, err, ErrShard, "other options")
	require.ErrorContains(t, err, "other options")
	sh, err = RunShard(d.Panel.Rows(1, 150), opts, 2, 3)
	require.NoError(t, err)
	_, err = Merge(read(0), sh, read(2))
	require.ErrorIs(t, err, ErrShard, "another panel")
	sh, err = RunShard(d.Panel, opts, 1, 2)
	require.NoError(t, err)
	_, err = Merge(read(0), sh, read(2))
	require.ErrorIs(t, err, ErrShard, "another split")
	_, err = Merge()
	require.ErrorIs(t, err, ErrShard)
	_, err = ReadShard(bytes.NewReader([]byte("date,asset,return\n")))
	require.ErrorIs(t, err, ErrShard, "not a shard")
	_, err = ReadShard(bytes.NewReader(files[0][:len(files[0])/2]))
	require.ErrorIs(t, err, ErrShard, "a truncated shard")
	_, err = RunShard(d.Panel, opts, 4, 3)
	require.True(t, errors.Is(err, ErrInput))

	// More shards than dates: the empty ones merge too.
	var shards []*Shard
	for i := 1; i <= 9; i++ {
		sh, err := RunShard(d.Panel, opts, i, 9)
		require.NoError(t, err)
		shards = append(shards, sh)
	}
	merged, err = Merge(shards...)
	require.NoError(t, err)
	requireSameBits(t, withoutTimings(one), withoutTimings(merged))
}

// The memory estimate grows with the square of the assets for dense
// estimators, with the workers, and shrinks per shard; the bounds on the
// sizes are errors.
func TestMemoryEstimate(t *testing.T) {
	small, err := demo.Generate(&demo.Config{Seed: 5, Assets: 50, Sectors: 4, Dates: 150})
	require.NoError(t, err)
	large, err := demo.Generate(&demo.Config{Seed: 5, Assets: 100, Sectors: 4, Dates: 150})
	require.NoError(t, err)
	opts := &Options{Window: 80, Step: 10, Workers: 1, Methods: methodsOf(riskmodel.MethodLedoitWolf, riskmodel.MethodSample)}
	ms, err := Memory(small.Panel, opts, 1)
	require.NoError(t, err)
	ml, err := Memory(large.Panel, opts, 1)
	require.NoError(t, err)
	// Two dense forecasts held, the fit's three N×N matrices and the
	// scoring's six: 11 × 8·N² bytes.
	require.GreaterOrEqual(t, ml-ms, int64(11*8*(100*100-50*50)), "N² terms")
	two := *opts
	two.Workers = 2
	m2, err := Memory(small.Panel, &two, 1)
	require.NoError(t, err)
	require.Greater(t, m2, ms)
	m3, err := Memory(small.Panel, opts, 3)
	require.NoError(t, err)
	require.Less(t, m3, ms)
	for _, o := range []Options{{RandomPortfolios: MaxRandomPortfolios + 1}, {TrackingNames: MaxTrackingNames + 1}, {Workers: MaxWorkers + 1}} {
		_, err := Memory(small.Panel, &o, 1)
		require.ErrorIs(t, err, ErrInput)
	}
}

// A window in which an estimator cannot be built leaves its rebalance date
// out of the evaluation, for every estimator, with the error in
// Result.Skipped and in the text and JSON reports; the other dates are
// scored as if it had never been there, and shards carry the skipped dates
// through their files to the same merged Result. An evaluation whose every
// date fails is an error.
func TestFailedDatesAreSkippedAndListed(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 8, Assets: 10, Sectors: 2, Dates: 100})
	require.NoError(t, err)
	// Nine of the ten assets lose rows 40–69: the windows of 30 dates that
	// end on rows 59, 69 and 79 keep fewer than MinObs = 15 of their dates,
	// so those windows hold one asset, on which no factor model can be built.
	r := d.Panel.ReturnsTo(nil)
	for i := 40; i < 70; i++ {
		for j := 1; j < 10; j++ {
			r.Set(i, j, math.NaN())
		}
	}
	p, err := riskmodel.NewPanel(d.Panel.Dates(), d.Panel.Assets(), r, d.Panel.PeriodsPerYear())
	require.NoError(t, err)
	opts := &Options{Window: 30, Step: 10, RandomPortfolios: 5,
		Methods: methodsOf(riskmodel.MethodLedoitWolf, riskmodel.MethodFactor)}
	ev, err := Run(p, opts)
	require.NoError(t, err)
	var kept []riskmodel.Date
	for _, pd := range ev.Periods {
		kept = append(kept, pd.AsOf)
	}
	require.Equal(t, []riskmodel.Date{p.Date(29), p.Date(39), p.Date(49), p.Date(89)}, kept)
	require.Len(t, ev.Skipped, 3)
	for k, row := range []int{59, 69, 79} {
		require.Equal(t, p.Date(row), ev.Skipped[k].AsOf)
		require.Contains(t, ev.Skipped[k].Error, "evaluate factor on "+p.Date(row).String(), "the error names the estimator and the date")
	}
	require.Equal(t, 4*10, ev.TestDates)
	var txt, js bytes.Buffer
	require.NoError(t, ev.WriteText(&txt))
	require.Contains(t, txt.String(), "Skipped 3 of 7 rebalance dates")
	require.Contains(t, txt.String(), p.Date(69).String()+": "+ev.Skipped[1].Error)
	require.NoError(t, ev.WriteJSON(&js))
	var out struct {
		Skipped []struct{ AsOf, Error string } `json:"skipped_dates"`
	}
	require.NoError(t, json.Unmarshal(js.Bytes(), &out))
	require.Len(t, out.Skipped, 3)

	// The first date's window and test period end before the gap: its
	// figures are those of an evaluation of the panel where nothing fails.
	clean, err := Run(d.Panel, opts)
	require.NoError(t, err)
	require.Len(t, clean.Periods, 7)
	require.Empty(t, clean.Skipped)
	a, b := clean.Periods[0], ev.Periods[0]
	for e := range a.Forecasts {
		a.Forecasts[e].FitSeconds, b.Forecasts[e].FitSeconds = 0, 0
	}
	require.Equal(t, fmt.Sprintf("%v", a), fmt.Sprintf("%v", b)) // NaN losses: compare as printed (%v prints every digit)

	// Through shard files: the same Result.
	var shards []*Shard
	for i := 1; i <= 3; i++ {
		sh, err := RunShard(p, opts, i, 3)
		require.NoError(t, err)
		var buf bytes.Buffer
		require.NoError(t, sh.Write(&buf))
		back, err := ReadShard(&buf)
		require.NoError(t, err)
		shards = append(shards, back)
	}
	merged, err := Merge(shards...)
	require.NoError(t, err)
	requireSameBits(t, withoutTimings(ev), withoutTimings(merged))
	require.Equal(t, ev.Skipped, merged.Skipped)

	// Every date failing is an error.
	for i := 0; i < 100; i++ {
		for j := 1; j < 10; j++ {
			r.Set(i, j, math.NaN())
		}
	}
	p, err = riskmodel.NewPanel(d.Panel.Dates(), d.Panel.Assets(), r, d.Panel.PeriodsPerYear())
	require.NoError(t, err)
	_, err = Run(p, opts)
	require.ErrorIs(t, err, ErrNoDate)
	require.ErrorContains(t, err, "all 7 failed, the first on "+p.Date(29).String())
}
