package riskmodel

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"strconv"
	"sync"

	"gonum.org/v1/gonum/mat"
)

// denseCSVBlockBytes bounds the formatted text of one block of rows (up to
// 24 bytes a value), and denseCSVMaxRows the rows of a block: large enough to
// amortise the hand-off, small enough that the blocks in flight (at most
// 5 per core) stay a few tens of megabytes at any N.
const (
	denseCSVBlockBytes = 4 << 20
	denseCSVMaxRows    = 64
)

// WriteDenseCSV writes the N×N covariance cov with asset labels as CSV:
//
//	asset,<id 1>,<id 2>,…,<id N>
//	<id 1>,Σ_11,Σ_12,…,Σ_1N
//	…
//
// one row per asset in the order of assets, every value in per-period units
// with strconv's 'g' format and precision −1, the shortest text that parses
// back to the same float64 (full precision). Identifiers that need CSV quoting
// are quoted. Rows are formatted in parallel blocks and written in order, so
// the output does not depend on GOMAXPROCS.
//
// WriteDenseCSV panics with mat.ErrShape if cov is not len(assets)×len(assets).
// It returns the writer's error. Cost O(N²) time; memory O(N) per row beyond
// a few blocks of formatted text.
func WriteDenseCSV(w io.Writer, assets []string, cov mat.Symmetric) error {
	n := len(assets)
	if cov.SymmetricDim() != n {
		panic(mat.ErrShape)
	}
	bw := bufio.NewWriterSize(w, 1<<20)
	var head []byte
	head = append(head, "asset"...)
	for _, a := range assets {
		head = append(head, ',')
		head = appendCSVField(head, a)
	}
	head = append(head, '\n')
	if _, err := bw.Write(head); err != nil {
		return err
	}
	raw, dense := cov.(mat.RawSymmetricer)
	rows := min(denseCSVMaxRows, max(1, denseCSVBlockBytes/(24*n)))
	blocks := (n + rows - 1) / rows
	workers := min(runtime.GOMAXPROCS(0), blocks)
	// Each block gets its own result channel so the writer takes blocks in
	// order; the semaphore keeps the workers at most 2·workers blocks ahead
	// of the writer, which bounds the memory held in formatted text.
	results := make([]chan []byte, blocks)
	for i := range results {
		results[i] = make(chan []byte, 1)
	}
	ahead := make(chan struct{}, 2*workers)
	free := make(chan []byte, 3*workers) // written buffers, for reuse
	next := make(chan int)
	stop := make(chan struct{})
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for b := range next {
				var buf []byte
				select {
				case buf = <-free:
				default:
				}
				results[b] <- formatDenseRows(buf[:0], assets, cov, raw, dense, b*rows, min(n, (b+1)*rows))
			}
		}()
	}
	go func() {
		defer close(next)
		for b := 0; b < blocks; b++ {
			select {
			case ahead <- struct{}{}:
			case <-stop:
				return
			}
			select {
			case next <- b:
			case <-stop:
				return
			}
		}
	}()
	var err error
	for b := 0; b < blocks; b++ {
		buf := <-results[b]
		_, err = bw.Write(buf)
		select {
		case free <- buf:
		default:
		}
		<-ahead
		if err != nil {
			close(stop)
			break
		}
	}
	wg.Wait()
	if err != nil {
		return err
	}
	return bw.Flush()
}

// formatDenseRows appends rows [lo, hi) of the CSV to buf.
func formatDenseRows(buf []byte, assets []string, cov mat.Symmetric, raw mat.RawSymmetricer, dense bool, lo, hi int) []byte {
	n := len(assets)
	for i := lo; i < hi; i++ {
		buf = appendCSVField(buf, assets[i])
		if dense {
			// The column above the diagonal read by symmetry, then the
			// stored upper triangle of row i.
			r := raw.RawSymmetric()
			for j := 0; j < i; j++ {
				buf = append(buf, ',')
				buf = strconv.AppendFloat(buf, r.Data[j*r.Stride+i], 'g', -1, 64)
			}
			for _, v := range r.Data[i*r.Stride+i : i*r.Stride+n] {
				buf = append(buf, ',')
				buf = strconv.AppendFloat(buf, v, 'g', -1, 64)
			}
		} else {
			for j := 0; j < n; j++ {
				buf = append(buf, ',')
				buf = strconv.AppendFloat(buf, cov.At(i, j), 'g', -1, 64)
			}
		}
		buf = append(buf, '\n')
	}
	return buf
}

// WriteDenseCSVFile writes the model's dense N×N covariance to the file path with
// WriteDenseCSV; a factor model is expanded to B·F·Bᵀ + D first (O(N²·K)
// time, O(N²) memory). The file is synced before WriteDenseCSVFile returns.
func WriteDenseCSVFile(path string, m *Model) (err error) {
	if err := m.check(); err != nil {
		return err
	}
	var cov *mat.SymDense
	if m.Factor != nil {
		cov = m.Factor.CovarianceTo(nil)
	} else {
		cov = m.Dense
	}
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("riskmodel: dense csv: %w", err)
	}
	defer func() {
		if cerr := f.Close(); err == nil && cerr != nil {
			err = fmt.Errorf("riskmodel: dense csv: %w", cerr)
		}
	}()
	if err := WriteDenseCSV(f, m.Assets, cov); err != nil {
		return fmt.Errorf("riskmodel: dense csv %s: %w", path, err)
	}
	if err := f.Sync(); err != nil {
		return fmt.Errorf("riskmodel: dense csv %s: %w", path, err)
	}
	return nil
}

// ReadDenseCSV reads a file written by WriteDenseCSV (or any CSV of the same
// layout) and returns the asset labels and the covariance. The matrix must be
// exactly symmetric and the row labels must repeat the header's.
//
// Errors are *FileError values wrapping ErrEmpty, ErrMissingColumn (a first
// header cell other than "asset"), ErrBadNumber, ErrNonFinite, ErrDenseLayout (a
// row of the wrong length or label, too few or too many rows, a CSV syntax
// error) or ErrNotSymmetric.
func ReadDenseCSV(path string) ([]string, *mat.SymDense, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	r := csv.NewReader(bufio.NewReaderSize(f, 1<<20))
	r.ReuseRecord = true
	fail := func(line int, column, value string, e error) error {
		return &FileError{File: path, Line: line, Column: column, Value: value, Err: e}
	}
	head, err := r.Read()
	if err == io.EOF {
		return nil, nil, fail(1, "", "", ErrEmpty)
	}
	if err != nil {
		return nil, nil, fail(1, "", "", fmt.Errorf("%w: %v", ErrDenseLayout, err))
	}
	if head[0] != "asset" {
		return nil, nil, fail(1, "asset", head[0], ErrMissingColumn)
	}
	assets := append([]string(nil), head[1:]...)
	n := len(assets)
	if n == 0 {
		return nil, nil, fail(1, "", "", ErrEmpty)
	}
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		line := i + 2
		rec, err := r.Read()
		if err == io.EOF {
			return nil, nil, fail(line, "", "", fmt.Errorf("%w: %d rows for %d assets", ErrDenseLayout, i, n))
		}
		if err != nil {
			return nil, nil, fail(line, "", "", fmt.Errorf("%w: %v", ErrDenseLayout, err))
		}
		if len(rec) != n+1 || rec[0] != assets[i] {
			return nil, nil, fail(line, "asset", rec[0], fmt.Errorf("%w: want the row of %s with %d values", ErrDenseLayout, assets[i], n))
		}
		for j := 0; j < n; j++ {
			v, err := strconv.ParseFloat(rec[j+1], 64)
			if err != nil {
				return nil, nil, fail(line, assets[j], rec[j+1], ErrBadNumber)
			}
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, nil, fail(line, assets[j], rec[j+1], ErrNonFinite)
			}
			if j >= i {
				s.SetSym(i, j, v)
			} else if s.At(j, i) != v {
				return nil, nil, fail(line, assets[j], rec[j+1], ErrNotSymmetric)
			}
		}
	}
	if rec, err := r.Read(); err != io.EOF {
		return nil, nil, fail(n+2, "", fmt.Sprint(rec), fmt.Errorf("%w: more rows than assets", ErrDenseLayout))
	}
	return assets, s, nil
}

// appendCSVField appends s, quoted as encoding/csv would when it must be.
func appendCSVField(dst []byte, s string) []byte {
	if s == "" || !bytes.ContainsAny([]byte(s), ",\"\r\n") && s[0] != ' ' && s[0] != '\t' {
		return append(dst, s...)
	}
	dst = append(dst, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			dst = append(dst, '"')
		}
		dst = append(dst, s[i])
	}
	return append(dst, '"')
}
