package demo

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"time"

	"github.com/riskmodel/riskmodel"

	"gonum.org/v1/gonum/mat"
)

// Seed is the seed of the bundled demo market under testdata/demo: a nil
// *Config means &Config{Seed: Seed}.
const Seed = 20300107

// ErrConfig is returned, wrapped with the offending field, for a
// Config that cannot be simulated.
var ErrConfig = errors.New("invalid demo configuration")

// Config sets up an invented market for Generate. The zero value of
// every field but Seed is the documented default, so &Config{Seed: s} is
// the demo market drawn with another seed. Counts and fractions that default
// to a positive value are switched off by a negative value.
type Config struct {
	// Seed drives every random draw (math/rand/v2 PCG). It is used as given:
	// zero is a seed like any other.
	Seed uint64

	Assets  int            // number of stocks; 0 means 500
	Sectors int            // number of sectors, at most Assets; 0 means 10
	Dates   int            // number of business dates, at least 20; 0 means 1008 (four years of 252)
	Start   riskmodel.Date // first date, moved forward to a weekday; 0 means 2030-01-07

	// SpecificDoF is the degrees of freedom of the Student-t specific
	// returns, scaled to unit variance; it must exceed 2. 0 means 5;
	// math.Inf(1) means normal specific returns.
	SpecificDoF float64

	// Stationary switches off volatility clustering, the stress episode,
	// listings, delistings, halts and data faults, whatever the fields below
	// say: every date then has the same true covariance and every cell of
	// the panel is observed.
	Stationary bool

	// LateListings and EarlyDelistings are the fractions of assets that list
	// after the first date or delist before the last one (disjoint sets).
	// 0 means 0.08 and 0.06; negative means none.
	LateListings, EarlyDelistings float64

	// Halts is the number of trading halts (runs of 1 to 8 missing days
	// inside an asset's listed life). 0 means 30; negative means none.
	Halts int

	// StaleRuns is the number of runs of 5 to 15 zero returns written over
	// true returns, as a stale price feed would. 0 means 4; negative means
	// none.
	StaleRuns int

	// Outliers is the number of single returns replaced by a large legal
	// value (25 % to 60 % up or down; the first one is +125 %, above a
	// plausibility limit of 100 % a day). 0 means 6; negative means none.
	Outliers int

	// StressStart is the first row of the stress episode and StressLength
	// its number of dates; during it the market factor's variance is 6.25
	// times higher, the sector factors' 2.25 times and the specific
	// variances 1.5 times, so volatility and correlation both rise.
	// StressStart 0 means row 0.6·Dates; StressLength 0 means 20 (four
	// weeks) or Dates/10 if that is shorter; negative means no stress
	// episode.
	StressStart, StressLength int

	// FundTrackingError is the annualised ex-ante tracking error of the
	// demo fund against the benchmark, under the true covariance of the
	// holdings date. 0 means 0.03.
	FundTrackingError float64
}

// Defaults of Config.
const (
	demoAssets          = 500
	demoSectors         = 10
	demoDates           = 4 * riskmodel.DailyPeriods
	demoDoF             = 5
	demoLateListings    = 0.08
	demoEarlyDelistings = 0.06
	demoHalts           = 30
	demoStaleRuns       = 4
	demoOutliers        = 6
	demoStressLength    = 20
	demoFundTE          = 0.03
)

// resolve returns cfg with its defaults filled in, or an error for a field
// that cannot be simulated. Switched-off features come back as zero counts.
func (cfg *Config) resolve() (Config, error) {
	c := Config{Seed: Seed}
	if cfg != nil {
		c = *cfg
	}
	bad := func(field string, v any) (Config, error) {
		return Config{}, fmt.Errorf("riskmodel: %w: %s = %v", ErrConfig, field, v)
	}
	c.Assets = orDefault(c.Assets, demoAssets)
	c.Sectors = orDefault(c.Sectors, demoSectors)
	c.Dates = orDefault(c.Dates, demoDates)
	switch {
	case c.Assets < 1:
		return bad("Assets", c.Assets)
	case c.Sectors < 1 || c.Sectors > c.Assets:
		return bad("Sectors", c.Sectors)
	case c.Dates < 20:
		return bad("Dates", c.Dates)
	}
	if c.Start == 0 {
		c.Start = riskmodel.DateOf(2030, time.January, 7)
	}
	for c.Start.Weekday() == time.Saturday || c.Start.Weekday() == time.Sunday {
		c.Start++
	}
	if c.SpecificDoF == 0 {
		c.SpecificDoF = demoDoF
	}
	if !(c.SpecificDoF > 2) {
		return bad("SpecificDoF", c.SpecificDoF)
	}
	if c.FundTrackingError == 0 {
		c.FundTrackingError = demoFundTE
	}
	if !(c.FundTrackingError > 0) || math.IsInf(c.FundTrackingError, 0) {
		return bad("FundTrackingError", c.FundTrackingError)
	}
	if c.Stationary {
		c.LateListings, c.EarlyDelistings = 0, 0
		c.Halts, c.StaleRuns, c.Outliers = 0, 0, 0
		c.StressStart, c.StressLength = 0, 0
		return c, nil
	}
	c.LateListings = fracDefault(c.LateListings, demoLateListings)
	c.EarlyDelistings = fracDefault(c.EarlyDelistings, demoEarlyDelistings)
	switch {
	case math.IsNaN(c.LateListings) || c.LateListings > 0.5:
		return bad("LateListings", c.LateListings)
	case math.IsNaN(c.EarlyDelistings) || c.EarlyDelistings > 0.5:
		return bad("EarlyDelistings", c.EarlyDelistings)
	}
	c.Halts = max(orDefault(c.Halts, demoHalts), 0)
	c.StaleRuns = max(orDefault(c.StaleRuns, demoStaleRuns), 0)
	c.Outliers = max(orDefault(c.Outliers, demoOutliers), 0)
	if c.StressLength == 0 {
		c.StressLength = min(demoStressLength, c.Dates/10)
	}
	c.StressLength = max(c.StressLength, 0)
	if c.StressLength > 0 {
		if c.StressStart == 0 {
			c.StressStart = c.Dates * 3 / 5
		}
		if c.StressStart < 0 || c.StressStart+c.StressLength > c.Dates {
			return bad("StressStart", c.StressStart)
		}
	} else {
		c.StressStart = 0
	}
	return c, nil
}

// explicit returns the resolved configuration c with every switched-off
// feature marked negative, so that Generate(&c) draws the same demo again.
func (c Config) explicit() Config {
	if c.Stationary {
		return c
	}
	for _, v := range []*int{&c.Halts, &c.StaleRuns, &c.Outliers, &c.StressLength} {
		if *v == 0 {
			*v = -1
		}
	}
	for _, v := range []*float64{&c.LateListings, &c.EarlyDelistings} {
		if *v == 0 {
			*v = -1
		}
	}
	return c
}

func orDefault(v, def int) int {
	if v == 0 {
		return def
	}
	return v
}

func fracDefault(v, def float64) float64 {
	switch {
	case v == 0:
		return def
	case v < 0:
		return 0
	}
	return v
}

// Market is an invented equity market simulated from a known factor structure,
// with the truth behind it. Rows of every per-date quantity are the rows of
// riskmodel.Panel; columns of every per-asset quantity are the columns of riskmodel.Panel.
//
// The true return of asset n on row i is
//
//	r_in = Σ_k B_nk f_ik + e_in,   Cov_i(r) = Σ_i = B F_i Bᵀ + D_i
//
// where B holds the exposures (constant over time), f_i the factor returns
// with conditional covariance F_i and e_i the specific returns with
// conditional variances D_i = diag(d_i). F_i and D_i are known before row i
// is drawn (GARCH(1,1) recursions times the stress multipliers), so Σ_i is
// the covariance of row i given the past. The panel is the true return
// rounded to 1e-7, with NaN outside each asset's listed life and during
// halts, and with the data faults listed in Events written over it.
type Market struct {
	Panel  *riskmodel.Panel
	Assets []riskmodel.AssetInfo // sector, size bucket and market cap of every asset
	Spans  []Span                // listed life of every asset
	Events []Event               // halts and data faults, by column then start row

	// Benchmark is cap-weighted over the assets listed on HoldingsRow, the
	// last row; Fund is an enhanced index that tilts away from it with the
	// configured tracking error. Both are sorted by asset and sum to 1.
	Benchmark, Fund []riskmodel.Holding
	HoldingsRow     int

	// FactorNames are the columns of the exposures and factor returns: the
	// market, then SectorNames, then StyleNames.
	SectorNames, StyleNames, FactorNames []string

	// StressStart and StressEnd bound the stress episode, rows
	// [StressStart, StressEnd); they are equal when there is none.
	StressStart, StressEnd int

	// Config is the configuration used, with defaults filled in and
	// switched-off features negative: Generate(&d.Config) gives d again.
	Config Config

	b    *mat.Dense    // N×K exposures
	chol *mat.TriDense // K×K lower Cholesky factor of the factor correlation
	corr *mat.SymDense // K×K factor correlation
	fsd  *mat.Dense    // T×K conditional factor standard deviations
	f    *mat.Dense    // T×K factor returns
	svar *mat.Dense    // T×N conditional specific variances
	e    *mat.Dense    // T×N specific returns
}

// Span is the listed life of an asset: rows First to Last inclusive.
// Outside it the panel is NaN; inside it only halts are missing.
type Span struct {
	First, Last int
}

// EventKind says what a Event did to the panel.
type EventKind int

// Kinds of Event.
const (
	Halt    EventKind = iota + 1 // returns missing (NaN)
	Stale                        // returns replaced by 0
	Outlier                      // one return replaced by Value
)

// String returns "halt", "stale" or "outlier".
func (k EventKind) String() string {
	switch k {
	case Halt:
		return "halt"
	case Stale:
		return "stale"
	case Outlier:
		return "outlier"
	}
	return fmt.Sprintf("EventKind(%d)", int(k))
}

// Event is a run of Len cells of column Column starting at row Start that
// the generator removed (a halt) or overwrote (a data fault). Value is the
// value written: NaN for a halt, 0 for a stale run, the return of an outlier.
// Events never overlap, touch each other or reach an asset's first or last
// listed row.
type Event struct {
	Kind       EventKind
	Column     int
	Start, Len int
	Value      float64
}

// Weights returns the weights of the holdings aligned with the panel's
// columns (zero for an asset not held). It returns an error wrapping
// riskmodel.ErrUnknownAsset for an asset the panel does not have, and riskmodel.ErrDuplicate for
// an asset listed twice.
func (d *Market) Weights(h []riskmodel.Holding) ([]float64, error) {
	_, n := d.Panel.Dims()
	w := make([]float64, n)
	seen := make([]bool, n)
	for _, x := range h {
		j, ok := d.Panel.Column(x.Asset)
		if !ok {
			return nil, fmt.Errorf("riskmodel: %w %q", riskmodel.ErrUnknownAsset, x.Asset)
		}
		if seen[j] {
			return nil, fmt.Errorf("riskmodel: %w: asset %q held twice", riskmodel.ErrDuplicate, x.Asset)
		}
		seen[j] = true
		w[j] = x.Weight
	}
	return w, nil
}

// sectorNames is the demo's own sector scheme; more sectors than names are
// called "Guild 13", "Guild 14", and so on.
var sectorNames = []string{
	"Orchards", "Foundries", "Harbours", "Looms", "Lanterns", "Apothecaries",
	"Counting Houses", "Wellsprings", "Caravans", "Printworks", "Granaries",
	"Signal Towers",
}

func sectorNamesFor(s int) []string {
	names := slices.Clone(sectorNames[:min(s, len(sectorNames))])
	for k := len(names); k < s; k++ {
		names = append(names, fmt.Sprintf("Guild %d", k+1))
	}
	return names
}

// Style factors of the demo: "scale" is the standardised log market cap at
// listing; the others are invented characteristics drawn as standard normal
// scores.
var styleNames = []string{"scale", "trend", "calm", "gearing"}

// assetID returns the invented identifier of asset j of n: "QV" and a
// zero-padded number, so identifiers sort in column order.
func assetID(j, n int) string {
	width := max(4, len(fmt.Sprint(n)))
	return fmt.Sprintf("QV%0*d", width, j+1)
}
