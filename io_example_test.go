package riskmodel_test

import (
	"fmt"
	"math"
	"os"
	"path/filepath"

	"github.com/riskmodel/riskmodel"
	"gonum.org/v1/gonum/mat"
)

func ExampleReadReturns() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "returns.csv")
	os.WriteFile(path, []byte("date,asset,return\n2031-03-03,QE1,0.01\n2031-03-03,QE2,NA\n2031-03-04,QE1,-0.02\n2031-03-04,QE2,0.005\n"), 0o644)
	p, err := riskmodel.ReadReturns(path, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	t, n := p.Dims()
	fmt.Println(t, "dates,", n, "assets,", p.PeriodsPerYear(), "periods a year")
	fmt.Printf("%.4f %.4f\n", p.At(1, 0), p.At(0, 1))

	os.WriteFile(path, []byte("date,asset,return\n2031-03-03,QE1,0.01\n2031-03-04,QE1,Inf\n"), 0o644)
	_, err = riskmodel.ReadReturns(path, nil)
	fmt.Println(err.(*riskmodel.FileError).Line, err.(*riskmodel.FileError).Value)
	// Output:
	// 2 dates, 2 assets, 252 periods a year
	// -0.0200 NaN
	// 3 Inf
}

func ExampleQuality() {
	nan := math.NaN()
	var dates []riskmodel.Date
	for i := 0; i < 6; i++ {
		dates = append(dates, riskmodel.DateOf(2031, 3, 3).AddDays(i))
	}
	r := mat.NewDense(6, 2, []float64{
		0.01, nan,
		0, 0.02,
		0, 1.40,
		0, -0.01,
		0, nan,
		0, 0.01,
	})
	p, _ := riskmodel.NewPanel(dates, []string{"QE1", "QE2"}, r, 0)
	q := riskmodel.Quality(p, nil)
	fmt.Printf("coverage %.4f, missing share %.4f, listings %d\n", q.Coverage, q.MissingShare, len(q.Listings))
	fmt.Printf("implausible %s %s %.4f\n", q.Implausible[0].Asset, q.Implausible[0].Date, q.Implausible[0].Return)
	fmt.Printf("stale run %s %d days\n", q.StaleRuns[0].Asset, q.StaleRuns[0].Length)
	// Output:
	// coverage 0.8333, missing share 0.0909, listings 1
	// implausible QE2 2031-03-05 1.4000
	// stale run QE1 5 days
}
