package demo

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/riskmodel/riskmodel"

	"github.com/stretchr/testify/require"
)

// TestFilesAreCurrent checks that the committed testdata/demo files hold
// exactly what `go run ./testdata/gendemo` writes today: the CSV files byte
// for byte, and every file, CSV and Parquet, read back to the generated demo
// exactly. Parquet files are not compared as bytes because parquet-go writes
// its module version into the footer's created_by field, which a test binary
// and `go run` report differently.
//
// The committed files are written by the default, pure-Go build. Under
// -tags openblas the fund's weights come from products that OpenBLAS rounds
// differently in the last bits, so there the CSV files are compared cell by
// cell — text equal, numbers within sameDigits — and the readers' results
// with the same tolerance: what must agree is the market, not the last bit.
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
		if bitExact {
			require.True(t, bytes.Equal(want, got), "%s is stale: run `go run ./testdata/gendemo`", name)
		} else {
			requireSameCSV(t, name, want, got)
		}
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
		if bitExact {
			require.Equal(t, tc.want, h, tc.name)
			continue
		}
		require.Len(t, h, len(tc.want), tc.name)
		for i := range h {
			require.Equal(t, tc.want[i].Asset, h[i].Asset, tc.name)
			require.InEpsilon(t, tc.want[i].Weight, h[i].Weight, sameDigits, "%s %s", tc.name, h[i].Asset)
		}
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

// sameDigits is the relative tolerance of the openblas build's comparison:
// products summed in another order agree to about 1e-15 relative, and the
// fund's weights pass through a few solves; 1e-9 leaves room for that while
// still catching any change of the market itself.
const sameDigits = 1e-9

// requireSameCSV compares two CSV files cell by cell: cells that parse as
// numbers agree to sameDigits relative, every other cell exactly.
func requireSameCSV(t *testing.T, name string, want, got []byte) {
	t.Helper()
	w, err := csv.NewReader(bytes.NewReader(want)).ReadAll()
	require.NoError(t, err, name)
	g, err := csv.NewReader(bytes.NewReader(got)).ReadAll()
	require.NoError(t, err, name)
	require.Len(t, g, len(w), "%s: rows", name)
	for i := range w {
		require.Len(t, g[i], len(w[i]), "%s line %d", name, i+1)
		for j := range w[i] {
			a, errA := strconv.ParseFloat(w[i][j], 64)
			b, errB := strconv.ParseFloat(g[i][j], 64)
			if errA != nil || errB != nil || a == 0 || b == 0 {
				require.Equal(t, w[i][j], g[i][j], "%s line %d column %d", name, i+1, j+1)
				continue
			}
			require.InEpsilon(t, a, b, sameDigits, "%s line %d column %d", name, i+1, j+1)
		}
	}
}
