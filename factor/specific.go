package factor

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
)

// specificRule is how residual variances become specific variances, the
// rule described in Fit and shared by every model builder of the package.
type specificRule struct {
	HalfLife float64  // of the exponential weights; required
	Groups   []string // shrinkage groups; nil is one group
	Shrink   float64  // fixed intensity in (0, 1]; 0 estimates it per group
	NoShrink bool
	Floor    float64 // the smallest variance; 0 means 1 % of the median
}

// specificVariances returns the shrunk and floored residual variances
// described in Fit, and the report of what was done.
func specificVariances(resid *mat.Dense, s resolved) ([]float64, Specific, error) {
	return specificRule{
		HalfLife: s.SpecificHalfLife, Groups: s.Groups, Shrink: s.SpecificShrink,
		NoShrink: s.NoSpecificShrink, Floor: s.SpecificFloor,
	}.apply(resid)
}

// apply returns the specific variances of the T×N residuals (NaN missing)
// and the report of what was done.
func (s specificRule) apply(resid *mat.Dense) ([]float64, Specific, error) {
	t, n := resid.Dims()
	w, err := ewma.Weights(nil, t, s.HalfLife)
	if err != nil {
		return nil, Specific{}, fmt.Errorf("%w: SpecificHalfLife: %w", ErrSettings, err)
	}
	raw, err := ewma.Variances(nil, resid, w, nil)
	if err != nil {
		return nil, Specific{}, fmt.Errorf("factor: specific variances: %w", err)
	}

	// Group membership, in order of first appearance.
	var labels []string
	member := make([]int, n)
	if s.Groups != nil {
		at := map[string]int{}
		for i, g := range s.Groups {
			gi, ok := at[g]
			if !ok {
				gi = len(labels)
				at[g] = gi
				labels = append(labels, g)
			}
			member[i] = gi
		}
	}
	ng := max(len(labels), 1)
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
	case s.NoShrink:
	case s.Shrink > 0:
		for g := range shrink {
			shrink[g] = s.Shrink
		}
	default:
		num := make([]float64, ng)
		den := make([]float64, ng)
		for i, v := range raw {
			g := member[i]
			num[g] += varianceOfVariance(resid, i, w, v)
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
	floor := s.Floor
	if floor == 0 {
		sorted := slices.Clone(out)
		slices.Sort(sorted)
		floor = 0.01 * sorted[n/2]
		if !(floor > 0) {
			// Most residuals are zero (K close to the rank): keep risk positive.
			floor = math.Max(1e-12*mean[0], math.SmallestNonzeroFloat64)
			if !(floor > 0) || math.IsNaN(floor) {
				floor = 1e-300
			}
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

// varianceOfVariance estimates the sampling variance of the weighted mean
// d̂ = Σŵ_t e_t² over column j's observed dates, with ŵ the weights
// renormalized over them: Var̂(d̂) = Σŵ²·Σŵ_t(e_t² − d̂)²/(1 − Σŵ²).
func varianceOfVariance(resid *mat.Dense, j int, w []float64, d float64) float64 {
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
