package factor

import (
	"fmt"
	"math"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/mat"
)

// condLimit is the largest condition number of a date's weighted reduced
// exposure matrix that is solved; above it the date is reported singular
// (its factor returns would carry no digits worth keeping).
const condLimit = 1e12

// regress runs the constrained regressions of rows first … T − 1 (split
// across cores by date: each date is independent, so the result does not
// depend on the number of workers) and returns them with the loadings as
// of the last date's close.
func (p *exposureSpec) regress(x mat.Matrix) (*Regression, *mat.Dense, error) {
	k := p.k()
	reg := &Regression{
		FactorNames:     p.names(),
		First:           p.first,
		FactorReturns:   mat.NewDense(p.t, k, nil),
		SpecificReturns: mat.NewDense(p.t, p.n, nil),
		Dates:           make([]CrossSection, p.t-p.first),
	}
	nan := math.NaN()
	for _, m := range []*mat.Dense{reg.FactorReturns, reg.SpecificReturns} {
		raw := m.RawMatrix()
		for i := range raw.Data {
			raw.Data[i] = nan
		}
	}
	dates := p.t - p.first
	workers := min(runtime.GOMAXPROCS(0), dates)
	errs := make([]error, dates)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			cs := newCrossSolver(p)
			for d := w; d < dates; d += workers {
				errs[d] = cs.solve(x, p.first+d, reg)
			}
		}(w)
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return nil, nil, err
		}
	}
	b := mat.NewDense(p.n, k, nil)
	if err := p.loadingsAt(b, p.t, make([]float64, 2*p.n)); err != nil {
		return nil, nil, err
	}
	return reg, b, nil
}

// loadingsAt fills dst (N×K) with the full exposures as of row asOf:
// market 1, the sector dummies, the standardised styles.
func (p *exposureSpec) loadingsAt(dst *mat.Dense, asOf int, work []float64) error {
	s := p.ns()
	dst.Zero()
	for j := 0; j < p.n; j++ {
		dst.Set(j, 0, 1)
		if s > 0 {
			dst.Set(j, 1+p.sector[j], 1)
		}
	}
	if len(p.styles) == 0 {
		return nil
	}
	return p.exposuresAt(dst.Slice(0, p.n, 1+s, p.k()).(*mat.Dense), asOf, work)
}

// crossSolver holds one worker's scratch space.
type crossSolver struct {
	p     *exposureSpec
	e     *mat.Dense // N×K exposures of the date
	work  []float64
	caps  []float64 // per sector
	count []int
	rows  []int
	y, w  []float64
	abuf  []float64 // weighted reduced design, reused across dates
	ybuf  []float64
}

func newCrossSolver(p *exposureSpec) *crossSolver {
	return &crossSolver{
		p: p, e: mat.NewDense(p.n, p.k(), nil), work: make([]float64, 2*p.n),
		caps: make([]float64, len(p.sectorNames)), count: make([]int, len(p.sectorNames)),
	}
}

// solve regresses row t and writes its factor returns, specific returns and
// diagnostics into reg.
func (c *crossSolver) solve(x mat.Matrix, t int, reg *Regression) error {
	p := c.p
	k, s := p.k(), p.ns()
	if err := p.loadingsAt(c.e, t, c.work); err != nil {
		return err
	}
	clear(c.caps)
	clear(c.count)
	c.rows = c.rows[:0]
	if c.y == nil {
		c.y, c.w = make([]float64, 0, p.n), make([]float64, 0, p.n)
	}
	y, w := c.y[:0], c.w[:0]
	for j := 0; j < p.n; j++ {
		r, cp := x.At(t, j), p.caps(t, j)
		if math.IsInf(r, 0) {
			return fmt.Errorf("%w: %v at date %d, asset %d", ErrNonFinite, r, t, j)
		}
		if math.IsNaN(r) || math.IsNaN(cp) {
			continue
		}
		c.rows = append(c.rows, j)
		y = append(y, r)
		w = append(w, math.Sqrt(cp))
		c.caps[p.sector[j]] += cp
		c.count[p.sector[j]]++
	}
	for q, m := range c.count[:s] {
		if m == 0 {
			return fmt.Errorf("%w: sector %q at date %d", ErrEmptySector, p.sectorNames[q], t)
		}
	}
	n, np := len(c.rows), k-1
	if s == 0 {
		np = k // one sector: no collinearity, no constraint
	}
	if n <= np {
		return fmt.Errorf("%w: date %d has %d assets for %d parameters", ErrTooFewObs, t, n, np)
	}
	// Reduced design X·C: sector q < L gets S_q − (c_q/c_L)·S_L.
	last := s - 1
	ratio := make([]float64, s)
	for q := range ratio {
		ratio[q] = c.caps[q] / c.caps[last]
	}
	off := 1 // column of the first style in the reduced design, minus one
	if s == 0 {
		off = 0
	}
	if cap(c.abuf) < n*np {
		c.abuf = make([]float64, p.n*np)
		c.ybuf = make([]float64, p.n)
	}
	a := mat.NewDense(n, np, c.abuf[:n*np])
	yw := mat.NewVecDense(n, c.ybuf[:n])
	for i, j := range c.rows {
		sw := math.Sqrt(w[i])
		row := a.RawRowView(i)
		ej := c.e.RawRowView(j)
		clear(row)
		row[0] = sw
		if q := p.sector[j]; s == 0 {
		} else if q == last {
			for h := 0; h < last; h++ {
				row[1+h] = -ratio[h] * sw
			}
		} else {
			row[1+q] = sw
		}
		for h := s + 1; h < k; h++ {
			row[h-off] = ej[h] * sw
		}
		yw.SetVec(i, y[i]*sw)
	}
	var qr mat.QR
	qr.Factorize(a)
	var r mat.Dense
	qr.RTo(&r)
	rr := r.Slice(0, np, 0, np).(*mat.Dense)
	var sv mat.SVD
	if !sv.Factorize(rr, mat.SVDNone) {
		return fmt.Errorf("%w: SVD of the exposure matrix failed at date %d", ErrSingular, t)
	}
	vals := sv.Values(nil)
	cond := vals[0] / vals[np-1]
	if !(cond <= condLimit) {
		return fmt.Errorf("%w: date %d, condition number %.3g of the weighted exposure matrix", ErrSingular, t, cond)
	}
	var g mat.VecDense
	if err := qr.SolveVecTo(&g, false, yw); err != nil {
		return fmt.Errorf("%w: date %d: %v", ErrSingular, t, err)
	}

	// Map back f = C·g.
	f := reg.FactorReturns.RawRowView(t)
	f[0] = g.AtVec(0)
	var fl float64
	for q := 0; q < last; q++ {
		f[1+q] = g.AtVec(1 + q)
		fl -= ratio[q] * f[1+q]
	}
	if s > 0 {
		f[1+last] = fl
	}
	for h := s + 1; h < k; h++ {
		f[h] = g.AtVec(h - off)
	}

	// Residuals, R² and σ̂².
	spec := reg.SpecificReturns.RawRowView(t)
	var ssr, sw, swy float64
	for i, j := range c.rows {
		var fit float64
		for h, v := range c.e.RawRowView(j) {
			fit += v * f[h]
		}
		u := y[i] - fit
		spec[j] = u
		ssr += w[i] * u * u
		sw += w[i]
		swy += w[i] * y[i]
	}
	ybar := swy / sw
	var tss float64
	for i := range c.rows {
		tss += w[i] * (y[i] - ybar) * (y[i] - ybar)
	}
	sigma2 := ssr / float64(n-np)

	// Cov(g) = σ̂²·R⁻¹R⁻ᵀ; Cov(f) = C·Cov(g)·Cᵀ.
	var rinv mat.Dense
	if err := rinv.Inverse(rr); err != nil {
		return fmt.Errorf("%w: date %d: %v", ErrSingular, t, err)
	}
	cmap := mat.NewDense(k, np, nil)
	cmap.Set(0, 0, 1)
	for q := 0; q < last; q++ {
		cmap.Set(1+q, 1+q, 1)
		cmap.Set(1+last, 1+q, -ratio[q])
	}
	for h := s + 1; h < k; h++ {
		cmap.Set(h, h-off, 1)
	}
	var cr mat.Dense
	cr.Mul(cmap, &rinv) // Cov(f) = σ̂²·(C·R⁻¹)(C·R⁻¹)ᵀ
	ts := make([]float64, k)
	for h := 0; h < k; h++ {
		v := mat.Dot(cr.RowView(h), cr.RowView(h))
		ts[h] = f[h] / math.Sqrt(sigma2*v)
	}
	reg.Dates[t-p.first] = CrossSection{Row: t, Assets: n, R2: 1 - ssr/tss, T: ts, Cond: cond}
	return nil
}
