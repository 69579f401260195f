package te_test

import (
	"fmt"

	"github.com/riskmodel/riskmodel/te"
	"gonum.org/v1/gonum/mat"
)

// exampleModel is a tiny factor form Σ = B·F·Bᵀ + D with two factors (a
// market and a size factor) on four invented assets, in daily units.
type exampleModel struct {
	b *mat.Dense
	f *mat.SymDense
	d []float64
}

func newExampleModel() *exampleModel {
	return &exampleModel{
		b: mat.NewDense(4, 2, []float64{
			1.1, 0.8,
			0.9, 0.6,
			1.0, -0.5,
			1.2, -0.9,
		}),
		f: mat.NewSymDense(2, []float64{1.0e-4, -1e-5, -1e-5, 2.5e-5}),
		d: []float64{2.0e-4, 1.5e-4, 1.0e-4, 0.8e-4},
	}
}

func (m *exampleModel) Dims() (int, int)  { return 4, 4 }
func (m *exampleModel) T() mat.Matrix     { return m }
func (m *exampleModel) SymmetricDim() int { return 4 }
func (m *exampleModel) NumFactors() int   { return 2 }
func (m *exampleModel) At(i, j int) float64 {
	var bf mat.VecDense
	bf.MulVec(m.f, m.b.RowView(j))
	v := mat.Dot(m.b.RowView(i), &bf)
	if i == j {
		v += m.d[i]
	}
	return v
}
func (m *exampleModel) LoadingsTo(dst *mat.Dense) *mat.Dense {
	if dst == nil {
		dst = &mat.Dense{}
	}
	dst.CloneFrom(m.b)
	return dst
}
func (m *exampleModel) FactorCovarianceTo(dst *mat.SymDense) *mat.SymDense {
	if dst == nil {
		dst = mat.NewSymDense(2, nil)
	}
	dst.CopySym(m.f)
	return dst
}
func (m *exampleModel) SpecificVariancesTo(dst []float64) []float64 {
	return append(dst[:0], m.d...)
}

var (
	portfolio = []float64{0.40, 0.30, 0.20, 0.10}
	benchmark = []float64{0.25, 0.25, 0.25, 0.25}
)

func ExampleAnalyzer_Decompose() {
	an, err := te.NewAnalyzer(newExampleModel())
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := an.Decompose(portfolio, benchmark)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("TE %.4f%% per day, %.4f%% a year\n", 100*d.TE, 100*d.Annualized(252).TE)
	fmt.Printf("share of TE²: factor %.4f%%, specific %.4f%%\n",
		100*d.FactorVariance/(d.TE*d.TE), 100*d.SpecificVariance/(d.TE*d.TE))
	fmt.Printf("beta %.4f\n", d.Beta)
	for i := range d.Active {
		fmt.Printf("asset %d: active %+.4f contribution %.4f%% (%.4f%% of TE)\n",
			i, d.Active[i], 100*d.Contribution[i], d.Percent[i])
	}
	for k, f := range d.Factors {
		fmt.Printf("factor %d: exposure %+.4f × vol %.4f × corr %+.4f = %.4f%%\n",
			k, f.Exposure, f.Volatility, f.Correlation, 100*f.Contribution)
	}
	fmt.Printf("specific: %.4f%%\n", 100*d.Specific.Contribution)
	// Output:
	// TE 0.3081% per day, 4.8907% a year
	// share of TE²: factor 27.0400%, specific 72.9600%
	// beta 0.9984
	// asset 0: active +0.1500 contribution 0.1497% (48.5961% of TE)
	// asset 1: active +0.0500 contribution 0.0125% (4.0457% of TE)
	// asset 2: active -0.0500 contribution 0.0228% (7.4145% of TE)
	// asset 3: active -0.1500 contribution 0.1231% (39.9436% of TE)
	// factor 0: exposure -0.0200 × vol 0.0100 × corr -0.1655 = 0.0033%
	// factor 1: exposure +0.3100 × vol 0.0050 × corr +0.5161 = 0.0800%
	// specific: 0.2248%
}

func ExampleDecomposition_Groups() {
	an, _ := te.NewAnalyzer(newExampleModel())
	d, _ := an.Decompose(portfolio, benchmark)
	size := []string{"large", "large", "small", "small"}
	for _, g := range d.Groups(size) {
		fmt.Printf("%s: active %+.4f contribution %.4f%% = vol %.4f%% × corr %+.4f; factor %.4f%% specific %.4f%%\n",
			g.Label, g.ActiveWeight, 100*g.Contribution, 100*g.Volatility, g.Correlation,
			100*g.Factor, 100*g.Specific)
	}
	// Output:
	// large: active +0.2000 contribution 0.1622% = vol 0.3036% × corr +0.5342; factor 0.0039% specific 0.1582%
	// small: active -0.2000 contribution 0.1459% = vol 0.2952% × corr +0.4942; factor 0.0794% specific 0.0665%
}

func ExampleDecomposition_HotSpots() {
	an, _ := te.NewAnalyzer(newExampleModel())
	d, _ := an.Decompose(portfolio, benchmark)
	for _, i := range d.HotSpots(2) {
		fmt.Printf("asset %d contributes %.4f%%; trading %+.4f alone would take TE to %.4f%%\n",
			i, 100*d.Contribution[i], d.Hedge[i], 100*d.HedgedTE[i])
	}
	best, after := d.BestHedge()
	fmt.Printf("best hedge: asset %d, TE %.4f%% -> %.4f%%\n", best, 100*d.TE, 100*after)
	// Output:
	// asset 0 contributes 0.1497%; trading -0.0963 alone would take TE to 0.2556%
	// asset 3 contributes 0.1231%; trading +0.0951 alone would take TE to 0.2662%
	// best hedge: asset 0, TE 0.3081% -> 0.2556%
}

func ExampleAnalyzer_TrackingError() {
	// A dense covariance works too, without the factor split.
	s := mat.NewSymDense(2, []float64{0.04, 0.02, 0.02, 0.09})
	an, _ := te.NewAnalyzer(s)
	v, _ := an.TrackingError([]float64{0.6, 0.4}, []float64{0.5, 0.5})
	fmt.Printf("%.4f\n", v)
	// Output:
	// 0.0300
}

func ExampleBand_Check() {
	mandate := te.Band{Lower: 0.01, Upper: 0.03} // annual TE between 1 % and 3 %
	for _, v := range []float64{0.005, 0.02, 0.035} {
		c, _ := mandate.Check(v)
		fmt.Printf("TE %.4f: %s, breach %.4f\n", v, c.Status, c.Breach)
	}
	// Output:
	// TE 0.0050: below lower limit, breach 0.0050
	// TE 0.0200: within, breach 0.0000
	// TE 0.0350: above upper limit, breach 0.0050
}

func ExampleRealized() {
	active := []float64{0.001, -0.002, 0.0005, 0.0015, -0.001, 0.0002}
	e, _ := te.Realized(active, nil)
	fmt.Printf("ex-post TE %.4f%% per day, %.4f%% a year; ratio to a 0.12%% forecast %.4f\n",
		100*e.TE, 100*te.Annualize(e.TE, 252), e.Ratio(0.0012))
	// Output:
	// ex-post TE 0.1306% per day, 2.0738% a year; ratio to a 0.12% forecast 1.0887
}

func ExampleAlign() {
	model := []string{"QX01", "QX02", "QX03"}
	port := map[string]float64{"QX01": 0.7, "QX03": 0.2, "NEW9": 0.1}
	bench := map[string]float64{"QX01": 0.5, "QX02": 0.5}
	if _, err := te.Align(model, port, bench, nil); err != nil {
		fmt.Println(err)
	}
	al, _ := te.Align(model, port, bench, &te.AlignOptions{UncoveredAsCash: true})
	fmt.Printf("portfolio %.4f benchmark %.4f cash %v %.4f\n", al.Portfolio, al.Benchmark, al.Cash, al.CashPortfolio)
	// Output:
	// te: asset not covered by the model: 1 asset(s): NEW9
	// portfolio [0.7000 0.0000 0.2000] benchmark [0.5000 0.5000 0.0000] cash [NEW9] 0.1000
}

func ExampleAnnualize() {
	fmt.Printf("%.4f\n", te.Annualize(0.01, 252))
	// Output:
	// 0.1587
}
