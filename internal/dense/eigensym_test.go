package dense

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestEigenSymMatchesGonum checks EigenSym, with the AVX2 rotations and
// with the Go loops, against gonum v0.17.0's mat.EigenSym (Factorize,
// Values, VectorsTo), bit for bit: random
// symmetric matrices, low-rank ones with a repeated zero eigenvalue, a
// diagonal one with ties, and matrices scaled near the ends of the float64
// range, where Dsyev and Dsteqr scale before iterating.
func TestEigenSymMatchesGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	random := func(n int) *mat.SymDense {
		a := mat.NewSymDense(n, nil)
		for i := 0; i < n; i++ {
			for j := i; j < n; j++ {
				a.SetSym(i, j, rng.NormFloat64())
			}
		}
		return a
	}
	lowRank := func(n, r int) *mat.SymDense {
		x := mat.NewDense(r, n, nil)
		for i := 0; i < r; i++ {
			for j := 0; j < n; j++ {
				x.Set(i, j, rng.NormFloat64())
			}
		}
		a := mat.NewSymDense(n, nil)
		a.SymOuterK(1, x.T())
		return a
	}
	scaled := func(a *mat.SymDense, f float64) *mat.SymDense {
		a.ScaleSym(f, a)
		return a
	}
	ties := mat.NewSymDense(40, nil)
	for i := 0; i < 40; i++ {
		ties.SetSym(i, i, float64(i%4))
	}
	cases := map[string]*mat.SymDense{
		"n=1":         random(1),
		"n=2":         random(2),
		"n=3":         random(3),
		"n=17":        random(17),
		"n=120":       random(120),
		"n=400":       random(400),
		"n=403":       random(403), // columns split over goroutines, with a tail
		"rank 30/200": lowRank(200, 30),
		"ties":        ties,
		"tiny":        scaled(random(60), 1e-160),
		"huge":        scaled(random(60), 1e160),
		"zero":        mat.NewSymDense(5, nil),
	}
	for name, a := range cases {
		t.Run(name, func(t *testing.T) {
			var want mat.EigenSym
			wantOK := want.Factorize(a, true)
			var got, portable EigenSym
			require.Equal(t, wantOK, got.Factorize(a, true))
			// The portable Go rotation loops (the -tags purego build, and
			// machines without AVX2) give the same result.
			withVecKernels(false, func() { require.Equal(t, wantOK, portable.Factorize(a, true)) })
			if wantOK {
				require.True(t, mat.Equal(got.vectors, portable.vectors))
				require.Equal(t, got.values, portable.values)
			}
			if !wantOK {
				return
			}
			wv, gv := want.Values(nil), got.Values(nil)
			for i := range wv {
				require.Equal(t, math.Float64bits(wv[i]), math.Float64bits(gv[i]), "value %d: %v against %v", i, gv[i], wv[i])
			}
			var wz, gz mat.Dense
			want.VectorsTo(&wz)
			got.VectorsTo(&gz)
			require.True(t, mat.Equal(&wz, &gz), "vectors differ: max |Δ| %g", maxAbsDiff(&wz, &gz))

			// Without vectors EigenSym is gonum's eigenvalue-only route
			// (Dsterf), whose values differ from the route with vectors in
			// the last bits. gonum v0.17.0's Dsterf panics on the "tiny"
			// matrix (a workspace length check in its Dlascl call), and so
			// does EigenSym there.
			var wo mat.EigenSym
			var vo EigenSym
			if name == "tiny" {
				require.Panics(t, func() { wo.Factorize(a, false) })
				require.Panics(t, func() { vo.Factorize(a, false) })
				return
			}
			require.True(t, wo.Factorize(a, false))
			require.True(t, vo.Factorize(a, false))
			require.Equal(t, wo.Values(nil), vo.Values(nil))
			require.Panics(t, func() { vo.VectorsTo(&mat.Dense{}) })
		})
	}
}

// BenchmarkEigenSym is the eigendecomposition with vectors of a random
// symmetric N×N matrix by gonum's mat.EigenSym and by EigenSym.
func BenchmarkEigenSym(b *testing.B) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{500, 1000} {
		a := mat.NewSymDense(n, nil)
		for i := 0; i < n; i++ {
			for j := i; j < n; j++ {
				a.SetSym(i, j, rng.NormFloat64())
			}
		}
		b.Run(fmt.Sprintf("N=%d/gonum", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				var e mat.EigenSym
				e.Factorize(a, true)
			}
		})
		b.Run(fmt.Sprintf("N=%d/ours", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				var e EigenSym
				e.Factorize(a, true)
			}
		})
	}
}
