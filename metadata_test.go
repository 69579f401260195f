package riskmodel

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestAssetsRoundTrip(t *testing.T) {
	want := []AssetInfo{
		{Asset: "QX01", Sector: "Tidewater Works", SizeBucket: "large", MarketCap: 1.5e10,
			Attributes: map[string]string{"sector": "Tidewater Works", "size_bucket": "large", "market_cap": "1.5e+10", "region": "north"}},
		{Asset: "QX02", Sector: "Lantern, Glass & Co", MarketCap: math.NaN(),
			Attributes: map[string]string{"sector": "Lantern, Glass & Co"}},
		{Asset: "QX03", Sector: "Tidewater Works", SizeBucket: "small", MarketCap: 0,
			Attributes: map[string]string{"sector": "Tidewater Works", "size_bucket": "small", "market_cap": "0", "region": "south"}},
	}
	dir := t.TempDir()
	for _, name := range []string{"assets.csv", "assets.parquet"} {
		t.Run(name, func(t *testing.T) {
			path := filepath.Join(dir, name)
			require.NoError(t, WriteAssetsFile(path, want))
			got, err := ReadAssets(path)
			require.NoError(t, err)
			require.Len(t, got, len(want))
			for i := range want {
				require.Equal(t, want[i].Asset, got[i].Asset)
				require.Equal(t, want[i].Sector, got[i].Sector)
				require.Equal(t, want[i].SizeBucket, got[i].SizeBucket)
				require.Equal(t, math.Float64bits(want[i].MarketCap), math.Float64bits(got[i].MarketCap))
				require.Equal(t, want[i].Attributes, got[i].Attributes)
			}
		})
	}
}

func TestAssetsCSVHeaderOrderAndExtras(t *testing.T) {
	path := filepath.Join(t.TempDir(), "a.csv")
	require.NoError(t, os.WriteFile(path, []byte("market_cap,sector,asset,style\n2e9,Ore Mills,QX9,value\nNA,Ore Mills,QX8,\n"), 0o644))
	got, err := ReadAssets(path)
	require.NoError(t, err)
	require.Len(t, got, 2)
	require.True(t, math.IsNaN(got[1].MarketCap), "NA market cap is NaN")
	got[1].MarketCap = -1 // NaN never compares equal
	require.Equal(t, []AssetInfo{
		{Asset: "QX9", Sector: "Ore Mills", MarketCap: 2e9, Attributes: map[string]string{"sector": "Ore Mills", "market_cap": "2e+09", "style": "value"}},
		{Asset: "QX8", Sector: "Ore Mills", MarketCap: -1, Attributes: map[string]string{"sector": "Ore Mills"}},
	}, got)
}

func TestHoldingsRoundTrip(t *testing.T) {
	want := []Holding{{"QX01", 0.25}, {"QX02", -0.05}, {"QX03", 0}, {"QX04", 0.1 + 0.2}}
	dir := t.TempDir()
	for _, name := range []string{"h.csv", "h.parquet"} {
		path := filepath.Join(dir, name)
		require.NoError(t, WriteHoldingsFile(path, want))
		got, err := ReadHoldings(path)
		require.NoError(t, err)
		require.Equal(t, want, got, name)
	}
}

func TestReadMetaBadInput(t *testing.T) {
	a, h := readAssetsErr, readHoldingsErr
	const ah = "asset,sector,market_cap\n"
	const hh = "asset,weight\n"
	runBadCases(t, []badCase{
		{"assets empty", "a.csv", "", a, ErrEmpty, []string{"empty"}},
		{"assets header only", "a.csv", ah, a, ErrEmpty, []string{"line 1"}},
		{"assets missing sector", "a.csv", "asset,size_bucket\nQX1,large\n", a, ErrMissingColumn, []string{"line 1", `column "sector"`}},
		{"assets empty sector", "a.csv", ah + "QX1,,1\n", a, ErrMissingValue, []string{"line 2", `column "sector"`}},
		{"assets duplicate", "a.csv", ah + "QX1,S,1\nQX2,S,1\nQX1,T,2\n", a, ErrDuplicate, []string{"line 4", `column "asset"`, `value "QX1"`}},
		{"assets bad cap", "a.csv", ah + "QX1,S,1bn\n", a, ErrBadNumber, []string{"line 2", `column "market_cap"`, `value "1bn"`}},
		{"assets Inf cap", "a.csv", ah + "QX1,S,Inf\n", a, ErrNonFinite, []string{`value "Inf"`}},
		{"assets negative cap", "a.csv", ah + "QX1,S,-5\n", a, ErrImpossible, []string{`value "-5"`, "negative"}},
		{"assets not parquet", "a.parquet", ah, a, ErrNotParquet, []string{"magic"}},
		{"holdings empty", "h.csv", "", h, ErrEmpty, []string{"empty"}},
		{"holdings header only", "h.csv", hh, h, ErrEmpty, []string{"line 1"}},
		{"holdings missing weight", "h.csv", "asset\nQX1\n", h, ErrMissingColumn, []string{`column "weight"`}},
		{"holdings extra column", "h.csv", "asset,weight,side\nQX1,0.1,long\n", h, ErrUnexpectedColumn, []string{`column "side"`}},
		{"holdings Inf weight", "h.csv", hh + "QX1,0.5\nQX2,-Inf\n", h, ErrNonFinite, []string{"line 3", `column "weight"`, `value "-Inf"`}},
		{"holdings NaN weight", "h.csv", hh + "QX1,NaN\n", h, ErrNonFinite, []string{"line 2", `value "NaN"`}},
		{"holdings NA weight", "h.csv", hh + "QX1,NA\n", h, ErrMissingValue, []string{"line 2", `column "weight"`}},
		{"holdings bad weight", "h.csv", hh + "QX1,5%\n", h, ErrBadNumber, []string{`value "5%"`}},
		{"holdings duplicate", "h.csv", hh + "QX1,0.5\nQX1,0.5\n", h, ErrDuplicate, []string{"line 3", `value "QX1"`}},
		{"holdings bad extension", "h.xlsx", hh, h, ErrFormat, nil},
	})
}

func TestReadHoldingsParquetBadInput(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "h.parquet")
	require.NoError(t, WriteHoldingsFile(path, []Holding{{"QX1", 0.5}, {"QX2", math.NaN()}}))
	_, err := ReadHoldings(path)
	requireFileError(t, err, path, ErrNonFinite, "row 2", `column "weight"`, `value "NaN"`)

	require.NoError(t, WriteHoldingsFile(path, []Holding{{"QX1", 0.5}, {"QX2", 0.1}, {"QX1", 0.2}}))
	_, err = ReadHoldings(path)
	requireFileError(t, err, path, ErrDuplicate, "row 3", `column "asset"`, `value "QX1"`)

	require.NoError(t, WriteHoldingsFile(path, nil))
	_, err = ReadHoldings(path)
	requireFileError(t, err, path, ErrEmpty, "no rows")
}
