package riskmodel

import (
	"cmp"
	"math"
	"slices"
	"strconv"
)

// Resemblance is the correlation of a statistical factor's loadings across
// the model's names with one exposure the metadata gives: the market (1 for
// every name), a metadata value (1 for its names, 0 elsewhere: a sector, a
// size bucket), a contrast of two values (+1, −1, 0) or a numeric column (a
// style: log market cap, or any other numeric column).
type Resemblance struct {
	Name string  `json:"name"`
	Rho  float64 `json:"rho"`
}

// Thresholds of the factor labels (common practice, no source).
const (
	labelMinRho       = 0.3 // below it a factor is "unclear"
	labelMaxValues    = 50  // a text column with more distinct values is an identifier, not a grouping
	labelContrastSep  = " vs "
	labelMarket       = "market"
	labelLogPrefix    = "log "
	labelSectorColumn = colSector
)

// metadataPicture holds the exposures the metadata gives for the model's
// names, in the model's order, to compare statistical factors with.
type metadataPicture struct {
	n int
	// dummies of each text column's values; styles of numeric columns
	// (NaN where a name lacks the value).
	columns []dummyColumn
	styles  []style
}

type dummyColumn struct {
	title  string   // "" for the sector column: its values name themselves
	values []string // increasing, NoGroup left out
	of     []int    // index into values of each name, −1 for none
}

type style struct {
	name string
	x    []float64
}

// newMetadataPicture sorts the metadata columns into text columns (each
// value a 0/1 exposure) and numeric columns (styles; a column of positive
// numbers spanning more than a factor of ten, such as market_cap, enters as
// its logarithm).
func newMetadataPicture(model []string, assets []AssetInfo) *metadataPicture {
	pos := make(map[string]int, len(model))
	for i, a := range model {
		pos[a] = i
	}
	cols := map[string]bool{}
	for _, a := range assets {
		for k := range a.Attributes {
			cols[k] = true
		}
		if a.Sector != "" {
			cols[colSector] = true
		}
	}
	names := make([]string, 0, len(cols))
	for k := range cols {
		names = append(names, k)
	}
	slices.Sort(names)
	p := &metadataPicture{n: len(model)}
	for _, col := range names {
		vals := make([]string, len(model))
		has := make([]bool, len(model))
		for _, a := range assets {
			if i, ok := pos[a.Asset]; ok {
				vals[i], has[i] = a.Attributes[col]
				if col == colSector && !has[i] && a.Sector != "" {
					vals[i], has[i] = a.Sector, true
				}
			}
		}
		if s, ok := numericStyle(col, vals, has); ok {
			p.styles = append(p.styles, s)
		} else if c, ok := textColumn(col, vals, has); ok {
			p.columns = append(p.columns, c)
		}
	}
	return p
}

func numericStyle(col string, vals []string, has []bool) (style, bool) {
	x := make([]float64, len(vals))
	lo, hi, count := math.Inf(1), math.Inf(-1), 0
	for i, v := range vals {
		x[i] = math.NaN()
		if !has[i] || v == "" {
			continue
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil || !finite(f) {
			return style{}, false
		}
		x[i], lo, hi = f, math.Min(lo, f), math.Max(hi, f)
		count++
	}
	if count < 2 || lo == hi {
		return style{}, false
	}
	name := columnTitle(col)
	if lo > 0 && hi > 10*lo {
		for i := range x {
			x[i] = math.Log(x[i])
		}
		name = labelLogPrefix + name
	}
	return style{name: name, x: x}, true
}

func textColumn(col string, vals []string, has []bool) (dummyColumn, bool) {
	set := map[string]bool{}
	for i, v := range vals {
		if has[i] && v != "" && v != NoGroup {
			set[v] = true
		}
	}
	if len(set) < 2 || len(set) > labelMaxValues {
		return dummyColumn{}, false
	}
	c := dummyColumn{of: make([]int, len(vals))}
	if col != labelSectorColumn {
		c.title = columnTitle(col) + " "
	}
	for v := range set {
		c.values = append(c.values, v)
	}
	slices.Sort(c.values)
	for i, v := range vals {
		c.of[i] = -1
		if k, ok := slices.BinarySearch(c.values, v); ok && has[i] {
			c.of[i] = k
		}
	}
	return c, true
}

// describe returns the factor's resemblances, largest |ρ| first, and its
// label: the strongest, as "Orchards vs Foundries, ρ 0.71", or "unclear"
// with the strongest when no |ρ| reaches labelMinRho. Against the market
// the measure is the uncentred correlation Σb/(√N‖b‖) (Tucker's
// congruence: a Pearson correlation with a constant is undefined); against
// every other exposure it is Pearson's correlation over the names that
// have the value. For each text column the value of largest and the value
// of smallest ρ also enter as a contrast. Cost O(N·C) for C values.
//
// References:
//
// Tucker, L. R. (1951). A method for synthesis of factor analysis studies.
// Personnel Research Section Report 984, Department of the Army (the
// congruence coefficient; cited from memory, report number not verified).
func (p *metadataPicture) describe(b []float64) ([]Resemblance, string) {
	var out []Resemblance
	var sum, sq float64
	for _, v := range b {
		sum, sq = sum+v, sq+v*v
	}
	if sq > 0 {
		out = append(out, Resemblance{Name: labelMarket, Rho: sum / math.Sqrt(float64(len(b))*sq)})
	}
	x := make([]float64, len(b))
	for _, c := range p.columns {
		hi, lo := -1, -1
		rhos := make([]float64, len(c.values))
		for k, v := range c.values {
			for i := range x {
				x[i] = 0
				if c.of[i] == k {
					x[i] = 1
				}
			}
			rhos[k] = pearson(b, x)
			out = append(out, Resemblance{Name: c.title + v, Rho: rhos[k]})
			if hi < 0 || rhos[k] > rhos[hi] {
				hi = k
			}
			if lo < 0 || rhos[k] < rhos[lo] {
				lo = k
			}
		}
		if rhos[hi] > 0 && rhos[lo] < 0 {
			for i := range x {
				switch c.of[i] {
				case hi:
					x[i] = 1
				case lo:
					x[i] = -1
				default:
					x[i] = 0
				}
			}
			out = append(out, Resemblance{Name: c.title + c.values[hi] + labelContrastSep + c.values[lo], Rho: pearson(b, x)})
		}
	}
	for _, s := range p.styles {
		out = append(out, Resemblance{Name: s.name, Rho: pearson(b, s.x)})
	}
	out = slices.DeleteFunc(out, func(r Resemblance) bool { return math.IsNaN(r.Rho) })
	slices.SortStableFunc(out, func(a, b Resemblance) int { return cmp.Compare(math.Abs(b.Rho), math.Abs(a.Rho)) })
	if len(out) == 0 {
		return []Resemblance{}, "unclear"
	}
	label := out[0].Name + ", ρ " + strconv.FormatFloat(out[0].Rho, 'f', 2, 64)
	if math.Abs(out[0].Rho) < labelMinRho {
		label = "unclear (closest " + label + ")"
	}
	return out, label
}

// pearson returns the correlation of x and y over the pairs where y is not
// NaN; NaN when either has no spread.
func pearson(x, y []float64) float64 {
	var n, mx, my float64
	for i := range x {
		if !math.IsNaN(y[i]) {
			n++
			mx += x[i]
			my += y[i]
		}
	}
	if n < 2 {
		return math.NaN()
	}
	mx, my = mx/n, my/n
	var sxy, sxx, syy float64
	for i := range x {
		if !math.IsNaN(y[i]) {
			dx, dy := x[i]-mx, y[i]-my
			sxy += dx * dy
			sxx += dx * dx
			syy += dy * dy
		}
	}
	if sxx == 0 || syy == 0 {
		return math.NaN()
	}
	return sxy / math.Sqrt(sxx*syy)
}
