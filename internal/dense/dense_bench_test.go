package dense

import (
	"fmt"
	"runtime"
	"sync"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// benchSizes are T×N: dates × assets.
var benchSizes = []struct{ t, n int }{{250, 500}, {500, 1000}, {1000, 3000}}

// benchMatrix returns the T×N matrix that testdata/bench_numpy.py builds
// too, x_tj = 0.01·(((7919t + 104729j) mod 10007)/10007 − 0.5), so that the
// reference timings multiply the same numbers.
func benchMatrix(t, n int) *mat.Dense {
	x := mat.NewDense(t, n, nil)
	for i := 0; i < t; i++ {
		row := x.RawRowView(i)
		for j := range row {
			row[j] = 0.01 * (float64((i*7919+j*104729)%10007)/10007 - 0.5)
		}
	}
	return x
}

// reportFlops reports GFLOP/s counting flops flops per operation.
func reportFlops(b *testing.B, flops float64) {
	b.ReportMetric(flops*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
}

// BenchmarkXtX compares the kernels of this package with gonum on XᵀX. The
// symmetric product counts N²·T flops (half of the 2·N²·T of a general
// product); Dense.Mul is charged the same flops for the same result.
func BenchmarkXtX(b *testing.B) {
	for _, sz := range benchSizes {
		x := benchMatrix(sz.t, sz.n)
		flops := float64(sz.n) * float64(sz.n) * float64(sz.t)
		raw := x.RawMatrix()
		for _, k := range kernels() {
			b.Run(fmt.Sprintf("%dx%d/%s", sz.t, sz.n, k.name), func(b *testing.B) {
				b.ReportAllocs()
				dst := mat.NewSymDense(sz.n, nil)
				p := &operand{data: raw.Data, stride: raw.Stride}
				for b.Loop() {
					out := dst.RawSymmetric()
					product(out.Data, out.Stride, sz.n, sz.n, sz.t, p, p, true, k)
				}
				reportFlops(b, flops)
			})
		}
		b.Run(fmt.Sprintf("%dx%d/XtWX-alloc", sz.t, sz.n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				XtWX(nil, x, nil)
			}
			reportFlops(b, flops)
		})
		b.Run(fmt.Sprintf("%dx%d/gonum-Syrk", sz.t, sz.n), func(b *testing.B) {
			b.ReportAllocs()
			c := blas64.Symmetric{N: sz.n, Stride: sz.n, Data: make([]float64, sz.n*sz.n), Uplo: blas.Upper}
			for b.Loop() {
				blas64.Syrk(blas.Trans, 1, raw, 0, c)
			}
			reportFlops(b, flops)
		})
		b.Run(fmt.Sprintf("%dx%d/gonum-Mul", sz.t, sz.n), func(b *testing.B) {
			b.ReportAllocs()
			c := mat.NewDense(sz.n, sz.n, nil)
			for b.Loop() {
				c.Mul(x.T(), x)
			}
			reportFlops(b, flops)
		})
	}
}

// BenchmarkXWXt times the T×T Gram matrix, T²·N flops.
func BenchmarkXWXt(b *testing.B) {
	for _, sz := range benchSizes {
		x := benchMatrix(sz.t, sz.n)
		flops := float64(sz.t) * float64(sz.t) * float64(sz.n)
		raw := x.RawMatrix()
		for _, k := range kernels() {
			b.Run(fmt.Sprintf("%dx%d/%s", sz.t, sz.n, k.name), func(b *testing.B) {
				b.ReportAllocs()
				dst := mat.NewSymDense(sz.t, nil)
				p := &operand{data: raw.Data, stride: raw.Stride, trans: true}
				for b.Loop() {
					out := dst.RawSymmetric()
					product(out.Data, out.Stride, sz.t, sz.t, sz.n, p, p, true, k)
				}
				reportFlops(b, flops)
			})
		}
		b.Run(fmt.Sprintf("%dx%d/gonum-Syrk", sz.t, sz.n), func(b *testing.B) {
			b.ReportAllocs()
			c := blas64.Symmetric{N: sz.t, Stride: sz.t, Data: make([]float64, sz.t*sz.t), Uplo: blas.Upper}
			for b.Loop() {
				blas64.Syrk(blas.NoTrans, 1, raw, 0, c)
			}
			reportFlops(b, flops)
		})
	}
}

// BenchmarkXtWXWeighted includes the weights, applied while packing.
func BenchmarkXtWXWeighted(b *testing.B) {
	for _, sz := range benchSizes {
		x := benchMatrix(sz.t, sz.n)
		w := make([]float64, sz.t)
		for i := range w {
			w[i] = 1 / float64(i+1)
		}
		flops := float64(sz.n) * float64(sz.n) * float64(sz.t)
		b.Run(fmt.Sprintf("%dx%d/reuse", sz.t, sz.n), func(b *testing.B) {
			b.ReportAllocs()
			dst := mat.NewSymDense(sz.n, nil)
			for b.Loop() {
				XtWX(dst, x, w)
			}
			reportFlops(b, flops)
		})
	}
}

// BenchmarkPeak measures what a tight loop of independent fused
// multiply-adds reaches on all GOMAXPROCS cores: the ceiling for any kernel.
func BenchmarkPeak(b *testing.B) {
	loops := peakLoops()
	for _, name := range []string{"avx2", "avx512"} {
		loop, ok := loops[name]
		if !ok {
			continue
		}
		perIter := map[string]float64{"avx2": 96, "avx512": 192}[name]
		b.Run(name, func(b *testing.B) {
			const iters = 1 << 24
			procs := runtime.GOMAXPROCS(0)
			for b.Loop() {
				var wg sync.WaitGroup
				for p := 0; p < procs; p++ {
					wg.Add(1)
					go func() {
						defer wg.Done()
						loop(iters)
					}()
				}
				wg.Wait()
			}
			reportFlops(b, perIter*iters*float64(procs))
		})
	}
}

// BenchmarkSkinny times the products of a randomized SVD of a T×N = 1000×3000
// panel with a sketch of l = 35 columns (A·Ω and Aᵀ·Q, 2·T·N·l flops each)
// and the residuals of K = 20 factors (A − R·Bᵀ, 2·T·N·K flops), against
// gonum's Dense.Mul and blas64.Gemm on the same operands.
func BenchmarkSkinny(b *testing.B) {
	const t, n, l, k = 1000, 3000, 35, 20
	a := benchMatrix(t, n)
	omega := benchMatrix(n, l)
	q := benchMatrix(t, l)
	r := benchMatrix(t, k)
	ld := benchMatrix(n, k)
	for _, c := range []struct {
		name  string
		flops float64
		ours  func()
		gonum func()
	}{
		{
			name: "A·Ω", flops: 2 * t * n * l,
			ours:  func() { Mul(mat.NewDense(t, l, nil), a, omega) },
			gonum: func() { mat.NewDense(t, l, nil).Mul(a, omega) },
		},
		{
			name: "AᵀQ", flops: 2 * t * n * l,
			ours:  func() { MulTA(mat.NewDense(n, l, nil), a, q) },
			gonum: func() { mat.NewDense(n, l, nil).Mul(a.T(), q) },
		},
		{
			name: "A−RBᵀ", flops: 2 * t * n * k,
			ours: func() { SubMul(a, r, ld.T()) },
			gonum: func() {
				blas64.Gemm(blas.NoTrans, blas.Trans, -1, r.RawMatrix(), ld.RawMatrix(), 1, a.RawMatrix())
			},
		},
	} {
		b.Run(c.name+"/dense", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				c.ours()
			}
			reportFlops(b, c.flops)
		})
		b.Run(c.name+"/gonum", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				c.gonum()
			}
			reportFlops(b, c.flops)
		})
	}
}
