// Command evaluate ranks risk-model estimators by how well they forecast risk
// out of sample on a return history: every -step dates it fits each estimator
// on the trailing -window dates only, builds test portfolios from each
// forecast and measures them on the dates that follow.
//
// With no flags it evaluates every estimator on the bundled demo market
// (testdata/demo), adds the demo's true covariance as the "oracle" and prints
// the ranking table and a one-line recommendation:
//
//	go run ./examples/evaluate
//	go run ./examples/evaluate -methods ledoit-wolf,factor -format csv -chart risk.svg
//
// Exit status 0 on success, 1 for a failure of the evaluation itself and 2
// for bad flags or input files.
package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/riskmodel/riskmodel/internal/evaluate"

	"github.com/riskmodel/riskmodel"
)

// Exit statuses.
const (
	exitOK       = 0
	exitFailure  = 1
	exitBadInput = 2
)

// Default input files, relative to the repository root.
var (
	defaultReturns   = filepath.Join("testdata", "demo", "returns.parquet")
	defaultBenchmark = filepath.Join("testdata", "demo", "benchmark.csv")
	defaultFund      = filepath.Join("testdata", "demo", "fund.csv")
	defaultAssets    = filepath.Join("testdata", "demo", "assets.csv")
)

type config struct {
	returns, benchmark, fund string
	assets                   string
	demo                     bool // the inputs are the bundled demo's
	methods                  []string
	step, window             int
	portfolios, tracking     int
	seed                     uint64
	format, chart            string
	truth                    bool
	workers                  int
	sim                      string // a simulated market instead of files: -sim key=value,...
	cpuProfile               string // write a CPU profile of the evaluation to this file
	quiet                    bool   // no progress on stderr
	shard, shards            int    // -shard i/n; 0/0 for the whole evaluation
	out                      string // -o: the shard file
	merge                    []string
}

// Bounds on the size flags: past them a run only spends memory and time.
const (
	maxStep, maxWindow = 100_000, 100_000
	maxSimAssets       = 20_000
	maxSimDates        = 100_000
	maxShards          = 10_000
)

// badInput marks an error caused by the user's flags or files.
type badInput struct{ err error }

func (e badInput) Error() string { return e.err.Error() }
func (e badInput) Unwrap() error { return e.err }

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }

// run is the whole program; it returns the exit status.
func run(args []string, stdout, stderr io.Writer) int {
	cfg, err := parseFlags(args, stderr)
	if errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	if err == nil {
		err = runEvaluation(cfg, stdout, stderr)
	}
	if err == nil {
		return exitOK
	}
	fmt.Fprintf(stderr, "evaluate: %s\n", oneLine(err.Error()))
	if errors.As(err, new(badInput)) {
		return exitBadInput
	}
	return exitFailure
}

func parseFlags(args []string, stderr io.Writer) (config, error) {
	var cfg config
	fs := flag.NewFlagSet("evaluate", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "Usage: evaluate [flags]\n\nRanks risk-model estimators by their out-of-sample forecasts on a return\nhistory. Without flags it uses the bundled demo market.\n\nFlags:\n")
		fs.PrintDefaults()
	}
	fs.StringVar(&cfg.returns, "returns", "", "return file: long Parquet, or long or wide CSV (default <repository>/"+defaultReturns+")")
	fs.StringVar(&cfg.benchmark, "benchmark", "", "benchmark holdings, CSV or Parquet; \"none\" for equal weights (default the demo's with the demo's returns)")
	fs.StringVar(&cfg.fund, "fund", "", "fund holdings, CSV or Parquet; \"none\" to skip (default the demo's with the demo's returns)")
	fs.StringVar(&cfg.assets, "assets", "", "asset metadata (sector, market_cap), CSV or Parquet, for the exposure and hybrid estimators; \"none\" to skip them (default the demo's with the demo's returns)")
	methods := fs.String("methods", "all", "comma-separated estimators, or all (every one but exposure and hybrid, which need -assets and a -window above 252): "+strings.Join(riskmodel.Methods, ","))
	fs.IntVar(&cfg.step, "step", evaluate.DefaultStep, "dates between rebalance dates, and the length of each test period")
	fs.IntVar(&cfg.window, "window", evaluate.DefaultWindow, "dates of history each fit sees")
	fs.IntVar(&cfg.portfolios, "portfolios", evaluate.DefaultRandomPortfolios, "random long-only and random active test portfolios of each kind")
	fs.IntVar(&cfg.tracking, "tracking-names", evaluate.DefaultTrackingNames, "largest benchmark names the tracking portfolio may hold")
	fs.Uint64Var(&cfg.seed, "seed", evaluate.DefaultSeed, "seed of the random portfolios and of the factor model")
	fs.StringVar(&cfg.format, "format", "text", "output format: text, csv or json")
	fs.StringVar(&cfg.chart, "chart", "", "write an SVG chart of forecast against realised risk to this file")
	fs.BoolVar(&cfg.truth, "truth", true, "with the demo's returns, add its true covariance as the oracle and the losses against it")
	fs.IntVar(&cfg.workers, "workers", 0, "rebalance dates processed at once (default the number of cores)")
	fs.StringVar(&cfg.sim, "sim", "", "evaluate on a simulated market with its truth instead of files: comma-separated seed=, assets=, sectors=, dates=, stress-start=, stress-length= of the demo generator (e.g. sectors=25,assets=800)")
	fs.StringVar(&cfg.cpuProfile, "cpuprofile", "", "write a CPU profile of the evaluation to this file (for go tool pprof)")
	fs.BoolVar(&cfg.quiet, "quiet", false, "no progress on stderr (there is none when stderr is not a terminal)")
	shard := fs.String("shard", "", "evaluate only slice i of n of the rebalance dates (1 ≤ i ≤ n) and write it to -o, for -merge")
	fs.StringVar(&cfg.out, "o", "", "the shard file that -shard writes")
	merge := fs.Bool("merge", false, "merge the shard files given as arguments (every shard of one evaluation) into its results, instead of evaluating")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return cfg, err
		}
		return cfg, badInput{err}
	}
	if *merge {
		if fs.NArg() == 0 {
			return cfg, badInput{errors.New("-merge needs the shard files as arguments")}
		}
		if *shard != "" {
			return cfg, badInput{errors.New("-merge and -shard exclude each other")}
		}
		cfg.merge = fs.Args()
	} else if fs.NArg() > 0 {
		return cfg, badInput{fmt.Errorf("unexpected argument %q", fs.Arg(0))}
	}
	if *shard != "" {
		i, n, ok := strings.Cut(*shard, "/")
		var err1, err2 error
		cfg.shard, err1 = strconv.Atoi(i)
		cfg.shards, err2 = strconv.Atoi(n)
		if !ok || err1 != nil || err2 != nil || cfg.shards < 1 || cfg.shards > maxShards || cfg.shard < 1 || cfg.shard > cfg.shards {
			return cfg, badInput{fmt.Errorf("-shard must be i/n with 1 ≤ i ≤ n ≤ %d, got %q", maxShards, *shard)}
		}
		if cfg.out == "" {
			return cfg, badInput{errors.New("-shard needs -o FILE for the shard's results")}
		}
	} else if cfg.out != "" {
		return cfg, badInput{errors.New("-o is for -shard")}
	}
	switch cfg.format {
	case "text", "csv", "json":
	default:
		return cfg, badInput{fmt.Errorf("-format must be text, csv or json, got %q", cfg.format)}
	}
	for _, b := range []struct {
		name           string
		v, least, most int
	}{
		{"-step", cfg.step, 2, maxStep},
		{"-window", cfg.window, 2, maxWindow},
		{"-portfolios", cfg.portfolios, 0, evaluate.MaxRandomPortfolios},
		{"-tracking-names", cfg.tracking, 1, evaluate.MaxTrackingNames},
		{"-workers", cfg.workers, 0, evaluate.MaxWorkers},
	} {
		if b.v < b.least || b.v > b.most {
			return cfg, badInput{fmt.Errorf("%s must be %d to %d, got %d", b.name, b.least, b.most, b.v)}
		}
	}
	if cfg.sim != "" {
		if _, err := simConfig(cfg.sim); err != nil {
			return cfg, badInput{err}
		}
		cfg.benchmark, cfg.fund, cfg.assets = "none", "none", "none"
	}
	if cfg.returns == "" && cfg.sim == "" {
		wd, err := os.Getwd()
		if err != nil {
			return cfg, err
		}
		root, err := findRoot(wd)
		if err != nil {
			return cfg, badInput{fmt.Errorf("%w; give -returns", err)}
		}
		cfg.returns = filepath.Join(root, defaultReturns)
		cfg.demo = true
		if cfg.benchmark == "" {
			cfg.benchmark = filepath.Join(root, defaultBenchmark)
		}
		if cfg.fund == "" {
			cfg.fund = filepath.Join(root, defaultFund)
		}
		if cfg.assets == "" {
			cfg.assets = filepath.Join(root, defaultAssets)
		}
	}
	if *methods == "all" {
		// The exposure and hybrid estimators need metadata and a window
		// longer than their styles' look-back (252 dates): name them.
		cfg.methods = slices.DeleteFunc(slices.Clone(riskmodel.Methods), needsMetadata)
	} else {
		for _, m := range strings.Split(*methods, ",") {
			m = strings.TrimSpace(m)
			if _, err := riskmodel.ParseVariant(m); err != nil {
				return cfg, badInput{fmt.Errorf("-methods: unknown estimator: %w (one of %s, optionally with +eigen, +dispersion, +regime, +holdout, +holdout-mv, +k<N>)", err, strings.Join(riskmodel.Methods, ","))}
			}
			if slices.Contains(cfg.methods, m) {
				return cfg, badInput{fmt.Errorf("-methods: %q given twice", m)}
			}
			cfg.methods = append(cfg.methods, m)
		}
	}
	return cfg, nil
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

// needsMetadata reports whether an estimator (or a variant of it) needs
// sectors and market caps.
func needsMetadata(m string) bool {
	m, _, _ = strings.Cut(m, "+")
	return m == riskmodel.MethodExposure || m == riskmodel.MethodHybrid
}

func oneLine(s string) string { return strings.Join(strings.Fields(s), " ") }
