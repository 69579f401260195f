package dense

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestAgainstNumpy compares, to 1e-13 of ‖want‖∞, with values from numpy 1.24.2 (OpenBLAS 0.3.21)
// written by testdata/numpy_products.py: (X * w[:, None]).T @ X,
// np.sqrt(w)[:, None] * (X @ X.T) * np.sqrt(w)[None, :] and X.T @ Y.
func TestAgainstNumpy(t *testing.T) {
	raw, err := os.ReadFile("testdata/numpy_products.json")
	require.NoError(t, err)
	var f struct {
		X, Y, XtWX, Gram, XtY [][]float64
		W                     []float64
	}
	require.NoError(t, json.Unmarshal(raw, &f))
	dense := func(rows [][]float64) *mat.Dense {
		m := mat.NewDense(len(rows), len(rows[0]), nil)
		for i, r := range rows {
			m.SetRow(i, r)
		}
		return m
	}
	x, y := dense(f.X), dense(f.Y)
	for _, k := range kernels() {
		withKernel(k, func() {
			for _, tc := range []struct {
				name      string
				got, want mat.Matrix
				tol       float64
			}{
				{name: "XtWX", got: XtWX(nil, x, f.W), want: dense(f.XtWX), tol: 1e-13},
				{name: "XWXt", got: XWXt(nil, x, f.W), want: dense(f.Gram), tol: 1e-13},
				{name: "MulTA", got: MulTA(nil, x, y), want: dense(f.XtY), tol: 1e-13},
			} {
				// Relative to ‖want‖∞, the largest row sum: the entries are small
				// (about 1e-3, 1e-5 for MulTA).
				tol := tc.tol * mat.Norm(tc.want, math.Inf(1))
				r, c := tc.want.Dims()
				for i := 0; i < r; i++ {
					for j := 0; j < c; j++ {
						require.InDelta(t, tc.want.At(i, j), tc.got.At(i, j), tol, "%s (%d,%d), kernel %s", tc.name, i, j, k.name)
					}
				}
			}
		})
	}
}
