package riskmodel

import (
	"html/template"
	"io"
	"math"
	"strconv"
	"strings"
)

// reportBar is one group of the HTML report's chart, in SVG user units: one
// segment per part (factor and specific, or the whole contribution of a
// dense model), positive parts stacked to the right of the zero axis and
// negative parts to its left, and a mark at the net contribution.
type reportBar struct {
	Label, Value     string
	Y, TextY, NetX   float64
	ValueX           float64
	ValueAnchorStart bool
	Segments         []reportSegment
}

type reportSegment struct {
	Part, Fill string // "factor", "specific" or "total"
	X, Width   float64
}

// reportChart lays out a horizontal bar chart of the first grouping's
// contributions: a zero axis, bars split into their factor and specific
// parts, labels in a column on the left, a legend on top.
type reportChart struct {
	Width, Height, Zero, Mid, Top, Bottom float64
	Split                                 bool
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
	reportChartTop    = 44.0
	reportFactorFill  = "#3a6ea5"
	reportSpecFill    = "#9cc0e0"
	reportTotalFill   = "#3a6ea5"
)

type barPart struct {
	part, fill string
	v          float64
}

// barParts returns a group's parts: factor and specific, or the whole
// contribution when the model has no split.
func barParts(g GroupRow, split bool) []barPart {
	if !split {
		return []barPart{{"total", reportTotalFill, g.Contribution}}
	}
	return []barPart{{"factor", reportFactorFill, g.Factor}, {"specific", reportSpecFill, g.Specific}}
}

func newReportChart(groups []GroupRow, split bool) reportChart {
	lo, hi := 0.0, 0.0
	for _, g := range groups {
		var neg, pos float64
		for _, p := range barParts(g, split) {
			if v := p.v; v < 0 {
				neg += v
			} else {
				pos += v
			}
		}
		lo, hi = math.Min(lo, neg), math.Max(hi, pos)
	}
	if hi == lo {
		hi = lo + 1e-4
	}
	left, right := reportChartLabels+reportChartPad, reportChartWidth-reportChartPad
	scale := (right - left) / (hi - lo)
	zero := left - lo*scale
	c := reportChart{Width: reportChartWidth, Zero: zero, Mid: (left + right) / 2, Top: reportChartTop - 6, Split: split}
	for k, g := range groups {
		y := reportChartTop + float64(k)*(reportBarHeight+reportBarGap)
		b := reportBar{Label: g.Group, Value: pct(g.Contribution) + " %", Y: y, TextY: y + reportBarHeight*0.7, NetX: zero + g.Contribution*scale}
		posX, negX := zero, zero
		for _, p := range barParts(g, split) {
			w := math.Abs(p.v) * scale
			seg := reportSegment{Part: p.part, Fill: p.fill, Width: math.Max(w, 0.5)}
			if p.v < 0 {
				negX -= w
				seg.X = negX
			} else {
				seg.X = posX
				posX += w
			}
			b.Segments = append(b.Segments, seg)
		}
		if g.Contribution < 0 {
			b.ValueX = negX - 6
		} else {
			b.ValueX, b.ValueAnchorStart = posX+6, true
		}
		c.Bars = append(c.Bars, b)
	}
	c.Bottom = reportChartTop + float64(len(groups))*(reportBarHeight+reportBarGap)
	c.Height = c.Bottom + 26
	// Ticks are integer multiples of a round step, so that 0 is exactly 0
	// and prints without a sign.
	step := reportStep((hi - lo) / 5)
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

// htmlTable is one table of the page, built from the text form's cells.
type htmlTable struct {
	ID, Title string
	Head      []htmlCell
	Rows      []htmlRow
}

type htmlRow struct {
	Class string
	Cells []htmlCell
}

type htmlCell struct {
	Text  string
	Class string
}

// htmlTables turns the text tables into the page's tables: every cell that
// starts with a minus sign is marked negative, text columns align left.
func (a *Attribution) htmlTables() []htmlTable {
	var out []htmlTable
	tables := a.textTables()
	for k, tb := range tables {
		if len(tb.rows) == 0 {
			continue
		}
		ht := htmlTable{Title: tb.title}
		rowClass := ""
		switch {
		case k < len(a.Groupings):
			ht.ID, rowClass = "groups-"+a.Groupings[k].Column, "group"
		case a.Cross != nil && k == len(a.Groupings):
			ht.ID = "cross-active"
		case a.Cross != nil && k == len(a.Groupings)+1:
			ht.ID = "cross-contribution"
		default:
			ht.ID = []string{"contributors", "hedges", "factors"}[k-len(tables)+3]
		}
		for _, r := range tb.rows {
			row := htmlRow{Class: rowClass}
			if r[0] == "total" {
				row.Class = "total"
			}
			for j, c := range r {
				cell := htmlCell{Text: c}
				if strings.HasPrefix(c, "-") {
					cell.Class = "neg"
				}
				if j > 0 && !numeric(c) && c != "" {
					cell.Class = "l"
				}
				row.Cells = append(row.Cells, cell)
			}
			ht.Rows = append(ht.Rows, row)
		}
		// A heading aligns with its column: left over text.
		for j, h := range tb.head {
			c := htmlCell{Text: h}
			if j > 0 && ht.Rows[0].Cells[j].Class == "l" {
				c.Class = "l"
			}
			ht.Head = append(ht.Head, c)
		}
		out = append(out, ht)
	}
	return out
}

// numeric reports whether a cell is a number (possibly marked with *).
func numeric(s string) bool {
	if s == notAvailable {
		return true
	}
	_, err := strconv.ParseFloat(strings.TrimSuffix(s, "*"), 64)
	return err == nil
}

var reportPage = template.Must(template.New("report").Funcs(template.FuncMap{
	"pct":   pct,
	"f3":    func(x float64) string { return strconv.FormatFloat(x, 'f', 3, 64) },
	"upper": bandUpper,
	"add":   func(x, y float64) float64 { return x + y },
}).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8"/>
<title>Tracking error attribution: {{.A.Portfolio}} against {{.A.Benchmark}} as of {{.A.AsOf}}</title>
<style>
body { font-family: system-ui, -apple-system, "Segoe UI", sans-serif; margin: 2em auto; max-width: 1100px; color: #1d2733; }
h1 { font-size: 1.45em; margin-bottom: 0.2em; }
h2 { font-size: 1.1em; margin-top: 1.8em; border-bottom: 1px solid #d5dbe3; padding-bottom: 0.2em; }
.sub { color: #5b6878; margin-top: 0; }
table.about { width: auto; margin: 0.8em 0; }
table.about th { background: none; text-align: left; color: #5b6878; font-weight: normal; padding-left: 0; }
table.about td { text-align: left; }
.headline { display: flex; gap: 1.2em; flex-wrap: wrap; margin: 1.2em 0; }
.headline div { background: #f3f6fa; border-radius: 6px; padding: 0.6em 1em; flex: 1; min-width: 7em; }
.headline b { display: block; font-size: 1.35em; }
.headline span { color: #5b6878; font-size: 0.85em; }
table { border-collapse: collapse; width: 100%; font-size: 0.85em; }
th, td { padding: 0.3em 0.45em; text-align: right; border-bottom: 1px solid #e6eaf0; white-space: nowrap; }
th:first-child, td:first-child, th.l, td.l { text-align: left; }
th { background: #f3f6fa; font-weight: 600; }
tr.total td { font-weight: 600; border-top: 2px solid #c3ccd8; }
.neg { color: #b3261e; }
.warning { padding: 0.5em 1em; background: #fdecea; border-left: 4px solid #b3261e; }
.band-within { color: #1b6e3a; font-weight: 600; }
.band-below, .band-above { color: #b3261e; font-weight: 600; }
.caution { margin-top: 2em; padding: 0.8em 1em; background: #fff7e0; border-left: 4px solid #e0a800; font-size: 0.9em; }
svg text { font-family: system-ui, -apple-system, "Segoe UI", sans-serif; font-size: 12px; fill: #1d2733; }
@page { size: A4 portrait; margin: 12mm; }
@media print {
  body { margin: 0; max-width: none; font-size: 8.5pt; color: #000; }
  h1 { font-size: 14pt; }
  h2 { font-size: 10.5pt; margin-top: 1.1em; break-after: avoid; page-break-after: avoid; }
  table, svg, .headline, .caution, table.about { break-inside: avoid; page-break-inside: avoid; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  thead { display: table-header-group; }
  th, td { padding: 0.15em 0.4em; }
  .headline { gap: 0.5em; margin: 0.6em 0; }
  .headline div { border: 1px solid #c3ccd8; padding: 0.3em 0.6em; }
  svg { width: 100%; height: auto; }
  * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
</style>
</head>
<body>
<h1>Ex-ante tracking error attribution</h1>
<table class="about" id="about">
{{- range .H}}
<tr><th>{{index . 0}}</th><td>{{index . 1}}</td></tr>
{{- end}}
</table>
{{- range .A.Warnings}}
<p class="warning">Warning: {{.}}</p>
{{- end}}
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
<p>The model is dense: the factor and specific split is not available (n/a).</p>
{{- end}}

<h2>Contribution to tracking error by {{.T}}</h2>
<svg xmlns="http://www.w3.org/2000/svg" id="reportChart" width="{{.C.Width}}" height="{{.C.Height}}" viewBox="0 0 {{.C.Width}} {{.C.Height}}" role="img" aria-label="Contribution to tracking error by {{.T}}, % a year{{if .C.Split}}, split into factor and specific parts{{end}}">
<text x="{{.C.Mid}}" y="14" text-anchor="middle">contribution to tracking error, % a year</text>
{{- if .C.Split}}
<rect x="{{.C.Mid | add -150}}" y="22" width="12" height="12" fill="#3a6ea5"/><text x="{{.C.Mid | add -134}}" y="32">factor</text>
<rect x="{{.C.Mid | add -60}}" y="22" width="12" height="12" fill="#9cc0e0"/><text x="{{.C.Mid | add -44}}" y="32">specific</text>
<line x1="{{.C.Mid | add 40}}" y1="21" x2="{{.C.Mid | add 40}}" y2="35" stroke="#1d2733" stroke-width="2"/><text x="{{.C.Mid | add 46}}" y="32">net contribution</text>
{{- end}}
{{- range .C.Ticks}}
<line x1="{{.X}}" y1="{{$.C.Top}}" x2="{{.X}}" y2="{{$.C.Bottom}}" stroke="#e6eaf0"/>
<text x="{{.X}}" y="{{$.C.Bottom | add 16}}" text-anchor="middle">{{.Label}}</text>
{{- end}}
{{- range .C.Bars}}
{{- $b := .}}
<text class="bar-label" x="10" y="{{.TextY}}">{{.Label}}</text>
{{- range .Segments}}
<rect class="bar bar-{{.Part}}" data-group="{{$b.Label}}" data-part="{{.Part}}" x="{{.X}}" y="{{$b.Y}}" width="{{.Width}}" height="20" fill="{{.Fill}}"/>
{{- end}}
{{- if $.C.Split}}
<line class="bar-net" data-group="{{.Label}}" x1="{{.NetX}}" y1="{{.Y | add -2}}" x2="{{.NetX}}" y2="{{.Y | add 22}}" stroke="#1d2733" stroke-width="2"/>
{{- end}}
<text x="{{.ValueX}}" y="{{.TextY}}" text-anchor="{{if .ValueAnchorStart}}start{{else}}end{{end}}">{{.Value}}</text>
{{- end}}
<line x1="{{.C.Zero}}" y1="{{.C.Top}}" x2="{{.C.Zero}}" y2="{{.C.Bottom}}" stroke="#1d2733"/>
</svg>
{{- range .Tables}}

<h2>{{.Title}}</h2>
<table id="{{.ID}}">
<thead><tr>{{range .Head}}<th{{if .Class}} class="{{.Class}}"{{end}}>{{.Text}}</th>{{end}}</tr></thead>
<tbody>
{{- range .Rows}}
<tr{{if .Class}} class="{{.Class}}"{{end}}>{{range .Cells}}<td{{if .Class}} class="{{.Class}}"{{end}}>{{.Text}}</td>{{end}}</tr>
{{- end}}
</tbody>
</table>
{{- end}}

<p class="caution">Caution: {{.A.Caution}}</p>
</body>
</html>
`))

// WriteHTML writes the report as one self-contained HTML page (inline CSS
// with a print stylesheet for A4, an inline SVG bar chart of the first
// grouping's contributions split into factor and specific parts, no scripts
// and no external resources). The markup is well-formed XML, so it can be
// checked with encoding/xml.
func (a *Attribution) WriteHTML(w io.Writer) error {
	var groups []GroupRow
	title := "group"
	if len(a.Groupings) > 0 {
		groups, title = a.Groupings[0].Groups, a.Groupings[0].Title
	}
	return reportPage.Execute(w, struct {
		A      *Attribution
		H      [][2]string
		C      reportChart
		T      string
		Tables []htmlTable
	}{a, a.headerLines(), newReportChart(groups, a.Factored), title, a.htmlTables()})
}
