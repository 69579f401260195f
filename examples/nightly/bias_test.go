package main

import (
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel"
)

// volatilityStep triples every return of the market's last n dates, so a
// model fitted on the whole window under-forecasts the recent risk.
func volatilityStep(t *testing.T, dir string, n int) {
	t.Helper()
	path := filepath.Join(dir, "returns.parquet")
	p, err := riskmodel.ReadReturns(path, nil)
	require.NoError(t, err)
	r := mat.DenseCopyOf(p.Returns())
	rows, cols := r.Dims()
	for i := rows - n; i < rows; i++ {
		for j := 0; j < cols; j++ {
			r.Set(i, j, 3*r.At(i, j))
		}
	}
	q, err := riskmodel.NewPanel(p.Dates(), p.Assets(), r, p.PeriodsPerYear())
	require.NoError(t, err)
	require.NoError(t, os.Remove(path))
	require.NoError(t, riskmodel.WriteReturnsParquetFile(path, q))
}

// After a volatility step the test portfolio's bias statistic leaves its
// band: by default the job publishes with a warning that says the direction
// and size in words and names the portfolio; with -fail-on-bias it refuses
// and the store's current model stays.
func TestBiasWarningAndRefusal(t *testing.T) {
	dir, args := smallMarket(t, true)
	volatilityStep(t, dir, 100)
	args = append(args, "-method", "ledoit-wolf", "-bias-window", "60")

	store := t.TempDir()
	code, stdout, errs := runJob(append(args, "-out", store)...)
	require.Equal(t, 0, code, errs)
	require.Contains(t, errs, `msg="forecast bias" portfolio="active portfolio fund.csv against benchmark.csv`)
	require.Regexp(t, `forecast="forecasts about [0-9]+ % too low over the last 60 dates \([0-9-]+ to [0-9-]+\): bias statistic [0-9.]+, outside the band \[0\.817, 1\.183\]"`, errs)
	require.Regexp(t, `forecast +forecasts about [0-9]+ % too low over the last 60 dates`, stdout)
	published, err := riskmodel.Store{Dir: store}.Current()
	require.NoError(t, err)
	m, err := riskmodel.LoadModel(published)
	require.NoError(t, err)
	require.Contains(t, m.Validation["bias_forecast"], "too low")
	require.Equal(t, "false", m.Validation["bias_inside"])

	// The same night with -fail-on-bias: exit 1, nothing published.
	again := t.TempDir()
	code, _, errs = runJob(append(args, "-out", again, "-fail-on-bias", "-log-format", "json")...)
	require.Equal(t, 1, code, errs)
	var rec map[string]any
	require.NoError(t, json.Unmarshal([]byte(lastLine(errs)), &rec))
	require.Equal(t, "ERROR", rec["level"])
	require.Regexp(t, `^nightly: model failed validation \(-fail-on-bias\): the active portfolio fund\.csv against benchmark\.csv \([0-9]+ names\) forecasts about [0-9]+ % too low.*; nothing published$`, rec["msg"])
	entries, err := os.ReadDir(again)
	require.NoError(t, err)
	for _, e := range entries {
		require.NotEqual(t, "current", e.Name(), "a refused model was published")
	}
}

// The nightly's defaults are riskmodel.RecommendedVariant.
func TestDefaultsAreTheRecommendedVariant(t *testing.T) {
	cfg, err := parseFlags(nil, io.Discard)
	require.NoError(t, err)
	want, err := riskmodel.ParseVariant(riskmodel.RecommendedVariant)
	require.NoError(t, err)
	require.Equal(t, want.Method, cfg.build.Method)
	require.Equal(t, want.Factor.Criterion, cfg.build.Factor.Criterion)
	require.Equal(t, want.Factor.HoldoutBest, cfg.build.Factor.HoldoutBest)
	require.Equal(t, want.Adjust, cfg.build.Adjust)
}
