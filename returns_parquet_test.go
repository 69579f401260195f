package riskmodel

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/deprecated"
	"github.com/stretchr/testify/require"
)

// writeRows writes rows of any struct type as a Parquet file.
func writeRows[T any](t *testing.T, path string, rows []T) {
	t.Helper()
	var b bytes.Buffer
	w := parquet.NewGenericWriter[T](&b)
	_, err := w.Write(rows)
	require.NoError(t, err)
	require.NoError(t, w.Close())
	require.NoError(t, os.WriteFile(path, b.Bytes(), 0o644))
}

func f64(v float64) *float64 { return &v }

// requireFileError checks errors.Is and the parts of the message.
func requireFileError(t *testing.T, err error, path string, want error, msg ...string) {
	t.Helper()
	require.ErrorIs(t, err, want)
	var fe *FileError
	require.True(t, errors.As(err, &fe), "want a *FileError, got %T: %v", err, err)
	require.Equal(t, path, fe.File)
	require.True(t, strings.HasPrefix(err.Error(), path+": "), err.Error())
	for _, s := range msg {
		require.Contains(t, err.Error(), s)
	}
}

// The pitfalls of DEPENDENCIES.md (a time.Time DATE written wrong, an
// optional float64 turning 0.0 into NULL) must not reach our files: the
// schema is checked on the file itself, not only through our own reader.
func TestParquetSchemaAvoidsPitfalls(t *testing.T) {
	path := filepath.Join(t.TempDir(), "r.parquet")
	require.NoError(t, WriteReturnsParquetFile(path, samplePanel(t)))
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	st, _ := f.Stat()
	pf, err := parquet.OpenFile(f, st.Size())
	require.NoError(t, err)
	date, _ := pf.Schema().Lookup("date")
	require.Equal(t, parquet.Int32, date.Node.Type().Kind())
	require.Equal(t, "DATE", date.Node.Type().LogicalType().String())
	ret, _ := pf.Schema().Lookup("return")
	require.Equal(t, parquet.Double, ret.Node.Type().Kind())
	require.True(t, ret.Node.Optional())

	// Read back with parquet-go's own row reader, independent of ours.
	type row struct {
		Date   int32    `parquet:"date"`
		Asset  string   `parquet:"asset"`
		Return *float64 `parquet:"return,optional"`
	}
	rows, err := parquet.Read[row](f, st.Size())
	require.NoError(t, err)
	// samplePanel row 0: (1969-12-31, "AB,C") = 0.0 and (1969-12-31, "Q7") = 0.3…;
	// "K2" and "Z9" have no observation on that date, and Z9 none at all, so it
	// is kept by one null row on the first date; the empty date 2024-02-28 by one
	// null row for the first asset.
	require.Equal(t, int32(-1), rows[0].Date)
	require.Equal(t, "AB,C", rows[0].Asset)
	require.NotNil(t, rows[0].Return, "0.0 must not become null")
	require.Equal(t, 0.0, *rows[0].Return)
	require.Equal(t, "Q7", rows[1].Asset)
	require.Equal(t, "Z9", rows[2].Asset)
	require.Nil(t, rows[2].Return, "a missing return must be null")
	require.Equal(t, int32(DateOf(2024, 2, 28)), rows[3].Date)
	require.Nil(t, rows[3].Return)
	require.Len(t, rows, 10) // 8 observations, 1 null row for Z9, 1 for 2024-02-28
}

func TestReadReturnsParquetDates(t *testing.T) {
	dir := t.TempDir()
	d1, d2 := DateOf(1960, 2, 29), DateOf(2024, 2, 29)
	want := []Date{d1, d2}
	check := func(t *testing.T, path string) {
		p, err := ReadReturns(path, nil)
		require.NoError(t, err)
		require.Equal(t, want, p.Dates())
		require.Equal(t, 0.01, p.At(0, 0))
		require.True(t, math.IsNaN(p.At(1, 0)))
	}
	t.Run("INT96 at midnight", func(t *testing.T) {
		type row struct {
			Date   deprecated.Int96 `parquet:"date"`
			Asset  string           `parquet:"asset"`
			Return *float64         `parquet:"return,optional"`
		}
		// INT96: nanoseconds of the day in the first 8 bytes, Julian day in the
		// last 4 (the Impala/Hive layout); 2440588 is the Julian day of 1970-01-01.
		jd := func(d Date) deprecated.Int96 { return deprecated.Int96{0, 0, uint32(int64(d) + 2440588)} }
		path := filepath.Join(dir, "int96.parquet")
		writeRows(t, path, []row{{jd(d1), "A", f64(0.01)}, {jd(d2), "A", nil}})
		check(t, path)
		noon := jd(d2)
		const ns = int64(12 * 3600 * 1e9)
		noon[0], noon[1] = uint32(ns&0xffffffff), uint32(ns>>32)
		writeRows(t, path, []row{{jd(d1), "A", f64(0.01)}, {noon, "A", nil}})
		_, err := ReadReturns(path, nil)
		requireFileError(t, err, path, ErrBadDate, "row 2", `column "date"`, `value "2024-02-29T12:00:00Z"`, "time of day")
	})
	t.Run("TIMESTAMP at midnight", func(t *testing.T) {
		type row struct {
			Date   int64    `parquet:"date,timestamp(millisecond)"`
			Asset  string   `parquet:"asset"`
			Return *float64 `parquet:"return,optional"`
		}
		ms := func(d Date) int64 { return int64(d) * 86400000 }
		path := filepath.Join(dir, "ts.parquet")
		writeRows(t, path, []row{{ms(d1), "A", f64(0.01)}, {ms(d2), "A", nil}})
		check(t, path)
		writeRows(t, path, []row{{ms(d1) + 1, "A", f64(0.01)}})
		_, err := ReadReturns(path, nil)
		requireFileError(t, err, path, ErrBadDate, "row 1", `column "date"`, "time of day")
	})
	t.Run("string dates", func(t *testing.T) {
		type row struct {
			Date   string   `parquet:"date"`
			Asset  string   `parquet:"asset"`
			Return *float64 `parquet:"return,optional"`
		}
		path := filepath.Join(dir, "str.parquet")
		writeRows(t, path, []row{{d1.String(), "A", f64(0.01)}, {d2.String(), "A", nil}})
		check(t, path)
		writeRows(t, path, []row{{d1.String(), "A", f64(0.01)}, {"29/02/2024", "A", nil}})
		_, err := ReadReturns(path, nil)
		requireFileError(t, err, path, ErrBadDate, "row 2", `value "29/02/2024"`)
	})
	t.Run("plain INT32 is rejected", func(t *testing.T) {
		type row struct {
			Date   int32    `parquet:"date"`
			Asset  string   `parquet:"asset"`
			Return *float64 `parquet:"return,optional"`
		}
		path := filepath.Join(dir, "int32.parquet")
		writeRows(t, path, []row{{int32(d1), "A", f64(0.01)}})
		_, err := ReadReturns(path, nil)
		requireFileError(t, err, path, ErrColumnType, `column "date"`, "INT32 DATE")
	})
}

type goodRow struct {
	Date   int32    `parquet:"date,date"`
	Asset  string   `parquet:"asset"`
	Return *float64 `parquet:"return,optional"`
}

func TestReadReturnsParquetBadInput(t *testing.T) {
	dir := t.TempDir()
	d := int32(DateOf(2024, 1, 2))
	for _, tc := range []struct {
		name string
		rows []goodRow
		want error
		msg  []string
	}{
		{"header only", nil, ErrEmpty, []string{"no rows"}},
		{"return of -1", []goodRow{{d, "A", f64(0.1)}, {d, "B", f64(-1)}}, ErrImpossible, []string{"row 2", `column "return"`, `value "-1"`}},
		{"NaN return", []goodRow{{d, "A", f64(math.NaN())}}, ErrNonFinite, []string{"row 1", `value "NaN"`, "must be null"}},
		{"Inf return", []goodRow{{d, "A", f64(math.Inf(1))}}, ErrNonFinite, []string{"row 1", `value "+Inf"`}},
		{"duplicate", []goodRow{{d, "A", f64(0.1)}, {d + 1, "A", nil}, {d, "A", nil}}, ErrDuplicate, []string{"row 3", `column "asset"`, `value "A"`}},
		{"empty asset", []goodRow{{d, "", f64(0.1)}}, ErrMissingValue, []string{"row 1", `column "asset"`}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, strings.ReplaceAll(tc.name, " ", "_")+".parquet")
			writeRows(t, path, tc.rows)
			_, err := ReadReturns(path, nil)
			requireFileError(t, err, path, tc.want, tc.msg...)
		})
	}
	t.Run("missing column", func(t *testing.T) {
		type row struct {
			Date  int32  `parquet:"date,date"`
			Asset string `parquet:"asset"`
		}
		path := filepath.Join(dir, "nocol.parquet")
		writeRows(t, path, []row{{d, "A"}})
		_, err := ReadReturns(path, nil)
		requireFileError(t, err, path, ErrMissingColumn, `column "return"`)
	})
	t.Run("null date", func(t *testing.T) {
		type row struct {
			Date   *int32   `parquet:"date,date,optional"`
			Asset  string   `parquet:"asset"`
			Return *float64 `parquet:"return,optional"`
		}
		path := filepath.Join(dir, "nulldate.parquet")
		writeRows(t, path, []row{{&d, "A", nil}, {nil, "B", nil}})
		_, err := ReadReturns(path, nil)
		requireFileError(t, err, path, ErrMissingValue, "row 2", `column "date"`)
	})
	t.Run("asset not a string", func(t *testing.T) {
		type row struct {
			Date   int32    `parquet:"date,date"`
			Asset  int64    `parquet:"asset"`
			Return *float64 `parquet:"return,optional"`
		}
		path := filepath.Join(dir, "intasset.parquet")
		writeRows(t, path, []row{{d, 7, nil}})
		_, err := ReadReturns(path, nil)
		requireFileError(t, err, path, ErrColumnType, `column "asset"`)
	})
	t.Run("truncated", func(t *testing.T) {
		path := filepath.Join(dir, "trunc.parquet")
		require.NoError(t, WriteReturnsParquetFile(path, samplePanel(t)))
		b, err := os.ReadFile(path)
		require.NoError(t, err)
		for _, cut := range []int{len(b) - 1, len(b) - 10, len(b) / 2, 10} {
			require.NoError(t, os.WriteFile(path, b[:cut], 0o644))
			_, err = ReadReturns(path, nil)
			requireFileError(t, err, path, ErrTruncated, "file is truncated")
		}
	})
	t.Run("damaged pages", func(t *testing.T) {
		// Bytes inside the data pages are overwritten; the footer is intact.
		// Whatever parquet-go makes of it, the reader must return a file
		// error, not panic and not return a panel silently.
		path := filepath.Join(dir, "damaged.parquet")
		require.NoError(t, WriteReturnsParquetFile(path, samplePanel(t)))
		b, err := os.ReadFile(path)
		require.NoError(t, err)
		for i := 4; i < 60 && i < len(b); i++ {
			b[i] = 0xff
		}
		require.NoError(t, os.WriteFile(path, b, 0o644))
		_, err = ReadReturns(path, nil)
		require.Error(t, err)
		var fe *FileError
		require.True(t, errors.As(err, &fe), "%T: %v", err, err)
		require.True(t, errors.Is(err, ErrNotParquet) || errors.Is(err, ErrTruncated), err.Error())
	})
}
