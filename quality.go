package riskmodel

import (
	"math"
	"sort"

	"github.com/montanaflynn/stats"
)

// QualityOptions adjusts Quality. A nil *QualityOptions, or a zero or
// negative field, means the documented default.
type QualityOptions struct {
	// ImplausibleLimit: a simple return above it is listed as implausible.
	// Default 1.0 (a 100 % gain in one period; common practice, no source).
	ImplausibleLimit float64
	// OutlierMADs: a return farther than OutlierMADs median absolute
	// deviations (unscaled) from its asset's median is an outlier. Default 10,
	// about 6.7 standard deviations for normal data, since 1 MAD ≈ 0.6745 σ
	// (common practice, no source).
	OutlierMADs float64
	// StaleRun: at least this many consecutive observed zero returns of one
	// asset are listed as a stale run (an unchanged price). Default 5, a
	// trading week (common practice, no source).
	StaleRun int
	// MinObs: assets with fewer observations are listed as dropped. Default 1,
	// so only assets with no observation at all are listed.
	MinObs int
}

const (
	defaultImplausible = 1.0
	defaultOutlierMADs = 10
	defaultStaleRun    = 5
)

func (o *QualityOptions) withDefaults() QualityOptions {
	var q QualityOptions
	if o != nil {
		q = *o
	}
	if !(q.ImplausibleLimit > 0) {
		q.ImplausibleLimit = defaultImplausible
	}
	if !(q.OutlierMADs > 0) {
		q.OutlierMADs = defaultOutlierMADs
	}
	if q.StaleRun <= 0 {
		q.StaleRun = defaultStaleRun
	}
	if q.MinObs <= 0 {
		q.MinObs = 1
	}
	return q
}

// Observation is one return of one asset.
type Observation struct {
	Asset  string
	Date   Date
	Return float64
}

// Outlier is a return far from its asset's typical return:
//
//	Score = |Return − Median| / MAD,  MAD = median |r_t − Median|
//
// over the asset's observed returns in the panel.
type Outlier struct {
	Observation
	Median, MAD, Score float64
}

// StaleRun is a run of consecutive observed zero returns of one asset, as an
// unchanged price gives. A missing date ends a run.
type StaleRun struct {
	Asset       string
	First, Last Date
	Length      int
}

// QualityReport describes a panel's data quality. Lists are in column
// order, then date order.
type QualityReport struct {
	Options     QualityOptions // the options used, defaults filled in
	Dates       int
	Assets      int
	First, Last Date // the panel's first and last dates; zero when it has none
	Observed    int  // non-missing cells

	// Coverage is Observed / (Dates · Assets), counting dates before an
	// asset's listing and after its delisting as missing.
	Coverage float64
	// Gaps is the number of missing cells inside assets' lives (after the
	// first and before the last observation: trading halts, lost records) and
	// MissingShare is Gaps divided by the cells inside those lives.
	Gaps         int
	MissingShare float64

	Listings    []Coverage    // assets first observed after the panel's first date
	Delistings  []Coverage    // assets last observed before the panel's last date
	Implausible []Observation // returns above Options.ImplausibleLimit
	Outliers    []Outlier     // returns beyond Options.OutlierMADs MADs
	// NoSpread lists assets whose MAD is zero (or that have no observation),
	// for which the outlier rule cannot be applied.
	NoSpread  []string
	StaleRuns []StaleRun
	Dropped   []Coverage // assets with fewer than Options.MinObs observations
}

// Quality computes the data-quality report of p. The outlier rule uses
// github.com/montanaflynn/stats' Median and MedianAbsoluteDeviation on each
// asset's returns with the missing values dropped first. Cost O(T·N log T).
func Quality(p *Panel, opts *QualityOptions) *QualityReport {
	o := opts.withDefaults()
	t, n := p.Dims()
	q := &QualityReport{Options: o, Dates: t, Assets: n}
	if t > 0 {
		q.First, q.Last = p.dates[0], p.dates[t-1]
	}
	life := 0
	x := make([]float64, 0, t)
	for j, c := range p.Coverage() {
		q.Observed += c.Count
		if c.Count < o.MinObs {
			q.Dropped = append(q.Dropped, c)
		}
		if c.Count == 0 {
			q.NoSpread = append(q.NoSpread, c.Asset)
			continue
		}
		if c.First > q.First {
			q.Listings = append(q.Listings, c)
		}
		if c.Last < q.Last {
			q.Delistings = append(q.Delistings, c)
		}
		x = x[:0]
		run, runStart := 0, 0
		endRun := func(i int) {
			if run >= o.StaleRun {
				q.StaleRuns = append(q.StaleRuns, StaleRun{Asset: c.Asset, First: p.dates[runStart], Last: p.dates[i-1], Length: run})
			}
			run = 0
		}
		span := 0
		for i := 0; i < t; i++ {
			d := p.dates[i]
			if d < c.First || d > c.Last {
				continue
			}
			span++
			v := p.r.At(i, j)
			if math.IsNaN(v) {
				endRun(i)
				continue
			}
			x = append(x, v)
			if v > o.ImplausibleLimit {
				q.Implausible = append(q.Implausible, Observation{Asset: c.Asset, Date: d, Return: v})
			}
			if v == 0 {
				if run == 0 {
					runStart = i
				}
				run++
			} else {
				endRun(i)
			}
		}
		endRun(sort.Search(t, func(i int) bool { return p.dates[i] > c.Last }))
		life += span
		q.Gaps += span - c.Count
		q.Outliers, q.NoSpread = outliers(q.Outliers, q.NoSpread, p, j, x, o.OutlierMADs)
	}
	if t*n > 0 {
		q.Coverage = float64(q.Observed) / float64(t*n)
	}
	if life > 0 {
		q.MissingShare = float64(q.Gaps) / float64(life)
	}
	return q
}

// outliers appends the outliers of column j, whose observed returns are x.
func outliers(dst []Outlier, noSpread []string, p *Panel, j int, x []float64, k float64) ([]Outlier, []string) {
	med, err1 := stats.Median(x)
	mad, err2 := stats.MedianAbsoluteDeviation(x)
	if err1 != nil || err2 != nil || !(mad > 0) {
		return dst, append(noSpread, p.assets[j])
	}
	t, _ := p.Dims()
	for i := 0; i < t; i++ {
		v := p.r.At(i, j)
		if math.IsNaN(v) {
			continue
		}
		if s := math.Abs(v-med) / mad; s > k {
			dst = append(dst, Outlier{
				Observation: Observation{Asset: p.assets[j], Date: p.dates[i], Return: v},
				Median:      med, MAD: mad, Score: s,
			})
		}
	}
	return dst, noSpread
}
