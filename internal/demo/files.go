package demo

import (
	"fmt"
	"path/filepath"

	"github.com/riskmodel/riskmodel"
)

// The small CSV version of the demo: the first SmallAssets columns over
// the first SmallDates rows (one year).
const (
	SmallAssets = 50
	SmallDates  = riskmodel.DailyPeriods
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
// SmallAssets columns over the first SmallDates rows, or fewer if the
// demo is smaller.
func (d *Market) Small() *riskmodel.Panel {
	t, n := d.Panel.Dims()
	cols := make([]int, min(n, SmallAssets))
	for j := range cols {
		cols[j] = j
	}
	return d.Panel.Rows(0, min(t, SmallDates)).Select(cols)
}

// WriteFiles writes the demo into the existing folder dir: the whole panel
// as long Parquet, returns.parquet (riskmodel.WriteReturnsParquetFile); the small panel as
// long and wide CSV, returns_small.csv and returns_small_wide.csv
// (riskmodel.WriteReturnsCSVFile); the asset metadata as assets.csv and assets.parquet
// (riskmodel.WriteAssetsFile); the holdings as benchmark.csv, benchmark.parquet, fund.csv
// and fund.parquet (riskmodel.WriteHoldingsFile). ReadReturns, ReadAssets and ReadHoldings
// give back exactly riskmodel.Panel, Small(), Assets, Benchmark and Fund. It returns
// the first error met, naming the file.
func (d *Market) WriteFiles(dir string) error {
	small := d.Small()
	steps := []func(path string) error{
		func(p string) error { return riskmodel.WriteReturnsParquetFile(p, d.Panel) },
		func(p string) error { return riskmodel.WriteReturnsCSVFile(p, small, false) },
		func(p string) error { return riskmodel.WriteReturnsCSVFile(p, small, true) },
		func(p string) error { return riskmodel.WriteAssetsFile(p, d.Assets) },
		func(p string) error { return riskmodel.WriteAssetsFile(p, d.Assets) },
		func(p string) error { return riskmodel.WriteHoldingsFile(p, d.Benchmark) },
		func(p string) error { return riskmodel.WriteHoldingsFile(p, d.Benchmark) },
		func(p string) error { return riskmodel.WriteHoldingsFile(p, d.Fund) },
		func(p string) error { return riskmodel.WriteHoldingsFile(p, d.Fund) },
	}
	for k, name := range demoFiles {
		path := filepath.Join(dir, name)
		if err := steps[k](path); err != nil {
			return fmt.Errorf("riskmodel: writing demo file %s: %w", path, err)
		}
	}
	return nil
}
