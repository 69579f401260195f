package demo

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"github.com/riskmodel/riskmodel"

	"github.com/stretchr/testify/require"
)

// TestDemoFilesAreCurrent checks that the committed testdata/demo files hold
// exactly what `go run ./testdata/gendemo` writes today: the CSV files byte
// for byte, and every file, CSV and Parquet, read back to the generated demo
// exactly. Parquet files are not compared as bytes because parquet-go writes
// its module version into the footer's created_by field, which a test binary
// and `go run` report differently.
func TestFilesAreCurrent(t *testing.T) {
	d, err := bundledDemo()
	require.NoError(t, err)
	committed := filepath.Join("..", "..", "testdata", "demo")
	fresh := t.TempDir()
	require.NoError(t, d.WriteFiles(fresh))
	for _, name := range demoFiles {
		if filepath.Ext(name) != ".csv" {
			continue
		}
		want, err := os.ReadFile(filepath.Join(fresh, name))
		require.NoError(t, err)
		got, err := os.ReadFile(filepath.Join(committed, name))
		require.NoError(t, err, "run `go run ./testdata/gendemo`")
		require.True(t, bytes.Equal(want, got), "%s is stale: run `go run ./testdata/gendemo`", name)
	}

	p, err := riskmodel.ReadReturns(filepath.Join(committed, "returns.parquet"), nil)
	require.NoError(t, err)
	requireDemoPanel(t, d.Panel, p)
	for _, name := range []string{"returns_small.csv", "returns_small_wide.csv"} {
		p, err := riskmodel.ReadReturns(filepath.Join(committed, name), nil)
		require.NoError(t, err, name)
		requireDemoPanel(t, d.Small(), p)
	}
	for _, name := range []string{"assets.csv", "assets.parquet"} {
		a, err := riskmodel.ReadAssets(filepath.Join(committed, name))
		require.NoError(t, err, name)
		require.Equal(t, d.Assets, a, name)
	}
	for _, tc := range []struct {
		name string
		want []riskmodel.Holding
	}{
		{"benchmark.csv", d.Benchmark}, {"benchmark.parquet", d.Benchmark},
		{"fund.csv", d.Fund}, {"fund.parquet", d.Fund},
	} {
		h, err := riskmodel.ReadHoldings(filepath.Join(committed, tc.name))
		require.NoError(t, err, tc.name)
		require.Equal(t, tc.want, h, tc.name)
	}
}

func TestSmall(t *testing.T) {
	d, err := bundledDemo()
	require.NoError(t, err)
	s := d.Small()
	nt, n := s.Dims()
	require.Equal(t, SmallDates, nt)
	require.Equal(t, SmallAssets, n)
	require.Equal(t, d.Panel.Assets()[:n], s.Assets())
	require.Equal(t, d.Panel.Dates()[:nt], s.Dates())
	// The small version shows missing data too: some column of it has a
	// late listing, a delisting or a halt.
	gaps := 0
	for _, c := range s.Coverage() {
		if c.Count < nt {
			gaps++
		}
	}
	require.Greater(t, gaps, 0)
}
