package riskmodel

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"slices"
	"testing"

	"github.com/montanaflynn/stats"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestQualityAgainstPandas checks the report on a panel with planted problems
// against testdata/quality/expected.json, computed by make_quality.py with
// pandas 1.5.3 (notna, first_valid_index, last_valid_index, run lengths by
// groupby) and scipy 1.10.1 (scipy.stats.median_abs_deviation(x, scale=1.0)).
func TestQualityAgainstPandas(t *testing.T) {
	p, err := ReadReturns("testdata/quality/panel.csv", nil)
	require.NoError(t, err)
	raw, err := os.ReadFile("testdata/quality/expected.json")
	require.NoError(t, err)
	var want struct {
		Observed     int
		Coverage     float64
		Gaps         int
		MissingShare float64 `json:"missing_share"`
		Listings     []string
		Delistings   []string
		Outliers     []struct {
			Asset, Date        string
			Score, Median, MAD float64
		}
		StaleRuns []struct {
			Asset, First, Last string
			Length             int
		} `json:"stale_runs"`
		Implausible []struct {
			Asset, Date string
			Return      float64
		}
		NoSpread []string `json:"no_spread"`
		Dropped  []string `json:"dropped_min_obs_50"`
	}
	require.NoError(t, json.Unmarshal(raw, &want))

	q := Quality(p, &QualityOptions{MinObs: 50})
	const tol = 1e-12
	require.Equal(t, 60, q.Dates)
	require.Equal(t, 6, q.Assets)
	require.Equal(t, want.Observed, q.Observed)
	require.InDelta(t, want.Coverage, q.Coverage, tol)
	require.Equal(t, want.Gaps, q.Gaps)
	require.InDelta(t, want.MissingShare, q.MissingShare, tol)
	require.Equal(t, want.Listings, coverageAssets(q.Listings))
	require.Equal(t, want.Delistings, coverageAssets(q.Delistings))
	require.Equal(t, want.NoSpread, q.NoSpread)
	require.Equal(t, want.Dropped, coverageAssets(q.Dropped))
	require.Len(t, q.Outliers, len(want.Outliers))
	for i, w := range want.Outliers {
		g := q.Outliers[i]
		require.Equal(t, w.Asset, g.Asset)
		require.Equal(t, w.Date, g.Date.String())
		require.InDelta(t, w.Median, g.Median, tol)
		require.InDelta(t, w.MAD, g.MAD, tol)
		require.InDelta(t, w.Score, g.Score, 1e-9)
	}
	require.Len(t, q.StaleRuns, len(want.StaleRuns))
	for i, w := range want.StaleRuns {
		g := q.StaleRuns[i]
		require.Equal(t, []any{w.Asset, w.First, w.Last, w.Length}, []any{g.Asset, g.First.String(), g.Last.String(), g.Length})
	}
	require.Len(t, q.Implausible, len(want.Implausible))
	for i, w := range want.Implausible {
		g := q.Implausible[i]
		require.Equal(t, []any{w.Asset, w.Date, w.Return}, []any{g.Asset, g.Date.String(), g.Return})
	}
}

func coverageAssets(c []Coverage) []string {
	out := []string{}
	for _, x := range c {
		out = append(out, x.Asset)
	}
	return out
}

func TestQualityDefaultsAndEdges(t *testing.T) {
	nan := math.NaN()
	dates := []Date{DateOf(2024, 1, 1), DateOf(2024, 1, 2), DateOf(2024, 1, 3), DateOf(2024, 1, 4), DateOf(2024, 1, 5), DateOf(2024, 1, 8)}
	// Column A: a run of five zeros that ends the history (the default minimum),
	// column B: a return of exactly the limit (not above it) and one above,
	// column C: nothing observed.
	r := mat.NewDense(6, 3, []float64{
		0.01, 0.02, nan,
		0, 1.0, nan,
		0, 1.0000001, nan,
		0, -0.01, nan,
		0, 0.03, nan,
		0, nan, nan,
	})
	p, err := NewPanel(dates, []string{"A", "B", "C"}, r, 0)
	require.NoError(t, err)
	before := mat.DenseCopyOf(p.Returns())
	q := Quality(p, nil)
	require.Equal(t, QualityOptions{ImplausibleLimit: 1, OutlierMADs: 10, StaleRun: 5, MinObs: 1}, q.Options)
	require.Equal(t, []StaleRun{{Asset: "A", First: dates[1], Last: dates[5], Length: 5}}, q.StaleRuns)
	require.Equal(t, []Observation{{Asset: "B", Date: dates[2], Return: 1.0000001}}, q.Implausible)
	require.Equal(t, []string{"C"}, coverageAssets(q.Dropped))
	require.Equal(t, []string{"A", "C"}, q.NoSpread, "A's MAD is zero; C has no observation")
	require.Equal(t, []string{"B"}, coverageAssets(q.Delistings))
	require.Empty(t, q.Listings)
	require.Equal(t, 11, q.Observed)
	require.InDelta(t, 11.0/18, q.Coverage, 1e-15)
	require.Equal(t, 0, q.Gaps)
	requireSamePanel(t, &Panel{dates: dates, assets: []string{"A", "B", "C"}, r: before}, p) // input unchanged

	q = Quality(p, &QualityOptions{StaleRun: 6, ImplausibleLimit: 2})
	require.Empty(t, q.StaleRuns)
	require.Empty(t, q.Implausible)
}

// TestMedianMADMatchesStats checks medianMAD against
// github.com/montanaflynn/stats v0.14.0's Median and
// MedianAbsoluteDeviation, bit for bit, on odd and even counts, ties and a
// single value.
func TestMedianMADMatchesStats(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	for _, n := range []int{1, 2, 3, 4, 7, 10, 251, 252, 1000} {
		for _, ties := range []bool{false, true} {
			x := make([]float64, n)
			for i := range x {
				x[i] = rng.NormFloat64() * 0.02
				if ties {
					x[i] = math.Round(x[i]*500) / 500
				}
			}
			orig := slices.Clone(x)
			med, mad := medianMAD(x, make([]float64, n))
			wantMed, err := stats.Median(x)
			require.NoError(t, err)
			wantMAD, err := stats.MedianAbsoluteDeviation(x)
			require.NoError(t, err)
			require.Equal(t, math.Float64bits(wantMed), math.Float64bits(med), "n=%d ties=%v", n, ties)
			require.Equal(t, math.Float64bits(wantMAD), math.Float64bits(mad), "n=%d ties=%v", n, ties)
			require.Equal(t, orig, x, "medianMAD must leave x as it is")
		}
	}
}

// TestQualityAcrossBlocks tiles the planted panel of TestQualityAgainstPandas
// 50 times (300 columns, several blocks of Quality's goroutines) and checks
// that the report is the planted panel's report repeated in column order,
// with GOMAXPROCS 1 and 2 giving the same report.
func TestQualityAcrossBlocks(t *testing.T) {
	p, err := ReadReturns("testdata/quality/panel.csv", nil)
	require.NoError(t, err)
	opts := &QualityOptions{MinObs: 50}
	one := Quality(p, opts)
	const copies = 50
	tt, n := p.Dims()
	wide := mat.NewDense(tt, n*copies, nil)
	var names []string
	rename := map[string][]string{}
	for k := range copies {
		wide.Slice(0, tt, k*n, (k+1)*n).(*mat.Dense).Copy(p.Returns())
		for _, a := range p.Assets() {
			name := fmt.Sprintf("%s_%02d", a, k)
			names = append(names, name)
			rename[a] = append(rename[a], name)
		}
	}
	wp, err := NewPanel(p.Dates(), names, wide, 0)
	require.NoError(t, err)
	require.Greater(t, n*copies, 2*qualityBlock)

	prev := runtime.GOMAXPROCS(1)
	serial := Quality(wp, opts)
	runtime.GOMAXPROCS(max(2, prev))
	parallel := Quality(wp, opts)
	runtime.GOMAXPROCS(prev)
	require.Equal(t, serial, parallel)

	// The expected report: each list of the planted panel's report, repeated
	// copy after copy within each block of n columns, in column order.
	asset := func(a string, k int) string { return rename[a][k] }
	var want QualityReport = *one
	want.Assets = n * copies
	want.Observed *= copies
	want.Gaps *= copies
	want.Listings, want.Delistings, want.Dropped = nil, nil, nil
	want.Implausible, want.Outliers, want.NoSpread, want.StaleRuns = nil, nil, nil, nil
	for k := range copies {
		for _, c := range one.Listings {
			c.Asset = asset(c.Asset, k)
			want.Listings = append(want.Listings, c)
		}
		for _, c := range one.Delistings {
			c.Asset = asset(c.Asset, k)
			want.Delistings = append(want.Delistings, c)
		}
		for _, c := range one.Dropped {
			c.Asset = asset(c.Asset, k)
			want.Dropped = append(want.Dropped, c)
		}
		for _, o := range one.Implausible {
			o.Asset = asset(o.Asset, k)
			want.Implausible = append(want.Implausible, o)
		}
		for _, o := range one.Outliers {
			o.Asset = asset(o.Asset, k)
			want.Outliers = append(want.Outliers, o)
		}
		for _, a := range one.NoSpread {
			want.NoSpread = append(want.NoSpread, asset(a, k))
		}
		for _, s := range one.StaleRuns {
			s.Asset = asset(s.Asset, k)
			want.StaleRuns = append(want.StaleRuns, s)
		}
	}
	require.Equal(t, &want, serial)
}

// TestSelectKth checks the selection against a sort for every k on inputs
// that stress a partition: random, few distinct values, sorted, reversed,
// all equal and organ-pipe.
func TestSelectKth(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	shapes := map[string]func(i, n int) float64{
		"random":   func(int, int) float64 { return rng.NormFloat64() },
		"few":      func(int, int) float64 { return float64(rng.IntN(3)) },
		"sorted":   func(i, _ int) float64 { return float64(i) },
		"reversed": func(i, n int) float64 { return float64(n - i) },
		"equal":    func(int, int) float64 { return 0.01 },
		"pipe":     func(i, n int) float64 { return float64(min(i, n-i)) },
	}
	for name, f := range shapes {
		for _, n := range []int{1, 2, 3, 15, 16, 17, 40, 257, 1000} {
			x := make([]float64, n)
			for i := range x {
				x[i] = f(i, n)
			}
			sorted := slices.Sorted(slices.Values(x))
			for _, k := range []int{0, n / 3, n / 2, n - 1} {
				s := slices.Clone(x)
				selectKth(s, k)
				require.Equal(t, sorted[k], s[k], "%s n=%d k=%d", name, n, k)
				for i := range s {
					require.True(t, (i < k && s[i] <= s[k]) || (i > k && s[i] >= s[k]) || i == k, "%s n=%d k=%d i=%d", name, n, k, i)
				}
				require.ElementsMatch(t, x, s)
			}
			med, mad := medianMAD(x, make([]float64, n))
			wantMed, _ := stats.Median(x)
			wantMAD, _ := stats.MedianAbsoluteDeviation(x)
			require.Equal(t, wantMed, med, "%s n=%d", name, n)
			require.Equal(t, wantMAD, mad, "%s n=%d", name, n)
		}
	}
}
