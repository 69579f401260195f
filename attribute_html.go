package riskmodel

import (
	"html/template"
	"io"
	"math"
	"strconv"
)

// reportBar is one bar of the HTML report's chart, in SVG user units.
type reportBar struct {
	Label, Value     string
	Y, X, Width      float64
	TextY, ValueX    float64
	Negative         bool
	ValueAnchorStart bool
}

// reportChart lays out a horizontal bar chart of the group contributions: a zero
// axis, bars to the right for positive and to the left for negative
// contributions, labels in a column on the left.
type reportChart struct {
	Width, Height, Zero, Mid, Top, Bottom float64
	Bars                                  []reportBar
	Ticks                                 []reportTick
}

type reportTick struct {
	X     float64
	Label string
}

const (
	reportChartWidth  = 760.0
	reportChartLabels = 170.0 // width of the label column
	reportChartPad    = 70.0  // room on the right and left of the bars for values
	reportBarHeight   = 20.0
	reportBarGap      = 8.0
	reportChartTop    = 28.0
)

func newReportChart(groups []GroupRow) reportChart {
	lo, hi := 0.0, 0.0
	for _, g := range groups {
		lo, hi = math.Min(lo, g.Contribution), math.Max(hi, g.Contribution)
	}
	if hi == lo {
		hi = lo + 1e-4
	}
	left, right := reportChartLabels+reportChartPad, reportChartWidth-reportChartPad
	scale := (right - left) / (hi - lo)
	zero := left - lo*scale
	c := reportChart{Width: reportChartWidth, Zero: zero, Mid: (left + right) / 2, Top: reportChartTop - 6}
	for k, g := range groups {
		y := reportChartTop + float64(k)*(reportBarHeight+reportBarGap)
		x, w := zero, g.Contribution*scale
		b := reportBar{Label: g.Group, Value: pct(g.Contribution) + " %", Y: y, TextY: y + reportBarHeight*0.7}
		if w < 0 {
			x, w, b.Negative = zero+w, -w, true
			b.ValueX = x - 6
		} else {
			b.ValueX, b.ValueAnchorStart = x+w+6, true
		}
		b.X, b.Width = x, math.Max(w, 0.5)
		c.Bars = append(c.Bars, b)
	}
	c.Bottom = reportChartTop + float64(len(groups))*(reportBarHeight+reportBarGap)
	c.Height = c.Bottom + 26
	// Ticks at round steps of the contribution axis.
	step := reportStep((hi - lo) / 5)
	// Ticks are integer multiples of the step, so that 0 is exactly 0 and
	// prints without a sign.
	for k := math.Ceil(lo / step); k*step <= hi*(1+1e-9); k++ {
		v := k * step
		label := strconv.FormatFloat(100*v, 'f', -1, 64)
		if k == 0 {
			label = "0"
		}
		c.Ticks = append(c.Ticks, reportTick{X: zero + v*scale, Label: label})
	}
	return c
}

// reportStep rounds x up to 1, 2 or 5 times a power of ten.
func reportStep(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= x {
			return m * p
		}
	}
	return 10 * p
}

var reportPage = template.Must(template.New("report").Funcs(template.FuncMap{
	"pct":   pct,
	"f3":    func(x float64) string { return strconv.FormatFloat(x, 'f', 3, 64) },
	"f1":    func(x float64) string { return strconv.FormatFloat(x, 'f', 1, 64) },
	"upper": bandUpper,
	"add":   func(x, y float64) float64 { return x + y },
}).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8"/>
<title>Tracking error attribution as of {{.A.AsOf}}</title>
<style>
body { font-family: system-ui, -apple-system, "Segoe UI", sans-serif; margin: 2em auto; max-width: 1100px; color: #1d2733; }
h1 { font-size: 1.45em; margin-bottom: 0.2em; }
h2 { font-size: 1.1em; margin-top: 1.8em; border-bottom: 1px solid #d5dbe3; padding-bottom: 0.2em; }
.sub { color: #5b6878; margin-top: 0; }
.headline { display: flex; gap: 1.2em; flex-wrap: wrap; margin: 1.2em 0; }
.headline div { background: #f3f6fa; border-radius: 6px; padding: 0.6em 1em; flex: 1; min-width: 7em; }
.headline b { display: block; font-size: 1.35em; }
.headline span { color: #5b6878; font-size: 0.85em; }
table { border-collapse: collapse; width: 100%; font-size: 0.9em; }
th, td { padding: 0.3em 0.6em; text-align: right; border-bottom: 1px solid #e6eaf0; white-space: nowrap; }
th:first-child, td:first-child, th.l, td.l { text-align: left; }
th { background: #f3f6fa; font-weight: 600; }
tr.total td { font-weight: 600; border-top: 2px solid #c3ccd8; }
.neg { color: #b3261e; }
.band-within { color: #1b6e3a; font-weight: 600; }
.band-below, .band-above { color: #b3261e; font-weight: 600; }
.caution { margin-top: 2em; padding: 0.8em 1em; background: #fff7e0; border-left: 4px solid #e0a800; font-size: 0.9em; }
svg text { font-family: system-ui, -apple-system, "Segoe UI", sans-serif; font-size: 12px; fill: #1d2733; }
</style>
</head>
<body>
<h1>Ex-ante tracking error attribution</h1>
<p class="sub">As of {{.A.AsOf}} · {{.A.Method}} model · annualised with {{.A.PeriodsPerYear}} periods a year · grouped by {{.A.GroupBy}}</p>
<div class="headline">
<div><b>{{pct .A.TrackingError}} %</b><span>tracking error</span></div>
{{- if .A.Factored}}
<div><b>{{pct .A.FactorPart}} %</b><span>factor part</span></div>
<div><b>{{pct .A.SpecificPart}} %</b><span>specific part</span></div>
{{- end}}
<div><b>{{pct .A.PortfolioRisk}} %</b><span>portfolio risk</span></div>
<div><b>{{pct .A.BenchmarkRisk}} %</b><span>benchmark risk</span></div>
<div><b>{{f3 .A.Beta}}</b><span>beta</span></div>
</div>
{{- with .A.Band}}
<p>Band {{pct .Lower}} % to {{upper .Upper}}: <span class="band-{{.Status}}" id="band-status">{{.Status}}{{if ne .Status "within"}} by {{pct .Breach}} %{{end}}</span></p>
{{- end}}
{{- if .A.Cash}}
<p>{{len .A.Cash}} held names are not in the model and count as cash (portfolio {{pct .A.CashPortfolio}} %, benchmark {{pct .A.CashBenchmark}} %).</p>
{{- end}}
{{- if not .A.Factored}}
<p>The model is dense: the factor and specific split is not available.</p>
{{- end}}

<h2>Contribution to tracking error by {{.A.GroupBy}}</h2>
<svg xmlns="http://www.w3.org/2000/svg" id="reportChart" width="{{.C.Width}}" height="{{.C.Height}}" viewBox="0 0 {{.C.Width}} {{.C.Height}}" role="img" aria-label="Contribution to tracking error by {{.A.GroupBy}}, percent a year">
<text x="{{.C.Mid}}" y="14" text-anchor="middle">contribution to tracking error, % a year</text>
{{- range .C.Ticks}}
<line x1="{{.X}}" y1="{{$.C.Top}}" x2="{{.X}}" y2="{{$.C.Bottom}}" stroke="#e6eaf0"/>
<text x="{{.X}}" y="{{$.C.Bottom | add 16}}" text-anchor="middle">{{.Label}}</text>
{{- end}}
{{- range .C.Bars}}
<text class="bar-label" x="10" y="{{.TextY}}">{{.Label}}</text>
<rect class="bar" data-group="{{.Label}}" x="{{.X}}" y="{{.Y}}" width="{{.Width}}" height="20" fill="{{if .Negative}}#c8553d{{else}}#3a6ea5{{end}}"/>
<text x="{{.ValueX}}" y="{{.TextY}}" text-anchor="{{if .ValueAnchorStart}}start{{else}}end{{end}}">{{.Value}}</text>
{{- end}}
<line x1="{{.C.Zero}}" y1="{{.C.Top}}" x2="{{.C.Zero}}" y2="{{.C.Bottom}}" stroke="#1d2733"/>
</svg>

<h2>By {{.A.GroupBy}}</h2>
<table id="groups">
<thead><tr><th>{{.A.GroupBy}}</th><th>names</th><th>portfolio %</th><th>benchmark %</th><th>active %</th><th>contribution %</th><th>% of TE</th><th>factor %</th><th>specific %</th><th>σ %</th><th>ρ</th></tr></thead>
<tbody>
{{- range .A.Groups}}
<tr class="group"><td>{{.Group}}</td><td>{{.Members}}</td><td>{{pct .Portfolio}}</td><td>{{pct .Benchmark}}</td><td{{if lt .Active 0.0}} class="neg"{{end}}>{{pct .Active}}</td><td{{if lt .Contribution 0.0}} class="neg"{{end}}>{{pct .Contribution}}</td><td>{{f1 .Percent}}</td><td>{{pct .Factor}}</td><td>{{pct .Specific}}</td><td>{{pct .Volatility}}</td><td>{{f3 .Correlation}}</td></tr>
{{- end}}
<tr class="total"><td>total</td><td></td><td></td><td></td><td></td><td>{{pct .A.TrackingError}}</td><td>100.0</td><td>{{pct .A.FactorPart}}</td><td>{{pct .A.SpecificPart}}</td><td></td><td></td></tr>
</tbody>
</table>
<p class="sub">Contribution = σ · ρ: the group's stand-alone tracking error times its correlation with the active return (Menchero and Davis 2011). Factor + specific = contribution.</p>

<h2>Top contributors</h2>
<table id="contributors">
<thead><tr><th>asset</th><th class="l">{{.A.GroupBy}}</th><th>portfolio %</th><th>benchmark %</th><th>active %</th><th>contribution %</th><th>% of TE</th><th>marginal %</th><th>σ %</th><th>ρ</th></tr></thead>
<tbody>
{{- range .A.Contributors}}
<tr><td>{{.Asset}}</td><td class="l">{{.Group}}</td><td>{{pct .Portfolio}}</td><td>{{pct .Benchmark}}</td><td{{if lt .Active 0.0}} class="neg"{{end}}>{{pct .Active}}</td><td>{{pct .Contribution}}</td><td>{{f1 .Percent}}</td><td>{{pct .Marginal}}</td><td>{{pct .Volatility}}</td><td>{{f3 .Correlation}}</td></tr>
{{- end}}
</tbody>
</table>

<h2>Best single-name hedges</h2>
<table id="hedges">
<thead><tr><th>asset</th><th class="l">{{.A.GroupBy}}</th><th>trade %</th><th>TE after %</th><th>saving %</th></tr></thead>
<tbody>
{{- range .A.Hedges}}
<tr><td>{{.Asset}}</td><td class="l">{{.Group}}</td><td{{if lt .Trade 0.0}} class="neg"{{end}}>{{pct .Trade}}</td><td>{{pct .HedgedTE}}</td><td>{{pct .Saving}}</td></tr>
{{- end}}
</tbody>
</table>
{{- if .F}}

<h2>By factor</h2>
<table id="factors">
<thead><tr><th>factor</th><th>exposure</th><th>σ %</th><th>ρ</th><th>contribution %</th><th>% of TE</th></tr></thead>
<tbody>
{{- range .F}}
<tr><td>{{.Factor}}</td><td>{{f3 .Exposure}}</td><td>{{pct .Volatility}}</td><td>{{f3 .Correlation}}</td><td{{if lt .Contribution 0.0}} class="neg"{{end}}>{{pct .Contribution}}</td><td>{{f1 .Percent}}</td></tr>
{{- end}}
</tbody>
</table>
{{- end}}

<p class="caution">Caution: {{.A.Caution}}</p>
</body>
</html>
`))

// WriteHTML writes the report as one self-contained HTML page (inline CSS,
// an inline SVG bar chart of the contributions by group, no scripts and no
// external resources). The markup is well-formed XML, so it can be checked
// with encoding/xml.
func (a *Attribution) WriteHTML(w io.Writer) error {
	return reportPage.Execute(w, struct {
		A *Attribution
		C reportChart
		F []FactorRow
	}{a, newReportChart(a.Groups), a.factorRows()})
}
