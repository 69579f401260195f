package dense

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/blas/gonum"
	"gonum.org/v1/gonum/mat"
)

// withVecKernels runs f on the portable matrix–vector loops when on is false.
func withVecKernels(on bool, f func()) {
	if !vecAVX2 {
		f()
		return
	}
	setVecAVX2(on)
	defer setVecAVX2(true)
	f()
}

func randVec(rng *rand.Rand, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = rng.NormFloat64()
	}
	return v
}

// TestSymVec compares SymVec with gonum v0.17.0's blas64.Symv (upper) to
// rounding, Σ_j |a_ij x_j| · 1e-14, at sizes below, at and above the
// blocked path's threshold, with and without the AVX2 kernel; checks that
// the result is bit-identical for GOMAXPROCS 1 and 2, that the inputs are
// unchanged, the lower-triangle route and the shape panics.
func TestSymVec(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for _, n := range []int{1, 2, 7, 9, 255, 256, 257, 1000} {
		a := randSPD(rng, n)
		raw := a.RawSymmetric()
		x := randVec(rng, n)
		want := make([]float64, n)
		blas64.Symv(1, raw, blas64.Vector{N: n, Inc: 1, Data: x}, 0, blas64.Vector{N: n, Inc: 1, Data: want})
		scale := make([]float64, n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				scale[i] += math.Abs(a.At(i, j) * x[j])
			}
		}
		before := append([]float64(nil), raw.Data...)
		xs := append([]float64(nil), x...)
		for _, on := range []bool{true, false} {
			withVecKernels(on, func() {
				got := SymVec(nil, raw, x)
				for i := range got {
					require.InDelta(t, want[i], got[i], 1e-14*float64(n)*scale[i], "n=%d i=%d avx2=%v", n, i, on)
				}
				saved := runtime.GOMAXPROCS(1)
				one := SymVec(make([]float64, n), raw, x)
				runtime.GOMAXPROCS(max(2, saved))
				two := SymVec(nil, raw, x)
				runtime.GOMAXPROCS(saved)
				require.Equal(t, one, two, "bit-identical for GOMAXPROCS 1 and 2, n=%d", n)
				require.Equal(t, got, two)
			})
		}
		require.Equal(t, before, raw.Data, "a unchanged")
		require.Equal(t, xs, x, "x unchanged")

		lower := blas64.Symmetric{N: n, Stride: n, Uplo: blas.Lower, Data: make([]float64, n*n)}
		for i := 0; i < n; i++ {
			for j := 0; j <= i; j++ {
				lower.Data[i*n+j] = a.At(i, j)
			}
		}
		got := SymVec(nil, lower, x)
		for i := range got {
			require.InDelta(t, want[i], got[i], 1e-14*float64(n)*scale[i], "lower n=%d", n)
		}
	}
	raw := mat.NewSymDense(3, nil).RawSymmetric()
	require.PanicsWithValue(t, mat.ErrShape, func() { SymVec(nil, raw, make([]float64, 2)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { SymVec(make([]float64, 2), raw, make([]float64, 3)) })
	require.Empty(t, SymVec(nil, blas64.Symmetric{Uplo: blas.Upper}, nil))
}

// TestMulVecTDiag compares MulVecT and MulVecDiag with gonum v0.17.0's
// blas64.Gemv for thin matrices, with and without the AVX2 kernels, for
// widths around the kernels' four columns and row counts around their
// four rows, with a row stride wider than K; dst may be x in MulVecDiag.
func TestMulVecTDiag(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	for _, n := range []int{1, 3, 4, 5, 8, 33, 3000} {
		for _, k := range []int{1, 3, 4, 5, 20, 23} {
			stride := k + 2
			b := blas64.General{Rows: n, Cols: k, Stride: stride, Data: randVec(rng, (n-1)*stride+k)}
			x, z, d := randVec(rng, n), randVec(rng, k), randVec(rng, n)
			wantT := make([]float64, k)
			blas64.Gemv(blas.Trans, 1, b, blas64.Vector{N: n, Inc: 1, Data: x}, 0, blas64.Vector{N: k, Inc: 1, Data: wantT})
			wantN := make([]float64, n)
			blas64.Gemv(blas.NoTrans, 1, b, blas64.Vector{N: k, Inc: 1, Data: z}, 0, blas64.Vector{N: n, Inc: 1, Data: wantN})
			name := fmt.Sprintf("n=%d k=%d", n, k)
			for _, on := range []bool{true, false} {
				withVecKernels(on, func() {
					gotT := MulVecT(nil, b, x)
					require.InDeltaSlice(t, wantT, gotT, 1e-13*float64(n), name)
					gotN := MulVecDiag(nil, b, z, nil, nil)
					require.InDeltaSlice(t, wantN, gotN, 1e-13*float64(k), name)
					withD := make([]float64, n)
					for i := range withD {
						withD[i] = wantN[i] + d[i]*x[i]
					}
					got := MulVecDiag(make([]float64, n), b, z, d, x)
					require.InDeltaSlice(t, withD, got, 1e-13*float64(k), name)
					alias := append([]float64(nil), x...)
					require.Equal(t, got, MulVecDiag(alias, b, z, d, alias), "dst may be x, "+name)
				})
			}
		}
	}
	b := blas64.General{Rows: 3, Cols: 2, Stride: 2, Data: make([]float64, 6)}
	require.PanicsWithValue(t, mat.ErrShape, func() { MulVecT(nil, b, make([]float64, 2)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { MulVecT(make([]float64, 3), b, make([]float64, 3)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { MulVecDiag(nil, b, make([]float64, 3), nil, nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { MulVecDiag(nil, b, make([]float64, 2), make([]float64, 3), nil) })
}

// TestAxpy checks that Axpy gives the digits of the loop
// y[k] += float64(s*x[k]) (the product rounded first), bit for bit, with and without the AVX2 kernel, at
// lengths on and off its eight-element steps, and that gonum v0.17.0's
// Daxpy (gonum.Implementation, its SSE2 kernel, multiplies then adds; not
// blas64, which the openblas tag sends to the C BLAS) agrees bit for bit
// too; and that it leaves y past len(x) alone.
func TestAxpy(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{0, 1, 7, 8, 9, 16, 23, 256, 1001} {
		x, y0 := randVec(rng, n), randVec(rng, n+3)
		s := rng.NormFloat64()
		want := append([]float64(nil), y0...)
		for k := range x {
			want[k] += float64(s * x[k])
		}
		ref := append([]float64(nil), y0...)
		gonum.Implementation{}.Daxpy(n, s, x, 1, ref[:n], 1) // gonum's own, whatever blas64 is set to
		require.Equal(t, want, ref, "gonum n=%d", n)
		for _, on := range []bool{true, false} {
			withVecKernels(on, func() {
				got := append([]float64(nil), y0...)
				Axpy(s, x, got)
				require.Equal(t, want, got, "n=%d avx2=%v", n, on)
			})
		}
	}
}
