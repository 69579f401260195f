package riskmodel

import (
	"io"
	"os"
	"strconv"

	"github.com/parquet-go/parquet-go"
)

// scanParquetTable reads a small flat Parquet table column by column in
// batches and hands each row to fn as text.
func scanParquetTable(path string, required []string, only bool, fn func(header, vals []string, at func(k int, err error) error) error) error {
	pf, err := openParquet(path)
	if err != nil {
		return err
	}
	defer pf.Close()
	fields := pf.pf.Schema().Fields()
	header := make([]string, len(fields))
	cols := make([]int, len(fields))
	for k, f := range fields {
		header[k] = f.Name()
		lc, err := pf.column(f.Name())
		if err != nil {
			return err
		}
		cols[k] = lc.ColumnIndex
		switch lc.Node.Type().Kind() {
		case parquet.ByteArray, parquet.Double, parquet.Float, parquet.Int32, parquet.Int64, parquet.Boolean:
		default:
			return &FileError{File: path, Column: f.Name(), Err: detail(ErrColumnType, "%s", lc.Node.Type())}
		}
	}
	for _, name := range required {
		if _, err := pf.column(name); err != nil {
			return err
		}
	}
	if only {
		for _, h := range header {
			if !contains(required, h) {
				return &FileError{File: path, Column: h, Err: detail(ErrUnexpectedColumn, "the file may have only the columns %q", required)}
			}
		}
	}
	if pf.pf.NumRows() == 0 {
		return &FileError{File: path, Err: detail(ErrEmpty, "the file has no rows")}
	}
	return safeRead(path, func() error {
		streams := make([]*columnStream, len(cols))
		bufs := make([][]parquet.Value, len(cols))
		for k := range cols {
			streams[k] = newColumnStream(pf.pf, cols[k])
			defer streams[k].Close()
			bufs[k] = make([]parquet.Value, 1024)
		}
		vals := make([]string, len(cols))
		row := 0
		for {
			n, err := streams[0].fill(bufs[0])
			if err == io.EOF {
				return checkRows(pf, row)
			}
			if err != nil {
				return readErr(path, row+1, header[0], err)
			}
			for k := 1; k < len(streams); k++ {
				m, err := streams[k].fill(bufs[k][:n])
				if err != nil && err != io.EOF {
					return readErr(path, row+1, header[k], err)
				}
				if m != n {
					return readErr(path, row+m+1, header[k], io.ErrUnexpectedEOF)
				}
			}
			for i := 0; i < n; i++ {
				row++
				for k := range cols {
					vals[k] = valueText(bufs[k][i])
				}
				at := func(k int, err error) error {
					return &FileError{File: path, Row: row, Column: header[k], Value: vals[k], Err: err}
				}
				if err := fn(header, vals, at); err != nil {
					return err
				}
			}
		}
	})
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// valueText formats a Parquet value as the text a CSV cell would hold.
func valueText(v parquet.Value) string {
	if v.IsNull() {
		return ""
	}
	switch v.Kind() {
	case parquet.ByteArray:
		return string(v.ByteArray())
	case parquet.Double:
		return formatFloat(v.Double())
	case parquet.Float:
		return formatFloat(float64(v.Float()))
	case parquet.Int32:
		return strconv.FormatInt(int64(v.Int32()), 10)
	case parquet.Int64:
		return strconv.FormatInt(v.Int64(), 10)
	case parquet.Boolean:
		return strconv.FormatBool(v.Boolean())
	}
	return v.String()
}

// writeParquetTable writes text rows as Parquet: the numeric column a DOUBLE
// and the others strings; "asset" and the weight are required, the rest
// optional with an empty cell written as null.
func writeParquetTable(path string, header []string, rows [][]string, numeric string) (err error) {
	group := parquet.Group{}
	for _, h := range header {
		var node parquet.Node = parquet.String()
		if h == numeric {
			node = parquet.Leaf(parquet.DoubleType)
		}
		if h != colAsset && h != colWeight {
			node = parquet.Optional(node)
		}
		group[h] = node
	}
	schema := parquet.NewSchema("table", group)
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	w := parquet.NewWriter(f, schema, parquet.Compression(&parquet.Zstd), parquet.MaxRowsPerRowGroup(parquetGroupRows))
	leaf := make([]parquet.LeafColumn, len(header))
	for k, h := range header {
		leaf[k], _ = schema.Lookup(h)
	}
	row := make(parquet.Row, len(header))
	for _, rec := range rows {
		for k, s := range rec {
			lc := leaf[k]
			var v parquet.Value
			switch {
			case s == "" && lc.MaxDefinitionLevel > 0:
				v = parquet.NullValue().Level(0, 0, lc.ColumnIndex)
			case header[k] == numeric:
				x, err := strconv.ParseFloat(s, 64)
				if err != nil {
					return err
				}
				v = parquet.DoubleValue(x).Level(0, lc.MaxDefinitionLevel, lc.ColumnIndex)
			default:
				v = parquet.ByteArrayValue([]byte(s)).Level(0, lc.MaxDefinitionLevel, lc.ColumnIndex)
			}
			row[lc.ColumnIndex] = v
		}
		if _, err := w.WriteRows([]parquet.Row{row}); err != nil {
			return err
		}
	}
	return w.Close()
}
