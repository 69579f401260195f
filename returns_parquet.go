package riskmodel

import (
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"time"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/format"
)

// longRow is the Parquet schema of a long return file. The date is an int32
// DATE and the return a *float64: a time.Time DATE field and an optional
// value-type float64 are both written wrong by parquet-go v0.32.0 (see
// DEPENDENCIES.md), and the round-trip test guards against them.
type longRow struct {
	Date   int32    `parquet:"date,date"`
	Asset  string   `parquet:"asset,dict"`
	Return *float64 `parquet:"return,optional"`
}

// Parquet batch and row-group sizes: a batch bounds the reader's buffers, a
// row group bounds the writer's.
const (
	parquetBatch     = 4096
	parquetGroupRows = 1 << 18
)

// readReturnsParquet reads a long Parquet return file in two passes over its
// column pages: the first collects dates and assets and checks every value,
// the second fills the panel.
func readReturnsParquet(path string, periodsPerYear float64) (p *Panel, err error) {
	pf, err := openParquet(path)
	if err != nil {
		return nil, err
	}
	defer pf.Close()
	if periodsPerYear == 0 {
		if s, ok := pf.pf.Lookup(metaPeriods); ok {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil || !(v > 0) || math.IsInf(v, 0) {
				return nil, &FileError{File: path, Column: "metadata " + metaPeriods, Value: s, Err: ErrPeriodsPerYear}
			}
			periodsPerYear = v
		}
	}
	err = safeRead(path, func() error {
		x := newLongIndex()
		err := scanLongParquet(pf, func(d Date, asset []byte, v float64) error {
			x.add(d, asset)
			return nil
		})
		if err != nil {
			return err
		}
		b, err := x.builder(path, periodsPerYear)
		if err != nil {
			return err
		}
		err = scanLongParquet(pf, func(d Date, asset []byte, v float64) error {
			i, j := cell(b, d, asset)
			return b.SetAt(i, j, v)
		})
		if err != nil {
			return err
		}
		p = b.Panel()
		return nil
	})
	return p, err
}

// scanLongParquet calls fn for every row of a long Parquet file, reading the
// three columns in step, a batch at a time. asset is only valid during the
// call. An error of fn is reported at the row's asset cell.
func scanLongParquet(pf *parquetFile, fn func(d Date, asset []byte, v float64) error) error {
	path := pf.path
	for _, f := range pf.pf.Schema().Fields() {
		switch f.Name() {
		case "date", "asset", "return":
		default:
			return &FileError{File: path, Column: f.Name(),
				Err: detail(ErrUnexpectedColumn, "a long return file may have only the columns date, asset, return")}
		}
	}
	cd, decodeDate, err := dateColumn(pf, "date")
	if err != nil {
		return err
	}
	ca, err := pf.column("asset")
	if err != nil {
		return err
	}
	if ca.Node.Type().Kind() != parquet.ByteArray {
		return &FileError{File: path, Column: "asset", Err: detail(ErrColumnType, "%s; identifiers must be strings", ca.Node.Type())}
	}
	cr, err := pf.column("return")
	if err != nil {
		return err
	}
	kr := cr.Node.Type().Kind()
	if kr != parquet.Double && kr != parquet.Float {
		return &FileError{File: path, Column: "return", Err: detail(ErrColumnType, "%s; returns must be DOUBLE or FLOAT", cr.Node.Type())}
	}
	cols := []int{cd.ColumnIndex, ca.ColumnIndex, cr.ColumnIndex}
	names := []string{"date", "asset", "return"}
	var streams [3]*columnStream
	var bufs [3][]parquet.Value
	for k := range streams {
		streams[k] = newColumnStream(pf.pf, cols[k])
		defer streams[k].Close()
		bufs[k] = make([]parquet.Value, parquetBatch)
	}
	row := 0
	for {
		n, err := streams[0].fill(bufs[0])
		if err == io.EOF {
			break
		}
		if err != nil {
			return readErr(path, row+1, "date", err)
		}
		for k := 1; k < 3; k++ {
			m, err := streams[k].fill(bufs[k][:n])
			if err == io.EOF || m < n {
				return readErr(path, row+m+1, names[k], io.ErrUnexpectedEOF)
			}
			if err != nil {
				return readErr(path, row+1, names[k], err)
			}
		}
		for k := 0; k < n; k++ {
			row++
			dv, av, rv := bufs[0][k], bufs[1][k], bufs[2][k]
			bad := func(c int, value string, err error) error {
				return &FileError{File: path, Row: row, Column: names[c], Value: value, Err: err}
			}
			if dv.IsNull() {
				return bad(0, "", ErrMissingValue)
			}
			d, err := decodeDate(dv)
			if err != nil {
				return bad(0, dateText(dv), err)
			}
			if av.IsNull() || len(av.ByteArray()) == 0 {
				return bad(1, "", ErrMissingValue)
			}
			asset := av.ByteArray()
			v := math.NaN()
			if !rv.IsNull() {
				if kr == parquet.Float {
					v = float64(rv.Float())
				} else {
					v = rv.Double()
				}
				if err := checkReturn(v); err != nil {
					return bad(2, formatFloat(v), err)
				}
				if math.IsNaN(v) {
					return bad(2, "NaN", detail(ErrNonFinite, "a missing return must be null"))
				}
			}
			if err := fn(d, asset, v); err != nil {
				return bad(1, string(asset), err)
			}
		}
	}
	for k := 1; k < 3; k++ {
		if _, err := streams[k].fill(bufs[k][:1]); err != io.EOF {
			return &FileError{File: path, Row: row + 1, Column: names[k], Err: detail(ErrNotParquet, "the column has more values than the date column")}
		}
	}
	return checkRows(pf, row)
}

// julianEpoch is the Julian day number of 1970-01-01, the origin of INT96
// timestamps' day count.
const julianEpoch = 2440588

// dateColumn returns the named date column and a decoder for its values. It
// accepts INT32 DATE, INT64 TIMESTAMP and legacy INT96 timestamps (converted
// to their UTC calendar date, and rejected with ErrBadDate unless they are at
// midnight, since a time of day would make the date depend on a time zone),
// and "YYYY-MM-DD" strings. Anything else is ErrColumnType.
func dateColumn(pf *parquetFile, name string) (parquet.LeafColumn, func(parquet.Value) (Date, error), error) {
	lc, err := pf.column(name)
	if err != nil {
		return lc, nil, err
	}
	typ := lc.Node.Type()
	var lt any
	if l := typ.LogicalType(); l != nil {
		lt = l.Value
	}
	switch typ.Kind() {
	case parquet.Int32:
		if _, ok := lt.(*format.DateType); ok {
			return lc, func(v parquet.Value) (Date, error) { return Date(v.Int32()), nil }, nil
		}
	case parquet.Int64:
		if ts, ok := lt.(*format.TimestampType); ok && ts.Unit.Value != nil {
			perDay := int64(24 * time.Hour / ts.Unit.Value.Duration())
			return lc, func(v parquet.Value) (Date, error) {
				x := v.Int64()
				if x%perDay != 0 {
					return 0, detail(ErrBadDate, "the timestamp has a time of day")
				}
				return Date(x / perDay), nil
			}, nil
		}
	case parquet.Int96:
		return lc, func(v parquet.Value) (Date, error) {
			i := v.Int96()
			if i[0] != 0 || i[1] != 0 {
				return 0, detail(ErrBadDate, "the INT96 timestamp has a time of day")
			}
			return Date(int64(i[2]) - julianEpoch), nil
		}, nil
	case parquet.ByteArray:
		if _, ok := lt.(*format.StringType); ok {
			return lc, func(v parquet.Value) (Date, error) { return parseDateCell(string(v.ByteArray())) }, nil
		}
	}
	return lc, nil, &FileError{File: pf.path, Column: name,
		Err: detail(ErrColumnType, "%s; dates must be INT32 DATE, INT64 TIMESTAMP at midnight, INT96 at midnight or YYYY-MM-DD strings", typ)}
}

// dateText formats a date cell's raw value for an error message.
func dateText(v parquet.Value) string {
	switch v.Kind() {
	case parquet.Int96:
		i := v.Int96()
		nanos := int64(uint64(i[1])<<32 | uint64(i[0]))
		return Date(int64(i[2]) - julianEpoch).Time().Add(time.Duration(nanos)).Format(time.RFC3339Nano)
	case parquet.ByteArray:
		return string(v.ByteArray())
	}
	return v.String()
}

// WriteReturnsParquetFile writes p to a Parquet file; see WriteReturnsParquet.
func WriteReturnsParquetFile(path string, p *Panel) (err error) {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	return WriteReturnsParquet(f, p)
}

// WriteReturnsParquet writes p as a long Parquet file: columns date (INT32
// DATE), asset (dictionary-encoded string) and return (nullable DOUBLE), in
// date order with assets in column order, zstd-compressed, at most 2¹⁸ rows a
// row group. Missing cells are omitted except one null row per date or asset
// with no observation at all, so that ReadReturns gives back the same panel
// (with the assets sorted, as long files are read). The panel's periods per
// year is stored in the file's key-value metadata.
func WriteReturnsParquet(w io.Writer, p *Panel) error {
	pw := parquet.NewGenericWriter[longRow](w,
		parquet.Compression(&parquet.Zstd),
		parquet.MaxRowsPerRowGroup(parquetGroupRows),
		parquet.KeyValueMetadata(metaPeriods, formatFloat(p.periodsPerYear)))
	rows := make([]longRow, 0, parquetBatch)
	vals := make([]float64, parquetBatch)
	flush := func() error {
		_, err := pw.Write(rows)
		rows = rows[:0]
		return err
	}
	err := longCells(p, func(i, j int, v float64) error {
		r := longRow{Date: int32(p.dates[i]), Asset: p.assets[j]}
		if !math.IsNaN(v) {
			vals[len(rows)] = v
			r.Return = &vals[len(rows)]
		}
		rows = append(rows, r)
		if len(rows) == cap(rows) {
			return flush()
		}
		return nil
	})
	if err == nil {
		err = flush()
	}
	if cerr := pw.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("riskmodel: writing Parquet returns: %w", err)
	}
	return nil
}
