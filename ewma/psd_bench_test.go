package ewma

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// unrepaired returns the pairwise correlation of x under weights of
// half-life 126 (the correlation step of Estimate) before its repair, and
// the sums it came from.
func unrepaired(x *mat.Dense) (*mat.SymDense, *sums) {
	t, n := x.Dims()
	w, _ := Weights(nil, t, 126)
	d, err := load(x, w, Options{})
	if err != nil {
		panic(err)
	}
	m := d.products(false, true)
	c := mat.NewSymDense(n, nil)
	if err := finishCov(c, m, Options{}, false, &Report{}); err != nil {
		panic(err)
	}
	if err := correlate(c, m); err != nil {
		panic(err)
	}
	return c, m
}

// BenchmarkRepair: the PSD repair of a pairwise correlation of T = 504
// dates in which 10 % of the assets have a gap (half late listings, half
// halts), by the route makePSD takes ("subspace") and by the eigen-
// decomposition of the whole matrix it took before ("full"), with gonum's
// EigenSym alone as the baseline of the latter.
func BenchmarkRepair(b *testing.B) {
	for _, n := range []int{1500, 3000} {
		const t = 504
		rng := rand.New(rand.NewPCG(21, uint64(n)))
		x := gappyPanel(rng, t, n, n/10)
		c, m := unrepaired(x)
		a := mat.NewSymDense(n, nil)
		b.Run(fmt.Sprintf("T=%d/N=%d/subspace", t, n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				a.CopySym(c)
				if makePSD(a, m) == nil {
					b.Fatal("no repair")
				}
			}
		})
		b.Run(fmt.Sprintf("T=%d/N=%d/full", t, n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				a.CopySym(c)
				var ch mat.Cholesky // the check the full route had
				if ch.Factorize(a) || makePSDFull(a) == nil {
					b.Fatal("no repair")
				}
			}
		})
		b.Run(fmt.Sprintf("T=%d/N=%d/gonum-eigensym", t, n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				var es mat.EigenSym
				if !es.Factorize(c, true) {
					b.Fatal("no decomposition")
				}
			}
		})
	}
}
