package shrink_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/shrink"
)

// demoReturns is an invented market: t daily returns of n assets driven by
// one common factor, from a fixed seed.
func demoReturns(t, n int) *mat.Dense {
	rng := rand.New(rand.NewPCG(1, 2))
	x := mat.NewDense(t, n, nil)
	for i := 0; i < t; i++ {
		f := rng.NormFloat64()
		for j := 0; j < n; j++ {
			beta := 0.6 + 0.8*float64(j)/float64(n)
			x.Set(i, j, 0.01*(beta*f+rng.NormFloat64()))
		}
	}
	return x
}

// annualVol prints the annualised volatility of asset i (252 periods a
// year, common practice).
func annualVol(c mat.Symmetric, i int) float64 { return math.Sqrt(252 * c.At(i, i)) }

func ExampleLedoitWolf() {
	x := demoReturns(60, 8)
	cov, res, err := shrink.LedoitWolf(nil, x, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("intensity %.4f, vol of asset 0 %.4f\n", res.Intensity, annualVol(cov, 0))
	// Output:
	// intensity 0.0820, vol of asset 0 0.1849
}

func ExampleLedoitWolfIntensity() {
	res, err := shrink.LedoitWolfIntensity(demoReturns(60, 8), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("intensity %.4f, mu %.4f (×1e4)\n", res.Intensity, 1e4*res.Mu)
	// Output:
	// intensity 0.0820, mu 1.8516 (×1e4)
}

func ExampleLedoitWolfImplicit() {
	// More assets than dates: the estimate stays implicit and Σx costs O(N·T).
	x := demoReturns(30, 200)
	cov, res, err := shrink.LedoitWolfImplicit(x, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	w := make([]float64, 200)
	for i := range w {
		w[i] = 1.0 / 200
	}
	fmt.Printf("intensity %.4f, equal-weight vol %.4f\n", res.Intensity, math.Sqrt(252*cov.QuadForm(w)))
	// Output:
	// intensity 0.1883, equal-weight vol 0.1258
}

func ExampleOAS() {
	cov, res, err := shrink.OAS(nil, demoReturns(60, 8), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("intensity %.4f, vol of asset 0 %.4f\n", res.Intensity, annualVol(cov, 0))
	// Output:
	// intensity 0.0946, vol of asset 0 0.1853
}

func ExampleOASIntensity() {
	res, err := shrink.OASIntensity(demoReturns(60, 8), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("intensity %.4f\n", res.Intensity)
	// Output:
	// intensity 0.0946
}

func ExampleOASImplicit() {
	cov, res, err := shrink.OASImplicit(demoReturns(30, 200), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("intensity %.4f, vol of asset 0 %.4f\n", res.Intensity, annualVol(cov, 0))
	// Output:
	// intensity 0.1705, vol of asset 0 0.1869
}

func ExampleConstantCorrelation() {
	cov, res, err := shrink.ConstantCorrelation(nil, demoReturns(60, 8), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("intensity %.4f, mean correlation %.4f, vol of asset 0 %.4f\n", res.Intensity, res.MeanCorr, annualVol(cov, 0))
	// Output:
	// intensity 0.9895, mean correlation 0.4893, vol of asset 0 0.1818
}

func ExampleSingleIndex() {
	// Exponential weights with a half-life of 30 days.
	x := demoReturns(60, 8)
	w := make([]float64, 60)
	for i := range w {
		w[i] = math.Pow(0.5, float64(59-i)/30)
	}
	_, res, err := shrink.SingleIndex(nil, x, w)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("intensity %.4f, beta of asset 7 %.4f\n", res.Intensity, res.Beta[7])
	// Output:
	// intensity 0.4411, beta of asset 7 1.4248
}

func ExampleSchaferStrimmer() {
	_, res, err := shrink.SchaferStrimmer(nil, demoReturns(60, 8), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("lambda %.4f, lambda.var %.4f\n", res.Lambda, res.LambdaVar)
	// Output:
	// lambda 0.0715, lambda.var 0.6272
}

func ExampleNonlinear() {
	cov, res, err := shrink.Nonlinear(nil, demoReturns(40, 60), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("condition %.4f, vol of asset 0 %.4f\n", res.Condition, annualVol(cov, 0))
	// Output:
	// condition 45.4763, vol of asset 0 0.1748
}

func ExampleClipMarchenkoPastur() {
	_, res, err := shrink.ClipMarchenkoPastur(nil, demoReturns(252, 10), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("edge %.4f, signal eigenvalues %d, noise mean %.4f\n", res.Edge, res.Signal, res.NoiseMean)
	// Output:
	// edge 1.4381, signal eigenvalues 1, noise mean 0.5517
}

func ExampleMarchenkoPasturEdge() {
	fmt.Printf("%.4f\n", shrink.MarchenkoPasturEdge(10, 252))
	// Output:
	// 1.4381
}

func ExampleNearestCorrelation() {
	// Higham (2002), section 4.
	a := mat.NewSymDense(3, []float64{1, 1, 0, 1, 1, 1, 0, 1, 1})
	c, _, err := shrink.NearestCorrelation(nil, a, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f %.4f %.4f\n", c.At(0, 1), c.At(1, 2), c.At(0, 2))
	// Output:
	// 0.7607 0.7607 0.1573
}

func ExampleNearestPSD() {
	// An inconsistent correlation-like matrix: one negative eigenvalue.
	a := mat.NewSymDense(3, []float64{1, 0.9, -0.6, 0.9, 1, 0.9, -0.6, 0.9, 1})
	_, rep, err := shrink.NearestPSD(nil, a, 0)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("changed %d, min eigenvalue %.4f -> %.4f, change %.4f\n", rep.Changed, rep.MinBefore, rep.MinAfter, rep.Norm)
	// Output:
	// changed 1, min eigenvalue -0.6077 -> 0.0000, change 0.6077
}

func ExampleCapCondition() {
	a := mat.NewSymDense(2, []float64{1, 0.999, 0.999, 1})
	c, rep, err := shrink.CapCondition(nil, a, 100)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("condition %.4f -> %.4f, off-diagonal %.4f\n", rep.CondBefore, rep.CondAfter, c.At(0, 1))
	// Output:
	// condition 1999.0000 -> 100.0000, off-diagonal 0.9895
}

func ExampleCondition() {
	k, err := shrink.Condition(mat.NewSymDense(2, []float64{2, 0, 0, 0.5}))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f\n", k)
	// Output:
	// 4.0000
}
