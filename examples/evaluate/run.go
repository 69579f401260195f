package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"runtime/debug"
	"runtime/pprof"
	"strconv"
	"strings"
	"time"

	"github.com/riskmodel/riskmodel/internal/demo"
	"github.com/riskmodel/riskmodel/internal/evaluate"
	"github.com/riskmodel/riskmodel/internal/sysmem"

	"github.com/riskmodel/riskmodel"
)

// runEvaluation runs the program's steps: with -merge, read the shards and
// merge them; otherwise read the inputs, set the options, check the memory,
// evaluate (all dates, or one shard written to -o); then write the results.
func runEvaluation(cfg config, stdout, stderr io.Writer) error {
	if cfg.merge != nil {
		ev, err := mergeShards(cfg.merge)
		if err != nil {
			return err
		}
		return writeResults(cfg, ev, stdout, stderr)
	}
	panel, truth, err := readInputs(cfg)
	if err != nil {
		return err
	}
	opts, err := evaluationOptions(cfg, panel, truth, stderr)
	if err != nil {
		return err
	}
	if err := checkMemory(panel, opts, max(cfg.shards, 1)); err != nil {
		return err
	}
	if !cfg.quiet && onTerminal() {
		opts.Progress = progress(stderr, time.Now())
	}
	stop, err := startProfile(cfg.cpuProfile)
	if err != nil {
		return err
	}
	defer stop()
	if cfg.shards > 0 {
		return runShard(cfg, panel, opts, stderr)
	}
	ev, err := evaluate.Run(panel, opts)
	if err != nil {
		return badInput{err}
	}
	return writeResults(cfg, ev, stdout, stderr)
}

// readInputs reads the returns, or simulates them with -sim; the truth is
// the simulation's (nil for files).
func readInputs(cfg config) (*riskmodel.Panel, *evaluate.Truth, error) {
	if cfg.sim != "" {
		c, _ := simConfig(cfg.sim)
		d, err := demo.Generate(&c)
		if err != nil {
			return nil, nil, badInput{err}
		}
		return d.Panel, evaluate.TruthOf(d), nil
	}
	panel, err := riskmodel.ReadReturns(cfg.returns, nil)
	if err != nil {
		return nil, nil, badInput{err}
	}
	return panel, nil, nil
}

// evaluationOptions turns the flags into the evaluation's options: the
// estimators with their metadata, the holdings and the truth.
func evaluationOptions(cfg config, panel *riskmodel.Panel, simTruth *evaluate.Truth, stderr io.Writer) (*evaluate.Options, error) {
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
			return nil, badInput{err}
		}
		sectors, caps = make(map[string]string, len(info)), make(map[string]float64, len(info))
		for _, a := range info {
			sectors[a.Asset], caps[a.Asset] = a.Sector, a.MarketCap
		}
	}
	for _, m := range cfg.methods {
		if needsMetadata(m) && sectors == nil {
			return nil, badInput{fmt.Errorf("-methods %s needs -assets with sector and market_cap columns", m)}
		}
		b, err := riskmodel.ParseVariant(m)
		if err != nil {
			return nil, badInput{err}
		}
		b.Seed, b.Sectors, b.MarketCaps = cfg.seed, sectors, caps
		opts.Methods = append(opts.Methods, evaluate.Estimator{Name: m, Build: b})
	}
	var err error
	if opts.Benchmark, err = readHoldings(cfg.benchmark); err != nil {
		return nil, err
	}
	if opts.Fund, err = readHoldings(cfg.fund); err != nil {
		return nil, err
	}
	if simTruth != nil && cfg.truth {
		opts.Truth = simTruth
	}
	if cfg.demo && cfg.truth {
		// The bundled files are demo.Generate(nil) written out; draw it again
		// for its truth, and use the truth only if the panel is the same.
		d, err := demo.Generate(nil)
		if err != nil {
			return nil, err
		}
		if samePanel(d.Panel, panel) {
			opts.Truth = evaluate.TruthOf(d)
		} else {
			fmt.Fprintln(stderr, "evaluate: the demo files differ from the demo generator; no truth")
		}
	}
	return opts, nil
}

// checkMemory refuses an evaluation (of one shard of n) whose memory
// estimate (evaluate.Memory) exceeds the memory available, with both
// figures in the error, and otherwise sets the estimate as the runtime's
// soft memory limit unless GOMEMLIMIT is set.
func checkMemory(panel *riskmodel.Panel, opts *evaluate.Options, n int) error {
	need, err := evaluate.Memory(panel, opts, n)
	if err != nil {
		return badInput{err}
	}
	if avail, ok := sysmem.Available(); ok && need > avail {
		return badInput{fmt.Errorf("the evaluation needs about %s of memory and %s is available; "+
			"use fewer -workers, fewer -portfolios, -shard i/n, or fewer assets", sysmem.Gigabytes(need), sysmem.Gigabytes(avail))}
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		// The estimate as the runtime's soft limit: the collector keeps the
		// heap near what is live instead of letting it double while the
		// N×N matrices of each date come and go.
		debug.SetMemoryLimit(need)
	}
	return nil
}

// progress returns the progress callback: rebalance dates done, the share
// and an estimate of the time left from the mean time per date so far.
func progress(stderr io.Writer, start time.Time) func(done, total int) {
	return func(done, total int) {
		el := time.Since(start)
		left := time.Duration(float64(el) / float64(done) * float64(total-done)).Round(time.Second)
		fmt.Fprintf(stderr, "\revaluate: %d/%d rebalance dates (%.0f %%), %s elapsed, about %s left   ",
			done, total, 100*float64(done)/float64(total), el.Round(time.Second), left)
		if done == total {
			fmt.Fprintln(stderr)
		}
	}
}

// startProfile starts a CPU profile to path ("" for none) and returns the
// function that stops it.
func startProfile(path string) (func(), error) {
	if path == "" {
		return func() {}, nil
	}
	f, err := os.Create(path)
	if err != nil {
		return nil, badInput{err}
	}
	if err := pprof.StartCPUProfile(f); err != nil {
		f.Close()
		return nil, err
	}
	return func() { pprof.StopCPUProfile(); f.Close() }, nil
}

// runShard evaluates shard cfg.shard of cfg.shards and writes it to cfg.out.
func runShard(cfg config, panel *riskmodel.Panel, opts *evaluate.Options, stderr io.Writer) error {
	sh, err := evaluate.RunShard(panel, opts, cfg.shard, cfg.shards)
	if err != nil {
		return badInput{err}
	}
	f, err := os.Create(cfg.out)
	if err != nil {
		return badInput{err}
	}
	if err := sh.Write(f); err != nil {
		f.Close()
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	first, end, total := sh.Dates()
	fmt.Fprintf(stderr, "evaluate: shard %d/%d: rebalance dates %d to %d of %d written to %s\n", cfg.shard, cfg.shards, first+1, end, total, cfg.out)
	return nil
}

// mergeShards reads the shard files and merges them.
func mergeShards(paths []string) (*evaluate.Result, error) {
	var shards []*evaluate.Shard
	for _, path := range paths {
		f, err := os.Open(path)
		if err != nil {
			return nil, badInput{err}
		}
		sh, err := evaluate.ReadShard(bufio.NewReader(f))
		f.Close()
		if err != nil {
			return nil, badInput{fmt.Errorf("%s: %w", path, err)}
		}
		shards = append(shards, sh)
	}
	ev, err := evaluate.Merge(shards...)
	if err != nil {
		return nil, badInput{err}
	}
	return ev, nil
}

// writeResults writes the table in the chosen format, the chart, and for
// text the costs.
func writeResults(cfg config, ev *evaluate.Result, stdout, stderr io.Writer) error {
	var err error
	switch cfg.format {
	case "csv":
		err = ev.WriteCSV(stdout)
		// A CSV table has no room for prose: the caution and the skipped
		// dates go to stderr.
		fmt.Fprintf(stderr, "evaluate: caution: %s\n", riskmodel.Caution)
		for _, d := range ev.Skipped {
			fmt.Fprintf(stderr, "evaluate: skipped rebalance date %s: %s\n", d.AsOf, d.Error)
		}
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
		c := ev.Costs
		fmt.Fprintf(stdout, "Costs, summed over the rebalance dates: fits %.1f s, scoring %.1f s, truth losses %.1f s.\n",
			c.Fits.Seconds(), c.Scoring.Seconds(), c.Truth.Seconds())
		if ev.Elapsed > 0 {
			fmt.Fprintf(stdout, "Evaluated in %.1f s.\n", ev.Elapsed.Seconds())
		}
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
		if n < 0 {
			return c, fmt.Errorf("-sim: %s must not be negative, got %d", k, n)
		}
	}
	if c.Assets > maxSimAssets || c.Dates > maxSimDates {
		return c, fmt.Errorf("-sim: at most assets=%d and dates=%d, got assets=%d, dates=%d", maxSimAssets, maxSimDates, c.Assets, c.Dates)
	}
	return c, nil
}
