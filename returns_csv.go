package riskmodel

import (
	"bytes"
	"encoding/csv"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// readReturnsCSV reads a long or a wide CSV return file, chosen by whether the
// header has an "asset" column.
func readReturnsCSV(path string, periodsPerYear float64) (*Panel, error) {
	c, err := openCSV(path)
	if err != nil {
		return nil, err
	}
	defer c.Close()
	if c.index("asset") >= 0 {
		return readLongCSV(c, periodsPerYear)
	}
	return readWideCSV(c, periodsPerYear)
}

// readLongCSV reads "date,asset,return" in one pass: every row is checked
// and kept as (date index, asset index, return), 16 bytes a row; then the
// panel is made over the sorted distinct dates and assets and filled from
// the rows in file order, so the first repeated (date, asset) in the file is
// the one reported, on its line (found by reading the file once more).
// Memory is the T×N panel (with its byte a cell of PanelBuilder) plus 16
// bytes a row; a row takes at least 14 bytes of the file.
func readLongCSV(c *csvFile, periodsPerYear float64) (*Panel, error) {
	s, err := newLongScan(c, -1)
	if err != nil {
		return nil, err
	}
	if err := s.scan(); err != nil {
		return nil, err
	}
	path := c.path
	t, n := len(s.dates), len(s.assets)
	if err := checkSpan(path, c.rows, t, n); err != nil {
		return nil, err
	}
	dates := slices.Clone(s.dates)
	slices.Sort(dates)
	row := make([]int, t) // the panel row of date index k
	for k, d := range s.dates {
		row[k], _ = slices.BinarySearch(dates, d)
	}
	order := make([]int, n)
	for k := range order {
		order[k] = k
	}
	slices.SortFunc(order, func(a, b int) int { return strings.Compare(s.assets[a], s.assets[b]) })
	assets := make([]string, n)
	col := make([]int, n) // the panel column of asset index k
	for j, k := range order {
		assets[j] = s.assets[k]
		col[k] = j
	}
	b, err := NewPanelBuilder(dates, assets, periodsPerYear)
	if err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	data, seen := b.p.r.RawMatrix().Data, b.seen
	k := 0
	for _, block := range s.blocks {
		for _, r := range block {
			i, j := row[r.date], col[r.asset]
			if seen[i*n+j] {
				return nil, duplicateRow(c, k, b.SetAt(i, j, r.v), assets[j])
			}
			seen[i*n+j] = true
			data[i*n+j] = r.v
			k++
		}
	}
	return b.Panel(), nil
}

// duplicateRow returns err, about the cell of asset in row k (counted from
// 0) of a long file, at the row's line, which it reads the file again to
// find (no line if the file has changed meanwhile).
func duplicateRow(c *csvFile, k int, err error, asset string) error {
	line := 0
	if again, oerr := openCSV(c.path); oerr == nil {
		defer again.Close()
		if s, serr := newLongScan(again, k); serr == nil && s.scan() == nil {
			line = max(s.stopLine, 0)
		}
	}
	return c.at(line, c.index("asset"), asset, err)
}

// csvRow is one row of a long file: indexes into longScan.dates and
// longScan.assets, and the return (NaN if missing).
type csvRow struct {
	date, asset uint32
	v           float64
}

// longBlock is the largest number of rows in a block of longScan.blocks:
// 1 MiB. Blocks are never copied to grow.
const longBlock = 1 << 16

// longScan reads the rows of a long CSV file after its header. Lines without
// a quote take a fast path over the bytes of the csvFile's buffered reader;
// every other line, and any line the fast path finds wrong, is read by
// encoding/csv and checked by the same functions, so the two paths accept
// the same rows and report the same errors. Lines are taken from the
// buffered reader just as encoding/csv takes them (up to "\n", refilling when
// a line is incomplete), and the record limit is reset after each record, so
// ErrRecordTooLarge comes at the same byte as with encoding/csv alone.
type longScan struct {
	c          *csvFile
	id, ia, ir int // the columns of date, asset and return

	blocks  [][]csvRow
	dates   []Date
	assets  []string
	dateOf  map[Date]uint32
	assetOf map[string]uint32

	// The last row's date text and index, and its asset index: long files
	// mostly repeat the date and cycle through the assets in one order.
	dateText  []byte
	dateLast  uint32
	haveDate  bool
	assetLast uint32

	// stop ≥ 0 asks scan to return once it has read row stop (counted from
	// 0), with its line in stopLine; the rows are then not kept.
	stop, stopLine int
}

func newLongScan(c *csvFile, stop int) (*longScan, error) {
	idx, err := c.require(true, "date", "asset", "return")
	if err != nil {
		return nil, err
	}
	return &longScan{
		c: c, id: idx[0], ia: idx[1], ir: idx[2],
		dateOf: make(map[Date]uint32), assetOf: make(map[string]uint32),
		stop: stop, stopLine: -1,
	}, nil
}

// scan reads every row, or up to row s.stop.
func (s *longScan) scan() error {
	c, br := s.c, s.c.br
	for {
		// The whole lines in the buffer, each taken on the fast path until
		// one needs encoding/csv.
		win, _ := br.Peek(br.Buffered())
		off, records, slow := 0, false, false
		for {
			i := bytes.IndexByte(win[off:], '\n')
			if i < 0 {
				break
			}
			line := win[off : off+i]
			if k := len(line); k > 0 && line[k-1] == '\r' {
				line = line[:k-1]
			}
			if len(line) > 0 && (bytes.IndexByte(line, '"') >= 0 || !s.fast(line)) {
				slow = true
				break
			}
			off += i + 1
			c.end++
			c.skipped++
			if len(line) > 0 { // a record; encoding/csv skips an empty line
				records = true
				c.rows++
				c.line = c.end
				if s.stop >= 0 && s.reached(c.line) {
					return nil
				}
			}
		}
		br.Discard(off)
		if records {
			c.lim.n = MaxCSVRecord
		}
		if !slow && br.Buffered() < br.Size() {
			// No whole line left: read more, as bufio.Reader.ReadSlice
			// does, one Read into the free space.
			if _, err := br.Peek(br.Buffered() + 1); err == nil {
				continue
			}
		}
		// A line with a quote, a wrong line, a line longer than the buffer,
		// the last line without "\n", the end of the file or a read error:
		// encoding/csv reads the next record.
		rec, line, err := c.next()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
		if err := s.record(rec, line); err != nil {
			return err
		}
		if s.stop >= 0 && s.reached(line) {
			return nil
		}
	}
}

// fast takes a line (without its line end) holding no quote: it reports
// false, keeping nothing, unless the line has three fields and a valid date,
// asset and return, with the same checks as record.
func (s *longScan) fast(line []byte) bool {
	var f [3][]byte
	for k := 0; k < 2; k++ {
		i := bytes.IndexByte(line, ',')
		if i < 0 {
			return false
		}
		f[k], line = line[:i], line[i+1:]
	}
	if bytes.IndexByte(line, ',') >= 0 {
		return false
	}
	f[2] = line
	dt := bytes.TrimSpace(f[s.id])
	newDate := !s.haveDate || !bytes.Equal(dt, s.dateText)
	var d Date
	if newDate {
		var ok bool
		if d, ok = parseDateBytes(dt); !ok {
			var err error
			if d, err = parseDateCell(string(dt)); err != nil {
				return false
			}
		}
	}
	asset := bytes.TrimSpace(f[s.ia])
	if len(asset) == 0 {
		return false
	}
	v, ok := parseReturnBytes(f[s.ir])
	if !ok {
		return false
	}
	if newDate {
		s.dateLast = s.date(d)
		s.dateText = append(s.dateText[:0], dt...)
		s.haveDate = true
	}
	s.add(s.dateLast, s.asset(asset), v)
	return true
}

// record checks a record read by encoding/csv, as the fast path does, and
// keeps it; errors name the record's line and the cell.
func (s *longScan) record(rec []string, line int) error {
	c := s.c
	d, err := parseDateCell(rec[s.id])
	if err != nil {
		return c.at(line, s.id, rec[s.id], err)
	}
	asset := strings.TrimSpace(rec[s.ia])
	if asset == "" {
		return c.at(line, s.ia, "", ErrMissingValue)
	}
	v, err := parseReturn(rec[s.ir])
	if err != nil {
		return c.at(line, s.ir, rec[s.ir], err)
	}
	s.add(s.date(d), s.asset([]byte(asset)), v)
	return nil
}

// date returns the index of d, adding it if new.
func (s *longScan) date(d Date) uint32 {
	k, ok := s.dateOf[d]
	if !ok {
		k = uint32(len(s.dates))
		s.dates = append(s.dates, d)
		s.dateOf[d] = k
	}
	return k
}

// asset returns the index of the asset a, adding a copy if new. The asset
// after the last one's and the last one itself are tried before the map.
func (s *longScan) asset(a []byte) uint32 {
	if k := s.assetLast + 1; int(k) < len(s.assets) && s.assets[k] == string(a) {
		s.assetLast = k
		return k
	}
	if k := s.assetLast; int(k) < len(s.assets) && s.assets[k] == string(a) {
		return k
	}
	k, ok := s.assetOf[string(a)]
	if !ok {
		k = uint32(len(s.assets))
		id := string(a)
		s.assets = append(s.assets, id)
		s.assetOf[id] = k
	}
	s.assetLast = k
	return k
}

// add keeps a row, unless scan only looks for row s.stop.
func (s *longScan) add(date, asset uint32, v float64) {
	if s.stop >= 0 {
		return
	}
	n := len(s.blocks)
	if n == 0 || len(s.blocks[n-1]) == cap(s.blocks[n-1]) {
		size := 256 // then doubling up to longBlock, so that a small file takes little
		if n > 0 {
			size = min(2*cap(s.blocks[n-1]), longBlock)
		}
		s.blocks = append(s.blocks, make([]csvRow, 0, size))
		n++
	}
	s.blocks[n-1] = append(s.blocks[n-1], csvRow{date, asset, v})
}

// reached reports, when scan looks for row s.stop, whether the row just read
// on line was that row.
func (s *longScan) reached(line int) bool {
	if s.c.rows-1 == s.stop {
		s.stopLine = line
		return true
	}
	return false
}

// parseReturnBytes parses a return cell as parseReturn does, reporting false
// for any cell parseReturn refuses. strconv.ParseFloat copies its argument
// only into an error, so string(b) does not allocate for a cell of up to 32
// bytes.
func parseReturnBytes(b []byte) (float64, bool) {
	b = bytes.TrimSpace(b)
	if len(b) == 0 || string(b) == "NA" {
		return math.NaN(), true
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) || v <= -1 {
		return 0, false
	}
	return v, true
}

// parseDateBytes parses a date of exactly the form "YYYY-MM-DD", all digits,
// as ParseDate does; it reports false for anything else (including the few
// other texts ParseDate takes, such as a signed year, which parseDateCell
// then reads). The day number is Hinnant's days_from_civil.
//
// References: H. Hinnant (2013), "chrono-Compatible Low-Level Date
// Algorithms", section days_from_civil, https://howardhinnant.github.io/date_algorithms.html.
func parseDateBytes(b []byte) (Date, bool) {
	if len(b) != 10 || b[4] != '-' || b[7] != '-' {
		return 0, false
	}
	var x [8]int
	for k, p := range [8]int{0, 1, 2, 3, 5, 6, 8, 9} {
		c := b[p]
		if c < '0' || c > '9' {
			return 0, false
		}
		x[k] = int(c - '0')
	}
	y := x[0]*1000 + x[1]*100 + x[2]*10 + x[3]
	m := x[4]*10 + x[5]
	d := x[6]*10 + x[7]
	if m < 1 || m > 12 || d < 1 || d > daysInMonth(y, m) {
		return 0, false
	}
	if m <= 2 {
		y--
	}
	era := y / 400
	if y < 0 {
		era = (y - 399) / 400
	}
	yoe := y - era*400
	mp := (m + 9) % 12
	doy := (153*mp+2)/5 + d - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	return Date(era*146097 + doe - 719468), true
}

// daysInMonth returns the number of days of month m of the proleptic
// Gregorian year y.
func daysInMonth(y, m int) int {
	switch m {
	case 2:
		if y%4 == 0 && (y%100 != 0 || y%400 == 0) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}

// readWideCSV reads "date" and one column per asset; rows may come in any
// date order but a date may appear only once.
func readWideCSV(c *csvFile, periodsPerYear float64) (*Panel, error) {
	idx, err := c.require(false, "date")
	if err != nil {
		return nil, err
	}
	id := idx[0]
	if len(c.header) < 2 {
		return nil, &FileError{File: c.path, Line: 1, Column: "asset",
			Err: detail(ErrMissingColumn, "a long file needs date,asset,return and a wide file date and one column per asset")}
	}
	var assets []string
	for k, h := range c.header {
		if k != id {
			assets = append(assets, h)
		}
	}
	n := len(assets)
	var (
		dates []Date
		lines []int
		data  []float64
	)
	for {
		rec, line, err := c.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		d, err := parseDateCell(rec[id])
		if err != nil {
			return nil, c.at(line, id, rec[id], err)
		}
		dates = append(dates, d)
		lines = append(lines, line)
		for k, s := range rec {
			if k == id {
				continue
			}
			v, err := parseReturn(s)
			if err != nil {
				return nil, c.at(line, k, s, err)
			}
			data = append(data, v)
		}
	}
	t := len(dates)
	order := make([]int, t)
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return int(dates[a]) - int(dates[b]) })
	sorted := make([]Date, t)
	r := mat.NewDense(t, n, nil)
	for i, k := range order {
		sorted[i] = dates[k]
		if i > 0 && sorted[i] == sorted[i-1] {
			return nil, c.at(lines[k], id, dates[k].String(), detail(ErrDuplicate, "the date has another row on line %d", lines[order[i-1]]))
		}
		r.SetRow(i, data[k*n:(k+1)*n])
	}
	p, err := newPanelShell(sorted, assets, periodsPerYear)
	if err != nil {
		return nil, &FileError{File: c.path, Err: err}
	}
	p.r = r
	return p, nil
}

// WriteReturnsCSVFile writes p to a CSV file; see WriteReturnsCSV.
func WriteReturnsCSVFile(path string, p *Panel, wide bool) error {
	return createCSV(path, func(w io.Writer) error { return WriteReturnsCSV(w, p, wide) })
}

// WriteReturnsCSV writes p as CSV. The long form is "date,asset,return"
// with one line per observed return in date order and assets in column order;
// missing cells are omitted except one empty line per date or asset with no
// observation at all, so that ReadReturns gives back the same panel (with the
// assets sorted, as long files are read). The wide form is "date" and one
// column per asset, a missing cell is empty. Returns are formatted with
// strconv.FormatFloat(v, 'g', -1, 64), which round-trips exactly.
func WriteReturnsCSV(w io.Writer, p *Panel, wide bool) error {
	cw := csv.NewWriter(w)
	t, _ := p.Dims()
	if wide {
		rec := append([]string{"date"}, p.assets...)
		if err := cw.Write(rec); err != nil {
			return err
		}
		for i := 0; i < t; i++ {
			rec[0] = p.dates[i].String()
			for j, v := range p.r.RawRowView(i) {
				rec[j+1] = ""
				if !math.IsNaN(v) {
					rec[j+1] = formatFloat(v)
				}
			}
			if err := cw.Write(rec); err != nil {
				return err
			}
		}
	} else {
		rec := []string{"date", "asset", "return"}
		if err := cw.Write(rec); err != nil {
			return err
		}
		err := longCells(p, func(i, j int, v float64) error {
			rec[0], rec[1], rec[2] = p.dates[i].String(), p.assets[j], ""
			if !math.IsNaN(v) {
				rec[2] = formatFloat(v)
			}
			return cw.Write(rec)
		})
		if err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
