package demo

import (
	"testing"

	"github.com/riskmodel/riskmodel"

	"github.com/stretchr/testify/require"
)

// TestDemoQuality checks that the data-quality report, with its default
// options, finds what the generator planted in the demo: every listing,
// delisting and halt, exactly the stale runs, the implausible return and
// each planted outlier (among the natural ones that fat tails and the stress
// episode produce).
func TestQuality(t *testing.T) {
	d, err := bundledDemo()
	require.NoError(t, err)
	q := riskmodel.Quality(d.Panel, nil)
	nt, _ := d.Panel.Dims()

	var listed, delisted []string
	for j, sp := range d.Spans {
		if sp.First > 0 {
			listed = append(listed, d.Panel.Asset(j))
		}
		if sp.Last < nt-1 {
			delisted = append(delisted, d.Panel.Asset(j))
		}
	}
	assets := func(cs []riskmodel.Coverage) []string {
		var s []string
		for _, c := range cs {
			s = append(s, c.Asset)
		}
		return s
	}
	require.Equal(t, listed, assets(q.Listings))
	require.Equal(t, delisted, assets(q.Delistings))

	halted := 0
	var stale []riskmodel.StaleRun
	outliers := map[riskmodel.Observation]bool{}
	for _, ev := range d.Events {
		a := d.Panel.Asset(ev.Column)
		switch ev.Kind {
		case Halt:
			halted += ev.Len
		case Stale:
			stale = append(stale, riskmodel.StaleRun{Asset: a, First: d.Panel.Date(ev.Start), Last: d.Panel.Date(ev.Start + ev.Len - 1), Length: ev.Len})
		case Outlier:
			outliers[riskmodel.Observation{Asset: a, Date: d.Panel.Date(ev.Start), Return: ev.Value}] = true
		}
	}
	require.Equal(t, halted, q.Gaps)
	require.Equal(t, stale, q.StaleRuns)
	require.Len(t, q.Implausible, 1)
	require.Equal(t, 1.25, q.Implausible[0].Return)
	found := 0
	for _, o := range q.Outliers {
		if outliers[o.Observation] {
			found++
		}
	}
	require.Equal(t, len(outliers), found, "planted outliers found")
	t.Logf("%d outliers reported, %d planted", len(q.Outliers), len(outliers))
}
