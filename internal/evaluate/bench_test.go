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
					opts.Truth = d.TrueCovarianceTo
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
