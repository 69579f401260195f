package riskmodel

import (
	"strconv"
	"strings"
)

// Record returns the validation's results in words, for Model.Validation
// and the model's model.json: finite, symmetric, positive_definite,
// min_eigenvalue, max_eigenvalue, condition, uncovered (a count), the bias
// statistic with its observations, band and the forecast's miss in words
// (bias_forecast) when there is one, and problems
// ("none" or the list joined by "; "). Numbers keep full precision.
func (v *Validation) Record() map[string]string {
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	r := map[string]string{
		"finite":            strconv.FormatBool(v.Finite),
		"symmetric":         strconv.FormatBool(v.Symmetric),
		"positive_definite": strconv.FormatBool(v.PositiveDefinite),
		"min_eigenvalue":    f(v.MinEigenvalue),
		"max_eigenvalue":    f(v.MaxEigenvalue),
		"condition":         f(v.Condition),
		"uncovered":         strconv.Itoa(len(v.Uncovered)),
		"problems":          "none",
	}
	if len(v.Problems) > 0 {
		r["problems"] = strings.Join(v.Problems, "; ")
	}
	if b := v.Bias; b != nil {
		r["bias"] = f(b.Value)
		r["bias_observations"] = strconv.Itoa(b.Observations)
		r["bias_band"] = "[" + f(b.Lower) + ", " + f(b.Upper) + "]"
		r["bias_inside"] = strconv.FormatBool(b.Inside)
		r["bias_forecast"] = b.Words()
	}
	return r
}
