package main

import (
	"fmt"
	"io"
	"math"

	"github.com/riskmodel/riskmodel"
)

// metaMatch compares the panel's assets with the metadata file's.
type metaMatch struct {
	meta    int      // assets in the metadata file
	noMeta  []string // assets with returns and no metadata
	noRets  int      // assets in the metadata file without a column in the panel
	sectors int      // distinct sectors of the panel's assets
}

func matchAssets(p *riskmodel.Panel, assets []riskmodel.AssetInfo) metaMatch {
	m := metaMatch{meta: len(assets)}
	sector := make(map[string]string, len(assets))
	for _, a := range assets {
		sector[a.Asset] = a.Sector
		if _, ok := p.Column(a.Asset); !ok {
			m.noRets++
		}
	}
	seen := make(map[string]bool)
	for _, a := range p.Assets() {
		s, ok := sector[a]
		if !ok {
			m.noMeta = append(m.noMeta, a)
			continue
		}
		if !seen[s] {
			seen[s] = true
			m.sectors++
		}
	}
	return m
}

// listMax bounds the examples printed under each count.
const listMax = 5

func printSummary(w io.Writer, asof riskmodel.Date, q *riskmodel.QualityReport, m metaMatch) {
	o := q.Options
	fmt.Fprintf(w, "Data quality as of %s: %d dates from %s to %s\n", asof, q.Dates, q.First, q.Last)
	fmt.Fprintf(w, "  assets          %d in %d sectors (metadata for %d; %d without metadata; %d in metadata without returns)\n",
		q.Assets, m.sectors, m.meta, len(m.noMeta), m.noRets)
	fmt.Fprintf(w, "  coverage        %.2f %% of %d date-asset cells observed\n", 100*q.Coverage, q.Dates*q.Assets)
	fmt.Fprintf(w, "  missing share   %.3f %% inside assets' lives (%d missing days)\n", 100*q.MissingShare, q.Gaps)
	fmt.Fprintf(w, "  listings        %d assets start after %s\n", len(q.Listings), q.First)
	fmt.Fprintf(w, "  delistings      %d assets end before %s\n", len(q.Delistings), q.Last)
	fmt.Fprintf(w, "  implausible     %d returns above %g\n", len(q.Implausible), o.ImplausibleLimit)
	for _, x := range q.Implausible[:min(listMax, len(q.Implausible))] {
		fmt.Fprintf(w, "                  %s %s %.4f\n", x.Asset, x.Date, x.Return)
	}
	fmt.Fprintf(w, "  outliers        %d returns beyond %g median absolute deviations (%d assets without spread)\n",
		len(q.Outliers), o.OutlierMADs, len(q.NoSpread))
	for _, x := range q.Outliers[:min(listMax, len(q.Outliers))] {
		fmt.Fprintf(w, "                  %s %s %.4f (%.1f MADs)\n", x.Asset, x.Date, x.Return, x.Score)
	}
	fmt.Fprintf(w, "  stale runs      %d runs of %d or more zero returns\n", len(q.StaleRuns), o.StaleRun)
	for _, x := range q.StaleRuns[:min(listMax, len(q.StaleRuns))] {
		fmt.Fprintf(w, "                  %s %s to %s (%d days)\n", x.Asset, x.First, x.Last, x.Length)
	}
	fmt.Fprintf(w, "  too few obs     %d assets with fewer than %d observations\n", len(q.Dropped), o.MinObs)
}

func printValidation(w io.Writer, v *riskmodel.Validation, coverage float64, hasBenchmark bool, test string) {
	fmt.Fprintf(w, "Validation\n")
	fmt.Fprintf(w, "  finite          %v\n", v.Finite)
	fmt.Fprintf(w, "  pos. definite   %v (eigenvalues %.4g to %.4g)\n", v.PositiveDefinite, v.MinEigenvalue, v.MaxEigenvalue)
	fmt.Fprintf(w, "  condition       %.4g\n", v.Condition)
	if hasBenchmark {
		fmt.Fprintf(w, "  coverage        %.2f %% of the benchmark's weight (%d names missing)\n", 100*coverage, len(v.Uncovered))
	}
	if b := v.Bias; b != nil {
		state := "inside"
		if !b.Inside {
			state = "OUTSIDE"
		}
		fmt.Fprintf(w, "  bias statistic  %.3f over %d dates, %s the band [%.3f, %.3f]\n", b.Value, b.Observations, state, b.Lower, b.Upper)
		fmt.Fprintf(w, "  test portfolio  %s\n", test)
		fmt.Fprintf(w, "  forecast        %s\n", b.Miss())
	}
}

func printComparison(w io.Writer, c *riskmodel.Comparison) {
	fmt.Fprintf(w, "Change from the model of %s\n", c.Previous)
	fmt.Fprintf(w, "  assets          %d in both, %d added, %d removed\n", c.Common, c.Added, c.Removed)
	if c.Angles != nil {
		fmt.Fprintf(w, "  factor space    principal angles (degrees):")
		for _, a := range c.Angles {
			fmt.Fprintf(w, " %.2f", a*180/math.Pi)
		}
		fmt.Fprintln(w)
	}
	if c.HasTE {
		fmt.Fprintf(w, "  test portfolio  tracking error %.4f %% → %.4f %% a year\n", 100*c.TEPrevious, 100*c.TECurrent)
	}
	if len(c.Changes) > 0 {
		fmt.Fprintf(w, "  largest changes in %s volatility (a year)\n", c.RiskKind)
		for _, x := range c.Changes {
			fmt.Fprintf(w, "                  %-10s %7.3f %% → %7.3f %%\n", x.Asset, 100*x.Previous, 100*x.Current)
		}
	}
}
