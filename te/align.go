package te

import (
	"slices"
)

// AlignOptions are the settings of Align. The zero value (or nil) is the
// default: an asset the model does not cover is an error.
type AlignOptions struct {
	// UncoveredAsCash treats a held asset that the model does not cover as
	// cash, with zero risk: its weight is left out of the vectors and
	// reported in Aligned.Cash, CashPortfolio and CashBenchmark.
	UncoveredAsCash bool
}

// Aligned holds portfolio and benchmark weight vectors in the model's asset
// order, ready for an Analyzer.
type Aligned struct {
	Portfolio, Benchmark []float64
	// Cash lists the uncovered assets treated as cash (UncoveredAsCash), in
	// increasing order; CashPortfolio and CashBenchmark are their total
	// weights in the portfolio and the benchmark.
	Cash                         []string
	CashPortfolio, CashBenchmark float64
}

// Align builds the portfolio and benchmark vectors from identifier → weight
// maps and the model's asset list (identifiers in the model's order). An
// asset held in one map and not the other has weight 0 in the other, so its
// whole weight is active. A nil benchmark is a zero benchmark (absolute
// risk). The maps are not modified.
//
// Align returns an *UncoveredError wrapping ErrUncovered listing every held
// asset (in either map) that is not in assets, unless opts.UncoveredAsCash;
// an *InputError wrapping ErrDuplicate for an identifier that appears twice
// in assets, or ErrNonFinite for a non-finite weight (naming the map and
// identifier); ErrEmpty if the portfolio map holds no non-zero weight.
// Cost O(N + H log H) for H held assets.
func Align(assets []string, portfolio, benchmark map[string]float64, opts *AlignOptions) (*Aligned, error) {
	pos := make(map[string]int, len(assets))
	for i, s := range assets {
		if _, dup := pos[s]; dup {
			return nil, &InputError{Field: "assets", Index: i, Column: -1, Label: s, Err: ErrDuplicate}
		}
		pos[s] = i
	}
	out := &Aligned{Portfolio: make([]float64, len(assets)), Benchmark: make([]float64, len(assets))}
	var missing []string
	held := false
	fill := func(field string, w map[string]float64, dst []float64, cash *float64) error {
		for _, id := range sortedKeys(w) {
			v := w[id]
			if !finite(v) {
				return &InputError{Field: field, Index: -1, Column: -1, Label: id, Value: v, Err: ErrNonFinite}
			}
			i, ok := pos[id]
			if !ok {
				if v != 0 {
					missing = append(missing, id)
					*cash += v
				}
				continue
			}
			dst[i] = v
		}
		return nil
	}
	if err := fill("portfolio weight", portfolio, out.Portfolio, &out.CashPortfolio); err != nil {
		return nil, err
	}
	for _, v := range portfolio {
		held = held || v != 0
	}
	if !held {
		return nil, ErrEmpty
	}
	if err := fill("benchmark weight", benchmark, out.Benchmark, &out.CashBenchmark); err != nil {
		return nil, err
	}
	slices.Sort(missing)
	missing = slices.Compact(missing)
	if len(missing) > 0 {
		if opts == nil || !opts.UncoveredAsCash {
			return nil, &UncoveredError{Assets: missing}
		}
		out.Cash = missing
	}
	return out, nil
}

func sortedKeys(m map[string]float64) []string {
	ks := make([]string, 0, len(m))
	for k := range m {
		ks = append(ks, k)
	}
	slices.Sort(ks)
	return ks
}
