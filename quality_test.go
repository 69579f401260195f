package riskmodel

import (
	"encoding/json"
	"math"
	"os"
	"testing"

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
