package riskmodel

import (
	"encoding/csv"
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestFileErrorMessage(t *testing.T) {
	err := error(&FileError{File: "r.csv", Line: 3, Column: "return", Value: "abc", Err: ErrBadNumber})
	require.Equal(t, `r.csv: line 3, column "return", value "abc": not a number`, err.Error())
	require.ErrorIs(t, err, ErrBadNumber)
	err = &FileError{File: "r.parquet", Row: 7, Column: "date", Err: ErrMissingValue}
	require.Equal(t, `r.parquet: row 7, column "date": required value is empty`, err.Error())
	err = &FileError{File: "x", Err: ErrEmpty}
	require.Equal(t, `x: no data`, err.Error())
}

// badCase is a file with one defect and what its error must say.
type badCase struct {
	name string
	file string // file name; the extension picks the format
	body string
	read func(path string) error
	want error    // sentinel, checked with errors.Is
	msg  []string // substrings of the message besides the file name
}

func readReturnsErr(path string) error { _, err := ReadReturns(path, nil); return err }
func readAssetsErr(path string) error  { _, err := ReadAssets(path); return err }
func readHoldingsErr(path string) error {
	_, err := ReadHoldings(path)
	return err
}

func runBadCases(t *testing.T, cases []badCase) {
	t.Helper()
	dir := t.TempDir()
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, tc.file)
			require.NoError(t, os.WriteFile(path, []byte(tc.body), 0o644))
			err := tc.read(path)
			require.ErrorIs(t, err, tc.want)
			var fe *FileError
			require.True(t, errors.As(err, &fe), "want a *FileError, got %T", err)
			require.Equal(t, path, fe.File)
			msg := err.Error()
			require.True(t, strings.HasPrefix(msg, path+": "), msg)
			for _, s := range tc.msg {
				require.Contains(t, msg, s)
			}
		})
	}
}

func TestReadReturnsCSVBadInput(t *testing.T) {
	const h = "date,asset,return\n"
	r := readReturnsErr
	runBadCases(t, []badCase{
		{"empty file", "r.csv", "", r, ErrEmpty, []string{"the file is empty"}},
		{"header only long", "r.csv", h, r, ErrEmpty, []string{"line 1", "header and no rows"}},
		{"header only wide", "r.csv", "date,A,B\n", r, ErrEmpty, []string{"line 1", "header and no rows"}},
		{"missing return column", "r.csv", "date,asset\n2024-01-02,A\n", r, ErrMissingColumn, []string{"line 1", `column "return"`}},
		{"missing date column", "r.csv", "day,A\n2024-01-02,0.1\n", r, ErrMissingColumn, []string{"line 1", `column "date"`}},
		{"no asset columns", "r.csv", "date\n2024-01-02\n", r, ErrMissingColumn, []string{"line 1", `column "asset"`}},
		{"unexpected column", "r.csv", "date,asset,return,note\n2024-01-02,A,0.1,x\n", r, ErrUnexpectedColumn, []string{`column "note"`}},
		{"duplicate header", "r.csv", "date,A,A\n2024-01-02,0.1,0.2\n", r, ErrDuplicate, []string{"line 1", `column "A"`}},
		{"bad date", "r.csv", h + "2024-01-02,A,0.1\n2024-13-01,A,0.2\n", r, ErrBadDate, []string{"line 3", `column "date"`, `value "2024-13-01"`, "YYYY-MM-DD"}},
		{"date with time", "r.csv", h + "2024-01-02T00:00:00Z,A,0.1\n", r, ErrBadDate, []string{"line 2", `value "2024-01-02T00:00:00Z"`}},
		{"bad number", "r.csv", h + "2024-01-02,A,abc\n", r, ErrBadNumber, []string{"line 2", `column "return"`, `value "abc"`, "not a number"}},
		{"percent sign", "r.csv", h + "2024-01-02,A,1.5%\n", r, ErrBadNumber, []string{"line 2", `value "1.5%"`}},
		{"out of range", "r.csv", h + "2024-01-02,A,1e400\n", r, ErrBadNumber, []string{`value "1e400"`, "out of the range"}},
		{"Inf text", "r.csv", h + "2024-01-02,A,Inf\n", r, ErrNonFinite, []string{"line 2", `column "return"`, `value "Inf"`, "not finite"}},
		{"-inf text", "r.csv", h + "2024-01-02,A,-inf\n", r, ErrNonFinite, []string{`value "-inf"`}},
		{"NaN text", "r.csv", h + "2024-01-02,A,0.1\n2024-01-03,A,NaN\n", r, ErrNonFinite, []string{"line 3", `value "NaN"`}},
		{"return of -1", "r.csv", h + "2024-01-02,A,-1\n", r, ErrImpossible, []string{"line 2", `value "-1"`, "at or below -1"}},
		{"return below -1", "r.csv", h + "2024-01-02,A,-1.25\n", r, ErrImpossible, []string{`value "-1.25"`}},
		{"duplicate date asset", "r.csv", h + "2024-01-02,A,0.1\n2024-01-02,B,0.1\n2024-01-02,A,0.2\n", r, ErrDuplicate,
			[]string{"line 4", `column "asset"`, `value "A"`, "2024-01-02"}},
		{"duplicate missing cell", "r.csv", h + "2024-01-02,A,\n2024-01-02,A,NA\n", r, ErrDuplicate, []string{"line 3", `value "A"`}},
		{"empty asset", "r.csv", h + "2024-01-02,,0.1\n", r, ErrMissingValue, []string{"line 2", `column "asset"`}},
		{"field count", "r.csv", h + "2024-01-02,A,0.1\n2024-01-03,A\n", r, csv.ErrFieldCount, []string{"line 3", "wrong number of fields"}},
		{"wide bad number", "r.csv", "date,A,B\n2024-01-02,0.1,x\n", r, ErrBadNumber, []string{"line 2", `column "B"`, `value "x"`}},
		{"wide Inf", "r.csv", "date,A,B\n2024-01-02,0.1,+Inf\n", r, ErrNonFinite, []string{"line 2", `column "B"`, `value "+Inf"`}},
		{"wide impossible", "r.csv", "date,A,B\n2024-01-02,-2,0\n", r, ErrImpossible, []string{"line 2", `column "A"`, `value "-2"`}},
		{"wide duplicate date", "r.csv", "date,A\n2024-01-03,0.1\n2024-01-02,0.1\n2024-01-03,0.2\n", r, ErrDuplicate,
			[]string{"line 4", `column "date"`, `value "2024-01-03"`, "line 2"}},
		{"unknown extension", "r.txt", h, r, ErrFormat, []string{".csv or .parquet"}},
		{"not parquet", "r.parquet", h + "2024-01-02,A,0.1\n", r, ErrNotParquet, []string{"magic"}},
		{"empty parquet", "r.parquet", "", r, ErrEmpty, []string{"empty"}},
		{"sparse hostile", "r.csv", sparseLong(3000), r, ErrTooSparse, []string{"3000 rows span 3000 dates × 3000 assets"}},
	})
}

// sparseLong returns a long CSV file whose every row has a new date and a new
// asset, so that its dates × assets table grows with the square of its size.
func sparseLong(rows int) string {
	var b strings.Builder
	b.WriteString("date,asset,return\n")
	d := DateOf(2000, 1, 1)
	for i := 0; i < rows; i++ {
		b.WriteString(d.AddDays(i).String())
		b.WriteString(",A")
		b.WriteString(strconv.Itoa(i))
		b.WriteString(",0.01\n")
	}
	return b.String()
}

func TestReadMissingCells(t *testing.T) {
	dir := t.TempDir()
	long := filepath.Join(dir, "long.csv")
	require.NoError(t, os.WriteFile(long, []byte("date,asset,return\n2024-01-02,A,\n2024-01-02,B,NA\n2024-01-03, A ,0\n2024-01-03,B, 0.5 \n"), 0o644))
	p, err := ReadReturns(long, nil)
	require.NoError(t, err)
	require.Equal(t, []string{"A", "B"}, p.Assets())
	require.True(t, isNaN(p.At(0, 0)) && isNaN(p.At(0, 1)))
	require.Equal(t, 0.0, p.At(1, 0))
	require.Equal(t, 0.5, p.At(1, 1))

	wide := filepath.Join(dir, "wide.csv")
	require.NoError(t, os.WriteFile(wide, []byte("\ufeffdate,Z,A\n2024-01-03,NA,0.25\n2024-01-02,,-0.5\n"), 0o644))
	p, err = ReadReturns(wide, nil)
	require.NoError(t, err)
	require.Equal(t, []string{"Z", "A"}, p.Assets(), "a wide file keeps the header's order")
	require.Equal(t, []Date{DateOf(2024, 1, 2), DateOf(2024, 1, 3)}, p.Dates(), "rows are sorted by date")
	require.True(t, isNaN(p.At(0, 0)) && isNaN(p.At(1, 0)))
	require.Equal(t, -0.5, p.At(0, 1))
	require.Equal(t, 0.25, p.At(1, 1))
}

func isNaN(v float64) bool { return v != v }
