package main

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskmodel/riskmodel"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// fakeRepo lays out a repository root with go.mod and small demo files in
// the default places, and returns the root.
func fakeRepo(t *testing.T) string {
	t.Helper()
	root := t.TempDir()
	require.NoError(t, os.WriteFile(filepath.Join(root, "go.mod"), []byte("module example.test\n"), 0o644))
	demo := filepath.Join(root, "testdata", "demo")
	require.NoError(t, os.MkdirAll(demo, 0o755))
	nan := math.NaN()
	var dates []riskmodel.Date
	for i := 0; i < 8; i++ {
		dates = append(dates, riskmodel.DateOf(2031, 3, 3).AddDays(i))
	}
	// QN1 complete with one implausible return; QN2 listed on the third date;
	// QN3 delisted after the sixth with a run of five zero returns.
	r := mat.NewDense(8, 3, []float64{
		0.01, nan, 0,
		-0.02, nan, 0,
		0.015, 0.01, 0,
		1.6, -0.01, 0,
		0.005, 0.02, 0,
		-0.01, 0.00, 0.03,
		0.02, 0.01, nan,
		0.00, -0.03, nan,
	})
	p, err := riskmodel.NewPanel(dates, []string{"QN1", "QN2", "QN3"}, r, 0)
	require.NoError(t, err)
	require.NoError(t, riskmodel.WriteReturnsParquet(filepath.Join(demo, "returns.parquet"), p))
	require.NoError(t, riskmodel.WriteAssets(filepath.Join(demo, "assets.csv"), []riskmodel.AssetInfo{
		{Asset: "QN1", Sector: "Harbour", MarketCap: math.NaN()},
		{Asset: "QN2", Sector: "Harbour", MarketCap: math.NaN()},
		{Asset: "QN3", Sector: "Orchard", MarketCap: math.NaN()},
		{Asset: "QN9", Sector: "Orchard", MarketCap: math.NaN()},
	}))
	return root
}

func runJob(args ...string) (code int, stdout, stderr string) {
	var out, errw bytes.Buffer
	code = run(args, &out, &errw)
	return code, out.String(), errw.String()
}

func TestRunWithDefaultsFromASubdirectory(t *testing.T) {
	root := fakeRepo(t)
	sub := filepath.Join(root, "examples", "nightly")
	require.NoError(t, os.MkdirAll(sub, 0o755))
	t.Chdir(sub)
	code, out, errs := runJob("-min-obs", "7")
	require.Equal(t, 0, code, errs)
	for _, want := range []string{
		"Data quality as of 2031-03-10: 8 dates from 2031-03-03 to 2031-03-10",
		"assets          3 in 2 sectors (metadata for 4; 0 without metadata; 1 in metadata without returns)",
		"coverage        83.33 % of 24 date-asset cells observed", // 8 + 6 + 6 = 20 of 24 cells
		"missing share   0.000 %",
		"listings        1 assets",
		"delistings      1 assets",
		"implausible     1 returns above 1",
		"QN1 2031-03-06 1.6000",
		"stale runs      1 runs of 5 or more zero returns",
		"QN3 2031-03-03 to 2031-03-07 (5 days)",
		"too few obs     2 assets with fewer than 7 observations",
	} {
		require.Contains(t, out, want)
	}
	require.Contains(t, errs, `msg="read returns"`, "logs go to stderr through slog")
}

func TestRunWindowAndAsof(t *testing.T) {
	root := fakeRepo(t)
	demo := filepath.Join(root, "testdata", "demo")
	code, out, errs := runJob("-returns", filepath.Join(demo, "returns.parquet"), "-assets", filepath.Join(demo, "assets.csv"),
		"-asof", "2031-03-07", "-window", "3")
	require.Equal(t, 0, code, errs)
	require.Contains(t, out, "Data quality as of 2031-03-07: 3 dates from 2031-03-05 to 2031-03-07")
	require.Contains(t, out, "coverage        100.00 % of 9 date-asset cells observed")
}

func TestRunBadInput(t *testing.T) {
	root := fakeRepo(t)
	demo := filepath.Join(root, "testdata", "demo")
	bad := filepath.Join(root, "bad.csv")
	require.NoError(t, os.WriteFile(bad, []byte("date,asset,return\n2031-03-03,QN1,0.01\n2031-03-04,QN1,Inf\n"), 0o644))
	rets, assets := filepath.Join(demo, "returns.parquet"), filepath.Join(demo, "assets.csv")
	for _, tc := range []struct {
		name string
		args []string
		msg  []string
	}{
		{"unknown flag", []string{"-bogus"}, []string{"flag provided but not defined: -bogus"}},
		{"bad asof", []string{"-returns", rets, "-assets", assets, "-asof", "03/07/2031"}, []string{"-asof", "03/07/2031"}},
		{"asof before the data", []string{"-returns", rets, "-assets", assets, "-asof", "2000-01-01"}, []string{"no date on or before 2000-01-01"}},
		{"negative window", []string{"-window", "-1"}, []string{"-window must not be negative"}},
		{"extra argument", []string{"-returns", rets, "x"}, []string{`unexpected argument "x"`}},
		{"bad returns file", []string{"-returns", bad, "-assets", assets}, []string{bad, "line 3", `column "return"`, `value "Inf"`, "not finite"}},
		{"missing assets file", []string{"-returns", rets, "-assets", filepath.Join(root, "none.csv")}, []string{"none.csv", "no such file"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, errs := runJob(tc.args...)
			require.Equal(t, 2, code)
			lines := strings.Split(strings.TrimSpace(errs), "\n")
			last := lines[len(lines)-1]
			require.True(t, strings.HasPrefix(last, "nightly: "), last)
			for _, s := range tc.msg {
				require.Contains(t, last, s)
			}
		})
	}
}

func TestRunWithoutRepository(t *testing.T) {
	t.Chdir(t.TempDir()) // no go.mod at or above a fresh temporary directory
	if _, err := findRoot(mustGetwd(t)); err == nil {
		t.Skip("a go.mod exists above the temporary directory on this machine")
	}
	code, _, errs := runJob()
	require.Equal(t, 2, code)
	require.Contains(t, errs, "no go.mod in the working directory or above it; give -returns and -assets")
}

func mustGetwd(t *testing.T) string {
	wd, err := os.Getwd()
	require.NoError(t, err)
	return wd
}

func TestHelp(t *testing.T) {
	code, _, errs := runJob("-h")
	require.Equal(t, 0, code)
	for _, f := range []string{"Usage: nightly", "-returns", "-assets", "-asof", "-window", "-min-obs"} {
		require.Contains(t, errs, f)
	}
}

func TestFindRoot(t *testing.T) {
	root := fakeRepo(t)
	deep := filepath.Join(root, "a", "b", "c")
	require.NoError(t, os.MkdirAll(deep, 0o755))
	got, err := findRoot(deep)
	require.NoError(t, err)
	require.Equal(t, root, got)
}
