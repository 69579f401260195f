package factor_test

import (
	"math"
	"testing"

	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
)

// demoExposureInput is a stationary demo market (demo.Generate:
// known market, sector and style factors, Student-t specific returns) with
// the settings that give it to FitExposure: sectors and caps from its asset
// metadata, its four true style scores as caller characteristics, and equal
// weights (half-lives far beyond the sample) since the truth does not move.
type demoExposureInput struct {
	d     *demo.Market
	x     *mat.Dense
	s     factor.ExposureSettings
	truth *mat.Dense // T×K true factor returns
	b     *mat.Dense // N×K true exposures
	sigma *mat.SymDense
}

func demoExposure(t *testing.T, seed uint64, n, sectors, dates int, beta bool) demoExposureInput {
	t.Helper()
	d, err := demo.Generate(&demo.Config{Seed: seed, Assets: n, Sectors: sectors, Dates: dates, Stationary: true})
	require.NoError(t, err)
	in := demoExposureInput{d: d, x: d.Panel.ReturnsTo(nil), truth: d.FactorReturnsTo(nil), b: d.ExposuresTo(nil)}
	in.sigma = d.TrueCovarianceTo(nil, dates-1)
	sec := make([]string, n)
	caps := make([]float64, n)
	for j, a := range d.Assets {
		sec[j], caps[j] = a.Sector, a.MarketCap
	}
	var chars []factor.Characteristic
	for q, name := range d.StyleNames {
		chars = append(chars, factor.Characteristic{Name: name, Static: mat.Col(nil, 1+sectors+q, in.b)})
	}
	if beta {
		chars = append(chars, factor.Characteristic{Name: "beta", Static: mat.Col(nil, 0, in.b)})
	}
	in.s = factor.ExposureSettings{
		Sectors: sec, StaticCaps: caps, NoSize: true, VolatilityWindow: -1, MomentumWindow: -1,
		Characteristics:  chars,
		Covariance:       ewma.Settings{VolHalfLife: 1e6, CorrHalfLife: 1e6},
		SpecificHalfLife: 1e6,
	}
	return in
}

// frobeniusLoss is ‖Σ̂ − Σ‖_F / ‖Σ‖_F.
func frobeniusLoss(est mat.Symmetric, truth *mat.SymDense) float64 {
	n := truth.SymmetricDim()
	var num, den float64
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			e := est.At(i, j) - truth.At(i, j)
			num += e * e
			den += truth.At(i, j) * truth.At(i, j)
		}
	}
	return math.Sqrt(num / den)
}

// TestExposureRecoversDemoFactors: on the demo market the regression's
// factor returns follow the true ones, and Σ is close to the true Σ.
//
// In the demo r = β·f_market + f_sector + styles + e with β ~ 1 + 0.2·N(0,1),
// its sector returns unconstrained and its style scores standardised with
// equal weights. The true betas are given here as a fifth caller style, so
// the model spans the demo's structure exactly. Under the constraint and
// the cap-weighted standardisation the regression then estimates
//
//	market:   β̄·f_market + Σ_s (c_s/C)·f_s + Σ_q m_q·f_q   (cap-weighted means β̄, m_q)
//	sector s: f_s − Σ_s (c_s/C)·f_s
//	style q:  σ_q·f_q, and "beta": σ_β·f_market            (up to scale)
//
// and these are the true counterparts below. The bounds are simulation
// results with margin (no outside source): with 1000 assets a sector's or
// style's estimation noise is well below its volatility.
func TestExposureRecoversDemoFactors(t *testing.T) {
	if testing.Short() {
		t.Skip("demo market regression")
	}
	const n, ns, dates = 1000, 6, 500
	in := demoExposure(t, 7, n, ns, dates, true)
	m, reg, err := factor.FitExposure(in.x, in.s)
	require.NoError(t, err)
	require.ElementsMatch(t, in.d.SectorNames, reg.FactorNames[1:1+ns])
	nst := len(in.d.StyleNames)
	require.Equal(t, append(append([]string(nil), in.d.StyleNames...), "beta"), reg.FactorNames[1+ns:])
	demoSector := map[string]int{} // demo sector column of each sector name
	for q, name := range in.d.SectorNames {
		demoSector[name] = q
	}

	var total, bbar float64
	sectorCap := make([]float64, ns)
	styleMean := make([]float64, nst)
	for j, a := range in.d.Assets {
		c := a.MarketCap
		total += c
		sectorCap[demoSector[a.Sector]] += c
		bbar += c * in.b.At(j, 0)
		for q := range styleMean {
			styleMean[q] += c * in.b.At(j, 1+ns+q)
		}
	}
	bbar /= total
	mean := make([]float64, dates) // cap-weighted mean sector return
	mkt := make([]float64, dates)
	for i := range mean {
		for q := 0; q < ns; q++ {
			mean[i] += sectorCap[q] / total * in.truth.At(i, 1+q)
		}
		mkt[i] = bbar*in.truth.At(i, 0) + mean[i]
		for q, v := range styleMean {
			mkt[i] += v / total * in.truth.At(i, 1+ns+q)
		}
	}
	corr := func(k int, truth []float64) float64 {
		c := stat.Correlation(mat.Col(nil, k, reg.FactorReturns), truth, nil)
		t.Logf("%s: correlation with the truth %.4f", reg.FactorNames[k], c)
		return c
	}
	require.Greater(t, corr(0, mkt), 0.99)
	for q := 0; q < ns; q++ {
		tr := mat.Col(nil, 1+demoSector[reg.FactorNames[1+q]], in.truth)
		for i := range tr {
			tr[i] -= mean[i]
		}
		require.Greater(t, corr(1+q, tr), 0.9, reg.FactorNames[1+q])
	}
	for q := 0; q < nst; q++ {
		require.Greater(t, corr(1+ns+q, mat.Col(nil, 1+ns+q, in.truth)), 0.9, reg.FactorNames[1+ns+q])
	}
	require.Greater(t, corr(1+ns+nst, mat.Col(nil, 0, in.truth)), 0.9, "beta")
	var r2 float64
	for _, cs := range reg.Dates {
		r2 += cs.R2 / float64(len(reg.Dates))
		require.Less(t, cs.Cond, 100.0, "a well-spread demo design is well conditioned")
	}
	t.Logf("mean R² %.3f", r2)

	// Σ against the truth: closer than the sample covariance in Frobenius
	// loss, and portfolio risks close.
	loss := frobeniusLoss(m, in.sigma)
	var sample mat.SymDense
	_, _, err = ewma.Covariance(&sample, in.x, nil, &ewma.Options{Demean: true})
	require.NoError(t, err)
	sl := frobeniusLoss(&sample, in.sigma)
	t.Logf("Frobenius loss: exposure model %.4f, sample covariance %.4f", loss, sl)
	require.Less(t, loss, sl)
	require.Less(t, loss, 0.1)
	for name, w := range demoPortfolios(t, in.d) {
		v := mat.NewVecDense(n, w)
		ratio := math.Sqrt(mat.Inner(v, m, v) / mat.Inner(v, in.sigma, v))
		t.Logf("%s: forecast / true volatility %.4f", name, ratio)
		require.InDelta(t, 1, ratio, 0.1, name)
	}
}

// demoPortfolios are the demo's benchmark, its fund's active weights and an
// equal-weighted portfolio.
func demoPortfolios(t *testing.T, d *demo.Market) map[string][]float64 {
	bw, err := d.Weights(d.Benchmark)
	require.NoError(t, err)
	fw, err := d.Weights(d.Fund)
	require.NoError(t, err)
	_, n := d.Panel.Dims()
	eq := make([]float64, n)
	active := make([]float64, n)
	for j := range eq {
		eq[j] = 1 / float64(n)
		active[j] = fw[j] - bw[j]
	}
	return map[string][]float64{"benchmark": bw, "fund active": active, "equal weight": eq}
}
