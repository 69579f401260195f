package riskmodel

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"
)

// WriteJSON writes the report as one indented JSON document; the field
// names are the struct tags of Attribution and its rows.
func (a *Attribution) WriteJSON(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(a)
}

// notAvailable is what the text and HTML forms print for a factor or
// specific figure of a dense model (the CSV leaves the cell empty).
const notAvailable = "n/a"

// pct formats a fraction as a percentage with three decimals; a value that
// rounds to zero prints without a sign.
func pct(x float64) string {
	s := strconv.FormatFloat(100*x, 'f', 3, 64)
	if s == "-0.000" {
		return "0.000"
	}
	return s
}

// pctOr is pct(x), or n/a when the report has no factor split.
func (a *Attribution) pctOr(x float64) string {
	if !a.Factored {
		return notAvailable
	}
	return pct(x)
}

// perPoint is the change of tracking error, in %, for one percentage point
// more weight: Marginal · 0.01.
func perPoint(marginal float64) string { return pct(marginal / 100) }

// headerLines returns the report's header as label, value pairs: what the
// report is about, in every format.
func (a *Attribution) headerLines() [][2]string {
	k := "dense covariance"
	if a.NumFactors > 0 {
		k = fmt.Sprintf("K = %d factors", a.NumFactors)
	}
	return [][2]string{
		{"portfolio", fmt.Sprintf("%s: %d names, weights sum to %s %%", a.Portfolio, a.PortfolioNames, pct(a.PortfolioSum))},
		{"benchmark", fmt.Sprintf("%s: %d names, weights sum to %s %%", a.Benchmark, a.BenchmarkNames, pct(a.BenchmarkSum))},
		{"model", fmt.Sprintf("%s, as of %s, %s, %d names", a.Method, a.AsOf, k, a.NumAssets)},
		{"units", fmt.Sprintf("weights and risk in %% of capital, risk annualised by √%g (%g periods a year)", a.PeriodsPerYear, a.PeriodsPerYear)},
	}
}

// WriteText writes the report as aligned text tables: risk figures and
// weights in percent, annualised.
func (a *Attribution) WriteText(w io.Writer) error {
	var b strings.Builder
	b.WriteString("Ex-ante tracking error attribution\n")
	for _, h := range a.headerLines() {
		fmt.Fprintf(&b, "  %-16s %s\n", h[0], h[1])
	}
	for _, x := range a.Warnings {
		fmt.Fprintf(&b, "  %-16s %s\n", "WARNING", x)
	}
	fmt.Fprintf(&b, "  tracking error   %s %%\n", pct(a.TrackingError))
	if a.Factored {
		fmt.Fprintf(&b, "  factor part      %s %%\n  specific part    %s %%\n", pct(a.FactorPart), pct(a.SpecificPart))
	} else {
		b.WriteString("  factor/specific  n/a: the model is dense\n")
	}
	fmt.Fprintf(&b, "  portfolio risk   %s %%   benchmark risk %s %%   beta %.3f\n", pct(a.PortfolioRisk), pct(a.BenchmarkRisk), a.Beta)
	if len(a.Cash) > 0 {
		fmt.Fprintf(&b, "  not in the model %d names counted as cash (portfolio %s %%, benchmark %s %%), first %s\n",
			len(a.Cash), pct(a.CashPortfolio), pct(a.CashBenchmark), a.Cash[0])
	}
	if c := a.Band; c != nil {
		fmt.Fprintf(&b, "  band             %s %% to %s: %s", pct(c.Lower), bandUpper(c.Upper), strings.ToUpper(c.Status))
		if c.Status != "within" {
			fmt.Fprintf(&b, " by %s %%", pct(c.Breach))
		}
		b.WriteString("\n")
	}
	if _, err := io.WriteString(w, b.String()); err != nil {
		return err
	}
	for _, tb := range a.textTables() {
		if len(tb.rows) == 0 {
			continue
		}
		fmt.Fprintf(w, "\n%s\n", tb.title)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, strings.Join(tb.head, "\t")+"\t")
		for _, r := range tb.rows {
			fmt.Fprintln(tw, strings.Join(r, "\t")+"\t")
		}
		if err := tw.Flush(); err != nil {
			return err
		}
	}
	_, err := fmt.Fprintf(w, "\nCaution: %s\n", a.Caution)
	return err
}

type textTable struct {
	title string
	head  []string
	rows  [][]string
}

// textTables returns the report's tables in the order the text form prints
// them; the HTML form uses the same cells.
func (a *Attribution) textTables() []textTable {
	var out []textTable
	for _, g := range a.Groupings {
		out = append(out, textTable{
			"By " + g.Title + " (contribution = stand-alone TE · ρ: the group's active positions alone, times their correlation with the active return)",
			[]string{g.Title, "names in model", "held", "portfolio", "benchmark", "active", "contribution", "% of TE", "factor", "specific", "stand-alone TE", "ρ"},
			a.groupCells(g)})
	}
	if c := a.Cross; c != nil {
		title := capitalise(columnTitle(c.Rows)) + " × " + columnTitle(c.Columns)
		head, act, con := a.crossCells()
		out = append(out, textTable{title + ": active weight", head, act}, textTable{title + ": contribution to tracking error", head, con})
	}
	out = append(out, textTable{"Top contributors (contribution = active · total vol · ρ; ΔTE per +1 % = change of TE for one percentage point more weight)",
		append(append([]string{"asset"}, a.groupTitles()...), "portfolio", "benchmark", "active", "contribution", "% of TE", "factor", "specific",
			"ΔTE per +1 %", "total vol", "ρ"), a.assetCells()})
	out = append(out, textTable{a.hedgeTitle(), []string{"asset", a.firstTitle(), "current", "benchmark", "trade", "after", "TE after", "saving"}, a.hedgeCells()})
	out = append(out, textTable{"By factor (contribution = exposure · vol · ρ; statistical factors scaled to unit RMS loadings)",
		[]string{"factor", "resembles", "exposure", "vol", "ρ", "contribution", "% of TE"}, a.factorCells()})
	return out
}

func capitalise(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func (a *Attribution) groupTitles() []string {
	out := make([]string, len(a.Groupings))
	for k, g := range a.Groupings {
		out[k] = g.Title
	}
	return out
}

func (a *Attribution) firstTitle() string {
	if len(a.Groupings) == 0 {
		return "group"
	}
	return a.Groupings[0].Title
}

func (a *Attribution) hedgeTitle() string {
	if a.LongOnly {
		return "Best single-name hedges (long-only: a sale of at most the holding, or a buy of a name held or in the benchmark, against cash; * = limited to the holding)"
	}
	return "Best single-name hedges (any trade against cash, shorts allowed)"
}

func bandUpper(u float64) string {
	if u == 0 {
		return "no ceiling"
	}
	return pct(u) + " %"
}

func (a *Attribution) groupCells(gr Grouping) [][]string {
	var out [][]string
	var p, b, x float64
	var members, held int
	for _, g := range gr.Groups {
		out = append(out, []string{g.Group, strconv.Itoa(g.Members), strconv.Itoa(g.Held), pct(g.Portfolio), pct(g.Benchmark), pct(g.Active),
			pct(g.Contribution), fmt.Sprintf("%.1f", g.Percent), a.pctOr(g.Factor), a.pctOr(g.Specific), pct(g.StandAloneTE),
			fmt.Sprintf("%.3f", g.Correlation)})
		p, b, x = p+g.Portfolio, b+g.Benchmark, x+g.Active
		members, held = members+g.Members, held+g.Held
	}
	return append(out, []string{"total", strconv.Itoa(members), strconv.Itoa(held), pct(p), pct(b), pct(x), pct(a.TrackingError), "100.0",
		a.pctOr(a.FactorPart), a.pctOr(a.SpecificPart), pct(a.TrackingError), "1.000"})
}

// crossCells returns the cross table's heading and its active-weight and
// contribution matrices, with row and column totals.
func (a *Attribution) crossCells() (head []string, active, contrib [][]string) {
	c := a.Cross
	var rows, cols []string
	ri, ci := map[string]int{}, map[string]int{}
	for _, x := range c.Cells {
		if _, ok := ri[x.Row]; !ok {
			ri[x.Row] = len(rows)
			rows = append(rows, x.Row)
		}
		if _, ok := ci[x.Column]; !ok {
			ci[x.Column] = len(cols)
			cols = append(cols, x.Column)
		}
	}
	// Columns in increasing order (cells come sorted by row, then column).
	slices.Sort(cols)
	for k, s := range cols {
		ci[s] = k
	}
	act := make([][]float64, len(rows)+1)
	con := make([][]float64, len(rows)+1)
	have := make([][]bool, len(rows))
	for k := range act {
		act[k] = make([]float64, len(cols)+1)
		con[k] = make([]float64, len(cols)+1)
		if k < len(rows) {
			have[k] = make([]bool, len(cols))
		}
	}
	for _, x := range c.Cells {
		i, j := ri[x.Row], ci[x.Column]
		have[i][j] = true
		for _, m := range []struct {
			t [][]float64
			v float64
		}{{act, x.Active}, {con, x.Contribution}} {
			m.t[i][j] += m.v
			m.t[i][len(cols)] += m.v
			m.t[len(rows)][j] += m.v
			m.t[len(rows)][len(cols)] += m.v
		}
	}
	head = append(append([]string{columnTitle(c.Rows) + " \\ " + columnTitle(c.Columns)}, cols...), "total")
	cells := func(t [][]float64) [][]string {
		var out [][]string
		for i := range t {
			label := "total"
			if i < len(rows) {
				label = rows[i]
			}
			r := []string{label}
			for j, v := range t[i] {
				if i < len(rows) && j < len(cols) && !have[i][j] {
					r = append(r, "")
					continue
				}
				r = append(r, pct(v))
			}
			out = append(out, r)
		}
		return out
	}
	return head, cells(act), cells(con)
}

func (a *Attribution) assetCells() [][]string {
	var out [][]string
	for _, x := range a.Contributors {
		r := append([]string{x.Asset}, x.Groups...)
		out = append(out, append(r, pct(x.Portfolio), pct(x.Benchmark), pct(x.Active), pct(x.Contribution),
			fmt.Sprintf("%.1f", x.Percent), a.pctOr(x.Factor), a.pctOr(x.Specific), perPoint(x.Marginal), pct(x.Volatility),
			fmt.Sprintf("%.3f", x.Correlation)))
	}
	return out
}

func (a *Attribution) hedgeCells() [][]string {
	var out [][]string
	for _, h := range a.Hedges {
		trade := pct(h.Trade)
		if h.Limited {
			trade += "*"
		}
		out = append(out, []string{h.Asset, h.Group, pct(h.Current), pct(h.Bench), trade, pct(h.After), pct(h.HedgedTE), pct(h.Saving)})
	}
	return out
}

// factorRows returns the factor rows followed by the specific row.
func (a *Attribution) factorRows() []FactorRow {
	rows := a.Factors[:len(a.Factors):len(a.Factors)]
	if a.Specific != nil {
		rows = append(rows, *a.Specific)
	}
	return rows
}

func (a *Attribution) factorCells() [][]string {
	var out [][]string
	for _, f := range a.factorRows() {
		out = append(out, []string{f.Factor, f.Label, fmt.Sprintf("%.3f", f.Exposure), pct(f.Volatility), fmt.Sprintf("%.3f", f.Correlation),
			pct(f.Contribution), fmt.Sprintf("%.1f", f.Percent)})
	}
	return out
}

// csvColumns is the CSV header.
var csvColumns = []string{"section", "grouping", "name", "group", "value", "members", "held", "portfolio", "benchmark", "active",
	"contribution", "percent", "factor", "specific", "stand_alone_te", "volatility", "correlation", "marginal",
	"exposure", "loading_scale", "label", "current", "trade", "after", "limited", "hedged_te", "saving",
	"lower", "upper", "status", "breach"}

// WriteCSV writes the report as one CSV table with a section column
// ("header", "warning", "total", "group", "cross", "asset", "hedge",
// "factor", "specific", "band", "caution"; the header line names every
// column); every number in full precision, risk figures annualised,
// weights as fractions. Columns that do not apply to a section are empty,
// as are the factor and specific columns of a dense model. Group rows name
// their metadata column in "grouping"; cross rows hold the first grouping's
// label in "name" and the second's in "group"; asset and hedge rows hold
// the first grouping's label in "group".
func (a *Attribution) WriteCSV(w io.Writer) error {
	f := formatFloat
	fs := func(x float64) string {
		if !a.Factored {
			return ""
		}
		return f(x)
	}
	rec := func(kv map[string]string) []string {
		out := make([]string, len(csvColumns))
		for k, c := range csvColumns {
			out[k] = kv[c]
		}
		return out
	}
	rows := [][]string{csvColumns}
	for _, h := range [][2]string{{"portfolio", a.Portfolio}, {"benchmark", a.Benchmark}, {"as_of", a.AsOf}, {"method", a.Method},
		{"num_factors", strconv.Itoa(a.NumFactors)}, {"num_assets", strconv.Itoa(a.NumAssets)}, {"periods_per_year", f(a.PeriodsPerYear)},
		{"units", a.Units}, {"portfolio_sum", f(a.PortfolioSum)}, {"benchmark_sum", f(a.BenchmarkSum)},
		{"portfolio_names", strconv.Itoa(a.PortfolioNames)}, {"benchmark_names", strconv.Itoa(a.BenchmarkNames)},
		{"long_only", strconv.FormatBool(a.LongOnly)}, {"group_by", strings.Join(a.GroupBy, ";")}} {
		rows = append(rows, rec(map[string]string{"section": "header", "name": h[0], "value": h[1]}))
	}
	for _, x := range a.Warnings {
		rows = append(rows, rec(map[string]string{"section": "warning", "value": x}))
	}
	rows = append(rows, rec(map[string]string{"section": "total", "name": "tracking_error", "contribution": f(a.TrackingError),
		"percent": "100", "factor": fs(a.FactorPart), "specific": fs(a.SpecificPart)}))
	for _, gr := range a.Groupings {
		for _, g := range gr.Groups {
			rows = append(rows, rec(map[string]string{"section": "group", "grouping": gr.Column, "name": g.Group, "group": g.Group,
				"members": strconv.Itoa(g.Members), "held": strconv.Itoa(g.Held), "portfolio": f(g.Portfolio), "benchmark": f(g.Benchmark),
				"active": f(g.Active), "contribution": f(g.Contribution), "percent": f(g.Percent), "factor": fs(g.Factor),
				"specific": fs(g.Specific), "stand_alone_te": f(g.StandAloneTE), "correlation": f(g.Correlation)}))
		}
	}
	if c := a.Cross; c != nil {
		for _, x := range c.Cells {
			rows = append(rows, rec(map[string]string{"section": "cross", "grouping": c.Rows + ";" + c.Columns, "name": x.Row, "group": x.Column,
				"members": strconv.Itoa(x.Members), "portfolio": f(x.Portfolio), "benchmark": f(x.Benchmark), "active": f(x.Active),
				"contribution": f(x.Contribution), "percent": f(x.Percent)}))
		}
	}
	for _, x := range a.Contributors {
		rows = append(rows, rec(map[string]string{"section": "asset", "name": x.Asset, "group": first(x.Groups), "portfolio": f(x.Portfolio),
			"benchmark": f(x.Benchmark), "active": f(x.Active), "contribution": f(x.Contribution), "percent": f(x.Percent),
			"factor": fs(x.Factor), "specific": fs(x.Specific), "volatility": f(x.Volatility), "correlation": f(x.Correlation),
			"marginal": f(x.Marginal)}))
	}
	for _, h := range a.Hedges {
		rows = append(rows, rec(map[string]string{"section": "hedge", "name": h.Asset, "group": h.Group, "current": f(h.Current),
			"benchmark": f(h.Bench), "trade": f(h.Trade), "after": f(h.After), "limited": strconv.FormatBool(h.Limited),
			"hedged_te": f(h.HedgedTE), "saving": f(h.Saving)}))
	}
	for _, x := range a.Factors {
		rows = append(rows, rec(map[string]string{"section": "factor", "name": x.Factor, "label": x.Label, "exposure": f(x.Exposure),
			"loading_scale": f(x.LoadingScale), "volatility": f(x.Volatility), "correlation": f(x.Correlation),
			"contribution": f(x.Contribution), "percent": f(x.Percent)}))
	}
	if x := a.Specific; x != nil {
		rows = append(rows, rec(map[string]string{"section": "specific", "name": x.Factor, "exposure": f(x.Exposure), "volatility": f(x.Volatility),
			"correlation": f(x.Correlation), "contribution": f(x.Contribution), "percent": f(x.Percent)}))
	}
	if c := a.Band; c != nil {
		rows = append(rows, rec(map[string]string{"section": "band", "name": "tracking_error", "lower": f(c.Lower), "upper": f(c.Upper),
			"status": c.Status, "breach": f(c.Breach)}))
	}
	rows = append(rows, rec(map[string]string{"section": "caution", "value": a.Caution}))
	cw := csv.NewWriter(w)
	if err := cw.WriteAll(rows); err != nil {
		return err
	}
	return cw.Error()
}

func first(s []string) string {
	if len(s) == 0 {
		return ""
	}
	return s[0]
}
