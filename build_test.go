package riskmodel_test

import (
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/demo"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

func smallDemo(t *testing.T) *demo.Market {
	t.Helper()
	d, err := demo.Generate(&demo.Config{Seed: 11, Assets: 60, Sectors: 5, Dates: 320})
	require.NoError(t, err)
	return d
}

func TestBuildEveryMethodGivesAValidModel(t *testing.T) {
	market := smallDemo(t)
	p := market.Panel
	tt, _ := p.Dims()
	asof := p.Date(tt - 1)
	sectors, caps := map[string]string{}, map[string]float64{}
	for _, a := range market.Assets {
		sectors[a.Asset], caps[a.Asset] = a.Sector, a.MarketCap
	}
	for _, method := range riskmodel.Methods {
		t.Run(method, func(t *testing.T) {
			// 300 dates leave 48 regressions after the exposure model's
			// one-year momentum look-back.
			m, rep, err := riskmodel.Build(p, asof, &riskmodel.BuildOptions{Method: method, Window: 300, Sectors: sectors, MarketCaps: caps, Factor: riskmodel.FactorOptions{K: 4}})
			require.NoError(t, err)
			require.Equal(t, method, m.Method)
			require.Equal(t, rep.Assets, len(m.Assets))
			require.Equal(t, 300, rep.Dates)
			v := riskmodel.Validate(m, &riskmodel.ValidateOptions{Universe: m.Assets})
			require.True(t, v.PositiveDefinite, "%v", v.Problems)
			require.True(t, v.Finite)
			require.Greater(t, v.Condition, 1.0)
			// Every estimator keeps the total variance near the sample's: the
			// linear shrinkages preserve the trace exactly, the others move it
			// by the weighting or the imputation of missing returns.
			sample, _, err := riskmodel.Build(p, asof, &riskmodel.BuildOptions{Method: riskmodel.MethodSample, Window: 300})
			require.NoError(t, err)
			var tr, trSample float64
			for i := range m.Assets {
				require.Greater(t, m.Covariance().At(i, i), 0.0)
				tr += m.Covariance().At(i, i)
				trSample += sample.Dense.At(i, i)
			}
			require.InDelta(t, 1, tr/trSample, 0.5)
			if method == riskmodel.MethodLedoitWolf || method == riskmodel.MethodOAS {
				// Shrinking toward μI with μ = tr(S)/N keeps tr(S) (Ledoit &
				// Wolf 2004, section 2), S the divisor-T covariance of the
				// mean-filled window.
				win, err := p.Window(asof, 300)
				require.NoError(t, err)
				win, _ = win.DropSparse(150)
				x := win.ReturnsTo(nil)
				riskmodel.FillMeans(x)
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
			case riskmodel.MethodFactor, riskmodel.MethodSample, riskmodel.MethodEWMA, riskmodel.MethodExposure, riskmodel.MethodHybrid:
			default:
				require.Equal(t, rep.Missing, rep.Imputed, "every missing return is filled for %s", method)
			}
		})
	}
}

func TestBuildExposureDropsUnclassifiedAssets(t *testing.T) {
	market := smallDemo(t)
	p := market.Panel
	sectors, caps := map[string]string{}, map[string]float64{}
	for _, a := range market.Assets {
		sectors[a.Asset], caps[a.Asset] = a.Sector, a.MarketCap
	}
	delete(sectors, p.Asset(3))
	caps[p.Asset(4)] = math.NaN()
	m, rep, err := riskmodel.Build(p, p.Date(319), &riskmodel.BuildOptions{Method: riskmodel.MethodExposure, Window: 300, Sectors: sectors, MarketCaps: caps})
	require.NoError(t, err)
	require.Equal(t, []string{p.Asset(3), p.Asset(4)}, rep.Unclassified)
	require.NotContains(t, m.Assets, p.Asset(3))
	require.Equal(t, "exposure", m.Factor.Info().Method)
	require.Equal(t, "market", m.Factor.FactorNames()[0])
	// Without metadata nothing can be regressed.
	_, _, err = riskmodel.Build(p, p.Date(319), &riskmodel.BuildOptions{Method: riskmodel.MethodHybrid, Window: 300})
	require.ErrorIs(t, err, riskmodel.ErrEmpty)
}

func TestBuildIgnoresReturnsAfterAsOf(t *testing.T) {
	market := smallDemo(t)
	p := market.Panel
	asofRow := 250
	asof := p.Date(asofRow)
	before, _, err := riskmodel.Build(p, asof, &riskmodel.BuildOptions{Method: riskmodel.MethodLedoitWolf, Window: 200})
	require.NoError(t, err)

	// Change every return after the as-of date.
	x := p.ReturnsTo(nil)
	tt, n := x.Dims()
	for i := asofRow + 1; i < tt; i++ {
		for j := 0; j < n; j++ {
			x.Set(i, j, 0.3)
		}
	}
	q, err := riskmodel.NewPanel(p.Dates(), p.Assets(), x, p.PeriodsPerYear())
	require.NoError(t, err)
	after, _, err := riskmodel.Build(q, asof, &riskmodel.BuildOptions{Method: riskmodel.MethodLedoitWolf, Window: 200})
	require.NoError(t, err)
	require.True(t, riskmodel.ModelsEqual(before, after))
}

func TestBuildDropsSparseAssetsAndSaysSo(t *testing.T) {
	market, err := demo.Generate(&demo.Config{Seed: 3, Assets: 30, Sectors: 3, Dates: 300, Stationary: true})
	require.NoError(t, err)
	p := market.Panel
	tt, _ := p.Dims()
	asof := p.Date(tt - 1)
	// An asset listed 20 dates before the as-of date has fewer than half a
	// 250-date window of observations.
	x := p.ReturnsTo(nil)
	for i := 0; i < tt-20; i++ {
		x.Set(i, 0, math.NaN())
	}
	q, err := riskmodel.NewPanel(p.Dates(), p.Assets(), x, 0)
	require.NoError(t, err)
	m, rep, err := riskmodel.Build(q, asof, &riskmodel.BuildOptions{Method: riskmodel.MethodOAS, Window: 250})
	require.NoError(t, err)
	require.Len(t, rep.Dropped, 1)
	require.Equal(t, p.Asset(0), rep.Dropped[0].Asset)
	require.Equal(t, 20, rep.Dropped[0].Count)
	require.NotContains(t, m.Assets, p.Asset(0))
	require.Contains(t, m.Notes[0], "1 assets dropped")
}

func TestBuildRejectsUnknownMethodAndEmptyWindow(t *testing.T) {
	market := smallDemo(t)
	p := market.Panel
	_, _, err := riskmodel.Build(p, p.Date(100), &riskmodel.BuildOptions{Method: "magic"})
	require.ErrorIs(t, err, riskmodel.ErrMethod)
	_, _, err = riskmodel.Build(p, p.Date(0)-1, nil)
	require.ErrorIs(t, err, riskmodel.ErrEmpty)
}

func TestBiasStatisticOfTheTrueCovariance(t *testing.T) {
	// Returns drawn from a known covariance give a bias statistic near 1.
	market, err := demo.Generate(&demo.Config{Seed: 5, Assets: 40, Sectors: 4, Dates: 500, Stationary: true})
	require.NoError(t, err)
	truth := mat.NewSymDense(40, nil)
	market.TrueCovarianceTo(truth, 0)
	m := &riskmodel.Model{AsOf: market.Panel.Date(499), Assets: market.Panel.Assets(), PeriodsPerYear: 252, Method: "truth", Dense: truth}
	b, err := riskmodel.BiasStatistic(m, market.Panel, nil)
	require.NoError(t, err)
	require.Equal(t, 500, b.Observations)
	require.InDelta(t, 1, b.Value, 0.1)
	require.InDelta(t, 1-math.Sqrt(2.0/500), b.Lower, 1e-12)

	// Doubling the forecast volatility halves the statistic.
	scaled := mat.NewSymDense(40, nil)
	scaled.ScaleSym(4, truth)
	m.Dense = scaled
	b2, err := riskmodel.BiasStatistic(m, market.Panel, nil)
	require.NoError(t, err)
	require.InDelta(t, b.Value/2, b2.Value, 1e-12)
}

// TestBuildPairwiseDropsAssetsThatShareTooFewDates: in a 250-date window an
// asset delisted after 126 dates and one listed for the last 125 each pass
// MinObs (125) but share one date, too few for a pairwise sample or ewma
// entry. Build drops the one with fewer observations, says so, and the
// model is the one built without that asset.
func TestBuildPairwiseDropsAssetsThatShareTooFewDates(t *testing.T) {
	market, err := demo.Generate(&demo.Config{Seed: 4, Assets: 30, Sectors: 3, Dates: 300, Stationary: true})
	require.NoError(t, err)
	p := market.Panel
	tt, _ := p.Dims()
	asof := p.Date(tt - 1)
	x := p.ReturnsTo(nil)
	start := tt - 250
	for i := start + 126; i < tt; i++ {
		x.Set(i, 0, math.NaN()) // delisted after 126 dates of the window
	}
	for i := 0; i < tt-125; i++ {
		x.Set(i, 1, math.NaN()) // listed for the last 125
	}
	q, err := riskmodel.NewPanel(p.Dates(), p.Assets(), x, 0)
	require.NoError(t, err)
	var keep []int
	for j := range p.Assets() {
		if j != 1 {
			keep = append(keep, j)
		}
	}
	without := q.Select(keep)
	for _, method := range []string{riskmodel.MethodSample, riskmodel.MethodEWMA} {
		opts := &riskmodel.BuildOptions{Method: method, Window: 250}
		m, rep, err := riskmodel.Build(q, asof, opts)
		require.NoError(t, err, method)
		require.Len(t, rep.Dropped, 1, method)
		require.Equal(t, p.Asset(1), rep.Dropped[0].Asset)
		require.Equal(t, 125, rep.Dropped[0].Count)
		require.NotContains(t, m.Assets, p.Asset(1))
		require.Contains(t, m.Notes[0], "1 assets dropped for sharing fewer than 2 dates with another asset")

		ref, _, err := riskmodel.Build(without, asof, opts)
		require.NoError(t, err, method)
		require.Equal(t, ref.Assets, m.Assets)
		require.True(t, mat.Equal(ref.Dense, m.Dense), method)
	}
	// Methods that are not pairwise keep both assets.
	m, rep, err := riskmodel.Build(q, asof, &riskmodel.BuildOptions{Method: riskmodel.MethodLedoitWolf, Window: 250})
	require.NoError(t, err)
	require.Empty(t, rep.Dropped)
	require.Contains(t, m.Assets, p.Asset(1))
}

// A date on which no asset has a return (a holiday written as a row of
// blanks) leaves the window: every method builds (the factor methods used
// to fail with factor.ErrEmptyDate), the report lists the date and a note
// says so, and the covariance is the one built on the panel without that
// row, bit for bit.
func TestBuildLeavesOutDatesWithNoReturn(t *testing.T) {
	market, err := demo.Generate(&demo.Config{Seed: 6, Assets: 30, Sectors: 3, Dates: 300, Stationary: true})
	require.NoError(t, err)
	p := market.Panel
	tt, n := p.Dims()
	asof := p.Date(tt - 1)
	holidays := []int{tt - 200, tt - 3}
	x := p.ReturnsTo(nil)
	for _, i := range holidays {
		for j := 0; j < n; j++ {
			x.Set(i, j, math.NaN())
		}
	}
	q, err := riskmodel.NewPanel(p.Dates(), p.Assets(), x, 0)
	require.NoError(t, err)
	var dates []riskmodel.Date
	var rows []float64
	for i := 0; i < tt; i++ {
		if !slices.Contains(holidays, i) {
			dates = append(dates, p.Date(i))
			rows = append(rows, x.RawRowView(i)...)
		}
	}
	without, err := riskmodel.NewPanel(dates, p.Assets(), mat.NewDense(len(dates), n, rows), 0)
	require.NoError(t, err)
	for _, method := range riskmodel.Methods {
		if method == riskmodel.MethodExposure || method == riskmodel.MethodHybrid {
			continue // they need asset metadata
		}
		m, rep, err := riskmodel.Build(q, asof, &riskmodel.BuildOptions{Method: method, Window: 250, MinObs: 100})
		require.NoError(t, err, method)
		require.Equal(t, []riskmodel.Date{p.Date(holidays[0]), p.Date(holidays[1])}, rep.EmptyDates, method)
		require.Equal(t, 248, rep.Dates, method)
		require.True(t, slices.ContainsFunc(m.Notes, func(s string) bool {
			return strings.HasPrefix(s, "2 dates of the window with no return for any kept asset left out, first "+p.Date(holidays[0]).String())
		}), "%s: %q", method, m.Notes)
		ref, refRep, err := riskmodel.Build(without, asof, &riskmodel.BuildOptions{Method: method, Window: 248, MinObs: 100})
		require.NoError(t, err, method)
		require.Empty(t, refRep.EmptyDates)
		require.Equal(t, ref.Assets, m.Assets, method)
		require.True(t, mat.Equal(ref.Covariance(), m.Covariance()), method)
	}
}
