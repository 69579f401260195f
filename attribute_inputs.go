package riskmodel

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// checkWeights checks both sides' weights before any risk is computed:
// magnitudes (a weight beyond ±MaxAbsWeight is a unit or data error),
// sums (about 100 is percent typed for fractions; away from 1 is a warning,
// or an error for a declared long-only fund) and, with o.LongOnly, signs.
// It records each side's sum and number of names in the header. Non-finite
// weights are left to package te, which names them.
func (r *Attribution) checkWeights(portfolio, benchmark []Holding, o AttributionOptions) error {
	r.LongOnly = true
	for _, side := range []struct {
		name  string
		h     []Holding
		sum   *float64
		names *int
	}{{"portfolio", portfolio, &r.PortfolioSum, &r.PortfolioNames}, {"benchmark", benchmark, &r.BenchmarkSum, &r.BenchmarkNames}} {
		var big Holding
		for _, x := range side.h {
			if !finite(x.Weight) {
				continue
			}
			*side.sum += x.Weight
			if math.Abs(x.Weight) > math.Abs(big.Weight) {
				big = x
			}
			if side.name == "portfolio" && x.Weight < 0 {
				if o.LongOnly {
					return fmt.Errorf("riskmodel: attribute: %w: the long-only portfolio holds %g of %s", ErrWeightRange, x.Weight, x.Asset)
				}
				r.LongOnly = false
			}
		}
		// Percent first: 3 % typed as 3 is also beyond MaxAbsWeight.
		if len(side.h) > 0 && math.Abs(*side.sum-100) <= 10 {
			return fmt.Errorf("riskmodel: attribute: %w: the %s's weights sum to %g", ErrPercentWeights, side.name, *side.sum)
		}
		if math.Abs(big.Weight) > MaxAbsWeight || !finite(*side.sum) {
			return fmt.Errorf("riskmodel: attribute: %w: %s weight of %s is %g, beyond ±%g (weights are fractions of capital, 0.02 = 2 %%)",
				ErrWeightRange, side.name, big.Asset, big.Weight, MaxAbsWeight)
		}
		for _, w := range HoldingsMap(side.h) {
			if w != 0 {
				*side.names++
			}
		}
		if len(side.h) == 0 {
			continue // no benchmark: absolute risk
		}
		sum := *side.sum
		switch {
		case math.Abs(sum-1) <= o.SumTolerance:
		case o.LongOnly && side.name == "portfolio":
			return fmt.Errorf("riskmodel: attribute: %w: the long-only portfolio's weights sum to %g (tolerance %g)", ErrWeightSum, sum, o.SumTolerance)
		default:
			r.Warnings = append(r.Warnings, fmt.Sprintf("the %s's weights sum to %.6g, not 1 (tolerance %g): the difference is uninvested cash with no risk",
				side.name, sum, o.SumTolerance))
		}
	}
	return nil
}

func finite(v float64) bool { return v-v == 0 }

// warnCaseMatches warns of held names counted as cash that match a model
// identifier but for case.
func (r *Attribution) warnCaseMatches(run *attribution) {
	fold := make(map[string]string, len(run.m.Assets))
	for _, a := range run.m.Assets {
		fold[strings.ToLower(a)] = a
	}
	var pairs []string
	n := 0
	for _, c := range run.al.Cash {
		if a, ok := fold[strings.ToLower(c)]; ok {
			n++
			if len(pairs) < 3 {
				pairs = append(pairs, c+" → "+a)
			}
		}
	}
	if n > 0 {
		r.Warnings = append(r.Warnings, fmt.Sprintf("%d held names counted as cash match a model identifier but for case (%s); identifiers are case-sensitive",
			n, strings.Join(pairs, ", ")))
	}
}

// closestHint names, for up to three of the uncovered identifiers, the model
// identifiers closest to them: the same ignoring case, or else within an
// edit distance of 2. It returns "" when none is close.
func closestHint(uncovered, model []string) string {
	fold := make(map[string]string, len(model))
	for _, a := range model {
		fold[strings.ToLower(a)] = a
	}
	var pairs []string
	for _, c := range uncovered {
		if len(pairs) == 3 {
			break
		}
		if a, ok := fold[strings.ToLower(c)]; ok {
			pairs = append(pairs, c+" → "+a)
			continue
		}
		best, bestD := "", 3
		for _, a := range model {
			if d := editDistance(strings.ToLower(c), strings.ToLower(a), bestD); d < bestD {
				best, bestD = a, d
			}
		}
		if best != "" {
			pairs = append(pairs, c+" → "+best)
		}
	}
	if len(pairs) == 0 {
		return ""
	}
	sort.Strings(pairs)
	return "; closest model identifiers: " + strings.Join(pairs, ", ")
}

// editDistance returns the Levenshtein distance of a and b, or limit when it
// is limit or more (the rows stop early). Cost O(len(a)·len(b)).
func editDistance(a, b string, limit int) int {
	ra, rb := []rune(a), []rune(b)
	if d := len(ra) - len(rb); d >= limit || -d >= limit {
		return limit
	}
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		low := cur[0]
		for j := 1; j <= len(rb); j++ {
			c := 1
			if ra[i-1] == rb[j-1] {
				c = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+c)
			low = min(low, cur[j])
		}
		if low >= limit {
			return limit
		}
		prev, cur = cur, prev
	}
	return min(prev[len(rb)], limit)
}
