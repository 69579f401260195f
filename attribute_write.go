package riskmodel

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
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

// pct formats a fraction as a percentage with three decimals.
func pct(x float64) string { return strconv.FormatFloat(100*x, 'f', 3, 64) }

// WriteText writes the report as aligned text tables: risk figures and
// weights in percent, annualised.
func (a *Attribution) WriteText(w io.Writer) error {
	var b strings.Builder
	fmt.Fprintf(&b, "Ex-ante tracking error as of %s (%s model, annualised with %g periods a year)\n", a.AsOf, a.Method, a.PeriodsPerYear)
	fmt.Fprintf(&b, "  tracking error   %s %%\n", pct(a.TrackingError))
	if a.Factored {
		fmt.Fprintf(&b, "  factor part      %s %%\n  specific part    %s %%\n", pct(a.FactorPart), pct(a.SpecificPart))
	} else {
		b.WriteString("  factor/specific  not available: the model is dense\n")
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
	tables := []struct {
		title string
		head  string
		rows  [][]string
	}{
		{"By " + a.GroupBy + " (weights and risk in %; contribution = σ·ρ, the group's stand-alone TE times its correlation with the active return)",
			a.GroupBy + "\tnames\tportfolio\tbenchmark\tactive\tcontribution\t% of TE\tfactor\tspecific\tσ\tρ", a.groupCells()},
		{"Top contributors (contribution = active x · σ · ρ)", "asset\t" + a.GroupBy + "\tportfolio\tbenchmark\tactive\tcontribution\t% of TE\tmarginal\tσ\tρ", a.assetCells()},
		{"Best single-name hedges (trade against cash)", "asset\t" + a.GroupBy + "\ttrade\tTE after\tsaving", a.hedgeCells()},
		{"By factor (contribution = exposure · σ · ρ)", "factor\texposure\tσ\tρ\tcontribution\t% of TE", a.factorCells()},
	}
	for _, tb := range tables {
		if len(tb.rows) == 0 {
			continue
		}
		fmt.Fprintf(w, "\n%s\n", tb.title)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, tb.head+"\t")
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

func bandUpper(u float64) string {
	if u == 0 {
		return "no ceiling"
	}
	return pct(u) + " %"
}

func (a *Attribution) groupCells() [][]string {
	var out [][]string
	var p, b, x float64
	for _, g := range a.Groups {
		out = append(out, []string{g.Group, strconv.Itoa(g.Members), pct(g.Portfolio), pct(g.Benchmark), pct(g.Active),
			pct(g.Contribution), fmt.Sprintf("%.1f", g.Percent), pct(g.Factor), pct(g.Specific), pct(g.Volatility), fmt.Sprintf("%.3f", g.Correlation)})
		p, b, x = p+g.Portfolio, b+g.Benchmark, x+g.Active
	}
	return append(out, []string{"total", "", pct(p), pct(b), pct(x), pct(a.TrackingError), "100.0", pct(a.FactorPart), pct(a.SpecificPart),
		pct(a.TrackingError), "1.000"})
}

func (a *Attribution) assetCells() [][]string {
	var out [][]string
	for _, x := range a.Contributors {
		out = append(out, []string{x.Asset, x.Group, pct(x.Portfolio), pct(x.Benchmark), pct(x.Active), pct(x.Contribution),
			fmt.Sprintf("%.1f", x.Percent), pct(x.Marginal), pct(x.Volatility), fmt.Sprintf("%.3f", x.Correlation)})
	}
	return out
}

func (a *Attribution) hedgeCells() [][]string {
	var out [][]string
	for _, h := range a.Hedges {
		out = append(out, []string{h.Asset, h.Group, pct(h.Trade), pct(h.HedgedTE), pct(h.Saving)})
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
		out = append(out, []string{f.Factor, fmt.Sprintf("%.4f", f.Exposure), pct(f.Volatility), fmt.Sprintf("%.3f", f.Correlation),
			pct(f.Contribution), fmt.Sprintf("%.1f", f.Percent)})
	}
	return out
}

// WriteCSV writes the report as one CSV table with a section column
// ("total", "group", "asset", "hedge", "factor", "specific", "band"; the
// header names every column); every number in full precision, risk figures
// annualised, weights as fractions. Columns that do not apply to a section
// are empty.
func (a *Attribution) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	f := formatFloat
	cols := []string{"section", "name", "group", "members", "portfolio", "benchmark", "active", "contribution", "percent",
		"factor", "specific", "volatility", "correlation", "marginal", "exposure", "trade", "hedged_te", "saving",
		"lower", "upper", "status", "breach"}
	rec := func(kv map[string]string) []string {
		out := make([]string, len(cols))
		for k, c := range cols {
			out[k] = kv[c]
		}
		return out
	}
	rows := [][]string{cols, rec(map[string]string{"section": "total", "name": "tracking_error", "contribution": f(a.TrackingError),
		"percent": "100", "factor": f(a.FactorPart), "specific": f(a.SpecificPart)})}
	for _, g := range a.Groups {
		rows = append(rows, rec(map[string]string{"section": "group", "name": g.Group, "group": g.Group, "members": strconv.Itoa(g.Members),
			"portfolio": f(g.Portfolio), "benchmark": f(g.Benchmark), "active": f(g.Active), "contribution": f(g.Contribution),
			"percent": f(g.Percent), "factor": f(g.Factor), "specific": f(g.Specific), "volatility": f(g.Volatility), "correlation": f(g.Correlation)}))
	}
	for _, x := range a.Contributors {
		rows = append(rows, rec(map[string]string{"section": "asset", "name": x.Asset, "group": x.Group, "portfolio": f(x.Portfolio),
			"benchmark": f(x.Benchmark), "active": f(x.Active), "contribution": f(x.Contribution), "percent": f(x.Percent),
			"volatility": f(x.Volatility), "correlation": f(x.Correlation), "marginal": f(x.Marginal)}))
	}
	for _, h := range a.Hedges {
		rows = append(rows, rec(map[string]string{"section": "hedge", "name": h.Asset, "group": h.Group, "trade": f(h.Trade),
			"hedged_te": f(h.HedgedTE), "saving": f(h.Saving)}))
	}
	for _, x := range a.Factors {
		rows = append(rows, rec(map[string]string{"section": "factor", "name": x.Factor, "exposure": f(x.Exposure), "volatility": f(x.Volatility),
			"correlation": f(x.Correlation), "contribution": f(x.Contribution), "percent": f(x.Percent)}))
	}
	if x := a.Specific; x != nil {
		rows = append(rows, rec(map[string]string{"section": "specific", "name": x.Factor, "exposure": f(x.Exposure), "volatility": f(x.Volatility),
			"correlation": f(x.Correlation), "contribution": f(x.Contribution), "percent": f(x.Percent)}))
	}
	if c := a.Band; c != nil {
		rows = append(rows, rec(map[string]string{"section": "band", "name": "tracking_error", "lower": f(c.Lower), "upper": f(c.Upper),
			"status": c.Status, "breach": f(c.Breach)}))
	}
	if err := cw.WriteAll(rows); err != nil {
		return err
	}
	return cw.Error()
}
