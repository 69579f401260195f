package riskmodel

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"io"
	"math"
	"os"
	"regexp"
	"slices"
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
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 0.01, Upper: 0.02}, Shorts: true})
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
	groups := a.Groupings[0].Groups
	require.Equal(t, []string{"Ferries", "Kilns", "Quarries"}, []string{groups[0].Group, groups[1].Group, groups[2].Group})
	var sum, pw, bw float64
	for _, g := range groups {
		sum += g.Contribution
		pw += g.Portfolio
		bw += g.Benchmark
		require.InDelta(t, g.Contribution, g.Factor+g.Specific, 1e-14)
		require.InDelta(t, g.Contribution, g.StandAloneTE*g.Correlation, 1e-14)
		require.InDelta(t, g.Active, g.Portfolio-g.Benchmark, 1e-15)
	}
	require.InDelta(t, a.TrackingError, sum, 1e-14)
	require.InDelta(t, 0.9, pw, 1e-15, "the cash name is outside every group")
	require.InDelta(t, 1, bw, 1e-15)
	// Kilns hold QA1 and QA2: active +0.05 − 0.15.
	require.InDelta(t, -0.1, groups[1].Active, 1e-15)

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
		require.InDelta(t, x.Contribution, x.Factor+x.Specific, 1e-14)
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
	byFactor, err := Attribute(m, port, bench, assets, &AttributionOptions{GroupBy: []string{"size_bucket"}, Top: 2})
	require.NoError(t, err)
	a, err := Attribute(dense, port, bench, assets, &AttributionOptions{GroupBy: []string{"size_bucket"}, Top: 2})
	require.NoError(t, err)
	g := a.Groupings[0].Groups
	require.Equal(t, []string{"large", "mid", "small"}, []string{g[0].Group, g[1].Group, g[2].Group})
	require.Len(t, a.Contributors, 2)
	require.False(t, a.Factored)
	require.Empty(t, a.Factors)
	require.Nil(t, a.Specific)
	// The same covariance, dense or factored, gives the same TE and groups.
	require.InDelta(t, byFactor.TrackingError, a.TrackingError, 1e-14)
	for k := range g {
		require.InDelta(t, byFactor.Groupings[0].Groups[k].Contribution, g[k].Contribution, 1e-14)
	}
	require.Equal(t, 0, a.NumFactors)
	require.Equal(t, 2, byFactor.NumFactors)
}

func TestAttributeErrors(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	_, err := Attribute(m, port, bench, assets, &AttributionOptions{GroupBy: []string{"sector", "country"}})
	require.ErrorIs(t, err, ErrNoGroupColumn)
	_, err = Attribute(m, []Holding{{"QZ9", 1}}, nil, assets, nil)
	require.ErrorIs(t, err, ErrNoHoldings)
	_, err = Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 0.03, Upper: 0.01}})
	require.ErrorIs(t, err, te.ErrBand)
	_, err = Attribute(m, []Holding{{"QA1", math.Inf(1)}}, bench, assets, nil)
	require.ErrorIs(t, err, te.ErrNonFinite)
}

// statFixture is reportFixture with unnamed factors ("pc1", "pc2", so
// statistical ones) and two groupings.
func statFixture(t *testing.T) (*Model, []Holding, []Holding, []AssetInfo) {
	t.Helper()
	m, port, bench, assets := reportFixture(t)
	f, err := factor.NewModel(m.Factor.LoadingsTo(nil), m.Factor.FactorCovarianceTo(nil), m.Factor.SpecificVariancesTo(nil), factor.Info{})
	require.NoError(t, err)
	m.Factor = f
	return m, port, bench, assets
}

// readmeSchema returns the README's JSON schema table: each row's path
// ("tracking_error", "groupings[]", "groupings[].groups[]") and, for an
// object row, the keys its meaning column lists in backquotes (values in
// parentheses left out).
func readmeSchema(t *testing.T) (top []string, objects map[string][]string) {
	t.Helper()
	raw, err := os.ReadFile("README.md")
	require.NoError(t, err)
	text := string(raw)
	start := strings.Index(text, "**JSON schema**")
	require.GreaterOrEqual(t, start, 0)
	objects = map[string][]string{}
	tick := regexp.MustCompile("`([^`]+)`")
	paren := regexp.MustCompile(`\([^)]*\)`)
	inTable := false
	for _, line := range strings.Split(text[start:], "\n") {
		if !strings.HasPrefix(line, "|") {
			if inTable {
				break
			}
			continue
		}
		inTable = true
		cells := strings.Split(line, "|")
		if len(cells) < 4 || !strings.Contains(cells[1], "`") {
			continue
		}
		var paths []string
		for _, m := range tick.FindAllStringSubmatch(cells[1], -1) {
			paths = append(paths, m[1])
		}
		for _, p := range paths {
			if !strings.Contains(p, ".") {
				top = append(top, strings.TrimSuffix(p, "[]"))
			}
		}
		if strings.Contains(cells[2], "object") {
			var keys []string
			for _, m := range tick.FindAllStringSubmatch(paren.ReplaceAllString(cells[3], ""), -1) {
				keys = append(keys, m[1])
			}
			for _, p := range paths {
				objects[p] = keys
			}
		}
	}
	return top, objects
}

// keysAt returns the keys of the JSON object at path, following the first
// element of each array.
func keysAt(t *testing.T, doc map[string]any, path string) []string {
	t.Helper()
	var cur any = doc
	for _, part := range strings.Split(path, ".") {
		name := strings.TrimSuffix(part, "[]")
		obj, ok := cur.(map[string]any)
		require.True(t, ok, path)
		cur = obj[name]
		if strings.HasSuffix(part, "[]") {
			arr, ok := cur.([]any)
			require.True(t, ok && len(arr) > 0, "%s: no element", path)
			cur = arr[0]
		}
	}
	obj, ok := cur.(map[string]any)
	require.True(t, ok, path)
	var keys []string
	for k := range obj {
		keys = append(keys, k)
	}
	return keys
}

// TestAttributionJSONSchema checks the JSON document against the README's
// schema table, key for key, so that the two cannot drift apart.
func TestAttributionJSONSchema(t *testing.T) {
	m, port, bench, assets := statFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{GroupBy: []string{"sector", "size_bucket"}, Band: &te.Band{Upper: 0.5}})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, a.WriteJSON(&buf))
	var doc map[string]any
	require.NoError(t, json.Unmarshal(buf.Bytes(), &doc))
	require.InDelta(t, a.TrackingError, doc["tracking_error"], 0)
	require.Equal(t, 252.0, doc["periods_per_year"])

	top, objects := readmeSchema(t)
	var have []string
	for k := range doc {
		have = append(have, k)
	}
	require.ElementsMatch(t, top, have, "README top-level fields")
	require.NotEmpty(t, objects)
	for path, keys := range objects {
		require.ElementsMatch(t, keys, keysAt(t, doc, path), "README fields of %s", path)
	}
	var sum float64
	for _, g := range doc["groupings"].([]any)[0].(map[string]any)["groups"].([]any) {
		sum += g.(map[string]any)["contribution"].(float64)
	}
	require.InDelta(t, a.TrackingError, sum, 1e-14)
}

func TestAttributionCSV(t *testing.T) {
	m, port, bench, assets := statFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{GroupBy: []string{"sector", "size_bucket"}, Band: &te.Band{Upper: 0.5},
		PortfolioName: "fund.csv", BenchmarkName: "index.csv"})
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
	header := map[string]string{}
	sums := map[string]float64{}
	for _, r := range recs[1:] {
		count[r[0]]++
		switch r[0] {
		case "group", "cross":
			v, err := strconv.ParseFloat(r[col["contribution"]], 64)
			require.NoError(t, err)
			sums[r[0]+" "+r[col["grouping"]]] += v
		case "header":
			header[r[col["name"]]] = r[col["value"]]
		}
	}
	require.Equal(t, map[string]int{"header": 14, "total": 1, "group": 6, "cross": 6, "asset": 6, "hedge": len(a.Hedges), "factor": 2,
		"specific": 1, "band": 1, "caution": 1}, count)
	for k, v := range sums {
		require.InDelta(t, a.TrackingError, v, 1e-14, k)
	}
	require.Len(t, sums, 3)
	require.Equal(t, "fund.csv", header["portfolio"])
	require.Equal(t, "index.csv", header["benchmark"])
	require.Equal(t, "2031-06-30", header["as_of"])
	require.Equal(t, "2", header["num_factors"])
	require.Equal(t, "252", header["periods_per_year"])
	require.Contains(t, header["units"], "annualised")
	last := recs[len(recs)-1]
	require.Equal(t, "caution", last[0])
	require.Equal(t, Caution, last[col["value"]])
	require.Equal(t, "within", recs[len(recs)-2][col["status"]])
}

func TestAttributionText(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 0.5}, GroupBy: []string{"sector", "size_bucket"},
		PortfolioName: "fund.csv", BenchmarkName: "index.csv"})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, a.WriteText(&buf))
	out := buf.String()
	for _, s := range []string{"portfolio        fund.csv: 6 names, weights sum to 100.000 %",
		"benchmark        index.csv: 6 names, weights sum to 100.000 %",
		"model            factor, as of 2031-06-30, K = 2 factors, 6 names", "annualised by √252 (252 periods a year)",
		"tracking error   " + pct(a.TrackingError) + " %", "factor part", "specific part",
		"By sector", "By size bucket", "Sector × size bucket: active weight", "Sector × size bucket: contribution to tracking error",
		"names in model", "stand-alone TE", "total vol", "ΔTE per +1 %", "Top contributors", "Best single-name hedges (long-only",
		"By factor", "market", "tilt", "band             50.000 % to no ceiling: BELOW", "not in the model 1 names counted as cash",
		"Caution: " + Caution} {
		require.Contains(t, out, s)
	}
	require.NotContains(t, out, "size_bucket", "a raw column name as a heading")
	require.NotContains(t, out, "annualized")
	require.NotContains(t, out, "σ")
}

// TestAttributionDenseNotAvailable: a dense model has no factor split, and
// every format says so instead of printing zeros.
func TestAttributionDenseNotAvailable(t *testing.T) {
	m, port, bench, assets := reportFixture(t)
	dense := &Model{AsOf: m.AsOf, Assets: m.Assets, PeriodsPerYear: 252, Method: MethodSample, Dense: m.Factor.CovarianceTo(nil)}
	a, err := Attribute(dense, port, bench, assets, nil)
	require.NoError(t, err)
	var text, page, table bytes.Buffer
	require.NoError(t, a.WriteText(&text))
	require.NoError(t, a.WriteHTML(&page))
	require.NoError(t, a.WriteCSV(&table))
	for _, line := range strings.Split(text.String(), "\n") {
		if strings.HasPrefix(strings.TrimSpace(line), "Kilns") || strings.HasPrefix(strings.TrimSpace(line), "total ") {
			require.Equal(t, 2, strings.Count(line, "n/a"), line)
			require.NotContains(t, line, " 0.000 ")
		}
	}
	require.Contains(t, text.String(), "factor/specific  n/a: the model is dense")
	require.Contains(t, page.String(), "<td>n/a</td>")
	require.NotContains(t, page.String(), "bar-factor")
	recs, err := csv.NewReader(&table).ReadAll()
	require.NoError(t, err)
	fc := slices.Index(recs[0], "factor")
	for _, r := range recs[1:] {
		if r[0] == "group" || r[0] == "total" || r[0] == "asset" {
			require.Empty(t, r[fc], r)
		}
	}
}

// htmlBar is one segment of the chart as parsed from the page.
type htmlBar struct {
	group, part string
	x, width    float64
}

// parseReport checks the page as strict XML and returns the first cell of
// every group row of the first grouping's table, the bar labels, the bar
// segments and the style sheet.
func parseReport(t *testing.T, page string) (tableGroups, barLabels []string, bars []htmlBar, style string) {
	t.Helper()
	dec := xml.NewDecoder(strings.NewReader(page))
	dec.Strict = true
	dec.Entity = xml.HTMLEntity
	var inFirstGroups, wantCell, wantLabel, inStyle bool
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
			case "style":
				inStyle = true
			case "table":
				inFirstGroups = attr["id"] == "groups-sector"
			case "tr":
				wantCell = inFirstGroups && attr["class"] == "group"
			case "rect":
				if strings.HasPrefix(attr["class"], "bar ") {
					w, err := strconv.ParseFloat(attr["width"], 64)
					require.NoError(t, err)
					require.Greater(t, w, 0.0)
					xx, err := strconv.ParseFloat(attr["x"], 64)
					require.NoError(t, err)
					bars = append(bars, htmlBar{attr["data-group"], attr["data-part"], xx, w})
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
			if inStyle {
				style += string(x)
			}
		case xml.EndElement:
			switch x.Name.Local {
			case "text":
				wantLabel = false
			case "style":
				inStyle = false
			}
		}
	}
	require.Equal(t, 1, svgs)
	return tableGroups, barLabels, bars, style
}

// TestAttributionHTMLParses checks the page as XML: well-formed, every group
// in the table and in the chart, each bar split into a factor and a specific
// segment whose widths are in the ratio of the parts, a print style sheet,
// and no external resource.
func TestAttributionHTMLParses(t *testing.T) {
	m, port, bench, assets := statFixture(t)
	a, err := Attribute(m, port, bench, assets, &AttributionOptions{Band: &te.Band{Lower: 0.01, Upper: 0.02},
		GroupBy: []string{"sector", "size_bucket"}, PortfolioName: "fund.csv", BenchmarkName: "index.csv"})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, a.WriteHTML(&buf))
	page := buf.String()
	require.NotContains(t, page, "<script")
	require.NotContains(t, page, "http://www.w3.org/1999") // no external DTD
	require.NotContains(t, page, "src=")
	require.NotContains(t, page, "href=")
	require.NotContains(t, page, "url(")

	tableGroups, barLabels, bars, style := parseReport(t, page)
	want := []string{"Ferries", "Kilns", "Quarries"}
	require.Equal(t, want, tableGroups)
	require.Equal(t, want, barLabels)
	require.Len(t, bars, 2*len(want))
	// The widths are proportional to |factor| and |specific|: one scale for
	// every segment.
	var scale float64
	for k, g := range a.Groupings[0].Groups {
		f, s := bars[2*k], bars[2*k+1]
		require.Equal(t, []string{g.Group, g.Group, "factor", "specific"}, []string{f.group, s.group, f.part, s.part})
		if k == 0 {
			scale = f.width / math.Abs(g.Factor)
		}
		require.InDelta(t, scale*math.Abs(g.Factor), f.width, 1e-9*scale+0.5)
		require.InDelta(t, scale*math.Abs(g.Specific), s.width, 1e-9*scale+0.5)
	}
	for _, s := range []string{"@media print", "@page", "break-inside: avoid", "print-color-adjust: exact"} {
		require.Contains(t, style, s)
	}
	for _, s := range []string{"fund.csv: 6 names", "index.csv: 6 names", "K = 2 factors", "annualised by √252", `id="cross-contribution"`,
		`id="groups-size_bucket"`, `id="hedges"`, `id="factors"`} {
		require.Contains(t, page, s)
	}
	require.Contains(t, page, `id="band-status">`+a.Band.Status)
	require.Contains(t, page, Caution[:40])
}
