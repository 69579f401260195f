package riskmodel

import (
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/te"
)

// denseTE is √(aᵀΣa·252) with Σ expanded densely, independently of te.
func denseTE(m *Model, a []float64) float64 {
	av := mat.NewVecDense(len(a), a)
	return math.Sqrt(mat.Inner(av, m.Factor.CovarianceTo(nil), av) * 252)
}

// active returns p − b in the model's order from the holdings.
func activeVector(m *Model, port, bench []Holding) []float64 {
	pw, bw := HoldingsMap(port), HoldingsMap(bench)
	a := make([]float64, len(m.Assets))
	for i, s := range m.Assets {
		a[i] = pw[s] - bw[s]
	}
	return a
}

// TestLongOnlyHedges: a long-only fund's hedge never sells more than the
// holding, trades only names held or in the benchmark, and is the best
// such trade: a grid search over t ≥ −p_i of the densely expanded TE finds
// nothing better. With Shorts the hedges are Litterman's −(Σa)_i/Σ_ii.
func TestLongOnlyHedges(t *testing.T) {
	m, _, bench, assets := reportFixture(t)
	// Large overweights in QA1 and QA3 and small holdings of QA5 and QA6,
	// whose best trades alone are sales larger than the holdings.
	port := []Holding{{"QA1", 0.47}, {"QA3", 0.5}, {"QA5", 0.02}, {"QA6", 0.01}}
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Top: 6})
	require.NoError(t, err)
	require.True(t, a.LongOnly)
	require.NotEmpty(t, a.Hedges)
	pw, bw := HoldingsMap(port), HoldingsMap(bench)
	act := activeVector(m, port, bench)
	idx := map[string]int{}
	for i, s := range m.Assets {
		idx[s] = i
	}
	limited := 0
	for _, h := range a.Hedges {
		require.GreaterOrEqual(t, h.Trade, -h.Current, "%s sells more than it holds", h.Asset)
		require.GreaterOrEqual(t, h.After, 0.0)
		require.Equal(t, pw[h.Asset], h.Current)
		require.Equal(t, bw[h.Asset], h.Bench)
		require.True(t, pw[h.Asset] > 0 || bw[h.Asset] > 0)
		i := idx[h.Asset]
		x := append([]float64(nil), act...)
		x[i] += h.Trade
		require.InDelta(t, denseTE(m, x), h.HedgedTE, 1e-12)
		require.InDelta(t, a.TrackingError-h.HedgedTE, h.Saving, 1e-15)
		best := math.Inf(1)
		for k := 0; k <= 4000; k++ {
			tr := -h.Current + float64(k)*1e-4
			x[i] = act[i] + tr
			best = math.Min(best, denseTE(m, x))
		}
		require.LessOrEqual(t, h.HedgedTE, best+1e-12, h.Asset)
		if h.Limited {
			limited++
			require.Equal(t, -h.Current, h.Trade)
		}
	}
	require.Positive(t, limited, "the fixture has a hedge the holding limits")

	s, err := Attribute(m, port, bench, assets, &AttributionOptions{Top: 6, Shorts: true})
	require.NoError(t, err)
	sells := false
	for _, h := range s.Hedges {
		require.False(t, h.Limited)
		sells = sells || h.Trade < -h.Current
	}
	require.True(t, sells, "with shorts some hedge sells more than the holding")
}

func TestAttributionWeightChecks(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	scale := func(h []Holding, f float64) []Holding {
		out := append([]Holding(nil), h...)
		for k := range out {
			out[k].Weight *= f
		}
		return out
	}
	_, err := Attribute(m, scale(port, 100), scale(bench, 100), assets, nil)
	require.ErrorIs(t, err, ErrPercentWeights)
	require.ErrorContains(t, err, "weights look like percent")
	_, err = Attribute(m, scale(port, 100), bench, assets, nil)
	require.ErrorIs(t, err, ErrPercentWeights)
	_, err = Attribute(m, port, scale(bench, 100), assets, nil)
	require.ErrorIs(t, err, ErrPercentWeights)
	_, err = Attribute(m, []Holding{{"QA1", 1e160}}, bench, assets, nil)
	require.ErrorIs(t, err, ErrWeightRange)
	require.ErrorContains(t, err, "1e+160")

	// A sum of 0.9 or 2 is a warning that gives the sum, an error for a
	// declared long-only fund.
	for _, f := range []float64{0.9, 2} {
		a, err := Attribute(m, scale(port, f), bench, assets, nil)
		require.NoError(t, err)
		require.Len(t, a.Warnings, 1)
		require.Contains(t, a.Warnings[0], "portfolio's weights sum to "+strings.TrimRight(strings.TrimRight(formatFloat(f), "0"), "."))
		require.InDelta(t, f, a.PortfolioSum, 1e-15)
		require.InDelta(t, 1, a.BenchmarkSum, 1e-15)
		_, err = Attribute(m, scale(port, f), bench, assets, &AttributionOptions{LongOnly: true})
		require.ErrorIs(t, err, ErrWeightSum)
	}
	short := append([]Holding(nil), port...)
	short[0].Weight, short[1].Weight = 0.35, -0.05
	_, err = Attribute(m, short, bench, assets, &AttributionOptions{LongOnly: true})
	require.ErrorIs(t, err, ErrWeightRange)
	a, err := Attribute(m, short, bench, assets, nil)
	require.NoError(t, err)
	require.False(t, a.LongOnly, "a portfolio with a short is not long-only")

	_, err = Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 1, Upper: 3}})
	require.ErrorIs(t, err, te.ErrBand)
	require.ErrorContains(t, err, "look like percent")
}

// TestClosestIdentifiers: identifiers that differ from the model's only in
// case give an error (all of them) or a warning (some) naming the matches.
func TestClosestIdentifiers(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	lower := append([]Holding(nil), port...)
	for k := range lower {
		lower[k].Asset = strings.ToLower(lower[k].Asset)
	}
	_, err := Attribute(m, lower, bench, assets, nil)
	require.ErrorIs(t, err, ErrNoHoldings)
	require.ErrorContains(t, err, "qa1 → QA1")
	typo := []Holding{{"QA7", 0.5}, {"QZ9", 0.5}}
	_, err = Attribute(m, typo, bench, assets, nil)
	require.ErrorIs(t, err, ErrNoHoldings)
	require.ErrorContains(t, err, "QA7 → QA1") // edit distance 1, the first of the model's

	some := append([]Holding(nil), port...)
	some[0].Asset = "qa1"
	a, err := Attribute(m, some, bench, assets, nil)
	require.NoError(t, err)
	require.Len(t, a.Warnings, 1)
	require.Contains(t, a.Warnings[0], "qa1 → QA1")
	require.Equal(t, 3, editDistance("kitten", "sitting", 10)) // Levenshtein's textbook example
	require.Equal(t, 2, editDistance("kitten", "sitting", 2))
}

// TestCrossTable: the cells of each row add up to the first grouping's
// rows, those of each column to the second's; weights likewise.
func TestCrossTable(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{GroupBy: []string{"sector", "size_bucket"}})
	require.NoError(t, err)
	require.Len(t, a.Groupings, 2)
	require.Equal(t, "size bucket", a.Groupings[1].Title)
	c := a.Cross
	require.NotNil(t, c)
	require.Equal(t, "sector", c.Rows)
	require.Equal(t, "size_bucket", c.Columns)
	require.Len(t, c.Cells, 6) // each name its own cell in the fixture
	byRow, byCol := map[string][3]float64{}, map[string][3]float64{}
	for _, x := range c.Cells {
		r, k := byRow[x.Row], byCol[x.Column]
		byRow[x.Row] = [3]float64{r[0] + x.Contribution, r[1] + x.Active, r[2] + x.Portfolio}
		byCol[x.Column] = [3]float64{k[0] + x.Contribution, k[1] + x.Active, k[2] + x.Portfolio}
	}
	for g, sums := range []map[string][3]float64{byRow, byCol} {
		for _, row := range a.Groupings[g].Groups {
			s := sums[row.Group]
			require.InDelta(t, row.Contribution, s[0], 1e-15, row.Group)
			require.InDelta(t, row.Active, s[1], 1e-15, row.Group)
			require.InDelta(t, row.Portfolio, s[2], 1e-15, row.Group)
		}
	}
	// Held counts the portfolio's names; Members the model's.
	kilns := a.Groupings[0].Groups[1]
	require.Equal(t, "Kilns", kilns.Group)
	require.Equal(t, 2, kilns.Members)
	require.Equal(t, 2, kilns.Held)
	ferries := a.Groupings[0].Groups[0]
	require.Equal(t, 2, ferries.Members)
	require.Equal(t, 1, ferries.Held, "QA4 is in the benchmark only")
}

// TestSingleNameSplit: every name's factor and specific parts add up to its
// contribution, and over all names to the report's factor and specific
// parts; the specific part is a_i² d_i / TE (te's formula, checked here from
// the specific variances directly).
func TestSingleNameSplit(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Top: 6})
	require.NoError(t, err)
	d := m.Factor.SpecificVariancesTo(nil)
	var fs, ss float64
	for _, x := range a.Contributors {
		i := map[string]int{"QA1": 0, "QA2": 1, "QA3": 2, "QA4": 3, "QA5": 4, "QA6": 5}[x.Asset]
		require.InDelta(t, x.Active*x.Active*d[i]*252/a.TrackingError, x.Specific, 1e-15)
		fs, ss = fs+x.Factor, ss+x.Specific
	}
	require.InDelta(t, a.FactorPart, fs, 1e-15)
	require.InDelta(t, a.SpecificPart, ss, 1e-15)
}

// TestStatisticalFactorScale: a statistical factor's exposure and volatility
// are those of the loadings scaled to unit RMS, B_k/r_k with F scaled by
// r_k²; contribution and correlation are unchanged and Σ is not touched.
// A named factor is reported as stored.
func TestStatisticalFactorScale(t *testing.T) {
	m, port, bench, assets := statFixture(t)
	named, _, _, _ := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, nil)
	require.NoError(t, err)
	b, err := Attribute(named, port, bench, assets, nil)
	require.NoError(t, err)
	bl := m.Factor.LoadingsTo(nil)
	fc := m.Factor.FactorCovarianceTo(nil)
	act := activeVector(m, port, bench)
	for k, f := range a.Factors {
		require.Equal(t, []string{"pc1", "pc2"}[k], f.Factor)
		col := mat.Col(nil, k, bl)
		var ss, x float64
		for i, v := range col {
			ss += v * v
			x += v * act[i]
		}
		r := math.Sqrt(ss / float64(len(col)))
		require.InDelta(t, r, f.LoadingScale, 1e-15)
		require.InDelta(t, x/r, f.Exposure, 1e-14)
		require.InDelta(t, r*math.Sqrt(fc.At(k, k)*252), f.Volatility, 1e-14)
		require.InDelta(t, f.Contribution, f.Exposure*f.Volatility*f.Correlation, 1e-14)
		n := b.Factors[k]
		require.Equal(t, 1.0, n.LoadingScale)
		require.Empty(t, n.Label)
		require.InDelta(t, n.Contribution, f.Contribution, 1e-15)
		require.InDelta(t, n.Correlation, f.Correlation, 1e-15)
		require.InDelta(t, n.Exposure*n.Volatility, f.Exposure*f.Volatility, 1e-15)
	}
	require.InDelta(t, b.TrackingError, a.TrackingError, 0)
}

// TestFactorLabels: loadings that are exactly a sector contrast correlate
// 1 with it (Pearson's ρ of a vector with itself), and constant loadings
// have congruence 1 with the market; a factor like nothing is "unclear".
func TestFactorLabels(t *testing.T) {
	_, port, bench, assets := reportFixture(t)
	// Sectors: QA1, QA2 Kilns; QA3, QA4 Ferries; QA5, QA6 Quarries.
	b := mat.NewDense(6, 3, []float64{
		1, 1, 0.3,
		1, 1, -0.3,
		1, -1, 0.3,
		1, -1, -0.3,
		1, 0, 0.3,
		1, 0, -0.3,
	})
	fc := mat.NewSymDense(3, []float64{1e-4, 0, 0, 0, 4e-5, 0, 0, 0, 1e-5})
	f, err := factor.NewModel(b, fc, []float64{9e-5, 1.2e-4, 6e-5, 2e-4, 1e-4, 8e-5}, factor.Info{})
	require.NoError(t, err)
	m := &Model{AsOf: DateOf(2031, 6, 30), Assets: []string{"QA1", "QA2", "QA3", "QA4", "QA5", "QA6"}, PeriodsPerYear: 252, Method: MethodFactor, Factor: f}
	a, err := Attribute(m, port, bench, assets, nil)
	require.NoError(t, err)
	require.Equal(t, "market, ρ 1.00", a.Factors[0].Label)
	require.Equal(t, "Kilns vs Ferries, ρ 1.00", a.Factors[1].Label)
	require.InDelta(t, 1, a.Factors[1].Resembles[0].Rho, 1e-15)
	// pc3 alternates within every sector and size bucket pair: |ρ| with the
	// large bucket is 1/√8 ≈ 0.35 at most... but with the log market cap
	// absent and sectors balanced, every sector ρ is 0.
	for _, r := range a.Factors[2].Resembles {
		if !strings.HasPrefix(r.Name, "size bucket") {
			require.InDelta(t, 0, r.Rho, 1e-15, r.Name)
		}
	}
}
