package evaluate_test

import (
	"fmt"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/demo"
	"github.com/riskmodel/riskmodel/internal/evaluate"
)

// Rank two shrinkage estimators and the sample covariance against the truth
// on a small simulated market with about as many assets as dates.
func ExampleRun() {
	d, err := demo.Generate(&demo.Config{Seed: 3, Assets: 60, Sectors: 4, Dates: 80 + 21*4, Stationary: true})
	if err != nil {
		panic(err)
	}
	var methods []evaluate.Estimator
	for _, m := range []string{riskmodel.MethodSample, riskmodel.MethodLedoitWolf, riskmodel.MethodSingleIndex} {
		methods = append(methods, evaluate.Estimator{Build: riskmodel.BuildOptions{Method: m}})
	}
	ev, err := evaluate.Run(d.Panel, &evaluate.Options{
		Window: 80, Methods: methods, Truth: evaluate.TruthOf(d), Benchmark: d.Benchmark, RandomPortfolios: 20,
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
