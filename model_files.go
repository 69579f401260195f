package riskmodel

import (
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
	put := func(name string, data []byte) error {
		if err := writeSynced(filepath.Join(dir, name), data); err != nil {
			return err
		}
		sum := sha256.Sum256(data)
		man.Files[name] = hex.EncodeToString(sum[:])
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
		if err := put(factorInfoFile, buf.Bytes()); err != nil {
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

func saveFactorFiles(f *factor.Model, assets []string, put func(string, []byte) error) error {
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

func saveDenseFiles(s *mat.SymDense, assets []string, put func(string, []byte) error) error {
	n := len(assets)
	rows := make([]assetRow, n)
	for i, a := range assets {
		rows[i] = assetRow{Asset: a, SpecificVariance: s.At(i, i)}
	}
	if err := putParquet(assetsFile, rows, put); err != nil {
		return err
	}
	crows := make([]denseCovRow, 0, n*(n+1)/2)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			crows = append(crows, denseCovRow{Row: int32(i), Col: int32(j), Covariance: s.At(i, j)})
		}
	}
	return putParquet(denseCovFile, crows, put)
}

func putParquet[T any](name string, rows []T, put func(string, []byte) error) error {
	var buf bytes.Buffer
	w := parquet.NewGenericWriter[T](&buf, parquet.Compression(&parquet.Zstd), parquet.MaxRowsPerRowGroup(1<<20))
	if _, err := w.Write(rows); err != nil {
		return fmt.Errorf("riskmodel: save model: %s: %w", name, err)
	}
	if err := w.Close(); err != nil {
		return fmt.Errorf("riskmodel: save model: %s: %w", name, err)
	}
	return put(name, buf.Bytes())
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
		m.Dense, err = loadDense(len(arows), get, bad)
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

func loadDense(n int, get func(string) ([]byte, error), bad func(string, ...any) error) (*mat.SymDense, error) {
	crows, err := getParquet[denseCovRow](denseCovFile, get)
	if err != nil {
		return nil, err
	}
	if len(crows) != n*(n+1)/2 {
		return nil, bad("%s has %d elements, want %d for %d assets", denseCovFile, len(crows), n*(n+1)/2, n)
	}
	s := mat.NewSymDense(n, nil)
	seen := make([]uint64, (len(crows)+63)/64) // a bit per element of the upper triangle
	for _, r := range crows {
		i, j := int(r.Row), int(r.Col)
		if i < 0 || j < i || j >= n {
			return nil, bad("%s: element (%d, %d) outside the upper triangle of %d assets", denseCovFile, i, j, n)
		}
		at := i*n - i*(i-1)/2 + j - i
		if seen[at/64]&(1<<(at%64)) != 0 {
			return nil, bad("%s: element (%d, %d) appears twice", denseCovFile, i, j)
		}
		seen[at/64] |= 1 << (at % 64)
		s.SetSym(i, j, r.Covariance)
	}
	return s, nil
}

func getParquet[T any](name string, get func(string) ([]byte, error)) ([]T, error) {
	data, err := get(name)
	if err != nil {
		return nil, err
	}
	rd := bytes.NewReader(data)
	f, err := parquet.OpenFile(rd, int64(len(data)))
	if err != nil {
		return nil, fmt.Errorf("riskmodel: load model: %w: %s: %v", ErrInvalidModel, name, err)
	}
	r := parquet.NewGenericReader[T](f)
	defer r.Close()
	out := make([]T, 0, f.NumRows())
	buf := make([]T, 8192)
	for {
		n, err := r.Read(buf)
		out = append(out, buf[:n]...)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("riskmodel: load model: %w: %s: %v", ErrInvalidModel, name, err)
		}
	}
	return out, nil
}

func writeSynced(path string, data []byte) error {
	f, err := os.OpenFile(path, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		f.Close()
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	return d.Sync()
}
