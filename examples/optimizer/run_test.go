package main

import (
	"bytes"
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel"
)

func runOpt(args ...string) (code int, stdout, stderr string) {
	var out, errw bytes.Buffer
	code = run(args, &out, &errw)
	return code, out.String(), errw.String()
}

func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	require.NoError(t, err)
	return recs
}

func num(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	require.NoError(t, err)
	return v
}

// checkExport reads the exported files back and checks the square-root form
// against the model: ‖g·x‖² + Σ (s_i x_i)² = xᵀΣx for x = optimized −
// benchmark, with Σ the model's covariance of the universe; and the
// optimized weights satisfy the constraints.
func checkExport(t *testing.T, dir string, m *riskmodel.Model, maxWeight float64) (before, after float64) {
	t.Helper()
	var g, sp [][]string
	if m.Factor != nil {
		g = readCSV(t, filepath.Join(dir, "sqrt_factor.csv"))
		sp = readCSV(t, filepath.Join(dir, "sqrt_specific.csv"))
		require.Equal(t, "factor", g[0][0])
	} else {
		// A dense model: the Cholesky factor Lᵀ, upper triangular, no specific file.
		g = readCSV(t, filepath.Join(dir, "cholesky_factor.csv"))
		require.Equal(t, "row", g[0][0])
		require.NoFileExists(t, filepath.Join(dir, "sqrt_specific.csv"))
		for i, row := range g[1:] {
			for j := 0; j < i; j++ {
				require.Equal(t, "0", row[j+1], "Lᵀ is upper triangular")
			}
		}
	}
	pr := readCSV(t, filepath.Join(dir, "problem.csv"))
	assets := g[0][1:]
	n := len(assets)
	if sp != nil {
		require.Len(t, sp, n+1)
	}
	require.Len(t, pr, n+1)
	require.Equal(t, []string{"asset", "benchmark", "start", "optimized", "max_weight"}, pr[0])
	pos := map[string]int{}
	for i, a := range m.Assets {
		pos[a] = i
	}
	x := make([]float64, n)
	x0 := make([]float64, n)
	var sum float64
	for j := 0; j < n; j++ {
		require.Equal(t, assets[j], pr[j+1][0])
		if sp != nil {
			require.Equal(t, assets[j], sp[j+1][0])
		}
		b, w0, w, c := num(t, pr[j+1][1]), num(t, pr[j+1][2]), num(t, pr[j+1][3]), num(t, pr[j+1][4])
		require.GreaterOrEqual(t, w, 0.0)
		require.LessOrEqual(t, w, c)
		require.LessOrEqual(t, c, maxWeight)
		x[j], x0[j] = w-b, w0-b
		sum += w
	}
	require.InDelta(t, 1, sum, 1e-12)
	quad := func(x []float64) float64 {
		var q float64
		for _, row := range g[1:] {
			var gx float64
			for j := 0; j < n; j++ {
				gx += num(t, row[j+1]) * x[j]
			}
			q += gx * gx
		}
		for j := 0; j < n && sp != nil; j++ {
			s := num(t, sp[j+1][1])
			q += s * s * x[j] * x[j]
		}
		return q
	}
	full := make([]float64, len(m.Assets))
	for j, a := range assets {
		full[pos[a]] = x[j]
	}
	v := mat.NewVecDense(len(full), full)
	var cov mat.Symmetric = m.Dense
	if m.Factor != nil {
		cov = m.Factor.CovarianceTo(nil)
	}
	want := mat.Inner(v, cov, v)
	require.InDelta(t, want, quad(x), 1e-12*math.Max(1, want)+1e-16)
	return math.Sqrt(quad(x0) * m.PeriodsPerYear), math.Sqrt(want * m.PeriodsPerYear)
}

func TestDemoWithoutArguments(t *testing.T) {
	dir := t.TempDir()
	code, out, errs := runOpt("-export", dir) // the only flag: keep the test's files out of the shared temp folder
	require.Equal(t, 0, code, errs)
	for _, s := range []string{"Minimum-tracking-error rebalance as of 2033-11-16 (factor model, factor form",
		"universe        470 benchmark names in the model", "tracking error", "band", "exported"} {
		require.Contains(t, out, s)
	}
	// The defaults, built the same way here.
	root, err := findRoot(mustGetwd(t))
	require.NoError(t, err)
	m, err := loadModel("", filepath.Join(root, defaultReturns), filepath.Join(root, defaultAssets))
	require.NoError(t, err)
	before, after := checkExport(t, dir, m, 0.03)
	require.Less(t, after, before, "the rebalance lowers the tracking error")
	require.Contains(t, out, "optimised       "+strconv.FormatFloat(100*after, 'f', 4, 64)+" % a year")
	require.Contains(t, out, "once projected onto the constraints")
	// The fund's own tracking error is the attribution report's.
	root2 := filepath.Join(root, "testdata", "demo")
	assets, err := riskmodel.ReadAssets(filepath.Join(root2, "assets.csv"))
	require.NoError(t, err)
	fund, err := riskmodel.ReadHoldings(filepath.Join(root2, "fund.csv"))
	require.NoError(t, err)
	bench, err := riskmodel.ReadHoldings(filepath.Join(root2, "benchmark.csv"))
	require.NoError(t, err)
	a, err := riskmodel.Attribute(m, fund, bench, assets, nil)
	require.NoError(t, err)
	require.Contains(t, out, "tracking error  fund "+strconv.FormatFloat(100*a.TrackingError, 'f', 4, 64)+" % a year as held")
	// The default band is one the example meets.
	require.Contains(t, out, "band            0.000 % to 2.000 %: within")
	require.Contains(t, out, "Caution: "+riskmodel.Caution)
}

func mustGetwd(t *testing.T) string {
	wd, err := os.Getwd()
	require.NoError(t, err)
	return wd
}

func TestDenseModelShortlist(t *testing.T) {
	d, err := demo.Generate(&demo.Config{Seed: 8, Assets: 70, Dates: 300})
	require.NoError(t, err)
	data := t.TempDir()
	require.NoError(t, d.WriteFiles(data))
	m, _, err := riskmodel.Build(d.Panel, d.Panel.Date(299), &riskmodel.BuildOptions{Method: riskmodel.MethodLedoitWolf, Window: 250})
	require.NoError(t, err)
	store := filepath.Join(t.TempDir(), "store")
	_, err = riskmodel.Store{Dir: store}.Publish(m)
	require.NoError(t, err)
	dir := t.TempDir()
	code, out, errs := runOpt("-model", store, "-portfolio", filepath.Join(data, "fund.csv"), "-benchmark", filepath.Join(data, "benchmark.csv"),
		"-names", "30", "-max-weight", "0.1", "-band", "0,0.2", "-export", dir)
	require.Equal(t, 0, code, errs)
	require.Contains(t, out, "(ledoit-wolf model, dense)")
	require.Contains(t, out, "only the 30 largest benchmark names")
	require.Contains(t, out, ": within")
	before, after := checkExport(t, dir, m, 0.1)
	require.Less(t, after, before)
	pr := readCSV(t, filepath.Join(dir, "problem.csv"))
	held := 0
	for _, r := range pr[1:] {
		if num(t, r[3]) > 0 {
			held++
			require.Positive(t, num(t, r[4]), "only shortlisted names are held")
		}
	}
	require.LessOrEqual(t, held, 30)
}

func TestBadInput(t *testing.T) {
	bad := filepath.Join(t.TempDir(), "b.csv")
	require.NoError(t, os.WriteFile(bad, []byte("asset,weight\nQV0001,-0.1\nQV0002,1.1\n"), 0o644))
	for _, tc := range []struct {
		name string
		args []string
		msg  string
	}{
		{"unknown flag", []string{"-bogus"}, "flag provided but not defined: -bogus"},
		{"max weight", []string{"-max-weight", "0"}, "-max-weight must be in (0, 1]"},
		{"band", []string{"-band", "x"}, `-band "x"`},
		{"band order", []string{"-band", "0.02,0.01"}, "invalid tracking-error band"},
		{"band percent", []string{"-band", "1,3"}, "look like percent"},
		{"infeasible", []string{"-names", "10", "-max-weight", "0.05"}, "10 names at a maximum weight of 0.05 cannot hold"},
		{"short benchmark", []string{"-benchmark", bad}, "benchmark weight of QV0001 is negative"},
		{"model", []string{"-model", t.TempDir()}, "-model:"},
		{"names", []string{"-names", "-1"}, "-names must not be negative"},
		{"argument", []string{"x"}, `unexpected argument "x"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, out, errs := runOpt(append(tc.args, "-export", t.TempDir())...)
			require.Equal(t, 2, code, errs)
			require.Empty(t, out)
			lines := strings.Split(strings.TrimSpace(errs), "\n")
			last := lines[len(lines)-1]
			require.True(t, strings.HasPrefix(last, "optimizer: "), errs)
			require.Contains(t, last, tc.msg)
		})
	}
}

func TestHelp(t *testing.T) {
	code, _, errs := runOpt("-h")
	require.Equal(t, 0, code)
	for _, s := range []string{"Usage: optimizer", "not a product optimizer", "-model", "-max-weight", "-names", "-band", "-export"} {
		require.Contains(t, errs, s)
	}
}
