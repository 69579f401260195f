package factor

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Adjustments switch on Fit's corrections of the estimate for the risk of
// optimized portfolios and for volatility regimes. The zero value applies
// none; each is reported in Info when applied. Fit applies them in this
// order: weighted (the factor space), dispersion (on the loadings, before F
// is estimated), eigen (on F), regime (on F and D).
type Adjustments struct {
	// Dispersion shrinks the leading eigenvector's loadings toward their
	// mean (DispersionCorrect), re-orthonormalizes the other loadings
	// against it and recomputes the factor returns. With K factors, ℓ² is
	// the mean of the non-zero eigenvalues after the K-th, (tr S − Σ_{j≤K}
	// λ_j)/(r − K) with r = min(N, T − 1) (min(N, T) with AssumeCentered);
	// for K = 1 it is the paper's average of the other eigenvalues.
	Dispersion bool
	// Eigen eigen-adjusts F (EigenAdjust) with the Covariance settings, the
	// window's T dates and Settings.Seed; EigenSims and EigenScale are M
	// and a (0: DefaultEigenSims and DefaultEigenScale).
	Eigen      bool
	EigenSims  int
	EigenScale float64
	// Regime multiplies F by the volatility-regime multiplier of the factor
	// returns (forecast half-life Covariance.VolHalfLife) and D by that of
	// the residuals (SpecificHalfLife), see VolatilityRegime, with
	// half-life RegimeHalfLife (0: DefaultRegimeHalfLife).
	Regime         bool
	RegimeHalfLife float64
	// Weighted re-estimates the factor space from the returns divided by
	// each asset's residual volatility, WeightPasses times (0:
	// DefaultWeightPasses), see Weighting; it runs first, on the loadings.
	Weighted     bool
	WeightPasses int
}

// resolved returns a with the defaults of the switched-on corrections
// filled in, as recorded in Params.
func (a Adjustments) resolved() Adjustments {
	if a.Eigen {
		if a.EigenSims == 0 {
			a.EigenSims = DefaultEigenSims
		}
		if a.EigenScale == 0 {
			a.EigenScale = DefaultEigenScale
		}
	}
	if a.Weighted && a.WeightPasses == 0 {
		a.WeightPasses = DefaultWeightPasses
	}
	if a.Regime && a.RegimeHalfLife == 0 {
		a.RegimeHalfLife = DefaultRegimeHalfLife
	}
	return a
}

func (a Adjustments) validate() error {
	switch {
	case a.WeightPasses < 0:
		return fmt.Errorf("%w: WeightPasses = %d", ErrSettings, a.WeightPasses)
	case a.EigenSims < 0 || a.EigenSims == 1:
		return fmt.Errorf("%w: EigenSims = %d", ErrSettings, a.EigenSims)
	case !(a.EigenScale >= 0) || math.IsInf(a.EigenScale, 0):
		return fmt.Errorf("%w: EigenScale = %v", ErrSettings, a.EigenScale)
	case !(a.RegimeHalfLife >= 0) || math.IsInf(a.RegimeHalfLife, 0):
		return fmt.Errorf("%w: RegimeHalfLife = %v", ErrSettings, a.RegimeHalfLife)
	}
	return nil
}

// dispersion applies Adjustments.Dispersion to the orthonormal loadings b
// of the working data d (squared singular values sq of the current fit) and
// returns the new factor returns Z·B. Cost O(T·N·K + N·K²).
func (d *data) dispersion(r resolved, b *mat.Dense, sq []float64) (*mat.Dense, *Dispersion) {
	t, n := d.z.Dims()
	_, k := b.Dims()
	total := d.sumSquares() / float64(t)
	top := total
	for j := 0; j < k; j++ {
		top -= sq[j] / float64(t)
	}
	rank := min(n, t-1)
	if r.AssumeCentered {
		rank = min(n, t)
	}
	noise := 0.0
	if rank > k {
		noise = math.Max(top, 0) / float64(rank-k)
	}
	rep := correctDispersion(b, sq[0]/float64(t), noise)
	ret := dense.Mul(nil, d.z, b)
	return ret, &rep
}

// regime applies Adjustments.Regime: F and spec are scaled in place by the
// multipliers of the factor returns and of the residuals (NaN missing).
func regime(r resolved, f *mat.SymDense, spec []float64, ret, resid *mat.Dense, info *Info) error {
	a := r.Adjust.resolved()
	if f != nil {
		g, err := VolatilityRegime(ret, RegimeSettings{HalfLife: a.RegimeHalfLife, ForecastHalfLife: r.Covariance.VolHalfLife})
		if err != nil {
			return fmt.Errorf("factor: factor regime: %w", err)
		}
		f.ScaleSym(g.Multiplier, f)
		info.FactorRegime = g
	}
	g, err := VolatilityRegime(resid, RegimeSettings{HalfLife: a.RegimeHalfLife, ForecastHalfLife: r.SpecificHalfLife})
	if err != nil {
		return fmt.Errorf("factor: specific regime: %w", err)
	}
	for i := range spec {
		spec[i] *= g.Multiplier
	}
	info.SpecificRegime = g
	return nil
}
