package riskmodel

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/te"
)

// reportFixture is a six-asset, two-factor model with sectors and size
// buckets, a portfolio holding one name the model lacks, and a benchmark.
func reportFixture(t *testing.T) (*Model, []Holding, []Holding, []AssetInfo) {
	t.Helper()
	b := mat.NewDense(6, 2, []float64{
		1.1, 0.3,
		0.9, -0.2,
		1.0, 0.5,
		1.2, -0.4,
		0.8, 0.1,
		1.0, 0.0,
	})
	fc := mat.NewSymDense(2, []float64{1.6e-4, 2e-5, 2e-5, 4e-5})
	d := []float64{9e-5, 1.2e-4, 6e-5, 2e-4, 1e-4, 8e-5}
	f, err := factor.NewModel(b, fc, d, factor.Info{FactorNames: []string{"market", "tilt"}})
	require.NoError(t, err)
	m := &Model{AsOf: DateOf(2031, 6, 30), Assets: []string{"QA1", "QA2", "QA3", "QA4", "QA5", "QA6"},
		PeriodsPerYear: 252, Method: MethodFactor, Factor: f}
	port := []Holding{{"QA1", 0.25}, {"QA2", 0.05}, {"QA3", 0.30}, {"QA5", 0.2}, {"QA6", 0.1}, {"QZ9", 0.1}}
	bench := []Holding{{"QA1", 0.2}, {"QA2", 0.2}, {"QA3", 0.2}, {"QA4", 0.2}, {"QA5", 0.1}, {"QA6", 0.1}}
	info := func(a, sec, size string) AssetInfo {
		return AssetInfo{Asset: a, Sector: sec, SizeBucket: size, MarketCap: math.NaN(),
			Attributes: map[string]string{"sector": sec, "size_bucket": size}}
	}
	assets := []AssetInfo{info("QA1", "Kilns", "large"), info("QA2", "Kilns", "small"), info("QA3", "Ferries", "large"),
		info("QA4", "Ferries", "mid"), info("QA5", "Quarries", "mid"), info("QA6", "Quarries", "small")}
	return m, port, bench, assets
}

func TestAttributeSumsAndFormula(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 0.01, Upper: 0.02}})
	require.NoError(t, err)

	// TE = √(aᵀΣa)·√252 with a = p − b over the covered names, QZ9 as cash
	// (REFERENCES.md, "Tracking error and its decomposition"; √252 common
	// practice, no source). Σ is expanded densely here, independently of te.
	w := []float64{0.25 - 0.2, 0.05 - 0.2, 0.3 - 0.2, -0.2, 0.2 - 0.1, 0}
	av := mat.NewVecDense(6, w)
	want := math.Sqrt(mat.Inner(av, m.Factor.CovarianceTo(nil), av) * 252)
	require.InDelta(t, want, a.TrackingError, 1e-14)
	require.Equal(t, []string{"QZ9"}, a.Cash)
	require.InDelta(t, 0.1, a.CashPortfolio, 1e-15)
	require.True(t, a.Factored)
	require.InDelta(t, a.TrackingError, a.FactorPart+a.SpecificPart, 1e-14)

	// Euler: group contributions sum to TE; factor + specific = contribution;
	// contribution = σ·ρ (Menchero & Davis 2011).
	require.Equal(t, []string{"Ferries", "Kilns", "Quarries"}, []string{a.Groups[0].Group, a.Groups[1].Group, a.Groups[2].Group})
	var sum, pw, bw float64
	for _, g := range a.Groups {
		sum += g.Contribution
		pw += g.Portfolio
		bw += g.Benchmark
		require.InDelta(t, g.Contribution, g.Factor+g.Specific, 1e-14)
		require.InDelta(t, g.Contribution, g.Volatility*g.Correlation, 1e-14)
		require.InDelta(t, g.Active, g.Portfolio-g.Benchmark, 1e-15)
	}
	require.InDelta(t, a.TrackingError, sum, 1e-14)
	require.InDelta(t, 0.9, pw, 1e-15, "the cash name is outside every group")
	require.InDelta(t, 1, bw, 1e-15)
	// Kilns hold QA1 and QA2: active +0.05 − 0.15.
	require.InDelta(t, -0.1, a.Groups[1].Active, 1e-15)

	var fsum float64
	for _, f := range a.Factors {
		fsum += f.Contribution
	}
	require.Equal(t, []string{"market", "tilt"}, []string{a.Factors[0].Factor, a.Factors[1].Factor})
	require.InDelta(t, a.TrackingError, fsum+a.Specific.Contribution, 1e-14)

	// Contributors are hot spots, largest first, in the Menchero–Davis form.
	require.Len(t, a.Contributors, 6)
	for k, x := range a.Contributors {
		require.InDelta(t, x.Contribution, x.Active*x.Volatility*x.Correlation, 1e-14)
		if k > 0 {
			require.GreaterOrEqual(t, a.Contributors[k-1].Contribution, x.Contribution)
		}
	}
	// Hedges: the best single trade −(Σa)_i/Σ_ii leaves √(TE² − (Σa)_i²/Σ_ii)
	// (Litterman 1996); recompute the first one densely.
	h := a.Hedges[0]
	sig := m.Factor.CovarianceTo(nil)
	var sa mat.VecDense
	sa.MulVec(sig, av)
	i := map[string]int{"QA1": 0, "QA2": 1, "QA3": 2, "QA4": 3, "QA5": 4, "QA6": 5}[h.Asset]
	require.InDelta(t, -sa.AtVec(i)/sig.At(i, i), h.Trade, 1e-12)
	te2 := mat.Inner(av, sig, av)
	require.InDelta(t, math.Sqrt((te2-sa.AtVec(i)*sa.AtVec(i)/sig.At(i, i))*252), h.HedgedTE, 1e-12)
	for _, x := range a.Hedges[1:] {
		require.GreaterOrEqual(t, x.HedgedTE, h.HedgedTE)
	}

	status := "within"
	if a.TrackingError > 0.02 {
		status = "above"
	} else if a.TrackingError < 0.01 {
		status = "below"
	}
	require.Equal(t, status, a.Band.Status)
	require.Equal(t, Caution, a.Caution)
}

func TestAttributeBySizeBucketAndDense(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	dense := &Model{AsOf: m.AsOf, Assets: m.Assets, PeriodsPerYear: 252, Method: MethodSample, Dense: m.Factor.CovarianceTo(nil)}
	byFactor, err := Attribute(m, port, bench, assets, &AttributionOptions{GroupBy: "size_bucket", Top: 2})
	require.NoError(t, err)
	a, err := Attribute(dense, port, bench, assets, &AttributionOptions{GroupBy: "size_bucket", Top: 2})
	require.NoError(t, err)
	require.Equal(t, []string{"large", "mid", "small"}, []string{a.Groups[0].Group, a.Groups[1].Group, a.Groups[2].Group})
	require.Len(t, a.Contributors, 2)
	require.False(t, a.Factored)
	require.Empty(t, a.Factors)
	require.Nil(t, a.Specific)
	// The same covariance, dense or factored, gives the same TE and groups.
	require.InDelta(t, byFactor.TrackingError, a.TrackingError, 1e-14)
	for k := range a.Groups {
		require.InDelta(t, byFactor.Groups[k].Contribution, a.Groups[k].Contribution, 1e-14)
	}
}

func TestAttributeErrors(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	_, err := Attribute(m, port, bench, assets, &AttributionOptions{GroupBy: "country"})
	require.ErrorIs(t, err, ErrNoGroupColumn)
	_, err = Attribute(m, []Holding{{"QZ9", 1}}, nil, assets, nil)
	require.ErrorIs(t, err, ErrNoHoldings)
	_, err = Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 0.03, Upper: 0.01}})
	require.ErrorIs(t, err, te.ErrBand)
	_, err = Attribute(m, []Holding{{"QA1", math.Inf(1)}}, bench, assets, nil)
	require.ErrorIs(t, err, te.ErrNonFinite)
}

func TestAttributionJSONSchema(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, nil)
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, a.WriteJSON(&buf))
	var doc map[string]any
	require.NoError(t, json.Unmarshal(buf.Bytes(), &doc))
	require.InDelta(t, a.TrackingError, doc["tracking_error"], 0)
	require.Equal(t, 252.0, doc["periods_per_year"])
	groups := doc["groups"].([]any)
	require.Len(t, groups, 3)
	var sum float64
	for _, g := range groups {
		row := g.(map[string]any)
		require.IsType(t, "", row["group"])
		sum += row["contribution"].(float64)
		for _, k := range []string{"members", "portfolio", "benchmark", "active", "percent", "factor", "specific", "volatility", "correlation"} {
			require.Contains(t, row, k)
		}
	}
	require.InDelta(t, a.TrackingError, sum, 1e-14)
	for _, k := range []string{"as_of", "method", "group_by", "factored", "factor_part", "specific_part", "portfolio_risk",
		"benchmark_risk", "beta", "cash", "cash_portfolio", "cash_benchmark", "contributors", "hedges", "factors", "specific", "band", "caution"} {
		require.Contains(t, doc, k)
	}
}

func TestAttributionCSV(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Upper: 0.5}})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, a.WriteCSV(&buf))
	recs, err := csv.NewReader(&buf).ReadAll()
	require.NoError(t, err)
	col := map[string]int{}
	for k, c := range recs[0] {
		col[c] = k
	}
	count := map[string]int{}
	var sum float64
	for _, r := range recs[1:] {
		count[r[0]]++
		if r[0] == "group" {
			v, err := strconv.ParseFloat(r[col["contribution"]], 64)
			require.NoError(t, err)
			sum += v
		}
	}
	require.Equal(t, map[string]int{"total": 1, "group": 3, "asset": 6, "hedge": len(a.Hedges), "factor": 2, "specific": 1, "band": 1}, count)
	require.InDelta(t, a.TrackingError, sum, 1e-14)
	require.Equal(t, "within", recs[len(recs)-1][col["status"]])
}

func TestAttributionText(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 0.5}})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, a.WriteText(&buf))
	out := buf.String()
	for _, s := range []string{"tracking error   " + pct(a.TrackingError) + " %", "factor part", "specific part",
		"By sector", "Top contributors", "Best single-name hedges", "By factor", "market", "tilt",
		"band             50.000 % to no ceiling: BELOW", "not in the model 1 names counted as cash", "Caution: " + Caution} {
		require.Contains(t, out, s)
	}
}

// TestAttributionHTMLParses checks the page as XML: well-formed, every group
// in the table and in the chart, one bar per group with a positive width,
// and no external resource.
func TestAttributionHTMLParses(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 0.01, Upper: 0.02}})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, a.WriteHTML(&buf))
	page := buf.String()
	require.NotContains(t, page, "<script")
	require.NotContains(t, page, "http://www.w3.org/1999") // no external DTD
	require.NotContains(t, page, "src=")
	require.NotContains(t, page, "href=")

	dec := xml.NewDecoder(strings.NewReader(page))
	dec.Strict = true
	dec.Entity = xml.HTMLEntity
	var tableGroups, barGroups, barLabels []string
	var inGroupRow, wantCell, wantLabel bool
	svgs := 0
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		require.NoError(t, err)
		switch x := tok.(type) {
		case xml.StartElement:
			attr := map[string]string{}
			for _, at := range x.Attr {
				attr[at.Name.Local] = at.Value
			}
			switch x.Name.Local {
			case "svg":
				svgs++
			case "tr":
				inGroupRow = attr["class"] == "group"
				wantCell = inGroupRow
			case "td":
			case "rect":
				if attr["class"] == "bar" {
					barGroups = append(barGroups, attr["data-group"])
					w, err := strconv.ParseFloat(attr["width"], 64)
					require.NoError(t, err)
					require.Greater(t, w, 0.0)
				}
			case "text":
				wantLabel = attr["class"] == "bar-label"
			}
		case xml.CharData:
			if wantCell {
				tableGroups = append(tableGroups, string(x))
				wantCell = false
			}
			if wantLabel {
				barLabels = append(barLabels, string(x))
				wantLabel = false
			}
		case xml.EndElement:
			if x.Name.Local == "text" {
				wantLabel = false
			}
		}
	}
	want := []string{"Ferries", "Kilns", "Quarries"}
	require.Equal(t, 1, svgs)
	require.Equal(t, want, tableGroups)
	require.Equal(t, want, barGroups)
	require.Equal(t, want, barLabels)
	require.Contains(t, page, `id="band-status">`+a.Band.Status)
	require.Contains(t, page, Caution[:40])
}
