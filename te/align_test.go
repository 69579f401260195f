package te

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestAlign(t *testing.T) {
	assets := []string{"QX01", "QX02", "QX03", "QX04"}
	port := map[string]float64{"QX01": 0.5, "QX03": 0.3, "ZZ09": 0.2}
	bench := map[string]float64{"QX01": 0.25, "QX02": 0.25, "QX04": 0.4, "ZZ07": 0.1}

	_, err := Align(assets, port, bench, nil)
	require.ErrorIs(t, err, ErrUncovered)
	var ue *UncoveredError
	require.True(t, errors.As(err, &ue))
	require.Equal(t, []string{"ZZ07", "ZZ09"}, ue.Assets, "every uncovered asset, both maps")
	require.Contains(t, err.Error(), "ZZ07, ZZ09")

	al, err := Align(assets, port, bench, &AlignOptions{UncoveredAsCash: true})
	require.NoError(t, err)
	require.Equal(t, []float64{0.5, 0, 0.3, 0}, al.Portfolio)
	require.Equal(t, []float64{0.25, 0.25, 0, 0.4}, al.Benchmark)
	require.Equal(t, []string{"ZZ07", "ZZ09"}, al.Cash)
	require.InDelta(t, 0.2, al.CashPortfolio, 0)
	require.InDelta(t, 0.1, al.CashBenchmark, 0)

	covered := map[string]float64{"QX02": 1}
	al, err = Align(assets, covered, nil, nil)
	require.NoError(t, err)
	require.Equal(t, []float64{0, 1, 0, 0}, al.Portfolio)
	require.Equal(t, []float64{0, 0, 0, 0}, al.Benchmark)
	require.Nil(t, al.Cash)
	require.Len(t, covered, 1, "input map unchanged")

	_, err = Align(assets, map[string]float64{}, bench, nil)
	require.ErrorIs(t, err, ErrEmpty)
	_, err = Align(assets, map[string]float64{"QX01": 0}, bench, nil)
	require.ErrorIs(t, err, ErrEmpty)
	_, err = Align(assets, map[string]float64{"QX01": math.NaN()}, nil, nil)
	require.ErrorIs(t, err, ErrNonFinite)
	var ie *InputError
	require.True(t, errors.As(err, &ie))
	require.Equal(t, "QX01", ie.Label)
	_, err = Align([]string{"QX01", "QX02", "QX01"}, covered, nil, nil)
	require.ErrorIs(t, err, ErrDuplicate)
	// A zero weight on an unknown asset holds nothing and is not an error.
	_, err = Align(assets, map[string]float64{"QX01": 1, "ZZ01": 0}, nil, nil)
	require.NoError(t, err)
}
