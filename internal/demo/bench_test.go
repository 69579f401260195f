package demo

import (
	"fmt"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func BenchmarkGenerate(b *testing.B) {
	for _, sz := range []struct{ assets, dates int }{{500, 1008}, {3000, 1000}} {
		b.Run(fmt.Sprintf("%dx%d", sz.assets, sz.dates), func(b *testing.B) {
			b.ReportAllocs()
			cfg := &Config{Seed: 1, Assets: sz.assets, Sectors: 10, Dates: sz.dates}
			for b.Loop() {
				if _, err := Generate(cfg); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkTrueCovariance(b *testing.B) {
	for _, n := range []int{500, 3000} {
		d, err := Generate(&Config{Seed: 1, Assets: n, Dates: 60})
		if err != nil {
			b.Fatal(err)
		}
		b.Run(fmt.Sprintf("%d/alloc", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				d.TrueCovarianceTo(nil, 30)
			}
		})
		b.Run(fmt.Sprintf("%d/reuse", n), func(b *testing.B) {
			b.ReportAllocs()
			dst := mat.NewSymDense(n, nil)
			for b.Loop() {
				d.TrueCovarianceTo(dst, 30)
			}
		})
	}
}
