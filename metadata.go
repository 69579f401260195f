package riskmodel

import (
	"encoding/csv"
	"io"
	"math"
	"slices"
	"strings"
)

// AssetInfo is one row of an asset metadata file: the identifier, its sector
// and any optional columns. Attributes holds every column by its header name
// (including "sector" and the optional ones), so a report can group assets by
// any column the file has.
type AssetInfo struct {
	Asset      string
	Sector     string
	SizeBucket string  // empty when the file has no size_bucket column
	MarketCap  float64 // NaN when the file has no market_cap column or the cell is empty
	Attributes map[string]string
}

// Holding is one row of a holdings file: an asset and its weight in a
// portfolio or benchmark (0.02 = 2 % of the portfolio's value).
type Holding struct {
	Asset  string
	Weight float64
}

// Column names of asset metadata and holdings files.
const (
	colAsset      = "asset"
	colSector     = "sector"
	colSizeBucket = "size_bucket"
	colMarketCap  = "market_cap"
	colWeight     = "weight"
)

// ReadAssets reads an asset metadata file, CSV or Parquet by extension, with
// the required columns "asset" and "sector" (both non-empty) and optional
// "size_bucket", "market_cap" (a finite, non-negative number; empty or "NA"
// is NaN) and any other columns. Attributes holds every column but "asset" by
// its name, as text (market_cap normalised by strconv.FormatFloat 'g', -1); an
// empty cell or a null leaves the key out. Assets keep the file's order.
//
// Errors are *FileError values wrapping ErrEmpty, ErrMissingColumn,
// ErrMissingValue, ErrDuplicate (an asset listed twice), ErrBadNumber,
// ErrNonFinite, ErrImpossible (a negative market cap), ErrColumnType,
// ErrNotParquet, ErrTruncated or ErrFormat.
func ReadAssets(path string) ([]AssetInfo, error) {
	var out []AssetInfo
	seen := make(map[string]int)
	err := scanTable(path, []string{colAsset, colSector}, func(header, vals []string, at func(k int, err error) error) error {
		a := AssetInfo{MarketCap: math.NaN(), Attributes: make(map[string]string, len(header)-1)}
		for k, h := range header {
			s := strings.TrimSpace(vals[k])
			switch h {
			case colAsset:
				a.Asset = s
				continue
			case colSector:
				a.Sector = s
			case colSizeBucket:
				a.SizeBucket = s
			case colMarketCap:
				if s == "" || s == "NA" {
					continue
				}
				v, err := parseNumber(s)
				if err == nil && v < 0 {
					err = detail(ErrImpossible, "a market cap cannot be negative")
				}
				if err != nil {
					return at(k, err)
				}
				a.MarketCap = v
				s = formatFloat(v)
			}
			if s != "" {
				a.Attributes[h] = s
			}
		}
		if a.Asset == "" {
			return at(slices.Index(header, colAsset), ErrMissingValue)
		}
		if a.Sector == "" {
			return at(slices.Index(header, colSector), ErrMissingValue)
		}
		if _, dup := seen[a.Asset]; dup {
			return at(slices.Index(header, colAsset), detail(ErrDuplicate, "the asset is listed twice"))
		}
		seen[a.Asset] = len(out)
		out = append(out, a)
		return nil
	})
	if err != nil {
		return nil, err
	}
	return out, nil
}

// ReadHoldings reads a holdings file, CSV or Parquet by extension, with the
// columns "asset" and "weight" (a finite number; negative weights are short
// positions and allowed). Holdings keep the file's order.
//
// Errors are *FileError values wrapping ErrEmpty, ErrMissingColumn,
// ErrUnexpectedColumn, ErrMissingValue (an empty asset or weight),
// ErrDuplicate (an asset listed twice), ErrBadNumber, ErrNonFinite,
// ErrColumnType, ErrNotParquet, ErrTruncated or ErrFormat.
func ReadHoldings(path string) ([]Holding, error) {
	var out []Holding
	seen := make(map[string]bool)
	err := scanTable(path, nil, func(header, vals []string, at func(k int, err error) error) error {
		var h Holding
		for k, name := range header {
			s := strings.TrimSpace(vals[k])
			if s == "" || (name == colWeight && s == "NA") {
				return at(k, ErrMissingValue)
			}
			if name == colAsset {
				h.Asset = s
				continue
			}
			v, err := parseNumber(s)
			if err != nil {
				return at(k, err)
			}
			h.Weight = v
		}
		if seen[h.Asset] {
			return at(slices.Index(header, colAsset), detail(ErrDuplicate, "the asset is listed twice"))
		}
		seen[h.Asset] = true
		out = append(out, h)
		return nil
	}, colAsset, colWeight)
	if err != nil {
		return nil, err
	}
	return out, nil
}

// scanTable calls fn with every row of a small CSV or Parquet table as text
// (a Parquet null is ""), after checking that the required columns exist; if
// only is given, the table must have exactly those columns. at(k, err) makes
// the *FileError for column k of the current row.
func scanTable(path string, required []string, fn func(header, vals []string, at func(k int, err error) error) error, only ...string) error {
	if only != nil {
		required = only
	}
	switch ext(path) {
	case ".csv":
		return scanCSVTable(path, required, only != nil, fn)
	case ".parquet":
		return scanParquetTable(path, required, only != nil, fn)
	}
	return &FileError{File: path, Err: ErrFormat}
}

func scanCSVTable(path string, required []string, only bool, fn func(header, vals []string, at func(k int, err error) error) error) error {
	c, err := openCSV(path)
	if err != nil {
		return err
	}
	defer c.Close()
	if _, err := c.require(only, required...); err != nil {
		return err
	}
	for {
		rec, line, err := c.next()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
		at := func(k int, err error) error { return c.at(line, k, strings.TrimSpace(rec[k]), err) }
		if err := fn(c.header, rec, at); err != nil {
			return err
		}
	}
}

// WriteAssetsFile writes asset metadata, CSV or Parquet by extension: asset,
// sector, then size_bucket if any asset has one, market_cap if any is not
// NaN, then the other Attributes keys in sorted order. ReadAssets gives the
// same slice back.
func WriteAssetsFile(path string, a []AssetInfo) error {
	header := assetHeader(a)
	rows := make([][]string, len(a))
	for i, x := range a {
		rec := make([]string, len(header))
		for k, h := range header {
			switch h {
			case colAsset:
				rec[k] = x.Asset
			case colSector:
				rec[k] = x.Sector
			case colSizeBucket:
				rec[k] = x.SizeBucket
			case colMarketCap:
				if !math.IsNaN(x.MarketCap) {
					rec[k] = formatFloat(x.MarketCap)
				}
			default:
				rec[k] = x.Attributes[h]
			}
		}
		rows[i] = rec
	}
	return writeTable(path, header, rows, colMarketCap)
}

func assetHeader(a []AssetInfo) []string {
	header := []string{colAsset, colSector}
	var size, mcap bool
	other := make(map[string]bool)
	for _, x := range a {
		size = size || x.SizeBucket != ""
		mcap = mcap || !math.IsNaN(x.MarketCap)
		for k := range x.Attributes {
			switch k {
			case colAsset, colSector, colSizeBucket, colMarketCap:
			default:
				other[k] = true
			}
		}
	}
	if size {
		header = append(header, colSizeBucket)
	}
	if mcap {
		header = append(header, colMarketCap)
	}
	var rest []string
	for k := range other {
		rest = append(rest, k)
	}
	slices.Sort(rest)
	return append(header, rest...)
}

// WriteHoldingsFile writes holdings, CSV or Parquet by extension, with the
// columns asset and weight (a required double in Parquet).
func WriteHoldingsFile(path string, h []Holding) error {
	rows := make([][]string, len(h))
	for i, x := range h {
		rows[i] = []string{x.Asset, formatFloat(x.Weight)}
	}
	return writeTable(path, []string{colAsset, colWeight}, rows, colWeight)
}

// writeTable writes a small table of text cells. In Parquet the named numeric
// column is a DOUBLE (optional, except for a weight), the others strings, and
// an empty cell is a null.
func writeTable(path string, header []string, rows [][]string, numeric string) error {
	switch ext(path) {
	case ".csv":
		return createCSV(path, func(w io.Writer) error { return writeCSVTable(w, header, rows) })
	case ".parquet":
		return writeParquetTable(path, header, rows, numeric)
	}
	return &FileError{File: path, Err: ErrFormat}
}

func writeCSVTable(w io.Writer, header []string, rows [][]string) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(header); err != nil {
		return err
	}
	if err := cw.WriteAll(rows); err != nil {
		return err
	}
	return cw.Error()
}
