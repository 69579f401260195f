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
