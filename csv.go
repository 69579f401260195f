package riskmodel

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"
	"strings"
)

// MaxCSVRecord is the largest CSV record, in bytes, that the readers accept: a
// header or a data line (or several lines when a quoted field spans them).
// Two MiB is room for a wide return file of about 90,000 assets (full
// precision takes up to 24 bytes a cell); the limit bounds the memory a
// hostile file, such as a header of endless columns, can claim: encoding/csv
// holds a whole record and 40 bytes of offsets per field at once, so a
// record of MaxCSVRecord bytes costs the reader up to about 170 MB.
const MaxCSVRecord = 2 << 20

// recordLimit hands out at most n more bytes of r; the reader resets n after
// each record, so it bounds a record's length (plus the 64 KiB that the
// buffered reader may read ahead).
type recordLimit struct {
	r io.Reader
	n int
}

func (l *recordLimit) Read(p []byte) (int, error) {
	if l.n <= 0 {
		return 0, ErrRecordTooLarge
	}
	if len(p) > l.n {
		p = p[:l.n]
	}
	k, err := l.r.Read(p)
	l.n -= k
	return k, err
}

// csvFile is a CSV file opened for reading and positioned after its header.
//
// r reads from br itself (csv.NewReader keeps a *bufio.Reader of at least
// 4 KiB as it is), so a reader may take whole lines from br between records
// of r, as the long return reader does: it then counts them in skipped and
// keeps end, line and rows up to date, and lim is reset after each record as
// next does.
type csvFile struct {
	path    string
	f       *os.File
	lim     *recordLimit
	br      *bufio.Reader
	r       *csv.Reader
	header  []string
	rows    int
	line    int // last line of the record read last; 1 after the header
	end     int // last line consumed, by r or from br
	skipped int // lines taken from br past r, which r's line numbers omit
}

// openCSV opens path and reads its header. Header names are trimmed of
// spaces (and of a UTF-8 byte-order mark); an empty or repeated name is an
// error, and so is an empty file or one with a header and no rows.
func openCSV(path string) (*csvFile, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	c := &csvFile{path: path, f: f, lim: &recordLimit{r: f, n: MaxCSVRecord}}
	c.br = bufio.NewReaderSize(c.lim, 1<<16)
	c.r = csv.NewReader(c.br)
	c.r.ReuseRecord = true
	rec, err := c.r.Read()
	if err == io.EOF {
		f.Close()
		return nil, &FileError{File: path, Err: detail(ErrEmpty, "the file is empty")}
	}
	if err != nil {
		f.Close()
		return nil, c.wrap(err)
	}
	c.lim.n = MaxCSVRecord
	c.line, _ = c.r.FieldPos(len(rec) - 1)
	c.end = recordEnd(c.line, rec)
	c.header = slices.Clone(rec)
	seen := make(map[string]bool, len(rec))
	for k, h := range c.header {
		h = strings.TrimSpace(strings.TrimPrefix(h, "\ufeff"))
		c.header[k] = h
		if h == "" {
			f.Close()
			return nil, &FileError{File: path, Line: 1, Err: detail(ErrMissingValue, "column %d of the header has no name", k+1)}
		}
		if seen[h] {
			f.Close()
			return nil, &FileError{File: path, Line: 1, Column: h, Err: detail(ErrDuplicate, "the header names the column twice")}
		}
		seen[h] = true
	}
	return c, nil
}

func (c *csvFile) Close() error { return c.f.Close() }

// index returns the position of the named column, or -1.
func (c *csvFile) index(name string) int { return slices.Index(c.header, name) }

// require returns the positions of the named columns, or ErrMissingColumn.
// If only is true, any other column is ErrUnexpectedColumn.
func (c *csvFile) require(only bool, names ...string) ([]int, error) {
	idx := make([]int, len(names))
	for k, name := range names {
		idx[k] = c.index(name)
		if idx[k] < 0 {
			return nil, &FileError{File: c.path, Line: 1, Column: name,
				Err: detail(ErrMissingColumn, "the header is %q", strings.Join(c.header, ","))}
		}
	}
	if only {
		for _, h := range c.header {
			if !slices.Contains(names, h) {
				return nil, &FileError{File: c.path, Line: 1, Column: h,
					Err: detail(ErrUnexpectedColumn, "the file may have only the columns %s", strings.Join(names, ", "))}
			}
		}
	}
	return idx, nil
}

// next returns the next record and its line number; io.EOF after the last
// record. A file with a header and no record is ErrEmpty. The record is
// reused by the next call.
func (c *csvFile) next() ([]string, int, error) {
	rec, err := c.r.Read()
	if err == io.EOF {
		if c.rows == 0 {
			return nil, 0, &FileError{File: c.path, Line: 1, Err: detail(ErrEmpty, "the file has a header and no rows")}
		}
		return nil, 0, io.EOF
	}
	if err != nil {
		return nil, 0, c.wrap(err)
	}
	c.rows++
	c.lim.n = MaxCSVRecord
	line, _ := c.r.FieldPos(0)
	last, _ := c.r.FieldPos(len(rec) - 1)
	c.line = last + c.skipped
	c.end = recordEnd(c.line, rec)
	return rec, line + c.skipped, nil
}

// recordEnd returns the last line of a record whose last field starts on
// line: a record ends with its last field, and a quoted field holds one "\n"
// for every line break it spans (encoding/csv turns "\r\n" into "\n").
func recordEnd(line int, rec []string) int {
	return line + strings.Count(rec[len(rec)-1], "\n")
}

// wrap turns an error of encoding/csv into a *FileError.
func (c *csvFile) wrap(err error) error {
	if errors.Is(err, ErrRecordTooLarge) {
		return &FileError{File: c.path, Line: c.line + 1,
			Err: detail(ErrRecordTooLarge, "the record starting on this line exceeds %d bytes", MaxCSVRecord)}
	}
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &FileError{File: c.path, Line: pe.Line + c.skipped, Err: fmt.Errorf("%w (at character %d of the line)", pe.Err, pe.Column)}
	}
	return &FileError{File: c.path, Err: err}
}

// at returns a *FileError for the cell of column k on line.
func (c *csvFile) at(line, k int, value string, err error) error {
	return &FileError{File: c.path, Line: line, Column: c.header[k], Value: value, Err: err}
}

// createCSV writes a file through fill, reporting the first error of fill,
// the buffer or the file.
func createCSV(path string, fill func(w io.Writer) error) (err error) {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	bw := bufio.NewWriterSize(f, 1<<16)
	if err := fill(bw); err != nil {
		return err
	}
	return bw.Flush()
}
