package demo

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
)

// drawEvents draws the listed life of every asset, then the halts and the
// data faults inside those lives.
//
// A late listing starts on a row drawn uniformly from [T/20, 3T/4]; an early
// delisting ends on a row drawn from [T/4, 19T/20]. Halts last 1 to 8 rows,
// stale runs 5 to 15, outliers one. Events are placed at uniformly drawn
// columns and rows, redrawn until they keep one clear row from each other and
// from the ends of the listed life, so that each is a separate run a data
// check can find.
func drawEvents(c Config, rs *rand.Rand) ([]Span, []Event, error) {
	n, t := c.Assets, c.Dates
	spans := make([]Span, n)
	for j := range spans {
		spans[j] = Span{First: 0, Last: t - 1}
	}
	late := int(math.Round(c.LateListings * float64(n)))
	early := int(math.Round(c.EarlyDelistings * float64(n)))
	for q, j := range rs.Perm(n) {
		switch {
		case q < late:
			spans[j].First = t/20 + rs.IntN(3*t/4-t/20+1)
		case q < late+early:
			spans[j].Last = t/4 + rs.IntN(19*t/20-t/4+1)
		}
	}
	taken := make(map[int][]Event)
	var events []Event
	place := func(kind EventKind, count, minLen, maxLen int, value func(k int) float64) error {
		for k := 0; k < count; k++ {
			placed := false
			for try := 0; try < 1000 && !placed; try++ {
				j := rs.IntN(n)
				length := minLen + rs.IntN(maxLen-minLen+1)
				sp := spans[j]
				lo, hi := sp.First+1, sp.Last-length // start row range
				if hi < lo {
					continue
				}
				start := lo + rs.IntN(hi-lo+1)
				if clashes(taken[j], start, length) {
					continue
				}
				ev := Event{Kind: kind, Column: j, Start: start, Len: length, Value: value(k)}
				taken[j] = append(taken[j], ev)
				events = append(events, ev)
				placed = true
			}
			if !placed {
				return fmt.Errorf("riskmodel: %w: no room for %d %s events", ErrConfig, count, kind)
			}
		}
		return nil
	}
	if err := place(Halt, c.Halts, 1, 8, func(int) float64 { return math.NaN() }); err != nil {
		return nil, nil, err
	}
	if err := place(Stale, c.StaleRuns, 5, 15, func(int) float64 { return 0 }); err != nil {
		return nil, nil, err
	}
	outlier := func(k int) float64 {
		if k == 0 {
			return 1.25
		}
		v := math.Round((0.25+0.35*rs.Float64())*1e4) / 1e4
		if rs.IntN(2) == 0 {
			v = -v
		}
		return v
	}
	if err := place(Outlier, c.Outliers, 1, 1, outlier); err != nil {
		return nil, nil, err
	}
	slices.SortFunc(events, func(a, b Event) int {
		return cmp.Or(cmp.Compare(a.Column, b.Column), cmp.Compare(a.Start, b.Start))
	})
	return spans, events, nil
}

// clashes reports whether rows [start, start+length) come within one row of
// an event already taken.
func clashes(taken []Event, start, length int) bool {
	for _, ev := range taken {
		if start <= ev.Start+ev.Len && ev.Start <= start+length {
			return true
		}
	}
	return false
}
