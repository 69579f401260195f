package riskmodel

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestBiasInWords(t *testing.T) {
	first, err := ParseDate("2024-01-02")
	require.NoError(t, err)
	last, err := ParseDate("2024-12-31")
	require.NoError(t, err)
	band := func(v float64) *Bias {
		b := &Bias{Observations: 252, First: first, Last: last, Value: v}
		half := math.Sqrt(2.0 / 252)
		b.Lower, b.Upper = 1-half, 1+half
		b.Inside = v >= b.Lower && v <= b.Upper
		return b
	}
	// A bias of 1.10: realised volatility 10 % above the forecast, so the
	// forecast was 1/1.10 − 1 = −9.09 % of the realised.
	high := band(1.10)
	require.InDelta(t, -0.0909090909, high.ForecastMiss(), 1e-9)
	require.Equal(t, "forecasts about 9 % too low over the last 252 dates (2024-01-02 to 2024-12-31): bias statistic 1.100, outside the band [0.911, 1.089]", high.Words())
	require.Equal(t, "test portfolio "+high.Words(), high.Problem())

	low := band(0.90)
	require.Equal(t, "forecasts about 11 % too high over the last 252 dates (2024-01-02 to 2024-12-31): bias statistic 0.900, outside the band [0.911, 1.089]", low.Words())

	on := band(1.002)
	require.Equal(t, "", on.Problem())
	require.Contains(t, on.Words(), "forecasts on target (within 0.5 %)")
	require.Contains(t, on.Words(), "inside the band")

	still := band(0)
	require.Contains(t, still.Words(), "did not move")
}
