package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/userdir"
)

// Default input files, relative to the repository root.
var (
	defaultReturns   = filepath.Join("testdata", "demo", "returns.parquet")
	defaultAssets    = filepath.Join("testdata", "demo", "assets.csv")
	defaultPortfolio = filepath.Join("testdata", "demo", "fund.csv")
	defaultBenchmark = filepath.Join("testdata", "demo", "benchmark.csv")
)

// defaultStore is the -out default: outside the repository, so that running
// the job never writes into testdata/ or the work tree, and in the user's
// own folder (internal/userdir), never at a fixed path of the shared
// temporary folder that another local user could plant as a link.
func defaultStore() (string, error) { return userdir.Dir("store") }

// config is the job's settings, from its flags.
type config struct {
	returns, assets       string
	portfolio, benchmark  string
	asof                  riskmodel.Date
	hasAsof               bool
	out, dense, logFormat string
	build                 riskmodel.BuildOptions
	biasWindow            int
	failOnBias            bool
	holdoutRule           string
	minCoverage           float64
	maxCondition          float64

	periodsPerYear    float64 // 0: inferred from the dates
	acceptImplausible bool
	minDates          int
	setCurrent        bool
	keep              int
	lockTimeout       time.Duration
}

// badInput marks an error caused by the user's flags or files.
type badInput struct{ err error }

func (e badInput) Error() string { return e.err.Error() }
func (e badInput) Unwrap() error { return e.err }

// parseFlags reads the flags; the default files are looked up from the
// repository root, found by walking up from the working directory to go.mod.
func parseFlags(args []string, stderr io.Writer) (config, error) {
	cfg := config{}
	b := &cfg.build
	fs := flag.NewFlagSet("nightly", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, `Usage: nightly [flags]

Rebuilds the risk model: reads returns and asset metadata, reports their
quality, builds and validates a model, compares it with the current one and
publishes it atomically to the store -out. Without flags it uses the bundled
invented demo market and its demo fund and benchmark.

Exit status: 0 published; 2 bad input, nothing published; 1 other failure,
nothing published.

The store: two jobs on one -out publish one after the other (a lock; the
second waits up to -lock-timeout). A model older than the current one (a
backfill) is published as a dated folder and current stays, unless
-set-current. -keep N keeps the N newest dated folders (never the current
one or the one before it).

Flags:
`)
		fs.PrintDefaults()
	}
	fs.StringVar(&cfg.returns, "returns", "", "return file: long Parquet, or long or wide CSV (default <repository>/"+defaultReturns+")")
	fs.StringVar(&cfg.assets, "assets", "", "asset metadata file, CSV or Parquet (default <repository>/"+defaultAssets+")")
	fs.StringVar(&cfg.portfolio, "portfolio", "", "holdings of the test portfolio, CSV or Parquet (default the demo fund when the returns are the demo's)")
	fs.StringVar(&cfg.benchmark, "benchmark", "", "holdings of the benchmark (default the demo benchmark when the returns are the demo's)")
	asof := fs.String("asof", "", "as-of date of the model, YYYY-MM-DD (default the last date of the file)")
	fs.IntVar(&b.Window, "window", riskmodel.DefaultWindow, "dates of history up to -asof")
	fs.IntVar(&b.MinObs, "min-obs", 0, "drop assets with fewer observations in the window (0: half the window)")
	fs.StringVar(&b.Method, "method", riskmodel.MethodFactor, "estimator: "+strings.Join(riskmodel.Methods, ", "))
	fs.Float64Var(&b.EWMA.VolHalfLife, "vol-half-life", riskmodel.DefaultVolHalfLife, "half-life in dates of the volatilities (factor, ewma)")
	fs.Float64Var(&b.EWMA.CorrHalfLife, "corr-half-life", riskmodel.DefaultCorrHalfLife, "half-life in dates of the correlations (factor, ewma)")
	fs.Float64Var(&b.Factor.SpecificHalfLife, "specific-half-life", 0, "half-life in dates of the specific variances (factor; 0: -vol-half-life)")
	fs.Float64Var(&b.Shrink.HalfLife, "shrink-half-life", 0, "half-life of the observation weights of the shrinkage methods (0: equal weights)")
	fs.IntVar(&b.EWMA.NeweyWestLags, "newey-west-lags", 0, "Newey-West lags of the factor and ewma covariances (0: none)")
	fs.IntVar(&b.Factor.K, "factors", 0, "number of factors (0: chosen by Bai and Ng's IC_p2)")
	fs.IntVar(&b.Factor.MaxFactors, "max-factors", 0, "largest number of factors the criterion considers (0: package default)")
	seed := fs.Uint64("seed", 1, "seed of the randomized principal components")
	fs.StringVar(&b.Factor.Criterion, "criterion", defaultCriterion, "factor-count criterion: bai-ng-icp2, bai-ng-icp1, ahn-horenstein-er, ahn-horenstein-gr, onatski-ed, marchenko-pastur, holdout-likelihood, holdout-min-variance")
	fs.StringVar(&cfg.holdoutRule, "holdout-rule", defaultHoldoutRule, "how the holdout criteria pick K: one-se (the smallest k within one standard error of the best) or best (the best held-out score)")
	adjust := fs.String("adjust", "default", "comma-separated corrections: weighted, eigen, dispersion (factor), regime (every method); none for no correction; default: "+defaultFactorAdjust+" for factor, none for the others")
	fs.Float64Var(&b.Adjust.RegimeHalfLife, "regime-half-life", 0, "half-life in dates of the volatility-regime multiplier (0: package default)")
	defOut, defErr := defaultStore()
	fs.StringVar(&cfg.out, "out", defOut, "model store folder (dated model folders and a 'current' link)")
	fs.Float64Var(&cfg.periodsPerYear, "periods-per-year", 0, "periods per year of the returns (0: the file's, checked against the spacing of the dates, or inferred from it); a value the dates contradict is refused")
	fs.BoolVar(&cfg.acceptImplausible, "accept-implausible", false, "build even when the returns look like prices or percent returns (many values above 1, a large median)")
	fs.IntVar(&cfg.minDates, "min-dates", DefaultMinDates, "fewest dates in the window to build a model from (a variance from T dates is uncertain by about √(2/T))")
	fs.BoolVar(&cfg.setCurrent, "set-current", false, "make the model current even when it is older than the current one (a backfill)")
	fs.IntVar(&cfg.keep, "keep", 0, "keep the N newest dated folders of the store, never the current one or the one before it (0: keep all)")
	fs.DurationVar(&cfg.lockTimeout, "lock-timeout", 2*time.Minute, "how long to wait for another job that is publishing to the store")
	fs.StringVar(&cfg.dense, "dense", "", "also write the dense N×N covariance (per period, full precision) to this CSV file")
	fs.StringVar(&cfg.logFormat, "log-format", "text", "log format on stderr: text or json")
	fs.IntVar(&cfg.biasWindow, "bias-window", 252, "trailing dates of the bias statistic")
	fs.BoolVar(&cfg.failOnBias, "fail-on-bias", false, "refuse to publish when the test portfolio's bias statistic is outside its band (default: a warning)")
	fs.Float64Var(&cfg.minCoverage, "min-coverage", 0.99, "smallest share of the benchmark's weight the model must cover")
	fs.Float64Var(&cfg.maxCondition, "max-condition", riskmodel.DefaultMaxCondition, "largest acceptable condition number")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return cfg, err
		}
		return cfg, badInput{err}
	}
	b.Seed = *seed
	if cfg.out == "" && defErr != nil {
		return cfg, badInput{fmt.Errorf("-out: %w", defErr)}
	}
	if *adjust == "default" {
		*adjust = defaultDenseAdjust
		if b.Method == riskmodel.MethodFactor {
			*adjust = defaultFactorAdjust
		}
	}
	if *adjust != "" && *adjust != "none" {
		v, err := riskmodel.ParseVariant(b.Method + "+" + strings.ReplaceAll(*adjust, ",", "+"))
		if err != nil {
			return cfg, badInput{fmt.Errorf("-adjust: %w", err)}
		}
		hl := b.Adjust.RegimeHalfLife
		b.Adjust = v.Adjust
		b.Adjust.RegimeHalfLife = hl
	}
	switch cfg.holdoutRule {
	case "one-se":
	case "best":
		b.Factor.HoldoutBest = true
	default:
		return cfg, badInput{fmt.Errorf("-holdout-rule must be one-se or best, got %q", cfg.holdoutRule)}
	}
	if fs.NArg() > 0 {
		return cfg, badInput{fmt.Errorf("unexpected argument %q", fs.Arg(0))}
	}
	if err := cfg.check(*asof); err != nil {
		return cfg, badInput{err}
	}
	return cfg, cfg.defaults()
}

// The nightly's defaults: riskmodel.RecommendedVariant, the combination
// that forecast best in examples/evaluate on the demo and on simulated
// markets of other shapes (README, "Risk of optimized portfolios");
// TestDefaultsAreTheRecommendedVariant keeps the two equal.
const (
	defaultCriterion    = "holdout-min-variance"
	defaultHoldoutRule  = "best"
	defaultFactorAdjust = "weighted,dispersion"
	defaultDenseAdjust  = "" // the dense methods stay the published estimators
)

// check validates the flags that need no file.
func (cfg *config) check(asof string) error {
	b := &cfg.build
	if asof != "" {
		d, err := riskmodel.ParseDate(asof)
		if err != nil {
			return fmt.Errorf("-asof: %w", err)
		}
		cfg.asof, cfg.hasAsof = d, true
	}
	switch {
	case !slices.Contains(riskmodel.Methods, b.Method):
		return fmt.Errorf("-method %q: use one of %s", b.Method, strings.Join(riskmodel.Methods, ", "))
	case cfg.logFormat != "text" && cfg.logFormat != "json":
		return fmt.Errorf("-log-format %q: use text or json", cfg.logFormat)
	case b.Window < 2:
		return fmt.Errorf("-window must be at least 2, got %d", b.Window)
	case b.MinObs < 0:
		return fmt.Errorf("-min-obs must not be negative, got %d", b.MinObs)
	case !(b.EWMA.VolHalfLife > 0) || !(b.EWMA.CorrHalfLife > 0):
		return fmt.Errorf("-vol-half-life and -corr-half-life must be positive, got %g and %g", b.EWMA.VolHalfLife, b.EWMA.CorrHalfLife)
	case b.Factor.SpecificHalfLife < 0 || b.Shrink.HalfLife < 0:
		return fmt.Errorf("-specific-half-life and -shrink-half-life must not be negative")
	case b.Factor.K < 0 || b.Factor.MaxFactors < 0:
		return fmt.Errorf("-factors and -max-factors must not be negative")
	case b.EWMA.NeweyWestLags < 0:
		return fmt.Errorf("-newey-west-lags must not be negative, got %d", b.EWMA.NeweyWestLags)
	case cfg.biasWindow < 2:
		return fmt.Errorf("-bias-window must be at least 2, got %d", cfg.biasWindow)
	case !(cfg.minCoverage >= 0 && cfg.minCoverage <= 1):
		return fmt.Errorf("-min-coverage must be in [0, 1], got %g", cfg.minCoverage)
	case !(cfg.maxCondition > 1):
		return fmt.Errorf("-max-condition must be above 1, got %g", cfg.maxCondition)
	case cfg.out == "":
		return errors.New("-out must name a folder")
	case cfg.periodsPerYear < 0 || math.IsInf(cfg.periodsPerYear, 0) || math.IsNaN(cfg.periodsPerYear):
		return fmt.Errorf("-periods-per-year must be positive (or 0 to infer it), got %g", cfg.periodsPerYear)
	case cfg.minDates < 2:
		return fmt.Errorf("-min-dates must be at least 2, got %d", cfg.minDates)
	case cfg.keep < 0:
		return fmt.Errorf("-keep must not be negative, got %d", cfg.keep)
	case cfg.lockTimeout < 0:
		return fmt.Errorf("-lock-timeout must not be negative, got %v", cfg.lockTimeout)
	case (cfg.portfolio == "") != (cfg.benchmark == ""):
		return errors.New("-portfolio and -benchmark go together: give both or neither")
	}
	return nil
}

// defaults fills in the demo files for inputs not given.
func (cfg *config) defaults() error {
	demo := cfg.returns == ""
	if !demo && cfg.assets != "" {
		return nil
	}
	wd, err := os.Getwd()
	if err != nil {
		return err
	}
	root, err := findRoot(wd)
	if err != nil {
		return badInput{fmt.Errorf("%w; give -returns and -assets", err)}
	}
	if cfg.returns == "" {
		cfg.returns = filepath.Join(root, defaultReturns)
	}
	if cfg.assets == "" {
		cfg.assets = filepath.Join(root, defaultAssets)
	}
	if demo && cfg.portfolio == "" && cfg.benchmark == "" {
		cfg.portfolio = filepath.Join(root, defaultPortfolio)
		cfg.benchmark = filepath.Join(root, defaultBenchmark)
	}
	return nil
}

// findRoot returns the nearest directory at or above dir holding go.mod.
func findRoot(dir string) (string, error) {
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir, nil
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return "", errors.New("no go.mod in the working directory or above it")
		}
		dir = parent
	}
}
