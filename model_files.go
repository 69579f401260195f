package riskmodel

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/gob"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"

	"github.com/parquet-go/parquet-go"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
)

// A saved model is a folder of these files. The Parquet files hold the numbers
// (exact float64); model.json is the record a person or another program reads;
// factor_info.gob keeps the factor model's full diagnostics, which may hold
// values JSON cannot (an infinite eigenvalue ratio, say).
const (
	manifestFile   = "model.json"
	assetsFile     = "assets.parquet"
	loadingsFile   = "loadings.parquet"
	factorCovFile  = "factor_covariance.parquet"
	denseCovFile   = "covariance.parquet"
	factorInfoFile = "factor_info.gob"
	digestFile     = "model.sha256" // the SHA-256 of model.json, in sha256sum's format

	// storeFormat 2 added model.sha256, the units and the validation record.
	storeFormat = "riskmodel-folder/2"
)

// The units every saved model is in, recorded in model.json so that a reader
// need not know the library's conventions.
const (
	unitsReturns    = "simple decimal returns per period (0.01 = 1 %)"
	unitsCovariance = "per period; multiply by periods_per_year to annualise"
)

// manifest is the content of model.json.
type manifest struct {
	Format         string            `json:"format"`
	LibraryVersion string            `json:"library_version"`
	AsOf           string            `json:"as_of"`
	Method         string            `json:"method"`
	Kind           string            `json:"kind"` // "factor" or "dense"
	PeriodsPerYear float64           `json:"periods_per_year"`
	Returns        string            `json:"returns"`
	CovUnits       string            `json:"covariance_units"`
	Assets         int               `json:"assets"`
	Factors        int               `json:"factors"`
	FactorReason   string            `json:"factor_reason,omitempty"`
	FactorNames    []string          `json:"factor_names,omitempty"`
	Settings       map[string]string `json:"settings,omitempty"`
	Notes          []string          `json:"notes,omitempty"`
	// Validation records the checks the model passed before it was
	// published (Model.Validation).
	Validation map[string]string `json:"validation,omitempty"`
	// Files maps each data file to the SHA-256 of its bytes, so a reader
	// detects a truncated or altered folder.
	Files map[string]string `json:"files"`
}

type assetRow struct {
	Asset            string  `parquet:"asset,dict"`
	SpecificVariance float64 `parquet:"specific_variance"` // the total variance for a dense model
}

type loadingRow struct {
	Asset   string  `parquet:"asset,dict"`
	Factor  string  `parquet:"factor,dict"`
	Loading float64 `parquet:"loading"`
}

type factorCovRow struct {
	FactorI    string  `parquet:"factor_i,dict"`
	FactorJ    string  `parquet:"factor_j,dict"`
	Covariance float64 `parquet:"covariance"`
}

// denseCovRow holds one element of the upper triangle; Row and Col index the
// rows of assets.parquet.
type denseCovRow struct {
	Row        int32   `parquet:"row"`
	Col        int32   `parquet:"col"`
	Covariance float64 `parquet:"covariance"`
}

// SaveModel writes m into the folder dir, which must not exist yet or be
// empty. Every file is synced to disk before SaveModel returns. Use
// Store.Publish for an atomic switch of the current model; SaveModel alone
// gives no atomicity.
func SaveModel(dir string, m *Model) error {
	if err := m.check(); err != nil {
		return err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	if entries, err := os.ReadDir(dir); err != nil {
		return err
	} else if len(entries) > 0 {
		return fmt.Errorf("riskmodel: save model: folder %s is not empty", dir)
	}
	man := manifest{
		Format:         storeFormat,
		LibraryVersion: Version,
		AsOf:           m.AsOf.String(),
		Method:         m.Method,
		PeriodsPerYear: m.PeriodsPerYear,
		Returns:        unitsReturns,
		CovUnits:       unitsCovariance,
		Assets:         len(m.Assets),
		Settings:       m.Settings,
		Notes:          m.Notes,
		Validation:     m.Validation,
		Files:          map[string]string{},
	}
	put := func(name string, write func(io.Writer) error) error {
		sum, err := writeFileSynced(filepath.Join(dir, name), write)
		if err != nil {
			return err
		}
		man.Files[name] = sum
		return nil
	}
	if f := m.Factor; f != nil {
		man.Kind = "factor"
		info := f.Info()
		man.Factors = f.NumFactors()
		man.FactorReason = info.Reason
		man.FactorNames = f.FactorNames()
		if err := saveFactorFiles(f, m.Assets, put); err != nil {
			return err
		}
		var buf bytes.Buffer
		if err := gob.NewEncoder(&buf).Encode(info); err != nil {
			return fmt.Errorf("riskmodel: save model: encode factor record: %w", err)
		}
		if err := put(factorInfoFile, writeBytes(buf.Bytes())); err != nil {
			return err
		}
	} else {
		man.Kind = "dense"
		if err := saveDenseFiles(m.Dense, m.Assets, put); err != nil {
			return err
		}
	}
	js, err := json.MarshalIndent(man, "", "  ")
	if err != nil {
		return fmt.Errorf("riskmodel: save model: %w", err)
	}
	js = append(js, '\n')
	if err := writeSynced(filepath.Join(dir, manifestFile), js); err != nil {
		return err
	}
	if err := writeSynced(filepath.Join(dir, digestFile), []byte(digestLine(js))); err != nil {
		return err
	}
	return syncDir(dir)
}

func saveFactorFiles(f *factor.Model, assets []string, put putFunc) error {
	d := f.SpecificVariancesTo(nil)
	rows := make([]assetRow, len(assets))
	for i, a := range assets {
		rows[i] = assetRow{Asset: a, SpecificVariance: d[i]}
	}
	if err := putParquet(assetsFile, rows, put); err != nil {
		return err
	}
	k := f.NumFactors()
	names := f.FactorNames()
	var lrows []loadingRow
	var frows []factorCovRow
	if k > 0 {
		b := f.LoadingsTo(nil)
		lrows = make([]loadingRow, 0, len(assets)*k)
		for i, a := range assets {
			for j := 0; j < k; j++ {
				lrows = append(lrows, loadingRow{Asset: a, Factor: names[j], Loading: b.At(i, j)})
			}
		}
		fc := f.FactorCovarianceTo(nil)
		for i := 0; i < k; i++ {
			for j := 0; j < k; j++ {
				frows = append(frows, factorCovRow{FactorI: names[i], FactorJ: names[j], Covariance: fc.At(i, j)})
			}
		}
	}
	if err := putParquet(loadingsFile, lrows, put); err != nil {
		return err
	}
	return putParquet(factorCovFile, frows, put)
}

// putFunc writes one file of a model folder through write and records its
// checksum.
type putFunc func(name string, write func(io.Writer) error) error

func writeBytes(data []byte) func(io.Writer) error {
	return func(w io.Writer) error { _, err := w.Write(data); return err }
}

// denseChunk is the number of covariance elements saveDenseFiles converts to
// rows at a time: the rows of a 6000-asset model would take 290 MB at once.
const denseChunk = 1 << 16

// saveDenseFiles writes the assets with their variances and the upper
// triangle of s, row by row, as (row, col, covariance) with 0-based indices
// into the asset file's order. The rows are made and written a chunk at a
// time, so the memory beyond s is O(denseChunk) plus the Parquet writer's
// buffers of one row group.
func saveDenseFiles(s *mat.SymDense, assets []string, put putFunc) error {
	n := len(assets)
	rows := make([]assetRow, n)
	for i, a := range assets {
		rows[i] = assetRow{Asset: a, SpecificVariance: s.At(i, i)}
	}
	if err := putParquet(assetsFile, rows, put); err != nil {
		return err
	}
	raw := s.RawSymmetric()
	return put(denseCovFile, func(w io.Writer) error {
		pw := parquet.NewGenericWriter[denseCovRow](w, parquet.Compression(&parquet.Zstd), parquet.MaxRowsPerRowGroup(1<<20))
		chunk := make([]denseCovRow, 0, denseChunk)
		for i := 0; i < n; i++ {
			for j, v := range raw.Data[i*raw.Stride+i : i*raw.Stride+n] {
				chunk = append(chunk, denseCovRow{Row: int32(i), Col: int32(i + j), Covariance: v})
				if len(chunk) == cap(chunk) {
					if _, err := pw.Write(chunk); err != nil {
						return fmt.Errorf("riskmodel: save model: %s: %w", denseCovFile, err)
					}
					chunk = chunk[:0]
				}
			}
		}
		if _, err := pw.Write(chunk); err != nil {
			return fmt.Errorf("riskmodel: save model: %s: %w", denseCovFile, err)
		}
		if err := pw.Close(); err != nil {
			return fmt.Errorf("riskmodel: save model: %s: %w", denseCovFile, err)
		}
		return nil
	})
}

func putParquet[T any](name string, rows []T, put putFunc) error {
	return put(name, func(out io.Writer) error {
		w := parquet.NewGenericWriter[T](out, parquet.Compression(&parquet.Zstd), parquet.MaxRowsPerRowGroup(1<<20))
		if _, err := w.Write(rows); err != nil {
			return fmt.Errorf("riskmodel: save model: %s: %w", name, err)
		}
		if err := w.Close(); err != nil {
			return fmt.Errorf("riskmodel: save model: %s: %w", name, err)
		}
		return nil
	})
}

// LoadModel reads a model folder written by SaveModel, or the current model of
// a store root (a folder with a "current" link). It verifies every file's
// checksum and the consistency of the files, and returns an error wrapping
// ErrInvalidModel for a folder that fails those checks.
func LoadModel(dir string) (m *Model, err error) {
	defer func() {
		if r := recover(); r != nil {
			m, err = nil, panicError(dir, r)
		}
	}()
	if _, err := os.Stat(filepath.Join(dir, manifestFile)); errors.Is(err, os.ErrNotExist) {
		if cur, cerr := (Store{Dir: dir}).Current(); cerr == nil {
			dir = cur
		}
	}
	js, err := os.ReadFile(filepath.Join(dir, manifestFile))
	if err != nil {
		return nil, fmt.Errorf("riskmodel: load model: %w", err)
	}
	if err := checkDigest(dir, js); err != nil {
		return nil, err
	}
	var man manifest
	if err := json.Unmarshal(js, &man); err != nil {
		return nil, fmt.Errorf("riskmodel: load model %s: %w: %s: %v", dir, ErrInvalidModel, manifestFile, err)
	}
	if man.Format != storeFormat {
		return nil, fmt.Errorf("riskmodel: load model %s: %w: format %q, want %q", dir, ErrInvalidModel, man.Format, storeFormat)
	}
	bad := func(format string, args ...any) error {
		return fmt.Errorf("riskmodel: load model %s: %w: %s", dir, ErrInvalidModel, fmt.Sprintf(format, args...))
	}
	get := func(name string) ([]byte, error) {
		want, ok := man.Files[name]
		if !ok {
			return nil, bad("%s is not listed in %s", name, manifestFile)
		}
		data, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			return nil, fmt.Errorf("riskmodel: load model: %w", err)
		}
		sum := sha256.Sum256(data)
		if hex.EncodeToString(sum[:]) != want {
			return nil, bad("%s does not match its checksum (truncated or altered)", name)
		}
		return data, nil
	}
	// open is get for the large dense covariance: it checks the file's
	// checksum by reading it through once and hands back the open file, so
	// that the Parquet reader reads it in place instead of from a copy in
	// memory. The caller closes the file.
	open := func(name string) (*os.File, int64, error) {
		want, ok := man.Files[name]
		if !ok {
			return nil, 0, bad("%s is not listed in %s", name, manifestFile)
		}
		f, err := os.Open(filepath.Join(dir, name))
		if err != nil {
			return nil, 0, fmt.Errorf("riskmodel: load model: %w", err)
		}
		h := sha256.New()
		size, err := io.Copy(h, f)
		if err == nil {
			_, err = f.Seek(0, io.SeekStart)
		}
		if err != nil {
			f.Close()
			return nil, 0, fmt.Errorf("riskmodel: load model: %w", err)
		}
		if hex.EncodeToString(h.Sum(nil)) != want {
			f.Close()
			return nil, 0, bad("%s does not match its checksum (truncated or altered)", name)
		}
		return f, size, nil
	}
	asof, err := ParseDate(man.AsOf)
	if err != nil {
		return nil, bad("as_of: %v", err)
	}
	arows, err := getParquet[assetRow](assetsFile, get)
	if err != nil {
		return nil, err
	}
	if len(arows) != man.Assets {
		return nil, bad("%s has %d assets, %s says %d", assetsFile, len(arows), manifestFile, man.Assets)
	}
	m = &Model{
		AsOf:           asof,
		Method:         man.Method,
		PeriodsPerYear: man.PeriodsPerYear,
		Settings:       man.Settings,
		Notes:          man.Notes,
		Validation:     man.Validation,
		Assets:         make([]string, len(arows)),
	}
	for i, r := range arows {
		m.Assets[i] = r.Asset
	}
	switch man.Kind {
	case "factor":
		m.Factor, err = loadFactor(man, arows, get, bad)
	case "dense":
		m.Dense, err = loadDense(len(arows), open, bad)
	default:
		err = bad("kind %q", man.Kind)
	}
	if err != nil {
		return nil, err
	}
	if err := m.check(); err != nil {
		return nil, bad("%v", err)
	}
	return m, nil
}

func loadFactor(man manifest, arows []assetRow, get func(string) ([]byte, error), bad func(string, ...any) error) (*factor.Model, error) {
	n, k := len(arows), man.Factors
	if k < 0 || len(man.FactorNames) != k {
		return nil, bad("%d factor names for %d factors", len(man.FactorNames), k)
	}
	if err := checkNames(man.FactorNames, bad); err != nil {
		return nil, err
	}
	d := make([]float64, n)
	row := make(map[string]int, n)
	for i, r := range arows {
		d[i] = r.SpecificVariance
		row[r.Asset] = i
	}
	col := make(map[string]int, k)
	for j, name := range man.FactorNames {
		col[name] = j
	}
	lrows, err := getParquet[loadingRow](loadingsFile, get)
	if err != nil {
		return nil, err
	}
	frows, err := getParquet[factorCovRow](factorCovFile, get)
	if err != nil {
		return nil, err
	}
	if len(lrows) != n*k || len(frows) != k*k {
		return nil, bad("%d loadings and %d factor covariances for %d assets and %d factors", len(lrows), len(frows), n, k)
	}
	var b *mat.Dense
	var fc *mat.SymDense
	if k > 0 {
		b = mat.NewDense(n, k, nil)
		seen := make([]bool, n*k)
		for _, r := range lrows {
			i, ok1 := row[r.Asset]
			j, ok2 := col[r.Factor]
			if !ok1 || !ok2 {
				return nil, bad("loading of unknown asset %q or factor %q", r.Asset, r.Factor)
			}
			if seen[i*k+j] {
				return nil, bad("%s: loading of %q on %q appears twice", loadingsFile, r.Asset, r.Factor)
			}
			seen[i*k+j] = true
			b.Set(i, j, r.Loading)
		}
		full := make([]float64, k*k)
		seen = make([]bool, k*k)
		for _, r := range frows {
			i, ok1 := col[r.FactorI]
			j, ok2 := col[r.FactorJ]
			if !ok1 || !ok2 {
				return nil, bad("factor covariance of unknown factor %q or %q", r.FactorI, r.FactorJ)
			}
			if seen[i*k+j] {
				return nil, bad("%s: element (%q, %q) appears twice", factorCovFile, r.FactorI, r.FactorJ)
			}
			seen[i*k+j] = true
			full[i*k+j] = r.Covariance
		}
		if err := checkSymmetric(full, k, factorCovFile, bad); err != nil {
			return nil, err
		}
		fc = mat.NewSymDense(k, full)
	}
	raw, err := get(factorInfoFile)
	if err != nil {
		return nil, err
	}
	var info factor.Info
	if err := gob.NewDecoder(bytes.NewReader(raw)).Decode(&info); err != nil {
		return nil, bad("%s: %v", factorInfoFile, err)
	}
	assets := make([]string, n)
	for i, r := range arows {
		assets[i] = r.Asset
	}
	if err := checkInfo(&info, assets, man.FactorNames, bad); err != nil {
		return nil, err
	}
	f, err := factor.NewModel(b, fc, d, info)
	if err != nil {
		return nil, bad("%v", err)
	}
	if !slices.Equal(f.FactorNames(), man.FactorNames) {
		return nil, bad("factor names in %s differ from %s", factorInfoFile, manifestFile)
	}
	return f, nil
}

// loadDense reads covariance.parquet into an N×N matrix, checking that
// every element of the upper triangle appears exactly once. A file as
// saveDenseFiles writes it is read by columns (eachDenseColumns); any other
// valid layout by rows.
func loadDense(n int, open func(string) (*os.File, int64, error), bad func(string, ...any) error) (*mat.SymDense, error) {
	file, size, err := open(denseCovFile)
	if err != nil {
		return nil, err
	}
	defer file.Close()
	f, err := parquet.OpenFile(file, size)
	if err != nil {
		return nil, fmt.Errorf("riskmodel: load model: %w: %s: %v", ErrInvalidModel, denseCovFile, err)
	}
	s := mat.NewSymDense(n, nil)
	raw := s.RawSymmetric()
	want := n * (n + 1) / 2
	seen := make([]uint64, (want+63)/64) // a bit per element of the upper triangle
	count := 0
	visit := func(r, c int32, v float64) error {
		i, j := int(r), int(c)
		if i < 0 || j < i || j >= n {
			return bad("%s: element (%d, %d) outside the upper triangle of %d assets", denseCovFile, i, j, n)
		}
		at := i*n - i*(i-1)/2 + j - i
		if seen[at/64]&(1<<(at%64)) != 0 {
			return bad("%s: element (%d, %d) appears twice", denseCovFile, i, j)
		}
		seen[at/64] |= 1 << (at % 64)
		count++
		raw.Data[i*raw.Stride+j] = v
		return nil
	}
	err = eachDenseColumns(f, want, visit)
	if errors.Is(err, errNotPlain) {
		clear(raw.Data)
		clear(seen)
		count = 0
		err = eachRow(f, denseCovFile, func(r denseCovRow) error { return visit(r.Row, r.Col, r.Covariance) })
	} else if errors.Is(err, ErrInvalidModel) {
		err = fmt.Errorf("riskmodel: load model: %s: %w", denseCovFile, err)
	}
	if err != nil {
		return nil, err
	}
	if count != want {
		return nil, bad("%s has %d elements, want %d for %d assets", denseCovFile, count, want, n)
	}
	return s, nil
}

func getParquet[T any](name string, get func(string) ([]byte, error)) ([]T, error) {
	var out []T
	err := eachParquetRow(name, get, func(r T) error { out = append(out, r); return nil })
	return out, err
}

// eachParquetRow calls fn on every row of the named file, reading 8192 rows
// at a time, and stops at fn's first error.
func eachParquetRow[T any](name string, get func(string) ([]byte, error), fn func(T) error) error {
	f, err := openModelParquet(name, get)
	if err != nil {
		return err
	}
	return eachRow(f, name, fn)
}

func openModelParquet(name string, get func(string) ([]byte, error)) (*parquet.File, error) {
	data, err := get(name)
	if err != nil {
		return nil, err
	}
	f, err := parquet.OpenFile(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		return nil, fmt.Errorf("riskmodel: load model: %w: %s: %v", ErrInvalidModel, name, err)
	}
	return f, nil
}

// eachRow is eachParquetRow on an open file.
func eachRow[T any](f *parquet.File, name string, fn func(T) error) error {
	r := parquet.NewGenericReader[T](f)
	defer r.Close()
	buf := make([]T, 8192)
	for {
		n, err := r.Read(buf)
		for _, row := range buf[:n] {
			if ferr := fn(row); ferr != nil {
				return ferr
			}
		}
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return fmt.Errorf("riskmodel: load model: %w: %s: %v", ErrInvalidModel, name, err)
		}
	}
}

func writeSynced(path string, data []byte) error {
	_, err := writeFileSynced(path, writeBytes(data))
	return err
}

// writeFileSynced creates path (which must not exist), fills it through
// write, syncs it and returns the hex SHA-256 of what was written.
func writeFileSynced(path string, write func(io.Writer) error) (string, error) {
	f, err := os.OpenFile(path, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
	if err != nil {
		return "", err
	}
	h := sha256.New()
	bw := bufio.NewWriterSize(io.MultiWriter(f, h), 1<<20)
	if err := write(bw); err != nil {
		f.Close()
		return "", err
	}
	if err := bw.Flush(); err != nil {
		f.Close()
		return "", err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return "", err
	}
	if err := f.Close(); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	return d.Sync()
}
