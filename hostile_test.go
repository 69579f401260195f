package riskmodel

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"syscall"
	"testing"

	"github.com/stretchr/testify/require"
)

// hostileBudget is the most a reader may allocate, in total, on a hostile
// file: far below what the file claims or streams.
const hostileBudget = 256 << 20

// allocated returns the bytes fn allocated in total (TotalAlloc grows with
// every allocation and never shrinks, so it bounds the peak from above).
func allocated(fn func()) uint64 {
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	fn()
	runtime.ReadMemStats(&after)
	return after.TotalAlloc - before.TotalAlloc
}

// endlessHeader makes a named pipe called name that yields "a,a,a,…" with no
// end of line until the reader closes it: a CSV header of unlimited columns
// that nobody ever holds in memory. It returns the path and a function that
// waits for the writer to stop.
func endlessHeader(t *testing.T, name string) (string, func() int64) {
	t.Helper()
	path := filepath.Join(t.TempDir(), name)
	if err := syscall.Mkfifo(path, 0o600); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	done := make(chan int64, 1)
	go func() {
		// Opening a pipe for writing blocks until the reader opens it.
		f, err := os.OpenFile(path, os.O_WRONLY, 0)
		if err != nil {
			done <- -1
			return
		}
		defer f.Close()
		chunk := bytes.Repeat([]byte("a,"), 1<<15)
		var n int64
		for {
			k, err := f.Write(chunk)
			n += int64(k)
			if err != nil { // EPIPE once the reader has closed the file
				done <- n
				return
			}
		}
	}()
	return path, func() int64 { return <-done }
}

// A header line of endless columns is refused after MaxCSVRecord bytes, by
// every CSV reader, with bounded memory and an error that says why.
func TestCSVEndlessHeader(t *testing.T) {
	for _, tc := range []struct {
		name string
		read func(path string) error
	}{
		{"returns", func(p string) error { _, err := ReadReturns(p, nil); return err }},
		{"assets", func(p string) error { _, err := ReadAssets(p); return err }},
		{"holdings", func(p string) error { _, err := ReadHoldings(p); return err }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path, wait := endlessHeader(t, tc.name+".csv")
			var err error
			bytesAllocated := allocated(func() { err = tc.read(path) })
			streamed := wait()
			requireFileError(t, err, path, ErrRecordTooLarge, "line 1", fmt.Sprintf("exceeds %d bytes", MaxCSVRecord))
			require.Less(t, bytesAllocated, uint64(hostileBudget), "allocated %d bytes", bytesAllocated)
			require.GreaterOrEqual(t, streamed, int64(MaxCSVRecord), "the reader gave up before the limit")
			t.Logf("streamed %d bytes, allocated %d", streamed, bytesAllocated)
		})
	}
}

// A data line just below the limit is read; one above it is refused with
// its line number.
func TestCSVRecordLimit(t *testing.T) {
	dir := t.TempDir()
	var b bytes.Buffer
	b.WriteString("date,asset,return\n2024-01-02,QX1,0.01\n2024-01-03,")
	pad := MaxCSVRecord - len("2024-01-03,,0.02\n") - 1<<16 // the reader may look 64 KiB ahead
	b.Write(bytes.Repeat([]byte("Q"), pad))
	b.WriteString(",0.02\n")
	ok := filepath.Join(dir, "ok.csv")
	require.NoError(t, os.WriteFile(ok, b.Bytes(), 0o644))
	p, err := ReadReturns(ok, nil)
	require.NoError(t, err)
	_, n := p.Dims()
	require.Equal(t, 2, n)

	b.Truncate(b.Len() - len(",0.02\n"))
	b.Write(bytes.Repeat([]byte("Q"), 2<<16))
	b.WriteString(",0.02\n")
	bad := filepath.Join(dir, "bad.csv")
	require.NoError(t, os.WriteFile(bad, b.Bytes(), 0o644))
	_, err = ReadReturns(bad, nil)
	requireFileError(t, err, bad, ErrRecordTooLarge, "line 3")
	require.False(t, errors.Is(err, ErrDuplicate))
}
