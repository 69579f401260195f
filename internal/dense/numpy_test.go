package dense

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// numpyFixture holds testdata/numpy_products.json, written by
// testdata/numpy_products.py with numpy 1.24.2 (OpenBLAS 0.3.21):
// (X * w[:, None]).T @ X, np.sqrt(w)[:, None] * (X @ X.T) * np.sqrt(w)[None, :],
// X.T @ Y, X @ Z and C - X @ Z.
type numpyFixture struct {
	X, Y, Z, C, XtWX, Gram, XtY, XZ, Sub [][]float64
	W                                    []float64
}

func readNumpy(t *testing.T) numpyFixture {
	raw, err := os.ReadFile("testdata/numpy_products.json")
	require.NoError(t, err)
	var f numpyFixture
	require.NoError(t, json.Unmarshal(raw, &f))
	return f
}

func fromRows(rows [][]float64) *mat.Dense {
	m := mat.NewDense(len(rows), len(rows[0]), nil)
	for i, r := range rows {
		m.SetRow(i, r)
	}
	return m
}

// checkNumpy compares the five products with the fixture to tol·‖want‖∞,
// the largest row sum: the entries are small (about 1e-3, 1e-5 for MulTA).
func checkNumpy(t *testing.T, f numpyFixture, tol float64, route string) {
	x := fromRows(f.X)
	sub := fromRows(f.C)
	SubMul(sub, x, fromRows(f.Z))
	for _, tc := range []struct {
		name      string
		got, want mat.Matrix
	}{
		{name: "XtWX", got: XtWX(nil, x, f.W), want: fromRows(f.XtWX)},
		{name: "XWXt", got: XWXt(nil, x, f.W), want: fromRows(f.Gram)},
		{name: "MulTA", got: MulTA(nil, x, fromRows(f.Y)), want: fromRows(f.XtY)},
		{name: "Mul", got: Mul(nil, x, fromRows(f.Z)), want: fromRows(f.XZ)},
		{name: "SubMul", got: sub, want: fromRows(f.Sub)},
	} {
		tol := tol * mat.Norm(tc.want, math.Inf(1))
		r, c := tc.want.Dims()
		for i := 0; i < r; i++ {
			for j := 0; j < c; j++ {
				require.InDelta(t, tc.want.At(i, j), tc.got.At(i, j), tol, "%s (%d,%d), %s", tc.name, i, j, route)
			}
		}
	}
}

// TestAgainstNumpy checks every kernel, and the blas64 route, against the
// numpy fixture to 1e-13 of ‖want‖∞.
func TestAgainstNumpy(t *testing.T) {
	f := readNumpy(t)
	for _, k := range kernels() {
		withKernel(k, func() { checkNumpy(t, f, 1e-13, "kernel "+k.name) })
	}
	withBLAS(func() { checkNumpy(t, f, 1e-13, backend()) })
}

// TestBuildAgainstNumpy runs in the default and the openblas build alike:
// whatever computes the products of this build (backend) agrees with numpy
// 1.24.2 to 1e-12 of ‖want‖∞ and with the naive definition to 1e-12 of
// Σ|terms|, so the two builds agree with each other to well within 1e-10.
func TestBuildAgainstNumpy(t *testing.T) {
	t.Logf("products computed by %s", backend())
	require.Equal(t, openBLAS, viaBLAS, "the openblas build routes to blas64, the default build to the kernels")
	checkNumpy(t, readNumpy(t), 1e-12, backend())
	checkDefinitions(t, 1e-12, map[string]func(func()){backend(): func(f func()) { f() }})
}
