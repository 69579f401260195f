package riskmodel

import (
	"bytes"
	"encoding/csv"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
)

// randomSym returns an n×n symmetric matrix whose values span many orders of
// magnitude, so that a shortest-text round trip is really exercised.
func randomSym(n int, seed uint64) *mat.SymDense {
	rs := rand.New(rand.NewPCG(seed, 1))
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s.SetSym(i, j, rs.NormFloat64()*math.Pow(10, float64(rs.IntN(30)-20)))
		}
	}
	return s
}

func labels(n int) []string {
	a := make([]string, n)
	for i := range a {
		a[i] = "QX" + strconv.Itoa(1000+i)
	}
	return a
}

func TestWriteDenseCSVParsesBackExactly(t *testing.T) {
	// n = 150 spans several parallel blocks (denseCSVMaxRows rows each) and a
	// partial last one.
	for _, n := range []int{1, 3, denseCSVMaxRows, 150} {
		s := randomSym(n, uint64(n))
		assets := labels(n)
		var buf bytes.Buffer
		require.NoError(t, WriteDenseCSV(&buf, assets, s))

		// Read with encoding/csv and strconv.ParseFloat, independently of
		// ReadDenseCSV: every value must come back bit for bit.
		recs, err := csv.NewReader(bytes.NewReader(buf.Bytes())).ReadAll()
		require.NoError(t, err)
		require.Len(t, recs, n+1)
		require.Equal(t, append([]string{"asset"}, assets...), recs[0])
		for i := 0; i < n; i++ {
			require.Equal(t, assets[i], recs[i+1][0])
			for j := 0; j < n; j++ {
				v, err := strconv.ParseFloat(recs[i+1][j+1], 64)
				require.NoError(t, err)
				require.Equal(t, math.Float64bits(s.At(i, j)), math.Float64bits(v), "(%d, %d) %s", i, j, recs[i+1][j+1])
			}
		}
	}
}

func TestWriteDenseCSVSameBytesForAnyGOMAXPROCS(t *testing.T) {
	s := randomSym(200, 7)
	assets := labels(200)
	var one, four bytes.Buffer
	prev := runtime.GOMAXPROCS(1)
	require.NoError(t, WriteDenseCSV(&one, assets, s))
	runtime.GOMAXPROCS(4)
	require.NoError(t, WriteDenseCSV(&four, assets, s))
	runtime.GOMAXPROCS(prev)
	require.Equal(t, one.Bytes(), four.Bytes())
}

func TestWriteDenseCSVQuotesLabels(t *testing.T) {
	s := mat.NewSymDense(2, []float64{1, 0.5, 0.5, 2})
	var buf bytes.Buffer
	require.NoError(t, WriteDenseCSV(&buf, []string{`a,b`, `q"x`}, s))
	require.Equal(t, "asset,\"a,b\",\"q\"\"x\"\n\"a,b\",1,0.5\n\"q\"\"x\",0.5,2\n", buf.String())
}

func TestWriteDenseCSVGenericSymmetric(t *testing.T) {
	// A factor model goes through At (no raw storage); the text must equal
	// that of its expanded dense covariance.
	b := mat.NewDense(3, 1, []float64{1, 0.5, -0.25})
	f, err := factor.NewModel(b, mat.NewSymDense(1, []float64{0.0004}), []float64{1e-4, 2e-4, 3e-4}, factor.Info{})
	require.NoError(t, err)
	var viaAt, viaDense bytes.Buffer
	require.NoError(t, WriteDenseCSV(&viaAt, labels(3), f))
	require.NoError(t, WriteDenseCSV(&viaDense, labels(3), f.CovarianceTo(nil)))
	require.Equal(t, viaDense.String(), viaAt.String())
}

func TestWriteDenseCSVShapePanics(t *testing.T) {
	require.PanicsWithValue(t, mat.ErrShape, func() {
		_ = WriteDenseCSV(&bytes.Buffer{}, labels(2), mat.NewSymDense(3, nil))
	})
}

type failWriter struct{ after int }

func (w *failWriter) Write(p []byte) (int, error) {
	if w.after -= len(p); w.after < 0 {
		return 0, errors.New("disk full")
	}
	return len(p), nil
}

func TestWriteDenseCSVWriterError(t *testing.T) {
	err := WriteDenseCSV(&failWriter{after: 3 << 20}, labels(400), randomSym(400, 3))
	require.EqualError(t, err, "disk full")
}

func TestSaveAndReadDenseCSV(t *testing.T) {
	dir := t.TempDir()
	s := randomSym(20, 11)
	m := &Model{AsOf: DateOf(2031, 5, 2), Assets: labels(20), PeriodsPerYear: 252, Method: MethodSample, Dense: s}
	path := filepath.Join(dir, "cov.csv")
	require.NoError(t, WriteDenseCSVFile(path, m))
	assets, got, err := ReadDenseCSV(path)
	require.NoError(t, err)
	require.Equal(t, m.Assets, assets)
	require.True(t, mat.Equal(s, got))
}

func TestReadDenseCSVErrors(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		name, text string
		want       error
		where      string
	}{
		{"empty", "", ErrEmpty, "line 1"},
		{"wrong first header", "id,A\nA,1\n", ErrMissingColumn, `value "id"`},
		{"no assets", "asset\n", ErrEmpty, "line 1"},
		{"bad number", "asset,A,B\nA,1,x\nB,x,2\n", ErrBadNumber, `line 2, column "B", value "x"`},
		{"infinite", "asset,A,B\nA,1,Inf\nB,Inf,2\n", ErrNonFinite, `line 2, column "B"`},
		{"asymmetric", "asset,A,B\nA,1,0.5\nB,0.25,2\n", ErrNotSymmetric, `line 3, column "A", value "0.25"`},
		{"wrong label", "asset,A,B\nA,1,0.5\nC,0.5,2\n", ErrDenseLayout, `line 3, column "asset", value "C"`},
		{"short row", "asset,A,B\nA,1\n", ErrDenseLayout, "line 2"},
		{"too few rows", "asset,A,B\nA,1,0.5\n", ErrDenseLayout, "line 3"},
		{"too many rows", "asset,A\nA,1\nA,1\n", ErrDenseLayout, "line 3"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, tc.name+".csv")
			require.NoError(t, os.WriteFile(path, []byte(tc.text), 0o644))
			_, _, err := ReadDenseCSV(path)
			require.ErrorIs(t, err, tc.want)
			var fe *FileError
			require.ErrorAs(t, err, &fe)
			require.Contains(t, err.Error(), tc.where)
		})
	}
}
