package riskmodel

import (
	"fmt"
	"sort"
)

// HoldingsMap returns the holdings as an identifier → weight map, the form
// package te's Align and Validate's test portfolio take. Holdings read by
// ReadHoldings have unique identifiers; for a repeated one the weights add.
func HoldingsMap(h []Holding) map[string]float64 {
	m := make(map[string]float64, len(h))
	for _, x := range h {
		m[x.Asset] += x.Weight
	}
	return m
}

// ActiveWeights returns portfolio − benchmark as an identifier → weight map
// over the assets held in either; an asset whose active weight is exactly
// zero is left out.
func ActiveWeights(portfolio, benchmark []Holding) map[string]float64 {
	a := HoldingsMap(portfolio)
	for _, x := range benchmark {
		a[x.Asset] -= x.Weight
	}
	for k, v := range a {
		if v == 0 {
			delete(a, k)
		}
	}
	return a
}

// GroupLabels returns each asset's value in the metadata column (a header of
// the asset file: "sector", "size_bucket" or any other). An asset with an
// empty cell gets the label "(none)", so that every asset belongs to a group.
// It returns an error wrapping ErrNoGroupColumn, naming the columns that do
// exist, when no asset has the column.
func GroupLabels(assets []AssetInfo, column string) (map[string]string, error) {
	out := make(map[string]string, len(assets))
	found := false
	have := map[string]bool{}
	for _, a := range assets {
		v, ok := a.Attributes[column]
		if column == colSector && !ok && a.Sector != "" {
			v, ok = a.Sector, true
		}
		if ok && v != "" {
			found = true
		} else {
			v = NoGroup
		}
		out[a.Asset] = v
		for k := range a.Attributes {
			have[k] = true
		}
	}
	if !found {
		cols := make([]string, 0, len(have))
		for k := range have {
			cols = append(cols, k)
		}
		sort.Strings(cols)
		return nil, fmt.Errorf("riskmodel: group by %q: %w (columns: %v)", column, ErrNoGroupColumn, cols)
	}
	return out, nil
}

// NoGroup labels an asset whose metadata has no value for the grouping
// column, or that has no metadata at all.
const NoGroup = "(none)"
