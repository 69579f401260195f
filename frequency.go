package riskmodel

import (
	"fmt"
	"math"
	"slices"
)

// Frequency is the regular spacing of a return history's dates, inferred by
// InferFrequency.
type Frequency struct {
	Name string // "daily", "weekly", "monthly", "quarterly" or "annual"
	// PeriodsPerYear is the common number for the frequency: 252, 52, 12, 4
	// or 1.
	PeriodsPerYear float64
	// MinPeriods and MaxPeriods bound the periods per year a caller may give
	// for dates of this spacing: [200, 366] for daily dates (252 trading
	// days, 260 weekdays, 365 calendar days), [48, 53] for weekly ones, the
	// exact number otherwise.
	MinPeriods, MaxPeriods float64
	// MedianDays is the median number of calendar days between consecutive
	// dates, the statistic the frequency was inferred from.
	MedianDays float64
}

// frequencies are the regular spacings InferFrequency knows: the range of the
// median calendar-day gap, the usual periods per year and the range a caller
// may give (common practice, no source; the gaps allow for weekends and
// holidays in daily data and for month and quarter lengths).
var frequencies = []struct {
	name              string
	minGap, maxGap    float64
	periods, min, max float64
}{
	{"daily", 1, 4, DailyPeriods, 200, 366},
	{"weekly", 5, 10, WeeklyPeriods, 48, 53},
	{"monthly", 26, 35, MonthlyPeriods, 12, 12},
	{"quarterly", 85, 95, 4, 4, 4},
	{"annual", 360, 370, 1, 1, 1},
}

// InferFrequency infers the frequency of returns on these dates (strictly
// increasing) from the median calendar-day gap between consecutive dates:
// 1 to 4 days daily, 5 to 10 weekly, 26 to 35 monthly, 85 to 95 quarterly,
// 360 to 370 annual. The median ignores a few holidays or a missing week.
//
// It returns an error wrapping ErrFrequency for fewer than 2 dates or a
// median gap that matches none of these, and ErrUnsorted for dates that are
// not strictly increasing. Cost O(T log T).
func InferFrequency(dates []Date) (Frequency, error) {
	if len(dates) < 2 {
		return Frequency{}, fmt.Errorf("riskmodel: %w: %d dates, need 2 to see their spacing", ErrFrequency, len(dates))
	}
	gaps := make([]float64, len(dates)-1)
	for i := range gaps {
		g := dates[i+1] - dates[i]
		if g <= 0 {
			return Frequency{}, fmt.Errorf("riskmodel: %w: %s after %s", ErrUnsorted, dates[i+1], dates[i])
		}
		gaps[i] = float64(g)
	}
	slices.Sort(gaps)
	med := gaps[len(gaps)/2]
	if len(gaps)%2 == 0 {
		med = (gaps[len(gaps)/2-1] + med) / 2
	}
	for _, f := range frequencies {
		if med >= f.minGap && med <= f.maxGap {
			return Frequency{Name: f.name, PeriodsPerYear: f.periods, MinPeriods: f.min, MaxPeriods: f.max, MedianDays: med}, nil
		}
	}
	return Frequency{MedianDays: med}, fmt.Errorf("riskmodel: %w: the median gap between dates is %g days, which is not daily (1–4), weekly (5–10), monthly (26–35), quarterly (85–95) or annual (360–370)",
		ErrFrequency, med)
}

// Accepts reports whether periodsPerYear is a sensible number of periods per
// year for dates of this frequency.
func (f Frequency) Accepts(periodsPerYear float64) bool {
	return periodsPerYear >= f.MinPeriods && periodsPerYear <= f.MaxPeriods
}

// String describes the frequency and the evidence, for logs and records:
// "weekly (median gap 7 days)".
func (f Frequency) String() string {
	return fmt.Sprintf("%s (median gap %g days)", f.Name, f.MedianDays)
}

// WithPeriodsPerYear returns a panel with the same dates, assets and returns
// (shared, not copied: panels are immutable) and another number of periods
// per year. It returns an error wrapping ErrPeriodsPerYear for a value that
// is not positive and finite.
func (p *Panel) WithPeriodsPerYear(periodsPerYear float64) (*Panel, error) {
	if !(periodsPerYear > 0) || math.IsInf(periodsPerYear, 0) {
		return nil, fmt.Errorf("riskmodel: %w: %v", ErrPeriodsPerYear, periodsPerYear)
	}
	q := *p
	q.periodsPerYear = periodsPerYear
	return &q, nil
}
