package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/riskmodel/riskmodel"
)

// Exit statuses.
const (
	exitOK       = 0
	exitFailure  = 1 // an unexpected failure of the job itself
	exitBadInput = 2 // bad flags or bad input files
)

// Default input files, relative to the repository root.
var (
	defaultReturns = filepath.Join("testdata", "demo", "returns.parquet")
	defaultAssets  = filepath.Join("testdata", "demo", "assets.csv")
)

// config is the job's settings, from its flags.
type config struct {
	returns, assets string
	asof            riskmodel.Date
	hasAsof         bool
	window, minObs  int
}

// badInput marks an error caused by the user's flags or files.
type badInput struct{ err error }

func (e badInput) Error() string { return e.err.Error() }
func (e badInput) Unwrap() error { return e.err }

// run is the whole program; it returns the exit status.
func run(args []string, stdout, stderr io.Writer) int {
	log := slog.New(slog.NewTextHandler(stderr, nil))
	cfg, err := parseFlags(args, stderr)
	if errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	if err == nil {
		err = job(cfg, stdout, log)
	}
	if err == nil {
		return exitOK
	}
	fmt.Fprintf(stderr, "nightly: %s\n", oneLine(err.Error()))
	if errors.As(err, new(badInput)) {
		return exitBadInput
	}
	return exitFailure
}

// parseFlags reads the flags; the default files are looked up from the
// repository root, found by walking up from the working directory to go.mod.
func parseFlags(args []string, stderr io.Writer) (config, error) {
	var cfg config
	fs := flag.NewFlagSet("nightly", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "Usage: nightly [flags]\n\nLoads a return history and asset metadata, validates them and prints a\ndata-quality summary. Without flags it uses the bundled demo market.\n\nFlags:\n")
		fs.PrintDefaults()
	}
	fs.StringVar(&cfg.returns, "returns", "", "return file: long Parquet, or long or wide CSV (default <repository>/"+defaultReturns+")")
	fs.StringVar(&cfg.assets, "assets", "", "asset metadata file, CSV or Parquet (default <repository>/"+defaultAssets+")")
	asof := fs.String("asof", "", "last date of the window, YYYY-MM-DD (default the last date of the file)")
	fs.IntVar(&cfg.window, "window", 0, "number of dates in the window up to -asof; 0 means all")
	fs.IntVar(&cfg.minObs, "min-obs", 60, "assets with fewer observations in the window are listed as dropped")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return cfg, err
		}
		return cfg, badInput{err}
	}
	if fs.NArg() > 0 {
		return cfg, badInput{fmt.Errorf("unexpected argument %q", fs.Arg(0))}
	}
	if *asof != "" {
		d, err := riskmodel.ParseDate(*asof)
		if err != nil {
			return cfg, badInput{fmt.Errorf("-asof: %w", err)}
		}
		cfg.asof, cfg.hasAsof = d, true
	}
	if cfg.window < 0 {
		return cfg, badInput{fmt.Errorf("-window must not be negative, got %d", cfg.window)}
	}
	if cfg.minObs < 0 {
		return cfg, badInput{fmt.Errorf("-min-obs must not be negative, got %d", cfg.minObs)}
	}
	if cfg.returns == "" || cfg.assets == "" {
		wd, err := os.Getwd()
		if err != nil {
			return cfg, err
		}
		root, err := findRoot(wd)
		if err != nil {
			return cfg, badInput{fmt.Errorf("%w; give -returns and -assets", err)}
		}
		if cfg.returns == "" {
			cfg.returns = filepath.Join(root, defaultReturns)
		}
		if cfg.assets == "" {
			cfg.assets = filepath.Join(root, defaultAssets)
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

// job loads and checks the inputs and prints the summary.
func job(cfg config, stdout io.Writer, log *slog.Logger) error {
	start := time.Now()
	panel, err := riskmodel.ReadReturns(cfg.returns, nil)
	if err != nil {
		return badInput{err}
	}
	t, n := panel.Dims()
	log.Info("read returns", "file", cfg.returns, "dates", t, "assets", n, "elapsed", time.Since(start).Round(time.Millisecond))
	assets, err := riskmodel.ReadAssets(cfg.assets)
	if err != nil {
		return badInput{err}
	}
	log.Info("read assets", "file", cfg.assets, "assets", len(assets))
	asof := panel.Date(t - 1)
	if cfg.hasAsof {
		asof = cfg.asof
	}
	win, err := panel.Window(asof, cfg.window)
	if err != nil {
		return badInput{fmt.Errorf("-asof %s: %w (the file starts on %s)", asof, err, panel.Date(0))}
	}
	q := riskmodel.Quality(win, &riskmodel.QualityOptions{MinObs: cfg.minObs})
	m := matchAssets(win, assets)
	for _, a := range m.noMeta {
		log.Warn("asset has returns but no metadata", "asset", a)
	}
	printSummary(stdout, asof, q, m)
	log.Info("done", "elapsed", time.Since(start).Round(time.Millisecond))
	return nil
}

// metaMatch compares the panel's assets with the metadata file's.
type metaMatch struct {
	meta    int      // assets in the metadata file
	noMeta  []string // assets with returns and no metadata
	noRets  int      // assets in the metadata file without a column in the panel
	sectors int      // distinct sectors of the panel's assets
}

func matchAssets(p *riskmodel.Panel, assets []riskmodel.AssetInfo) metaMatch {
	m := metaMatch{meta: len(assets)}
	sector := make(map[string]string, len(assets))
	for _, a := range assets {
		sector[a.Asset] = a.Sector
		if _, ok := p.Column(a.Asset); !ok {
			m.noRets++
		}
	}
	seen := make(map[string]bool)
	for _, a := range p.Assets() {
		s, ok := sector[a]
		if !ok {
			m.noMeta = append(m.noMeta, a)
			continue
		}
		if !seen[s] {
			seen[s] = true
			m.sectors++
		}
	}
	return m
}

// listMax bounds the examples printed under each count.
const listMax = 5

func printSummary(w io.Writer, asof riskmodel.Date, q *riskmodel.QualityReport, m metaMatch) {
	o := q.Options
	fmt.Fprintf(w, "Data quality as of %s: %d dates from %s to %s\n", asof, q.Dates, q.First, q.Last)
	fmt.Fprintf(w, "  assets          %d in %d sectors (metadata for %d; %d without metadata; %d in metadata without returns)\n",
		q.Assets, m.sectors, m.meta, len(m.noMeta), m.noRets)
	fmt.Fprintf(w, "  coverage        %.2f %% of %d date-asset cells observed\n", 100*q.Coverage, q.Dates*q.Assets)
	fmt.Fprintf(w, "  missing share   %.3f %% inside assets' lives (%d missing days)\n", 100*q.MissingShare, q.Gaps)
	fmt.Fprintf(w, "  listings        %d assets start after %s\n", len(q.Listings), q.First)
	fmt.Fprintf(w, "  delistings      %d assets end before %s\n", len(q.Delistings), q.Last)
	fmt.Fprintf(w, "  implausible     %d returns above %g\n", len(q.Implausible), o.ImplausibleLimit)
	for _, x := range q.Implausible[:min(listMax, len(q.Implausible))] {
		fmt.Fprintf(w, "                  %s %s %.4f\n", x.Asset, x.Date, x.Return)
	}
	fmt.Fprintf(w, "  outliers        %d returns beyond %g median absolute deviations (%d assets without spread)\n",
		len(q.Outliers), o.OutlierMADs, len(q.NoSpread))
	for _, x := range q.Outliers[:min(listMax, len(q.Outliers))] {
		fmt.Fprintf(w, "                  %s %s %.4f (%.1f MADs)\n", x.Asset, x.Date, x.Return, x.Score)
	}
	fmt.Fprintf(w, "  stale runs      %d runs of %d or more zero returns\n", len(q.StaleRuns), o.StaleRun)
	for _, x := range q.StaleRuns[:min(listMax, len(q.StaleRuns))] {
		fmt.Fprintf(w, "                  %s %s to %s (%d days)\n", x.Asset, x.First, x.Last, x.Length)
	}
	fmt.Fprintf(w, "  too few obs     %d assets with fewer than %d observations\n", len(q.Dropped), o.MinObs)
}

// oneLine keeps an error message on one line.
func oneLine(s string) string { return strings.Join(strings.Fields(s), " ") }
