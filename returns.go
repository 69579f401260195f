package riskmodel

import (
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// ReadOptions adjusts ReadReturns. A nil *ReadOptions or the zero value means
// the documented defaults.
type ReadOptions struct {
	// PeriodsPerYear of the returns. Zero means the value stored in a Parquet
	// file written by WriteReturnsParquetFile, or DailyPeriods (252) when the file
	// holds none (always for CSV).
	PeriodsPerYear float64
}

// metaPeriods is the Parquet key-value metadata key holding periods per year.
const metaPeriods = "riskmodel.periods_per_year"

// ReadReturns reads a return file into a panel. The format is chosen by the
// file name's extension: ".parquet" (long format: a DATE column "date", a
// string column "asset" and a nullable double column "return") or ".csv"
// (long "date,asset,return" when the header has an "asset" column, otherwise
// wide: "date" and one column per asset).
//
// In long files the panel's dates are the distinct dates of the file and its
// assets are sorted by identifier; a (date, asset) pair without a row is
// missing. In a wide file the assets keep the header's order and the rows may
// come in any date order. An empty cell, "NA" or a Parquet null is missing.
//
// Every bad value is an error: ReadReturns returns a *FileError naming file,
// line (CSV) or row (Parquet), column and value, wrapping ErrEmpty (no rows),
// ErrMissingColumn, ErrUnexpectedColumn, ErrMissingValue, ErrBadDate,
// ErrBadNumber, ErrNonFinite ("Inf", "NaN"), ErrImpossible (a return ≤ −1),
// ErrDuplicate (a repeated (date, asset) or column), ErrColumnType,
// ErrNotParquet, ErrTruncated, ErrTooSparse or ErrFormat. An invalid
// opts.PeriodsPerYear is ErrPeriodsPerYear.
//
// A long Parquet file is read twice, once for its dates and assets and once
// to fill the panel, so memory is the T×N panel plus one batch of rows. A
// long CSV file is read once, keeping 16 bytes a row until the panel is
// filled. Cost O(rows · log(T+N)).
func ReadReturns(path string, opts *ReadOptions) (*Panel, error) {
	var o ReadOptions
	if opts != nil {
		o = *opts
	}
	if o.PeriodsPerYear != 0 && (!(o.PeriodsPerYear > 0) || math.IsInf(o.PeriodsPerYear, 0)) {
		return nil, fmt.Errorf("riskmodel: %w: %v", ErrPeriodsPerYear, o.PeriodsPerYear)
	}
	switch ext(path) {
	case ".parquet":
		return readReturnsParquet(path, o.PeriodsPerYear)
	case ".csv":
		return readReturnsCSV(path, o.PeriodsPerYear)
	}
	return nil, &FileError{File: path, Err: ErrFormat}
}

func ext(path string) string { return strings.ToLower(filepath.Ext(path)) }

// parseReturn parses the text of a return cell. "" and "NA" are missing (NaN).
func parseReturn(s string) (float64, error) {
	s = strings.TrimSpace(s)
	if s == "" || s == "NA" {
		return math.NaN(), nil
	}
	v, err := parseNumber(s)
	if err != nil {
		return 0, err
	}
	if v <= -1 {
		return 0, ErrImpossible
	}
	return v, nil
}

// parseNumber parses a finite number; "Inf" and "NaN" spelled out are
// ErrNonFinite, anything else unparsable is ErrBadNumber.
func parseNumber(s string) (float64, error) {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) {
			return 0, detail(ErrBadNumber, "out of the range of a float64")
		}
		return 0, ErrBadNumber
	}
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, ErrNonFinite
	}
	return v, nil
}

// parseDateCell parses a date cell, mapping the error to ErrBadDate.
func parseDateCell(s string) (Date, error) {
	d, err := ParseDate(strings.TrimSpace(s))
	if err != nil {
		return 0, ErrBadDate
	}
	return d, nil
}

// checkSpan rejects a long file whose dates × assets table is out of
// proportion to its rows (see ErrTooSparse): more than 16 cells a row beyond
// a first million cells, or more cells than a matrix can index.
func checkSpan(path string, rows, t, n int) error {
	cells := float64(t) * float64(n)
	if cells > 16*float64(rows)+1<<20 || cells > math.MaxInt32 {
		return &FileError{File: path, Err: detail(ErrTooSparse, "%d rows span %d dates × %d assets", rows, t, n)}
	}
	return nil
}

// longIndex collects the distinct dates and assets of a long file in its
// first pass.
type longIndex struct {
	dates  map[Date]struct{}
	assets map[string]struct{}
	rows   int
}

func newLongIndex() *longIndex {
	return &longIndex{dates: make(map[Date]struct{}), assets: make(map[string]struct{})}
}

// add records a row; asset is copied only the first time it is seen.
func (x *longIndex) add(d Date, asset []byte) {
	x.rows++
	x.dates[d] = struct{}{}
	if _, ok := x.assets[string(asset)]; !ok {
		x.assets[string(asset)] = struct{}{}
	}
}

// cell returns the builder's row and column of (d, asset), looked up without
// copying asset.
func cell(b *PanelBuilder, d Date, asset []byte) (i, j int) {
	return b.row[d], b.p.col[string(asset)]
}

// builder returns a panel builder over the sorted dates and assets.
func (x *longIndex) builder(path string, periodsPerYear float64) (*PanelBuilder, error) {
	if x.rows == 0 {
		return nil, &FileError{File: path, Err: detail(ErrEmpty, "the file has no rows")}
	}
	if err := checkSpan(path, x.rows, len(x.dates), len(x.assets)); err != nil {
		return nil, err
	}
	dates := make([]Date, 0, len(x.dates))
	for d := range x.dates {
		dates = append(dates, d)
	}
	slices.Sort(dates)
	assets := make([]string, 0, len(x.assets))
	for a := range x.assets {
		assets = append(assets, a)
	}
	slices.Sort(assets)
	b, err := NewPanelBuilder(dates, assets, periodsPerYear)
	if err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	return b, nil
}

// longCells calls fn, in date-major order, for every observed cell of p and
// for the few missing cells a long file needs so that no date or asset of p is
// lost: a date with no observation is written once as (date, first asset,
// missing) and an asset with no observation as (first date, asset, missing).
// Reading the file back then gives p exactly.
func longCells(p *Panel, fn func(i, j int, v float64) error) error {
	t, n := p.Dims()
	if t == 0 || n == 0 {
		return nil
	}
	dateSeen := make([]bool, t)
	assetSeen := make([]bool, n)
	for i := 0; i < t; i++ {
		for j, v := range p.r.RawRowView(i) {
			if !math.IsNaN(v) {
				dateSeen[i] = true
				assetSeen[j] = true
			}
		}
	}
	for i := 0; i < t; i++ {
		for j, v := range p.r.RawRowView(i) {
			if !math.IsNaN(v) || (j == 0 && !dateSeen[i]) || (i == 0 && !assetSeen[j]) {
				if err := fn(i, j, v); err != nil {
					return err
				}
			}
		}
	}
	return nil
}

// formatFloat writes v so that strconv.ParseFloat gives back the same bits.
func formatFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
