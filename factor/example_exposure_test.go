package factor_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
)

// exampleSectorMarket simulates 300 dates of 60 assets in three invented
// sectors with a market, sector returns and a size effect.
func exampleSectorMarket() (*mat.Dense, []string, []float64) {
	rng := rand.New(rand.NewPCG(5, 6))
	const t, n = 300, 60
	names := []string{"Kilns", "Ferries", "Mints"}
	sectors := make([]string, n)
	caps := make([]float64, n)
	size := make([]float64, n)
	for j := range sectors {
		sectors[j] = names[j%3]
		size[j] = rng.NormFloat64()
		caps[j] = math.Exp(8 + size[j])
	}
	x := mat.NewDense(t, n, nil)
	for i := 0; i < t; i++ {
		m, sz := 0.01*rng.NormFloat64(), 0.003*rng.NormFloat64()
		f := []float64{0.005 * rng.NormFloat64(), 0.005 * rng.NormFloat64(), 0.005 * rng.NormFloat64()}
		for j := 0; j < n; j++ {
			x.Set(i, j, m+f[j%3]+sz*size[j]+0.015*rng.NormFloat64())
		}
	}
	return x, sectors, caps
}

func ExampleFitExposure() {
	x, sectors, caps := exampleSectorMarket()
	x.Set(100, 4, math.NaN()) // a missing return: out of that date's regression
	m, reg, err := factor.FitExposure(x, factor.ExposureSettings{
		Sectors: sectors, StaticCaps: caps,
		VolatilityWindow: 21, MomentumWindow: 63, MomentumSkip: 5,
		Covariance:       ewma.Settings{VolHalfLife: 60, CorrHalfLife: 120},
		SpecificHalfLife: 60,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("factors:", m.FactorNames())
	fmt.Println("first date regressed:", reg.First)
	last := reg.Dates[len(reg.Dates)-1]
	fmt.Printf("last date: %d assets, R² %.4f, condition number %.4f\n", last.Assets, last.R2, last.Cond)
	fmt.Printf("t-statistic of the size return: %.4f\n", last.T[4])
	f := m.FactorCovarianceTo(nil)
	fmt.Printf("market volatility a year: %.4f\n", math.Sqrt(252*f.At(0, 0)))
	// Output:
	// factors: [market Ferries Kilns Mints size volatility momentum]
	// first date regressed: 63
	// last date: 60 assets, R² 0.1170, condition number 5.5855
	// t-statistic of the size return: 2.3087
	// market volatility a year: 0.2249
}

func ExampleFitHybrid() {
	x, sectors, caps := exampleSectorMarket()
	m, reg, err := factor.FitHybrid(x, factor.ExposureSettings{
		Sectors: sectors, StaticCaps: caps, VolatilityWindow: -1, MomentumWindow: -1,
		Covariance:       ewma.Settings{VolHalfLife: 60, CorrHalfLife: 120},
		SpecificHalfLife: 60,
	}, factor.HybridSettings{K: 2, Seed: 1})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("factors:", m.FactorNames())
	fmt.Println("method:", m.Info().Method)
	_, k := reg.FactorReturns.Dims()
	fmt.Printf("stat1 return on the last date: %.4f\n", reg.FactorReturns.At(299, k-2))
	// Output:
	// factors: [market Ferries Kilns Mints size stat1 stat2]
	// method: hybrid
	// stat1 return on the last date: 0.0089
}
