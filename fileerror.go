package riskmodel

import (
	"fmt"
	"strconv"
	"strings"
)

// FileError is the error for bad input in a file, modelled on encoding/csv's
// ParseError: it names the file, the place, the column and the offending value,
// and wraps the reason (one of the sentinel errors above, a panel error, or an
// error of encoding/csv or the operating system).
type FileError struct {
	File   string // path of the file as given to the reader
	Line   int    // CSV: 1-based line number (the header is line 1); 0 when not applicable
	Row    int    // Parquet: 1-based row number (the first row is 1); 0 when not applicable
	Column string // column name; empty when the error is about the whole file or row
	Value  string // offending value as text; empty when there is none
	Err    error  // the reason
}

// Error formats the error as
//
//	file: line 3, column "return", value "abc": not a number
func (e *FileError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	sep := ": "
	add := func(s string) {
		b.WriteString(sep)
		b.WriteString(s)
		sep = ", "
	}
	if e.Line > 0 {
		add("line " + strconv.Itoa(e.Line))
	}
	if e.Row > 0 {
		add("row " + strconv.Itoa(e.Row))
	}
	if e.Column != "" {
		add("column " + strconv.Quote(e.Column))
	}
	if e.Value != "" {
		add("value " + strconv.Quote(e.Value))
	}
	b.WriteString(": ")
	if e.Err != nil {
		b.WriteString(e.Err.Error())
	} else {
		b.WriteString("bad input")
	}
	return b.String()
}

// Unwrap returns the reason, so that errors.Is and errors.As see it.
func (e *FileError) Unwrap() error { return e.Err }

// detail wraps a sentinel with an explanation while keeping errors.Is working.
func detail(sentinel error, format string, args ...any) error {
	return fmt.Errorf("%w: %s", sentinel, fmt.Sprintf(format, args...))
}
