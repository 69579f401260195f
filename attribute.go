package riskmodel

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/riskmodel/riskmodel/te"
)

// Caution is the line every attribution report carries.
const Caution = "Forecasts are statistical estimates from past returns, not investment advice; validate any model under your own governance before relying on it."

// Defaults of AttributionOptions.
const (
	DefaultGroupBy  = "sector"
	DefaultTopNames = 10
)

// AttributionOptions configure Attribute. A nil *AttributionOptions or a
// zero field means the documented default.
type AttributionOptions struct {
	// GroupBy is the metadata column to attribute by ("sector",
	// "size_bucket" or any other column of the asset file); default
	// DefaultGroupBy.
	GroupBy string
	// Top is the number of single names listed as contributors and as
	// hedges; default DefaultTopNames.
	Top int
	// Band, if set, is the mandate's tracking-error band, annualised.
	Band *te.Band
}

// Attribution is an ex-ante tracking-error report: the JSON document of the
// attribution program, and what its text, CSV and HTML forms show. Every
// risk figure (tracking error, contributions, parts, volatilities, marginal
// contributions) is annualised with the model's PeriodsPerYear; weights are
// fractions of capital; percents are of the tracking error.
type Attribution struct {
	AsOf           string  `json:"as_of"`
	Method         string  `json:"method"`
	PeriodsPerYear float64 `json:"periods_per_year"`
	GroupBy        string  `json:"group_by"`

	// TrackingError is √(aᵀΣa)·√PeriodsPerYear with a = portfolio − benchmark.
	TrackingError float64 `json:"tracking_error"`
	// Factored says whether the model is in factor form. Then FactorPart +
	// SpecificPart = TrackingError (the Euler split of xᵀFx + aᵀDa);
	// otherwise both are 0.
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

	Groups       []GroupRow  `json:"groups"`
	Contributors []AssetRow  `json:"contributors"`
	Hedges       []HedgeRow  `json:"hedges"`
	Factors      []FactorRow `json:"factors"`
	Specific     *FactorRow  `json:"specific"` // nil unless Factored
	Band         *BandRow    `json:"band"`     // nil without a band
	Caution      string      `json:"caution"`
}

// GroupRow is one group's part of the tracking error. Contribution =
// Volatility · Correlation (Menchero–Davis, with the exposure folded into the
// group's stand-alone tracking error Volatility) = Factor + Specific.
type GroupRow struct {
	Group        string  `json:"group"`
	Members      int     `json:"members"`
	Portfolio    float64 `json:"portfolio"`
	Benchmark    float64 `json:"benchmark"`
	Active       float64 `json:"active"`
	Contribution float64 `json:"contribution"`
	Percent      float64 `json:"percent"`
	Factor       float64 `json:"factor"`
	Specific     float64 `json:"specific"`
	Volatility   float64 `json:"volatility"`
	Correlation  float64 `json:"correlation"`
}

// AssetRow is one name's part of the tracking error: Contribution =
// Active · Volatility · Correlation (Menchero–Davis) and Marginal = ∂TE/∂a_i.
type AssetRow struct {
	Asset        string  `json:"asset"`
	Group        string  `json:"group"`
	Portfolio    float64 `json:"portfolio"`
	Benchmark    float64 `json:"benchmark"`
	Active       float64 `json:"active"`
	Contribution float64 `json:"contribution"`
	Percent      float64 `json:"percent"`
	Marginal     float64 `json:"marginal"`
	Volatility   float64 `json:"volatility"`
	Correlation  float64 `json:"correlation"`
}

// HedgeRow is the single trade in one name (against cash) that lowers the
// tracking error the most (Litterman's best hedge for that name).
type HedgeRow struct {
	Asset    string  `json:"asset"`
	Group    string  `json:"group"`
	Trade    float64 `json:"trade"` // change of weight
	HedgedTE float64 `json:"hedged_te"`
	Saving   float64 `json:"saving"` // TrackingError − HedgedTE
}

// FactorRow is one factor's (or the specific risk's) part of the tracking
// error: Contribution = Exposure · Volatility · Correlation.
type FactorRow struct {
	Factor       string  `json:"factor"`
	Exposure     float64 `json:"exposure"`
	Volatility   float64 `json:"volatility"`
	Correlation  float64 `json:"correlation"`
	Contribution float64 `json:"contribution"`
	Percent      float64 `json:"percent"`
}

// BandRow is the band check: Status is "within", "below" or "above".
type BandRow struct {
	Lower  float64 `json:"lower"`
	Upper  float64 `json:"upper"`
	Status string  `json:"status"`
	Breach float64 `json:"breach"`
}

// Attribute decomposes the ex-ante tracking error of portfolio against
// benchmark under the model m, by the metadata column opts.GroupBy of
// assets, by single name, by factor, and checks it against a band. Held
// assets the model does not cover count as cash (zero risk) and are listed.
// With a = p − b and x = Bᵀa (package te):
//
//	TE = √(aᵀΣa),   contribution_i = a_i (Σa)_i / TE,   Σ_i contribution_i = TE
//
// Attribute returns an error wrapping ErrNoGroupColumn for an unknown group
// column, ErrNoHoldings for a portfolio of no covered weight, te's errors
// for non-finite weights, and te.ErrBand for a bad band. Cost: that of
// te.Analyzer.DecomposeTo and GroupsTo, O(N·K²) for a factor model.
//
// References:
//
// Menchero, J. & Davis, B. (2011). Risk contribution is exposure times
// volatility times correlation. Journal of Portfolio Management 37(2), 97–106.
//
// Litterman, R. (1996). Hot spots and hedges. Journal of Portfolio
// Management, special issue.
func Attribute(m *Model, portfolio, benchmark []Holding, assets []AssetInfo, opts *AttributionOptions) (*Attribution, error) {
	var o AttributionOptions
	if opts != nil {
		o = *opts
	}
	if o.GroupBy == "" {
		o.GroupBy = DefaultGroupBy
	}
	if o.Top == 0 {
		o.Top = DefaultTopNames
	}
	if err := m.check(); err != nil {
		return nil, err
	}
	labels, err := GroupLabels(assets, o.GroupBy)
	if err != nil {
		return nil, err
	}
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
		return nil, fmt.Errorf("riskmodel: attribute: %w: %v", ErrNoHoldings, err)
	}
	if err != nil {
		return nil, fmt.Errorf("riskmodel: attribute: %w", err)
	}
	s := math.Sqrt(m.PeriodsPerYear)
	ann := d.Annualized(m.PeriodsPerYear)
	r := &Attribution{
		AsOf: m.AsOf.String(), Method: m.Method, PeriodsPerYear: m.PeriodsPerYear, GroupBy: o.GroupBy,
		TrackingError: ann.TE, Factored: d.Factored, PortfolioRisk: ann.PortfolioRisk, BenchmarkRisk: ann.BenchmarkRisk,
		Beta: d.Beta, Cash: al.Cash, CashPortfolio: al.CashPortfolio, CashBenchmark: al.CashBenchmark, Caution: Caution,
	}
	if r.Cash == nil {
		r.Cash = []string{}
	}
	lab := make([]string, len(m.Assets))
	for i, a := range m.Assets {
		if g, ok := labels[a]; ok {
			lab[i] = g
		} else {
			lab[i] = NoGroup
		}
	}
	for _, g := range d.Groups(lab) {
		row := GroupRow{
			Group: g.Label, Members: g.Members, Active: g.ActiveWeight,
			Contribution: g.Contribution * s, Percent: g.Percent, Factor: g.Factor * s, Specific: g.Specific * s,
			Volatility: g.Volatility * s, Correlation: g.Correlation,
		}
		r.Groups = append(r.Groups, row)
	}
	pos := make(map[string]int, len(r.Groups))
	for k, g := range r.Groups {
		pos[g.Group] = k
	}
	for i := range m.Assets {
		g := &r.Groups[pos[lab[i]]]
		g.Portfolio += al.Portfolio[i]
		g.Benchmark += al.Benchmark[i]
	}
	if d.Factored {
		for i := range m.Assets {
			r.FactorPart += d.FactorPart[i] * s
			r.SpecificPart += d.SpecificPart[i] * s
		}
		names := m.Factor.FactorNames()
		for k, f := range d.Factors {
			r.Factors = append(r.Factors, factorRow(names[k], f, s))
		}
		sp := factorRow("specific", d.Specific, s)
		r.Specific = &sp
	}
	if r.Factors == nil {
		r.Factors = []FactorRow{}
	}
	for _, i := range d.HotSpots(o.Top) {
		r.Contributors = append(r.Contributors, AssetRow{
			Asset: m.Assets[i], Group: lab[i], Portfolio: al.Portfolio[i], Benchmark: al.Benchmark[i], Active: d.Active[i],
			Contribution: d.Contribution[i] * s, Percent: d.Percent[i], Marginal: d.Marginal[i] * s,
			Volatility: d.Volatility[i] * s, Correlation: d.Correlation[i],
		})
	}
	r.Hedges = hedges(m.Assets, lab, d, s, o.Top)
	if o.Band != nil {
		c, err := o.Band.Check(r.TrackingError)
		if err != nil {
			return nil, fmt.Errorf("riskmodel: attribute: %w", err)
		}
		r.Band = &BandRow{Lower: o.Band.Lower, Upper: o.Band.Upper, Status: bandStatus(c.Status), Breach: c.Breach}
	}
	return r, nil
}

func factorRow(name string, f te.Source, s float64) FactorRow {
	return FactorRow{Factor: name, Exposure: f.Exposure, Volatility: f.Volatility * s, Correlation: f.Correlation,
		Contribution: f.Contribution * s, Percent: f.Percent}
}

// hedges returns the top names by how much their single best trade lowers
// the tracking error, largest saving first, ties by asset order.
func hedges(assets, lab []string, d *te.Decomposition, s float64, top int) []HedgeRow {
	idx := make([]int, len(assets))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(d.HedgedTE[a], d.HedgedTE[b]) })
	out := []HedgeRow{}
	for _, i := range idx[:min(top, len(idx))] {
		if d.Hedge[i] == 0 {
			continue
		}
		out = append(out, HedgeRow{Asset: assets[i], Group: lab[i], Trade: d.Hedge[i], HedgedTE: d.HedgedTE[i] * s,
			Saving: (d.TE - d.HedgedTE[i]) * s})
	}
	return out
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
