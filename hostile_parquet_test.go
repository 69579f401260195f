package riskmodel

import (
	"bytes"
	"encoding/binary"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/parquet-go/parquet-go/encoding/thrift"
	"github.com/parquet-go/parquet-go/format"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// hostilePanel is a 40 × 30 panel written as the valid file that the
// hostile cases then edit.
func hostilePanel(t *testing.T) *Panel {
	t.Helper()
	const nt, n = 40, 30
	dates := make([]Date, nt)
	for i := range dates {
		dates[i] = DateOf(2024, 1, 1).AddDays(i)
	}
	assets := make([]string, n)
	r := mat.NewDense(nt, n, nil)
	for j := range assets {
		assets[j] = "QX" + string(rune('A'+j%26)) + string(rune('a'+j/26))
		for i := 0; i < nt; i++ {
			r.Set(i, j, 0.001*math.Sin(float64(7*i+3*j)))
		}
	}
	p, err := NewPanel(dates, assets, r, 252)
	require.NoError(t, err)
	return p
}

// editParquet returns a copy of the Parquet file b whose footer has been
// changed by footer and, if page is not nil, whose first page of the last
// column chunk has had its header changed by page. Offsets behind the edited
// page header are shifted by the change of its length, so the file stays
// well-formed except for what the edits claim.
func editParquet(t *testing.T, b []byte, footer func(*format.FileMetaData), page func(*format.PageHeader)) []byte {
	t.Helper()
	proto := new(thrift.CompactProtocol)
	n := len(b)
	footLen := int(binary.LittleEndian.Uint32(b[n-8:]))
	footStart := n - 8 - footLen
	var md format.FileMetaData
	require.NoError(t, thrift.Unmarshal(proto, b[footStart:n-8], &md))
	body := b[:footStart]
	if page != nil {
		groups := md.RowGroups
		chunks := groups[len(groups)-1].Columns
		cm := &chunks[len(chunks)-1].MetaData
		off := cm.DataPageOffset
		if cm.DictionaryPageOffset > 0 {
			off = cm.DictionaryPageOffset
		}
		var h format.PageHeader
		require.NoError(t, thrift.NewDecoder(proto.NewReader(bytes.NewReader(body[off:]))).Decode(&h))
		old, err := thrift.Marshal(proto, &h)
		require.NoError(t, err)
		require.True(t, bytes.HasPrefix(body[off:], old), "page header does not re-encode to its bytes")
		page(&h)
		enc, err := thrift.Marshal(proto, &h)
		require.NoError(t, err)
		delta := int64(len(enc) - len(old))
		body = append(append(append([]byte(nil), body[:off]...), enc...), body[off+int64(len(old)):]...)
		shift := func(x *int64) {
			if *x > off {
				*x += delta
			}
		}
		for g := range md.RowGroups {
			for c := range md.RowGroups[g].Columns {
				ch := &md.RowGroups[g].Columns[c]
				shift(&ch.FileOffset)
				shift(&ch.MetaData.DataPageOffset)
				shift(&ch.MetaData.DictionaryPageOffset)
				shift(&ch.MetaData.IndexPageOffset)
				shift(&ch.ColumnIndexOffset)
				shift(&ch.OffsetIndexOffset)
			}
		}
		cm.TotalCompressedSize += delta
		cm.TotalUncompressedSize += delta
	}
	footer(&md)
	foot, err := thrift.Marshal(proto, &md)
	require.NoError(t, err)
	out := append(append([]byte(nil), body...), foot...)
	out = binary.LittleEndian.AppendUint32(out, uint32(len(foot)))
	return append(out, parquetMagic...)
}

// A Parquet file whose footer or page headers claim far more than the file
// holds is refused before any claimed buffer is allocated, with an error that
// names the claim; each reader (returns, assets, holdings) checks the same
// layout.
func TestParquetHostileClaims(t *testing.T) {
	var b bytes.Buffer
	require.NoError(t, WriteReturnsParquet(&b, hostilePanel(t)))
	valid := b.Bytes()
	keep := func(*format.FileMetaData) {}
	// The editor alone changes nothing.
	require.Equal(t, valid, editParquet(t, valid, keep, func(*format.PageHeader) {}))
	for _, tc := range []struct {
		name string
		data []byte
		want error
		msg  string
	}{
		{"footer claims 2^40 rows", editParquet(t, valid, func(md *format.FileMetaData) {
			md.NumRows = 1 << 40
			for g := range md.RowGroups {
				md.RowGroups[g].NumRows = 1 << 40
				for c := range md.RowGroups[g].Columns {
					md.RowGroups[g].Columns[c].MetaData.NumValues = 1 << 40
				}
			}
		}, nil), ErrTruncated, "the footer claims 1099511627776 rows, the pages hold 1200"},
		{"footer claims fewer rows", editParquet(t, valid, func(md *format.FileMetaData) { md.NumRows = 7 }, nil),
			ErrTruncated, "the footer claims 7 rows"},
		{"column chunk past the end", editParquet(t, valid, func(md *format.FileMetaData) {
			cols := md.RowGroups[0].Columns
			cols[len(cols)-1].MetaData.TotalCompressedSize = 1 << 40
		}, nil), ErrTruncated, "the column chunk claims bytes"},
		{"page claims 1 GiB", editParquet(t, valid, keep, func(h *format.PageHeader) {
			h.CompressedPageSize, h.UncompressedPageSize = 1<<30, 1<<30
		}), ErrTruncated, "claims 1073741824 bytes, its column chunk has"},
		{"page claims 1 GiB uncompressed", editParquet(t, valid, keep, func(h *format.PageHeader) {
			h.UncompressedPageSize = 1 << 30
		}), ErrPageTooLarge, "claims 1073741824 bytes uncompressed"},
		{"negative page size", editParquet(t, valid, keep, func(h *format.PageHeader) {
			h.CompressedPageSize = -5
		}), ErrTruncated, "claims -5 bytes"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "r.parquet")
			require.NoError(t, os.WriteFile(path, tc.data, 0o644))
			var err error
			bytesAllocated := allocated(func() { _, err = ReadReturns(path, nil) })
			requireFileError(t, err, path, tc.want, tc.msg)
			require.Less(t, bytesAllocated, uint64(16<<20), "allocated %d bytes", bytesAllocated)
		})
	}
	t.Run("holdings", func(t *testing.T) {
		dir := t.TempDir()
		path := filepath.Join(dir, "h.parquet")
		require.NoError(t, WriteHoldingsFile(path, []Holding{{"QX1", 0.5}, {"QX2", 0.5}}))
		good, err := os.ReadFile(path)
		require.NoError(t, err)
		require.NoError(t, os.WriteFile(path, editParquet(t, good, keep, func(h *format.PageHeader) {
			h.UncompressedPageSize = math.MaxInt32
		}), 0o644))
		_, err = ReadHoldings(path)
		requireFileError(t, err, path, ErrPageTooLarge, `column "weight"`)
		require.NoError(t, os.WriteFile(path, editParquet(t, good, func(md *format.FileMetaData) { md.NumRows = 1 << 50 }, nil), 0o644))
		_, err = ReadHoldings(path)
		requireFileError(t, err, path, ErrTruncated, "the pages hold 2")
	})
}
