package factor

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
)

// shrunkSpecific returns the specific variances of the T×N specific returns
// resid (NaN missing) by the rule of Fit: exponentially weighted variances
// around zero, shrunk toward the plain mean of each group with the
// Schäfer–Strimmer intensity (or the fixed SpecificShrink), floored at
// SpecificFloor or 1 % of the median. It is the exposure model's own copy of
// the rule (Fit's lives with Fit), checked against the formulas written out
// naively in TestExposureSpecific.
func shrunkSpecific(resid *mat.Dense, groups []string, s ExposureSettings) ([]float64, Specific, error) {
	t, n := resid.Dims()
	for j := 0; j < n; j++ {
		var m int
		for i := 0; i < t; i++ {
			if !math.IsNaN(resid.At(i, j)) {
				m++
			}
		}
		if m < 2 {
			return nil, Specific{}, fmt.Errorf("%w: asset %d has %d specific returns, need 2", ErrNoObservations, j, m)
		}
	}
	w, err := ewma.Weights(nil, t, s.SpecificHalfLife)
	if err != nil {
		return nil, Specific{}, fmt.Errorf("%w: SpecificHalfLife: %w", ErrSettings, err)
	}
	raw, err := ewma.VariancesTo(nil, resid, w, nil)
	if err != nil {
		return nil, Specific{}, fmt.Errorf("factor: specific variances: %w", err)
	}

	var labels []string
	member := make([]int, n)
	at := map[string]int{}
	for i, g := range groups {
		gi, ok := at[g]
		if !ok {
			gi = len(labels)
			at[g] = gi
			labels = append(labels, g)
		}
		member[i] = gi
	}
	ng := len(labels)
	mean := make([]float64, ng)
	count := make([]float64, ng)
	for i, v := range raw {
		mean[member[i]] += v
		count[member[i]]++
	}
	for g := range mean {
		mean[g] /= count[g]
	}
	shrink := make([]float64, ng)
	switch {
	case s.NoSpecificShrink:
	case s.SpecificShrink > 0:
		for g := range shrink {
			shrink[g] = s.SpecificShrink
		}
	default:
		num := make([]float64, ng)
		den := make([]float64, ng)
		for i, v := range raw {
			g := member[i]
			num[g] += weightedVarianceOfVariance(resid, i, w, v)
			den[g] += (v - mean[g]) * (v - mean[g])
		}
		for g := range shrink {
			if den[g] > 0 {
				shrink[g] = math.Min(1, num[g]/den[g])
			}
		}
	}
	out := make([]float64, n)
	for i, v := range raw {
		g := member[i]
		out[i] = (1-shrink[g])*v + shrink[g]*mean[g]
	}
	floor := s.SpecificFloor
	if floor == 0 {
		sorted := slices.Clone(out)
		slices.Sort(sorted)
		floor = 0.01 * sorted[n/2]
		if !(floor > 0) {
			// Most specific returns are zero: keep every risk positive.
			floor = math.SmallestNonzeroFloat64
		}
	}
	rep := Specific{Groups: labels, Shrink: shrink, Floor: floor}
	for i, v := range out {
		if v < floor {
			out[i] = floor
			rep.Floored++
		}
	}
	return out, rep, nil
}

// weightedVarianceOfVariance is Var̂(d̂) = Σŵ²·Σŵ_t(e_t² − d̂)²/(1 − Σŵ²) for
// column j over its observed dates, ŵ the weights renormalised over them.
func weightedVarianceOfVariance(resid *mat.Dense, j int, w []float64, d float64) float64 {
	t, _ := resid.Dims()
	var sw, sw2, m2 float64
	for i := 0; i < t; i++ {
		e := resid.At(i, j)
		if math.IsNaN(e) {
			continue
		}
		dev := e*e - d
		sw += w[i]
		sw2 += w[i] * w[i]
		m2 += w[i] * dev * dev
	}
	if sw == 0 {
		return 0
	}
	sw2 /= sw * sw
	m2 /= sw
	if sw2 >= 1 {
		return 0
	}
	return sw2 * m2 / (1 - sw2)
}
