package riskmodel_test

import (
	"fmt"

	"github.com/riskmodel/riskmodel"
)

// Rank two shrinkage estimators and the sample covariance against the truth
// on a small simulated market with about as many assets as dates.
func ExampleEvaluate() {
	d, err := riskmodel.GenerateDemo(&riskmodel.DemoConfig{Seed: 3, Assets: 60, Sectors: 4, Dates: 80 + 21*4, Stationary: true})
	if err != nil {
		panic(err)
	}
	var methods []riskmodel.EvaluateMethod
	for _, m := range []string{riskmodel.MethodSample, riskmodel.MethodLedoitWolf, riskmodel.MethodSingleIndex} {
		methods = append(methods, riskmodel.EvaluateMethod{Build: riskmodel.BuildOptions{Method: m}})
	}
	ev, err := riskmodel.Evaluate(d.Panel, &riskmodel.EvaluateOptions{
		Window: 80, Methods: methods, Truth: d.TrueCovarianceTo, Benchmark: d.Benchmark, RandomPortfolios: 20,
	})
	if err != nil {
		panic(err)
	}
	for _, s := range ev.Scores {
		fmt.Printf("%d %-13s min-variance vol %.4f  PRIAL %.4f %%\n", s.Rank, s.Name, s.MinVariance.Realised.Value, s.FrobeniusPRIAL)
	}
	// Output:
	// 1 oracle        min-variance vol 0.1461  PRIAL 100.0000 %
	// 2 single-index  min-variance vol 0.1823  PRIAL 24.7470 %
	// 3 ledoit-wolf   min-variance vol 0.1839  PRIAL 24.7374 %
	// 4 sample        min-variance vol 0.3019  PRIAL 0.0000 %
}
