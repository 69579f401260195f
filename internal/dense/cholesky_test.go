package dense

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// randSPD returns a random symmetric positive definite n×n matrix XᵀX/t + εI
// from a seeded source, computed by gonum so that it does not depend on the
// code under test.
func randSPD(rng *rand.Rand, n int) *mat.SymDense {
	t := n + 10
	x := randMatrix(rng, t, n)
	var s mat.SymDense
	s.SymOuterK(1/float64(t), x.T())
	for i := 0; i < n; i++ {
		s.SetSym(i, i, s.At(i, i)+0.01)
	}
	return &s
}

// withBase runs f with the recursion's base order set to base.
func withBase(base int, f func()) {
	saved := cholBase
	cholBase = base
	defer func() { cholBase = saved }()
	f()
}

// cholRoutes returns the ways to run the factorization and what uses it:
// the blas64 route, a recursion base of 8, and every kernel, by name.
func cholRoutes() map[string]func(func()) {
	routes := map[string]func(func()){"blas64": withBLAS, "base 8": func(f func()) { withBase(8, f) }}
	for _, k := range kernels() {
		routes["kernel "+k.name] = func(f func()) { withKernel(k, f) }
	}
	return routes
}

// maxAbsDiff returns max |a_ij − b_ij|.
func maxAbsDiff(a, b mat.Matrix) float64 {
	r, c := a.Dims()
	var d float64
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			d = max(d, math.Abs(a.At(i, j)-b.At(i, j)))
		}
	}
	return d
}

// TestCholeskyAgainstGonum compares the factor, log-determinant and both
// solves with gonum v0.17.0's mat.Cholesky (Factorize, UTo, LogDet,
// SolveVecTo, SolveTo) on seeded positive definite matrices, at sizes around
// the recursion's base and the kernels' slivers, for every kernel, the
// blas64 route and a base small enough to recurse several levels.
func TestCholeskyAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	sizes := []int{1, 2, 5, 47, 48, 49, 97, 130, 301}
	if testing.Short() {
		sizes = []int{1, 5, 49, 130}
	}
	routes := cholRoutes()
	for _, n := range sizes {
		a := randSPD(rng, n)
		var ref mat.Cholesky
		require.True(t, ref.Factorize(a))
		var refU mat.TriDense
		ref.UTo(&refU)
		b := randMatrix(rng, n, 3)
		var refX mat.Dense
		require.NoError(t, ref.SolveTo(&refX, b))
		var refx mat.VecDense
		require.NoError(t, ref.SolveVecTo(&refx, b.ColView(0)))
		// The factor and the solves agree to rounding scaled by the size
		// and, for the solves, the condition number (at most ~1e4 here).
		tol := 1e-13 * float64(n)
		for name, route := range routes {
			route(func() {
				var c Cholesky
				require.True(t, c.Factorize(a), "n=%d %s", n, name)
				require.Equal(t, n, c.Size())
				u := c.UTo(nil)
				require.LessOrEqual(t, maxAbsDiff(u, &refU), tol, "U, n=%d %s", n, name)
				require.InDelta(t, ref.LogDet(), c.LogDet(), tol*math.Abs(ref.LogDet())+tol, "logdet, n=%d %s", n, name)
				x := c.SolveTo(nil, b)
				require.LessOrEqual(t, maxAbsDiff(x, &refX), 1e4*tol*mat.Norm(&refX, math.Inf(1)), "SolveTo, n=%d %s", n, name)
				xv := c.SolveVecTo(nil, mat.Col(nil, 0, b))
				require.LessOrEqual(t, maxAbsDiff(mat.NewVecDense(n, xv), &refx), 1e4*tol*mat.Norm(&refx, math.Inf(1)), "SolveVecTo, n=%d %s", n, name)
			})
		}
	}
}

// choleskyFixture is testdata/numpy_cholesky.json, written by
// testdata/numpy_cholesky.py with numpy 1.24.2.
type choleskyFixture struct {
	A, L, Bm, Xm, Indefinite, Semidefinite [][]float64
	B, X                                   []float64
	Logdet                                 float64
	IndefiniteRaises                       bool `json:"indefinite_raises"`
	SemidefiniteRaises                     bool `json:"semidefinite_raises"`
}

func symFromRows(rows [][]float64) *mat.SymDense {
	n := len(rows)
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s.SetSym(i, j, rows[i][j])
		}
	}
	return s
}

// TestCholeskyAgainstNumpy checks U = Lᵀ of np.linalg.cholesky(A), the
// log-determinant of np.linalg.slogdet and the solutions of np.linalg.solve
// (numpy 1.24.2, testdata/numpy_cholesky.py), and that the two matrices
// np.linalg.cholesky rejects with LinAlgError are rejected here too.
func TestCholeskyAgainstNumpy(t *testing.T) {
	raw, err := os.ReadFile("testdata/numpy_cholesky.json")
	require.NoError(t, err)
	var f choleskyFixture
	require.NoError(t, json.Unmarshal(raw, &f))
	a := symFromRows(f.A)
	n := a.SymmetricDim()
	for _, base := range []int{8, cholBase} {
		withBase(base, func() {
			var c Cholesky
			require.True(t, c.Factorize(a))
			u := c.UTo(nil)
			l := fromRows(f.L)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					// U_ij = L_ji; the entries are O(1).
					require.InDelta(t, l.At(j, i), u.At(i, j), 1e-12, "U(%d,%d) base %d", i, j, base)
				}
			}
			require.InDelta(t, f.Logdet, c.LogDet(), 1e-11*math.Abs(f.Logdet))
			x := c.SolveVecTo(nil, f.B)
			xn := mat.Norm(mat.NewVecDense(n, f.X), math.Inf(1))
			require.InDeltaSlice(t, f.X, x, 1e-9*xn)
			xm := c.SolveTo(nil, fromRows(f.Bm))
			require.LessOrEqual(t, maxAbsDiff(xm, fromRows(f.Xm)), 1e-9*mat.Norm(fromRows(f.Xm), math.Inf(1)))
		})
	}
	require.True(t, f.IndefiniteRaises && f.SemidefiniteRaises, "numpy rejected both")
	var c Cholesky
	require.False(t, c.Factorize(symFromRows(f.Indefinite)), "indefinite")
	require.False(t, c.Factorize(symFromRows(f.Semidefinite)), "semidefinite of rank 40")
	require.Panics(t, func() { c.LogDet() }, "a failed factorization is unusable")
}

// TestCholeskyNotPositiveDefinite covers the failures numpy and gonum
// report too (np.linalg.cholesky raises, mat.Cholesky.Factorize returns
// false): a negative or zero pivot at the start, in the middle of a block
// and after several levels of recursion, and non-finite elements.
func TestCholeskyNotPositiveDefinite(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{1, 3, 60, 200} {
		for _, at := range []int{0, n / 2, n - 1} {
			for _, v := range []float64{-1, 0, math.NaN(), math.Inf(1), math.Inf(-1)} {
				a := randSPD(rng, n)
				// Replace a diagonal element so that the Schur complement
				// there is v minus a positive number: not positive (or
				// non-finite) whatever came before.
				a.SetSym(at, at, v)
				var ref mat.Cholesky
				var c Cholesky
				name := fmt.Sprintf("n=%d at=%d v=%g", n, at, v)
				require.False(t, c.Factorize(a), name)
				if !math.IsNaN(v) && !math.IsInf(v, 0) {
					require.False(t, ref.Factorize(a), "gonum agrees: "+name)
				}
			}
		}
	}
	var c Cholesky
	a := randSPD(rng, 100)
	a.SetSym(3, 70, math.NaN())
	require.False(t, c.Factorize(a), "NaN off the diagonal")
}

// TestCholeskyProperties: UᵀU reproduces A, the input is not modified, a
// reused receiver gives the same bits, the factor is bit-identical for
// GOMAXPROCS 1 and 2, a solve reproduces its right-hand side, dst may be b,
// and dst conventions hold.
func TestCholeskyProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	n := 211
	a := randSPD(rng, n)
	orig := mat.NewSymDense(n, nil)
	orig.CopySym(a)
	var c Cholesky
	require.True(t, c.Factorize(a))
	require.True(t, mat.Equal(a, orig), "input unchanged")
	u := c.UTo(nil)
	var utu mat.Dense
	utu.Mul(u.T(), u)
	require.LessOrEqual(t, maxAbsDiff(&utu, a), 1e-13*mat.Norm(a, math.Inf(1)), "UᵀU = A")
	for i := 0; i < n; i++ {
		for j := 0; j < i; j++ {
			require.Zero(t, u.At(i, j))
		}
	}

	first := append([]float64(nil), c.u...)
	require.True(t, c.Factorize(randSPD(rng, n)))
	require.True(t, c.Factorize(a))
	require.Equal(t, first, c.u, "reused receiver")
	for i := 0; i < n; i++ {
		require.Equal(t, make([]float64, i), first[i*n:i*n+i], "a new buffer's lower triangle is zero")
	}
	var big Cholesky // a larger factor leaves its upper triangle where the smaller one's lower lies
	require.True(t, big.Factorize(randSPD(rng, n+37)))
	require.True(t, big.Factorize(a))
	require.Equal(t, first, big.u, "receiver reused from a larger size")
	require.True(t, big.Factorize(atOnly{a}))
	require.Equal(t, first, big.u, "receiver reused, a matrix given through At")

	saved := runtime.GOMAXPROCS(1)
	var one Cholesky
	one.Factorize(a)
	b := randMatrix(rng, n, 700) // wider than a column chunk
	x1 := one.SolveTo(nil, b)
	v1 := one.SolveVecTo(nil, mat.Col(nil, 0, b))
	runtime.GOMAXPROCS(max(2, saved))
	var two Cholesky
	two.Factorize(a)
	x2 := two.SolveTo(nil, b)
	v2 := two.SolveVecTo(nil, mat.Col(nil, 0, b))
	runtime.GOMAXPROCS(saved)
	require.Equal(t, one.u, two.u, "factor bit-identical for GOMAXPROCS 1 and 2")
	require.Equal(t, x1.RawMatrix().Data, x2.RawMatrix().Data, "SolveTo bit-identical")
	require.Equal(t, v1, v2, "SolveVecTo bit-identical")

	var ax mat.Dense
	ax.Mul(a, x1)
	require.LessOrEqual(t, maxAbsDiff(&ax, b), 1e-10*mat.Norm(b, math.Inf(1)), "A·X = B")

	in := mat.DenseCopyOf(b)
	require.Same(t, in, c.SolveTo(in, in), "dst may be b")
	require.Equal(t, x1.RawMatrix().Data, in.RawMatrix().Data)
	bv := mat.Col(nil, 0, b)
	out := c.SolveVecTo(bv, bv)
	require.Equal(t, v1, out, "SolveVecTo in place")

	require.PanicsWithValue(t, mat.ErrShape, func() { c.SolveTo(mat.NewDense(n, 2, nil), b) })
	require.PanicsWithValue(t, mat.ErrShape, func() { c.SolveTo(nil, mat.NewDense(n+1, 2, nil)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { c.SolveVecTo(make([]float64, n-1), bv) })
	require.PanicsWithValue(t, mat.ErrShape, func() { c.SolveVecTo(nil, bv[1:]) })
	require.PanicsWithValue(t, mat.ErrShape, func() { c.UTo(mat.NewTriDense(3, mat.Upper, nil)) })
	var empty mat.Dense
	require.Equal(t, x1.RawMatrix().Data, c.SolveTo(&empty, b).RawMatrix().Data, "empty dst sized")

	// A matrix given through At only (not a *mat.SymDense) factors alike.
	var d Cholesky
	require.True(t, d.Factorize(atOnly{a}))
	require.Equal(t, c.u, d.u)

	var z Cholesky
	require.True(t, z.Factorize(&mat.SymDense{}))
	require.Zero(t, z.LogDet())
	require.Panics(t, func() { (&Cholesky{}).SolveVecTo(nil, nil) }, "zero value is unusable")
}

type atOnly struct{ mat.Symmetric }
