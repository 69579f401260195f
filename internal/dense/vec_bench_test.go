package dense

import (
	"fmt"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// BenchmarkSymVec is the dense Σx of testdata/bench/run.sh (the reference
// is numpy's sigma @ x on the full 3000×3000 matrix): SymVec against
// gonum's blas64.Symv, on XᵀX + 10⁻⁴·I of benchSPD.
func BenchmarkSymVec(b *testing.B) {
	for _, n := range []int{1000, 3000, 6000} {
		a := benchSPD(n).RawSymmetric()
		x := make([]float64, n)
		for i := range x {
			x[i] = 1 / float64(n)
		}
		dst := make([]float64, n)
		b.Run(fmt.Sprintf("N=%d/SymVec", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				SymVec(dst, a, x)
			}
		})
		b.Run(fmt.Sprintf("N=%d/gonum-Symv", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				blas64.Symv(1, a, blas64.Vector{N: n, Inc: 1, Data: x}, 0, blas64.Vector{N: n, Inc: 1, Data: dst})
			}
		})
	}
}

// BenchmarkMulVecThin is the factor form's two passes over the N×K
// loadings, MulVecT and MulVecDiag, against gonum's blas64.Gemv.
func BenchmarkMulVecThin(b *testing.B) {
	const n, k = 3000, 20
	bm := benchMatrix(n, k)
	raw := bm.RawMatrix()
	x, z, y := make([]float64, n), make([]float64, k), make([]float64, n)
	for i := range x {
		x[i] = 1 / float64(n)
	}
	b.Run("MulVecT", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			MulVecT(z, raw, x)
		}
	})
	b.Run("gonum-GemvT", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			blas64.Gemv(blas.Trans, 1, raw, blas64.Vector{N: n, Inc: 1, Data: x}, 0, blas64.Vector{N: k, Inc: 1, Data: z})
		}
	})
	b.Run("MulVecDiag", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			MulVecDiag(y, raw, z, x, x)
		}
	})
	b.Run("gonum-GemvN", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			blas64.Gemv(blas.NoTrans, 1, raw, blas64.Vector{N: k, Inc: 1, Data: z}, 0, blas64.Vector{N: n, Inc: 1, Data: y})
		}
	})
}
