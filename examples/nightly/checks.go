package main

import (
	"errors"
	"fmt"
	"log/slog"
	"math"
	"os"
	"path/filepath"
	"slices"

	"github.com/riskmodel/riskmodel"
)

// DefaultMinDates is the fewest dates in the window the job builds a model
// from. The reason: under normal returns a variance estimated from T dates
// has a relative standard error of about √(2/T) (Var(σ̂²) = 2σ⁴/(T−1)), so
// with fewer than 60 dates every volatility in the model is uncertain by
// more than ±18 %, and the bias statistic's band 1 ± √(2/T) that validation
// checks is as wide. Lower it with -min-dates only for a test.
const DefaultMinDates = 60

// The thresholds of the units check (common practice, no source). Daily
// equity returns have a median absolute value near 0.01 and almost none
// above 1 (a gain of 100 % in a period); prices and percent returns have a
// median absolute value of several units and many values above 1.
const (
	// maxImplausibleShare is the largest share of observed returns above 1
	// the job accepts without -accept-implausible.
	maxImplausibleShare = 0.10
	// maxDailyMedianAbs is the largest median absolute return for daily
	// data; it grows with the period as √(252 / periods per year), up to 1.
	maxDailyMedianAbs = 0.2
)

// asofSlack is how far past the last date an -asof may lie: one median gap
// between dates plus three days (a weekend after the last date of daily
// data, the days after a month end for monthly data).
const asofSlack = 3

// lastDateLook and minLastShare define a thin last date: fewer assets
// report on it than minLastShare of the median count of the lastDateLook
// dates before it, which is what a stale or stray row looks like.
const (
	lastDateLook = 20
	minLastShare = 0.5
)

// checkOutputs checks, before anything is read or built, that the store
// -out is a folder the job can write and that the -dense file can be
// written; it creates the store folder if it is missing.
func checkOutputs(cfg config) error {
	if fi, err := os.Stat(cfg.out); err == nil && !fi.IsDir() {
		return badInput{fmt.Errorf("-out %s is not a folder", cfg.out)}
	}
	if err := os.MkdirAll(cfg.out, 0o755); err != nil {
		return badInput{fmt.Errorf("-out: cannot create the store: %w", err)}
	}
	if err := probe(cfg.out, ".probe-"); err != nil {
		return badInput{fmt.Errorf("-out: cannot write into the store: %w", err)}
	}
	if cfg.dense == "" {
		return nil
	}
	if fi, err := os.Stat(cfg.dense); err == nil && fi.IsDir() {
		return badInput{fmt.Errorf("-dense %s is a folder, not a file", cfg.dense)}
	}
	if err := probe(filepath.Dir(cfg.dense), "."+filepath.Base(cfg.dense)+".probe-"); err != nil {
		return badInput{fmt.Errorf("-dense: cannot write next to %s: %w", cfg.dense, err)}
	}
	return nil
}

// probe creates and removes a file in dir.
func probe(dir, prefix string) error {
	f, err := os.CreateTemp(dir, prefix)
	if err != nil {
		return err
	}
	name := f.Name()
	f.Close()
	return os.Remove(name)
}

// periods is the outcome of the frequency check.
type periods struct {
	panel     *riskmodel.Panel // the returns with the periods per year the model uses
	record    string           // where the number came from, for model.json
	medianGap float64          // median calendar days between dates
}

// frequency infers the panel's frequency from its dates and refuses a
// -periods-per-year that contradicts it. Without the flag, the file's
// number (a Parquet file records one; CSV gets 252) is kept when it fits
// the dates (260 or 365 for daily data is a choice, not an error) and is
// replaced by the inferred one, with a warning, when it does not.
func frequency(cfg config, p *riskmodel.Panel, log *slog.Logger) (periods, error) {
	f, ferr := riskmodel.InferFrequency(p.Dates())
	use, record := cfg.periodsPerYear, ""
	switch {
	case ferr != nil && use == 0:
		return periods{}, badInput{fmt.Errorf("%s: %w; give -periods-per-year", cfg.returns, ferr)}
	case ferr != nil:
		log.Warn("frequency not inferred from the dates: using -periods-per-year", "periods_per_year", use, "reason", oneLine(ferr.Error()))
		record = fmt.Sprintf("%g given by -periods-per-year (dates irregular, median gap %g days)", use, f.MedianDays)
	case use != 0 && !f.Accepts(use):
		return periods{}, badInput{fmt.Errorf("%w: -periods-per-year %g, but the dates of %s are %s, which takes %g to %g periods a year",
			riskmodel.ErrFrequency, use, cfg.returns, f, f.MinPeriods, f.MaxPeriods)}
	case use != 0:
		record = fmt.Sprintf("%g given by -periods-per-year; dates %s", use, f)
	case f.Accepts(p.PeriodsPerYear()):
		use = p.PeriodsPerYear()
		record = fmt.Sprintf("%g from the file or its format's default; dates %s", use, f)
	default:
		use = f.PeriodsPerYear
		log.Warn("periods per year of the file do not match its dates: using the inferred number",
			"file", p.PeriodsPerYear(), "inferred", use, "frequency", f.String())
		record = fmt.Sprintf("%g inferred from the dates: %s (the file said %g)", use, f, p.PeriodsPerYear())
	}
	q, err := p.WithPeriodsPerYear(use)
	if err != nil {
		return periods{}, badInput{err}
	}
	log.Info("frequency", "periods_per_year", use, "record", record)
	return periods{panel: q, record: record, medianGap: f.MedianDays}, nil
}

// checkUnits refuses a window whose returns look like prices or percent
// returns: too many values above 1, or a median absolute value far above
// any return series'. With -accept-implausible it returns the finding as a
// warning instead (empty when the returns pass).
func checkUnits(cfg config, win *riskmodel.Panel) (warning string, err error) {
	t, n := win.Dims()
	abs := make([]float64, 0, t*n)
	above, positive := 0, 0
	for i := 0; i < t; i++ {
		for j := 0; j < n; j++ {
			v := win.At(i, j)
			if math.IsNaN(v) {
				continue
			}
			abs = append(abs, math.Abs(v))
			if v > 1 {
				above++
			}
			if v > 0 {
				positive++
			}
		}
	}
	if len(abs) == 0 {
		return "", nil
	}
	count := len(abs)
	med := orderStatistic(abs, count/2) // the upper median, as abs[count/2] of the sorted values
	share := float64(above) / float64(count)
	limit := math.Min(1, maxDailyMedianAbs*math.Sqrt(riskmodel.DailyPeriods/win.PeriodsPerYear()))
	if share <= maxImplausibleShare && med <= limit {
		return "", nil
	}
	cause := "percent returns (divide by 100)"
	if positive == count && med > 1 {
		cause = "prices, not returns (every value is positive; convert to p_t / p_{t-1} - 1)"
	}
	msg := fmt.Sprintf("%s: the returns look like %s: %.1f %% of %d observed values are above 1 (limit %.0f %%) and the median absolute value is %.4g (limit %.3g for %g periods a year)",
		cfg.returns, cause, 100*share, count, 100*maxImplausibleShare, med, limit, win.PeriodsPerYear())
	msg += "; returns are simple decimal returns per period (0.01 = 1 %); -accept-implausible builds anyway"
	if cfg.acceptImplausible {
		return msg, nil
	}
	return "", badInput{errors.New(msg)}
}

// orderStatistic returns the k-th smallest value of a (0-based), the value
// a[k] would hold after slices.Sort(a), and reorders a. It selects in
// expected O(len(a)) time (Hoare's quickselect with a median-of-three pivot
// and a three-way partition, so runs of equal values cost nothing extra),
// falling back to sorting the remaining range after 64 rounds, so the worst
// case is O(n log n). a holds no NaN.
//
// References: Hoare, C. A. R. (1961). Algorithm 65: Find. Communications of
// the ACM 4(7), 321–322.
func orderStatistic(a []float64, k int) float64 {
	lo, hi := 0, len(a) // the k-th smallest is in a[lo:hi]
	for round := 0; hi-lo > 16; round++ {
		if round == 64 {
			break
		}
		p := median3(a[lo], a[lo+(hi-lo)/2], a[hi-1])
		// Dutch national flag: a[lo:lt] < p, a[lt:i] == p, a[gt:hi] > p.
		lt, i, gt := lo, lo, hi
		for i < gt {
			switch v := a[i]; {
			case v < p:
				a[lt], a[i] = a[i], a[lt]
				lt++
				i++
			case v > p:
				gt--
				a[gt], a[i] = a[i], a[gt]
			default:
				i++
			}
		}
		switch {
		case k < lt:
			hi = lt
		case k >= gt:
			lo = gt
		default:
			return p
		}
	}
	slices.Sort(a[lo:hi])
	return a[k]
}

func median3(a, b, c float64) float64 {
	if a > b {
		a, b = b, a
	}
	if b > c {
		b = c
	}
	return max(a, b)
}

// checkDates refuses an -asof past the data, a last date on which few assets
// report, and a window shorter than -min-dates.
func checkDates(cfg config, p *riskmodel.Panel, asof riskmodel.Date, medianGap float64) (*riskmodel.Panel, error) {
	t, _ := p.Dims()
	last := p.Date(t - 1)
	slack := int(math.Ceil(medianGap)) + asofSlack
	if cfg.hasAsof && int(asof-last) > slack {
		return nil, badInput{fmt.Errorf("-asof %s is %d days after the last date with data, %s (at most %d days for dates %g days apart): the model would claim data it has not seen",
			asof, int(asof-last), last, slack, medianGap)}
	}
	win, err := p.Window(asof, cfg.build.Window)
	if err != nil {
		return nil, badInput{fmt.Errorf("-asof %s: %w (the file starts on %s)", asof, err, p.Date(0))}
	}
	wt, _ := win.Dims()
	if wt < cfg.minDates {
		return nil, badInput{fmt.Errorf("the window up to %s has %d dates, fewer than -min-dates %d: a volatility from so few dates is uncertain by more than ±%.0f %% (√(2/T))",
			asof, wt, cfg.minDates, 100*math.Sqrt(2/float64(cfg.minDates)))}
	}
	if n, med, ok := thinLastDate(win); ok {
		end := win.Date(wt - 1)
		return nil, badInput{fmt.Errorf("the last date %s has returns for %d assets against a median of %g on the %d dates before it (less than %.0f %%): a stale or stray row; give -asof the last complete date or fix %s",
			end, n, med, min(lastDateLook, wt-1), 100*minLastShare, cfg.returns)}
	}
	return win, nil
}

// thinLastDate reports whether the window's last date has fewer reporting
// assets than minLastShare of the median of the dates before it.
func thinLastDate(win *riskmodel.Panel) (int, float64, bool) {
	t, n := win.Dims()
	if t < 2 {
		return 0, 0, false
	}
	count := func(i int) int {
		c := 0
		for j := 0; j < n; j++ {
			if !math.IsNaN(win.At(i, j)) {
				c++
			}
		}
		return c
	}
	var before []float64
	for i := max(0, t-1-lastDateLook); i < t-1; i++ {
		before = append(before, float64(count(i)))
	}
	slices.Sort(before)
	med := before[len(before)/2]
	if len(before)%2 == 0 {
		med = (before[len(before)/2-1] + med) / 2
	}
	last := count(t - 1)
	return last, med, float64(last) < minLastShare*med
}
