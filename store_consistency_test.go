package riskmodel

import (
	"bytes"
	"crypto/sha256"
	"encoding/gob"
	"encoding/hex"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/riskmodel/riskmodel/factor"
)

// rewrite replaces a file of a saved model and updates its checksum in
// model.json and the manifest's digest, so that the folder passes every
// checksum and only its consistency is left to check.
func rewrite(t *testing.T, dir, name string, data []byte) {
	t.Helper()
	require.NoError(t, os.WriteFile(filepath.Join(dir, name), data, 0o644))
	editManifest(t, dir, func(man *manifest) {
		sum := sha256.Sum256(data)
		man.Files[name] = hex.EncodeToString(sum[:])
	})
}

func editManifest(t *testing.T, dir string, edit func(*manifest)) {
	t.Helper()
	js, err := os.ReadFile(filepath.Join(dir, manifestFile))
	require.NoError(t, err)
	var man manifest
	require.NoError(t, json.Unmarshal(js, &man))
	edit(&man)
	js, err = json.MarshalIndent(man, "", "  ")
	require.NoError(t, err)
	js = append(js, '\n')
	require.NoError(t, os.WriteFile(filepath.Join(dir, manifestFile), js, 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(dir, digestFile), []byte(digestLine(js)), 0o644))
}

func parquetBytes[T any](t *testing.T, rows []T) []byte {
	t.Helper()
	var out bytes.Buffer
	require.NoError(t, putParquet("x", rows, func(_ string, write func(io.Writer) error) error { return write(&out) }))
	return out.Bytes()
}

func readRows[T any](t *testing.T, dir, name string) []T {
	t.Helper()
	rows, err := getParquet[T](name, func(string) ([]byte, error) { return os.ReadFile(filepath.Join(dir, name)) })
	require.NoError(t, err)
	return rows
}

func gobInfo(t *testing.T, dir string, edit func(*factor.Info)) []byte {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join(dir, factorInfoFile))
	require.NoError(t, err)
	var info factor.Info
	require.NoError(t, gob.NewDecoder(bytes.NewReader(raw)).Decode(&info))
	edit(&info)
	var buf bytes.Buffer
	require.NoError(t, gob.NewEncoder(&buf).Encode(info))
	return buf.Bytes()
}

// TestLoadModelInconsistentFolders: folders whose files each match their
// checksums but not each other are refused with an error wrapping
// ErrInvalidModel that says what disagrees, never a panic. The first case
// made LoadModel panic with "mat: dimension mismatch" before.
func TestLoadModelInconsistentFolders(t *testing.T) {
	factorModel := testFactorModel(t, 4, 6, 2)
	factorModel.Factor = withNames(t, factorModel.Factor)
	for _, tc := range []struct {
		name  string
		dense bool
		edit  func(t *testing.T, dir string)
		want  string
	}{
		{"one more asset in the diagnostics", false, func(t *testing.T, dir string) {
			rewrite(t, dir, factorInfoFile, gobInfo(t, dir, func(in *factor.Info) {
				in.Assets = append(in.Assets, "TST999")
			}))
		}, "factor_info.gob lists 7 assets that differ from the 6 of assets.parquet"},
		{"one more factor name in the diagnostics", false, func(t *testing.T, dir string) {
			rewrite(t, dir, factorInfoFile, gobInfo(t, dir, func(in *factor.Info) {
				in.FactorNames = append(in.FactorNames, "pc3")
			}))
		}, "factor names in factor_info.gob differ from model.json"},
		{"a rotation of the wrong size", false, func(t *testing.T, dir string) {
			rewrite(t, dir, factorInfoFile, gobInfo(t, dir, func(in *factor.Info) {
				in.Alignment = &factor.Alignment{Common: 6, Rotation: []float64{1, 0, 0}}
			}))
		}, "a rotation of 3 elements and 0 angles for 2 factors"},
		{"shrinkage intensities for other groups", false, func(t *testing.T, dir string) {
			rewrite(t, dir, factorInfoFile, gobInfo(t, dir, func(in *factor.Info) {
				in.Specific.Groups = []string{"a", "b", "c"}
				in.Specific.Shrink = []float64{0.1, 0.2}
			}))
		}, "2 specific shrinkage intensities for 3 groups"},
		{"a repeated factor name", false, func(t *testing.T, dir string) {
			editManifest(t, dir, func(man *manifest) { man.FactorNames = []string{"pc1", "pc1"} })
		}, `factor name "pc1" is empty or repeated`},
		{"a loading given twice and one missing", false, func(t *testing.T, dir string) {
			rows := readRows[loadingRow](t, dir, loadingsFile)
			rows[1] = rows[0]
			rewrite(t, dir, loadingsFile, parquetBytes(t, rows))
		}, `loading of "TST000" on "pc1" appears twice`},
		{"an asymmetric factor covariance", false, func(t *testing.T, dir string) {
			rows := readRows[factorCovRow](t, dir, factorCovFile)
			rows[1].Covariance *= 2 // (pc1, pc2) no longer equals (pc2, pc1)
			rewrite(t, dir, factorCovFile, parquetBytes(t, rows))
		}, "factor_covariance.parquet: element (0, 1) differs from (1, 0)"},
		{"a dense element given twice", true, func(t *testing.T, dir string) {
			rows := readRows[denseCovRow](t, dir, denseCovFile)
			rows[1] = rows[0]
			rewrite(t, dir, denseCovFile, parquetBytes(t, rows))
		}, "covariance.parquet: element (0, 0) appears twice"},
		{"one more asset than the manifest says", true, func(t *testing.T, dir string) {
			editManifest(t, dir, func(man *manifest) { man.Assets++ })
		}, "assets.parquet has 6 assets, model.json says 7"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m := factorModel
			if tc.dense {
				m = testDenseModel(t, 6)
			}
			dir := filepath.Join(t.TempDir(), "m")
			require.NoError(t, SaveModel(dir, m))
			tc.edit(t, dir)
			var err error
			require.NotPanics(t, func() { _, err = LoadModel(dir) })
			require.ErrorIs(t, err, ErrInvalidModel)
			require.ErrorContains(t, err, tc.want)
		})
	}
}

// withNames gives a factor model's diagnostics its asset and factor names,
// as Fit does, so that the files carry both.
func withNames(t *testing.T, f *factor.Model) *factor.Model {
	t.Helper()
	info := f.Info()
	n, _ := f.LoadingsTo(nil).Dims()
	info.Assets = make([]string, n)
	for i := range info.Assets {
		info.Assets[i] = testFactorModel(t, 4, 6, 2).Assets[i]
	}
	info.FactorNames = []string{"pc1", "pc2"}
	g, err := factor.NewModel(f.LoadingsTo(nil), f.FactorCovarianceTo(nil), f.SpecificVariancesTo(nil), info)
	require.NoError(t, err)
	return g
}
