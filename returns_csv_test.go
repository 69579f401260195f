package riskmodel

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// readReturnsCSVTwoPass is the CSV return reader as it was before the long
// reader read its file once: it opens the file for the header, and a long
// file is then read twice with encoding/csv alone, once for its dates and
// assets and once to fill the panel. It is the reference the one-pass reader
// must match: the same panel, bit for bit, for every file it accepts, and
// the same error for every file it refuses.
func readReturnsCSVTwoPass(path string, periodsPerYear float64) (*Panel, error) {
	c, err := openCSV(path)
	if err != nil {
		return nil, err
	}
	long := c.index("asset") >= 0
	if long {
		c.Close()
		return readLongCSVTwoPass(path, periodsPerYear)
	}
	defer c.Close()
	return readWideCSV(c, periodsPerYear)
}

func readLongCSVTwoPass(path string, periodsPerYear float64) (*Panel, error) {
	x := newLongIndex()
	err := scanLongCSVTwoPass(path, func(line int, d Date, asset string, v float64) error {
		x.addString(d, asset)
		return nil
	})
	if err != nil {
		return nil, err
	}
	b, err := x.builder(path, periodsPerYear)
	if err != nil {
		return nil, err
	}
	err = scanLongCSVTwoPass(path, func(line int, d Date, asset string, v float64) error {
		return b.SetAt(b.row[d], b.p.col[asset], v)
	})
	if err != nil {
		return nil, err
	}
	return b.Panel(), nil
}

func scanLongCSVTwoPass(path string, fn func(line int, d Date, asset string, v float64) error) error {
	c, err := openCSV(path)
	if err != nil {
		return err
	}
	defer c.Close()
	idx, err := c.require(true, "date", "asset", "return")
	if err != nil {
		return err
	}
	id, ia, ir := idx[0], idx[1], idx[2]
	for {
		rec, line, err := c.next()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
		d, err := parseDateCell(rec[id])
		if err != nil {
			return c.at(line, id, rec[id], err)
		}
		asset := strings.TrimSpace(rec[ia])
		if asset == "" {
			return c.at(line, ia, "", ErrMissingValue)
		}
		v, err := parseReturn(rec[ir])
		if err != nil {
			return c.at(line, ir, rec[ir], err)
		}
		if err := fn(line, d, asset, v); err != nil {
			return c.at(line, ia, asset, err)
		}
	}
}

// requireSameAsTwoPass reads path with ReadReturns and with the two-pass
// reference: both accept it with the same panel bit for bit, or both refuse
// it with the same message, the same FileError fields and the same
// sentinels. It reports whether the file was accepted.
func requireSameAsTwoPass(t *testing.T, path string) bool {
	t.Helper()
	want, werr := readReturnsCSVTwoPass(path, 0)
	got, gerr := ReadReturns(path, nil)
	if werr != nil || gerr != nil {
		require.Error(t, werr, "the reference accepts what the reader refuses")
		require.Error(t, gerr, "the reader accepts what the reference refuses: %v", werr)
		require.Equal(t, werr.Error(), gerr.Error())
		var wfe, gfe *FileError
		require.True(t, errors.As(werr, &wfe))
		require.True(t, errors.As(gerr, &gfe))
		require.Equal(t, [4]any{wfe.File, wfe.Line, wfe.Column, wfe.Value}, [4]any{gfe.File, gfe.Line, gfe.Column, gfe.Value})
		for _, s := range fileSentinels {
			require.Equal(t, errors.Is(werr, s), errors.Is(gerr, s), "sentinel %v", s)
		}
		return false
	}
	requireSamePanel(t, want, got)
	require.Equal(t, want.PeriodsPerYear(), got.PeriodsPerYear())
	return true
}

// longCSVCases are long CSV files on the edges of encoding/csv's grammar and
// of the cell checks, each of which the one-pass reader must read as the
// two-pass reference does. What each should give is stated beside it from
// the encoding/csv documentation and the reader's own (ReadReturns).
var longCSVCases = []struct{ name, data string }{
	{"plain", "date,asset,return\n2024-01-02,A,0.1\n2024-01-02,B,\n2024-01-03,A,NA\n"},
	{"no final newline", "date,asset,return\n2024-01-02,A,0.1\n2024-01-03,A,0.2"},
	{"CR at the end", "date,asset,return\n2024-01-02,A,0.1\r"},
	{"CRLF", "date,asset,return\r\n2024-01-02,A,0.1\r\n2024-01-03,B,-0.2\r\n"},
	{"CR CR LF keeps one CR", "date,asset,return\r\n2024-01-02,A,0.1\r\r\n2024-01-03,A,0.2\r\n"},
	{"lone CR line", "date,asset,return\n2024-01-02,A,0.1\n\r\r\n2024-01-03,A,0.2\n"},
	{"CR inside a cell", "date,asset,return\n2024-01-02\r,A\rB,0.1\r\n"},
	{"BOM and spaces in the header", "\ufeff date , asset ,return \n2024-01-02,A,0.1\n"},
	{"blank lines", "date,asset,return\n\n\r\n2024-01-02,A,0.1\n\n\n2024-01-03,A,0.2\n\r\n\n"},
	{"blank lines then a duplicate", "date,asset,return\n\n2024-01-02,A,0.1\n\n\r\n\n2024-01-02,A,0.2\n"},
	{"only blank lines", "date,asset,return\n\n\r\n\n"},
	{"header only", "date,asset,return\n"},
	{"header only without newline", "date,asset,return"},
	{"spaces around cells", "date,asset,return\n 2024-01-02 ,  A ,  0.1  \n\t2024-01-03\t,\tA\t,\t-0.2\t\n"},
	{"unicode spaces", "date,asset,return\n\u00a02024-01-02\u2003,\u0085A\u00a0,\u20280.1\u3000\n"},
	{"a line of spaces", "date,asset,return\n2024-01-02,A,0.1\n   \n"},
	{"permuted columns", "asset,return,date\nA,0.1,2024-01-02\nB,0.2,2024-01-02\nA,0.3,2024-01-03\n"},
	{"permuted columns, bad date", "return,date,asset\n0.1,2024-01-02,A\n0.2,2024-02-30,A\n"},
	{"quoted cells", "date,asset,return\n\"2024-01-02\",\"A\",\"0.1\"\n2024-01-03,\"A\",0.2\n"},
	{"quoted comma and quote", "date,asset,return\n2024-01-02,\"A,B\",0.1\n2024-01-02,\"C\"\"D\",0.2\n2024-01-02,A,0.3\n"},
	{"quoted line break, then a duplicate", "date,asset,return\n2024-01-02,\"A\nB\",0.1\n2024-01-02,\"X\r\nY\",0.2\n2024-01-02,\"A\nB\",0.3\n"},
	{"quoted line break, then a bad number", "date,asset,return\n2024-01-02,\"A\n\n\nB\",0.1\n2024-01-03,A,abc\n"},
	{"quoted line break in the last field", "date,return,asset\n2024-01-02,0.1,\"A\n\"\n2024-01-03,0.2,\" A\n\n\"\n2024-01-03,x,A\n"},
	{"quoted line break in the header", "\"date\n\",asset,\"\nreturn\"\n2024-01-02,A,0.1\n2024-01-02,A,0.1\n"},
	{"quoted line break in the last header field", "asset,date,\"return\n\n\"\n2024-01-02,A,0.1\n2024-01-02,A,0.1\n"},
	{"bare quote", "date,asset,return\n2024-01-02,A,0.1\n2024-01-02,A\"B,0.1\n"},
	{"bare quote in the last field", "date,asset,return\n2024-01-02,A,0.1\"\n"},
	{"quote then text", "date,asset,return\n2024-01-02,\"A\"B,0.1\n"},
	{"unterminated quote", "date,asset,return\n2024-01-02,A,0.1\n2024-01-03,\"A,0.1\n2024-01-04,A,0.1\n"},
	{"unterminated quote at the end", "date,asset,return\n2024-01-02,A,\"0.1"},
	{"quoted line break across a blank line", "date,asset,return\n2024-01-02,\"A\n\nB\",0.1\n\n2024-01-02,\"A\n\nB\",0.2\n"},
	{"two fields", "date,asset,return\n2024-01-02,A,0.1\n2024-01-03,A\n"},
	{"four fields", "date,asset,return\n2024-01-02,A,0.1,\n"},
	{"one field", "date,asset,return\n2024-01-02\n"},
	{"field count after quotes", "date,asset,return\n2024-01-02,\"A\nB\",0.1\n2024-01-03,A\n"},
	{"empty asset", "date,asset,return\n2024-01-02, ,0.1\n"},
	{"quoted empty asset", "date,asset,return\n2024-01-02,\"\",0.1\n"},
	{"bad dates", "date,asset,return\n2024-01-02,A,0.1\n2024-1-2,A,0.1\n"},
	{"February 29", "date,asset,return\n2024-02-29,A,0.1\n2000-02-29,A,0.1\n1900-02-28,A,0.1\n"},
	{"February 29 of a common year", "date,asset,return\n2024-02-29,A,0.1\n1900-02-29,A,0.1\n"},
	{"day 31 of April", "date,asset,return\n2024-04-31,A,0.1\n"},
	{"month 00", "date,asset,return\n2024-00-10,A,0.1\n"},
	{"day 00", "date,asset,return\n2024-01-00,A,0.1\n"},
	{"year 0000 and 9999", "date,asset,return\n0000-01-01,A,0.1\n9999-12-31,A,0.1\n0000-03-01,B,0.1\n"},
	{"signed years", "date,asset,return\n+999-01-01,A,0.1\n-999-06-30,A,0.2\n2024-01-02,A,0.3\n"},
	{"signed year equal to a plain one", "date,asset,return\n+024-01-02,A,0.1\n0024-01-02,A,0.2\n"},
	{"date with time", "date,asset,return\n2024-01-02T00:00:00Z,A,0.1\n"},
	{"date with a letter", "date,asset,return\n2024-01-0x,A,0.1\n"},
	{"before 1970", "date,asset,return\n1969-12-31,A,0.1\n1600-03-01,A,0.1\n1583-01-01,B,0\n"},
	{"numbers", "date,asset,return\n2024-01-02,A,+0.5\n2024-01-02,B,.5\n2024-01-02,C,5.\n2024-01-02,D,0x1p-2\n" +
		"2024-01-02,E,1e-400\n2024-01-02,F,-0.999999999999999999\n2024-01-02,G,4.9e-324\n2024-01-02,H,1_0\n"},
	{"number out of range", "date,asset,return\n2024-01-02,A,0.1\n2024-01-02,B,1e400\n"},
	{"infinity", "date,asset,return\n2024-01-02,A,infinity\n"},
	{"nan", "date,asset,return\n2024-01-02,A,nan\n"},
	{"na lower case", "date,asset,return\n2024-01-02,A,na\n"},
	{"minus one", "date,asset,return\n2024-01-02,A,-1.0\n"},
	{"just above minus one", "date,asset,return\n2024-01-02,A,-0.99999999999999999\n"},
	{"long number", "date,asset,return\n2024-01-02,A,0.012345678901234567890123456789012345678901234567890\n"},
	{"duplicate", "date,asset,return\n2024-01-02,A,0.1\n2024-01-02,B,0.1\n2024-01-02,A,0.2\n"},
	{"duplicate missing", "date,asset,return\n2024-01-02,A,\n2024-01-02,A,NA\n"},
	{"duplicate after a bad row", "date,asset,return\n2024-01-02,A,0.1\n2024-01-02,A,0.1\n2024-01-03,A,x\n"},
	{"duplicate with spaces", "date,asset,return\n2024-01-02,A,0.1\n 2024-01-02 , A ,0.1\n"},
	{"invalid UTF-8", "date,asset,return\n2024-01-02,\xff\xfe,0.1\n2024-01-02,\xff,\xff\n"},
	{"NUL bytes", "date,asset,return\n2024-01-02,A\x00,0.1\n2024-01-02\x00,A,0.1\n"},
	{"sparse", sparseLong(3000)},
	{"unsorted", "date,asset,return\n2024-01-05,Z,0.1\n2024-01-02,A,0.2\n2024-01-03,M,0.3\n2024-01-02,Z,0.4\n"},
}

func TestLongCSVMatchesTwoPass(t *testing.T) {
	dir := t.TempDir()
	for k, tc := range longCSVCases {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, fmt.Sprintf("case%d.csv", k))
			require.NoError(t, os.WriteFile(path, []byte(tc.data), 0o644))
			requireSameAsTwoPass(t, path)
		})
	}
	requireSameAsTwoPass(t, "testdata/demo/returns_small.csv")
}

// randomLongCSV writes a seeded random long file: a few dates (some before
// 1970) and assets (some needing quotes), rows in a random order, missing
// cells written empty or NA, and random formatting that the reader must
// accept: CRLF, blank lines, spaces around cells, quoted cells, a permuted
// header, sometimes a repeated row.
func randomLongCSV(rng *rand.Rand) []byte {
	nd, na := 1+rng.IntN(6), 1+rng.IntN(6)
	names := []string{"A", "QB00001", "AB,C", `Q"X`, "Z\nW", " K ", "é", "B"}
	rng.Shuffle(len(names), func(i, j int) { names[i], names[j] = names[j], names[i] })
	cols := []string{"date", "asset", "return"}
	rng.Shuffle(3, func(i, j int) { cols[i], cols[j] = cols[j], cols[i] })
	eol := "\n"
	if rng.IntN(3) == 0 {
		eol = "\r\n"
	}
	quote := func(s string, force bool) string {
		if force || strings.ContainsAny(s, ",\"\r\n") {
			return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
		}
		return s
	}
	space := func() string { return []string{"", "", "", " ", "\t"}[rng.IntN(5)] }
	var b strings.Builder
	b.WriteString(strings.Join(cols, ",") + eol)
	type row struct {
		d    Date
		a, v string
	}
	var rows []row
	for i := 0; i < nd; i++ {
		d := DateOf(1960+rng.IntN(80), time.Month(1+rng.IntN(12)), 1+rng.IntN(28))
		for j := 0; j < na; j++ {
			if rng.IntN(4) == 0 {
				continue
			}
			v := []string{"", "NA", "0", "-0.5", "0.1", "1e-3"}[rng.IntN(6)]
			if rng.IntN(2) == 0 {
				v = fmt.Sprint(0.02 * rng.NormFloat64())
			}
			rows = append(rows, row{d, names[j], v})
		}
	}
	rng.Shuffle(len(rows), func(i, j int) { rows[i], rows[j] = rows[j], rows[i] })
	if len(rows) > 0 && rng.IntN(5) == 0 {
		rows = append(rows, rows[rng.IntN(len(rows))])
	}
	for _, r := range rows {
		cell := map[string]string{"date": r.d.String(), "asset": r.a, "return": r.v}
		for k, c := range cols {
			if k > 0 {
				b.WriteByte(',')
			}
			b.WriteString(quote(space()+cell[c]+space(), rng.IntN(8) == 0))
		}
		b.WriteString(eol)
		if rng.IntN(6) == 0 {
			b.WriteString(eol)
		}
	}
	return []byte(b.String())
}

// mutate applies a few random byte edits that touch the grammar: quotes,
// commas, line ends, spaces, letters, deletions and repeated lines.
func mutate(rng *rand.Rand, data []byte) []byte {
	out := bytes.Clone(data)
	for range 1 + rng.IntN(3) {
		if len(out) == 0 {
			break
		}
		p := rng.IntN(len(out))
		switch rng.IntN(8) {
		case 0:
			out = out[:p+copy(out[p:], out[p+1:])]
		case 1:
			lines := bytes.SplitAfter(out, []byte("\n"))
			l := lines[rng.IntN(len(lines))]
			out = append(out[:p:p], append(bytes.Clone(l), out[p:]...)...)
		default:
			c := []byte("\",\n\r x-.9")[rng.IntN(9)]
			out = append(out[:p:p], append([]byte{c}, out[p:]...)...)
		}
	}
	return out
}

// Random files and random edits of them read the same as with the two-pass
// reference: the same panels and the same errors.
func TestLongCSVRandomMatchesTwoPass(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 3))
	dir := t.TempDir()
	n := 3000
	if testing.Short() {
		n = 500
	}
	accepted := 0
	for k := 0; k < n; k++ {
		data := randomLongCSV(rng)
		if k%2 == 1 {
			data = mutate(rng, data)
		}
		path := filepath.Join(dir, "r.csv")
		require.NoError(t, os.WriteFile(path, data, 0o644))
		ok := false
		t.Run(fmt.Sprint(k), func(t *testing.T) {
			defer func() {
				if t.Failed() {
					t.Logf("file: %q", data)
				}
			}()
			ok = requireSameAsTwoPass(t, path)
		})
		if ok {
			accepted++
		}
	}
	// Both sides of the comparison are exercised.
	require.Greater(t, accepted, n/4)
	require.Less(t, accepted, n*3/4)
}

// Near MaxCSVRecord the one-pass reader refuses exactly the records the
// two-pass reference refuses, at the same line: a long valid cell, a long
// bad one, a long run of blank lines and a long line with a quote, each at
// sizes around the limit less the 64 KiB the buffered reader reads ahead.
func TestLongCSVRecordLimitMatchesTwoPass(t *testing.T) {
	dir := t.TempDir()
	sizes := []int{1 << 16, MaxCSVRecord - 2<<16, MaxCSVRecord - 1<<16 - 100, MaxCSVRecord - 1<<16 + 100,
		MaxCSVRecord - 3000, MaxCSVRecord + 100, MaxCSVRecord + 1<<16 + 100}
	if testing.Short() {
		sizes = []int{1 << 16, MaxCSVRecord - 1<<16 + 100, MaxCSVRecord + 100}
	}
	const h = "date,asset,return\n2024-01-02,QX1,0.01\n\n"
	for _, n := range sizes {
		for _, tc := range []struct{ name, data string }{
			{"long asset", h + "2024-01-03," + strings.Repeat("Q", n) + ",0.02\n2024-01-04,QX1,0.03\n"},
			{"long bad asset", h + "2024-01-03,\"" + strings.Repeat("Q", n) + "\"x,0.02\n"},
			{"blank lines", h + strings.Repeat("\n", n/2) + strings.Repeat("\r\n", n/4) + "2024-01-03,QX1,0.02\n"},
			{"long quoted cell", h + "2024-01-03,\"" + strings.Repeat("Q\n", n/2) + "\",0.02\n2024-01-03,QX1,0.02\n"},
			{"long line after short ones", h + strings.Repeat("2024-01-05,QX1,0.1\n", 1000) + "2024-01-03," + strings.Repeat("Q", n) + ",x\n"},
		} {
			t.Run(fmt.Sprintf("%s/%d", tc.name, n), func(t *testing.T) {
				path := filepath.Join(dir, "r.csv")
				require.NoError(t, os.WriteFile(path, []byte(tc.data), 0o644))
				requireSameAsTwoPass(t, path)
			})
		}
	}
}

// parseDateBytes agrees with ParseDate (time.Parse with time.DateOnly) on
// every text of the form "YYYY-MM-DD" with months 00–13 and days 00–32, and
// refuses the others that it leaves to ParseDate.
func TestParseDateBytes(t *testing.T) {
	step := 1
	if testing.Short() {
		step = 37
	}
	var b [10]byte
	for y := 0; y <= 9999; y += step {
		for m := 0; m <= 13; m++ {
			for d := 0; d <= 32; d++ {
				copy(b[:], fmt.Sprintf("%04d-%02d-%02d", y, m, d))
				got, ok := parseDateBytes(b[:])
				want, err := ParseDate(string(b[:]))
				if ok != (err == nil) || got != want {
					t.Fatalf("%s: parseDateBytes gives %v, %v; ParseDate %v, %v", b, got, ok, want, err)
				}
			}
		}
	}
	for _, s := range []string{"+999-01-01", "-999-01-01", "2024-1-02", "2024-01-2", " 2024-01-02", "2024/01/02",
		"2024-01-02x", "２０２４-01-02", "2024-0a-02", ""} {
		_, ok := parseDateBytes([]byte(s))
		require.False(t, ok, s)
	}
}

// A long file without quotes is read on the fast path: a few allocations for
// the whole file, not one a row as encoding/csv makes.
func TestLongCSVFastPathAllocations(t *testing.T) {
	nan := math.NaN()
	const nt, n = 200, 50
	dates := make([]Date, nt)
	for i := range dates {
		dates[i] = DateOf(2020, 1, 1).AddDays(i)
	}
	assets := make([]string, n)
	for j := range assets {
		assets[j] = fmt.Sprintf("QB%05d", j)
	}
	rng := rand.New(rand.NewPCG(5, 7))
	r := mat.NewDense(nt, n, nil)
	for i := 0; i < nt; i++ {
		for j := 0; j < n; j++ {
			v := 0.02 * rng.NormFloat64()
			if rng.IntN(20) == 0 {
				v = nan
			}
			r.Set(i, j, v)
		}
	}
	p, err := NewPanel(dates, assets, r, 0)
	require.NoError(t, err)
	path := filepath.Join(t.TempDir(), "r.csv")
	require.NoError(t, WriteReturnsCSVFile(path, p, false))
	var got *Panel
	allocs := testing.AllocsPerRun(3, func() {
		got, err = ReadReturns(path, nil)
	})
	require.NoError(t, err)
	requireSamePanel(t, p, got)
	require.Less(t, allocs, float64(nt*n)/20, "%v allocations for %d rows", allocs, nt*n)
}

func (x *longIndex) addString(d Date, asset string) {
	x.rows++
	x.dates[d] = struct{}{}
	x.assets[asset] = struct{}{}
}
