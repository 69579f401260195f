package riskmodel

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
)

// FuzzLoadModel keeps a saved model's data files (their checksums guard
// them) and fuzzes its model.json, with a model.sha256 that matches it so
// that the fuzzed manifest reaches the consistency checks: LoadModel must
// return a model with a finite, symmetric covariance of the right size, or
// an error wrapping ErrInvalidModel (or the file system's error), and never
// panic.
func FuzzLoadModel(f *testing.F) {
	src := f.TempDir()
	models := map[string]*Model{}
	fm, err := factor.NewModel(mat.NewDense(3, 1, []float64{1, 0.5, -0.2}), mat.NewSymDense(1, []float64{1e-4}),
		[]float64{1e-4, 2e-4, 3e-4}, factor.Info{FactorNames: []string{"f1"}})
	if err != nil {
		f.Fatal(err)
	}
	assets := []string{"QX1", "QX2", "QX3"}
	models["factor"] = &Model{AsOf: DateOf(2024, 1, 2), Assets: assets, PeriodsPerYear: 252, Method: MethodFactor, Factor: fm}
	models["dense"] = &Model{AsOf: DateOf(2024, 1, 2), Assets: assets, PeriodsPerYear: 252, Method: MethodLedoitWolf,
		Dense: mat.NewSymDense(3, []float64{2e-4, 1e-5, 0, 1e-5, 3e-4, 2e-5, 0, 2e-5, 1e-4})}
	for _, kind := range []string{"factor", "dense"} {
		m := models[kind]
		dir := filepath.Join(src, kind)
		if err := SaveModel(dir, m); err != nil {
			f.Fatal(err)
		}
		js, err := os.ReadFile(filepath.Join(dir, manifestFile))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(kind == "factor", js)
	}
	f.Add(true, []byte(`{"format":"riskmodel-folder/2","kind":"factor","assets":3,"factors":99999999999}`))
	f.Fuzz(func(t *testing.T, isFactor bool, manifestJSON []byte) {
		kind := "dense"
		if isFactor {
			kind = "factor"
		}
		dir := t.TempDir()
		entries, err := os.ReadDir(filepath.Join(src, kind))
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range entries {
			b, err := os.ReadFile(filepath.Join(src, kind, e.Name()))
			if err != nil {
				t.Fatal(err)
			}
			switch e.Name() {
			case manifestFile:
				b = manifestJSON
			case digestFile:
				b = []byte(digestLine(manifestJSON))
			}
			if err := os.WriteFile(filepath.Join(dir, e.Name()), b, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		m, err := LoadModel(dir)
		if err != nil {
			var pe *os.PathError
			if !errors.Is(err, ErrInvalidModel) && !errors.As(err, &pe) {
				t.Fatalf("error wraps neither ErrInvalidModel nor a file error: %v", err)
			}
			if errors.Is(err, ErrInvalidModel) && !strings.Contains(err.Error(), ErrInvalidModel.Error()) {
				t.Fatalf("message %q lacks the reason", err)
			}
			return
		}
		c := m.Covariance()
		n := c.SymmetricDim()
		if n != len(m.Assets) || n != 3 {
			t.Fatalf("%d×%d covariance for %d assets", n, n, len(m.Assets))
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if v := c.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) || v != c.At(j, i) {
					t.Fatalf("entry (%d,%d) = %v", i, j, v)
				}
			}
		}
	})
}
