package riskmodel

import (
	"fmt"
	"os"
	"strings"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/encoding/thrift"
	"github.com/parquet-go/parquet-go/format"
)

// MaxParquetPage is the largest uncompressed page, in bytes, that the
// readers accept. Common writers make pages of about 1 MiB (parquet-go and
// Arrow by default); the limit keeps a footer or page header that claims a
// huge page from making parquet-go allocate its buffer, since it allocates
// a page's claimed size before reading it.
const MaxParquetPage = 32 << 20

// maxPageHeader is the most bytes a page header may take: a header holds a
// few integers and optional statistics, far less in files the library and
// common writers make.
const maxPageHeader = 1 << 16

// checkLayout compares the footer's claims with the file before any page is
// read: every column chunk lies inside the file, and every page header in a
// chunk decodes from at most maxPageHeader bytes, claims no more bytes than
// remain in its chunk and no more than MaxParquetPage uncompressed. A file
// that fails is ErrNotParquet, one whose chunks run past its end ErrTruncated.
// Cost: one small read per page.
func checkLayout(path string, f *os.File, pf *parquet.File, size int64) error {
	md := pf.Metadata()
	bad := func(g, c int, sentinel error, format string, args ...any) error {
		col := ""
		if leaves := pf.Schema().Columns(); c >= 0 && c < len(leaves) {
			col = strings.Join(leaves[c], ".")
		}
		return &FileError{File: path, Column: col, Err: detail(sentinel, "row group %d: %s", g+1, fmt.Sprintf(format, args...))}
	}
	proto := new(thrift.CompactProtocol)
	buf := make([]byte, maxPageHeader)
	for g, rg := range md.RowGroups {
		if rg.NumRows < 0 {
			return bad(g, -1, ErrNotParquet, "the footer claims %d rows", rg.NumRows)
		}
		for c := range rg.Columns {
			cm := &rg.Columns[c].MetaData
			start := cm.DataPageOffset
			if cm.DictionaryPageOffset > 0 && cm.DictionaryPageOffset < start {
				start = cm.DictionaryPageOffset
			}
			end := start + cm.TotalCompressedSize
			if start < 4 || cm.TotalCompressedSize < 0 || end < start {
				return bad(g, c, ErrNotParquet, "a column chunk at byte %d of %d bytes", start, cm.TotalCompressedSize)
			}
			if end > size {
				return bad(g, c, ErrTruncated, "the column chunk claims bytes %d to %d of a %d-byte file", start, end, size)
			}
			for pos := start; pos < end; {
				n := min(int64(len(buf)), end-pos)
				if _, err := f.ReadAt(buf[:n], pos); err != nil {
					return &FileError{File: path, Err: err}
				}
				r := proto.NewReaderFromBytes(buf[:n])
				var h format.PageHeader
				if err := thrift.NewDecoder(r).Decode(&h); err != nil {
					return bad(g, c, ErrNotParquet, "damaged page header at byte %d: %v", pos, err)
				}
				pos += int64(r.BytesRead())
				if h.CompressedPageSize < 0 || int64(h.CompressedPageSize) > end-pos {
					return bad(g, c, ErrTruncated, "a page at byte %d claims %d bytes, its column chunk has %d left", pos, h.CompressedPageSize, end-pos)
				}
				if h.UncompressedPageSize < 0 || h.UncompressedPageSize > MaxParquetPage {
					return bad(g, c, ErrPageTooLarge, "a page at byte %d claims %d bytes uncompressed", pos, h.UncompressedPageSize)
				}
				pos += int64(h.CompressedPageSize)
			}
		}
	}
	return nil
}

// checkRows compares the rows a reader found with the footer's claim, so that
// a file whose footer claims more (or fewer) rows than its pages hold is an
// error rather than a silently shorter table.
func checkRows(pf *parquetFile, rows int) error {
	if claim := pf.pf.NumRows(); claim != int64(rows) {
		return &FileError{File: pf.path, Err: detail(ErrTruncated, "the footer claims %d rows, the pages hold %d", claim, rows)}
	}
	return nil
}
