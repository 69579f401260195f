package ewma

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// refSet is one block of pandas 1.5.3 results in testdata/ewma/fixture.json,
// made by testdata/ewma/make_fixture.py (calls named in the fixture).
type refSet struct {
	CovUnbiased [][]float64 `json:"cov_unbiased"`
	CovBiased   [][]float64 `json:"cov_biased"`
	Corr        [][]float64 `json:"corr"`
	VarUnbiased []float64   `json:"var_unbiased"`
	VarBiased   []float64   `json:"var_biased"`
	Mean        []float64   `json:"mean"`
	ZeroMean    [][]float64 `json:"zero_mean"`
}

type fixture struct {
	HalfLife    float64                `json:"halflife"`
	Full        [][]*float64           `json:"full"`
	Gappy       [][]*float64           `json:"gappy"`
	TrueFull    refSet                 `json:"adjust_true_full"`
	TrueGappy   refSet                 `json:"adjust_true_gappy"`
	FalseFull   refSet                 `json:"adjust_false_full"`
	HAC         map[string][][]float64 `json:"hac"`
	HACAuto     [][]float64            `json:"hac_auto"`
	HACAutoLags int                    `json:"hac_auto_lags"`
}

func loadFixture(t *testing.T) *fixture {
	t.Helper()
	b, err := os.ReadFile("../testdata/ewma/fixture.json")
	require.NoError(t, err)
	var f fixture
	require.NoError(t, json.Unmarshal(b, &f))
	return &f
}

// matrixOf turns JSON rows (null for missing) into a T×N matrix with NaN.
func matrixOf(rows [][]*float64) *mat.Dense {
	m := mat.NewDense(len(rows), len(rows[0]), nil)
	for i, r := range rows {
		for j, v := range r {
			if v == nil {
				m.Set(i, j, math.NaN())
			} else {
				m.Set(i, j, *v)
			}
		}
	}
	return m
}

func symOf(rows [][]float64) *mat.SymDense {
	n := len(rows)
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s.SetSym(i, j, rows[i][j])
		}
	}
	return s
}

// requireSymClose checks every entry to tol relative to the largest entry of
// want.
func requireSymClose(t *testing.T, want, got mat.Symmetric, tol float64, msg string) {
	t.Helper()
	n := want.SymmetricDim()
	require.Equal(t, n, got.SymmetricDim(), msg)
	scale := 0.0
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			scale = math.Max(scale, math.Abs(want.At(i, j)))
		}
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			require.InDelta(t, want.At(i, j), got.At(i, j), tol*scale, "%s (%d,%d)", msg, i, j)
		}
	}
}
