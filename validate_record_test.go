package riskmodel

import (
	"testing"

	"github.com/stretchr/testify/require"
)

func TestValidationRecord(t *testing.T) {
	v := &Validation{Finite: true, Symmetric: true, PositiveDefinite: true, MinEigenvalue: 1e-5, MaxEigenvalue: 0.25,
		Condition: 25000, Uncovered: []string{"QX"}, Bias: &Bias{Observations: 252, Value: 1.05, Lower: 0.9, Upper: 1.1, Inside: true}}
	require.Equal(t, map[string]string{
		"finite": "true", "symmetric": "true", "positive_definite": "true", "min_eigenvalue": "1e-05",
		"max_eigenvalue": "0.25", "condition": "25000", "uncovered": "1", "problems": "none",
		"bias": "1.05", "bias_observations": "252", "bias_band": "[0.9, 1.1]", "bias_inside": "true",
		"bias_forecast": "forecasts about 5 % too low over the last 252 dates: bias statistic 1.050, inside the band [0.900, 1.100]",
	}, v.Record())
	v.Problems = []string{"a", "b"}
	require.Equal(t, "a; b", v.Record()["problems"])
}
