package evaluate

import (
	"fmt"
	"sync"
	"testing"

	"github.com/riskmodel/riskmodel"
	"github.com/riskmodel/riskmodel/internal/demo"
)

var benchDemo = sync.OnceValues(func() (*demo.Market, error) { return demo.Generate(nil) })

// The demo market (500 assets) with monthly rebalancing and a one-year
// window: over four years (36 rebalance dates) and two years (12), with one
// estimator, three, and every estimator that needs no metadata plus the
// oracle. Run with -benchtime=1x: one evaluation of the full case takes
// minutes on two cores.
func BenchmarkEvaluateDemo(b *testing.B) {
	d, err := benchDemo()
	if err != nil {
		b.Fatal(err)
	}
	sets := map[string][]Estimator{
		"1":   methodsOf(riskmodel.MethodLedoitWolf),
		"3":   methodsOf(riskmodel.MethodLedoitWolf, riskmodel.MethodSingleIndex, riskmodel.MethodFactor),
		"all": nil,
	}
	for _, years := range []int{2, 4} {
		p := d.Panel.Rows(0, years*riskmodel.DailyPeriods)
		for _, set := range []string{"1", "3", "all"} {
			b.Run(fmt.Sprintf("years=%d/estimators=%s", years, set), func(b *testing.B) {
				b.ReportAllocs()
				opts := &Options{Methods: sets[set], Benchmark: d.Benchmark, Fund: d.Fund}
				if set == "all" {
					opts.Truth = TruthOf(d)
				}
				for b.Loop() {
					if _, err := Run(p, opts); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// One rebalance date of a simulated market of N assets (window 504, a test
// period of 21 dates, the demo's truth): the fit of each estimator, and the
// scoring of its forecast (every test portfolio and its measures) with and
// without the losses against the truth, so that the cost of scoring can be
// set against the cost of fitting. Run with -benchtime=1x at N = 3000.
func BenchmarkDate(b *testing.B) {
	for _, n := range []int{1000, 3000} {
		d, err := demo.Generate(&demo.Config{Seed: 2, Assets: n, Sectors: 20, Dates: 504 + 22})
		if err != nil {
			b.Fatal(err)
		}
		opts := &Options{Window: 504, Step: 21, Truth: TruthOf(d), Benchmark: d.Benchmark}
		o, err := resolve(d.Panel, opts)
		if err != nil {
			b.Fatal(err)
		}
		ev := &evaluator{p: d.Panel, o: o}
		r := 503
		asof := d.Panel.Date(r)
		for _, method := range []string{riskmodel.MethodLedoitWolf, riskmodel.MethodFactor} {
			bo := riskmodel.BuildOptions{Method: method, Seed: 1, Window: 504}
			var m *riskmodel.Model
			b.Run(fmt.Sprintf("N=%d/%s/fit", n, method), func(b *testing.B) {
				for b.Loop() {
					m, _, err = riskmodel.Build(d.Panel, asof, &bo)
					if err != nil {
						b.Fatal(err)
					}
				}
			})
			b.Run(fmt.Sprintf("N=%d/%s/score", n, method), func(b *testing.B) {
				m = fitted(b, d, asof, &bo, m)
				in := ev.inputs(0, r, m.Assets)
				sc := new(scratch)
				for b.Loop() {
					ev.score(&in, m, sc)
				}
			})
			b.Run(fmt.Sprintf("N=%d/%s/score+truth-loss", n, method), func(b *testing.B) {
				m = fitted(b, d, asof, &bo, m)
				in := ev.inputs(0, r, m.Assets)
				ev.truth(&in)
				sc := new(scratch)
				for b.Loop() {
					ev.score(&in, m, sc)
				}
			})
		}
	}
}

// fitted returns m, or the fit of bo when m is nil (its benchmark was
// filtered out).
func fitted(b *testing.B, d *demo.Market, asof riskmodel.Date, bo *riskmodel.BuildOptions, m *riskmodel.Model) *riskmodel.Model {
	if m != nil {
		return m
	}
	m, _, err := riskmodel.Build(d.Panel, asof, bo)
	if err != nil {
		b.Fatal(err)
	}
	return m
}

// BenchmarkFit fits each default estimator once on a window of 504 dates of
// a simulated market of N assets, the fits alone of one rebalance date of
// an evaluation (BenchmarkDate adds the scoring). Run with -benchtime=1x at
// N = 3000: an evaluation of 3000 assets over ten years at step 21 fits
// each of them 96 times.
func BenchmarkFit(b *testing.B) {
	for _, n := range []int{1000, 3000} {
		d, err := demo.Generate(&demo.Config{Seed: 2, Assets: n, Sectors: 20, Dates: 504})
		if err != nil {
			b.Fatal(err)
		}
		asof := d.Panel.Date(503)
		for _, method := range riskmodel.Methods {
			if method == riskmodel.MethodExposure || method == riskmodel.MethodHybrid {
				continue // not default estimators of an evaluation: they need metadata
			}
			bo := riskmodel.BuildOptions{Method: method, Seed: 1, Window: 504}
			b.Run(fmt.Sprintf("N=%d/%s", n, method), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, _, err := riskmodel.Build(d.Panel, asof, &bo); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
