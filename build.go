package riskmodel

import (
	"fmt"
	"math"
	"slices"
	"strconv"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/shrink"
)

// The estimators Build can run, by the names the programs use.
const (
	MethodFactor              = "factor"               // statistical factor model (package factor)
	MethodSample              = "sample"               // equally weighted sample covariance, pairwise
	MethodEWMA                = "ewma"                 // exponentially weighted, separate half-lives (package ewma)
	MethodLedoitWolf          = "ledoit-wolf"          // toward a scaled identity (Ledoit & Wolf 2004)
	MethodOAS                 = "oas"                  // oracle approximating shrinkage (Chen et al. 2010)
	MethodConstantCorrelation = "constant-correlation" // toward constant correlation (Ledoit & Wolf 2004)
	MethodSingleIndex         = "single-index"         // toward a one-factor market model (Ledoit & Wolf 2003)
	MethodSchaferStrimmer     = "schafer-strimmer"     // correlations and variances shrunk separately
	MethodNonlinear           = "nonlinear"            // analytical nonlinear shrinkage (Ledoit & Wolf 2020)
	MethodExposure            = "exposure"             // sector and style factors by cross-sectional regression
	MethodHybrid              = "hybrid"               // exposure factors plus statistical factors of the residuals
)

// Methods lists every method name Build accepts, the default first.
var Methods = []string{
	MethodFactor, MethodSample, MethodEWMA, MethodLedoitWolf, MethodOAS,
	MethodConstantCorrelation, MethodSingleIndex, MethodSchaferStrimmer, MethodNonlinear,
	MethodExposure, MethodHybrid,
}

// Defaults of BuildOptions. The half-lives are common practice for daily
// equity risk (volatility reacting within a quarter, correlations over about
// half a year), no single source.
const (
	DefaultWindow       = 504 // two years of daily dates
	DefaultVolHalfLife  = 63
	DefaultCorrHalfLife = 126
)

// RepairCondition is the condition number to which Build caps a pairwise
// ewma or sample estimate that needed a repair to be positive semidefinite,
// a hundredth of DefaultMaxCondition so the result passes Validate with room.
const RepairCondition = DefaultMaxCondition / 100

// BuildOptions configure Build. A nil *BuildOptions, or a zero field, means
// the documented default. The fields at the top apply to every method; each
// estimator family reads its own settings (EWMA, Factor, Shrink) and ignores
// the others', as each of gonum's optimize methods owns its settings.
type BuildOptions struct {
	Method string // one of Methods; default MethodFactor
	Window int    // number of dates of history up to the as-of date; default DefaultWindow
	// MinObs drops assets with fewer observations in the window; default
	// DefaultMinObs of the window's dates. Dropped assets are listed in the
	// report.
	MinObs int
	Seed   uint64 // seed of every randomized step (principal components, simulations)

	// Adjust switches on the corrections for optimized portfolios and
	// volatility regimes (see factor.Adjustments); only Regime and
	// RegimeHalfLife apply to the dense methods (see ParseVariant).
	Adjust factor.Adjustments
	// Previous, if set, is the previous model whose factors the new ones are
	// rotated onto, so that factors keep their order and sign.
	Previous *Model

	// Sectors and MarketCaps are asset metadata (the columns sector and
	// market_cap); the exposure and hybrid methods require both and drop,
	// and report, assets that lack either.
	Sectors    map[string]string
	MarketCaps map[string]float64

	EWMA   EWMAOptions   // the ewma method, and the factor covariance of every factor method
	Factor FactorOptions // the factor method, and the statistical part of hybrid
	Shrink ShrinkOptions // ledoit-wolf, oas, constant-correlation, single-index, schafer-strimmer, nonlinear
}

// EWMAOptions are the exponential weights of the ewma method and of the
// factor covariance F of the factor, exposure and hybrid methods.
type EWMAOptions struct {
	// VolHalfLife and CorrHalfLife, in periods; defaults DefaultVolHalfLife
	// and DefaultCorrHalfLife.
	VolHalfLife, CorrHalfLife float64
	// NeweyWestLags adjusts for serial correlation: 0 none, n > 0 lags,
	// ewma.AutoLags the automatic rule.
	NeweyWestLags int
}

// FactorOptions configure the factor models.
type FactorOptions struct {
	// K fixes the number of factors; 0 chooses it by Criterion. The hybrid
	// method adds K statistical factors (default 3).
	K          int
	MaxFactors int // the largest number the criteria consider; 0: package factor's default
	// Criterion names the factor-count criterion (factor.Criterion's
	// String, e.g. "holdout-likelihood"); "" means Bai & Ng's IC_p2.
	Criterion string
	// HoldoutBest makes the holdout criteria pick their best k rather than
	// the one-standard-error rule's (factor.Settings.HoldoutBest).
	HoldoutBest bool
	// SpecificHalfLife weights the residual variances; default
	// EWMA.VolHalfLife.
	SpecificHalfLife float64
	// Groups maps an asset to its group (sector, size bucket) for the
	// shrinkage of the specific variances; nil: one group.
	Groups map[string]string
	// GroupsName says what Groups are ("sector"), for the model's record
	// (Settings["specific_groups"]); default "groups".
	GroupsName string
}

// ShrinkOptions configure the shrinkage estimators.
type ShrinkOptions struct {
	// HalfLife, if positive, weights the observations exponentially with
	// this half-life; zero means equal weights, the estimators' published
	// form.
	HalfLife float64
}

// BuildReport says what Build did to the data and the estimate.
type BuildReport struct {
	Method     string
	AsOf       Date
	Start, End Date // first and last date of the window
	Dates      int  // dates in the window
	Assets     int  // assets in the model
	MinObs     int  // the fewest observations an asset needed to be kept
	// Dropped lists the assets dropped for fewer than MinObs observations
	// and then, for the pairwise sample and ewma methods, those dropped for
	// sharing fewer than 2 dates with another kept asset, with their
	// coverage; the notes give the count of each.
	Dropped []Coverage
	// EmptyDates lists the dates of the window on which no kept asset has a
	// return (a market holiday written as a row of blanks, say): they are
	// left out of the fit, and Dates does not count them.
	EmptyDates []Date
	Missing    int // missing cells of the window's returns for the kept assets
	Imputed    int // missing cells filled with the asset's window mean (shrinkage methods)
	// Unclassified lists assets the exposure and hybrid methods dropped for
	// a missing sector or market cap.
	Unclassified []string
	Notes        []string // the same facts as the model's Notes
	// Regime is the volatility-regime multiplier of a dense estimate and
	// its history; nil unless Adjust.Regime (factor models report theirs
	// in their Info).
	Regime *factor.Regime
}

// DefaultMinObs is Build's default for BuildOptions.MinObs on a window of
// the given number of dates: half the window, and at least 2. An asset with
// fewer observations gives a variance estimate too noisy to publish (common
// practice, no source).
func DefaultMinObs(dates int) int { return max(2, dates/2) }

// Build estimates a risk model from the panel's returns up to and including
// asof: it takes the last Window dates, drops assets with fewer than MinObs
// observations, runs the chosen estimator and returns the model with its
// report. Every number is per period.
//
// Missing data: the factor, sample and ewma methods handle missing returns
// themselves (imputation by iterated factor fits; pairwise moments with a
// reported PSD repair). The shrinkage estimators need complete data: a
// missing return is filled with its asset's mean over the window, which keeps
// the mean and shrinks that asset's variance by the share of missing dates;
// the number filled is reported.
func Build(p *Panel, asof Date, opts *BuildOptions) (*Model, *BuildReport, error) {
	o := withBuildDefaults(opts)
	if !slices.Contains(Methods, o.Method) {
		return nil, nil, fmt.Errorf("riskmodel: build: %w %q (one of %v)", ErrMethod, o.Method, Methods)
	}
	win, err := p.Window(asof, o.Window)
	if err != nil {
		return nil, nil, fmt.Errorf("riskmodel: build: %w", err)
	}
	minObs := o.MinObs
	if minObs == 0 {
		minObs = DefaultMinObs(len(win.dates))
	}
	win, dropped := win.DropSparse(minObs)
	unpaired := 0 // the last entries of dropped, from dropUnpaired
	var unclassified []string
	if o.Method == MethodExposure || o.Method == MethodHybrid {
		win, unclassified = keepClassified(win, o)
		if len(win.assets) == 0 {
			return nil, nil, fmt.Errorf("riskmodel: build %s: %w: no asset has both a sector and a positive market cap (asset metadata columns sector and market_cap)",
				o.Method, ErrEmpty)
		}
	}
	// A date on which no kept asset has a return carries no information,
	// and the factor methods cannot fit one: it leaves the window.
	win, empty := win.dropEmptyDates()
	if o.Method == MethodExposure || o.Method == MethodHybrid {
		// The regressions start after the styles' look-back: the window must
		// be longer, and an asset needs observations after it.
		look := factor.ExposureSettings{}.Lookback()
		if len(win.dates) < look+2 {
			return nil, nil, fmt.Errorf("riskmodel: build %s: %w: the window has %d dates; the style look-back takes %d and at least 2 more are needed",
				o.Method, ErrEmpty, len(win.dates), look)
		}
		var late []Coverage
		win, late = win.dropSparseAfter(look, 2)
		dropped = append(dropped, late...)
	}
	if o.Method == MethodSample || o.Method == MethodEWMA {
		// Their entries are pairwise over missing data: each pair of kept
		// assets must share two dates.
		var apart []Coverage
		win, apart = win.dropUnpaired(2)
		dropped = append(dropped, apart...)
		unpaired = len(apart)
	}
	t, n := win.Dims()
	if t < 2 || n < 1 {
		return nil, nil, fmt.Errorf("riskmodel: build: %w: %d dates and %d assets with at least %d observations up to %s",
			ErrEmpty, t, n, minObs, asof)
	}
	rep := &BuildReport{
		Method: o.Method, AsOf: asof, Start: win.dates[0], End: win.dates[t-1],
		Dates: t, Assets: n, MinObs: minObs, Dropped: dropped, EmptyDates: empty, Missing: countNaN(win.r),
	}
	if len(empty) > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d dates of the window with no return for any kept asset left out, first %s (a holiday row in the file, say)",
			len(empty), empty[0]))
	}
	if sparse := len(dropped) - unpaired; sparse > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d assets dropped for fewer than %d observations in the window", sparse, minObs))
	}
	if unpaired > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d assets dropped for sharing fewer than 2 dates with another asset in the window (each entry of the pairwise %s estimate needs 2), first %s",
			unpaired, o.Method, dropped[len(dropped)-unpaired].Asset))
	}
	if len(unclassified) > 0 {
		rep.Unclassified = unclassified
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d assets dropped for a missing sector or market cap, first %s", len(unclassified), unclassified[0]))
	}
	m := &Model{
		AsOf:           asof,
		Assets:         win.Assets(),
		PeriodsPerYear: p.PeriodsPerYear(),
		Method:         o.Method,
		Settings:       o.settings(),
	}
	recordWindow(m, rep, o.Window)
	recordGroups(m, o)
	o.adjustSettings(m.Settings)
	switch o.Method {
	case MethodFactor:
		err = buildFactor(m, win, o, rep)
	case MethodSample, MethodEWMA:
		err = buildEWMA(m, win, o, rep)
	case MethodExposure, MethodHybrid:
		err = buildExposure(m, win, o, rep)
	default:
		err = buildShrink(m, win, o, rep)
	}
	if err == nil {
		err = adjustDense(m, win, o, rep)
	}
	if err != nil {
		return nil, nil, fmt.Errorf("riskmodel: build %s: %w", o.Method, err)
	}
	m.Notes = rep.Notes
	return m, rep, nil
}

func withBuildDefaults(opts *BuildOptions) BuildOptions {
	var o BuildOptions
	if opts != nil {
		o = *opts
	}
	if o.Method == "" {
		o.Method = MethodFactor
	}
	if o.Window == 0 {
		o.Window = DefaultWindow
	}
	if o.EWMA.VolHalfLife == 0 {
		o.EWMA.VolHalfLife = DefaultVolHalfLife
	}
	if o.EWMA.CorrHalfLife == 0 {
		o.EWMA.CorrHalfLife = DefaultCorrHalfLife
	}
	if o.Factor.SpecificHalfLife == 0 {
		o.Factor.SpecificHalfLife = o.EWMA.VolHalfLife
	}
	return o
}

// settings records the options that matter for the method, in words.
func (o BuildOptions) settings() map[string]string {
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	s := map[string]string{"window": strconv.Itoa(o.Window)}
	switch o.Method {
	case MethodFactor:
		s["vol_half_life"] = f(o.EWMA.VolHalfLife)
		s["corr_half_life"] = f(o.EWMA.CorrHalfLife)
		s["specific_half_life"] = f(o.Factor.SpecificHalfLife)
		s["newey_west_lags"] = strconv.Itoa(o.EWMA.NeweyWestLags)
		s["factors"] = strconv.Itoa(o.Factor.K)
		s["seed"] = strconv.FormatUint(o.Seed, 10)
	case MethodEWMA:
		s["vol_half_life"] = f(o.EWMA.VolHalfLife)
		s["corr_half_life"] = f(o.EWMA.CorrHalfLife)
		s["newey_west_lags"] = strconv.Itoa(o.EWMA.NeweyWestLags)
	case MethodExposure, MethodHybrid:
		s["vol_half_life"] = f(o.EWMA.VolHalfLife)
		s["corr_half_life"] = f(o.EWMA.CorrHalfLife)
		s["specific_half_life"] = f(o.Factor.SpecificHalfLife)
		s["newey_west_lags"] = strconv.Itoa(o.EWMA.NeweyWestLags)
		if o.Method == MethodHybrid {
			s["factors"] = strconv.Itoa(o.hybridFactors())
			s["seed"] = strconv.FormatUint(o.Seed, 10)
		}
	case MethodSample:
	default:
		if o.Shrink.HalfLife > 0 {
			s["shrink_half_life"] = f(o.Shrink.HalfLife)
		}
	}
	return s
}

func buildFactor(m *Model, win *Panel, o BuildOptions, rep *BuildReport) error {
	s := factor.Settings{
		K:                o.Factor.K,
		MaxFactors:       o.Factor.MaxFactors,
		Seed:             o.Seed,
		Covariance:       ewma.Settings{VolHalfLife: o.EWMA.VolHalfLife, CorrHalfLife: o.EWMA.CorrHalfLife, NeweyWestLags: o.EWMA.NeweyWestLags},
		SpecificHalfLife: o.Factor.SpecificHalfLife,
		Assets:           m.Assets,
		Adjust:           o.Adjust,
		HoldoutBest:      o.Factor.HoldoutBest,
	}
	var err error
	if s.Criterion, err = o.criterion(); err != nil {
		return err
	}
	if o.Factor.Groups != nil {
		s.Groups = make([]string, len(m.Assets))
		for i, a := range m.Assets {
			s.Groups[i] = o.Factor.Groups[a]
		}
	}
	if prev := o.Previous; prev != nil && prev.Factor != nil {
		s.Previous = prev.Factor
		s.PreviousIndex = make([]int, len(m.Assets))
		pos := make(map[string]int, len(prev.Assets))
		for i, a := range prev.Assets {
			pos[a] = i
		}
		for i, a := range m.Assets {
			if j, ok := pos[a]; ok {
				s.PreviousIndex[i] = j
			} else {
				s.PreviousIndex[i] = -1
			}
		}
	}
	f, err := factor.Fit(win.r, s)
	if err != nil {
		return err
	}
	info := f.Info()
	rep.Notes = append(rep.Notes, fmt.Sprintf("%d factors: %s", f.NumFactors(), info.Reason))
	if im := info.Imputation; im.Missing > 0 {
		state := "converged"
		if !im.Converged {
			state = "did not converge"
		}
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d missing returns imputed by %d factor refits (%s, last change %.2g)",
			im.Missing, im.Iterations, state, im.Change))
	}
	if sp := info.Specific; sp.Floored > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d specific variances raised to the floor %.3g", sp.Floored, sp.Floor))
	}
	factorAdjustNotes(info, rep)
	m.Factor = f
	return nil
}

// keepClassified drops the assets with no sector or no positive, finite
// market cap, which the exposure regressions cannot place.
func keepClassified(win *Panel, o BuildOptions) (*Panel, []string) {
	var keep []int
	var dropped []string
	for j, a := range win.assets {
		c, ok := o.MarketCaps[a]
		if o.Sectors[a] != "" && ok && c > 0 && !math.IsInf(c, 0) {
			keep = append(keep, j)
		} else {
			dropped = append(dropped, a)
		}
	}
	if keep == nil {
		keep = []int{}
	}
	return win.Select(keep), dropped
}

// hybridFactors is the number of statistical factors of the hybrid method.
func (o BuildOptions) hybridFactors() int {
	if o.Factor.K > 0 {
		return o.Factor.K
	}
	return 3
}

func buildExposure(m *Model, win *Panel, o BuildOptions, rep *BuildReport) error {
	s := factor.ExposureSettings{
		Sectors:          make([]string, len(m.Assets)),
		StaticCaps:       make([]float64, len(m.Assets)),
		Covariance:       ewma.Settings{VolHalfLife: o.EWMA.VolHalfLife, CorrHalfLife: o.EWMA.CorrHalfLife, NeweyWestLags: o.EWMA.NeweyWestLags},
		SpecificHalfLife: o.Factor.SpecificHalfLife,
		Assets:           m.Assets,
	}
	for i, a := range m.Assets {
		s.Sectors[i] = o.Sectors[a]
		s.StaticCaps[i] = o.MarketCaps[a]
	}
	if o.Factor.Groups != nil {
		s.Groups = make([]string, len(m.Assets))
		for i, a := range m.Assets {
			s.Groups[i] = o.Factor.Groups[a]
		}
	}
	var f *factor.Model
	var reg *factor.Regression
	var err error
	if o.Method == MethodHybrid {
		f, reg, err = factor.FitHybrid(win.r, s, factor.HybridSettings{K: o.hybridFactors(), Seed: o.Seed})
	} else {
		f, reg, err = factor.FitExposure(win.r, s)
	}
	if err != nil {
		return err
	}
	minR2, maxCond := math.Inf(1), 0.0
	for _, cs := range reg.Dates {
		minR2 = min(minR2, cs.R2)
		maxCond = max(maxCond, cs.Cond)
	}
	rep.Notes = append(rep.Notes, fmt.Sprintf("%d factors from %d cross-sectional regressions (from %s; lowest R² %.3f, largest condition number %.3g)",
		f.NumFactors(), len(reg.Dates), win.dates[reg.First], minR2, maxCond))
	if sp := f.Info().Specific; sp.Floored > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d specific variances raised to the floor %.3g", sp.Floored, sp.Floor))
	}
	m.Factor = f
	return nil
}

func buildEWMA(m *Model, win *Panel, o BuildOptions, rep *BuildReport) error {
	dst := mat.NewSymDense(len(m.Assets), nil)
	var r *ewma.Report
	var err error
	if o.Method == MethodSample {
		// Equal weights with the mean removed: the sample covariance with the
		// divisor T, pairwise over missing data.
		_, r, err = ewma.Covariance(dst, win.r, nil, &ewma.Options{Demean: true})
	} else {
		_, r, err = ewma.Estimate(dst, win.r, ewma.Settings{
			VolHalfLife: o.EWMA.VolHalfLife, CorrHalfLife: o.EWMA.CorrHalfLife, NeweyWestLags: o.EWMA.NeweyWestLags,
		})
	}
	if err != nil {
		return err
	}
	if r.Repair != nil {
		// The pairwise repair clips negative eigenvalues to zero, which
		// leaves a singular matrix an optimizer cannot invert: raise the
		// smallest eigenvalues so the condition number is at most
		// RepairCondition, and report both steps.
		rep.Notes = append(rep.Notes, fmt.Sprintf("pairwise estimate had %d negative eigenvalues (smallest %.3g), clipped to zero",
			r.Repair.Clipped, r.Repair.MinEigenvalue))
		_, fix, err := shrink.CapCondition(dst, dst, RepairCondition)
		if err != nil {
			return err
		}
		rep.Notes = append(rep.Notes, fmt.Sprintf("then %d eigenvalues raised to cap the condition number at %.0e (largest shift %.3g)",
			fix.Changed, RepairCondition, fix.MaxShift))
	}
	m.Dense = dst
	return nil
}

func buildShrink(m *Model, win *Panel, o BuildOptions, rep *BuildReport) error {
	x := win.ReturnsTo(nil)
	rep.Imputed = fillMeans(x)
	if rep.Imputed > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d missing returns filled with their asset's window mean", rep.Imputed))
	}
	var w []float64
	if o.Shrink.HalfLife > 0 {
		var err error
		if w, err = ewma.Weights(nil, len(win.dates), o.Shrink.HalfLife); err != nil {
			return err
		}
	}
	dst := mat.NewSymDense(len(m.Assets), nil)
	var note string
	var err error
	switch o.Method {
	case MethodLedoitWolf:
		var r shrink.LinearResult
		_, r, err = shrink.LedoitWolf(dst, x, w)
		note = fmt.Sprintf("shrinkage intensity %.4f toward %.4g·I", r.Intensity, r.Mu)
	case MethodOAS:
		var r shrink.LinearResult
		_, r, err = shrink.OAS(dst, x, w)
		note = fmt.Sprintf("shrinkage intensity %.4f toward %.4g·I", r.Intensity, r.Mu)
	case MethodConstantCorrelation:
		var r shrink.TargetResult
		_, r, err = shrink.ConstantCorrelation(dst, x, w)
		note = fmt.Sprintf("shrinkage intensity %.4f toward constant correlation %.4f", r.Intensity, r.MeanCorr)
	case MethodSingleIndex:
		var r shrink.TargetResult
		_, r, err = shrink.SingleIndex(dst, x, w)
		note = fmt.Sprintf("shrinkage intensity %.4f toward the single-index model", r.Intensity)
	case MethodSchaferStrimmer:
		var r shrink.SchaferResult
		_, r, err = shrink.SchaferStrimmer(dst, x, w)
		note = fmt.Sprintf("correlation shrinkage %.4f, variance shrinkage %.4f", r.Lambda, r.LambdaVar)
	case MethodNonlinear:
		_, _, err = shrink.Nonlinear(dst, x, w)
		note = "analytical nonlinear shrinkage of the eigenvalues"
	}
	if err != nil {
		return err
	}
	rep.Notes = append(rep.Notes, note)
	m.Dense = dst
	return nil
}

// fillMeans replaces each NaN of x by the mean of the observed values of its
// column and returns how many it replaced. A column with no observation is
// filled with 0.
func fillMeans(x *mat.Dense) int {
	t, n := x.Dims()
	filled := 0
	for j := 0; j < n; j++ {
		var sum float64
		var cnt int
		for i := 0; i < t; i++ {
			if v := x.At(i, j); !math.IsNaN(v) {
				sum += v
				cnt++
			}
		}
		mean := 0.0
		if cnt > 0 {
			mean = sum / float64(cnt)
		}
		for i := 0; i < t; i++ {
			if math.IsNaN(x.At(i, j)) {
				x.Set(i, j, mean)
				filled++
			}
		}
	}
	return filled
}

func countNaN(x *mat.Dense) int {
	if x == nil {
		return 0
	}
	c := 0
	for _, v := range x.RawMatrix().Data {
		if math.IsNaN(v) {
			c++
		}
	}
	return c
}
