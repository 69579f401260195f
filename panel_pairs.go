package riskmodel

import (
	"math"
	"math/bits"
	"slices"
)

// dropUnpaired drops assets until every two kept assets share at least
// minShared observed dates, which a pairwise estimate (the sample and ewma
// methods) needs for each of its entries: an asset delisted early in the
// window and one listed late can each have enough observations and none in
// common. It drops, one at a time, the asset in the most such pairs (ties:
// the one with fewer observations, then the later column) and returns the
// kept panel and the dropped assets' coverage in column order; p itself
// when nothing is dropped. An asset with fewer than minShared observations
// is dropped first.
//
// Two assets with c_i and c_j observations of T dates share at least
// c_i + c_j − T, so only pairs of gapped assets with c_i + c_j < T +
// minShared are counted, on bit sets of the observed dates: O(N·T) for the
// coverage, plus T/64 words for each such pair.
func (p *Panel) dropUnpaired(minShared int) (*Panel, []Coverage) {
	t, n := p.Dims()
	cov := p.Coverage()
	gone := make([]bool, n)
	var gapped []int // columns with a missing date, by ascending count
	for j, c := range cov {
		switch {
		case c.Count < minShared:
			gone[j] = true // it shares fewer than minShared with anything, itself included
		case c.Count < t:
			gapped = append(gapped, j)
		}
	}
	slices.SortStableFunc(gapped, func(a, b int) int { return cov[a].Count - cov[b].Count })
	words := (t + 63) / 64
	set := make([]uint64, n*words)
	for _, j := range gapped {
		s := set[j*words : (j+1)*words]
		for i := 0; i < t; i++ {
			if !math.IsNaN(p.r.At(i, j)) {
				s[i/64] |= 1 << (i % 64)
			}
		}
	}
	// A pair with a fully observed asset shares the other's count, at least
	// minShared now: only gapped pairs can fall short, and only those whose
	// counts sum below T + minShared.
	degree := make([]int, n)
	var pairs [][2]int
	for a, i := range gapped {
		for _, j := range gapped[a+1:] {
			if cov[i].Count+cov[j].Count >= t+minShared {
				break // gapped is sorted by count: every later j shares enough
			}
			si, sj := set[i*words:(i+1)*words], set[j*words:(j+1)*words]
			shared := 0
			for w := range si {
				shared += bits.OnesCount64(si[w] & sj[w])
			}
			if shared < minShared {
				pairs = append(pairs, [2]int{i, j})
				degree[i]++
				degree[j]++
			}
		}
	}
	for len(pairs) > 0 {
		worst := -1
		for j, d := range degree {
			if d > 0 && (worst < 0 || d > degree[worst] || d == degree[worst] && cov[j].Count <= cov[worst].Count) {
				worst = j
			}
		}
		gone[worst] = true
		degree[worst] = 0
		pairs = slices.DeleteFunc(pairs, func(pr [2]int) bool {
			if pr[0] != worst && pr[1] != worst {
				return false
			}
			degree[pr[0]+pr[1]-worst]--
			return true
		})
	}
	keep := make([]int, 0, n)
	var dropped []Coverage
	for j := range cov {
		if gone[j] {
			dropped = append(dropped, cov[j])
		} else {
			keep = append(keep, j)
		}
	}
	if dropped == nil {
		return p, nil
	}
	return p.Select(keep), dropped
}
