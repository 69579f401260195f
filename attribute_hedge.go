package riskmodel

import (
	"cmp"
	"math"
	"slices"
)

// setHedges lists the top names by how much their single best trade lowers
// the tracking error, largest saving first, ties by asset order. A trade t
// in asset i alone (against cash) changes the active variance to
//
//	TE²(t) = TE² + 2t·(Σa)_i + t²·Σ_ii,
//
// a convex parabola with its minimum at t* = −(Σa)_i/Σ_ii (Litterman's
// hedge, te.Decomposition.Hedge). For a long-only fund the trade is limited
// to t ≥ −p_i (sell at most the holding) and to names it holds or the
// benchmark holds, so the best trade is t* clipped to that bound. With
// longOnly false every name may trade and t = t*. Cost O(N log N).
//
// References:
//
// Litterman, R. (1996). Hot spots and hedges. Journal of Portfolio
// Management, special issue.
func (r *Attribution) setHedges(run *attribution, top int, longOnly bool) {
	d, al := run.d, run.al
	te2 := d.TE * d.TE
	type cand struct {
		i        int
		t, after float64
		limited  bool
	}
	var cands []cand
	for i := range run.m.Assets {
		p, b := al.Portfolio[i], al.Benchmark[i]
		if longOnly && p == 0 && b == 0 {
			continue
		}
		c := cand{i: i, t: d.Hedge[i], after: d.HedgedTE[i]}
		if longOnly && c.t < -p {
			// The parabola rises away from t*, so the bound is the best
			// feasible trade.
			v := d.Volatility[i] * d.Volatility[i]
			sa := d.Marginal[i] * d.TE
			c.t, c.limited = -p, true
			c.after = math.Sqrt(max(0, te2+c.t*(2*sa+c.t*v)))
		}
		if c.t == 0 || !(c.after < d.TE) {
			continue
		}
		cands = append(cands, c)
	}
	slices.SortStableFunc(cands, func(a, b cand) int { return cmp.Compare(a.after, b.after) })
	for _, c := range cands[:min(top, len(cands))] {
		i := c.i
		r.Hedges = append(r.Hedges, HedgeRow{
			Asset: run.m.Assets[i], Group: run.labels[0][i], Current: al.Portfolio[i], Bench: al.Benchmark[i],
			Trade: c.t, After: al.Portfolio[i] + c.t, Limited: c.limited,
			HedgedTE: c.after * run.s, Saving: (d.TE - c.after) * run.s,
		})
	}
}
