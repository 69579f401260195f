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
	"gonum.org/v1/gonum/mat"
)

func randMatrix(rng *rand.Rand, t, n int) *mat.Dense {
	x := mat.NewDense(t, n, nil)
	for i := 0; i < t; i++ {
		for j := 0; j < n; j++ {
			x.Set(i, j, rng.NormFloat64())
		}
	}
	return x
}

func randWeights(rng *rand.Rand, t int) []float64 {
	w := make([]float64, t)
	for i := range w {
		w[i] = rng.Float64()
	}
	return w
}

// naive computes Σ_t w_t x_t x_tᵀ by its definition, with the scale
// Σ_t |w_t x_ti x_tj| of each element, the size of its rounding error.
func naive(x *mat.Dense, w []float64) (out, scale *mat.SymDense) {
	t, n := x.Dims()
	out, scale = mat.NewSymDense(n, nil), mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			var s, a float64
			for k := 0; k < t; k++ {
				wk := 1.0
				if w != nil {
					wk = w[k]
				}
				s += wk * x.At(k, i) * x.At(k, j)
				a += math.Abs(wk * x.At(k, i) * x.At(k, j))
			}
			out.SetSym(i, j, s)
			scale.SetSym(i, j, a)
		}
	}
	return out, scale
}

// naiveGram computes √w_s √w_t x_s·x_t by its definition, with scales.
func naiveGram(x *mat.Dense, w []float64) (out, scale *mat.SymDense) {
	t, n := x.Dims()
	out, scale = mat.NewSymDense(t, nil), mat.NewSymDense(t, nil)
	for s := 0; s < t; s++ {
		for u := s; u < t; u++ {
			var d, a float64
			for j := 0; j < n; j++ {
				d += x.At(s, j) * x.At(u, j)
				a += math.Abs(x.At(s, j) * x.At(u, j))
			}
			if w != nil {
				f := math.Sqrt(w[s]) * math.Sqrt(w[u])
				d, a = d*f, a*f
			}
			out.SetSym(s, u, d)
			scale.SetSym(s, u, a)
		}
	}
	return out, scale
}

// requireClose checks |got − want| ≤ tol·scale element by element: relative
// accuracy measured against Σ|terms|, which bounds the rounding error of any
// summation order (Higham 2002, Accuracy and Stability of Numerical
// Algorithms, 2nd ed., §3.1).
func requireClose(t *testing.T, got, want, scale mat.Symmetric, tol float64, msg string) {
	t.Helper()
	n := want.SymmetricDim()
	require.Equal(t, n, got.SymmetricDim(), msg)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			// A plain comparison: testify's reflection costs more than the
			// product on these sizes.
			if d := math.Abs(got.At(i, j) - want.At(i, j)); !(d <= tol*scale.At(i, j)) {
				t.Fatalf("%s: element (%d,%d) %v want %v", msg, i, j, got.At(i, j), want.At(i, j))
			}
		}
	}
}

// withKernel runs f with the products on kernel k.
func withKernel(k kernel, f func()) {
	saved, route := best, viaBLAS
	best, viaBLAS = k, false
	defer func() { best, viaBLAS = saved, route }()
	f()
}

// withBLAS runs f with the products on blas64: gonum's own BLAS in the
// default build, OpenBLAS in the openblas build.
func withBLAS(f func()) {
	route := viaBLAS
	viaBLAS = true
	defer func() { viaBLAS = route }()
	f()
}

// naiveMul computes c0 + s·Σ_k a_ik b_kj by its definition (c0 may be nil),
// with the scale |c0_ij| + Σ_k |a_ik b_kj| of each element.
func naiveMul(c0, a, b mat.Matrix, s float64) (out, scale *mat.Dense) {
	m, k := a.Dims()
	_, n := b.Dims()
	out, scale = mat.NewDense(m, n, nil), mat.NewDense(m, n, nil)
	for i := 0; i < m; i++ {
		for j := 0; j < n; j++ {
			var d, e float64
			if c0 != nil {
				d, e = c0.At(i, j), math.Abs(c0.At(i, j))
			}
			for l := 0; l < k; l++ {
				d += s * a.At(i, l) * b.At(l, j)
				e += math.Abs(a.At(i, l) * b.At(l, j))
			}
			out.Set(i, j, d)
			scale.Set(i, j, e)
		}
	}
	return out, scale
}

func requireCloseDense(t *testing.T, got, want, scale mat.Matrix, tol float64, msg string) {
	t.Helper()
	r, c := want.Dims()
	gr, gc := got.Dims()
	require.Equal(t, [2]int{r, c}, [2]int{gr, gc}, msg)
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			// A plain comparison: testify's reflection costs more than the
			// product on these sizes.
			if d := math.Abs(got.At(i, j) - want.At(i, j)); !(d <= tol*scale.At(i, j)) {
				t.Fatalf("%s: element (%d,%d) %v want %v", msg, i, j, got.At(i, j), want.At(i, j))
			}
		}
	}
}

func TestProductsMatchDefinition(t *testing.T) {
	routes := map[string]func(func()){}
	for _, k := range kernels() {
		routes["kernel "+k.name] = func(f func()) { withKernel(k, f) }
	}
	routes["blas64"] = withBLAS
	checkDefinitions(t, 1e-12, routes)
}

// checkDefinitions compares the five products with their definitions to
// tol·Σ|terms| on every route, each a function that runs its argument with
// the products on that route. The naive values are computed once per case.
func checkDefinitions(t *testing.T, tol float64, routes map[string]func(func())) {
	t.Helper()
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct {
		name string
		t, n int
		tol  float64
	}{
		{name: "one by one", t: 1, n: 1, tol: tol},
		{name: "one date", t: 1, n: 30, tol: tol},
		{name: "one asset", t: 40, n: 1, tol: tol},
		{name: "fewer dates than assets", t: 3, n: 500, tol: tol},
		{name: "long and thin", t: 400, n: 7, tol: tol},
		{name: "several tiles and blocks", t: 300, n: 262, tol: tol},
	} {
		if testing.Short() && tc.n == 262 {
			tc.n = 110 // still three tiles a side and two blocks of kc
		}
		x := randMatrix(rng, tc.t, tc.n)
		w := randWeights(rng, tc.t)
		for _, wt := range [][]float64{nil, w} {
			want, scale := naive(x, wt)
			wantG, scaleG := naiveGram(x, wt)
			for route, run := range routes {
				msg := fmt.Sprintf("%s, %s, weights %v", tc.name, route, wt != nil)
				run(func() {
					requireClose(t, XtWX(nil, x, wt), want, scale, tc.tol, "XtWX "+msg)
					requireClose(t, XWXt(nil, x, wt), wantG, scaleG, tc.tol, "XWXt "+msg)
				})
			}
		}
		// A·B with A = X (T×N) and B = the first columns of Xᵀ (N×min(T, 37)),
		// Aᵀ·C and C − A·B.
		nb := min(tc.t, 37)
		bs := mat.DenseCopyOf(x.T()).Slice(0, tc.n, 0, nb) // a view
		c0 := randMatrix(rng, tc.t, nb)
		wantM, scaleM := naiveMul(nil, x, bs, 1)
		wantS, scaleS := naiveMul(c0, x, bs, -1)
		wantT, scaleT := naiveMul(nil, x.T(), c0, 1)
		for route, run := range routes {
			msg := tc.name + ", " + route
			run(func() {
				requireCloseDense(t, Mul(nil, x, bs), wantM, scaleM, tc.tol, "Mul "+msg)
				requireCloseDense(t, SubMul(mat.DenseCopyOf(c0), x, bs), wantS, scaleS, tc.tol, "SubMul "+msg)
				requireCloseDense(t, MulTA(nil, x, c0), wantT, scaleT, tc.tol, "MulTA "+msg)
			})
		}
	}
}

// model recomputes element (i, j) of PᵀQ in the order the kernels promise:
// the reduction in blocks of kc, each summed from zero by fused (one
// rounding) or unfused multiply-adds, the block sums added in order.
func model(k int, p, q func(k int) float64, fused bool) float64 {
	return modelFrom(0, k, p, q, fused)
}

// modelFrom is model with the block sums added to start, as SubMul does.
func modelFrom(start float64, k int, p, q func(k int) float64, fused bool) float64 {
	s := start
	for k0 := 0; k0 < k; k0 += kc {
		var acc float64
		for l := k0; l < min(k0+kc, k); l++ {
			if fused {
				acc = math.FMA(p(l), q(l), acc)
			} else {
				acc += float64(p(l) * q(l))
			}
		}
		s += acc
	}
	return s
}

// TestKernelsFollowTheirOrder checks every kernel bit for bit against the
// scalar model of its summation order, on sizes with edge slivers, several
// tiles and several reduction blocks: it pins down packing, weights, tiling
// and the assembly.
func TestKernelsFollowTheirOrder(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	tt, n := 530, 263
	if testing.Short() {
		tt, n = 300, 50
	}
	x := randMatrix(rng, tt, n)
	w := randWeights(rng, tt)
	sw := make([]float64, tt)
	for i, v := range w {
		sw[i] = math.Sqrt(v)
	}
	for _, k := range kernels() {
		withKernel(k, func() {
			got := XtWX(nil, x, w)
			for i := 0; i < n; i++ {
				for j := i; j < n; j++ {
					want := model(tt, func(l int) float64 { return x.At(l, i) * w[l] }, func(l int) float64 { return x.At(l, j) }, k.fused)
					require.Equal(t, math.Float64bits(want), math.Float64bits(got.At(i, j)), "XtWX kernel %s element (%d,%d)", k.name, i, j)
				}
			}
			// A·B and C − A·B with A = xᵀ (n×tt) and B = x (tt×n): element
			// (i, j) is c_ij plus the model's sum of (−)x_li x_lj.
			xt0 := mat.DenseCopyOf(x.T())
			ab := Mul(nil, xt0, x)
			c0 := randMatrix(rng, n, n)
			sub := SubMul(mat.DenseCopyOf(c0), xt0, x)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					want := model(tt, func(l int) float64 { return x.At(l, i) }, func(l int) float64 { return x.At(l, j) }, k.fused)
					require.Equal(t, math.Float64bits(want), math.Float64bits(ab.At(i, j)), "Mul kernel %s element (%d,%d)", k.name, i, j)
					want = modelFrom(c0.At(i, j), tt, func(l int) float64 { return -x.At(l, i) }, func(l int) float64 { return x.At(l, j) }, k.fused)
					require.Equal(t, math.Float64bits(want), math.Float64bits(sub.At(i, j)), "SubMul kernel %s element (%d,%d)", k.name, i, j)
				}
			}
			// The Gram matrix of xᵀ has n dates and tt assets.
			xt := mat.DenseCopyOf(x.T())
			gram := XWXt(nil, xt, sw[:n])
			for s := 0; s < n; s++ {
				for u := s; u < n; u++ {
					want := model(tt, func(l int) float64 { return xt.At(s, l) * math.Sqrt(sw[s]) }, func(l int) float64 { return xt.At(u, l) * math.Sqrt(sw[u]) }, k.fused)
					require.Equal(t, math.Float64bits(want), math.Float64bits(gram.At(s, u)), "XWXt kernel %s element (%d,%d)", k.name, s, u)
				}
			}
		})
	}
}

// TestDeterministicAcrossGOMAXPROCS: the same bits with 1, 2 and 8 threads.
func TestDeterministicAcrossGOMAXPROCS(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	tt, n := 300, 500
	if testing.Short() {
		tt, n = 100, 250
	}
	x := randMatrix(rng, tt, n)
	w := randWeights(rng, tt)
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, k := range kernels() {
		withKernel(k, func() {
			var first [5][]float64
			for _, procs := range []int{1, 2, 8} {
				runtime.GOMAXPROCS(procs)
				got := [5][]float64{
					XtWX(nil, x, w).RawSymmetric().Data,
					XWXt(nil, x, w).RawSymmetric().Data,
					MulTA(nil, x, x.Slice(0, tt, 0, 70)).RawMatrix().Data,
					Mul(nil, x, x.Slice(0, 30, 0, n).T()).RawMatrix().Data,
					SubMul(mat.DenseCopyOf(x.Slice(0, tt, 0, 30)), x, x.Slice(0, 30, 0, n).T()).RawMatrix().Data,
				}
				if procs == 1 {
					first = got
					continue
				}
				for i := range got {
					require.Equal(t, len(first[i]), len(got[i]))
					for e := range got[i] {
						if math.Float64bits(first[i][e]) != math.Float64bits(got[i][e]) {
							t.Fatalf("kernel %s product %d element %d: GOMAXPROCS %d gives %v, 1 gives %v", k.name, i, e, procs, got[i][e], first[i][e])
						}
					}
				}
			}
		})
	}
}

// TestAgreesWithGonum compares with gonum v0.17.0: blas64.Syrk for XᵀX and
// XXᵀ, mat.Dense.Mul for AᵀB.
func TestAgreesWithGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	x := randMatrix(rng, 120, 290)
	y := randMatrix(rng, 120, 33)
	for _, tc := range []struct {
		name  string
		trans blas.Transpose
		dim   int
		ours  *mat.SymDense
		tol   float64
	}{
		{name: "XtX vs Syrk(Trans)", trans: blas.Trans, dim: 290, ours: XtWX(nil, x, nil), tol: 1e-12},
		{name: "Gram vs Syrk(NoTrans)", trans: blas.NoTrans, dim: 120, ours: XWXt(nil, x, nil), tol: 1e-12},
	} {
		ref := blas64.Symmetric{N: tc.dim, Stride: tc.dim, Data: make([]float64, tc.dim*tc.dim), Uplo: blas.Upper}
		blas64.Syrk(tc.trans, 1, x.RawMatrix(), 0, ref)
		require.True(t, mat.EqualApprox(tc.ours, mat.NewSymDense(tc.dim, ref.Data), tc.tol), tc.name)
	}
	var want mat.Dense
	want.Mul(x.T(), y)
	require.True(t, mat.EqualApprox(MulTA(nil, x, y), &want, 1e-12), "MulTA vs Dense.Mul")
}

// opaque hides the concrete type of a matrix, forcing the copying path.
type opaque struct{ mat.Matrix }

func TestInputForms(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	big := randMatrix(rng, 90, 70)
	x := big.Slice(5, 85, 3, 64).(*mat.Dense) // a view: stride ≠ columns
	xc := mat.DenseCopyOf(x)
	xT := mat.DenseCopyOf(x.T())
	w := randWeights(rng, 80)
	for _, k := range kernels() {
		withKernel(k, func() {
			for _, wt := range [][]float64{nil, w} {
				want := XtWX(nil, xc, wt)
				wantG := XWXt(nil, xc, wt)
				for _, in := range []struct {
					name string
					m    mat.Matrix
				}{
					{"view", x},
					{"transpose of a Dense", xT.T()},
					{"other Matrix", opaque{xc}},
				} {
					require.True(t, mat.Equal(want, XtWX(nil, in.m, wt)), "XtWX %s, kernel %s", in.name, k.name)
					require.True(t, mat.Equal(wantG, XWXt(nil, in.m, wt)), "XWXt %s, kernel %s", in.name, k.name)
				}
				var wantM mat.Dense
				wantM.Mul(xc.T(), xc.Slice(0, 80, 0, 9))
				require.True(t, mat.EqualApprox(MulTA(nil, xT.T(), opaque{x.Slice(0, 80, 0, 9)}), &wantM, 1e-12), "MulTA forms, kernel %s", k.name)
				var wantAB mat.Dense
				wantAB.Mul(xc, xc.T())
				require.True(t, mat.EqualApprox(Mul(nil, xT.T(), opaque{xT}), &wantAB, 1e-12), "Mul forms, kernel %s", k.name)
				require.True(t, mat.Equal(Mul(nil, xc, xT), Mul(nil, x, xc.T())), "Mul view and transpose, kernel %s", k.name)
			}
		})
	}
}

func TestDstReuseAndInputsUnchanged(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	x := randMatrix(rng, 50, 260)
	w := randWeights(rng, 50)
	x0, w0 := mat.DenseCopyOf(x), append([]float64(nil), w...)
	want := XtWX(nil, x, w)

	// A reused dst, full of other numbers, gives the same result.
	dst := mat.NewSymDense(260, nil)
	for i := range dst.RawSymmetric().Data {
		dst.RawSymmetric().Data[i] = math.NaN()
	}
	require.Same(t, dst, XtWX(dst, x, w))
	require.True(t, mat.Equal(want, dst))
	require.Same(t, dst, XtWX(dst, x, w))
	require.True(t, mat.Equal(want, dst))

	// An empty dst is sized.
	var empty mat.SymDense
	XWXt(&empty, x, w)
	require.Equal(t, 50, empty.SymmetricDim())

	// The lower triangle of the storage is never written.
	raw := dst.RawSymmetric()
	for i := 1; i < 260; i++ {
		require.True(t, math.IsNaN(raw.Data[i*raw.Stride]), "lower triangle written at row %d", i)
	}
	require.True(t, mat.Equal(x0, x), "x modified")
	require.Equal(t, w0, w, "w modified")

	// A constant column and zero weights.
	xz := mat.DenseCopyOf(x)
	for i := 0; i < 50; i++ {
		xz.Set(i, 3, 2)
	}
	wz := make([]float64, 50)
	wz[7] = 1
	got := XtWX(nil, xz, wz)
	require.Equal(t, 4.0, got.At(3, 3))
	require.Equal(t, 2*xz.At(7, 10), got.At(3, 10))
}

func TestShapePanics(t *testing.T) {
	x := mat.NewDense(4, 3, []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12})
	require.PanicsWithValue(t, mat.ErrShape, func() { XtWX(mat.NewSymDense(4, nil), x, nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { XtWX(nil, x, []float64{1, 2}) })
	require.PanicsWithValue(t, mat.ErrShape, func() { XWXt(mat.NewSymDense(3, nil), x, nil) })
	require.PanicsWithValue(t, mat.ErrShape, func() { XWXt(nil, x, []float64{1, 2, 3, 4, 5}) })
	require.PanicsWithValue(t, mat.ErrShape, func() { MulTA(nil, x, mat.NewDense(3, 3, nil)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { MulTA(mat.NewDense(3, 2, nil), x, x) })
	require.PanicsWithValue(t, mat.ErrShape, func() { Mul(nil, x, x) })
	require.PanicsWithValue(t, mat.ErrShape, func() { Mul(mat.NewDense(4, 3, nil), x, x.T()) })
	require.PanicsWithValue(t, mat.ErrShape, func() { SubMul(mat.NewDense(4, 3, nil), x, x.T()) })
	require.PanicsWithValue(t, mat.ErrShape, func() { SubMul(mat.NewDense(4, 4, nil), x, x) })
}

// TestNonFinitePropagates: x must be finite, but a NaN must not vanish.
func TestNonFinitePropagates(t *testing.T) {
	x := mat.NewDense(3, 2, []float64{1, 2, math.NaN(), 4, 5, 6})
	require.True(t, math.IsNaN(XtWX(nil, x, nil).At(0, 1)))
	require.True(t, math.IsNaN(XWXt(nil, x, nil).At(1, 2)))
}

// TestSelectedKernel: the purego build tag and CPUs without AVX2 and FMA run
// the portable kernel; otherwise the fastest supported one is chosen.
func TestSelectedKernel(t *testing.T) {
	ks := kernels()
	require.Equal(t, ks[len(ks)-1].name, best.name)
	require.Equal(t, "go", ks[0].name)
	for _, k := range ks {
		require.Zero(t, unit%k.mr, k.name)
		require.Zero(t, unit%k.nr, k.name)
	}
	require.Zero(t, tile%unit)
	for _, m := range []int{1, 50, 250, 500, 1000, 3000} {
		ts := tileFor(m, m)
		require.Zero(t, ts%unit, "m %d", m)
		require.True(t, ts >= 2*unit && ts <= tile, "m %d: tile %d", m, ts)
	}
}

// TestChunkedReduction: cutting a long reduction into chunks that bound the
// packing memory changes no bit of any product, on every kernel.
func TestChunkedReduction(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	tt, n := 1100, 70 // five blocks of kc, chunks of one to two blocks
	x := randMatrix(rng, tt, n)
	w := randWeights(rng, tt)
	y := randMatrix(rng, tt, 9)
	c0 := randMatrix(rng, n, 9)
	all := func() [][]float64 {
		return [][]float64{
			XtWX(nil, x, w).RawSymmetric().Data,
			XtWX(nil, x, nil).RawSymmetric().Data,
			XWXt(nil, x.T(), w[:n]).RawSymmetric().Data,
			MulTA(nil, x, y).RawMatrix().Data,
			Mul(nil, x.T(), y).RawMatrix().Data,
			SubMul(mat.DenseCopyOf(c0), x.T(), y).RawMatrix().Data,
		}
	}
	saved := maxPack
	defer func() { maxPack = saved }()
	for _, k := range kernels() {
		withKernel(k, func() {
			maxPack = saved
			want := all()
			for _, mp := range []int{1, 300 * n, 600 * n} {
				maxPack = mp
				got := all()
				for i := range want {
					for e := range want[i] {
						if math.Float64bits(want[i][e]) != math.Float64bits(got[i][e]) {
							t.Fatalf("kernel %s, maxPack %d, product %d element %d: %v, unchunked %v", k.name, mp, i, e, got[i][e], want[i][e])
						}
					}
				}
			}
		})
	}
}
