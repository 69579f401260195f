package factor_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/ewma"
	"github.com/riskmodel/riskmodel/factor"
)

// exampleReturns simulates 250 dates of 60 assets driven by two factors.
func exampleReturns() *mat.Dense {
	rng := rand.New(rand.NewPCG(1, 2))
	x := mat.NewDense(250, 60, nil)
	beta := make([]float64, 60)
	tilt := make([]float64, 60)
	for j := range beta {
		beta[j] = 1 + 0.3*rng.NormFloat64()
		tilt[j] = rng.NormFloat64()
	}
	for i := 0; i < 250; i++ {
		m, s := 0.01*rng.NormFloat64(), 0.006*rng.NormFloat64()
		for j := 0; j < 60; j++ {
			x.Set(i, j, beta[j]*m+tilt[j]*s+0.015*rng.NormFloat64())
		}
	}
	return x
}

func ExampleFit() {
	x := exampleReturns()
	x.Set(3, 7, math.NaN()) // a missing return
	m, err := factor.Fit(x, factor.Settings{
		Covariance:       ewma.Settings{VolHalfLife: 60, CorrHalfLife: 120},
		SpecificHalfLife: 60,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	info := m.Info()
	fmt.Println("factors:", m.NumFactors(), "-", info.Reason)
	fmt.Println("Ahn–Horenstein ER, GR:", info.Selection.AhnHorensteinER, info.Selection.AhnHorensteinGR)
	fmt.Println("imputation converged:", info.Imputation.Converged)
	w := make([]float64, 60)
	for i := range w {
		w[i] = 1.0 / 60
	}
	fmt.Printf("equal-weight volatility: %.4f\n", math.Sqrt(m.QuadForm(w)))
	// Output:
	// factors: 2 - bai-ng-icp2 choice over k = 0..20
	// Ahn–Horenstein ER, GR: 2 2
	// imputation converged: true
	// equal-weight volatility: 0.0096
}

func ExampleModel_SolveVecTo() {
	m, err := factor.Fit(exampleReturns(), factor.Settings{
		K:                2,
		Covariance:       ewma.Settings{VolHalfLife: 60, CorrHalfLife: 120},
		SpecificHalfLife: 60,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	// Minimum-variance weights w = Σ⁻¹1 / 1ᵀΣ⁻¹1 by the Woodbury identity.
	ones := make([]float64, 60)
	for i := range ones {
		ones[i] = 1
	}
	w := m.SolveVecTo(nil, ones)
	var sum float64
	for _, v := range w {
		sum += v
	}
	for i := range w {
		w[i] /= sum
	}
	fmt.Printf("minimum-variance volatility: %.4f\n", math.Sqrt(m.QuadForm(w)))
	g, s := m.SqrtTo(nil, nil)
	r, c := g.Dims()
	fmt.Printf("square-root form: %d×%d block and %d volatilities\n", r, c, len(s))
	// Output:
	// minimum-variance volatility: 0.0057
	// square-root form: 2×60 block and 60 volatilities
}

func ExampleNewModel() {
	b := mat.NewDense(3, 1, []float64{1, 0.8, 1.2})
	f := mat.NewSymDense(1, []float64{0.0001})
	m, err := factor.NewModel(b, f, []float64{0.0002, 0.0003, 0.0001}, factor.Info{Method: "given", FactorNames: []string{"market"}})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.FactorNames())
	fmt.Printf("Σx: %.4f\n", m.MulVecTo(nil, []float64{1, 0, 0}))
	// Output:
	// [market]
	// Σx: [0.0003 0.0001 0.0001]
}
