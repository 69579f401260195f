package riskmodel

import (
	"bytes"
	"encoding/csv"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// The file readers take any bytes: whatever a file holds, they return either
// a valid result or a *FileError naming the file and wrapping one of the
// exported sentinels below, and never panic. The seed corpora (f.Add and
// testdata/fuzz/) run as regression tests in every `go test`.

// fileSentinels are the reasons a reader may give for a bad file.
var fileSentinels = []error{
	ErrMissingColumn, ErrUnexpectedColumn, ErrMissingValue, ErrBadDate, ErrBadNumber,
	ErrColumnType, ErrNotParquet, ErrTruncated, ErrFormat, ErrTooSparse, ErrRecordTooLarge, ErrPageTooLarge,
	ErrEmpty, ErrDuplicate, ErrImpossible, ErrNonFinite, ErrUnsorted, ErrPeriodsPerYear,
	// encoding/csv's own sentinels, which csvFile.wrap keeps.
	csv.ErrQuote, csv.ErrBareQuote, csv.ErrFieldCount, csv.ErrTrailingComma,
}

// checkFileError fails unless err is a *FileError for path whose reason is one
// of fileSentinels and whose message says which file and which reason.
func checkFileError(t *testing.T, path string, err error) {
	t.Helper()
	var fe *FileError
	if !errors.As(err, &fe) {
		t.Fatalf("want a *FileError, got %T: %v", err, err)
	}
	if fe.File != path || !strings.HasPrefix(err.Error(), path+": ") {
		t.Fatalf("error does not name the file %s: %v", path, err)
	}
	for _, s := range fileSentinels {
		if errors.Is(err, s) {
			if !strings.Contains(err.Error(), s.Error()) {
				t.Fatalf("message %q lacks the reason %q", err, s)
			}
			return
		}
	}
	t.Fatalf("error wraps no exported sentinel: %v", err)
}

// checkPanel fails unless p is a well-formed panel: at least one date and
// asset, strictly increasing dates, distinct non-empty assets, and every cell
// missing or a finite return above −1.
func checkPanel(t *testing.T, p *Panel) {
	t.Helper()
	nt, n := p.Dims()
	if nt == 0 || n == 0 {
		t.Fatalf("empty panel %d×%d without an error", nt, n)
	}
	for i := 1; i < nt; i++ {
		if p.Date(i) <= p.Date(i-1) {
			t.Fatalf("dates not increasing at %d: %v, %v", i, p.Date(i-1), p.Date(i))
		}
	}
	seen := make(map[string]bool, n)
	for j := 0; j < n; j++ {
		a := p.Asset(j)
		if a == "" || seen[a] {
			t.Fatalf("asset %d %q empty or repeated", j, a)
		}
		seen[a] = true
	}
	for i := 0; i < nt; i++ {
		for j := 0; j < n; j++ {
			v := p.At(i, j)
			if !math.IsNaN(v) && (math.IsInf(v, 0) || v <= -1) {
				t.Fatalf("cell (%d,%d) = %v", i, j, v)
			}
		}
	}
	if q := p.PeriodsPerYear(); !(q > 0) || math.IsInf(q, 0) {
		t.Fatalf("periods per year %v", q)
	}
}

// writeFuzzFile writes data to a fresh file called name.
func writeFuzzFile(t *testing.T, name string, data []byte) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// fuzzPanel is a small panel with a gap, written in the seeds.
func fuzzPanel() *Panel {
	nan := math.NaN()
	p, err := NewPanel([]Date{DateOf(2024, 1, 2), DateOf(2024, 1, 3), DateOf(2024, 1, 4)},
		[]string{"QX1", "QX2"}, mat.NewDense(3, 2, []float64{0.01, nan, -0.02, 0.03, 0, 0.5}), 252)
	if err != nil {
		panic(err)
	}
	return p
}

func FuzzReadReturnsCSV(f *testing.F) {
	var long, wide bytes.Buffer
	if err := WriteReturnsCSV(&long, fuzzPanel(), false); err != nil {
		f.Fatal(err)
	}
	if err := WriteReturnsCSV(&wide, fuzzPanel(), true); err != nil {
		f.Fatal(err)
	}
	f.Add(long.Bytes())
	f.Add(wide.Bytes())
	f.Add([]byte("date,asset,return\n2024-01-02,A,0.1\n2024-01-02,A,0.2\n"))
	f.Add([]byte("date,A,B\n2024-01-03,0.1,NA\n2024-01-02,,-1\n"))
	f.Add([]byte("\ufeffdate, A ,\"B\"\"\"\n2024-02-30,1e400,Inf\n"))
	f.Add([]byte("date,asset,return\n1900-01-01,A,0\n2400-12-31,B,0\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		path := writeFuzzFile(t, "r.csv", data)
		p, err := ReadReturns(path, nil)
		if err != nil {
			checkFileError(t, path, err)
			return
		}
		checkPanel(t, p)
	})
}

// FuzzReadLongCSVTwoPass checks the one-pass long CSV reader against the
// two-pass reference (readReturnsCSVTwoPass): the same panel or the same
// error for any bytes. The seeds are the edge cases of longCSVCases.
func FuzzReadLongCSVTwoPass(f *testing.F) {
	for _, tc := range longCSVCases {
		if len(tc.data) < 1<<12 {
			f.Add([]byte(tc.data))
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		requireSameAsTwoPass(t, writeFuzzFile(t, "r.csv", data))
	})
}

func FuzzReadReturnsParquet(f *testing.F) {
	var b bytes.Buffer
	if err := WriteReturnsParquet(&b, fuzzPanel()); err != nil {
		f.Fatal(err)
	}
	f.Add(b.Bytes())
	f.Add([]byte("PAR1"))
	f.Add([]byte("PAR1\x00\x00\x00\x00\x00\x00\x00\x00PAR1"))
	f.Fuzz(func(t *testing.T, data []byte) {
		path := writeFuzzFile(t, "r.parquet", data)
		p, err := ReadReturns(path, nil)
		if err != nil {
			checkFileError(t, path, err)
			return
		}
		checkPanel(t, p)
	})
}

// metaSeeds returns a metadata or holdings table written by write as CSV and
// as Parquet, for seeds.
func metaSeeds(f *testing.F, write func(path string) error) (csvData, parquetData []byte) {
	dir := f.TempDir()
	for _, ext := range []string{".csv", ".parquet"} {
		path := filepath.Join(dir, "t"+ext)
		if err := write(path); err != nil {
			f.Fatal(err)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			f.Fatal(err)
		}
		if ext == ".csv" {
			csvData = b
		} else {
			parquetData = b
		}
	}
	return csvData, parquetData
}

// fuzzExt picks the reader's format from a fuzzed flag.
func fuzzExt(parquetFile bool) string {
	if parquetFile {
		return ".parquet"
	}
	return ".csv"
}

func FuzzReadAssets(f *testing.F) {
	c, p := metaSeeds(f, func(path string) error {
		return WriteAssetsFile(path, []AssetInfo{
			{Asset: "QX1", Sector: "Tools", SizeBucket: "large", MarketCap: 1.5e9, Attributes: map[string]string{"region": "north"}},
			{Asset: "QX2", Sector: "Food", MarketCap: math.NaN()},
		})
	})
	f.Add(false, c)
	f.Add(true, p)
	f.Add(false, []byte("asset,sector,market_cap\nA,S,-1\nA,S,NA\n"))
	f.Add(false, []byte("asset,sector\n,S\n"))
	f.Fuzz(func(t *testing.T, isParquet bool, data []byte) {
		path := writeFuzzFile(t, "a"+fuzzExt(isParquet), data)
		a, err := ReadAssets(path)
		if err != nil {
			checkFileError(t, path, err)
			return
		}
		seen := make(map[string]bool, len(a))
		for _, x := range a {
			if x.Asset == "" || x.Sector == "" || seen[x.Asset] {
				t.Fatalf("asset %q sector %q empty or repeated", x.Asset, x.Sector)
			}
			seen[x.Asset] = true
			if !math.IsNaN(x.MarketCap) && (math.IsInf(x.MarketCap, 0) || x.MarketCap < 0) {
				t.Fatalf("market cap %v", x.MarketCap)
			}
		}
	})
}

func FuzzReadHoldings(f *testing.F) {
	c, p := metaSeeds(f, func(path string) error {
		return WriteHoldingsFile(path, []Holding{{"QX1", 0.6}, {"QX2", 0.4}, {"QX3", -0.1}})
	})
	f.Add(false, c)
	f.Add(true, p)
	f.Add(false, []byte("asset,weight\nA,0.5\nA,NA\n"))
	f.Add(false, []byte("weight,asset,extra\n1,A,2\n"))
	f.Fuzz(func(t *testing.T, isParquet bool, data []byte) {
		path := writeFuzzFile(t, "h"+fuzzExt(isParquet), data)
		h, err := ReadHoldings(path)
		if err != nil {
			checkFileError(t, path, err)
			return
		}
		seen := make(map[string]bool, len(h))
		for _, x := range h {
			if x.Asset == "" || seen[x.Asset] || math.IsNaN(x.Weight) || math.IsInf(x.Weight, 0) {
				t.Fatalf("holding %+v empty, repeated or not finite", x)
			}
			seen[x.Asset] = true
		}
	})
}
