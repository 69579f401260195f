package evaluate

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"
	"time"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/factor"

	"gonum.org/v1/gonum/mat"
)

// Defaults of Options.
const (
	DefaultStep             = 21                      // rebalance monthly: 21 business days (common practice, no source)
	DefaultWindow           = riskmodel.DefaultWindow // the nightly's window: what it publishes is what is measured
	DefaultRandomPortfolios = 100                     // random portfolios of each kind
	DefaultTrackingNames    = 50                      // names of the minimum-TE tracking portfolio
	DefaultSeed             = 1                       // seed of the random portfolios and of the factor fits
	OracleName              = "oracle"
	minTestPortfolios       = 1
)

// ErrInput reports options or data that Evaluate cannot work with.
var ErrInput = errors.New("cannot evaluate")

// Truth is a true covariance in factor form over all the columns of the
// panel, Σ_row = B·F_row·Bᵀ + diag(d_row), with exposures B that do not
// change from row to row: the form of the demo market's truth (ExposuresTo,
// FactorCovarianceTo, SpecificVariancesTo). The functions must be safe for
// concurrent use, and every d_row positive. The mean truth of a test period
// is then B·F̄·Bᵀ + diag(d̄), a factor model again, which keeps the losses
// against it free of N×N factorizations of the truth.
type Truth struct {
	Exposures         *mat.Dense // N×K, the panel's columns in order
	FactorCovariance  func(dst *mat.SymDense, row int) *mat.SymDense
	SpecificVariances func(dst []float64, row int) []float64
}

// TruthOf returns the Truth of a market that knows its factor structure, as
// the demo and simulated markets do.
func TruthOf(m interface {
	ExposuresTo(dst *mat.Dense) *mat.Dense
	FactorCovarianceTo(dst *mat.SymDense, row int) *mat.SymDense
	SpecificVariancesTo(dst []float64, row int) []float64
}) *Truth {
	return &Truth{Exposures: m.ExposuresTo(nil), FactorCovariance: m.FactorCovarianceTo, SpecificVariances: m.SpecificVariancesTo}
}

// Estimator is one estimator to evaluate: a method name of riskmodel.Build with
// its settings, under a label.
type Estimator struct {
	// Name labels the estimator in the results; default riskmodel.Build.Method.
	Name string
	// riskmodel.Build holds the estimator's settings. Its Window and MinObs are
	// replaced by those of Options, so that every estimator covers
	// the same assets on a date; its Previous is ignored.
	Build riskmodel.BuildOptions
}

// Options configure Evaluate. A nil *Options, or a zero
// field, means the documented default.
type Options struct {
	// riskmodel.Methods are the estimators to evaluate; nil means every name in
	// riskmodel.Methods with riskmodel.Build's defaults (the factor model with Seed
	// DefaultSeed), except the exposure and hybrid methods, which
	// need asset metadata in their riskmodel.BuildOptions. Estimators are compared on
	// the assets that every one of them keeps on a date.
	Methods []Estimator
	// Step is the number of dates between rebalance dates, and the length
	// of each test period; default DefaultStep.
	Step int
	// Window is the number of dates of history each fit sees; default
	// riskmodel.DefaultWindow, or T − Step when the panel is shorter than
	// riskmodel.DefaultWindow + Step.
	Window int
	// MinObs drops assets with fewer observations in the window; default
	// half the window, as riskmodel.Build.
	MinObs int

	// Truth, if set, gives the true covariance of the returns of each row
	// of the panel in factor form, as a simulated market knows it. It adds
	// the estimator OracleName, which forecasts with the truth of the first
	// test row, and the losses against the truth of each test period (the
	// mean of the rows' true covariances).
	Truth *Truth

	// Benchmark is the benchmark of the active portfolios, renormalized over
	// the assets of each date; nil means equal weights.
	Benchmark []riskmodel.Holding
	// Fund, with Benchmark, adds the bias statistic of the fund's active
	// weights.
	Fund []riskmodel.Holding
	// RandomPortfolios is the number of random long-only portfolios and of
	// random active portfolios (tests of the bias statistic); default
	// DefaultRandomPortfolios, negative means none.
	RandomPortfolios int
	// TrackingNames is the number of the benchmark's largest names that the
	// minimum-TE tracking portfolio may hold; default DefaultTrackingNames.
	TrackingNames int
	// Seed drives the random portfolios; default DefaultSeed. Each
	// rebalance date draws from its own stream, so the results do not depend
	// on the order in which dates are processed.
	Seed uint64
	// Workers is the number of rebalance dates processed at once; default
	// GOMAXPROCS.
	Workers int
	// Progress, if set, is called after each rebalance date with the number
	// done and the total, from one goroutine at a time.
	Progress func(done, total int)
}

// Result is the result of Evaluate.
type Result struct {
	Scores         []Score  // one per estimator, best first
	Metrics        []string // the metrics behind Rank, in the order of Score.Ranks
	Periods        []Period
	Step, Window   int
	TestDates      int     // dates of all test periods together
	PeriodsPerYear float64 // the panel's, used to annualize
	// Recommendation names the best estimator other than the oracle, with the
	// reason, in one line.
	Recommendation string
	Elapsed        time.Duration // wall-clock time of Evaluate; not used in any ranking
	// Costs splits the work of the evaluation; not used in any ranking.
	Costs Costs
	// Skipped lists the rebalance dates left out because an estimator (or
	// the truth) failed on them, with the error; every score is over the
	// other dates, the same for every estimator.
	Skipped []SkippedDate
}

// ErrNoDate reports an evaluation whose every rebalance date failed.
var ErrNoDate = errors.New("no rebalance date could be evaluated")

// SkippedDate is a rebalance date that the evaluation left out.
type SkippedDate struct {
	AsOf  riskmodel.Date
	Error string
}

// Costs is the wall-clock time of the parts of an evaluation, each summed
// over the rebalance dates (dates run Workers at a time, so the parts add up
// to about Workers times Result.Elapsed).
type Costs struct {
	Fits    time.Duration // riskmodel.Build of every estimator
	Scoring time.Duration // the test portfolios of every forecast and their measures
	Truth   time.Duration // with Options.Truth: the truth of the test periods and the losses against it
}

// Score holds an estimator's metrics over all test periods. Volatilities and
// tracking errors are annualized with the panel's periods per year.
type Score struct {
	Name   string
	Method string // riskmodel.Build's method, or OracleName
	// Rank is 1 for the best estimator: the order of MeanRank, the mean of
	// Ranks over the metrics (ties broken by the realised minimum-variance
	// volatility, then by the order of the options). Timings never enter it.
	Rank     int
	MeanRank float64
	Ranks    []int // rank on each of Result.Metrics

	MinVariance PortfolioScore // unconstrained global minimum-variance portfolio
	LongOnly    PortfolioScore // long-only global minimum-variance portfolio
	Tracking    PortfolioScore // minimum-TE tracking portfolio (active against the benchmark)

	RandomLongOnly BiasScore       // random long-only portfolios
	RandomActive   BiasScore       // random active portfolios around the benchmark
	Fund           *riskmodel.Bias // the fund's active weights; nil without Fund

	// Losses against the truth, averaged over the rebalance dates, and the
	// PRIAL of each against the sample covariance, in %; NaN without Truth
	// (and the MV loss NaN where the forecast is singular).
	FrobeniusLoss, MVLoss   float64
	FrobeniusPRIAL, MVPRIAL float64

	// TrackingTurnover is the mean one-way turnover ½·Σ|w_q − w_{q−1}| of
	// the tracking portfolio from one rebalance date to the next (weights
	// as built, before drift; an asset absent on a date has weight 0).
	TrackingTurnover float64

	FitSeconds float64 // mean wall-clock seconds of one fit; reported, never ranked
	// Ridged counts the dates whose dense forecast was singular or had a
	// condition number above 1e12, so the unconstrained minimum-variance
	// portfolio used a ridge of 1e-6 times the mean variance; NotConverged
	// counts the long-only solves that hit the iteration limit.
	Ridged, NotConverged int
}

// PortfolioScore compares the realised risk of a portfolio built from each
// forecast with the forecast.
type PortfolioScore struct {
	// Realised is the standard deviation of the portfolio's returns over all
	// test dates, annualized, with its chi-square interval.
	Realised Interval
	// Forecast is the root mean square of the forecast volatilities (or
	// tracking errors), annualized.
	Forecast float64
	// riskmodel.Bias is the bias statistic of the returns standardized by their
	// forecast.
	Bias riskmodel.Bias
}

// BiasScore summarizes the bias statistics of many test portfolios, each
// redrawn on every rebalance date and standardized by its forecast.
type BiasScore struct {
	Tests int
	// MeanBias is the mean bias statistic and MeanAbsError the mean of
	// |bias − 1| (the ranked metric).
	MeanBias, MeanAbsError float64
	// Inside is the share of tests whose bias statistic is inside the band
	// 1 ± √(2/T), with its Wilson interval.
	Inside Interval
}

// Period is one rebalance date and the test period after it.
type Period struct {
	AsOf         riskmodel.Date // the last date the forecasts see
	First, Last  riskmodel.Date // the test dates
	Assets       int
	ReferenceVol float64 // realised volatility of the reference portfolio over the test period, annualized
	// Forecasts are the estimators' forecasts made on AsOf, in the order of
	// Result.Scores.
	Forecasts []PeriodForecast
}

// PeriodForecast is what one estimator forecast on a rebalance date. All
// figures are annualized.
type PeriodForecast struct {
	// Reference is the forecast volatility of the reference portfolio (the
	// benchmark, or equal weights without one).
	Reference float64
	// MinVariance, LongOnly and Tracking are the forecast risk of the
	// portfolios built from this forecast.
	MinVariance, LongOnly, Tracking float64
	FrobeniusLoss, MVLoss           float64 // NaN without Truth
	FitSeconds                      float64
}

// Evaluate runs a rolling out-of-sample evaluation of risk forecasts. On each
// rebalance date (every Step dates, starting when Window dates of history
// exist, while a full test period of Step dates follows), it fits every
// estimator with riskmodel.Build on the trailing Window only, builds test portfolios
// from each forecast and measures them on the next Step dates, which no fit
// of that date sees. Metrics (Score) pool all test periods.
//
// Per date and estimator: the unconstrained and long-only global
// minimum-variance portfolios (w = Σ̂⁻¹1/(1ᵀΣ̂⁻¹1); the long-only one by
// simplexQP), the long-only portfolio of the TrackingNames largest benchmark
// names with the least forecast tracking error, RandomPortfolios random
// long-only and random active portfolios (the same draws for every
// estimator), and the fund. A missing return in a test period counts as a
// zero return, as in riskmodel.BiasStatistic.
//
// Rebalance dates are processed by Workers goroutines and gathered in date
// order; every random draw is seeded, so the Result is the same whatever
// GOMAXPROCS, apart from the timings, which no ranking uses. A date on which
// an estimator cannot be built (or the truth is not a valid factor model)
// is left out for every estimator and listed in Result.Skipped with the
// error, so that one bad window does not throw away a long run; the
// tracking turnover then spans the gap.
//
// Errors: ErrInput for options that cannot be met (a Step below 2, a
// Window below 2, no rebalance date with a full test period, an unknown
// benchmark asset), and ErrNoDate, with the first date's error, when every
// rebalance date was skipped.
//
// Cost per date: one fit per estimator plus, per estimator, its scoring: a
// factor forecast O(N·K) per product (Woodbury solves); a dense one a
// Cholesky factorization on all cores (N³/3 flops), shared by the
// minimum-variance solve, the condition check and the loss, and O(S)
// products of O(N·nnz) (S the long-only solver's steps, nnz its nonzero
// weights); with Truth, the mean truth of the test period in factor form
// (O(N²·K) for its dense form) and, for the minimum-variance loss, the
// inverse of a dense forecast from its Cholesky factor (2N³/3 flops), a
// factor forecast in O(N²·K). Result.Costs reports the split. Run is
// RunShard of one shard merged (see Merge).
func Run(p *riskmodel.Panel, opts *Options) (*Result, error) {
	start := time.Now()
	sh, err := RunShard(p, opts, 1, 1)
	if err != nil {
		return nil, err
	}
	out, err := Merge(sh)
	if err != nil {
		return nil, err
	}
	out.Elapsed = time.Since(start)
	return out, nil
}

// rebalanceRows returns the panel rows of the rebalance dates: every Step
// rows from row Window − 1, while a full test period of Step rows follows.
func rebalanceRows(p *riskmodel.Panel, o resolvedOptions) ([]int, error) {
	t, _ := p.Dims()
	var asof []int
	for r := o.Window - 1; r+o.Step <= t-1; r += o.Step {
		asof = append(asof, r)
	}
	if len(asof) == 0 {
		return nil, fmt.Errorf("riskmodel: evaluate: %w: %d dates leave no test period of %d dates after a window of %d",
			ErrInput, t, o.Step, o.Window)
	}
	return asof, nil
}

// runDates evaluates the rebalance dates q of qs (rows asof[q]) on Workers
// goroutines and returns their results in the order of qs; a date that
// fails holds its period and the error only.
func (ev *evaluator) runDates(asof, qs []int) []*dateResult {
	o := ev.o
	results := make([]*dateResult, len(qs))
	jobs := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	for w := 0; w < min(o.Workers, len(qs)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range jobs {
				r := asof[qs[k]]
				res, err := ev.date(qs[k], r)
				if err != nil {
					res = &dateResult{period: Period{AsOf: ev.p.Date(r), First: ev.p.Date(r + 1), Last: ev.p.Date(r + o.Step)}, failure: err.Error()}
				}
				results[k] = res
				if o.Progress != nil {
					mu.Lock()
					done++
					o.Progress(done, len(qs))
					mu.Unlock()
				}
			}
		}()
	}
	for k := range qs {
		jobs <- k
	}
	close(jobs)
	wg.Wait()
	return results
}

// resolvedOptions is Options with its defaults resolved.
type resolvedOptions struct {
	Options
	names []string
}

// resolve applies the defaults of opts and checks them, in named steps:
// the periods, the estimators, the sizes, the holdings.
func resolve(p *riskmodel.Panel, opts *Options) (resolvedOptions, error) {
	var o resolvedOptions
	if opts != nil {
		o.Options = *opts
	}
	for _, step := range []func(*riskmodel.Panel) error{o.resolvePeriods, o.resolveEstimators, o.resolveSizes, o.checkHoldings} {
		if err := step(p); err != nil {
			return o, err
		}
	}
	return o, nil
}

func inputError(format string, args ...any) error {
	return fmt.Errorf("riskmodel: evaluate: %w: %s", ErrInput, fmt.Sprintf(format, args...))
}

// resolvePeriods sets Step and Window.
func (o *resolvedOptions) resolvePeriods(p *riskmodel.Panel) error {
	t, _ := p.Dims()
	if o.Step == 0 {
		o.Step = DefaultStep
	}
	if o.Step < 2 {
		return inputError("Step = %d (at least 2)", o.Step)
	}
	if o.Window == 0 {
		o.Window = riskmodel.DefaultWindow
		if t < o.Window+o.Step {
			o.Window = t - o.Step
		}
	}
	if o.Window < 2 {
		return inputError("Window = %d (at least 2) for %d dates and Step %d", o.Window, t, o.Step)
	}
	return nil
}

// resolveEstimators sets the estimators, their names and their build
// options, and the seed.
func (o *resolvedOptions) resolveEstimators(*riskmodel.Panel) error {
	if o.Seed == 0 {
		o.Seed = DefaultSeed
	}
	if o.Methods == nil {
		for _, m := range riskmodel.Methods {
			if m == riskmodel.MethodExposure || m == riskmodel.MethodHybrid {
				continue
			}
			o.Methods = append(o.Methods, Estimator{Build: riskmodel.BuildOptions{Method: m, Seed: DefaultSeed}})
		}
	} else {
		o.Methods = slices.Clone(o.Methods)
	}
	if len(o.Methods) == 0 && o.Truth == nil {
		return inputError("no estimator")
	}
	seen := map[string]bool{}
	for k := range o.Methods {
		m := &o.Methods[k]
		if m.Build.Method == "" {
			m.Build.Method = riskmodel.MethodFactor
		}
		if !slices.Contains(riskmodel.Methods, m.Build.Method) {
			return fmt.Errorf("riskmodel: evaluate: %w %q (one of %v)", riskmodel.ErrMethod, m.Build.Method, riskmodel.Methods)
		}
		if m.Name == "" {
			m.Name = m.Build.Method
		}
		m.Build.Window, m.Build.MinObs, m.Build.Previous = o.Window, o.MinObs, nil
		if seen[m.Name] || m.Name == OracleName {
			return inputError("estimator name %q is repeated or reserved", m.Name)
		}
		seen[m.Name] = true
		o.names = append(o.names, m.Name)
	}
	if o.Truth != nil {
		o.names = append(o.names, OracleName)
	}
	return nil
}

// resolveSizes sets and bounds the random portfolios, the tracking names
// and the workers.
func (o *resolvedOptions) resolveSizes(*riskmodel.Panel) error {
	switch {
	case o.RandomPortfolios == 0:
		o.RandomPortfolios = DefaultRandomPortfolios
	case o.RandomPortfolios < 0:
		o.RandomPortfolios = 0
	}
	if o.RandomPortfolios > MaxRandomPortfolios {
		return inputError("RandomPortfolios = %d (at most %d)", o.RandomPortfolios, MaxRandomPortfolios)
	}
	if o.TrackingNames == 0 {
		o.TrackingNames = DefaultTrackingNames
	}
	if o.TrackingNames < 1 || o.TrackingNames > MaxTrackingNames {
		return inputError("TrackingNames = %d (1 to %d)", o.TrackingNames, MaxTrackingNames)
	}
	if o.Workers <= 0 {
		o.Workers = runtime.GOMAXPROCS(0)
	}
	if o.Workers > MaxWorkers {
		return inputError("Workers = %d (at most %d)", o.Workers, MaxWorkers)
	}
	return nil
}

// checkHoldings checks that the benchmark and fund name assets of p with
// finite weights.
func (o *resolvedOptions) checkHoldings(p *riskmodel.Panel) error {
	for _, h := range [][]riskmodel.Holding{o.Benchmark, o.Fund} {
		for _, x := range h {
			if _, ok := p.Column(x.Asset); !ok {
				return fmt.Errorf("riskmodel: evaluate: %w: %w %q in the holdings", ErrInput, riskmodel.ErrUnknownAsset, x.Asset)
			}
			if math.IsNaN(x.Weight) || math.IsInf(x.Weight, 0) {
				return fmt.Errorf("riskmodel: evaluate: %w: weight of %s: %w", ErrInput, x.Asset, riskmodel.ErrNonFinite)
			}
		}
	}
	return nil
}

type evaluator struct {
	p *riskmodel.Panel
	o resolvedOptions
}

// dateResult is everything measured for one rebalance date.
type dateResult struct {
	period   Period
	est      []estimatorDate
	refRet   []float64 // realised returns of the reference portfolio
	universe []string  // the assets of the date, in the order of the weights
	// The date's costs, in seconds: the fits, the portfolios and their
	// measures, the truth and the losses against it.
	fitSecs, scoreSecs, truthSecs float64
	// failure is the error that stopped the date (an estimator that could
	// not be built on its window, say); such a date has only its period.
	failure string
}

// estimatorDate is one estimator's measures on one date: forecasts (per
// period) and the realised returns of the test period, standardized where a
// bias statistic needs them.
type estimatorDate struct {
	forecast       PeriodForecast
	gmv, long, trk []float64 // realised returns (active for trk)
	gmvZ, longZ    []float64 // returns over forecast volatility
	trkZ           []float64
	trkW           []float64   // tracking portfolio weights, over the date's universe
	randLong       [][]float64 // z of each random long-only portfolio
	randActive     [][]float64
	fundZ          []float64
	ridged         bool
	notConverged   int
	sampleFrob     float64 // Frobenius loss of the sample covariance (for PRIAL), set on est[0]
	sampleMV       float64
}

// dateInputs is what every estimator of a date is measured on.
type dateInputs struct {
	r, k       int // the rebalance row and the test period's length
	universe   []string
	cols       []int      // the universe's panel columns
	test       *mat.Dense // test returns, k×N, missing as zero
	bench      []float64  // the reference portfolio
	fundActive []float64  // nil without a fund
	randLong   [][]float64
	randDraws  [][]float64 // the long-only draws behind the random active portfolios
	support    []int       // the tracking portfolio's names
	// With a truth: the mean true covariance of the test period and what
	// the losses against it need.
	target *mat.SymDense
	truthF *truthFactor
}

// date fits every estimator on the window ending at row r and measures the
// forecasts on rows r+1 … r+Step, in named steps: fit, the common universe,
// the inputs of the measures, the truth, then each estimator's scores.
func (ev *evaluator) date(q, r int) (*dateResult, error) {
	p, o := ev.p, ev.o
	asof := p.Date(r)
	t0 := time.Now()
	models, secs, err := ev.fit(asof)
	if err != nil {
		return nil, err
	}
	universe, err := ev.commonUniverse(models, asof)
	if err != nil {
		return nil, err
	}
	fitSecs := time.Since(t0).Seconds()
	t1 := time.Now()
	in := ev.inputs(q, r, universe)
	res := &dateResult{
		period:   Period{AsOf: asof, First: p.Date(r + 1), Last: p.Date(r + in.k), Assets: len(universe)},
		refRet:   portfolioReturns(in.test, in.bench),
		universe: universe,
		fitSecs:  fitSecs,
	}
	res.period.ReferenceVol = evalStd(res.refRet) * math.Sqrt(p.PeriodsPerYear())
	var truthSecs float64
	if o.Truth != nil {
		t2 := time.Now()
		oracle, err := ev.truth(&in)
		if err != nil {
			return nil, err
		}
		models = append(models, &riskmodel.Model{AsOf: asof, Assets: universe, PeriodsPerYear: p.PeriodsPerYear(), Method: OracleName, Factor: oracle})
		secs = append(secs, 0)
		truthSecs += time.Since(t2).Seconds()
	}
	// One set of N×N buffers for the date's forecasts, scored in turn.
	sc := scratchPool.Get().(*scratch)
	defer scratchPool.Put(sc)
	for e, m := range models {
		ed, tsecs := ev.score(&in, m, sc)
		ed.forecast.FitSeconds = secs[e]
		truthSecs += tsecs
		res.est = append(res.est, ed)
		res.period.Forecasts = append(res.period.Forecasts, ed.forecast)
	}
	if o.Truth != nil {
		t2 := time.Now()
		if err := ev.sampleLosses(&in, asof, res, sc); err != nil {
			return nil, err
		}
		truthSecs += time.Since(t2).Seconds()
	}
	res.truthSecs = truthSecs
	res.scoreSecs = time.Since(t1).Seconds() - truthSecs
	return res, nil
}

// fit builds every estimator on the window ending at asof and returns the
// models with the seconds of each fit.
func (ev *evaluator) fit(asof riskmodel.Date) ([]*riskmodel.Model, []float64, error) {
	models := make([]*riskmodel.Model, 0, len(ev.o.names))
	secs := make([]float64, 0, len(ev.o.names))
	for _, m := range ev.o.Methods {
		t0 := time.Now()
		b := m.Build
		model, _, err := riskmodel.Build(ev.p, asof, &b)
		if err != nil {
			return nil, nil, fmt.Errorf("riskmodel: evaluate %s on %s: %w", m.Name, asof, err)
		}
		secs = append(secs, time.Since(t0).Seconds())
		models = append(models, model)
	}
	return models, secs, nil
}

// commonUniverse returns the assets every model keeps and restricts the
// models to them, in place; with no model (only the oracle), the assets
// riskmodel.Build would keep.
func (ev *evaluator) commonUniverse(models []*riskmodel.Model, asof riskmodel.Date) ([]string, error) {
	var universe []string
	if len(models) > 0 {
		// Estimators that need metadata (exposure, hybrid) may drop assets
		// the others keep: evaluate all on the assets common to every one.
		universe = models[0].Assets
		for _, m := range models[1:] {
			have := make(map[string]bool, len(m.Assets))
			for _, a := range m.Assets {
				have[a] = true
			}
			universe = slices.DeleteFunc(slices.Clone(universe), func(a string) bool { return !have[a] })
		}
		for k, m := range models {
			models[k] = restrictModel(m, universe)
		}
	} else {
		win, err := ev.p.Window(asof, ev.o.Window)
		if err != nil {
			return nil, err
		}
		minObs := ev.o.MinObs
		if minObs == 0 {
			t, _ := win.Dims()
			minObs = riskmodel.DefaultMinObs(t)
		}
		win, _ = win.DropSparse(minObs)
		universe = win.Assets()
	}
	if len(universe) == 0 {
		return nil, fmt.Errorf("riskmodel: evaluate: %w: no asset on %s", riskmodel.ErrEmpty, asof)
	}
	return universe, nil
}

// inputs gathers the test returns, the reference and fund portfolios and
// the random draws of date q (rebalance row r) over the universe.
func (ev *evaluator) inputs(q, r int, universe []string) dateInputs {
	p, o := ev.p, ev.o
	n := len(universe)
	in := dateInputs{r: r, k: o.Step, universe: universe, cols: make([]int, n)}
	for i, a := range universe {
		in.cols[i], _ = p.Column(a)
	}
	in.test = mat.NewDense(in.k, n, nil)
	for d := 0; d < in.k; d++ {
		for i, j := range in.cols {
			if v := p.At(r+1+d, j); !math.IsNaN(v) {
				in.test.Set(d, i, v)
			}
		}
	}
	in.bench = ev.weights(o.Benchmark, in.cols)
	if in.bench == nil {
		in.bench = make([]float64, n)
		for i := range in.bench {
			in.bench[i] = 1 / float64(n)
		}
	}
	if o.Benchmark != nil && o.Fund != nil {
		if f := ev.weights(o.Fund, in.cols); f != nil {
			in.fundActive = make([]float64, n)
			for i := range f {
				in.fundActive[i] = f[i] - in.bench[i]
			}
		}
	}
	rs := rand.New(rand.NewPCG(o.Seed, uint64(q)))
	in.randLong = make([][]float64, o.RandomPortfolios)
	in.randDraws = make([][]float64, o.RandomPortfolios)
	for j := range in.randLong {
		in.randLong[j] = randomLongOnly(rs, n)
		in.randDraws[j] = randomLongOnly(rs, n) // randomActive's draw, kept sparse
	}
	in.support = largestNames(in.bench, o.TrackingNames)
	return in
}

// truth returns the oracle's forecast, the truth of the first test row,
// and sets the mean truth of the test period, and what the losses against
// it need, in in: both factor models on the universe's exposures, in
// O(N·K²) and O(N²·K) for the dense mean truth.
func (ev *evaluator) truth(in *dateInputs) (*factor.Model, error) {
	tr := ev.o.Truth
	n := len(in.cols)
	_, k := tr.Exposures.Dims()
	b := mat.NewDense(n, k, nil)
	for i, j := range in.cols {
		b.SetRow(i, tr.Exposures.RawRowView(j))
	}
	gather := func(d []float64) []float64 {
		out := make([]float64, n)
		for i, j := range in.cols {
			out[i] = d[j]
		}
		return out
	}
	row := in.r + 1
	f := tr.FactorCovariance(nil, row)
	d := tr.SpecificVariances(nil, row)
	oracle, err := factor.NewModel(b, f, gather(d), factor.Info{})
	if err != nil {
		return nil, fmt.Errorf("riskmodel: evaluate: the truth of row %d: %w", row, err)
	}
	fsum, dsum := mat.NewSymDense(k, nil), make([]float64, len(d))
	for t := 0; t < in.k; t++ {
		if t > 0 {
			f = tr.FactorCovariance(f, row+t)
			d = tr.SpecificVariances(d, row+t)
		}
		fsum.AddSym(fsum, f)
		for i, v := range d {
			dsum[i] += v
		}
	}
	fsum.ScaleSym(1/float64(in.k), fsum)
	dmean := gather(dsum)
	for i := range dmean {
		dmean[i] /= float64(in.k)
	}
	mean, err := factor.NewModel(b, fsum, dmean, factor.Info{})
	if err != nil {
		return nil, fmt.Errorf("riskmodel: evaluate: the mean truth of rows %d to %d: %w", row, row+in.k-1, err)
	}
	in.truthF = newTruthFactor(mean)
	in.target = in.truthF.sigma
	return oracle, nil
}

// score builds the test portfolios from one forecast and measures them on
// the test period; with a truth, the losses against it too, whose seconds
// it returns. A dense forecast is scored in the buffers of sc.
func (ev *evaluator) score(in *dateInputs, m *riskmodel.Model, sc *scratch) (estimatorDate, float64) {
	ann := math.Sqrt(ev.p.PeriodsPerYear())
	n, k := len(in.cols), in.k
	op := newCovOpIn(m.Covariance(), sc)
	ed := estimatorDate{}
	tmp := make([]float64, n)
	sb := make([]float64, n) // Σb
	op.mul(sb, in.bench)
	ed.forecast.Reference = math.Sqrt(evalDot(in.bench, sb)) * ann
	measure := func(w []float64, sigma float64) (ret, z []float64) {
		ret = portfolioReturns(in.test, w)
		z = make([]float64, len(ret))
		for d, v := range ret {
			z[d] = v / sigma
		}
		return ret, z
	}
	vol := func(w []float64) float64 { return math.Sqrt(op.quad(w, tmp)) }
	s := math.NaN()
	if w := op.minVariance(); w != nil {
		s = vol(w)
		ed.gmv, ed.gmvZ = measure(w, s)
	} else {
		ed.gmv, ed.gmvZ = nanSeries(k), nanSeries(k)
	}
	ed.forecast.MinVariance = s * ann
	ed.ridged = op.ridged
	w, sr := op.simplexQP(nil)
	if !sr.Converged {
		ed.notConverged++
	}
	s = vol(w)
	ed.long, ed.longZ = measure(w, s)
	ed.forecast.LongOnly = s * ann
	w, sr = op.trackingQP(sb, in.support)
	if !sr.Converged {
		ed.notConverged++
	}
	ed.trkW = slices.Clone(w)
	for i := range w {
		w[i] -= in.bench[i]
	}
	s = vol(w)
	ed.trk, ed.trkZ = measure(w, s)
	ed.forecast.Tracking = s * ann
	ed.randLong = make([][]float64, len(in.randLong))
	ed.randActive = make([][]float64, len(in.randDraws))
	active := make([]float64, n)
	for j := range in.randLong {
		_, ed.randLong[j] = measure(in.randLong[j], vol(in.randLong[j]))
		// a = d − b with d sparse: Σa = Σd − Σb, a product of O(N·nnz).
		d := in.randDraws[j]
		op.mul(tmp, d)
		var v float64
		for i := range active {
			active[i] = d[i] - in.bench[i]
			v += active[i] * (tmp[i] - sb[i])
		}
		_, ed.randActive[j] = measure(active, math.Sqrt(v))
	}
	if in.fundActive != nil {
		_, ed.fundZ = measure(in.fundActive, vol(in.fundActive))
	}
	ed.forecast.FrobeniusLoss, ed.forecast.MVLoss = math.NaN(), math.NaN()
	if in.target == nil {
		return ed, 0
	}
	t0 := time.Now()
	if m.Factor != nil {
		ed.forecast.FrobeniusLoss = frobeniusLoss(m.Factor.CovarianceTo(nil), in.target)
	} else {
		ed.forecast.FrobeniusLoss = frobeniusLoss(m.Dense, in.target)
	}
	ed.forecast.MVLoss = mvLossOf(op, in.truthF)
	return ed, time.Since(t0).Seconds()
}

// sampleLosses sets the losses of the sample covariance, the reference of
// the PRIAL, on res.est[0]: those of the sample estimator when it is one of
// the estimators, else of a sample covariance fitted for it.
func (ev *evaluator) sampleLosses(in *dateInputs, asof riskmodel.Date, res *dateResult, sc *scratch) error {
	for e, m := range ev.o.Methods {
		if m.Build.Method == riskmodel.MethodSample {
			res.est[0].sampleFrob = res.est[e].forecast.FrobeniusLoss
			res.est[0].sampleMV = res.est[e].forecast.MVLoss
			return nil
		}
	}
	b := riskmodel.BuildOptions{Method: riskmodel.MethodSample, Window: ev.o.Window, MinObs: ev.o.MinObs}
	sm, _, err := riskmodel.Build(ev.p, asof, &b)
	if err != nil {
		return fmt.Errorf("riskmodel: evaluate sample (for the PRIAL) on %s: %w", asof, err)
	}
	sm = restrictModel(sm, in.universe)
	res.est[0].sampleFrob = frobeniusLoss(sm.Dense, in.target)
	res.est[0].sampleMV = mvLossOf(newCovOpIn(sm.Dense, sc), in.truthF)
	return nil
}

// weights aligns holdings with the columns cols of the panel, renormalized to
// sum to 1 over them; nil for no holdings or a zero sum.
func (ev *evaluator) weights(h []riskmodel.Holding, cols []int) []float64 {
	if h == nil {
		return nil
	}
	pos := make(map[int]int, len(cols))
	for i, j := range cols {
		pos[j] = i
	}
	w := make([]float64, len(cols))
	for _, x := range h {
		j, _ := ev.p.Column(x.Asset)
		if i, ok := pos[j]; ok {
			w[i] += x.Weight
		}
	}
	s := evalSum(w)
	if s == 0 {
		return nil
	}
	for i := range w {
		w[i] /= s
	}
	return w
}

// portfolioReturns returns the returns x·w of each row of x.
func portfolioReturns(x *mat.Dense, w []float64) []float64 {
	t, _ := x.Dims()
	out := make([]float64, t)
	for d := range out {
		out[d] = evalDot(x.RawRowView(d), w)
	}
	return out
}

func nanSeries(k int) []float64 {
	s := make([]float64, k)
	for i := range s {
		s[i] = math.NaN()
	}
	return s
}

// subSym returns the submatrix of s on the given indexes.
func subSym(s *mat.SymDense, idx []int) *mat.SymDense {
	out := mat.NewSymDense(len(idx), nil)
	raw, dst := s.RawSymmetric(), out.RawSymmetric()
	for a, i := range idx {
		for b := a; b < len(idx); b++ {
			r, c := i, idx[b]
			if r > c {
				r, c = c, i
			}
			dst.Data[a*dst.Stride+b] = raw.Data[r*raw.Stride+c]
		}
	}
	return out
}

// restrictModel returns m on the given assets, a subset of its own, in that
// order; m itself when they are its assets already.
func restrictModel(m *riskmodel.Model, assets []string) *riskmodel.Model {
	if slices.Equal(m.Assets, assets) {
		return m
	}
	pos := make(map[string]int, len(m.Assets))
	for i, a := range m.Assets {
		pos[a] = i
	}
	idx := make([]int, len(assets))
	for i, a := range assets {
		idx[i] = pos[a]
	}
	r := *m
	r.Assets = assets
	if m.Factor != nil {
		r.Factor = m.Factor.Submodel(idx)
	} else {
		r.Dense = subSym(m.Dense, idx)
	}
	return &r
}
