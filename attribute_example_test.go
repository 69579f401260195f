package riskmodel_test

import (
	"fmt"
	"log"

	"github.com/riskmodel/riskmodel"
)

// From the files to the analyst's numbers: the bundled demo market's
// returns, metadata and holdings in, a factor model built as the nightly
// job builds it (riskmodel.RecommendedVariant, specific variances shrunk
// within sectors, seed 1), and the fund's ex-ante tracking error against
// its benchmark, annualised, split into its factor and specific parts.
// This is the README's "Using it from Go"; it prints the attribution
// program's figures.
func ExampleAttribute() {
	p, err := riskmodel.ReadReturns("testdata/demo/returns.parquet", nil) // or .csv, long or wide
	if err != nil {
		log.Fatal(err)
	}
	assets, err := riskmodel.ReadAssets("testdata/demo/assets.csv")
	if err != nil {
		log.Fatal(err)
	}
	fund, err := riskmodel.ReadHoldings("testdata/demo/fund.csv")
	if err != nil {
		log.Fatal(err)
	}
	bench, err := riskmodel.ReadHoldings("testdata/demo/benchmark.csv")
	if err != nil {
		log.Fatal(err)
	}
	sectors := make(map[string]string, len(assets)) // groups for the specific-variance shrinkage
	for _, a := range assets {
		sectors[a.Asset] = a.Sector
	}
	t, _ := p.Dims()
	o, err := riskmodel.ParseVariant(riskmodel.RecommendedVariant) // the nightly's default model
	if err != nil {
		log.Fatal(err)
	}
	o.Seed, o.Factor.Groups = 1, sectors
	m, _, err := riskmodel.Build(p, p.Date(t-1), &o)
	if err != nil {
		log.Fatal(err)
	}
	v := riskmodel.Validate(m, nil) // finite, positive definite, condition, coverage
	a, err := riskmodel.Attribute(m, fund, bench, assets, nil)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("%s model as of %s, K = %d, positive definite %v\n", a.Method, a.AsOf, a.NumFactors, v.PositiveDefinite)
	fmt.Printf("tracking error %.4f %% a year: factor %.4f %%, specific %.4f %%\n", 100*a.TrackingError, 100*a.FactorPart, 100*a.SpecificPart)
	// Output:
	// factor model as of 2033-11-16, K = 18, positive definite true
	// tracking error 2.7259 % a year: factor 2.3061 %, specific 0.4198 %
}
