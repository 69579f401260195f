package riskmodel

import (
	"bytes"
	"errors"
	"io"
	"os"

	"github.com/parquet-go/parquet-go"
)

// parquetFile is an open Parquet file.
type parquetFile struct {
	path string
	f    *os.File
	pf   *parquet.File
}

var parquetMagic = []byte("PAR1")

// openParquet opens path as Parquet. A file that does not start with the
// Parquet magic is ErrNotParquet; one that starts with it but does not end
// with it is ErrTruncated; a damaged footer is ErrNotParquet, and so is a
// footer or page header whose claims do not fit the file (see checkLayout).
// Page indexes and
// bloom filters are not read: the readers here scan every page anyway.
func openParquet(path string) (pf *parquetFile, err error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	defer func() {
		if err != nil {
			f.Close()
		}
	}()
	st, err := f.Stat()
	if err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	size := st.Size()
	if size == 0 {
		return nil, &FileError{File: path, Err: detail(ErrEmpty, "the file is empty")}
	}
	head := make([]byte, 4)
	if size < 4 {
		return nil, &FileError{File: path, Err: detail(ErrNotParquet, "%d bytes is too short", size)}
	}
	if _, err := f.ReadAt(head, 0); err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	if !bytes.Equal(head, parquetMagic) {
		return nil, &FileError{File: path, Err: detail(ErrNotParquet, "it does not start with the Parquet magic bytes")}
	}
	tail := make([]byte, 4)
	if size < 12 {
		return nil, &FileError{File: path, Err: detail(ErrTruncated, "%d bytes cannot hold a Parquet footer", size)}
	}
	if _, err := f.ReadAt(tail, size-4); err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	if !bytes.Equal(tail, parquetMagic) {
		return nil, &FileError{File: path, Err: detail(ErrTruncated, "it does not end with the Parquet magic bytes")}
	}
	defer func() {
		// parquet-go may panic on a damaged footer; a bad file is bad input.
		if r := recover(); r != nil {
			err = &FileError{File: path, Err: detail(ErrNotParquet, "damaged footer: %v", r)}
		}
	}()
	p, err := parquet.OpenFile(f, size, parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true))
	if err != nil {
		return nil, &FileError{File: path, Err: detail(ErrNotParquet, "%v", err)}
	}
	if err := checkLayout(path, f, p, size); err != nil {
		return nil, err
	}
	return &parquetFile{path: path, f: f, pf: p}, nil
}

func (p *parquetFile) Close() error { return p.f.Close() }

// column returns the leaf column called name, which must be a top-level,
// non-repeated column.
func (p *parquetFile) column(name string) (parquet.LeafColumn, error) {
	lc, ok := p.pf.Schema().Lookup(name)
	if !ok {
		var names []string
		for _, f := range p.pf.Schema().Fields() {
			names = append(names, f.Name())
		}
		return lc, &FileError{File: p.path, Column: name, Err: detail(ErrMissingColumn, "the file's columns are %q", names)}
	}
	if len(lc.Path) != 1 || lc.MaxRepetitionLevel > 0 {
		return lc, &FileError{File: p.path, Column: name, Err: detail(ErrColumnType, "a nested or repeated column")}
	}
	return lc, nil
}

// columnStream reads the values of one column across all pages and row
// groups, in batches.
type columnStream struct {
	file   *parquet.File
	col    int
	group  int
	pages  parquet.Pages
	values parquet.ValueReader
	open   []parquet.Page // pages whose values the last batch may still use
}

func newColumnStream(f *parquet.File, col int) *columnStream {
	return &columnStream{file: f, col: col}
}

// fill reads up to len(buf) values, crossing page and row-group boundaries.
// It returns io.EOF, with n == 0, only at the end of the column. The values
// of a batch stay valid until the next call: the pages they came from are
// handed back to parquet-go's buffer pool only then.
func (s *columnStream) fill(buf []parquet.Value) (n int, err error) {
	keep := s.open[:0]
	for _, p := range s.open {
		if s.values != nil && p == s.open[len(s.open)-1] {
			keep = append(keep, p) // the current page is still being read
			continue
		}
		parquet.Release(p)
	}
	s.open = keep
	for n < len(buf) {
		if s.values == nil {
			if s.pages == nil {
				groups := s.file.RowGroups()
				if s.group >= len(groups) {
					break
				}
				s.pages = groups[s.group].ColumnChunks()[s.col].Pages()
				s.group++
			}
			page, err := s.pages.ReadPage()
			if err == io.EOF {
				s.pages.Close()
				s.pages = nil
				continue
			}
			if err != nil {
				return n, err
			}
			s.open = append(s.open, page)
			s.values = page.Values()
		}
		k, err := s.values.ReadValues(buf[n:])
		n += k
		if err == io.EOF {
			s.values = nil
			continue
		}
		if err != nil {
			return n, err
		}
	}
	if n == 0 {
		return 0, io.EOF
	}
	return n, nil
}

func (s *columnStream) Close() {
	for _, p := range s.open {
		parquet.Release(p)
	}
	s.open = nil
	if s.pages != nil {
		s.pages.Close()
	}
}

// readErr turns an error met while reading pages into a *FileError: data that
// ends early is ErrTruncated, other damage ErrNotParquet.
func readErr(path string, row int, column string, err error) error {
	if errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, io.EOF) {
		return &FileError{File: path, Row: row, Column: column, Err: detail(ErrTruncated, "reading pages: %v", err)}
	}
	return &FileError{File: path, Row: row, Column: column, Err: detail(ErrNotParquet, "damaged pages: %v", err)}
}

// safeRead runs fn and turns a panic inside parquet-go, which damaged pages can
// cause, into an error.
func safeRead(path string, fn func() error) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = &FileError{File: path, Err: detail(ErrNotParquet, "damaged data: %v", r)}
		}
	}()
	return fn()
}
