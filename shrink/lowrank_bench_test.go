package shrink

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/internal/dense"
)

// BenchmarkCapCondition: CapCondition(·, 1e6), what Build applies after the
// pairwise repair, on a positive semidefinite N×N matrix of rank
// r = 504 + N/5 (the rank a repaired pairwise estimate of 504 dates with
// 10 % of the assets gapped can have) with eigenvalues over four decades,
// by the low-rank route ("lowrank") and by the full eigendecomposition it
// took before ("full").
func BenchmarkCapCondition(b *testing.B) {
	for _, n := range []int{1500, 3000} {
		r := 504 + n/5
		g := dense.Gaussian(r, n, 3)
		w := make([]float64, r)
		for k := range w {
			w[k] = math.Pow(10, -4*float64(k)/float64(r))
		}
		a := dense.XtWX(nil, g, w)
		for _, route := range []string{"lowrank", "full"} {
			b.Run(fmt.Sprintf("N=%d/rank=%d/%s", n, r, route), func(b *testing.B) {
				b.ReportAllocs()
				forceFullEigen = route == "full"
				defer func() { forceFullEigen = false }()
				dst := mat.NewSymDense(n, nil)
				for b.Loop() {
					if _, rep, err := CapCondition(dst, a, 1e6); err != nil || rep.Changed == 0 {
						b.Fatal(err, rep.Changed)
					}
				}
			})
		}
	}
}
