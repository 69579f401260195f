package riskmodel

import (
	"math"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// businessDays returns n weekdays from start (no holidays).
func businessDays(start Date, n int) []Date {
	var out []Date
	for d := start; len(out) < n; d++ {
		if w := d.Weekday(); w != time.Saturday && w != time.Sunday {
			out = append(out, d)
		}
	}
	return out
}

// TestInferFrequency: the spacing of the dates gives the frequency; the
// periods per year are common practice, no source.
func TestInferFrequency(t *testing.T) {
	step := func(start Date, n, days int) []Date {
		out := make([]Date, n)
		for i := range out {
			out[i] = start.AddDays(i * days)
		}
		return out
	}
	var monthEnds []Date
	for m := 1; m <= 24; m++ {
		monthEnds = append(monthEnds, DateOf(2030, time.Month(m+1), 0)) // day 0: the last day of month m
	}
	weeklyWithGap := step(DateOf(2030, 1, 4), 30, 7)
	weeklyWithGap = append(weeklyWithGap[:10], weeklyWithGap[11:]...) // one week missing
	for _, tc := range []struct {
		name    string
		dates   []Date
		want    string
		periods float64
		days    float64
	}{
		{"business days", businessDays(DateOf(2030, 1, 1), 300), "daily", 252, 1},
		{"calendar days", step(DateOf(2030, 1, 1), 50, 1), "daily", 252, 1},
		{"weekly", step(DateOf(2030, 1, 4), 100, 7), "weekly", 52, 7},
		{"weekly with a missing week", weeklyWithGap, "weekly", 52, 7},
		{"month ends", monthEnds, "monthly", 12, 31},
		{"quarterly", []Date{DateOf(2030, 3, 31), DateOf(2030, 6, 30), DateOf(2030, 9, 30), DateOf(2030, 12, 31), DateOf(2031, 3, 31)}, "quarterly", 4, 91.5}, // gaps 90, 91, 92, 92
		{"annual", []Date{DateOf(2028, 12, 31), DateOf(2029, 12, 31), DateOf(2030, 12, 31)}, "annual", 1, 365},
	} {
		t.Run(tc.name, func(t *testing.T) {
			f, err := InferFrequency(tc.dates)
			require.NoError(t, err)
			require.Equal(t, tc.want, f.Name)
			require.Equal(t, tc.periods, f.PeriodsPerYear)
			require.Equal(t, tc.days, f.MedianDays)
			require.True(t, f.Accepts(tc.periods))
		})
	}
	daily, _ := InferFrequency(businessDays(DateOf(2030, 1, 1), 30))
	weekly, _ := InferFrequency(step(DateOf(2030, 1, 4), 30, 7))
	for _, v := range []float64{252, 260, 365} {
		require.True(t, daily.Accepts(v), "%g for daily dates", v)
		require.False(t, weekly.Accepts(v), "%g for weekly dates", v)
	}
	require.Equal(t, "weekly (median gap 7 days)", weekly.String())

	_, err := InferFrequency(step(DateOf(2030, 1, 1), 20, 15))
	require.ErrorIs(t, err, ErrFrequency)
	require.ErrorContains(t, err, "median gap between dates is 15 days")
	_, err = InferFrequency([]Date{DateOf(2030, 1, 1)})
	require.ErrorIs(t, err, ErrFrequency)
	_, err = InferFrequency([]Date{DateOf(2030, 1, 2), DateOf(2030, 1, 1)})
	require.ErrorIs(t, err, ErrUnsorted)
}

func TestPanelWithPeriodsPerYear(t *testing.T) {
	p, err := NewPanel([]Date{DateOf(2030, 1, 4), DateOf(2030, 1, 11)}, []string{"QA"}, mat.NewDense(2, 1, []float64{0.01, 0.02}), 0)
	require.NoError(t, err)
	q, err := p.WithPeriodsPerYear(52)
	require.NoError(t, err)
	require.Equal(t, 52.0, q.PeriodsPerYear())
	require.Equal(t, 252.0, p.PeriodsPerYear(), "the original is unchanged")
	require.Equal(t, p.Dates(), q.Dates())
	require.Equal(t, 0.02, q.At(1, 0))
	for _, bad := range []float64{0, -1, math.Inf(1), math.NaN()} {
		_, err := p.WithPeriodsPerYear(bad)
		require.ErrorIs(t, err, ErrPeriodsPerYear)
	}
}
