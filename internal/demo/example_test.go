package demo_test

import (
	"fmt"
	"math"

	"github.com/riskmodel/riskmodel/internal/demo"
	"gonum.org/v1/gonum/mat"
)

// A small invented market for a stress test: score a forecast against the
// true covariance of the last date.
func ExampleGenerate() {
	d, err := demo.Generate(&demo.Config{Seed: 1, Assets: 100, Sectors: 5, Dates: 500})
	if err != nil {
		fmt.Println(err)
		return
	}
	t, n := d.Panel.Dims()
	fmt.Println(t, "dates,", n, "assets, from", d.Panel.Date(0))
	fmt.Println("factors:", d.FactorNames)

	truth := d.TrueCovarianceTo(nil, d.HoldingsRow)
	fund, _ := d.Weights(d.Fund)
	bench, _ := d.Weights(d.Benchmark)
	active := mat.NewVecDense(n, nil)
	active.SubVec(mat.NewVecDense(n, fund), mat.NewVecDense(n, bench))
	te := math.Sqrt(d.Panel.PeriodsPerYear() * mat.Inner(active, truth, active))
	fmt.Printf("fund tracking error %.4f a year\n", te)
	fmt.Printf("first asset %s in %s, true volatility %.4f a year\n",
		d.Assets[0].Asset, d.Assets[0].Sector, math.Sqrt(252*truth.At(0, 0)))
	// Output:
	// 500 dates, 100 assets, from 2030-01-07
	// factors: [market Orchards Foundries Harbours Looms Lanterns scale trend calm gearing]
	// fund tracking error 0.0300 a year
	// first asset QV0001 in Lanterns, true volatility 0.3672 a year
}
