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
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/userdir"
	"github.com/riskmodel/riskmodel/te"
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
	defaultPortfolio = filepath.Join("testdata", "demo", "fund.csv")
	defaultBenchmark = filepath.Join("testdata", "demo", "benchmark.csv")
	defaultAssets    = filepath.Join("testdata", "demo", "assets.csv")
)

type config struct {
	model, portfolio, benchmark, export string
	maxWeight, tol                      float64
	names, iterations                   int
	band                                te.Band
}

// badInput marks an error caused by the user's flags or files.
type badInput struct{ err error }

func (e badInput) Error() string { return e.err.Error() }
func (e badInput) Unwrap() error { return e.err }

func run(args []string, stdout, stderr io.Writer) int {
	cfg, err := parseFlags(args, stderr)
	if errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	if err == nil {
		err = optimize(cfg, stdout)
	}
	if err == nil {
		return exitOK
	}
	fmt.Fprintf(stderr, "optimizer: %s\n", strings.Join(strings.Fields(err.Error()), " "))
	if errors.As(err, new(badInput)) {
		return exitBadInput
	}
	return exitFailure
}

func parseFlags(args []string, stderr io.Writer) (config, error) {
	var cfg config
	fs := flag.NewFlagSet("optimizer", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, `Usage: optimizer [flags]

An example of an optimizer consuming a risk model (not a product optimizer):
loads the model, aligns it with the benchmark's names, rebalances a long-only
portfolio to the minimum tracking error under a maximum weight by projected
gradient with Σx in factor form, checks the result against a band and exports
the square-root form of the covariance as CSV for an external cone solver.
Without flags it uses a factor model built from the bundled demo market.

Flags:
`)
		fs.PrintDefaults()
	}
	fs.StringVar(&cfg.model, "model", "", "model store folder (its current model) or one model folder (default: build a factor model from the demo)")
	fs.StringVar(&cfg.portfolio, "portfolio", "", "starting holdings, asset,weight (default <repository>/"+defaultPortfolio+")")
	fs.StringVar(&cfg.benchmark, "benchmark", "", "benchmark holdings, the universe (default <repository>/"+defaultBenchmark+")")
	fs.Float64Var(&cfg.maxWeight, "max-weight", 0.03, "largest weight of one name")
	fs.IntVar(&cfg.names, "names", 0, "hold only the N largest benchmark names (0: all)")
	band := fs.String("band", "0,0.02", "tracking-error band lower,upper, annualised fractions; 0 means no floor or no ceiling")
	fs.IntVar(&cfg.iterations, "iterations", 5000, "largest number of gradient steps")
	fs.Float64Var(&cfg.tol, "tol", 1e-10, "stop when no weight moves more than this in a step")
	// The default export folder is the user's own (internal/userdir), never a
	// fixed path in the shared temporary folder that another user could plant.
	defExport, defErr := userdir.Dir("optimizer")
	fs.StringVar(&cfg.export, "export", defExport, "folder for the square-root form and the weights (CSV)")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return cfg, err
		}
		return cfg, badInput{err}
	}
	if fs.NArg() > 0 {
		return cfg, badInput{fmt.Errorf("unexpected argument %q", fs.Arg(0))}
	}
	switch {
	case !(cfg.maxWeight > 0 && cfg.maxWeight <= 1):
		return cfg, badInput{fmt.Errorf("-max-weight must be in (0, 1], got %g", cfg.maxWeight)}
	case cfg.names < 0:
		return cfg, badInput{fmt.Errorf("-names must not be negative, got %d", cfg.names)}
	case cfg.iterations < 1:
		return cfg, badInput{fmt.Errorf("-iterations must be at least 1, got %d", cfg.iterations)}
	case !(cfg.tol > 0):
		return cfg, badInput{fmt.Errorf("-tol must be positive, got %g", cfg.tol)}
	case cfg.export == "" && defErr != nil:
		return cfg, badInput{fmt.Errorf("-export: %w", defErr)}
	case cfg.export == "":
		return cfg, badInput{errors.New("-export must name a folder")}
	}
	lo, hi, ok := strings.Cut(*band, ",")
	l, err1 := strconv.ParseFloat(strings.TrimSpace(lo), 64)
	u, err2 := strconv.ParseFloat(strings.TrimSpace(hi), 64)
	if !ok || err1 != nil || err2 != nil {
		return cfg, badInput{fmt.Errorf("-band %q: want lower,upper such as 0,0.01", *band)}
	}
	cfg.band = te.Band{Lower: l, Upper: u}
	if _, err := cfg.band.Check(0); errors.Is(err, te.ErrBand) {
		return cfg, badInput{fmt.Errorf("-band %q: %w", *band, err)}
	}
	if l >= 1 || u >= 1 {
		return cfg, badInput{fmt.Errorf("-band %q: limits of 100 %% or more look like percent; give annualised fractions such as 0,0.02", *band)}
	}
	return cfg, nil
}

// problem is the rebalancing problem over the universe: the names of the
// benchmark the model covers, in the model's order.
type problem struct {
	model          *riskmodel.Model
	assets         []string
	idx            []int // positions of assets in the model
	bench, start   []float64
	caps           []float64
	cashBenchmark  float64
	uncovered      []string
	startUncovered float64
}

func optimize(cfg config, stdout io.Writer) error {
	root := ""
	if cfg.model == "" || cfg.portfolio == "" || cfg.benchmark == "" {
		wd, err := os.Getwd()
		if err != nil {
			return err
		}
		if root, err = findRoot(wd); err != nil {
			return badInput{fmt.Errorf("%w; give -model, -portfolio and -benchmark", err)}
		}
	}
	or := func(p, def string) string {
		if p != "" {
			return p
		}
		return filepath.Join(root, def)
	}
	port, err := riskmodel.ReadHoldings(or(cfg.portfolio, defaultPortfolio))
	if err != nil {
		return badInput{err}
	}
	bench, err := riskmodel.ReadHoldings(or(cfg.benchmark, defaultBenchmark))
	if err != nil {
		return badInput{err}
	}
	m, err := loadModel(cfg.model, filepath.Join(root, defaultReturns), filepath.Join(root, defaultAssets))
	if err != nil {
		return err
	}
	own, err := fundTE(m, port, bench)
	if err != nil {
		return badInput{err}
	}
	pr, err := align(m, port, bench, cfg)
	if err != nil {
		return badInput{err}
	}
	cov := subCovariance(m, pr.idx)
	an, err := te.NewAnalyzer(cov)
	if err != nil {
		return err
	}
	mul := func(dst, x []float64) []float64 { return an.MulVecTo(dst, x) }
	lambda := tangentEigenvalue(mul, len(pr.assets))
	w, path, settled, err := rebalance(mul, pr.bench, pr.start, pr.caps, lambda, cfg.iterations, cfg.tol)
	if err != nil {
		return badInput{err}
	}
	s := math.Sqrt(m.PeriodsPerYear)
	before, after := path[0]*s, path[len(path)-1]*s
	check, err := cfg.band.Check(after)
	if err != nil {
		return err
	}
	if err := export(cfg.export, m, cov, pr, w); err != nil {
		return err
	}
	printResult(stdout, cfg, m, pr, w, path, settled, [3]float64{own, before, after}, check, an.Factored())
	return nil
}

// fundTE returns the starting portfolio's own tracking error, annualised,
// over the whole model (held names it does not cover as cash), before any
// projection onto the rebalancer's universe and caps.
func fundTE(m *riskmodel.Model, port, bench []riskmodel.Holding) (float64, error) {
	al, err := te.Align(m.Assets, riskmodel.HoldingsMap(port), riskmodel.HoldingsMap(bench), &te.AlignOptions{UncoveredAsCash: true})
	if err != nil {
		return 0, fmt.Errorf("starting portfolio: %w", err)
	}
	an, err := te.NewAnalyzer(m.Covariance())
	if err != nil {
		return 0, err
	}
	v, err := an.TrackingError(al.Portfolio, al.Benchmark)
	if err != nil {
		return 0, fmt.Errorf("starting portfolio: %w", err)
	}
	return te.Annualize(v, m.PeriodsPerYear), nil
}

// align builds the universe from the benchmark names the model covers; the
// starting portfolio's names outside it are dropped (reported), and the
// start is projected onto the constraints by the first step.
func align(m *riskmodel.Model, port, bench []riskmodel.Holding, cfg config) (*problem, error) {
	pos := make(map[string]int, len(m.Assets))
	for i, a := range m.Assets {
		pos[a] = i
	}
	bw := riskmodel.HoldingsMap(bench)
	pr := &problem{model: m}
	for a, x := range bw {
		if x < 0 {
			return nil, fmt.Errorf("benchmark weight of %s is negative (%g): the rebalancer is long only", a, x)
		}
		if _, ok := pos[a]; !ok {
			pr.uncovered = append(pr.uncovered, a)
			pr.cashBenchmark += x
		}
	}
	slices.Sort(pr.uncovered)
	for i, a := range m.Assets {
		if x, ok := bw[a]; ok {
			pr.assets = append(pr.assets, a)
			pr.idx = append(pr.idx, i)
			pr.bench = append(pr.bench, x)
		}
	}
	if len(pr.assets) == 0 {
		return nil, errors.New("the model covers none of the benchmark's names")
	}
	pw := riskmodel.HoldingsMap(port)
	pr.start = make([]float64, len(pr.assets))
	for k, a := range pr.assets {
		pr.start[k] = pw[a]
	}
	for a, x := range pw {
		if _, ok := bw[a]; !ok {
			pr.startUncovered += x
		}
	}
	// Shortlist: the largest benchmark weights, ties by identifier.
	order := make([]int, len(pr.assets))
	for k := range order {
		order[k] = k
	}
	slices.SortStableFunc(order, func(i, j int) int {
		if pr.bench[i] != pr.bench[j] {
			if pr.bench[i] > pr.bench[j] {
				return -1
			}
			return 1
		}
		return strings.Compare(pr.assets[i], pr.assets[j])
	})
	keep := len(order)
	if cfg.names > 0 {
		keep = min(cfg.names, keep)
	}
	pr.caps = make([]float64, len(pr.assets))
	for _, k := range order[:keep] {
		pr.caps[k] = cfg.maxWeight
	}
	if float64(keep)*cfg.maxWeight < 1-1e-12 {
		return nil, fmt.Errorf("%d names at a maximum weight of %g cannot hold a fully invested portfolio; raise -max-weight or -names", keep, cfg.maxWeight)
	}
	return pr, nil
}

// subCovariance returns the covariance of the model's assets idx: a factor
// submodel (Σx stays O(N·K)) or the dense block.
func subCovariance(m *riskmodel.Model, idx []int) te.Covariance {
	if m.Factor != nil {
		return m.Factor.Submodel(idx)
	}
	n := len(idx)
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s.SetSym(i, j, m.Dense.At(idx[i], idx[j]))
		}
	}
	return s
}

// loadModel reads the model folder or store, or builds the factor model of
// the demo market (sectors as groups of the specific-risk shrinkage, as the
// nightly job does) when dir is empty.
func loadModel(dir, demoReturns, demoAssets string) (*riskmodel.Model, error) {
	if dir != "" {
		m, err := riskmodel.LoadModel(dir)
		if err != nil {
			return nil, badInput{fmt.Errorf("-model: %w", err)}
		}
		return m, nil
	}
	p, err := riskmodel.ReadReturns(demoReturns, nil)
	if err != nil {
		return nil, badInput{err}
	}
	assets, err := riskmodel.ReadAssets(demoAssets)
	if err != nil {
		return nil, badInput{err}
	}
	groups := make(map[string]string, len(assets))
	for _, a := range assets {
		groups[a.Asset] = a.Sector
	}
	t, _ := p.Dims()
	o, err := riskmodel.ParseVariant(riskmodel.RecommendedVariant) // as the nightly builds it
	if err != nil {
		return nil, err
	}
	o.Seed, o.Factor.Groups = 1, groups
	m, _, err := riskmodel.Build(p, p.Date(t-1), &o)
	return m, err
}

// printResult prints the rebalance; tes holds the fund's own tracking
// error, the projected start's and the optimised portfolio's, annualised.
func printResult(w io.Writer, cfg config, m *riskmodel.Model, pr *problem, wt, path []float64, settled bool, tes [3]float64, check te.BandCheck, factored bool) {
	form := "dense"
	if factored {
		form = fmt.Sprintf("factor form, K = %d", m.Factor.NumFactors())
	}
	held, capped := 0, 0
	for k, x := range wt {
		if x > 1e-9 {
			held++
		}
		if pr.caps[k] > 0 && x >= pr.caps[k]-1e-12 {
			capped++
		}
	}
	fmt.Fprintf(w, "Minimum-tracking-error rebalance as of %s (%s model, %s)\n", m.AsOf, m.Method, form)
	fmt.Fprintf(w, "  universe        %d benchmark names in the model", len(pr.assets))
	if len(pr.uncovered) > 0 {
		fmt.Fprintf(w, "; %d not covered (%.3f %% of the benchmark, kept as cash there)", len(pr.uncovered), 100*pr.cashBenchmark)
	}
	fmt.Fprintln(w)
	if pr.startUncovered != 0 {
		fmt.Fprintf(w, "  start           %.3f %% of the start is outside the universe and is dropped\n", 100*pr.startUncovered)
	}
	fmt.Fprintf(w, "  constraints     long only, fully invested, at most %.2f %% a name", 100*cfg.maxWeight)
	if cfg.names > 0 {
		fmt.Fprintf(w, ", only the %d largest benchmark names", cfg.names)
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "  tracking error  fund %.4f %% a year as held; %.4f %% once projected onto the constraints\n", 100*tes[0], 100*tes[1])
	fmt.Fprintf(w, "  optimised       %.4f %% a year in %d projected-gradient steps", 100*tes[2], len(path)-1)
	if !settled {
		fmt.Fprintf(w, ", stopped by -iterations %d before no weight moved more than -tol %g", cfg.iterations, cfg.tol)
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "  holdings        %d names, %d at the maximum weight\n", held, capped)
	upper := "no ceiling"
	if cfg.band.Upper > 0 {
		upper = fmt.Sprintf("%.3f %%", 100*cfg.band.Upper)
	}
	fmt.Fprintf(w, "  band            %.3f %% to %s: %s", 100*cfg.band.Lower, upper, check.Status)
	if check.Status != te.Within {
		fmt.Fprintf(w, " by %.4f %%", 100*check.Breach)
	}
	fmt.Fprintln(w)
	files := "sqrt_factor.csv, sqrt_specific.csv, problem.csv"
	if !factored {
		files = "cholesky_factor.csv, problem.csv"
	}
	fmt.Fprintf(w, "  exported        %s (%s)\n", cfg.export, files)
	fmt.Fprintf(w, "Caution: %s\n", riskmodel.Caution)
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
