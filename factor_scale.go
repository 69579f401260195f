package riskmodel

import (
	"math"
	"regexp"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/te"
)

// The report's scale of statistical factors.
//
// Principal-component loadings come out with unit norm, Σ_i B_ik² = 1, so a
// portfolio's exposure x_k = Σ_i a_i B_ik is tiny and the factor's
// volatility √F_kk huge (for 470 names, exposures near 0.002 and
// volatilities near 350 %); only their product means anything. The report
// rescales each statistical factor to unit cross-sectional RMS loadings,
//
//	r_k = √(Σ_i B_ik² / N),   B'_k = B_k / r_k,   F'_kl = r_k r_l F_kl,
//
// so that B'F'B'ᵀ = BFBᵀ and Σ is unchanged, and a typical stock's loading
// is ±1 as on a style factor: exposures are x_k / r_k and volatilities
// r_k √F_kk, while each factor's correlation and contribution are
// unchanged. The scaling is the report's, not the model's: the stored
// loadings keep the estimator's convention (orthonormal columns, which
// other code and the reference checks rely on), and a factor with a
// natural unit (the market, a sector, a style of an exposure model) is
// reported as stored. The RMS normalisation is common practice, no source.

// statisticalName matches the names Fit ("pc1".."pcK") and FitHybrid
// ("stat1"..) give their statistical factors.
var statisticalName = regexp.MustCompile(`^(pc|stat)[0-9]+$`)

// setFactors adds the factor and specific rows: statistical factors scaled
// to unit RMS loadings and labelled by what they resemble in the metadata.
func (r *Attribution) setFactors(run *attribution, assets []AssetInfo) {
	d := run.d
	if !d.Factored {
		return
	}
	names := run.m.Factor.FactorNames()
	var b *mat.Dense
	var pic *metadataPicture
	for k, f := range d.Factors {
		row := factorRow(names[k], f, run.s)
		if statisticalName.MatchString(names[k]) {
			if b == nil {
				b = run.m.Factor.LoadingsTo(nil)
				pic = newMetadataPicture(run.m.Assets, assets)
			}
			col := mat.Col(nil, k, b)
			if rk := rms(col); rk > 0 {
				row.Exposure /= rk
				row.Volatility *= rk
				row.LoadingScale = rk
			}
			row.Resembles, row.Label = pic.describe(col)
		}
		r.Factors = append(r.Factors, row)
	}
	sp := factorRow("specific", d.Specific, run.s)
	r.Specific = &sp
}

func factorRow(name string, f te.Source, s float64) FactorRow {
	return FactorRow{Factor: name, Exposure: f.Exposure, Volatility: f.Volatility * s, Correlation: f.Correlation,
		Contribution: f.Contribution * s, Percent: f.Percent, LoadingScale: 1}
}

// rms returns √(Σ x_i² / n), scaled against overflow.
func rms(x []float64) float64 {
	var big float64
	for _, v := range x {
		big = math.Max(big, math.Abs(v))
	}
	if big == 0 || len(x) == 0 {
		return 0
	}
	var s float64
	for _, v := range x {
		s += (v / big) * (v / big)
	}
	return big * math.Sqrt(s/float64(len(x)))
}
