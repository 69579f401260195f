package main

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestHelp(t *testing.T) {
	var out, errw bytes.Buffer
	require.Equal(t, exitOK, run([]string{"-h"}, &out, &errw))
	require.Contains(t, errw.String(), "Usage: evaluate")
	require.Contains(t, errw.String(), "-methods")
}

func TestBadInput(t *testing.T) {
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"unknown flag", []string{"-bogus"}, "flag provided but not defined"},
		{"format", []string{"-format", "xml"}, "-format"},
		{"method", []string{"-methods", "ledoit-wolf,nope"}, "unknown estimator"},
		{"twice", []string{"-methods", "oas,oas"}, "given twice"},
		{"step", []string{"-step", "1"}, "-step"},
		{"window", []string{"-window", "0"}, "-window"},
		{"argument", []string{"extra"}, "unexpected argument"},
		{"portfolios", []string{"-portfolios", "100000000"}, "-portfolios must be 0 to 10000"},
		{"tracking names", []string{"-tracking-names", "0"}, "-tracking-names must be 1 to"},
		{"workers", []string{"-workers", "100000"}, "-workers must be 0 to 256"},
		{"shard form", []string{"-shard", "3", "-o", "x"}, "-shard must be i/n"},
		{"shard range", []string{"-shard", "4/3", "-o", "x"}, "-shard must be i/n"},
		{"shard output", []string{"-shard", "1/3"}, "-shard needs -o"},
		{"output alone", []string{"-o", "x"}, "-o is for -shard"},
		{"merge nothing", []string{"-merge"}, "-merge needs the shard files"},
		{"merge shard", []string{"-merge", "-shard", "1/2", "a"}, "exclude each other"},
		{"merge non-shard", []string{"-merge", filepath.Join("..", "..", "testdata", "demo", "returns_small.csv")}, "not a shard file"},
		{"sim size", []string{"-sim", "assets=1000000"}, "-sim: at most assets="},
		{"missing file", []string{"-returns", "/nonexistent/returns.csv"}, "nonexistent"},
		{"metadata", []string{"-returns", filepath.Join("..", "..", "testdata", "demo", "returns_small.csv"), "-methods", "exposure"}, "needs -assets"},
	} {
		t.Run(c.name, func(t *testing.T) {
			var out, errw bytes.Buffer
			require.Equal(t, exitBadInput, run(c.args, &out, &errw))
			msg := errw.String()
			require.Contains(t, msg, c.want)
			// The reason is one line, the last (the flag package prints the
			// usage above it for a flag error).
			lines := strings.Split(strings.TrimRight(msg, "\n"), "\n")
			require.True(t, strings.HasPrefix(lines[len(lines)-1], "evaluate: "), "%q", msg)
			require.Contains(t, lines[len(lines)-1], c.want)
		})
	}
}

// The small demo CSV (50 assets, one year) with two fast estimators, monthly
// steps over a quarter-year window, as CSV, with a chart.
func TestSmallFile(t *testing.T) {
	dir := t.TempDir()
	chart := filepath.Join(dir, "risk.svg")
	var out, errw bytes.Buffer
	code := run([]string{"-returns", filepath.Join("..", "..", "testdata", "demo", "returns_small.csv"),
		"-methods", "ledoit-wolf,single-index", "-window", "63", "-format", "csv", "-chart", chart, "-portfolios", "10"}, &out, &errw)
	require.Equal(t, exitOK, code, errw.String())
	require.Contains(t, errw.String(), "evaluate: caution: Forecasts are statistical estimates")
	recs, err := csv.NewReader(&out).ReadAll()
	require.NoError(t, err)
	require.Len(t, recs, 3)
	require.Equal(t, "rank", recs[0][0])
	svg, err := os.ReadFile(chart)
	require.NoError(t, err)
	require.True(t, bytes.HasPrefix(svg, []byte("<svg ")))
}

// Without file flags the program ranks the estimators on the bundled demo
// market with its truth; yearly steps keep the run to a few seconds (the
// default monthly run of every estimator takes about two minutes).
func TestDefaultDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("the full demo evaluation")
	}
	var out, errw bytes.Buffer
	require.Equal(t, exitOK, run([]string{"-methods", "ledoit-wolf,single-index", "-step", "252", "-portfolios", "20"}, &out, &errw), errw.String())
	text := out.String()
	require.Contains(t, text, "oracle")
	require.Contains(t, text, "Use ")
	require.Contains(t, text, "Caution: Forecasts are statistical estimates")
	require.Contains(t, text, "2 rebalance dates") // window 504, the nightly's
}

// dropColumn removes a CSV column by its header name.
func dropColumn(t *testing.T, text, name string) [][]string {
	t.Helper()
	recs, err := csv.NewReader(strings.NewReader(text)).ReadAll()
	require.NoError(t, err)
	k := slices.Index(recs[0], name)
	require.GreaterOrEqual(t, k, 0, name)
	for i := range recs {
		recs[i] = slices.Delete(recs[i], k, k+1)
	}
	return recs
}

// Three shard processes and a merge print the table of one run: the same
// CSV, cell for cell, apart from the fit times, which are measured.
func TestShardsMerge(t *testing.T) {
	dir := t.TempDir()
	args := []string{"-returns", filepath.Join("..", "..", "testdata", "demo", "returns_small.csv"),
		"-methods", "ledoit-wolf,single-index,factor", "-window", "63", "-step", "21", "-portfolios", "10", "-format", "csv"}
	var one, errw bytes.Buffer
	require.Equal(t, exitOK, run(args, &one, &errw), errw.String())
	var files []string
	for _, i := range []string{"2", "3", "1"} {
		path := filepath.Join(dir, "shard"+i)
		var out, errw bytes.Buffer
		require.Equal(t, exitOK, run(append(slices.Clone(args), "-shard", i+"/3", "-o", path), &out, &errw), errw.String())
		require.Empty(t, out.String())
		require.Contains(t, errw.String(), "shard "+i+"/3")
		files = append(files, path)
	}
	var merged bytes.Buffer
	errw.Reset()
	require.Equal(t, exitOK, run(append([]string{"-merge", "-format", "csv"}, files...), &merged, &errw), errw.String())
	require.Equal(t, dropColumn(t, one.String(), "fit_seconds"), dropColumn(t, merged.String(), "fit_seconds"))

	errw.Reset()
	require.Equal(t, exitBadInput, run([]string{"-merge", files[0], files[1]}, &merged, &errw))
	require.Contains(t, errw.String(), "shard 1/3 is missing")
}
