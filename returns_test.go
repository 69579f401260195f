package riskmodel

import (
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"sort"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// samplePanel is a small panel with the cases a file format can lose: an
// exact 0.0, missing cells, a date with no observation, an asset with no
// observation, a return with a long decimal expansion, a tiny and a large
// value, and dates before 1970.
func samplePanel(t *testing.T) *Panel {
	t.Helper()
	nan := math.NaN()
	dates := []Date{DateOf(1969, 12, 31), DateOf(2024, 2, 28), DateOf(2024, 2, 29), DateOf(2024, 3, 1)}
	assets := []string{"AB,C", "K2", "Q7", "Z9"}
	r := mat.NewDense(4, 4, []float64{
		0, nan, 0.1 + 0.2, nan,
		nan, nan, nan, nan,
		-0.999999999999, 5e-324, 1.7976931348623157e308 / 1e300, nan,
		0.012345678901234567, -0.5, 0, nan,
	})
	p, err := NewPanel(dates, assets, r, 52)
	require.NoError(t, err)
	return p
}

// requireSamePanel checks two panels bit for bit, NaN matching NaN.
func requireSamePanel(t *testing.T, want, got *Panel) {
	t.Helper()
	require.Equal(t, want.Dates(), got.Dates())
	require.Equal(t, want.Assets(), got.Assets())
	tt, n := want.Dims()
	for i := 0; i < tt; i++ {
		for j := 0; j < n; j++ {
			w, g := want.At(i, j), got.At(i, j)
			if math.Float64bits(w) != math.Float64bits(g) && !(math.IsNaN(w) && math.IsNaN(g)) {
				t.Fatalf("cell (%d, %d): want %v, got %v", i, j, w, g)
			}
		}
	}
}

func TestReturnsRoundTrip(t *testing.T) {
	want := samplePanel(t)
	dir := t.TempDir()
	for _, tc := range []struct {
		name  string
		file  string
		write func(path string) error
		ppy   float64 // periods per year read back with nil options
	}{
		{name: "parquet", file: "r.parquet", write: func(p string) error { return WriteReturnsParquetFile(p, want) }, ppy: 52},
		{name: "csv long", file: "long.csv", write: func(p string) error { return WriteReturnsCSVFile(p, want, false) }, ppy: DailyPeriods},
		{name: "csv wide", file: "wide.csv", write: func(p string) error { return WriteReturnsCSVFile(p, want, true) }, ppy: DailyPeriods},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, tc.file)
			require.NoError(t, tc.write(path))
			got, err := ReadReturns(path, nil)
			require.NoError(t, err)
			requireSamePanel(t, want, got)
			require.Equal(t, tc.ppy, got.PeriodsPerYear())
			got, err = ReadReturns(path, &ReadOptions{PeriodsPerYear: 12})
			require.NoError(t, err)
			require.Equal(t, 12.0, got.PeriodsPerYear())
		})
	}
}

// TestDemoRoundTrip reads the committed demo market and writes it back in
// every format: each reads back bit for bit.
func TestDemoRoundTrip(t *testing.T) {
	want, err := ReadReturns("testdata/demo/returns.parquet", nil)
	require.NoError(t, err)
	dir := t.TempDir()
	for _, tc := range []struct {
		file  string
		write func(path string) error
	}{
		{"r.parquet", func(p string) error { return WriteReturnsParquetFile(p, want) }},
		{"long.csv", func(p string) error { return WriteReturnsCSVFile(p, want, false) }},
		{"wide.csv", func(p string) error { return WriteReturnsCSVFile(p, want, true) }},
	} {
		if testing.Short() && tc.file == "long.csv" {
			continue // 0.6 s, most of it writing the file: the long CSV reader is covered on small files in -short
		}
		path := filepath.Join(dir, tc.file)
		require.NoError(t, tc.write(path))
		got, err := ReadReturns(path, nil)
		require.NoError(t, err)
		requireSamePanel(t, want, got)
	}
	for _, name := range []string{"returns_small.csv", "returns_small_wide.csv"} {
		small, err := ReadReturns(filepath.Join("testdata/demo", name), nil)
		require.NoError(t, err)
		path := filepath.Join(dir, name)
		require.NoError(t, WriteReturnsCSVFile(path, small, name == "returns_small_wide.csv"))
		got, err := ReadReturns(path, nil)
		require.NoError(t, err)
		requireSamePanel(t, small, got)
	}
	for _, name := range []string{"assets.csv", "assets.parquet"} {
		a, err := ReadAssets(filepath.Join("testdata/demo", name))
		require.NoError(t, err)
		_, n := want.Dims()
		require.Len(t, a, n)
		path := filepath.Join(dir, name)
		require.NoError(t, WriteAssetsFile(path, a))
		b, err := ReadAssets(path)
		require.NoError(t, err)
		require.Equal(t, len(a), len(b))
		for i := range a {
			require.Equal(t, a[i].Asset, b[i].Asset)
			require.Equal(t, a[i].Attributes, b[i].Attributes)
			require.Equal(t, math.Float64bits(a[i].MarketCap), math.Float64bits(b[i].MarketCap))
		}
	}
	for _, name := range []string{"benchmark.csv", "benchmark.parquet", "fund.csv", "fund.parquet"} {
		h, err := ReadHoldings(filepath.Join("testdata/demo", name))
		require.NoError(t, err)
		path := filepath.Join(dir, name)
		require.NoError(t, WriteHoldingsFile(path, h))
		got, err := ReadHoldings(path)
		require.NoError(t, err)
		require.Equal(t, h, got)
	}
}

// Seeded random panels, with missing cells, empty dates and assets, values of
// every magnitude and identifiers that need quoting, read back from a long
// CSV file bit for bit (their assets sorted, as a long file is read).
func TestLongCSVRoundTripRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 17))
	dir := t.TempDir()
	for k := 0; k < 40; k++ {
		nt, n := 1+rng.IntN(30), 1+rng.IntN(30)
		dates := make([]Date, nt)
		d := DateOf(1950+rng.IntN(100), time.Month(1+rng.IntN(12)), 1+rng.IntN(28))
		for i := range dates {
			dates[i] = d
			d = d.AddDays(1 + rng.IntN(5))
		}
		assets := make([]string, n)
		for j := range assets {
			assets[j] = fmt.Sprintf("%s%04d", []string{"QB", "A,B", `Q"`, "X Y", "É"}[rng.IntN(5)], j)
		}
		sort.Strings(assets)
		missing := rng.Float64() * 0.5
		r := mat.NewDense(nt, n, nil)
		for i := 0; i < nt; i++ {
			for j := 0; j < n; j++ {
				v := math.NaN()
				if rng.Float64() >= missing {
					switch rng.IntN(4) {
					case 0:
						v = 0.02 * rng.NormFloat64()
					case 1:
						v = math.Ldexp(rng.Float64(), -rng.IntN(1070))
					case 2:
						v = math.Ldexp(rng.Float64(), rng.IntN(1020))
					default:
						v = -1 + math.Ldexp(1, -1-rng.IntN(52))
					}
				}
				r.Set(i, j, v)
			}
		}
		want, err := NewPanel(dates, assets, r, 0)
		require.NoError(t, err)
		path := filepath.Join(dir, fmt.Sprintf("r%d.csv", k))
		require.NoError(t, WriteReturnsCSVFile(path, want, false))
		got, err := ReadReturns(path, nil)
		require.NoError(t, err)
		requireSamePanel(t, want, got)
	}
}
