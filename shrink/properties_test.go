package shrink

import (
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

type estimator struct {
	name string
	fn   func(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error)
	// errs maps an input kind to the error the estimator documents for it.
	errs map[string]error
}

func estimators() []estimator {
	implicit := func(f func(mat.Matrix, []float64) (*Implicit, LinearResult, error)) func(*mat.SymDense, mat.Matrix, []float64) (*mat.SymDense, error) {
		return func(dst *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
			m, _, err := f(x, w)
			if err != nil {
				return dst, err
			}
			return m.DenseTo(dst), nil
		}
	}
	return []estimator{
		{"LedoitWolf", func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
			c, _, err := LedoitWolf(d, x, w)
			return c, err
		}, nil},
		{"OAS", func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
			c, _, err := OAS(d, x, w)
			return c, err
		}, nil},
		{"LedoitWolfImplicit", implicit(LedoitWolfImplicit), nil},
		{"OASImplicit", implicit(OASImplicit), nil},
		{"ConstantCorrelation", func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
			c, _, err := ConstantCorrelation(d, x, w)
			return c, err
		}, map[string]error{"constant column": ErrZeroVariance}},
		{"SingleIndex", func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
			c, _, err := SingleIndex(d, x, w)
			return c, err
		}, nil},
		{"SchaferStrimmer", func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
			c, _, err := SchaferStrimmer(d, x, w)
			return c, err
		}, nil},
		{"Nonlinear", func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
			c, _, err := Nonlinear(d, x, w)
			return c, err
		}, map[string]error{"constant column": ErrRankDeficient, "duplicated columns": ErrRankDeficient}},
		{"ClipMarchenkoPastur", func(d *mat.SymDense, x mat.Matrix, w []float64) (*mat.SymDense, error) {
			c, _, err := ClipMarchenkoPastur(d, x, w)
			return c, err
		}, map[string]error{"constant column": ErrZeroVariance}},
	}
}

func propertyInputs() []struct {
	name string
	x    *mat.Dense
} {
	constant := randReturns(51, 40, 8)
	for i := 0; i < 40; i++ {
		constant.Set(i, 5, 0.0031)
	}
	dup := randReturns(52, 40, 8)
	dup.SetCol(6, mat.Col(nil, 2, dup))
	return []struct {
		name string
		x    *mat.Dense
	}{
		{"T>N", randReturns(53, 60, 12)},
		{"T<N", randReturns(54, 20, 45)},
		{"constant column", constant},
		{"duplicated columns", dup},
		{"single asset", randReturns(55, 30, 1)},
	}
}

// TestEstimatorProperties: every estimator's output is symmetric and
// positive semidefinite, with or without weights, on random and degenerate
// inputs; inputs are not modified; a reused dst gives the same answer.
func TestEstimatorProperties(t *testing.T) {
	for _, e := range estimators() {
		for _, in := range propertyInputs() {
			t.Run(e.name+"/"+in.name, func(t *testing.T) {
				tt, _ := in.x.Dims()
				for _, w := range [][]float64{nil, randWeights(56, tt)} {
					orig := mat.DenseCopyOf(in.x)
					var worig []float64
					worig = append(worig, w...)
					got, err := e.fn(nil, in.x, w)
					require.True(t, mat.Equal(orig, in.x), "input modified")
					require.Equal(t, worig, append([]float64(nil), w...))
					if want := e.errs[in.name]; want != nil {
						require.ErrorIs(t, err, want)
						var de *DataError
						require.ErrorAs(t, err, &de)
						continue
					}
					require.NoError(t, err)
					requirePSD(t, got, 1e-10)
					again, err := e.fn(got, in.x, w)
					require.NoError(t, err)
					require.Same(t, got, again)
					first, _ := e.fn(nil, in.x, w)
					require.True(t, mat.Equal(first, again), "dst reuse changed the answer")
				}
			})
		}
	}
}

// TestBadInput: non-finite values, too few rows, bad weights and shape
// misuse, for every estimator.
func TestBadInput(t *testing.T) {
	for _, e := range estimators() {
		t.Run(e.name, func(t *testing.T) {
			for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
				x := randReturns(61, 30, 5)
				x.Set(3, 2, v)
				x.Set(7, 1, v) // a later one is not reported
				_, err := e.fn(nil, x, nil)
				require.ErrorIs(t, err, ErrNonFinite)
				var de *DataError
				require.ErrorAs(t, err, &de)
				require.Equal(t, 3, de.Row)
				require.Equal(t, 2, de.Col)
				require.Contains(t, err.Error(), "row 3, column 2")
			}
			_, err := e.fn(nil, randReturns(62, 1, 4), nil)
			require.ErrorIs(t, err, ErrTooFewObs)

			x := randReturns(63, 30, 5)
			w := randWeights(64, 30)
			w[4] = -0.1
			_, err = e.fn(nil, x, w)
			require.ErrorIs(t, err, ErrWeights)
			var de *DataError
			require.ErrorAs(t, err, &de)
			require.Equal(t, 4, de.Row)
			w[4] = math.NaN()
			_, err = e.fn(nil, x, w)
			require.ErrorIs(t, err, ErrWeights)
			_, err = e.fn(nil, x, make([]float64, 30))
			require.ErrorIs(t, err, ErrWeights)
			one := make([]float64, 30) // a single positive weight: one observation
			one[0] = 1
			_, err = e.fn(nil, x, one)
			require.ErrorIs(t, err, ErrTooFewObs)

			require.PanicsWithValue(t, mat.ErrShape, func() { e.fn(nil, x, make([]float64, 29)) })
			require.PanicsWithValue(t, mat.ErrShape, func() { e.fn(mat.NewSymDense(4, nil), x, nil) })
			var empty mat.SymDense
			got, err := e.fn(&empty, x, nil)
			require.NoError(t, err)
			require.Same(t, &empty, got, "an empty dst is sized and filled")
			require.Equal(t, 5, empty.SymmetricDim())
			if !strings.HasSuffix(e.name, "Implicit") { // these take no dst
				bad := randReturns(61, 30, 5)
				bad.Set(0, 0, math.NaN())
				require.PanicsWithValue(t, mat.ErrShape, func() { e.fn(mat.NewSymDense(4, nil), bad, nil) },
					"a wrong-sized dst panics before the data are read")
			}
		})
	}
	_, _, err := SchaferStrimmer(nil, randReturns(65, 2, 3), nil)
	require.ErrorIs(t, err, ErrTooFewObs)
	_, _, err = SingleIndex(nil, mat.NewDense(10, 3, nil), nil)
	require.ErrorIs(t, err, ErrZeroVariance)
	c := randReturns(66, 30, 4)
	for i := 0; i < 30; i++ {
		c.Set(i, 2, -0.02)
	}
	_, _, err = ConstantCorrelation(nil, c, nil)
	var de *DataError
	require.ErrorAs(t, err, &de)
	require.Equal(t, 2, de.Col)
	require.Contains(t, err.Error(), "column 2")
}

// TestEqualWeights: equal weights, whatever their scale, give the unweighted
// answer for every estimator.
func TestEqualWeights(t *testing.T) {
	for _, e := range estimators() {
		for _, in := range propertyInputs()[:2] {
			t.Run(e.name+"/"+in.name, func(t *testing.T) {
				tt, _ := in.x.Dims()
				eq := make([]float64, tt)
				for i := range eq {
					eq[i] = 0.7
				}
				a, err := e.fn(nil, in.x, nil)
				require.NoError(t, err)
				b, err := e.fn(nil, in.x, eq)
				require.NoError(t, err)
				require.True(t, mat.EqualApprox(a, b, 1e-12*mat.Max(a)))
			})
		}
	}
}
