package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"time"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/shrink"
)

// Exit statuses.
const (
	exitOK       = 0
	exitFailure  = 1 // an unexpected failure of the job itself; nothing published
	exitBadInput = 2 // bad flags or bad input files; nothing published
)

// steps names the job's steps for the progress bar.
var steps = []string{"read", "quality", "build", "validate", "compare", "dense", "publish"}

// run is the whole program; it returns the exit status.
func run(args []string, stdout, stderr io.Writer) int {
	cfg, err := parseFlags(args, stderr)
	if errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	bar := newProgress(stderr, len(steps))
	log := newLogger(bar, cfg.logFormat)
	if err == nil {
		err = job(cfg, stdout, log, bar)
	}
	bar.done()
	if err == nil {
		return exitOK
	}
	log.Error("nightly: " + oneLine(err.Error()) + "; nothing published")
	if errors.As(err, new(badInput)) {
		return exitBadInput
	}
	return exitFailure
}

func newLogger(w io.Writer, format string) *slog.Logger {
	if format == "json" {
		return slog.New(slog.NewJSONHandler(w, nil))
	}
	return slog.New(slog.NewTextHandler(w, nil))
}

// inputs are the files the job read.
type inputs struct {
	panel                *riskmodel.Panel
	assets               []riskmodel.AssetInfo
	portfolio, benchmark []riskmodel.Holding
}

// job runs the steps in order; the first error stops it before publishing.
func job(cfg config, stdout io.Writer, log *slog.Logger, bar *progress) error {
	start := time.Now()
	// The places the job writes are checked before the work, not after it.
	if err := checkOutputs(cfg); err != nil {
		return err
	}
	bar.step("read")
	in, err := readInputs(cfg, log)
	if err != nil {
		return err
	}
	per, err := frequency(cfg, in.panel, log)
	if err != nil {
		return err
	}
	in.panel = per.panel
	t, _ := in.panel.Dims()
	asof := in.panel.Date(t - 1)
	if cfg.hasAsof {
		asof = cfg.asof
	}
	bar.step("quality")
	win, err := checkDates(cfg, in.panel, asof, per.medianGap)
	if err != nil {
		return err
	}
	quality(cfg, in, win, asof, stdout, log)
	w, err := checkUnits(cfg, win)
	if err != nil {
		return err
	}
	if w != "" {
		log.Warn("-accept-implausible: building from returns that fail the units check", "check", oneLine(w))
	}
	if wt, _ := win.Dims(); wt < cfg.build.Window {
		log.Warn("-window is longer than the history up to -asof: using what there is", "window", cfg.build.Window, "dates", wt, "from", win.Date(0).String())
	}
	store := riskmodel.Store{Dir: cfg.out}
	// A factor model is aligned with the previous one, so that is read
	// first; a dense model is only compared with it, so it is read after the
	// validation has released its Cholesky factor, and the two N×N matrices
	// of validation and comparison are never held at once.
	var prev *riskmodel.Model
	if riskmodel.FactorForm(cfg.build.Method) {
		prev = previous(store, log)
	}
	wt, wn := win.Dims()
	need, err := checkMemory(cfg.build.Method, min(wt, cfg.build.Window), wn, prev)
	if err != nil {
		return badInput{err}
	}
	log.Info("memory estimate", "method", cfg.build.Method, "dates", min(wt, cfg.build.Window), "assets", wn, "bytes", need)
	bar.step("build")
	m, err := build(cfg, in, asof, prev, log)
	if err != nil {
		return err
	}
	m.Settings["periods_per_year_source"] = per.record
	collect()
	bar.step("validate")
	// The dense CSV is written beside the validation and the comparison,
	// into a partial file that takes its name only once the model has passed
	// them: the formatting and the disk fill the time the factorization
	// leaves idle, and a model that fails leaves no file behind.
	dense := startDense(cfg.dense, m)
	defer dense.abandon()
	if err := validate(cfg, in, m, stdout, log); err != nil {
		return err
	}
	collect()
	bar.step("compare")
	if !riskmodel.FactorForm(cfg.build.Method) {
		prev = previous(store, log)
	}
	if prev != nil {
		if err := compare(in, prev, m, stdout, log); err != nil {
			return err
		}
	}
	bar.step("dense")
	if err := dense.commit(log); err != nil {
		return err
	}
	bar.step("publish")
	log.Info("writing model", "store", cfg.out, "asof", m.AsOf.String(), "assets", len(m.Assets))
	pub, err := store.PublishWith(m, &riskmodel.PublishOptions{LockTimeout: cfg.lockTimeout, SetCurrent: cfg.setCurrent, Keep: cfg.keep})
	if pub == nil && err != nil {
		return err
	}
	for _, r := range pub.Removed {
		log.Info("retention: removed an old model", "model", r, "keep", cfg.keep)
	}
	if err != nil {
		// Published and current as reported; only the retention failed.
		log.Warn("published, but the retention failed", "error", oneLine(err.Error()))
	}
	if !pub.Current {
		log.Warn("backfill: published as a dated folder; current stays (give -set-current to make it current)",
			"model", pub.Dir, "current", pub.Previous)
	}
	log.Info("published", "model", pub.Dir, "current", pub.Current, "elapsed", since(start))
	fmt.Fprintf(stdout, "Published %s model as of %s for %d assets to %s\n", m.Method, m.AsOf, len(m.Assets), pub.Dir)
	if !pub.Current {
		fmt.Fprintf(stdout, "Not made current (a backfill): current stays at %s\n", pub.Previous)
	}
	return nil
}

func readInputs(cfg config, log *slog.Logger) (*inputs, error) {
	start := time.Now()
	var in inputs
	var err error
	if in.panel, err = riskmodel.ReadReturns(cfg.returns, nil); err != nil {
		return nil, badInput{err}
	}
	t, n := in.panel.Dims()
	if t == 0 || n == 0 {
		return nil, badInput{fmt.Errorf("%s: %w: %d dates and %d assets", cfg.returns, riskmodel.ErrEmpty, t, n)}
	}
	log.Info("read returns", "file", cfg.returns, "dates", t, "assets", n, "elapsed", since(start))
	if in.assets, err = riskmodel.ReadAssets(cfg.assets); err != nil {
		return nil, badInput{err}
	}
	log.Info("read assets", "file", cfg.assets, "assets", len(in.assets))
	if cfg.portfolio != "" {
		if in.portfolio, err = riskmodel.ReadHoldings(cfg.portfolio); err != nil {
			return nil, badInput{err}
		}
		if in.benchmark, err = riskmodel.ReadHoldings(cfg.benchmark); err != nil {
			return nil, badInput{err}
		}
		log.Info("read holdings", "portfolio", cfg.portfolio, "names", len(in.portfolio), "benchmark", cfg.benchmark, "benchmark_names", len(in.benchmark))
	}
	return &in, nil
}

func quality(cfg config, in *inputs, win *riskmodel.Panel, asof riskmodel.Date, stdout io.Writer, log *slog.Logger) {
	minObs := cfg.build.MinObs
	if minObs == 0 {
		t, _ := win.Dims()
		minObs = riskmodel.DefaultMinObs(t)
	}
	q := riskmodel.Quality(win, &riskmodel.QualityOptions{MinObs: minObs})
	mm := matchAssets(win, in.assets)
	for _, a := range mm.noMeta[:min(listMax, len(mm.noMeta))] {
		log.Warn("asset has returns but no metadata", "asset", a)
	}
	log.Info("data quality", "dates", q.Dates, "assets", q.Assets, "coverage", round(q.Coverage, 4),
		"implausible", len(q.Implausible), "outliers", len(q.Outliers), "stale_runs", len(q.StaleRuns), "too_few_obs", len(q.Dropped))
	printSummary(stdout, asof, q, mm)
}

// previous returns the store's current model, or nil when there is none or
// it cannot be read (then the new model is built without alignment, and the
// log says why).
func previous(store riskmodel.Store, log *slog.Logger) *riskmodel.Model {
	prev, err := store.LoadCurrent()
	switch {
	case errors.Is(err, riskmodel.ErrNoCurrent):
		log.Info("no current model in the store: first publication", "store", store.Dir)
		return nil
	case err != nil:
		log.Warn("current model unreadable: building without it", "store", store.Dir, "error", oneLine(err.Error()))
		return nil
	}
	log.Info("previous model", "asof", prev.AsOf.String(), "method", prev.Method, "assets", len(prev.Assets))
	return prev
}

func build(cfg config, in *inputs, asof riskmodel.Date, prev *riskmodel.Model, log *slog.Logger) (*riskmodel.Model, error) {
	start := time.Now()
	o := cfg.build
	// Sectors group the factor model's specific-variance shrinkage; sectors
	// and market caps are the exposure and hybrid methods' characteristics.
	o.Factor.Groups = make(map[string]string, len(in.assets))
	o.Factor.GroupsName = "sector"
	o.Sectors = o.Factor.Groups
	o.MarketCaps = make(map[string]float64, len(in.assets))
	for _, a := range in.assets {
		o.Factor.Groups[a.Asset] = a.Sector
		if !math.IsNaN(a.MarketCap) {
			o.MarketCaps[a.Asset] = a.MarketCap
		}
	}
	if prev != nil && prev.PeriodsPerYear == in.panel.PeriodsPerYear() {
		o.Previous = prev
	}
	m, rep, err := riskmodel.Build(in.panel, asof, &o)
	if errors.Is(err, factor.ErrPrevious) && o.Previous != nil {
		log.Warn("previous model does not fit for alignment: building without it", "error", oneLine(err.Error()))
		o.Previous = nil
		m, rep, err = riskmodel.Build(in.panel, asof, &o)
	}
	if err != nil {
		if isDataError(err) {
			return nil, badInput{err}
		}
		return nil, err
	}
	log.Info("built model", "method", m.Method, "asof", m.AsOf.String(), "start", rep.Start.String(), "dates", rep.Dates,
		"assets", rep.Assets, "dropped", len(rep.Dropped), "elapsed", since(start))
	for _, n := range rep.Notes {
		log.Info("build note", "note", n)
	}
	return m, nil
}

// isDataError reports whether a Build error comes from the data or the
// settings (bad input) rather than from the job.
func isDataError(err error) bool {
	for _, e := range []error{
		riskmodel.ErrEmpty, riskmodel.ErrMethod,
		factor.ErrNoObservations, factor.ErrEmptyDate, factor.ErrTooManyFactors, factor.ErrTooFewObs, factor.ErrSettings,
		ewma.ErrHalfLife, ewma.ErrLags, ewma.ErrTooFewObs, ewma.ErrAllMissing, ewma.ErrEffectiveObs, ewma.ErrZeroVariance,
		shrink.ErrTooFewObs, shrink.ErrZeroVariance, shrink.ErrWeights, shrink.ErrBadParameter,
	} {
		if errors.Is(err, e) {
			return true
		}
	}
	return false
}

// validate runs riskmodel.Validate with the benchmark as the universe and the
// trailing window's returns for the bias statistic of the test portfolio
// (active weights against the benchmark; equal weights without holdings).
// A structural failure, a condition number above the maximum or too little
// benchmark weight covered stops the job; a bias statistic outside its
// approximate band is a warning in words (the window overlaps the fit), or a
// refusal with -fail-on-bias.
func validate(cfg config, in *inputs, m *riskmodel.Model, stdout io.Writer, log *slog.Logger) error {
	start := time.Now()
	trail, err := in.panel.Window(m.AsOf, cfg.biasWindow)
	if err != nil {
		return badInput{err}
	}
	opts := &riskmodel.ValidateOptions{MaxCondition: cfg.maxCondition, Returns: trail}
	var bench map[string]float64
	if in.benchmark != nil {
		bench = riskmodel.HoldingsMap(in.benchmark)
		for _, h := range in.benchmark {
			opts.Universe = append(opts.Universe, h.Asset)
		}
		opts.Portfolio = map[string]float64{}
		covered := map[string]bool{}
		for _, a := range m.Assets {
			covered[a] = true
		}
		for a, w := range riskmodel.ActiveWeights(in.portfolio, in.benchmark) {
			if covered[a] {
				opts.Portfolio[a] = w
			}
		}
	}
	v := riskmodel.Validate(m, opts)
	for _, p := range v.Problems {
		if v.Bias == nil || p != v.Bias.Problem() {
			log.Warn("validation", "problem", p)
		}
	}
	test := testPortfolio(cfg, len(opts.Portfolio), len(m.Assets))
	if b := v.Bias; b != nil && !b.Inside {
		log.Warn("forecast bias", "portfolio", test, "forecast", b.Words())
	}
	var uncovered float64
	for _, a := range v.Uncovered {
		uncovered += math.Abs(bench[a])
	}
	var total float64
	for _, w := range bench {
		total += math.Abs(w)
	}
	coverage := 1.0
	if total > 0 {
		coverage = 1 - uncovered/total
	}
	attrs := []any{"positive_definite", v.PositiveDefinite, "condition", fmt.Sprintf("%.4g", v.Condition), "benchmark_weight_covered", round(coverage, 6),
		"elapsed", since(start)}
	if v.Bias != nil {
		attrs = append(attrs, "bias", round(v.Bias.Value, 4), "bias_band", fmt.Sprintf("[%.3f, %.3f]", v.Bias.Lower, v.Bias.Upper))
	}
	log.Info("validated model", attrs...)
	m.Validation = v.Record()
	m.Validation["benchmark_weight_covered"] = strconv.FormatFloat(coverage, 'g', -1, 64)
	printValidation(stdout, v, coverage, len(bench) > 0, test)
	switch {
	case !v.Finite:
		return errors.New("model failed validation: the covariance has a non-finite element")
	case !v.PositiveDefinite || !(v.MinEigenvalue > 0):
		return errors.New("model failed validation: the covariance is not positive definite; try a shrinkage -method or a longer -window")
	case v.Condition > cfg.maxCondition:
		return fmt.Errorf("model failed validation: condition number %.3g is above -max-condition %.3g; try a shrinkage -method", v.Condition, cfg.maxCondition)
	case coverage < cfg.minCoverage:
		return fmt.Errorf("model failed validation: it covers %.2f %% of the benchmark's weight, below -min-coverage %.2f %% (%d names missing, first %s); lower -min-obs or -min-coverage",
			100*coverage, 100*cfg.minCoverage, len(v.Uncovered), v.Uncovered[0])
	case cfg.failOnBias && v.Bias != nil && !v.Bias.Inside:
		return fmt.Errorf("model failed validation (-fail-on-bias): the %s %s", test, v.Bias.Words())
	}
	return nil
}

// testPortfolio names the bias statistic's test portfolio in words.
func testPortfolio(cfg config, active, assets int) string {
	if cfg.benchmark == "" {
		return fmt.Sprintf("equal-weight portfolio of the model's %d assets", assets)
	}
	return fmt.Sprintf("active portfolio %s against %s (%d names)", filepath.Base(cfg.portfolio), filepath.Base(cfg.benchmark), active)
}

func compare(in *inputs, prev, m *riskmodel.Model, stdout io.Writer, log *slog.Logger) error {
	opts := &riskmodel.CompareOptions{Top: 5}
	if in.portfolio != nil {
		opts.Portfolio = riskmodel.HoldingsMap(in.portfolio)
		opts.Benchmark = riskmodel.HoldingsMap(in.benchmark)
	}
	c, err := riskmodel.Compare(prev, m, opts)
	if err != nil {
		return badInput{fmt.Errorf("test portfolio: %w", err)}
	}
	attrs := []any{"previous", c.Previous.String(), "common", c.Common, "added", c.Added, "removed", c.Removed}
	if c.Angles != nil {
		attrs = append(attrs, "max_angle_degrees", round(c.MaxAngle()*180/math.Pi, 2))
	}
	if c.HasTE {
		attrs = append(attrs, "te_previous", round(c.TEPrevious, 6), "te_current", round(c.TECurrent, 6))
	}
	if len(c.Changes) > 0 {
		x := c.Changes[0]
		attrs = append(attrs, "largest_"+c.RiskKind+"_risk_change", x.Asset, "from", round(x.Previous, 4), "to", round(x.Current, 4))
	}
	log.Info("compared with previous model", attrs...)
	printComparison(stdout, c)
	return nil
}

// denseWriter writes the -dense file in the background: startDense starts
// it, commit waits for it and gives the file its name, abandon (after a
// failure) waits for it and removes what it wrote. A nil *denseWriter (no
// -dense) does nothing.
type denseWriter struct {
	path, tmp string
	assets    int
	start     time.Time
	done      chan error
	finished  bool
}

// startDense writes the model's dense covariance to a hidden partial file
// next to path, so that a reader never sees half a file. The writer only
// reads m (its assets and covariance).
func startDense(path string, m *riskmodel.Model) *denseWriter {
	if path == "" {
		return nil
	}
	w := &denseWriter{path: path, tmp: filepath.Join(filepath.Dir(path), "."+filepath.Base(path)+".partial"),
		assets: len(m.Assets), start: time.Now(), done: make(chan error, 1)}
	go func() { w.done <- riskmodel.WriteDenseCSVFile(w.tmp, m) }()
	return w
}

func (w *denseWriter) commit(log *slog.Logger) error {
	if w == nil || w.finished {
		return nil
	}
	w.finished = true
	err := <-w.done
	if err == nil {
		err = os.Rename(w.tmp, w.path)
	}
	if err != nil {
		os.Remove(w.tmp)
		return fmt.Errorf("-dense: %w", err)
	}
	log.Info("wrote dense covariance", "file", w.path, "assets", w.assets, "elapsed", since(w.start))
	return nil
}

func (w *denseWriter) abandon() {
	if w == nil || w.finished {
		return
	}
	w.finished = true
	<-w.done
	os.Remove(w.tmp)
}

// collect runs the garbage collector between steps. The build's work
// matrices and the validation's Cholesky factor (N×N each for a dense model)
// are garbage once their step ends, but the collector would only notice
// after the next step had allocated its own N×N matrix (the read-back of the
// published model, the previous model), so the peak would hold three of
// them; collecting here lets the next step reuse their memory. Cheap: the
// large matrices hold no pointers, so marking costs milliseconds.
func collect() { runtime.GC() }

func round(x float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(x*p) / p
}

// oneLine keeps an error message on one line.
func oneLine(s string) string { return strings.Join(strings.Fields(s), " ") }

// since is the time from start, for the log, rounded to milliseconds.
func since(start time.Time) string { return time.Since(start).Round(time.Millisecond).String() }
