package ewma_test

import (
	"fmt"
	"math"

	"github.com/riskmodel/riskmodel/ewma"
	"gonum.org/v1/gonum/mat"
)

// returns is an invented market of three assets over eight days; NaN marks
// a day the second asset did not trade.
func returns() *mat.Dense {
	nan := math.NaN()
	return mat.NewDense(8, 3, []float64{
		0.010, 0.012, -0.004,
		-0.006, -0.004, 0.002,
		0.004, nan, 0.001,
		0.012, 0.009, -0.006,
		-0.010, -0.011, 0.005,
		0.003, 0.004, 0.000,
		-0.002, -0.001, 0.003,
		0.007, 0.006, -0.002,
	})
}

func ExampleHalfLife() {
	// The daily and monthly decays published by J.P. Morgan/Reuters (1996).
	fmt.Printf("%.4f %.4f %.4f\n", ewma.HalfLife(0.94), ewma.HalfLife(0.97), ewma.Decay(11.2))
	// Output: 11.2023 22.7566 0.9400
}

func ExampleWeights() {
	w, _ := ewma.Weights(nil, 4, 2)
	fmt.Printf("%.4f n_eff %.4f\n", w, ewma.EffectiveObs(w))
	// Output: [0.1381 0.1953 0.2761 0.3905] n_eff 3.4971
}

func ExampleDecayWeights() {
	w, _ := ewma.DecayWeights(nil, 3, 0.5)
	fmt.Printf("%.4f\n", w)
	// Output: [0.1429 0.2857 0.5714]
}

func ExampleRecursionWeights() {
	w, _ := ewma.RecursionWeights(nil, 3, 0.5)
	fmt.Printf("%.4f\n", w)
	// Output: [0.2500 0.2500 0.5000]
}

func ExampleMeans() {
	w, _ := ewma.Weights(nil, 8, 4)
	mu, _ := ewma.Means(nil, returns(), w, nil)
	fmt.Printf("%.4f\n", mu)
	// Output: [0.0021 0.0019 0.0001]
}

func ExampleVariances() {
	w, _ := ewma.Weights(nil, 8, 4)
	v, _ := ewma.Variances(nil, returns(), w, nil)
	for _, x := range v {
		fmt.Printf("%.4f%% ", 100*math.Sqrt(x))
	}
	fmt.Println()
	// Output: 0.7126% 0.6978% 0.3290%
}

func ExampleCovariance() {
	w, _ := ewma.Weights(nil, 8, 4)
	var c mat.SymDense
	_, rep, _ := ewma.Covariance(&c, returns(), w, &ewma.Options{Demean: true})
	var scaled mat.SymDense
	scaled.ScaleSym(1e4, &c) // in units of 10⁻⁴
	fmt.Printf("%.4f\n", mat.Formatted(&scaled, mat.Squeeze()))
	fmt.Printf("n_eff %.4f, missing %d, checked %v\n", rep.EffectiveObs, rep.Missing, rep.Checked)
	if rep.Repair != nil {
		// The gap in asset 1 left a pairwise matrix with a negative eigenvalue.
		fmt.Printf("repaired: min eigenvalue %.4f ×10⁻⁴, %d clipped\n", 1e4*rep.Repair.MinEigenvalue, rep.Repair.Clipped)
	}
	// Output:
	// ⎡ 0.4626   0.4568  -0.2120⎤
	// ⎢ 0.4568   0.4514  -0.2109⎥
	// ⎣-0.2120  -0.2109   0.1082⎦
	// n_eff 6.9423, missing 1, checked true
	// repaired: min eigenvalue -0.0091 ×10⁻⁴, 1 clipped
}

func ExampleCorrelation() {
	w, _ := ewma.Weights(nil, 8, 4)
	var c mat.SymDense
	_, _, _ = ewma.Correlation(&c, returns(), w, nil)
	fmt.Printf("%.4f %.4f %.4f\n", c.At(0, 1), c.At(0, 2), c.At(1, 2))
	// Output: 0.9782 -0.8979 -0.8879
}

func ExampleNeweyWest() {
	var c mat.SymDense
	_, rep, _ := ewma.NeweyWest(&c, returns(), nil, ewma.AutoLags, nil)
	fmt.Printf("lags %d, variance of the first asset %.4f (×10⁴)\n", rep.NeweyWestLags, 1e4*c.At(0, 0))
	// Output: lags 2, variance of the first asset 0.2333 (×10⁴)
}

func ExampleEstimate() {
	var sigma mat.SymDense
	_, rep, err := ewma.Estimate(&sigma, returns(), ewma.Settings{VolHalfLife: 3, CorrHalfLife: 6})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("vol %.4f%%, corr(0,1) %.4f, n_eff vol %.4f corr %.4f\n",
		100*math.Sqrt(sigma.At(0, 0)), sigma.At(0, 1)/math.Sqrt(sigma.At(0, 0)*sigma.At(1, 1)),
		rep.VolEffectiveObs, rep.EffectiveObs)
	// Output: vol 0.6978%, corr(0,1) 0.9774, n_eff vol 6.3286 corr 7.4837
}

func ExampleRecursive() {
	x := returns()
	r, _ := ewma.NewRecursive(3, ewma.RecursiveSettings{HalfLife: 4, Window: 5})
	for day := 0; day < 8; day++ {
		_ = r.Update(x.RawRowView(day))
	}
	// The nightly job saves the state and the next run loads it.
	blob, _ := r.MarshalBinary()
	var next ewma.Recursive
	_ = next.UnmarshalBinary(blob)
	_ = next.Update([]float64{0.001, 0.002, -0.001})
	v, _ := next.VariancesTo(nil)
	fmt.Printf("days %d, window %d, vol %.4f%%\n", next.Days(), next.Len(), 100*math.Sqrt(v[0]))
	// Output: days 9, window 5, vol 0.5250%
}
