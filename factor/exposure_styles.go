package factor

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// addStyles sets up the styles in the documented order: size, volatility,
// momentum, then the caller's characteristics.
func (p *exposureSpec) addStyles(x mat.Matrix) error {
	if !p.s.NoSize {
		p.styles = append(p.styles, style{name: "size", values: func(_, row, j int) float64 {
			return math.Log(p.caps(row, j)) // NaN stays NaN
		}})
	}
	if p.volW > 0 || p.momW > 0 {
		vol, mom, err := trailingStyles(x, p.first, p.volW, p.momW, p.momSkip)
		if err != nil {
			return err
		}
		if p.volW > 0 {
			p.styles = append(p.styles, style{name: "volatility", values: func(asOf, _, j int) float64 {
				return vol.At(asOf-p.first, j)
			}})
		}
		if p.momW > 0 {
			p.styles = append(p.styles, style{name: "momentum", values: func(asOf, _, j int) float64 {
				return mom.At(asOf-p.first, j)
			}})
		}
	}
	for _, c := range p.s.Characteristics {
		if c.Name == "" {
			return badSetting("a characteristic has no name")
		}
		get := func(_, row, j int) float64 { return c.Values.At(row, j) }
		rows := p.t
		if c.Values == nil {
			get = func(_, _, j int) float64 { return c.Static[j] }
			rows = 1
		}
		for i := 0; i < rows; i++ {
			for j := 0; j < p.n; j++ {
				if v := get(0, i, j); math.IsInf(v, 0) {
					return fmt.Errorf("%w: characteristic %q is %v at date %d, asset %d", ErrNonFinite, c.Name, v, i, j)
				}
			}
		}
		p.styles = append(p.styles, style{name: c.Name, values: get})
	}
	return nil
}

// trailingStyles returns, for the as-of rows first … T (row T is the date
// after the last), the trailing volatility and momentum of every asset from
// the returns of the rows before: row a of the results is as-of row
// first + a. A value with fewer than half its window observed is NaN. The
// window sums are rolled forward one row at a time, O(T·N) in all.
func trailingStyles(x mat.Matrix, first, volW, momW, skip int) (vol, mom *mat.Dense, err error) {
	t, n := x.Dims()
	rows := t + 1 - first
	if volW > 0 {
		vol = mat.NewDense(rows, n, nil)
	}
	momLen := momW - skip
	if momW > 0 {
		mom = mat.NewDense(rows, n, nil)
	}
	col := make([]float64, t)
	logs := make([]float64, t)
	for j := 0; j < n; j++ {
		for i := range col {
			v := x.At(i, j)
			col[i] = v
			logs[i] = math.NaN()
			switch {
			case math.IsInf(v, 0):
				return nil, nil, fmt.Errorf("%w: %v at date %d, asset %d", ErrNonFinite, v, i, j)
			case v <= -1:
				return nil, nil, fmt.Errorf("%w: return %v ≤ −1 at date %d, asset %d (log(1 + r) undefined)", ErrNonFinite, v, i, j)
			case !math.IsNaN(v):
				logs[i] = math.Log1p(v)
			}
		}
		if vol != nil {
			rollVolatility(vol, j, col, first, volW)
		}
		if mom != nil {
			rollSum(mom, j, logs, first, momW, momLen)
		}
	}
	return vol, mom, nil
}

// rollVolatility writes the sample standard deviation of col over rows
// a − w … a − 1 for as-of rows a = first … len(col) into column j of dst.
func rollVolatility(dst *mat.Dense, j int, col []float64, first, w int) {
	var s1, s2 float64
	var m int
	add := func(v float64, sign float64, cnt int) {
		if !math.IsNaN(v) {
			s1 += sign * v
			s2 += sign * v * v
			m += cnt
		}
	}
	for i := first - w; i < first; i++ {
		add(col[i], 1, 1)
	}
	for a := first; a <= len(col); a++ {
		if a > first {
			add(col[a-1], 1, 1)
			add(col[a-1-w], -1, -1)
		}
		v := math.NaN()
		if m >= max(2, (w+1)/2) {
			v = math.Sqrt(math.Max(0, (s2-s1*s1/float64(m))/float64(m-1)))
		}
		dst.Set(a-first, j, v)
	}
}

// rollSum writes the sum of the observed logs over rows a − w … a − w + l − 1
// (l = w − skip dates, ending skip dates before a) for as-of rows
// a = first … len(logs) into column j of dst.
func rollSum(dst *mat.Dense, j int, logs []float64, first, w, l int) {
	var s float64
	var m int
	for i := first - w; i < first-w+l; i++ {
		if v := logs[i]; !math.IsNaN(v) {
			s += v
			m++
		}
	}
	for a := first; a <= len(logs); a++ {
		if a > first {
			if v := logs[a-w+l-1]; !math.IsNaN(v) {
				s += v
				m++
			}
			if v := logs[a-1-w]; !math.IsNaN(v) {
				s -= v
				m--
			}
		}
		v := math.NaN()
		if m >= (l+1)/2 {
			v = s
		}
		dst.Set(a-first, j, v)
	}
}

// exposuresAt fills dst (N × styles) with the standardised style exposures
// as of row asOf (information before it; caps and characteristics of row
// min(asOf, T − 1)), described in FitExposure. work must hold 2N values.
func (p *exposureSpec) exposuresAt(dst *mat.Dense, asOf int, work []float64) error {
	row := min(asOf, p.t-1)
	idx := make([]int, 0, p.n)
	for c, st := range p.styles {
		idx = idx[:0]
		raw, w := work[:p.n], work[p.n:2*p.n]
		for j := 0; j < p.n; j++ {
			dst.Set(j, c, 0)
			cp := p.caps(row, j)
			v := st.values(asOf, row, j)
			if math.IsNaN(cp) || math.IsNaN(v) {
				continue
			}
			raw[len(idx)], w[len(idx)] = v, cp
			idx = append(idx, j)
		}
		m := len(idx)
		z := raw[:m]
		if !standardise(z, w[:m]) {
			return fmt.Errorf("%w: style %q has no cross-sectional dispersion at date %d (%d assets with a value)", ErrSingular, st.name, asOf, m)
		}
		for i := range z {
			z[i] = math.Max(-p.winsor, math.Min(p.winsor, z[i]))
		}
		if !standardise(z, w[:m]) {
			return fmt.Errorf("%w: style %q has no dispersion after winsorising at date %d", ErrSingular, st.name, asOf)
		}
		for i, j := range idx {
			dst.Set(j, c, z[i])
		}
	}
	return nil
}

// standardise sets z to (z − cap-weighted mean)/σ with σ the root mean
// square deviation from that mean (divisor m). It reports false when σ is
// zero or there are fewer than two values.
func standardise(z, w []float64) bool {
	if len(z) < 2 {
		return false
	}
	var sw, sx float64
	for i, v := range z {
		sw += w[i]
		sx += w[i] * v
	}
	mean := sx / sw
	var ss float64
	for _, v := range z {
		ss += (v - mean) * (v - mean)
	}
	sd := math.Sqrt(ss / float64(len(z)))
	if !(sd > 1e-12*math.Abs(mean)) || sd == 0 {
		return false
	}
	for i, v := range z {
		z[i] = (v - mean) / sd
	}
	return true
}
