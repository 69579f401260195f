package riskmodel

import (
	"fmt"
	"path/filepath"
)

// The small CSV version of the demo: the first DemoSmallAssets columns over
// the first DemoSmallDates rows (one year).
const (
	DemoSmallAssets = 50
	DemoSmallDates  = DailyPeriods
)

// demoFiles are the files WriteFiles writes, in the order it writes them.
var demoFiles = []string{
	"returns.parquet",
	"returns_small.csv",
	"returns_small_wide.csv",
	"assets.csv",
	"assets.parquet",
	"benchmark.csv",
	"benchmark.parquet",
	"fund.csv",
	"fund.parquet",
}

// Small returns the panel of the small CSV version: the first
// DemoSmallAssets columns over the first DemoSmallDates rows, or fewer if the
// demo is smaller.
func (d *Demo) Small() *Panel {
	t, n := d.Panel.Dims()
	cols := make([]int, min(n, DemoSmallAssets))
	for j := range cols {
		cols[j] = j
	}
	return d.Panel.Rows(0, min(t, DemoSmallDates)).Select(cols)
}

// WriteFiles writes the demo into the existing folder dir: the whole panel
// as long Parquet, returns.parquet (WriteReturnsParquet); the small panel as
// long and wide CSV, returns_small.csv and returns_small_wide.csv
// (WriteReturnsCSV); the asset metadata as assets.csv and assets.parquet
// (WriteAssets); the holdings as benchmark.csv, benchmark.parquet, fund.csv
// and fund.parquet (WriteHoldings). ReadReturns, ReadAssets and ReadHoldings
// give back exactly Panel, Small(), Assets, Benchmark and Fund. It returns
// the first error met, naming the file.
func (d *Demo) WriteFiles(dir string) error {
	small := d.Small()
	steps := []func(path string) error{
		func(p string) error { return WriteReturnsParquet(p, d.Panel) },
		func(p string) error { return WriteReturnsCSV(p, small, false) },
		func(p string) error { return WriteReturnsCSV(p, small, true) },
		func(p string) error { return WriteAssets(p, d.Assets) },
		func(p string) error { return WriteAssets(p, d.Assets) },
		func(p string) error { return WriteHoldings(p, d.Benchmark) },
		func(p string) error { return WriteHoldings(p, d.Benchmark) },
		func(p string) error { return WriteHoldings(p, d.Fund) },
		func(p string) error { return WriteHoldings(p, d.Fund) },
	}
	for k, name := range demoFiles {
		path := filepath.Join(dir, name)
		if err := steps[k](path); err != nil {
			return fmt.Errorf("riskmodel: writing demo file %s: %w", path, err)
		}
	}
	return nil
}
