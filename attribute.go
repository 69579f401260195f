package riskmodel

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/riskmodel/riskmodel/te"
)

// Caution is the line every attribution report carries.
const Caution = "Forecasts are statistical estimates from past returns, not investment advice; validate any model under your own governance before relying on it."

// Defaults of AttributionOptions.
const (
	DefaultGroupBy  = "sector"
	DefaultTopNames = 10
	// DefaultSumTolerance is how far a side's weights may sum from 1 before
	// the report warns (or, for a long-only report, refuses).
	DefaultSumTolerance = 0.01
	// MaxAbsWeight is the largest weight magnitude Attribute accepts: 10 is
	// 1000 % of capital, far beyond any fund's leverage (common practice, no
	// source), so a larger weight is a unit or data error.
	MaxAbsWeight = 10.0
)

// AttributionOptions configure Attribute. A nil *AttributionOptions or a
// zero field means the documented default.
type AttributionOptions struct {
	// GroupBy lists the metadata columns to attribute by ("sector",
	// "size_bucket" or any other column of the asset file), each giving one
	// table; default [DefaultGroupBy]. With two or more, the report also
	// holds the cross table of the first two.
	GroupBy []string
	// Top is the number of single names listed as contributors and as
	// hedges; default DefaultTopNames.
	Top int
	// Band, if set, is the mandate's tracking-error band, annualised
	// fractions; a limit of 1 (100 %) or more is refused as percent.
	Band *te.Band
	// PortfolioName and BenchmarkName name the two sides in the report's
	// header (a file name, say); default "portfolio" and "benchmark".
	PortfolioName, BenchmarkName string
	// LongOnly declares the portfolio a long-only fund: a negative weight,
	// or weights summing away from 1 by more than SumTolerance, is then an
	// error. A portfolio with no negative weight is treated as long-only
	// for the hedges whatever LongOnly says.
	LongOnly bool
	// Shorts lets the hedges of a long-only portfolio sell more than the
	// holding (go short) and buy names outside the benchmark; by default a
	// long-only portfolio's hedge sells at most what it holds.
	Shorts bool
	// SumTolerance is how far a side's weights (including names counted as
	// cash) may sum from 1 before a warning; default DefaultSumTolerance.
	SumTolerance float64
}

// Attribution is an ex-ante tracking-error report: the JSON document of the
// attribution program, and what its text, CSV and HTML forms show. Every
// risk figure (tracking error, contributions, parts, volatilities, marginal
// contributions) is annualised with the model's PeriodsPerYear; weights are
// fractions of capital; percents are of the tracking error.
type Attribution struct {
	// The header: what the report is about.
	Portfolio      string  `json:"portfolio"`
	Benchmark      string  `json:"benchmark"`
	AsOf           string  `json:"as_of"`
	Method         string  `json:"method"`
	NumFactors     int     `json:"num_factors"` // K; 0 for a dense model
	NumAssets      int     `json:"num_assets"`  // N, the model's universe
	PeriodsPerYear float64 `json:"periods_per_year"`
	Units          string  `json:"units"`
	// PortfolioSum and BenchmarkSum are each side's total weight, names
	// counted as cash included; PortfolioNames and BenchmarkNames count the
	// names each side holds with a non-zero weight.
	PortfolioSum   float64  `json:"portfolio_sum"`
	BenchmarkSum   float64  `json:"benchmark_sum"`
	PortfolioNames int      `json:"portfolio_names"`
	BenchmarkNames int      `json:"benchmark_names"`
	LongOnly       bool     `json:"long_only"` // hedges kept within what a long-only fund can trade
	Warnings       []string `json:"warnings"`
	GroupBy        []string `json:"group_by"`

	// TrackingError is √(aᵀΣa)·√PeriodsPerYear with a = portfolio − benchmark.
	TrackingError float64 `json:"tracking_error"`
	// Factored says whether the model is in factor form. Then FactorPart +
	// SpecificPart = TrackingError (the Euler split of xᵀFx + aᵀDa), and the
	// rows' Factor + Specific = Contribution; otherwise all are 0 and the
	// text, CSV and HTML forms show them as not available.
	Factored      bool    `json:"factored"`
	FactorPart    float64 `json:"factor_part"`
	SpecificPart  float64 `json:"specific_part"`
	PortfolioRisk float64 `json:"portfolio_risk"`
	BenchmarkRisk float64 `json:"benchmark_risk"`
	Beta          float64 `json:"beta"`

	// Cash lists held assets the model does not cover, counted as cash with
	// zero risk, and their total weights.
	Cash          []string `json:"cash"`
	CashPortfolio float64  `json:"cash_portfolio"`
	CashBenchmark float64  `json:"cash_benchmark"`

	Groupings    []Grouping  `json:"groupings"` // one per GroupBy column
	Cross        *CrossTable `json:"cross"`     // nil with fewer than two groupings
	Contributors []AssetRow  `json:"contributors"`
	Hedges       []HedgeRow  `json:"hedges"`
	Factors      []FactorRow `json:"factors"`
	Specific     *FactorRow  `json:"specific"` // nil unless Factored
	Band         *BandRow    `json:"band"`     // nil without a band
	Caution      string      `json:"caution"`
}

// Grouping is the attribution by one metadata column.
type Grouping struct {
	Column string     `json:"column"` // the metadata column, "size_bucket"
	Title  string     `json:"title"`  // its heading, "size bucket"
	Groups []GroupRow `json:"groups"` // by label, increasing
}

// GroupRow is one group's part of the tracking error. Contribution =
// StandAloneTE · Correlation (Menchero–Davis, with the exposure folded into
// the group's stand-alone tracking error) = Factor + Specific.
type GroupRow struct {
	Group        string  `json:"group"`
	Members      int     `json:"members"` // names of the model's universe in the group
	Held         int     `json:"held"`    // names the portfolio holds in the group
	Portfolio    float64 `json:"portfolio"`
	Benchmark    float64 `json:"benchmark"`
	Active       float64 `json:"active"`
	Contribution float64 `json:"contribution"`
	Percent      float64 `json:"percent"`
	Factor       float64 `json:"factor"`
	Specific     float64 `json:"specific"`
	StandAloneTE float64 `json:"stand_alone_te"` // √(a_gᵀΣa_g): the group's active positions alone
	Correlation  float64 `json:"correlation"`
}

// CrossTable is the attribution by two groupings at once: one cell per pair
// of labels that has a member of the model's universe. The cells of a row
// add up to that row's GroupRow, those of a column to its GroupRow.
type CrossTable struct {
	Rows    string      `json:"rows"`    // the first grouping's column
	Columns string      `json:"columns"` // the second grouping's column
	Cells   []CrossCell `json:"cells"`   // by row label, then column label
}

// CrossCell is one cell of a CrossTable.
type CrossCell struct {
	Row          string  `json:"row"`
	Column       string  `json:"column"`
	Members      int     `json:"members"`
	Portfolio    float64 `json:"portfolio"`
	Benchmark    float64 `json:"benchmark"`
	Active       float64 `json:"active"`
	Contribution float64 `json:"contribution"`
	Percent      float64 `json:"percent"`
}

// AssetRow is one name's part of the tracking error: Contribution =
// Active · Volatility · Correlation (Menchero–Davis) = Factor + Specific,
// and Marginal = ∂TE/∂a_i per unit of weight (a weight change of 0.01
// changes the tracking error by about 0.01 · Marginal).
type AssetRow struct {
	Asset        string   `json:"asset"`
	Groups       []string `json:"groups"` // the name's label in each grouping
	Portfolio    float64  `json:"portfolio"`
	Benchmark    float64  `json:"benchmark"`
	Active       float64  `json:"active"`
	Contribution float64  `json:"contribution"`
	Percent      float64  `json:"percent"`
	Factor       float64  `json:"factor"`
	Specific     float64  `json:"specific"`
	Marginal     float64  `json:"marginal"`
	Volatility   float64  `json:"volatility"` // the stock's total volatility √Σ_ii
	Correlation  float64  `json:"correlation"`
}

// HedgeRow is the single trade in one name (against cash) that lowers the
// tracking error the most (Litterman's best hedge for that name), within
// what the fund can trade: for a long-only portfolio a sale of at most the
// holding, or a buy of a name held or in the benchmark.
type HedgeRow struct {
	Asset    string  `json:"asset"`
	Group    string  `json:"group"`   // the name's label in the first grouping
	Current  float64 `json:"current"` // the portfolio's weight before the trade
	Bench    float64 `json:"benchmark"`
	Trade    float64 `json:"trade"`   // change of weight
	After    float64 `json:"after"`   // Current + Trade
	Limited  bool    `json:"limited"` // the unconstrained best trade would sell more than the holding
	HedgedTE float64 `json:"hedged_te"`
	Saving   float64 `json:"saving"` // TrackingError − HedgedTE
}

// FactorRow is one factor's (or the specific risk's) part of the tracking
// error: Contribution = Exposure · Volatility · Correlation. A statistical
// factor's exposure and volatility are in the scale of unit
// cross-sectional RMS loadings (see LoadingScale), and Label says what it
// resembles.
type FactorRow struct {
	Factor       string  `json:"factor"`
	Label        string  `json:"label"` // "Orchards vs Foundries, ρ 0.71"; empty for a named factor
	Exposure     float64 `json:"exposure"`
	Volatility   float64 `json:"volatility"`
	Correlation  float64 `json:"correlation"`
	Contribution float64 `json:"contribution"`
	Percent      float64 `json:"percent"`
	// LoadingScale is the RMS of the model's loadings the row was rescaled
	// by (1 for a factor reported as stored).
	LoadingScale float64       `json:"loading_scale"`
	Resembles    []Resemblance `json:"resembles"` // statistical factors only, largest |ρ| first
}

// BandRow is the band check: Status is "within", "below" or "above".
type BandRow struct {
	Lower  float64 `json:"lower"`
	Upper  float64 `json:"upper"`
	Status string  `json:"status"`
	Breach float64 `json:"breach"`
}

// Attribute decomposes the ex-ante tracking error of portfolio against
// benchmark under the model m: by each metadata column of opts.GroupBy (and
// the cross table of the first two), by single name, by factor, with the
// best single-name hedges and a band check. Held assets the model does not
// cover count as cash (zero risk) and are listed. With a = p − b and
// x = Bᵀa (package te):
//
//	TE = √(aᵀΣa),   contribution_i = a_i (Σa)_i / TE,   Σ_i contribution_i = TE
//
// Weights are fractions of capital. Attribute returns an error wrapping
// ErrPercentWeights for a side summing to about 100, ErrWeightRange for a
// weight beyond ±MaxAbsWeight (or negative with opts.LongOnly),
// ErrWeightSum for a long-only portfolio not summing to 1,
// ErrNoGroupColumn for an unknown group column, ErrNoHoldings for a
// portfolio of no covered weight (naming the model's closest identifiers),
// te's errors for non-finite weights, and te.ErrBand for a bad band. A side
// summing away from 1 otherwise is a warning in Warnings. Cost: that of
// te.Analyzer.DecomposeTo and one GroupsTo per grouping, O(N·K²) for a
// factor model, plus O(N·K·C) for the factor labels over C metadata values.
//
// References:
//
// Menchero, J. & Davis, B. (2011). Risk contribution is exposure times
// volatility times correlation. Journal of Portfolio Management 37(2), 97–106.
//
// Litterman, R. (1996). Hot spots and hedges. Journal of Portfolio
// Management, special issue.
func Attribute(m *Model, portfolio, benchmark []Holding, assets []AssetInfo, opts *AttributionOptions) (*Attribution, error) {
	o := opts.withDefaults()
	if err := m.check(); err != nil {
		return nil, err
	}
	r := newAttribution(m, o)
	if err := r.checkWeights(portfolio, benchmark, o); err != nil {
		return nil, err
	}
	if err := checkBandUnits(o.Band); err != nil {
		return nil, err
	}
	labels, err := groupLabels(m.Assets, assets, o.GroupBy)
	if err != nil {
		return nil, err
	}
	run, err := decompose(m, portfolio, benchmark)
	if err != nil {
		return nil, err
	}
	run.labels = labels
	r.setTotals(run)
	r.warnCaseMatches(run)
	r.setGroupings(run)
	r.setCross(run)
	r.setFactors(run, assets)
	r.setContributors(run, o.Top)
	r.setHedges(run, o.Top, r.LongOnly && !o.Shorts)
	if err := r.setBand(o.Band); err != nil {
		return nil, err
	}
	return r, nil
}

// withDefaults returns the options with every zero field at its default.
func (opts *AttributionOptions) withDefaults() AttributionOptions {
	var o AttributionOptions
	if opts != nil {
		o = *opts
	}
	if len(o.GroupBy) == 0 {
		o.GroupBy = []string{DefaultGroupBy}
	}
	if o.Top == 0 {
		o.Top = DefaultTopNames
	}
	if o.PortfolioName == "" {
		o.PortfolioName = "portfolio"
	}
	if o.BenchmarkName == "" {
		o.BenchmarkName = "benchmark"
	}
	if o.SumTolerance == 0 {
		o.SumTolerance = DefaultSumTolerance
	}
	return o
}

// newAttribution fills the header from the model and the options.
func newAttribution(m *Model, o AttributionOptions) *Attribution {
	r := &Attribution{
		Portfolio: o.PortfolioName, Benchmark: o.BenchmarkName,
		AsOf: m.AsOf.String(), Method: m.Method, NumAssets: len(m.Assets), PeriodsPerYear: m.PeriodsPerYear,
		GroupBy: o.GroupBy, Caution: Caution, Warnings: []string{}, Cash: []string{}, Factors: []FactorRow{},
		Contributors: []AssetRow{}, Hedges: []HedgeRow{},
		Units: fmt.Sprintf("weights are fractions of capital; risk figures are annualised by √%g (%g periods a year); percent is of the tracking error",
			m.PeriodsPerYear, m.PeriodsPerYear),
	}
	if m.Factor != nil {
		r.NumFactors = m.Factor.NumFactors()
	}
	return r
}

// attribution is the state the steps of Attribute share.
type attribution struct {
	m      *Model
	al     *te.Aligned
	d      *te.Decomposition
	s      float64    // √PeriodsPerYear
	labels [][]string // labels[g][i]: asset i's label in grouping g
}

// decompose aligns the holdings with the model (uncovered names as cash) and
// decomposes the tracking error.
func decompose(m *Model, portfolio, benchmark []Holding) (*attribution, error) {
	al, err := te.Align(m.Assets, HoldingsMap(portfolio), HoldingsMap(benchmark), &te.AlignOptions{UncoveredAsCash: true})
	if errors.Is(err, te.ErrEmpty) {
		return nil, fmt.Errorf("riskmodel: attribute: %w: %v", ErrNoHoldings, err)
	}
	if err != nil {
		return nil, fmt.Errorf("riskmodel: attribute: %w", err)
	}
	an, err := te.NewAnalyzer(m.Covariance())
	if err != nil {
		return nil, fmt.Errorf("riskmodel: attribute: %w", err)
	}
	d, err := an.Decompose(al.Portfolio, al.Benchmark)
	if errors.Is(err, te.ErrEmpty) {
		return nil, fmt.Errorf("riskmodel: attribute: %w: none of its %d names is in the model%s", ErrNoHoldings,
			len(al.Cash), closestHint(al.Cash, m.Assets))
	}
	if err != nil {
		return nil, fmt.Errorf("riskmodel: attribute: %w", err)
	}
	return &attribution{m: m, al: al, d: d, s: math.Sqrt(m.PeriodsPerYear)}, nil
}

// setTotals fills the headline figures and the cash line.
func (r *Attribution) setTotals(run *attribution) {
	d, s := run.d, run.s
	ann := d.Annualized(run.m.PeriodsPerYear)
	r.TrackingError, r.PortfolioRisk, r.BenchmarkRisk, r.Beta = ann.TE, ann.PortfolioRisk, ann.BenchmarkRisk, d.Beta
	r.Factored = d.Factored
	if run.al.Cash != nil {
		r.Cash = run.al.Cash
	}
	r.CashPortfolio, r.CashBenchmark = run.al.CashPortfolio, run.al.CashBenchmark
	if d.Factored {
		for i := range d.FactorPart {
			r.FactorPart += d.FactorPart[i] * s
			r.SpecificPart += d.SpecificPart[i] * s
		}
	}
}

// setGroupings adds one table per grouping column.
func (r *Attribution) setGroupings(run *attribution) {
	for g, col := range r.GroupBy {
		rows := []GroupRow{}
		pos := map[string]int{}
		for _, x := range run.d.Groups(run.labels[g]) {
			pos[x.Label] = len(rows)
			rows = append(rows, GroupRow{
				Group: x.Label, Members: x.Members, Active: x.ActiveWeight, Contribution: x.Contribution * run.s,
				Percent: x.Percent, Factor: x.Factor * run.s, Specific: x.Specific * run.s,
				StandAloneTE: x.Volatility * run.s, Correlation: x.Correlation,
			})
		}
		for i, l := range run.labels[g] {
			row := &rows[pos[l]]
			row.Portfolio += run.al.Portfolio[i]
			row.Benchmark += run.al.Benchmark[i]
			if run.al.Portfolio[i] != 0 {
				row.Held++
			}
		}
		r.Groupings = append(r.Groupings, Grouping{Column: col, Title: columnTitle(col), Groups: rows})
	}
}

// crossSep joins two labels into one; no metadata text holds a NUL.
const crossSep = "\x00"

// setCross adds the cross table of the first two groupings.
func (r *Attribution) setCross(run *attribution) {
	if len(r.GroupBy) < 2 {
		return
	}
	rows, cols := run.labels[0], run.labels[1]
	pair := make([]string, len(rows))
	for i := range pair {
		pair[i] = rows[i] + crossSep + cols[i]
	}
	c := &CrossTable{Rows: r.GroupBy[0], Columns: r.GroupBy[1]}
	pos := map[string]int{}
	for _, x := range run.d.Groups(pair) {
		row, col, _ := strings.Cut(x.Label, crossSep)
		pos[x.Label] = len(c.Cells)
		c.Cells = append(c.Cells, CrossCell{Row: row, Column: col, Members: x.Members, Active: x.ActiveWeight,
			Contribution: x.Contribution * run.s, Percent: x.Percent})
	}
	for i, l := range pair {
		cell := &c.Cells[pos[l]]
		cell.Portfolio += run.al.Portfolio[i]
		cell.Benchmark += run.al.Benchmark[i]
	}
	r.Cross = c
}

// setContributors lists the top names by contribution.
func (r *Attribution) setContributors(run *attribution, top int) {
	d, s := run.d, run.s
	for _, i := range d.HotSpots(top) {
		row := AssetRow{
			Asset: run.m.Assets[i], Groups: run.groupsOf(i), Portfolio: run.al.Portfolio[i], Benchmark: run.al.Benchmark[i],
			Active: d.Active[i], Contribution: d.Contribution[i] * s, Percent: d.Percent[i], Marginal: d.Marginal[i] * s,
			Volatility: d.Volatility[i] * s, Correlation: d.Correlation[i],
		}
		if d.Factored {
			row.Factor, row.Specific = d.FactorPart[i]*s, d.SpecificPart[i]*s
		}
		r.Contributors = append(r.Contributors, row)
	}
}

// groupsOf returns asset i's label in each grouping.
func (run *attribution) groupsOf(i int) []string {
	out := make([]string, len(run.labels))
	for g := range run.labels {
		out[g] = run.labels[g][i]
	}
	return out
}

// setBand checks the tracking error against the band.
func (r *Attribution) setBand(b *te.Band) error {
	if b == nil {
		return nil
	}
	c, err := b.Check(r.TrackingError)
	if err != nil {
		return fmt.Errorf("riskmodel: attribute: %w", err)
	}
	r.Band = &BandRow{Lower: b.Lower, Upper: b.Upper, Status: bandStatus(c.Status), Breach: c.Breach}
	return nil
}

// checkBandUnits refuses band limits of 100 % or more, which are percent
// typed for fractions.
func checkBandUnits(b *te.Band) error {
	if b != nil && (b.Lower >= 1 || b.Upper >= 1) {
		return fmt.Errorf("riskmodel: attribute: %w: limits %g,%g look like percent; give annualised fractions such as 0.01,0.03",
			te.ErrBand, b.Lower, b.Upper)
	}
	return nil
}

// groupLabels returns, for each column, each model asset's label.
func groupLabels(model []string, assets []AssetInfo, columns []string) ([][]string, error) {
	out := make([][]string, len(columns))
	for g, col := range columns {
		labels, err := GroupLabels(assets, col)
		if err != nil {
			return nil, err
		}
		out[g] = make([]string, len(model))
		for i, a := range model {
			if l, ok := labels[a]; ok {
				out[g][i] = l
			} else {
				out[g][i] = NoGroup
			}
		}
	}
	return out, nil
}

// columnTitle turns a metadata column name into a heading: "size_bucket"
// becomes "size bucket".
func columnTitle(col string) string {
	return strings.Join(strings.FieldsFunc(col, func(r rune) bool { return r == '_' || r == '-' }), " ")
}

func bandStatus(s te.BandStatus) string {
	switch s {
	case te.Below:
		return "below"
	case te.Above:
		return "above"
	}
	return "within"
}
