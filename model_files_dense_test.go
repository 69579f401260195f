package riskmodel

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// denseFile writes the upper triangle of s as rows of type T (fields row,
// col, covariance in that order of meaning), with small row groups and
// pages so that a 9-asset matrix spans several of each.
func denseFile[T any](t *testing.T, s *mat.SymDense, row func(i, j int, v float64) T) []byte {
	t.Helper()
	n := s.SymmetricDim()
	var rows []T
	for i := range n {
		for j := i; j < n; j++ {
			rows = append(rows, row(i, j, s.At(i, j)))
		}
	}
	var buf bytes.Buffer
	w := parquet.NewGenericWriter[T](&buf, parquet.MaxRowsPerRowGroup(7), parquet.PageBufferSize(64))
	_, err := w.Write(rows)
	require.NoError(t, err)
	require.NoError(t, w.Close())
	return buf.Bytes()
}

func loadDenseBytes(t *testing.T, n int, data []byte) (*mat.SymDense, error) {
	t.Helper()
	path := filepath.Join(t.TempDir(), denseCovFile)
	require.NoError(t, os.WriteFile(path, data, 0o644))
	bad := func(format string, args ...any) error { return fmt.Errorf(format, args...) }
	return loadDense(n, func(string) (*os.File, int64, error) {
		f, err := os.Open(path)
		return f, int64(len(data)), err
	}, bad)
}

// TestLoadDenseColumnsAndRows checks the column reader against the generic
// row reader (the two routes must give the same bits) on files of several
// row groups and pages, and that a file the column reader does not take
// (optional columns, another integer type) is still read, by rows.
func TestLoadDenseColumnsAndRows(t *testing.T) {
	const n = 9
	s := testDenseModel(t, n).Dense
	plain := denseFile(t, s, func(i, j int, v float64) denseCovRow {
		return denseCovRow{Row: int32(i), Col: int32(j), Covariance: v}
	})
	f, err := parquet.OpenFile(bytes.NewReader(plain), int64(len(plain)))
	require.NoError(t, err)
	require.Greater(t, len(f.RowGroups()), 1)
	byCols := mat.NewSymDense(n, nil)
	require.NoError(t, eachDenseColumns(f, 1<<20, func(i, j int32, v float64) error { byCols.SetSym(int(i), int(j), v); return nil }))
	byRows := mat.NewSymDense(n, nil)
	require.NoError(t, eachRow(f, "x", func(r denseCovRow) error { byRows.SetSym(int(r.Row), int(r.Col), r.Covariance); return nil }))
	require.Equal(t, symData(byRows), symData(byCols))
	require.Equal(t, symData(s), symData(byCols))

	type optionalRow struct {
		Row        *int32   `parquet:"row,optional"`
		Col        *int32   `parquet:"col,optional"`
		Covariance *float64 `parquet:"covariance,optional"`
	}
	type int64Row struct {
		Row        int64   `parquet:"row"`
		Col        int64   `parquet:"col"`
		Covariance float64 `parquet:"covariance"`
	}
	for name, data := range map[string][]byte{
		"plain": plain,
		"optional columns": denseFile(t, s, func(i, j int, v float64) optionalRow {
			r, c := int32(i), int32(j)
			return optionalRow{&r, &c, &v}
		}),
		"int64 indices": denseFile(t, s, func(i, j int, v float64) int64Row { return int64Row{int64(i), int64(j), v} }),
	} {
		t.Run(name, func(t *testing.T) {
			if name != "plain" {
				f, err := parquet.OpenFile(bytes.NewReader(data), int64(len(data)))
				require.NoError(t, err)
				require.ErrorIs(t, eachDenseColumns(f, 1<<20, func(int32, int32, float64) error { return nil }), errNotPlain)
			}
			got, err := loadDenseBytes(t, n, data)
			require.NoError(t, err)
			require.Equal(t, symData(s), symData(got))
		})
	}
}

// TestLoadDenseColumnsRefuses checks that the column reader keeps the
// checks of the row reader: an element twice, one missing, one outside the
// triangle.
func TestLoadDenseColumnsRefuses(t *testing.T) {
	const n = 5
	s := testDenseModel(t, n).Dense
	for want, edit := range map[string]func(i, j int, v float64) denseCovRow{
		"appears twice": func(i, j int, v float64) denseCovRow {
			return denseCovRow{Row: 0, Col: int32(min(j, 1)), Covariance: v}
		},
		"outside the upper triangle": func(i, j int, v float64) denseCovRow { return denseCovRow{Row: int32(j), Col: int32(i), Covariance: v} },
	} {
		t.Run(want, func(t *testing.T) {
			_, err := loadDenseBytes(t, n, denseFile(t, s, edit))
			require.ErrorContains(t, err, want)
		})
	}
	_, err := loadDenseBytes(t, n+1, denseFile(t, s, func(i, j int, v float64) denseCovRow {
		return denseCovRow{Row: int32(i), Col: int32(j), Covariance: v}
	}))
	require.ErrorContains(t, err, "has 15 elements, want 21")
	_, err = loadDenseBytes(t, n-1, denseFile(t, s, func(i, j int, v float64) denseCovRow {
		return denseCovRow{Row: int32(i), Col: int32(j), Covariance: v}
	}))
	require.ErrorIs(t, err, ErrInvalidModel)
	require.ErrorContains(t, err, "more than 10 elements", "row groups that claim more rows than the triangle has")
}

// TestSymBitsEqual checks the in-place comparison the store's read-back
// uses against the copy of the upper triangle it replaced (symData).
func TestSymBitsEqual(t *testing.T) {
	a := testDenseModel(t, 6).Dense
	b := mat.NewSymDense(6, nil)
	b.CopySym(a)
	require.True(t, symBitsEqual(a, b))
	b.SetSym(2, 5, math.Nextafter(a.At(2, 5), 1))
	require.False(t, symBitsEqual(a, b))
	require.Equal(t, bitsEqual(symData(a), symData(b)), symBitsEqual(a, b))
	z, nz := mat.NewSymDense(2, nil), mat.NewSymDense(2, nil)
	nz.SetSym(0, 1, math.Copysign(0, -1))
	require.False(t, symBitsEqual(z, nz), "0 and -0 differ in their bits")
	require.False(t, symBitsEqual(a, z))
}
