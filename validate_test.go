package riskmodel

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

func TestFillMeans(t *testing.T) {
	nan := math.NaN()
	x := mat.NewDense(3, 2, []float64{1, nan, nan, nan, 3, 4})
	require.Equal(t, 3, fillMeans(x))
	require.Equal(t, []float64{1, 4, 2, 4, 3, 4}, x.RawMatrix().Data)
}

func TestValidateFindsProblems(t *testing.T) {
	m := testDenseModel(t, 5)
	// An indefinite matrix.
	s := mat.NewSymDense(2, []float64{1, 2, 2, 1})
	bad := &Model{AsOf: m.AsOf, Assets: []string{"A", "B"}, PeriodsPerYear: 252, Method: "test", Dense: s}
	v := Validate(bad, &ValidateOptions{Universe: []string{"A", "B", "C"}})
	require.False(t, v.OK())
	require.False(t, v.PositiveDefinite)
	require.Equal(t, []string{"C"}, v.Uncovered)
	require.Len(t, v.Problems, 2)

	// Known extreme eigenvalues: diag(4, 1, 0.5) has condition number 8.
	diag := &Model{AsOf: m.AsOf, Assets: []string{"A", "B", "C"}, PeriodsPerYear: 252, Method: "test",
		Dense: mat.NewSymDense(3, []float64{4, 0, 0, 0, 1, 0, 0, 0, 0.5})}
	v = Validate(diag, nil)
	require.True(t, v.OK(), "%v", v.Problems)
	require.InDelta(t, 4, v.MaxEigenvalue, 1e-8)
	require.InDelta(t, 0.5, v.MinEigenvalue, 1e-8)
	require.InDelta(t, 8, v.Condition, 1e-6)
	v = Validate(diag, &ValidateOptions{MaxCondition: 5})
	require.Contains(t, v.Problems[0], "condition number 8")
}

func TestValidateFactorModelMatchesDenseEigenvalues(t *testing.T) {
	fm := testFactorModel(t, 5, 30, 3)
	v := Validate(fm, nil)
	var eig mat.EigenSym
	require.True(t, eig.Factorize(fm.Factor.CovarianceTo(nil), false))
	vals := eig.Values(nil) // ascending
	// The power iterations stop on a small change of the Rayleigh quotient,
	// which for clustered eigenvalues is reached before full accuracy: the
	// documented accuracy is 1e-4 relative.
	require.InDelta(t, vals[len(vals)-1], v.MaxEigenvalue, 1e-4*vals[len(vals)-1])
	require.InDelta(t, vals[0], v.MinEigenvalue, 1e-4*vals[0])
}
