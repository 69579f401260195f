package riskmodel

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/riskmodel/riskmodel/factor"
)

// The suffixes of a variant name (ParseVariant), each one switch of
// BuildOptions.
const (
	VariantEigen      = "eigen"      // Adjust.Eigen: eigen-adjusted factor covariance
	VariantDispersion = "dispersion" // Adjust.Dispersion: dispersion-corrected leading eigenvector
	VariantRegime     = "regime"     // Adjust.Regime: volatility-regime multiplier
	VariantHoldout    = "holdout"    // Criterion holdout-likelihood: K by held-out likelihood
	VariantHoldoutMV  = "holdout-mv" // Criterion holdout-min-variance
	VariantWeighted   = "weighted"   // Adjust.Weighted: factor space from volatility-weighted returns
	VariantBest       = "best"       // Factor.HoldoutBest: the holdout criteria's best k
)

// RecommendedVariant is the factor model with the corrections that
// forecast the risk of optimized portfolios best in the project's
// evaluation (README, "Risk of optimized portfolios"): K by the best
// held-out minimum-variance risk, the factor space from volatility-weighted
// returns and the dispersion-corrected leading eigenvector. It is the
// nightly job's default; BuildOptions' zero value stays the plain factor
// model (Bai–Ng IC_p2, no correction).
const RecommendedVariant = MethodFactor + "+" + VariantHoldoutMV + "+" + VariantBest + "+" + VariantWeighted + "+" + VariantDispersion

// ParseVariant returns the BuildOptions of a variant name: a method of
// Methods followed by "+"-separated switches, for example
// "factor+holdout+regime" or "ledoit-wolf+regime". The switches are the
// Variant constants and "k<N>" (Factors = N). Only regime applies to the
// dense methods; the others need the factor method.
func ParseVariant(name string) (BuildOptions, error) {
	parts := strings.Split(name, "+")
	o := BuildOptions{Method: strings.TrimSpace(parts[0])}
	bad := func(format string, a ...any) (BuildOptions, error) {
		return o, fmt.Errorf("riskmodel: variant %q: %w: %s", name, ErrMethod, fmt.Sprintf(format, a...))
	}
	known := false
	for _, m := range Methods {
		known = known || m == o.Method
	}
	if !known {
		return bad("unknown method %q (one of %v)", o.Method, Methods)
	}
	for _, p := range parts[1:] {
		p = strings.TrimSpace(p)
		isFactor := true
		switch {
		case p == VariantEigen:
			o.Adjust.Eigen = true
		case p == VariantDispersion:
			o.Adjust.Dispersion = true
		case p == VariantWeighted:
			o.Adjust.Weighted = true
		case p == VariantBest:
			o.Factor.HoldoutBest = true
		case p == VariantRegime:
			o.Adjust.Regime = true
			isFactor = false
		case p == VariantHoldout:
			o.Factor.Criterion = factor.HoldoutLikelihood.String()
		case p == VariantHoldoutMV:
			o.Factor.Criterion = factor.HoldoutMinVariance.String()
		case strings.HasPrefix(p, "k"):
			k, err := strconv.Atoi(p[1:])
			if err != nil || k < 1 {
				return bad("bad factor count %q", p)
			}
			o.Factor.K = k
		default:
			return bad("unknown switch %q (weighted, eigen, dispersion, regime, holdout, holdout-mv, best, k<N>)", p)
		}
		if isFactor && o.Method != MethodFactor {
			return bad("%q needs the factor method", p)
		}
	}
	return o, nil
}

// criterion resolves BuildOptions.Factor.Criterion.
func (o BuildOptions) criterion() (factor.Criterion, error) {
	if o.Factor.Criterion == "" {
		return factor.BaiNgICp2, nil
	}
	for c := factor.BaiNgICp2; c <= factor.HoldoutMinVariance; c++ {
		if c.String() == o.Factor.Criterion {
			return c, nil
		}
	}
	return 0, fmt.Errorf("%w: factor criterion %q", ErrMethod, o.Factor.Criterion)
}

// adjustSettings adds the switched-on corrections to the model's settings.
func (o BuildOptions) adjustSettings(s map[string]string) {
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	a := o.Adjust
	if o.Method == MethodFactor {
		if o.Factor.Criterion != "" {
			s["criterion"] = o.Factor.Criterion
		}
		if o.Factor.HoldoutBest {
			s["holdout_rule"] = "best"
		}
		if a.Dispersion {
			s["dispersion"] = "true"
		}
		if a.Weighted {
			s["weight_passes"] = strconv.Itoa(or(a.WeightPasses, factor.DefaultWeightPasses))
		}
		if a.Eigen {
			s["eigen_sims"] = strconv.Itoa(or(a.EigenSims, factor.DefaultEigenSims))
			s["eigen_scale"] = f(orf(a.EigenScale, factor.DefaultEigenScale))
		}
	}
	if a.Regime {
		s["regime_half_life"] = f(orf(a.RegimeHalfLife, factor.DefaultRegimeHalfLife))
	}
}

func or(v, d int) int {
	if v == 0 {
		return d
	}
	return v
}

func orf(v, d float64) float64 {
	if v == 0 {
		return d
	}
	return v
}

// factorAdjustNotes records the corrections Fit applied.
func factorAdjustNotes(info factor.Info, rep *BuildReport) {
	if h := info.Selection; h != nil && h.Holdout != nil {
		rep.Notes = append(rep.Notes, fmt.Sprintf("held-out choice of K over the last %d dates: likelihood %d (best %d), minimum variance %d (best %d), Bai–Ng IC_p2 %d",
			h.Holdout.Dates, h.Holdout.Likelihood, h.Holdout.BestLikelihood, h.Holdout.MinVarianceK, h.Holdout.BestMinVariance, h.BaiNgP2))
	}
	if w := info.Weighting; w != nil && len(w.Angles) > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("factor space from volatility-weighted returns (passes: %d; largest angle moved %.3f rad in the last; weights %.2f to %.2f × the median)",
			w.Passes, w.Angles[len(w.Angles)-1], w.MinWeight, w.MaxWeight))
	}
	if d := info.Dispersion; d != nil {
		rep.Notes = append(rep.Notes, fmt.Sprintf("leading eigenvector's dispersion shrunk by c = %.3f (moved %.3f rad)", d.Shrink, d.Angle))
	}
	if e := info.Eigen; e != nil {
		k := len(e.Gamma)
		rep.Notes = append(rep.Notes, fmt.Sprintf("factor covariance eigen-adjusted (%d simulations, a = %g): volatility scale %.3f for the largest eigenportfolio, %.3f for the smallest",
			e.Sims, e.Scale, e.Gamma[0], e.Gamma[k-1]))
	}
	if g := info.FactorRegime; g != nil {
		rep.Notes = append(rep.Notes, fmt.Sprintf("factor volatility regime: variances × %.3f (half-life %g)", g.Multiplier, g.HalfLife))
	}
	if g := info.SpecificRegime; g != nil {
		rep.Notes = append(rep.Notes, fmt.Sprintf("specific volatility regime: variances × %.3f (half-life %g)", g.Multiplier, g.HalfLife))
	}
}

// adjustDense applies the volatility-regime multiplier to a dense estimate:
// the asset returns of the window standardized by a rolling forecast with
// the estimator's own weighting (EWMA.VolHalfLife for ewma, Shrink.HalfLife or
// equal weights for the others).
func adjustDense(m *Model, win *Panel, o BuildOptions, rep *BuildReport) error {
	if m.Dense == nil || !o.Adjust.Regime {
		return nil
	}
	hl := o.Shrink.HalfLife
	if o.Method == MethodEWMA {
		hl = o.EWMA.VolHalfLife
	}
	g, err := factor.VolatilityRegime(win.r, factor.RegimeSettings{HalfLife: o.Adjust.RegimeHalfLife, ForecastHalfLife: hl})
	if err != nil {
		return err
	}
	m.Dense.ScaleSym(g.Multiplier, m.Dense)
	rep.Regime = g
	rep.Notes = append(rep.Notes, fmt.Sprintf("volatility regime: variances × %.3f (half-life %g)", g.Multiplier, g.HalfLife))
	return nil
}
