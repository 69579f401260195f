package riskmodel

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

func smallDemo(t *testing.T) *Demo {
	t.Helper()
	d, err := GenerateDemo(&DemoConfig{Seed: 11, Assets: 60, Sectors: 5, Dates: 320})
	require.NoError(t, err)
	return d
}

func TestBuildEveryMethodGivesAValidModel(t *testing.T) {
	demo := smallDemo(t)
	p := demo.Panel
	tt, _ := p.Dims()
	asof := p.Date(tt - 1)
	sectors, caps := map[string]string{}, map[string]float64{}
	for _, a := range demo.Assets {
		sectors[a.Asset], caps[a.Asset] = a.Sector, a.MarketCap
	}
	for _, method := range Methods {
		t.Run(method, func(t *testing.T) {
			// 300 dates leave 48 regressions after the exposure model's
			// one-year momentum look-back.
			m, rep, err := Build(p, asof, &BuildOptions{Method: method, Window: 300, Factors: 4, Sectors: sectors, MarketCaps: caps})
			require.NoError(t, err)
			require.Equal(t, method, m.Method)
			require.Equal(t, rep.Assets, len(m.Assets))
			require.Equal(t, 300, rep.Dates)
			v := Validate(m, &ValidateOptions{Universe: m.Assets})
			require.True(t, v.PositiveDefinite, "%v", v.Problems)
			require.True(t, v.Finite)
			require.Greater(t, v.Condition, 1.0)
			// Every estimator keeps the total variance near the sample's: the
			// linear shrinkages preserve the trace exactly, the others move it
			// by the weighting or the imputation of missing returns.
			sample, _, err := Build(p, asof, &BuildOptions{Method: MethodSample, Window: 300})
			require.NoError(t, err)
			var tr, trSample float64
			for i := range m.Assets {
				require.Greater(t, m.Covariance().At(i, i), 0.0)
				tr += m.Covariance().At(i, i)
				trSample += sample.Dense.At(i, i)
			}
			require.InDelta(t, 1, tr/trSample, 0.5)
			if method == MethodLedoitWolf || method == MethodOAS {
				// Shrinking toward μI with μ = tr(S)/N keeps tr(S) (Ledoit &
				// Wolf 2004, section 2), S the divisor-T covariance of the
				// mean-filled window.
				win, err := p.Window(asof, 300)
				require.NoError(t, err)
				win, _ = win.DropSparse(150)
				x := win.ReturnsTo(nil)
				fillMeans(x)
				rows, cols := x.Dims()
				var trS float64
				for j := 0; j < cols; j++ {
					col := mat.Col(nil, j, x)
					mean := floats.Sum(col) / float64(rows)
					for _, v := range col {
						trS += (v - mean) * (v - mean) / float64(rows)
					}
				}
				require.InDelta(t, 1, tr/trS, 1e-12)
			}
			switch method {
			case MethodFactor, MethodSample, MethodEWMA, MethodExposure, MethodHybrid:
			default:
				require.Equal(t, rep.Missing, rep.Imputed, "every missing return is filled for %s", method)
			}
		})
	}
}

func TestBuildExposureDropsUnclassifiedAssets(t *testing.T) {
	demo := smallDemo(t)
	p := demo.Panel
	sectors, caps := map[string]string{}, map[string]float64{}
	for _, a := range demo.Assets {
		sectors[a.Asset], caps[a.Asset] = a.Sector, a.MarketCap
	}
	delete(sectors, p.Asset(3))
	caps[p.Asset(4)] = math.NaN()
	m, rep, err := Build(p, p.Date(319), &BuildOptions{Method: MethodExposure, Window: 300, Sectors: sectors, MarketCaps: caps})
	require.NoError(t, err)
	require.Equal(t, []string{p.Asset(3), p.Asset(4)}, rep.Unclassified)
	require.NotContains(t, m.Assets, p.Asset(3))
	require.Equal(t, "exposure", m.Factor.Info().Method)
	require.Equal(t, "market", m.Factor.FactorNames()[0])
	// Without metadata nothing can be regressed.
	_, _, err = Build(p, p.Date(319), &BuildOptions{Method: MethodHybrid, Window: 300})
	require.ErrorIs(t, err, ErrEmpty)
}

func TestBuildIgnoresReturnsAfterAsOf(t *testing.T) {
	demo := smallDemo(t)
	p := demo.Panel
	asofRow := 250
	asof := p.Date(asofRow)
	before, _, err := Build(p, asof, &BuildOptions{Method: MethodLedoitWolf, Window: 200})
	require.NoError(t, err)

	// Change every return after the as-of date.
	x := p.ReturnsTo(nil)
	tt, n := x.Dims()
	for i := asofRow + 1; i < tt; i++ {
		for j := 0; j < n; j++ {
			x.Set(i, j, 0.3)
		}
	}
	q, err := NewPanel(p.Dates(), p.Assets(), x, p.PeriodsPerYear())
	require.NoError(t, err)
	after, _, err := Build(q, asof, &BuildOptions{Method: MethodLedoitWolf, Window: 200})
	require.NoError(t, err)
	require.True(t, before.equal(after))
}

func TestBuildDropsSparseAssetsAndSaysSo(t *testing.T) {
	demo, err := GenerateDemo(&DemoConfig{Seed: 3, Assets: 30, Sectors: 3, Dates: 300, Stationary: true})
	require.NoError(t, err)
	p := demo.Panel
	tt, _ := p.Dims()
	asof := p.Date(tt - 1)
	// An asset listed 20 dates before the as-of date has fewer than half a
	// 250-date window of observations.
	x := p.ReturnsTo(nil)
	for i := 0; i < tt-20; i++ {
		x.Set(i, 0, math.NaN())
	}
	q, err := NewPanel(p.Dates(), p.Assets(), x, 0)
	require.NoError(t, err)
	m, rep, err := Build(q, asof, &BuildOptions{Method: MethodOAS, Window: 250})
	require.NoError(t, err)
	require.Len(t, rep.Dropped, 1)
	require.Equal(t, p.Asset(0), rep.Dropped[0].Asset)
	require.Equal(t, 20, rep.Dropped[0].Count)
	require.NotContains(t, m.Assets, p.Asset(0))
	require.Contains(t, m.Notes[0], "1 assets dropped")
}

func TestBuildRejectsUnknownMethodAndEmptyWindow(t *testing.T) {
	demo := smallDemo(t)
	p := demo.Panel
	_, _, err := Build(p, p.Date(100), &BuildOptions{Method: "magic"})
	require.ErrorIs(t, err, ErrMethod)
	_, _, err = Build(p, p.Date(0)-1, nil)
	require.ErrorIs(t, err, ErrEmpty)
}

func TestFillMeans(t *testing.T) {
	nan := math.NaN()
	x := mat.NewDense(3, 2, []float64{1, nan, nan, nan, 3, 4})
	require.Equal(t, 3, fillMeans(x))
	require.Equal(t, []float64{1, 4, 2, 4, 3, 4}, x.RawMatrix().Data)
}

func TestValidateFindsProblems(t *testing.T) {
	m := testDenseModel(t, 5)
	// An indefinite matrix.
	s := mat.NewSymDense(2, []float64{1, 2, 2, 1})
	bad := &Model{AsOf: m.AsOf, Assets: []string{"A", "B"}, PeriodsPerYear: 252, Method: "test", Dense: s}
	v := Validate(bad, &ValidateOptions{Universe: []string{"A", "B", "C"}})
	require.False(t, v.OK())
	require.False(t, v.PositiveDefinite)
	require.Equal(t, []string{"C"}, v.Uncovered)
	require.Len(t, v.Problems, 2)

	// Known extreme eigenvalues: diag(4, 1, 0.5) has condition number 8.
	diag := &Model{AsOf: m.AsOf, Assets: []string{"A", "B", "C"}, PeriodsPerYear: 252, Method: "test",
		Dense: mat.NewSymDense(3, []float64{4, 0, 0, 0, 1, 0, 0, 0, 0.5})}
	v = Validate(diag, nil)
	require.True(t, v.OK(), "%v", v.Problems)
	require.InDelta(t, 4, v.MaxEigenvalue, 1e-8)
	require.InDelta(t, 0.5, v.MinEigenvalue, 1e-8)
	require.InDelta(t, 8, v.Condition, 1e-6)
	v = Validate(diag, &ValidateOptions{MaxCondition: 5})
	require.Contains(t, v.Problems[0], "condition number 8")
}

func TestValidateFactorModelMatchesDenseEigenvalues(t *testing.T) {
	fm := testFactorModel(t, 5, 30, 3)
	v := Validate(fm, nil)
	var eig mat.EigenSym
	require.True(t, eig.Factorize(fm.Factor.CovarianceTo(nil), false))
	vals := eig.Values(nil) // ascending
	// The power iterations stop on a small change of the Rayleigh quotient,
	// which for clustered eigenvalues is reached before full accuracy: the
	// documented accuracy is 1e-4 relative.
	require.InDelta(t, vals[len(vals)-1], v.MaxEigenvalue, 1e-4*vals[len(vals)-1])
	require.InDelta(t, vals[0], v.MinEigenvalue, 1e-4*vals[0])
}

func TestBiasStatisticOfTheTrueCovariance(t *testing.T) {
	// Returns drawn from a known covariance give a bias statistic near 1.
	demo, err := GenerateDemo(&DemoConfig{Seed: 5, Assets: 40, Sectors: 4, Dates: 500, Stationary: true})
	require.NoError(t, err)
	truth := mat.NewSymDense(40, nil)
	demo.TrueCovarianceTo(truth, 0)
	m := &Model{AsOf: demo.Panel.Date(499), Assets: demo.Panel.Assets(), PeriodsPerYear: 252, Method: "truth", Dense: truth}
	b, err := BiasStatistic(m, demo.Panel, nil)
	require.NoError(t, err)
	require.Equal(t, 500, b.Observations)
	require.InDelta(t, 1, b.Value, 0.1)
	require.InDelta(t, 1-math.Sqrt(2.0/500), b.Lower, 1e-12)

	// Doubling the forecast volatility halves the statistic.
	scaled := mat.NewSymDense(40, nil)
	scaled.ScaleSym(4, truth)
	m.Dense = scaled
	b2, err := BiasStatistic(m, demo.Panel, nil)
	require.NoError(t, err)
	require.InDelta(t, b.Value/2, b2.Value, 1e-12)
}
