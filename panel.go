package riskmodel

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"sort"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// Common numbers of periods per year. They are common practice, not laws: a
// caller with another calendar passes its own number.
const (
	DailyPeriods   = 252
	WeeklyPeriods  = 52
	MonthlyPeriods = 12
)

// Panel is a T×N table of simple returns: rows are dates in increasing order,
// columns are assets. A missing return is NaN. A Panel is immutable once
// built, so it is safe for concurrent use.
type Panel struct {
	dates          []Date
	assets         []string
	col            map[string]int
	r              *mat.Dense // T×N, nil when T or N is zero
	periodsPerYear float64
}

// Record is one observation of a long-format return file.
type Record struct {
	Date   Date
	Asset  string
	Return float64 // NaN for an explicitly missing value
}

// NewPanel builds a panel from dates (strictly increasing), asset identifiers
// (unique, non-empty) and a T×N matrix of returns with NaN for missing. The
// matrix is copied. periodsPerYear of 0 means DailyPeriods.
//
// NewPanel panics with mat.ErrShape if the matrix is not len(dates)×len(assets).
// It returns an error for an Inf, a return ≤ −1, unsorted dates, or duplicate or
// empty identifiers.
func NewPanel(dates []Date, assets []string, returns mat.Matrix, periodsPerYear float64) (*Panel, error) {
	t, n := len(dates), len(assets)
	if returns != nil {
		if r, c := returns.Dims(); r != t || c != n {
			panic(mat.ErrShape)
		}
	} else if t != 0 && n != 0 {
		panic(mat.ErrShape)
	}
	p, err := newPanelShell(dates, assets, periodsPerYear)
	if err != nil {
		return nil, err
	}
	if t == 0 || n == 0 {
		return p, nil
	}
	p.r = mat.NewDense(t, n, nil)
	p.r.Copy(returns)
	for i := 0; i < t; i++ {
		for j := 0; j < n; j++ {
			if err := checkReturn(p.r.At(i, j)); err != nil {
				return nil, fmt.Errorf("riskmodel: return of %s on %s: %w", assets[j], dates[i], err)
			}
		}
	}
	return p, nil
}

func newPanelShell(dates []Date, assets []string, periodsPerYear float64) (*Panel, error) {
	if periodsPerYear == 0 {
		periodsPerYear = DailyPeriods
	}
	if !(periodsPerYear > 0) || math.IsInf(periodsPerYear, 0) {
		return nil, fmt.Errorf("riskmodel: %w: %v", ErrPeriodsPerYear, periodsPerYear)
	}
	for i := 1; i < len(dates); i++ {
		if dates[i] <= dates[i-1] {
			return nil, fmt.Errorf("riskmodel: %w: %s follows %s", ErrUnsorted, dates[i], dates[i-1])
		}
	}
	col := make(map[string]int, len(assets))
	for j, a := range assets {
		if a == "" {
			return nil, fmt.Errorf("riskmodel: asset %d has an empty identifier", j)
		}
		if k, ok := col[a]; ok {
			return nil, fmt.Errorf("riskmodel: %w: asset %q in columns %d and %d", ErrDuplicate, a, k, j)
		}
		col[a] = j
	}
	return &Panel{
		dates:          slices.Clone(dates),
		assets:         slices.Clone(assets),
		col:            col,
		periodsPerYear: periodsPerYear,
	}, nil
}

// checkReturn reports whether v is a usable simple return or NaN (missing).
func checkReturn(v float64) error {
	switch {
	case math.IsNaN(v):
		return nil
	case math.IsInf(v, 0):
		return ErrNonFinite
	case v <= -1:
		return ErrImpossible
	}
	return nil
}

// PanelFromRecords builds a panel from long-format records in any order. The
// dates of the panel are the distinct dates of the records and the assets are
// sorted by identifier; a (date, asset) pair with no record is missing. A
// duplicate (date, asset) pair, an Inf or a return ≤ −1 is an error naming the
// record's position.
func PanelFromRecords(recs []Record, periodsPerYear float64) (*Panel, error) {
	if len(recs) == 0 {
		return nil, fmt.Errorf("riskmodel: %w: no records", ErrEmpty)
	}
	dateSet := make(map[Date]struct{})
	assetSet := make(map[string]struct{})
	for i, r := range recs {
		if r.Asset == "" {
			return nil, fmt.Errorf("riskmodel: record %d: empty asset identifier", i)
		}
		if err := checkReturn(r.Return); err != nil {
			return nil, fmt.Errorf("riskmodel: record %d (%s, %s, %v): %w", i, r.Date, r.Asset, r.Return, err)
		}
		dateSet[r.Date] = struct{}{}
		assetSet[r.Asset] = struct{}{}
	}
	dates := make([]Date, 0, len(dateSet))
	for d := range dateSet {
		dates = append(dates, d)
	}
	slices.Sort(dates)
	assets := make([]string, 0, len(assetSet))
	for a := range assetSet {
		assets = append(assets, a)
	}
	sort.Strings(assets)
	b, err := NewPanelBuilder(dates, assets, periodsPerYear)
	if err != nil {
		return nil, err
	}
	for i, r := range recs {
		if err := b.Set(r.Date, r.Asset, r.Return); err != nil {
			return nil, fmt.Errorf("riskmodel: record %d: %w", i, err)
		}
	}
	return b.Panel(), nil
}

// PanelBuilder fills a panel cell by cell with known dates and assets, as a
// streaming reader does. Every cell starts missing.
type PanelBuilder struct {
	p    *Panel
	row  map[Date]int
	seen []bool
}

// NewPanelBuilder starts a panel over the given dates (strictly increasing) and
// assets (unique).
func NewPanelBuilder(dates []Date, assets []string, periodsPerYear float64) (*PanelBuilder, error) {
	p, err := newPanelShell(dates, assets, periodsPerYear)
	if err != nil {
		return nil, err
	}
	t, n := len(dates), len(assets)
	if t == 0 || n == 0 {
		return nil, fmt.Errorf("riskmodel: %w: %d dates and %d assets", ErrEmpty, t, n)
	}
	data := make([]float64, t*n)
	for i := range data {
		data[i] = math.NaN()
	}
	p.r = mat.NewDense(t, n, data)
	row := make(map[Date]int, t)
	for i, d := range dates {
		row[d] = i
	}
	return &PanelBuilder{p: p, row: row, seen: make([]bool, t*n)}, nil
}

// Set records the return of asset on date. NaN marks an explicitly missing
// value. Setting the same cell twice is ErrDuplicate.
func (b *PanelBuilder) Set(d Date, asset string, v float64) error {
	i, ok := b.row[d]
	if !ok {
		return fmt.Errorf("date %s is not in the panel", d)
	}
	j, ok := b.p.col[asset]
	if !ok {
		return fmt.Errorf("%w %q", ErrUnknownAsset, asset)
	}
	return b.SetAt(i, j, v)
}

// SetAt records the return in row i and column j; see Set.
func (b *PanelBuilder) SetAt(i, j int, v float64) error {
	k := i*len(b.p.assets) + j
	if b.seen[k] {
		return fmt.Errorf("%w: %s on %s", ErrDuplicate, b.p.assets[j], b.p.dates[i])
	}
	if err := checkReturn(v); err != nil {
		return fmt.Errorf("return %v of %s on %s: %w", v, b.p.assets[j], b.p.dates[i], err)
	}
	b.seen[k] = true
	b.p.r.Set(i, j, v)
	return nil
}

// Panel returns the finished panel. The builder must not be used afterwards.
func (b *PanelBuilder) Panel() *Panel {
	p := b.p
	b.p = nil
	return p
}

// Dims returns the number of dates and assets.
func (p *Panel) Dims() (t, n int) { return len(p.dates), len(p.assets) }

// PeriodsPerYear returns the number of return periods in a year, used to
// annualise per-period risk.
func (p *Panel) PeriodsPerYear() float64 { return p.periodsPerYear }

// Dates returns a copy of the panel's dates, oldest first.
func (p *Panel) Dates() []Date { return slices.Clone(p.dates) }

// Assets returns a copy of the asset identifiers in column order.
func (p *Panel) Assets() []string { return slices.Clone(p.assets) }

// Date returns the date of row i.
func (p *Panel) Date(i int) Date { return p.dates[i] }

// Asset returns the identifier of column j.
func (p *Panel) Asset(j int) string { return p.assets[j] }

// Column returns the column of asset and whether the panel has it.
func (p *Panel) Column(asset string) (int, bool) {
	j, ok := p.col[asset]
	return j, ok
}

// Returns returns a read-only view of the T×N returns; NaN is missing. Use
// ReturnsTo for a copy that may be modified.
func (p *Panel) Returns() mat.Matrix {
	if p.r == nil {
		return nil
	}
	return p.r
}

// ReturnsTo copies the returns into dst and returns it. A nil or empty dst is
// allocated; a dst of the wrong size panics with mat.ErrShape.
func (p *Panel) ReturnsTo(dst *mat.Dense) *mat.Dense {
	t, n := p.Dims()
	dst = dense.SizeDense(dst, t, n)
	if p.r != nil {
		dst.Copy(p.r)
	}
	return dst
}

// At returns the return of column j on row i (NaN if missing).
func (p *Panel) At(i, j int) float64 { return p.r.At(i, j) }

// Window returns the last t dates up to and including asof (fewer if the
// history is shorter). t ≤ 0 means all dates up to asof. It is an error if no
// date is on or before asof.
func (p *Panel) Window(asof Date, t int) (*Panel, error) {
	end := sort.Search(len(p.dates), func(i int) bool { return p.dates[i] > asof })
	if end == 0 {
		return nil, fmt.Errorf("riskmodel: %w: no date on or before %s", ErrEmpty, asof)
	}
	start := 0
	if t > 0 && end-t > start {
		start = end - t
	}
	return p.slice(start, end, nil), nil
}

// Rows returns the panel of rows [i, j).
func (p *Panel) Rows(i, j int) *Panel { return p.slice(i, j, nil) }

// Select returns the panel restricted to the given columns, in that order.
func (p *Panel) Select(cols []int) *Panel { return p.slice(0, len(p.dates), cols) }

func (p *Panel) slice(i, j int, cols []int) *Panel {
	if cols == nil {
		cols = make([]int, len(p.assets))
		for k := range cols {
			cols[k] = k
		}
	}
	q := &Panel{
		dates:          slices.Clone(p.dates[i:j]),
		assets:         make([]string, len(cols)),
		col:            make(map[string]int, len(cols)),
		periodsPerYear: p.periodsPerYear,
	}
	for k, c := range cols {
		q.assets[k] = p.assets[c]
		q.col[p.assets[c]] = k
	}
	if j > i && len(cols) > 0 {
		q.r = mat.NewDense(j-i, len(cols), nil)
		for r := i; r < j; r++ {
			src := p.r.RawRowView(r)
			dst := q.r.RawRowView(r - i)
			for k, c := range cols {
				dst[k] = src[c]
			}
		}
	}
	return q
}

// Coverage describes one asset's observations in a panel.
type Coverage struct {
	Asset      string
	Count      int  // number of non-missing returns
	First      Date // first observed date; meaningless when Count is 0
	Last       Date // last observed date; meaningless when Count is 0
	LongestGap int  // longest run of missing dates between First and Last
}

// Coverage returns the coverage of every asset, in column order. Cost O(T·N).
func (p *Panel) Coverage() []Coverage {
	_, n := p.Dims()
	cov := make([]Coverage, n)
	for j := range cov {
		cov[j] = p.columnCoverage(j)
	}
	return cov
}

// columnCoverage is the coverage of column j.
func (p *Panel) columnCoverage(j int) Coverage {
	t, _ := p.Dims()
	c := Coverage{Asset: p.assets[j]}
	last := -1
	for i := 0; i < t; i++ {
		if math.IsNaN(p.r.At(i, j)) {
			continue
		}
		if c.Count == 0 {
			c.First = p.dates[i]
		} else {
			c.LongestGap = max(c.LongestGap, i-last-1)
		}
		c.Count++
		c.Last = p.dates[i]
		last = i
	}
	return c
}

// dropSparseAfter drops the assets with fewer than minObs observations in
// rows from..T−1 and returns their coverage over the whole panel.
func (p *Panel) dropSparseAfter(from, minObs int) (*Panel, []Coverage) {
	if from >= len(p.dates) {
		from = len(p.dates)
	}
	recent := p.Rows(from, len(p.dates)).Coverage()
	all := p.Coverage()
	var keep []int
	var dropped []Coverage
	for j, c := range recent {
		if c.Count >= minObs {
			keep = append(keep, j)
		} else {
			dropped = append(dropped, all[j])
		}
	}
	if keep == nil {
		keep = []int{}
	}
	return p.Select(keep), dropped
}

// DropSparse returns the panel without the assets that have fewer than minObs
// non-missing returns, and the coverage of each asset it dropped, so that the
// caller can report them.
func (p *Panel) DropSparse(minObs int) (*Panel, []Coverage) {
	var keep []int
	var dropped []Coverage
	for j, c := range p.Coverage() {
		if c.Count >= minObs {
			keep = append(keep, j)
		} else {
			dropped = append(dropped, c)
		}
	}
	if keep == nil {
		keep = []int{}
	}
	return p.Select(keep), dropped
}

// dropEmptyDates returns the panel without the dates on which no asset has
// a return (a market holiday left as a row of blanks in a wide file, or a
// date that only dropped assets traded), and those dates; p itself when
// there is none. Cost O(T·N) at most.
func (p *Panel) dropEmptyDates() (*Panel, []Date) {
	t, n := p.Dims()
	var empty []Date
	keep := make([]int, 0, t)
	for i := 0; i < t; i++ {
		observed := false
		if n > 0 {
			for _, v := range p.r.RawRowView(i) {
				if !math.IsNaN(v) {
					observed = true
					break
				}
			}
		}
		if observed {
			keep = append(keep, i)
		} else {
			empty = append(empty, p.dates[i])
		}
	}
	if len(empty) == 0 || n == 0 {
		return p, nil
	}
	q := &Panel{dates: make([]Date, len(keep)), assets: slices.Clone(p.assets), col: maps.Clone(p.col), periodsPerYear: p.periodsPerYear}
	if len(keep) > 0 {
		q.r = mat.NewDense(len(keep), n, nil)
		for k, i := range keep {
			q.dates[k] = p.dates[i]
			copy(q.r.RawRowView(k), p.r.RawRowView(i))
		}
	}
	return q, empty
}
