package riskmodel

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
)

// testFactorModel returns a random factor model over n assets and k factors.
func testFactorModel(t *testing.T, seed uint64, n, k int) *Model {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 7))
	b := mat.NewDense(n, k, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < k; j++ {
			b.Set(i, j, rng.NormFloat64())
		}
	}
	g := mat.NewDense(k, k, nil)
	for i := 0; i < k; i++ {
		for j := 0; j < k; j++ {
			g.Set(i, j, rng.NormFloat64()*1e-2)
		}
	}
	f := mat.NewSymDense(k, nil)
	f.SymOuterK(1, g)
	d := make([]float64, n)
	assets := make([]string, n)
	for i := range d {
		d[i] = 1e-4 * (1 + rng.Float64())
		assets[i] = fmt.Sprintf("TST%03d", i)
	}
	fm, err := factor.NewModel(b, f, d, factor.Info{Method: "test", Reason: "fixed by test"})
	require.NoError(t, err)
	return &Model{
		AsOf: DateOf(2026, 11, 30), Assets: assets, PeriodsPerYear: 252, Method: "factor",
		Settings: map[string]string{"factors": fmt.Sprint(k)}, Notes: []string{"a note"}, Factor: fm,
	}
}

func testDenseModel(t *testing.T, n int) *Model {
	t.Helper()
	m := testFactorModel(t, 3, n, 2)
	s := m.Factor.CovarianceTo(nil)
	m.Factor, m.Dense, m.Method = nil, s, "ledoit-wolf"
	return m
}

func TestSaveLoadRoundTripIsBitIdentical(t *testing.T) {
	for _, tc := range []struct {
		name string
		m    *Model
	}{
		{"factor", testFactorModel(t, 1, 40, 3)},
		{"one factor one asset", testFactorModel(t, 2, 1, 1)},
		{"dense", testDenseModel(t, 25)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := filepath.Join(t.TempDir(), "m")
			require.NoError(t, SaveModel(dir, tc.m))
			back, err := LoadModel(dir)
			require.NoError(t, err)
			require.True(t, tc.m.equal(back))
			// Saving what was loaded gives the same bytes.
			dir2 := filepath.Join(t.TempDir(), "m2")
			require.NoError(t, SaveModel(dir2, back))
			for _, f := range []string{assetsFile, manifestFile} {
				a, _ := os.ReadFile(filepath.Join(dir, f))
				b, _ := os.ReadFile(filepath.Join(dir2, f))
				require.Equal(t, a, b, f)
			}
		})
	}
}

func TestLoadModelDetectsDamage(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "m")
	require.NoError(t, SaveModel(dir, testFactorModel(t, 1, 30, 2)))
	path := filepath.Join(dir, loadingsFile)
	data, err := os.ReadFile(path)
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(path, data[:len(data)/2], 0o644))
	_, err = LoadModel(dir)
	require.ErrorIs(t, err, ErrInvalidModel)
	require.ErrorContains(t, err, "loadings.parquet does not match its checksum")
}

func TestSaveModelRefusesNonEmptyFolder(t *testing.T) {
	dir := t.TempDir()
	require.NoError(t, os.WriteFile(filepath.Join(dir, "x"), nil, 0o644))
	require.ErrorContains(t, SaveModel(dir, testDenseModel(t, 3)), "is not empty")
}

func TestPublishSwitchesCurrent(t *testing.T) {
	s := Store{Dir: t.TempDir()}
	_, err := s.Current()
	require.ErrorIs(t, err, ErrNoCurrent)

	first := testFactorModel(t, 1, 20, 2)
	p1, err := s.Publish(first)
	require.NoError(t, err)
	require.Equal(t, filepath.Join(s.Dir, "2026-11-30"), p1)
	info, err := os.Stat(p1)
	require.NoError(t, err)
	require.Equal(t, os.FileMode(0o755), info.Mode().Perm(), "other users must be able to read a published model")

	second := testFactorModel(t, 2, 20, 2)
	p2, err := s.Publish(second)
	require.NoError(t, err)
	require.Equal(t, filepath.Join(s.Dir, "2026-11-30.2"), p2)

	cur, err := s.LoadCurrent()
	require.NoError(t, err)
	require.True(t, second.equal(cur))
	// LoadModel on the store root reads the current model as well.
	viaRoot, err := LoadModel(s.Dir)
	require.NoError(t, err)
	require.True(t, second.equal(viaRoot))
	// The first model is still there, intact.
	old, err := LoadModel(p1)
	require.NoError(t, err)
	require.True(t, first.equal(old))
}

func TestPublishFailureLeavesCurrentUntouched(t *testing.T) {
	for _, stage := range []string{"staging", "written", "verified", "renamed"} {
		t.Run(stage, func(t *testing.T) {
			s := Store{Dir: t.TempDir()}
			first := testFactorModel(t, 1, 15, 2)
			_, err := s.Publish(first)
			require.NoError(t, err)

			injected := errors.New("injected failure")
			publishHook = func(at string) error {
				if at == stage {
					return injected
				}
				return nil
			}
			defer func() { publishHook = nil }()
			_, err = s.Publish(testFactorModel(t, 9, 15, 2))
			require.ErrorIs(t, err, injected)

			cur, err := s.LoadCurrent()
			require.NoError(t, err)
			require.True(t, first.equal(cur), "current model changed after a failure at %s", stage)

			// The next publish cleans up and succeeds.
			publishHook = nil
			_, err = s.Publish(testFactorModel(t, 10, 15, 2))
			require.NoError(t, err)
			entries, err := os.ReadDir(s.Dir)
			require.NoError(t, err)
			for _, e := range entries {
				require.NotContains(t, e.Name(), ".staging-")
			}
		})
	}
}

func TestPublishRejectsInvalidModel(t *testing.T) {
	m := testDenseModel(t, 4)
	m.Assets[1] = m.Assets[0]
	_, err := Store{Dir: t.TempDir()}.Publish(m)
	require.ErrorIs(t, err, ErrInvalidModel)
}
