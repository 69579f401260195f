package dense

import (
	"fmt"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// benchSPD returns the N×N positive definite matrix XᵀX + 10⁻⁴·I with X =
// benchMatrix(1000, n), the matrix testdata/bench_cholesky.py factors with
// numpy.
func benchSPD(n int) *mat.SymDense {
	a := XtWX(nil, benchMatrix(1000, n), nil)
	for i := 0; i < n; i++ {
		a.SetSym(i, i, a.At(i, i)+1e-4)
	}
	return a
}

// BenchmarkCholesky compares Cholesky.Factorize with gonum's single-core
// mat.Cholesky.Factorize, and times the solves for one and 100 right-hand
// sides. The factorization counts N³/3 flops.
func BenchmarkCholesky(b *testing.B) {
	for _, n := range []int{1000, 3000, 6000} {
		a := benchSPD(n)
		flops := float64(n) * float64(n) * float64(n) / 3
		b.Run(fmt.Sprintf("N=%d/factorize", n), func(b *testing.B) {
			b.ReportAllocs()
			var c Cholesky
			for b.Loop() {
				if !c.Factorize(a) {
					b.Fatal("not positive definite")
				}
			}
			reportFlops(b, flops)
		})
		b.Run(fmt.Sprintf("N=%d/gonum", n), func(b *testing.B) {
			b.ReportAllocs()
			var c mat.Cholesky
			for b.Loop() {
				if !c.Factorize(a) {
					b.Fatal("not positive definite")
				}
			}
			reportFlops(b, flops)
		})
		var c Cholesky
		c.Factorize(a)
		rhs := make([]float64, n)
		for i := range rhs {
			rhs[i] = 1
		}
		b.Run(fmt.Sprintf("N=%d/solve-vec", n), func(b *testing.B) {
			b.ReportAllocs()
			dst := make([]float64, n)
			for b.Loop() {
				c.SolveVecTo(dst, rhs)
			}
		})
		rhs100 := benchMatrix(n, 100)
		b.Run(fmt.Sprintf("N=%d/solve-100", n), func(b *testing.B) {
			b.ReportAllocs()
			dst := mat.NewDense(n, 100, nil)
			for b.Loop() {
				c.SolveTo(dst, rhs100)
			}
		})
	}
}

// BenchmarkInverse compares Cholesky.InverseTo (2N³/3 flops) with
// SolveTo of the identity (2N³) and gonum's single-core
// mat.Cholesky.InverseTo, from one factorization.
func BenchmarkInverse(b *testing.B) {
	for _, n := range []int{1000, 3000} {
		a := benchSPD(n)
		var c Cholesky
		if !c.Factorize(a) {
			b.Fatal("not positive definite")
		}
		b.Run(fmt.Sprintf("N=%d/inverse", n), func(b *testing.B) {
			b.ReportAllocs()
			dst := mat.NewSymDense(n, nil)
			for b.Loop() {
				c.InverseTo(dst)
			}
			reportFlops(b, 2*float64(n)*float64(n)*float64(n)/3)
		})
		b.Run(fmt.Sprintf("N=%d/solve-identity", n), func(b *testing.B) {
			b.ReportAllocs()
			id := mat.NewDiagDense(n, nil)
			for i := 0; i < n; i++ {
				id.SetDiag(i, 1)
			}
			dst := mat.NewDense(n, n, nil)
			for b.Loop() {
				c.SolveTo(dst, id)
			}
		})
		if n > 1000 {
			continue // gonum's single core takes minutes
		}
		var g mat.Cholesky
		g.Factorize(a)
		b.Run(fmt.Sprintf("N=%d/gonum", n), func(b *testing.B) {
			b.ReportAllocs()
			var dst mat.SymDense
			for b.Loop() {
				if err := g.InverseTo(&dst); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
