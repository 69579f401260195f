package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/riskmodel/riskmodel"
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
	defaultAssets    = filepath.Join("testdata", "demo", "assets.csv")
	defaultPortfolio = filepath.Join("testdata", "demo", "fund.csv")
	defaultBenchmark = filepath.Join("testdata", "demo", "benchmark.csv")
)

type config struct {
	model, portfolio, benchmark, assets string
	format, out                         string
	groups                              []string
	band                                *te.Band
	top                                 int
	longOnly, shorts                    bool
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
		err = report(cfg, stdout, stderr)
	}
	if err == nil {
		return exitOK
	}
	fmt.Fprintf(stderr, "attribution: %s\n", strings.Join(strings.Fields(err.Error()), " "))
	if errors.As(err, new(badInput)) {
		return exitBadInput
	}
	return exitFailure
}

func parseFlags(args []string, stderr io.Writer) (config, error) {
	var cfg config
	fs := flag.NewFlagSet("attribution", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, `Usage: attribution [flags]

Explains a portfolio's ex-ante tracking error against its benchmark under a
risk model: by group, by single name, by factor, with the best hedges and a
band check. Without flags it builds a factor model from the bundled invented
demo market and reports on the demo fund. Risk figures are annualised.

Flags:
`)
		fs.PrintDefaults()
	}
	fs.StringVar(&cfg.model, "model", "", "model store folder (its current model) or one model folder (default: build a factor model from the demo)")
	fs.StringVar(&cfg.portfolio, "portfolio", "", "portfolio holdings, CSV or Parquet with asset,weight (default <repository>/"+defaultPortfolio+")")
	fs.StringVar(&cfg.benchmark, "benchmark", "", "benchmark holdings (default <repository>/"+defaultBenchmark+")")
	fs.StringVar(&cfg.assets, "assets", "", "asset metadata, CSV or Parquet (default <repository>/"+defaultAssets+")")
	group := fs.String("group", riskmodel.DefaultGroupBy, "metadata columns to attribute by, comma-separated (sector,size_bucket: also their cross table)")
	band := fs.String("band", "", "tracking-error band lower,upper, annualised fractions (0.01,0.03); 0 means no floor or no ceiling")
	fs.BoolVar(&cfg.longOnly, "long-only", false, "the portfolio is a long-only fund: refuse negative weights and weights not summing to 1")
	fs.BoolVar(&cfg.shorts, "shorts", false, "let the hedges of a long-only portfolio sell more than the holding")
	fs.StringVar(&cfg.format, "format", "text", "output format: text, csv, json or html")
	fs.StringVar(&cfg.out, "o", "", "write the report to this file (default stdout)")
	fs.IntVar(&cfg.top, "top", riskmodel.DefaultTopNames, "number of single names listed as contributors and hedges")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return cfg, err
		}
		return cfg, badInput{err}
	}
	if fs.NArg() > 0 {
		return cfg, badInput{fmt.Errorf("unexpected argument %q", fs.Arg(0))}
	}
	switch cfg.format {
	case "text", "csv", "json", "html":
	default:
		return cfg, badInput{fmt.Errorf("-format %q: use text, csv, json or html", cfg.format)}
	}
	if cfg.top < 1 {
		return cfg, badInput{fmt.Errorf("-top must be at least 1, got %d", cfg.top)}
	}
	for _, g := range strings.Split(*group, ",") {
		if g = strings.TrimSpace(g); g == "" {
			return cfg, badInput{fmt.Errorf("-group %q: an empty column name", *group)}
		}
		cfg.groups = append(cfg.groups, strings.TrimSpace(g))
	}
	if *band != "" {
		b, err := parseBand(*band)
		if err != nil {
			return cfg, badInput{err}
		}
		cfg.band = &b
	}
	return cfg, nil
}

// parseBand reads "lower,upper".
func parseBand(s string) (te.Band, error) {
	lo, hi, ok := strings.Cut(s, ",")
	if !ok {
		return te.Band{}, fmt.Errorf("-band %q: want lower,upper such as 0.01,0.03", s)
	}
	l, err1 := strconv.ParseFloat(strings.TrimSpace(lo), 64)
	u, err2 := strconv.ParseFloat(strings.TrimSpace(hi), 64)
	if err1 != nil || err2 != nil {
		return te.Band{}, fmt.Errorf("-band %q: want two numbers lower,upper such as 0.01,0.03", s)
	}
	b := te.Band{Lower: l, Upper: u}
	if _, err := b.Check(0); err != nil && errors.Is(err, te.ErrBand) {
		return te.Band{}, fmt.Errorf("-band %q: %w", s, err)
	}
	if l >= 1 || u >= 1 {
		return te.Band{}, fmt.Errorf("-band %q: limits of 100 %% or more look like percent; give annualised fractions such as 0.01,0.03", s)
	}
	return b, nil
}

func report(cfg config, stdout, stderr io.Writer) error {
	root := ""
	if cfg.model == "" || cfg.portfolio == "" || cfg.benchmark == "" || cfg.assets == "" {
		wd, err := os.Getwd()
		if err != nil {
			return err
		}
		if root, err = findRoot(wd); err != nil {
			return badInput{fmt.Errorf("%w; give -model, -portfolio, -benchmark and -assets", err)}
		}
	}
	orDefault := func(p, def string) string {
		if p != "" {
			return p
		}
		return filepath.Join(root, def)
	}
	cfg.portfolio = orDefault(cfg.portfolio, defaultPortfolio)
	cfg.benchmark = orDefault(cfg.benchmark, defaultBenchmark)
	cfg.assets = orDefault(cfg.assets, defaultAssets)
	if err := checkOutput(cfg.out, cfg.model, cfg.portfolio, cfg.benchmark, cfg.assets); err != nil {
		return badInput{err}
	}
	assets, err := riskmodel.ReadAssets(cfg.assets)
	if err != nil {
		return badInput{err}
	}
	port, err := riskmodel.ReadHoldings(cfg.portfolio)
	if err != nil {
		return badInput{err}
	}
	bench, err := riskmodel.ReadHoldings(cfg.benchmark)
	if err != nil {
		return badInput{err}
	}
	m, err := loadModel(cfg.model, filepath.Join(root, defaultReturns), assets)
	if err != nil {
		return err
	}
	a, err := riskmodel.Attribute(m, port, bench, assets, &riskmodel.AttributionOptions{
		GroupBy: cfg.groups, Top: cfg.top, Band: cfg.band, LongOnly: cfg.longOnly, Shorts: cfg.shorts,
		PortfolioName: cfg.portfolio, BenchmarkName: cfg.benchmark,
	})
	if err != nil {
		return badInput{err}
	}
	for _, x := range a.Warnings {
		fmt.Fprintf(stderr, "attribution: warning: %s\n", x)
	}
	write := func(w io.Writer) error {
		switch cfg.format {
		case "csv":
			return a.WriteCSV(w)
		case "json":
			return a.WriteJSON(w)
		case "html":
			return a.WriteHTML(w)
		}
		return a.WriteText(w)
	}
	if cfg.out == "" {
		return write(stdout)
	}
	if err := writeFileAtomic(cfg.out, write); err != nil {
		return fmt.Errorf("-o: %w", err)
	}
	return nil
}

// loadModel reads the model folder or store, or builds a factor model from
// the demo returns when dir is empty.
func loadModel(dir, demoReturns string, assets []riskmodel.AssetInfo) (*riskmodel.Model, error) {
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
