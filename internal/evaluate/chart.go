package evaluate

import (
	"fmt"
	"html"
	"io"
	"math"
	"strings"
)

// A chart of forecast against realised risk over time, written by hand as a
// self-contained SVG (no fonts, scripts or images to fetch).

// chartPalette colours the estimators' lines; it repeats past its end.
var chartPalette = []string{
	"#1f77b4", "#ff7f0e", "#2ca02c", "#d62728", "#9467bd",
	"#8c564b", "#e377c2", "#7f7f7f", "#bcbd22", "#17becf",
}

// WriteSVG draws, for every test period, the realised annualized volatility
// of the reference portfolio (the benchmark, or equal weights; a thick black
// line) and each estimator's forecast of it made on the rebalance date (one
// coloured line per estimator, in ranking order), as an SVG document.
func (ev *Result) WriteSVG(w io.Writer) error {
	const (
		width, height          = 960, 480
		left, right, top, bott = 64, 190, 40, 56
	)
	pw, ph := float64(width-left-right), float64(height-top-bott)
	np := len(ev.Periods)
	ymax := 0.0
	for _, p := range ev.Periods {
		ymax = math.Max(ymax, evalFinite(p.ReferenceVol, 0))
		for _, f := range p.Forecasts {
			ymax = math.Max(ymax, evalFinite(f.Reference, 0))
		}
	}
	tick := evalTickStep(ymax / 5)
	if tick == 0 {
		tick = 0.01
	}
	ymax = math.Ceil(ymax/tick) * tick
	x := func(i int) float64 {
		if np < 2 {
			return left + pw/2
		}
		return left + pw*float64(i)/float64(np-1)
	}
	y := func(v float64) float64 { return top + ph*(1-v/ymax) }
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" viewBox="0 0 %d %d" font-family="sans-serif" font-size="12">`+"\n",
		width, height, width, height)
	fmt.Fprintf(&b, `<rect width="%d" height="%d" fill="white"/>`+"\n", width, height)
	fmt.Fprintf(&b, `<text x="%d" y="22" font-size="15">Forecast and realised volatility of the reference portfolio (annualized, each test period of %d dates)</text>`+"\n", left, ev.Step)
	for v := 0.0; v <= ymax+tick/2; v += tick {
		fmt.Fprintf(&b, `<line x1="%d" x2="%.1f" y1="%.1f" y2="%.1f" stroke="#ddd"/>`, left, left+pw, y(v), y(v))
		fmt.Fprintf(&b, `<text x="%d" y="%.1f" text-anchor="end">%.0f %%</text>`+"\n", left-6, y(v)+4, 100*v)
	}
	labels := min(np, 8)
	for k := 0; k < labels; k++ {
		i := 0
		if labels > 1 {
			i = k * (np - 1) / (labels - 1)
		}
		fmt.Fprintf(&b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="#999"/>`, x(i), x(i), top+ph, top+ph+5)
		fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">%s</text>`+"\n", x(i), top+ph+20, ev.Periods[i].AsOf)
	}
	fmt.Fprintf(&b, `<text x="%.1f" y="%d" text-anchor="middle">rebalance date</text>`+"\n", left+pw/2, height-10)
	fmt.Fprintf(&b, `<rect x="%d" y="%d" width="%.0f" height="%.0f" fill="none" stroke="#555"/>`+"\n", left, top, pw, ph)
	line := func(vals []float64, colour string, stroke float64) {
		var pts []string
		for i, v := range vals {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				pts = append(pts, fmt.Sprintf("%.1f,%.1f", x(i), y(v)))
			}
		}
		fmt.Fprintf(&b, `<polyline fill="none" stroke="%s" stroke-width="%.1f" points="%s"/>`+"\n", colour, stroke, strings.Join(pts, " "))
	}
	legend := func(k int, name, colour string, stroke float64) {
		ly := float64(top + 14 + 18*k)
		fmt.Fprintf(&b, `<line x1="%d" x2="%d" y1="%.1f" y2="%.1f" stroke="%s" stroke-width="%.1f"/>`, width-right+14, width-right+40, ly, ly, colour, stroke)
		fmt.Fprintf(&b, `<text x="%d" y="%.1f">%s</text>`+"\n", width-right+46, ly+4, html.EscapeString(name))
	}
	for e, s := range ev.Scores {
		vals := make([]float64, np)
		for i, p := range ev.Periods {
			vals[i] = p.Forecasts[e].Reference
		}
		colour := chartPalette[e%len(chartPalette)]
		line(vals, colour, 1.5)
		legend(e+1, s.Name, colour, 1.5)
	}
	real := make([]float64, np)
	for i, p := range ev.Periods {
		real[i] = p.ReferenceVol
	}
	line(real, "black", 3)
	legend(0, "realised", "black", 3)
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// evalTickStep rounds v up to 1, 2 or 5 times a power of ten.
func evalTickStep(v float64) float64 {
	if !(v > 0) {
		return 0
	}
	p := math.Pow(10, math.Floor(math.Log10(v)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= v {
			return m * p
		}
	}
	return 10 * p
}

func evalFinite(v, def float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return def
	}
	return v
}
