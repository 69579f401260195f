package demo

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"

	"github.com/riskmodel/riskmodel"

	"gonum.org/v1/gonum/mat"
)

// Size buckets of the demo, by rank of market cap.
const (
	demoLargeShare = 0.2 // largest 20 % of assets
	demoMidShare   = 0.3 // the next 30 %
)

// finalCaps returns the market cap of every asset at the end of its listed
// life, rounded to 0.01: the cap at listing compounded by the true returns r.
func (d *Market) finalCaps(st structure, r *mat.Dense) []float64 {
	_, n := r.Dims()
	caps := make([]float64, n)
	for j := range caps {
		v := st.cap0[j]
		for i := d.Spans[j].First; i <= d.Spans[j].Last; i++ {
			v *= 1 + r.At(i, j)
		}
		caps[j] = math.Round(v*100) / 100
	}
	return caps
}

// assetInfo returns the metadata of every asset: its sector, its market cap
// and its size bucket.
func (d *Market) assetInfo(st structure, caps []float64) []riskmodel.AssetInfo {
	n := len(caps)
	order := make([]int, n)
	for j := range order {
		order[j] = j
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(caps[b], caps[a]) })
	bucket := make([]string, n)
	large := int(math.Ceil(demoLargeShare * float64(n)))
	mid := large + int(math.Ceil(demoMidShare*float64(n)))
	for rank, j := range order {
		switch {
		case rank < large:
			bucket[j] = "large"
		case rank < mid:
			bucket[j] = "mid"
		default:
			bucket[j] = "small"
		}
	}
	info := make([]riskmodel.AssetInfo, n)
	for j := range info {
		sector := d.SectorNames[st.sector[j]]
		info[j] = riskmodel.AssetInfo{
			Asset:      d.Panel.Asset(j),
			Sector:     sector,
			SizeBucket: bucket[j],
			MarketCap:  caps[j],
			Attributes: map[string]string{
				"sector":      sector,
				"size_bucket": bucket[j],
				"market_cap":  strconv.FormatFloat(caps[j], 'g', -1, 64),
			},
		}
	}
	return info
}

// benchmark weights the assets listed on the holdings row by market cap.
func (d *Market) benchmark() []riskmodel.Holding {
	var total float64
	var h []riskmodel.Holding
	for j, a := range d.Assets {
		if d.Spans[j].Last == d.HoldingsRow && d.Spans[j].First <= d.HoldingsRow {
			h = append(h, riskmodel.Holding{Asset: a.Asset, Weight: a.MarketCap})
			total += a.MarketCap
		}
	}
	for k := range h {
		h[k].Weight /= total
	}
	return h
}

// fund mixes the benchmark b with a tilt portfolio v that favours the trend
// and calm styles plus stock-specific views:
//
//	w = (1 − c)·b + c·v,   v_n ∝ max(0, score_n),   c = TE* / TE(v − b)
//
// The active weights are c·(v − b), so the tracking error is linear in c and
// c hits the configured TE* exactly, under the true covariance of the
// holdings row. Leaving market caps out of v keeps it away from b even when
// one market cap dominates. For c ≤ 1 the fund is long-only and holds every benchmark name;
// a TE* that needs c > 1 is out of reach.
func (d *Market) fund(rs *rand.Rand) ([]riskmodel.Holding, error) {
	bw, err := d.Weights(d.Benchmark)
	if err != nil {
		return nil, err
	}
	s := len(d.SectorNames)
	raw := make([]float64, len(bw))
	for j := range raw {
		raw[j] = 0.5*d.b.At(j, 2+s) + 0.3*d.b.At(j, 3+s) + 0.8*rs.NormFloat64()
	}
	var member []int
	for j, b := range bw {
		if b > 0 {
			member = append(member, j)
		}
	}
	// Standardise the scores over the benchmark's members only.
	ms := make([]float64, len(member))
	for q, j := range member {
		ms[q] = raw[j]
	}
	ms = standardise(ms)
	v := make([]float64, len(bw))
	var total float64
	for q, j := range member {
		v[j] = math.Max(0, ms[q])
		total += v[j]
	}
	if total == 0 {
		return nil, fmt.Errorf("riskmodel: %w: the benchmark has too few names for a fund", ErrConfig)
	}
	a := make([]float64, len(bw))
	for j := range v {
		v[j] /= total
		a[j] = v[j] - bw[j]
	}
	full := math.Sqrt(d.Panel.PeriodsPerYear() * d.activeVariance(a, d.HoldingsRow))
	c := d.Config.FundTrackingError / full
	if c > 1 {
		return nil, fmt.Errorf("riskmodel: %w: FundTrackingError = %v is out of reach (at most %.4f here)",
			ErrConfig, d.Config.FundTrackingError, full)
	}
	var h []riskmodel.Holding
	for _, j := range member {
		h = append(h, riskmodel.Holding{Asset: d.Panel.Asset(j), Weight: (1-c)*bw[j] + c*v[j]})
	}
	return h, nil
}

// activeVariance returns aᵀΣ_i a in factor form, xᵀF_i x + Σ a_n² d_in with
// x = Bᵀa, in O(N·K).
func (d *Market) activeVariance(a []float64, i int) float64 {
	n, k := d.b.Dims()
	x := make([]float64, k)
	var spec float64
	sv := d.svar.RawRowView(i)
	for j := 0; j < n; j++ {
		row := d.b.RawRowView(j)
		for q, v := range row {
			x[q] += v * a[j]
		}
		spec += a[j] * a[j] * sv[j]
	}
	f := d.FactorCovarianceTo(nil, i)
	var fac float64
	for p := 0; p < k; p++ {
		for q := 0; q < k; q++ {
			fac += x[p] * f.At(p, q) * x[q]
		}
	}
	return fac + spec
}
