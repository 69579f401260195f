package riskmodel

import (
	"math"
	"math/bits"
	"slices"
	"sort"

	"github.com/riskmodel/riskmodel/internal/dense"
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

// Quality computes the data-quality report of p. The outlier rule uses each
// asset's median and median absolute deviation over its observed returns,
// the definitions of github.com/montanaflynn/stats' Median and
// MedianAbsoluteDeviation (the tests check the two agree bit for bit).
// Columns are examined in blocks on up to GOMAXPROCS goroutines and the
// lists merged in column order, so the report does not depend on
// GOMAXPROCS. Cost O(T·N) expected.
func Quality(p *Panel, opts *QualityOptions) *QualityReport {
	o := opts.withDefaults()
	t, n := p.Dims()
	q := &QualityReport{Options: o, Dates: t, Assets: n}
	if t > 0 {
		q.First, q.Last = p.dates[0], p.dates[t-1]
	}
	blocks := (n + qualityBlock - 1) / qualityBlock
	parts := make([]qualityPart, blocks)
	dense.Parallel(blocks, func(b int) {
		parts[b].examine(p, &o, q.First, q.Last, b*qualityBlock, min(n, (b+1)*qualityBlock))
	})
	life := 0
	for i := range parts {
		r := &parts[i]
		q.Observed += r.observed
		q.Gaps += r.gaps
		life += r.life
		q.Listings = append(q.Listings, r.listings...)
		q.Delistings = append(q.Delistings, r.delistings...)
		q.Implausible = append(q.Implausible, r.implausible...)
		q.Outliers = append(q.Outliers, r.outliers...)
		q.NoSpread = append(q.NoSpread, r.noSpread...)
		q.StaleRuns = append(q.StaleRuns, r.staleRuns...)
		q.Dropped = append(q.Dropped, r.dropped...)
	}
	if t*n > 0 {
		q.Coverage = float64(q.Observed) / float64(t*n)
	}
	if life > 0 {
		q.MissingShare = float64(q.Gaps) / float64(life)
	}
	return q
}

// qualityBlock is the number of columns one goroutine of Quality examines
// at a time.
const qualityBlock = 64

// qualityPart is the report of one block of columns.
type qualityPart struct {
	observed, gaps, life int
	listings, delistings []Coverage
	implausible          []Observation
	outliers             []Outlier
	noSpread             []string
	staleRuns            []StaleRun
	dropped              []Coverage
}

// examine fills r with the report on columns j0..j1−1 of p, whose first and
// last dates are first and last.
func (r *qualityPart) examine(p *Panel, o *QualityOptions, first, last Date, j0, j1 int) {
	t, _ := p.Dims()
	x := make([]float64, 0, t)
	scratch := make([]float64, t)
	for j := j0; j < j1; j++ {
		c := p.columnCoverage(j)
		r.observed += c.Count
		if c.Count < o.MinObs {
			r.dropped = append(r.dropped, c)
		}
		if c.Count == 0 {
			r.noSpread = append(r.noSpread, c.Asset)
			continue
		}
		if c.First > first {
			r.listings = append(r.listings, c)
		}
		if c.Last < last {
			r.delistings = append(r.delistings, c)
		}
		x = x[:0]
		run, runStart := 0, 0
		endRun := func(i int) {
			if run >= o.StaleRun {
				r.staleRuns = append(r.staleRuns, StaleRun{Asset: c.Asset, First: p.dates[runStart], Last: p.dates[i-1], Length: run})
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
				r.implausible = append(r.implausible, Observation{Asset: c.Asset, Date: d, Return: v})
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
		r.life += span
		r.gaps += span - c.Count
		med, mad := medianMAD(x, scratch[:len(x)])
		if !(mad > 0) {
			r.noSpread = append(r.noSpread, c.Asset)
			continue
		}
		r.outliers = appendOutliers(r.outliers, p, j, med, mad, o.OutlierMADs)
	}
}

// medianMAD returns the median of x and the median of |x_i − median|, both
// as github.com/montanaflynn/stats defines them (the mean of the two middle
// values of an even count), using scratch (len(x)) and leaving x as it is.
// x must be non-empty and free of NaN. The medians are order statistics
// found by selection, O(len(x)) expected, where stats.Median and
// stats.MedianAbsoluteDeviation sort three times.
func medianMAD(x, scratch []float64) (med, mad float64) {
	copy(scratch, x)
	med = median(scratch)
	for i, v := range x {
		scratch[i] = math.Abs(v - med)
	}
	return med, median(scratch)
}

// median returns the median of the non-empty s, reordering s.
func median(s []float64) float64 {
	l := len(s)
	selectKth(s, l/2)
	if l%2 == 1 {
		return s[l/2]
	}
	lower := s[0]
	for _, v := range s[1 : l/2] {
		lower = max(lower, v)
	}
	return (lower + s[l/2]) / 2
}

// selectKth reorders s, which has no NaN, so that s[k] is the value sorting
// would put there, with s[:k] ≤ s[k] ≤ s[k+1:]: Hoare's selection with a
// median-of-three pivot, falling back to a sort of what is left when the
// partitions stop shrinking fast enough, so the worst case is O(n log n).
func selectKth(s []float64, k int) {
	lo, hi := 0, len(s)-1
	for budget := 2*bits.Len(uint(len(s))) + 4; hi > lo; budget-- {
		if budget == 0 || hi-lo < 16 {
			slices.Sort(s[lo : hi+1])
			return
		}
		a, b, c := s[lo], s[lo+(hi-lo)/2], s[hi]
		pivot := max(min(a, b), min(max(a, b), c))
		i, j := lo, hi
		for i <= j {
			for s[i] < pivot {
				i++
			}
			for s[j] > pivot {
				j--
			}
			if i <= j {
				s[i], s[j] = s[j], s[i]
				i++
				j--
			}
		}
		// Now s[lo..j] ≤ pivot ≤ s[i..hi] and s[j+1..i−1] = pivot.
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return
		}
	}
}

// appendOutliers appends the returns of column j farther than k·mad from med.
func appendOutliers(dst []Outlier, p *Panel, j int, med, mad, k float64) []Outlier {
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
	return dst
}
