package te

import (
	"cmp"
	"slices"
)

// HotSpots returns the indices of the n assets with the largest contribution
// to tracking error, largest first, ties in increasing order of index: the
// hot spots of Litterman (1996). A negative contribution is a hedge: it
// reduces the tracking error. n larger than N is clipped to N; n ≤ 0 returns
// nil. The trade in each asset that would minimise the tracking error, and
// the tracking error after it, are Decomposition.Hedge and HedgedTE.
// Cost O(N log N).
//
// References:
//
// Litterman, R. (1996). Hot spots and hedges. Journal of Portfolio
// Management, special issue (issue and pages not verified here).
func (d *Decomposition) HotSpots(n int) []int {
	n = min(n, len(d.Contribution))
	if n <= 0 {
		return nil
	}
	ix := make([]int, len(d.Contribution))
	for i := range ix {
		ix[i] = i
	}
	slices.SortFunc(ix, func(i, j int) int {
		if c := cmp.Compare(d.Contribution[j], d.Contribution[i]); c != 0 {
			return c
		}
		return cmp.Compare(i, j)
	})
	return ix[:n:n]
}

// BestHedge returns the asset whose single trade (Hedge) lowers the tracking
// error the most, and the tracking error after that trade. Ties go to the
// smaller index. Cost O(N).
func (d *Decomposition) BestHedge() (asset int, hedgedTE float64) {
	asset, hedgedTE = 0, d.HedgedTE[0]
	for i, v := range d.HedgedTE[1:] {
		if v < hedgedTE {
			asset, hedgedTE = i+1, v
		}
	}
	return asset, hedgedTE
}
