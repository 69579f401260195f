package ewma

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// general hides a *mat.Dense behind the mat.Matrix interface, so that
// Variances takes its general (copying) path.
type general struct{ mat.Matrix }

// TestVariancesPathsAgree checks that the in-place path for a *mat.Dense
// gives the general path's results bit for bit, for any GOMAXPROCS and with
// several column blocks, and reports the same first error.
func TestVariancesPathsAgree(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	const tt, n = 60, 2*varianceBlock + 17
	x := mat.NewDense(tt, n, nil)
	for i := 0; i < tt; i++ {
		for j := 0; j < n; j++ {
			v := 0.02 * rng.NormFloat64()
			if rng.Float64() < 0.1 {
				v = math.NaN()
			}
			x.Set(i, j, v)
		}
	}
	w, err := Weights(nil, tt, 20)
	require.NoError(t, err)
	w[5] = 0 // a zero weight is skipped by both paths
	for _, o := range []*Options{nil, {Demean: true}, {Unbiased: true}, {Demean: true, Unbiased: true}} {
		for _, wt := range [][]float64{nil, w} {
			want, err := Variances(nil, general{x}, wt, o)
			require.NoError(t, err)
			for _, procs := range []int{1, 2, 8} {
				prev := runtime.GOMAXPROCS(procs)
				got, err := Variances(nil, x, wt, o)
				runtime.GOMAXPROCS(prev)
				require.NoError(t, err)
				for j := range want {
					require.Equal(t, math.Float64bits(want[j]), math.Float64bits(got[j]), "column %d, options %+v, GOMAXPROCS %d", j, o, procs)
				}
			}
		}
	}

	bad := func(set func(x *mat.Dense, w []float64)) (*mat.Dense, []float64) {
		y := mat.NewDense(6, 3, []float64{
			0.01, 0.02, 0.03,
			0.02, 0.01, -0.01,
			0.00, 0.03, 0.02,
			-0.01, 0.02, 0.01,
			0.03, -0.02, 0.00,
			0.01, 0.00, 0.02,
		})
		v := []float64{1, 1, 1, 1, 1, 1}
		set(y, v)
		return y, v
	}
	for _, tc := range []struct {
		name string
		set  func(x *mat.Dense, w []float64)
		want error
	}{
		{"Inf before a bad weight", func(x *mat.Dense, w []float64) { x.Set(2, 1, math.Inf(1)); w[3] = -1 }, ErrNonFinite},
		{"bad weight on the row of an Inf", func(x *mat.Dense, w []float64) { x.Set(2, 2, math.Inf(-1)); w[2] = math.NaN() }, ErrWeight},
		{"two Infs", func(x *mat.Dense, w []float64) { x.Set(4, 0, math.Inf(1)); x.Set(3, 2, math.Inf(1)) }, ErrNonFinite},
		{"all missing", func(x *mat.Dense, w []float64) {
			for i := 0; i < 6; i++ {
				x.Set(i, 1, math.NaN())
			}
		}, ErrAllMissing},
		{"one observation", func(x *mat.Dense, w []float64) {
			for i := 1; i < 6; i++ {
				x.Set(i, 2, math.NaN())
			}
		}, ErrTooFewObs},
	} {
		t.Run(tc.name, func(t *testing.T) {
			y, v := bad(tc.set)
			_, errFast := Variances(nil, y, v, nil)
			_, errGeneral := Variances(nil, general{y}, v, nil)
			require.ErrorIs(t, errFast, tc.want)
			require.Equal(t, errGeneral.Error(), errFast.Error())
		})
	}
}
