package factor

import (
	"errors"
	"math"
	"runtime"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// smallModel fits a 3-factor model on a simulated market of 40 assets.
func smallModel(t *testing.T) *Model {
	t.Helper()
	sim := simulate(31, 120, 40, 3)
	s := baseSettings()
	s.K = 3
	m, err := Fit(sim.x, s)
	require.NoError(t, err)
	return m
}

// denseSigma computes B·F·Bᵀ + D naively from the ...To readers, the
// reference the fast operations are checked against.
func denseSigma(m *Model) *mat.Dense {
	b := m.LoadingsTo(nil)
	f := m.FactorCovarianceTo(nil)
	var bf, s mat.Dense
	bf.Mul(b, f)
	s.Mul(&bf, b.T())
	for i, v := range m.SpecificVariancesTo(nil) {
		s.Set(i, i, s.At(i, i)+v)
	}
	return &s
}

func TestOperationsMatchDense(t *testing.T) {
	m := smallModel(t)
	n := m.SymmetricDim()
	sigma := denseSigma(m)
	x := make([]float64, n)
	for i := range x {
		x[i] = math.Sin(float64(i+1)) / 10
	}
	xcopy := append([]float64(nil), x...)
	want := mat.NewVecDense(n, nil)
	want.MulVec(sigma, mat.NewVecDense(n, x))

	const tol = 1e-10
	got := m.MulVecTo(nil, x)
	require.InDeltaSlice(t, want.RawVector().Data, got, tol*mat.Norm(want, math.Inf(1)))
	require.Equal(t, xcopy, x, "input changed")
	// dst may be x itself.
	alias := append([]float64(nil), x...)
	m.MulVecTo(alias, alias)
	require.Equal(t, got, alias)

	q := mat.Dot(mat.NewVecDense(n, x), want)
	require.InDelta(t, q, m.QuadForm(x), tol*q)

	// Square-root form: GᵀG = Σ.
	g, sv := m.SqrtTo(nil, nil)
	var gg mat.Dense
	gg.Mul(g.T(), g)
	for i, v := range sv {
		gg.Set(i, i, gg.At(i, i)+v*v)
	}
	require.True(t, mat.EqualApprox(sigma, &gg, tol*mat.Norm(sigma, math.Inf(1))))

	dense := m.CovarianceTo(nil)
	require.True(t, mat.EqualApprox(sigma, dense, tol*mat.Norm(sigma, math.Inf(1))))
	for i := 0; i < n; i += 7 {
		for j := 0; j < n; j += 5 {
			require.InDelta(t, sigma.At(i, j), m.At(i, j), tol*sigma.At(0, 0))
		}
	}

	// Woodbury solve and inverse against gonum's dense solve (LU).
	var sol mat.VecDense
	require.NoError(t, sol.SolveVec(sigma, mat.NewVecDense(n, x)))
	solve := m.SolveVecTo(nil, x)
	require.InDeltaSlice(t, sol.RawVector().Data, solve, tol*mat.Norm(&sol, math.Inf(1)))
	var inv mat.Dense
	require.NoError(t, inv.Inverse(sigma))
	require.True(t, mat.EqualApprox(&inv, m.InverseTo(nil), tol*mat.Norm(&inv, math.Inf(1))))

	// A reused destination gives the same answer.
	dst := make([]float64, n)
	m.MulVecTo(dst, x)
	m.MulVecTo(dst, x)
	require.Equal(t, got, dst)
	d2 := mat.NewSymDense(n, nil)
	m.CovarianceTo(d2)
	m.CovarianceTo(d2)
	require.True(t, mat.Equal(dense, d2))
}

func TestSymmetricPSD(t *testing.T) {
	m := smallModel(t)
	s := m.CovarianceTo(nil)
	var eig mat.EigenSym
	require.True(t, eig.Factorize(s, false))
	require.Greater(t, eig.Values(nil)[0], 0.0)
	n := m.SymmetricDim()
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			require.Equal(t, m.At(i, j), m.At(j, i))
		}
	}
	var _ mat.Symmetric = m
	require.Equal(t, mat.Matrix(m), m.T())
}

func TestShapePanics(t *testing.T) {
	m := smallModel(t)
	n := m.SymmetricDim()
	require.PanicsWithValue(t, mat.ErrShape, func() { m.MulVecTo(nil, make([]float64, n+1)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.MulVecTo(make([]float64, 2), make([]float64, n)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.QuadForm(make([]float64, 1)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.SolveVecTo(nil, make([]float64, 1)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.LoadingsTo(mat.NewDense(2, 2, nil)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.FactorCovarianceTo(mat.NewSymDense(2, nil)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.SpecificVariancesTo(make([]float64, 1)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.CovarianceTo(mat.NewSymDense(2, nil)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.SqrtTo(mat.NewDense(1, 1, nil), nil) })
	require.PanicsWithValue(t, mat.ErrIndexOutOfRange, func() { m.At(n, 0) })
	require.PanicsWithValue(t, mat.ErrIndexOutOfRange, func() { m.Submodel([]int{0, n}) })
	require.PanicsWithValue(t, mat.ErrZeroLength, func() { m.Submodel(nil) })
}

// TestEmptyDst: an empty destination is allocated as a nil one is (the dst
// rule of DEVELOPERS.md), for every method that fills one.
func TestEmptyDst(t *testing.T) {
	m := smallModel(t)
	n := m.SymmetricDim()
	x := make([]float64, n)
	for i := range x {
		x[i] = float64(i%7) - 3
	}
	require.Equal(t, m.MulVecTo(nil, x), m.MulVecTo([]float64{}, x))
	require.Equal(t, m.SolveVecTo(nil, x), m.SolveVecTo([]float64{}, x))
	require.Equal(t, m.SpecificVariancesTo(nil), m.SpecificVariancesTo([]float64{}))
	g, s := m.SqrtTo(&mat.Dense{}, []float64{})
	g0, s0 := m.SqrtTo(nil, nil)
	require.Equal(t, g0.RawMatrix().Data, g.RawMatrix().Data)
	require.Equal(t, s0, s)
	var l mat.Dense
	require.Same(t, &l, m.LoadingsTo(&l))
	require.True(t, mat.Equal(m.LoadingsTo(nil), &l))
	var f, c, inv mat.SymDense
	require.True(t, mat.Equal(m.FactorCovarianceTo(nil), m.FactorCovarianceTo(&f)))
	require.True(t, mat.Equal(m.CovarianceTo(nil), m.CovarianceTo(&c)))
	require.True(t, mat.Equal(m.InverseTo(nil), m.InverseTo(&inv)))
	require.PanicsWithValue(t, mat.ErrShape, func() { m.SqrtTo(nil, make([]float64, n+1)) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.SolveVecTo(make([]float64, 2), x) })
	require.PanicsWithValue(t, mat.ErrShape, func() { m.InverseTo(mat.NewSymDense(2, nil)) })
}

func TestSubmodel(t *testing.T) {
	m := smallModel(t)
	idx := []int{5, 0, 17, 5}
	sub := m.Submodel(idx)
	require.Equal(t, 4, sub.SymmetricDim())
	require.Equal(t, m.NumFactors(), sub.NumFactors())
	d := m.SpecificVariancesTo(nil)
	for a, i := range idx {
		for b, j := range idx {
			want := m.At(i, j)
			if i == j && a != b {
				want -= d[i] // each copy of a repeated position has its own specific risk
			}
			require.InDelta(t, want, sub.At(a, b), 1e-15)
		}
	}
	require.True(t, mat.Equal(m.FactorCovarianceTo(nil), sub.FactorCovarianceTo(nil)))
}

// TestNewModelRoundTrip: rebuilding a model from its readers and its Info is
// bit-identical, as a store needs.
func TestNewModelRoundTrip(t *testing.T) {
	m := smallModel(t)
	back, err := NewModel(m.LoadingsTo(nil), m.FactorCovarianceTo(nil), m.SpecificVariancesTo(nil), m.Info())
	require.NoError(t, err)
	require.Equal(t, m.LoadingsTo(nil).RawMatrix().Data, back.LoadingsTo(nil).RawMatrix().Data)
	require.Equal(t, m.FactorCovarianceTo(nil).RawSymmetric().Data, back.FactorCovarianceTo(nil).RawSymmetric().Data)
	require.Equal(t, m.SpecificVariancesTo(nil), back.SpecificVariancesTo(nil))
	require.Equal(t, m.Info(), back.Info())
	x := make([]float64, m.SymmetricDim())
	x[3] = 1
	require.Equal(t, m.SolveVecTo(nil, x), back.SolveVecTo(nil, x))
	require.Equal(t, []string{"pc1", "pc2", "pc3"}, m.FactorNames())
}

func TestNewModelErrors(t *testing.T) {
	b := mat.NewDense(3, 2, []float64{1, 0, 0, 1, 1, 1})
	f := mat.NewSymDense(2, []float64{1, 0, 0, 1})
	d := []float64{1, 1, 1}
	_, err := NewModel(b, f, d, Info{})
	require.NoError(t, err)

	_, err = NewModel(b, f, []float64{1, 0, 1}, Info{})
	require.ErrorIs(t, err, ErrSpecificVariance)
	_, err = NewModel(b, f, []float64{1, math.NaN(), 1}, Info{})
	require.ErrorIs(t, err, ErrSpecificVariance)
	_, err = NewModel(b, mat.NewSymDense(2, []float64{1, 2, 2, 1}), d, Info{})
	require.ErrorIs(t, err, ErrNotPSD)
	bad := mat.DenseCopyOf(b)
	bad.Set(1, 1, math.Inf(1))
	_, err = NewModel(bad, f, d, Info{})
	require.ErrorIs(t, err, ErrNonFinite)
	_, err = NewModel(b, mat.NewSymDense(2, []float64{1, math.NaN(), math.NaN(), 1}), d, Info{})
	require.ErrorIs(t, err, ErrNonFinite)
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = NewModel(b, f, []float64{1, 1}, Info{}) })
	require.PanicsWithValue(t, mat.ErrShape, func() { _, _ = NewModel(b, f, d, Info{FactorNames: []string{"a"}}) })

	// A factor-free model is pure specific risk.
	m, err := NewModel(nil, nil, d, Info{})
	require.NoError(t, err)
	require.Equal(t, 0, m.NumFactors())
	require.Equal(t, []float64{1, 2, 3}, m.MulVecTo(nil, []float64{1, 2, 3}))
	named, err := NewModel(b, f, d, Info{FactorNames: []string{"market", "size"}, Assets: []string{"A", "B", "C"}})
	require.NoError(t, err)
	require.Equal(t, []string{"market", "size"}, named.FactorNames())
	require.Equal(t, []string{"C", "A"}, named.Submodel([]int{2, 0}).Assets())
}

// TestConcurrentReads is meant for go test -race: many goroutines use one
// model at once and get the answers of a single goroutine.
func TestConcurrentReads(t *testing.T) {
	m := smallModel(t)
	n := m.SymmetricDim()
	x := make([]float64, n)
	for i := range x {
		x[i] = float64(i%5) - 2
	}
	want, wantQ, wantS := m.MulVecTo(nil, x), m.QuadForm(x), m.SolveVecTo(nil, x)
	var wg sync.WaitGroup
	errs := make(chan error, 8)
	for g := 0; g < 8; g++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for r := 0; r < 50; r++ {
				got := m.MulVecTo(nil, x)
				if !equalSlices(got, want) || m.QuadForm(x) != wantQ || !equalSlices(m.SolveVecTo(nil, x), wantS) {
					errs <- errors.New("concurrent result differs")
					return
				}
				_ = m.At(r%n, (r*3)%n)
				_ = m.LoadingsTo(nil)
				_ = m.Info()
				_ = m.Submodel([]int{r % n})
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		require.NoError(t, err)
	}
}

func equalSlices(a, b []float64) bool {
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return len(a) == len(b)
}

// TestDeterministicAcrossProcs: the same seed gives bit-identical models with
// GOMAXPROCS 1 and 2, on every route.
func TestDeterministicAcrossProcs(t *testing.T) {
	sim := simulate(41, 150, 420, 4)
	for _, method := range []Solver{SolverGram, SolverRandomized} {
		s := baseSettings()
		s.Solver, s.Seed = method, 99
		prev := runtime.GOMAXPROCS(1)
		one, err := Fit(sim.x, s)
		runtime.GOMAXPROCS(max(prev, 2))
		require.NoError(t, err)
		two, err := Fit(sim.x, s)
		runtime.GOMAXPROCS(prev)
		require.NoError(t, err)
		require.Equal(t, one.LoadingsTo(nil).RawMatrix().Data, two.LoadingsTo(nil).RawMatrix().Data, method.String())
		require.Equal(t, one.SpecificVariancesTo(nil), two.SpecificVariancesTo(nil))
		require.Equal(t, one.FactorCovarianceTo(nil).RawSymmetric().Data, two.FactorCovarianceTo(nil).RawSymmetric().Data)
	}
}
