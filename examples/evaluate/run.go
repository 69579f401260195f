package main

import (
	"fmt"
	"io"
	"math"
	"os"
	"runtime/pprof"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/demo"
	"github.com/riskmodel/riskmodel/internal/evaluate"

	"github.com/riskmodel/riskmodel"
)

// runEvaluation reads the inputs, runs the evaluation and writes the results.
func runEvaluation(cfg config, stdout, stderr io.Writer) error {
	var panel *riskmodel.Panel
	var simTruth func(*mat.SymDense, int) *mat.SymDense
	var err error
	if cfg.sim != "" {
		c, _ := simConfig(cfg.sim)
		d, err := demo.Generate(&c)
		if err != nil {
			return badInput{err}
		}
		panel, simTruth = d.Panel, d.TrueCovarianceTo
	} else if panel, err = riskmodel.ReadReturns(cfg.returns, nil); err != nil {
		return badInput{err}
	}
	opts := &evaluate.Options{
		Step: cfg.step, Window: cfg.window, RandomPortfolios: cfg.portfolios,
		TrackingNames: cfg.tracking, Seed: cfg.seed, Workers: cfg.workers,
	}
	if cfg.portfolios == 0 {
		opts.RandomPortfolios = -1
	}
	var sectors map[string]string
	var caps map[string]float64
	if cfg.assets != "" && cfg.assets != "none" {
		info, err := riskmodel.ReadAssets(cfg.assets)
		if err != nil {
			return badInput{err}
		}
		sectors, caps = make(map[string]string, len(info)), make(map[string]float64, len(info))
		for _, a := range info {
			sectors[a.Asset], caps[a.Asset] = a.Sector, a.MarketCap
		}
	}
	for _, m := range cfg.methods {
		if needsMetadata(m) && sectors == nil {
			return badInput{fmt.Errorf("-methods %s needs -assets with sector and market_cap columns", m)}
		}
		b, err := riskmodel.ParseVariant(m)
		if err != nil {
			return badInput{err}
		}
		b.Seed, b.Sectors, b.MarketCaps = cfg.seed, sectors, caps
		opts.Methods = append(opts.Methods, evaluate.Estimator{Name: m, Build: b})
	}
	if opts.Benchmark, err = readHoldings(cfg.benchmark); err != nil {
		return err
	}
	if opts.Fund, err = readHoldings(cfg.fund); err != nil {
		return err
	}
	if simTruth != nil && cfg.truth {
		opts.Truth = simTruth
	}
	if cfg.demo && cfg.truth {
		// The bundled files are demo.Generate(nil) written out; draw it again
		// for its truth, and use the truth only if the panel is the same.
		d, err := demo.Generate(nil)
		if err != nil {
			return err
		}
		if samePanel(d.Panel, panel) {
			opts.Truth = d.TrueCovarianceTo
		} else {
			fmt.Fprintln(stderr, "evaluate: the demo files differ from the demo generator; no truth")
		}
	}
	if onTerminal() {
		opts.Progress = func(done, total int) {
			fmt.Fprintf(stderr, "\revaluate: %d/%d rebalance dates", done, total)
			if done == total {
				fmt.Fprintln(stderr)
			}
		}
	}
	if cfg.cpuProfile != "" {
		f, err := os.Create(cfg.cpuProfile)
		if err != nil {
			return badInput{err}
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return err
		}
		defer pprof.StopCPUProfile()
	}
	ev, err := evaluate.Run(panel, opts)
	if err != nil {
		return badInput{err}
	}
	switch cfg.format {
	case "csv":
		err = ev.WriteCSV(stdout)
		// A CSV table has no room for prose: the caution goes to stderr.
		fmt.Fprintf(stderr, "evaluate: caution: %s\n", riskmodel.Caution)
	case "json":
		err = ev.WriteJSON(stdout)
	default:
		err = ev.WriteText(stdout)
	}
	if err != nil {
		return err
	}
	if cfg.chart != "" {
		f, err := os.Create(cfg.chart)
		if err != nil {
			return badInput{err}
		}
		if err := ev.WriteSVG(f); err != nil {
			f.Close()
			return err
		}
		if err := f.Close(); err != nil {
			return err
		}
	}
	if cfg.format == "text" {
		fmt.Fprintf(stdout, "Evaluated in %.1f s.\n", ev.Elapsed.Seconds())
	}
	return nil
}

// readHoldings reads a holdings file; "" and "none" mean none.
func readHoldings(path string) ([]riskmodel.Holding, error) {
	if path == "" || path == "none" {
		return nil, nil
	}
	h, err := riskmodel.ReadHoldings(path)
	if err != nil {
		return nil, badInput{err}
	}
	return h, nil
}

// samePanel reports whether two panels hold the same dates, assets and
// returns, bit for bit (NaN matching NaN).
func samePanel(a, b *riskmodel.Panel) bool {
	ta, na := a.Dims()
	tb, nb := b.Dims()
	if ta != tb || na != nb {
		return false
	}
	for i := 0; i < ta; i++ {
		if a.Date(i) != b.Date(i) {
			return false
		}
	}
	for j := 0; j < na; j++ {
		if a.Asset(j) != b.Asset(j) {
			return false
		}
	}
	for i := 0; i < ta; i++ {
		for j := 0; j < na; j++ {
			x, y := a.At(i, j), b.At(i, j)
			if math.Float64bits(x) != math.Float64bits(y) && !(math.IsNaN(x) && math.IsNaN(y)) {
				return false
			}
		}
	}
	return true
}

// onTerminal reports whether stderr is a terminal (a character device), so
// that progress is drawn only for a person watching.
func onTerminal() bool {
	fi, err := os.Stderr.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice != 0
}

// simConfig parses -sim: key=value pairs of the demo generator's
// configuration; the seed defaults to 1, every other field to the demo's.
func simConfig(spec string) (demo.Config, error) {
	c := demo.Config{Seed: 1}
	for _, kv := range strings.Split(spec, ",") {
		k, v, ok := strings.Cut(strings.TrimSpace(kv), "=")
		n, err := strconv.Atoi(v)
		if !ok || err != nil {
			return c, fmt.Errorf("-sim: %q is not key=integer", kv)
		}
		switch k {
		case "seed":
			c.Seed = uint64(n)
		case "assets":
			c.Assets = n
		case "sectors":
			c.Sectors = n
		case "dates":
			c.Dates = n
		case "stress-start":
			c.StressStart = n
		case "stress-length":
			c.StressLength = n
		default:
			return c, fmt.Errorf("-sim: unknown key %q (seed, assets, sectors, dates, stress-start, stress-length)", k)
		}
	}
	return c, nil
}
