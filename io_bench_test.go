package riskmodel

import (
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// benchPanel is a seeded T×N panel with about 5 % missing cells.
func benchPanel(b *testing.B, t, n int) *Panel {
	b.Helper()
	rng := rand.New(rand.NewPCG(1, uint64(t*n)))
	dates := make([]Date, t)
	for i := range dates {
		dates[i] = DateOf(2020, 1, 1).AddDays(i)
	}
	assets := make([]string, n)
	for j := range assets {
		assets[j] = fmt.Sprintf("QB%05d", j)
	}
	r := mat.NewDense(t, n, nil)
	for i := 0; i < t; i++ {
		for j := 0; j < n; j++ {
			v := 0.02 * rng.NormFloat64()
			if rng.IntN(20) == 0 {
				v = nan()
			}
			r.Set(i, j, v)
		}
	}
	p, err := NewPanel(dates, assets, r, 0)
	if err != nil {
		b.Fatal(err)
	}
	return p
}

func nan() float64 { var z float64; return z / z }

// BenchmarkReadReturns reads long Parquet and CSV files of T dates × N assets
// (the target is 1000 × 3000, 2.85 M rows here).
func BenchmarkReadReturns(b *testing.B) {
	for _, sz := range []struct{ t, n int }{{250, 500}, {1000, 3000}} {
		p := benchPanel(b, sz.t, sz.n)
		dir := b.TempDir()
		for _, format := range []string{"parquet", "csv"} {
			path := filepath.Join(dir, "r."+format)
			var err error
			if format == "parquet" {
				err = WriteReturnsParquetFile(path, p)
			} else {
				err = WriteReturnsCSVFile(path, p, false)
			}
			if err != nil {
				b.Fatal(err)
			}
			b.Run(fmt.Sprintf("%s/%dx%d", format, sz.t, sz.n), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, err := ReadReturns(path, nil); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

func BenchmarkWriteReturnsParquet(b *testing.B) {
	p := benchPanel(b, 1000, 3000)
	path := filepath.Join(b.TempDir(), "r.parquet")
	b.ReportAllocs()
	for b.Loop() {
		if err := WriteReturnsParquetFile(path, p); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkQuality(b *testing.B) {
	p := benchPanel(b, 1000, 3000)
	b.ReportAllocs()
	for b.Loop() {
		Quality(p, nil)
	}
}
