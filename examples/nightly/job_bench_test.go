package main

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel"
)

// benchMarket writes a seeded wide returns CSV of t dates × n assets and its
// asset metadata into dir: a market factor, ten sector factors and Student-ish
// specific returns (a factor structure like the demo's, made in a second
// where the demo simulator takes minutes at n = 6000). Every cell is
// observed, so no asset is dropped.
func benchMarket(b *testing.B, dir string, t, n int) (returns, assets string) {
	b.Helper()
	rng := rand.New(rand.NewPCG(17, uint64(t*n)))
	const sectors = 10
	beta := make([]float64, n)
	vol := make([]float64, n)
	info := make([]riskmodel.AssetInfo, n)
	ids := make([]string, n)
	for j := range n {
		beta[j] = 0.6 + 0.8*rng.Float64()
		vol[j] = 0.01 + 0.02*rng.Float64()
		ids[j] = fmt.Sprintf("QB%05d", j)
		info[j] = riskmodel.AssetInfo{Asset: ids[j], Sector: fmt.Sprintf("S%02d", j%sectors), MarketCap: math.NaN()}
	}
	r := mat.NewDense(t, n, nil)
	dates := make([]riskmodel.Date, t)
	d := riskmodel.DateOf(2030, 1, 7)
	var sec [sectors]float64
	for i := range t {
		dates[i] = d
		d = d.AddDays(1)
		for d.Weekday() == time.Sunday || d.Weekday() == time.Saturday {
			d = d.AddDays(1)
		}
		m := 0.01 * rng.NormFloat64()
		for k := range sec {
			sec[k] = 0.006 * rng.NormFloat64()
		}
		row := r.RawRowView(i)
		for j := range row {
			row[j] = beta[j]*m + sec[j%sectors] + vol[j]*rng.NormFloat64()
		}
	}
	p, err := riskmodel.NewPanel(dates, ids, r, 0)
	if err != nil {
		b.Fatal(err)
	}
	returns, assets = filepath.Join(dir, "returns_wide.csv"), filepath.Join(dir, "assets.csv")
	if err := riskmodel.WriteReturnsCSVFile(returns, p, true); err != nil {
		b.Fatal(err)
	}
	if err := riskmodel.WriteAssetsFile(assets, info); err != nil {
		b.Fatal(err)
	}
	return returns, assets
}

// BenchmarkDenseJob runs the whole nightly job `-method ledoit-wolf -dense`
// on a wide CSV of 1000 dates × N assets, publishing into a fresh store each
// time: read, quality, build, validate, the dense CSV and the publication.
// N = 6000 is the dense target (testdata/programs/nightly_dense.sh times the
// same job as a process, with its peak memory, against the pandas +
// scikit-learn script). Only N = 500 runs with -short.
func BenchmarkDenseJob(b *testing.B) {
	for _, n := range []int{500, 3000, 6000} {
		if n > 500 && testing.Short() {
			continue
		}
		b.Run(fmt.Sprintf("N=%d", n), func(b *testing.B) {
			dir := b.TempDir()
			returns, assets := benchMarket(b, dir, 1000, n)
			b.ReportAllocs()
			k := 0
			for b.Loop() {
				k++
				store := filepath.Join(dir, fmt.Sprint("store", k))
				args := []string{"-returns", returns, "-assets", assets, "-method", "ledoit-wolf", "-window", "1000",
					"-dense", filepath.Join(dir, "dense.csv"), "-out", store}
				if code := run(args, io.Discard, io.Discard); code != exitOK {
					b.Fatalf("exit status %d", code)
				}
				b.StopTimer()
				if err := os.RemoveAll(store); err != nil {
					b.Fatal(err)
				}
				b.StartTimer()
			}
		})
	}
}
