package evaluate

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/riskmodel/riskmodel/factor"
	"github.com/riskmodel/riskmodel/internal/dense"
)

// randomSPD returns a positive definite n×n matrix A·Aᵀ/n + δI.
func randomSPD(rs *rand.Rand, n int, delta float64) *mat.SymDense {
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			a.Set(i, j, rs.NormFloat64())
		}
	}
	s := mat.NewSymDense(n, nil)
	s.SymOuterK(1/float64(n), a)
	for i := 0; i < n; i++ {
		s.SetSym(i, i, s.At(i, i)+delta)
	}
	return s
}

// exactSimplexQP solves min ½wᵀΣw − cᵀw on the simplex by enumerating every
// support: on a support S the KKT conditions (Boyd & Vandenberghe 2004,
// Convex Optimization, §5.5.3) are Σ_SS w_S − c_S = ν1, 1ᵀw_S = 1, and
// the solution is the feasible one (w_S ≥ 0) with the least objective.
func exactSimplexQP(s *mat.SymDense, c []float64) ([]float64, float64) {
	n := s.SymmetricDim()
	best, bestF := []float64(nil), math.Inf(1)
	for mask := 1; mask < 1<<n; mask++ {
		var idx []int
		for i := 0; i < n; i++ {
			if mask&(1<<i) != 0 {
				idx = append(idx, i)
			}
		}
		m := len(idx)
		k := mat.NewDense(m+1, m+1, nil)
		rhs := mat.NewVecDense(m+1, nil)
		for a, i := range idx {
			for b, j := range idx {
				k.Set(a, b, s.At(i, j))
			}
			k.Set(a, m, -1)
			k.Set(m, a, 1)
			rhs.SetVec(a, c[i])
		}
		rhs.SetVec(m, 1)
		var sol mat.VecDense
		if err := sol.SolveVec(k, rhs); err != nil {
			continue
		}
		w := make([]float64, n)
		ok := true
		for a, i := range idx {
			w[i] = sol.AtVec(a)
			if w[i] < -1e-12 {
				ok = false
			}
		}
		if !ok {
			continue
		}
		x := mat.NewVecDense(n, w)
		f := 0.5*mat.Inner(x, s, x) - mat.Dot(x, mat.NewVecDense(n, c))
		if f < bestF {
			best, bestF = w, f
		}
	}
	return best, bestF
}

func TestSimplexQPConverges(t *testing.T) {
	rs := rand.New(rand.NewPCG(7, 1))
	for trial := 0; trial < 20; trial++ {
		n := 2 + trial%6
		s := randomSPD(rs, n, 0.05)
		c := make([]float64, n)
		if trial%2 == 1 {
			for i := range c {
				c[i] = 0.5 * rs.NormFloat64()
			}
		}
		op := newCovOp(s)
		w, res := op.simplexQP(c)
		require.True(t, res.Converged, "trial %d: %+v", trial, res)
		want, fstar := exactSimplexQP(s, c)
		require.NotNil(t, want)
		x := mat.NewVecDense(n, w)
		f := 0.5*mat.Inner(x, s, x) - mat.Dot(x, mat.NewVecDense(n, c))
		require.LessOrEqual(t, f-fstar, res.Gap+1e-14, "trial %d: the gap bounds the excess objective", trial)
		require.InDelta(t, 0, f-fstar, 1e-6*mat.Inner(x, s, x), "trial %d", trial)
		require.InDeltaSlice(t, want, w, 2e-3, "trial %d", trial)
		require.InDelta(t, 1, evalSum(w), 1e-12)
		for _, v := range w {
			require.GreaterOrEqual(t, v, 0.0)
		}
	}
}

// On a diagonal covariance the long-only and unconstrained minimum-variance
// portfolios agree: wᵢ ∝ 1/σᵢ² (the closed form of Σ⁻¹1/(1ᵀΣ⁻¹1)). The
// long-only tracking portfolio of a benchmark it may fully hold is the
// benchmark itself; restricted to some names, it holds only those.
func TestMinVariancePortfolios(t *testing.T) {
	s := mat.NewSymDense(4, []float64{1, 0, 0, 0, 0, 2, 0, 0, 0, 0, 4, 0, 0, 0, 0, 8})
	op := newCovOp(s)
	want := []float64{8.0 / 15, 4.0 / 15, 2.0 / 15, 1.0 / 15}
	require.InDeltaSlice(t, want, op.minVariance(), 1e-14)
	w, res := op.simplexQP(nil)
	require.True(t, res.Converged)
	require.InDeltaSlice(t, want, w, 1e-5)

	rs := rand.New(rand.NewPCG(2, 2))
	full := randomSPD(rs, 6, 0.1)
	fop := newCovOp(full)
	b := []float64{0.3, 0.25, 0.2, 0.15, 0.07, 0.03}
	c := make([]float64, 6)
	fop.mul(c, b)
	w, res = fop.simplexQP(c)
	require.True(t, res.Converged)
	require.InDeltaSlice(t, b, w, 1e-4)
	w, res = fop.trackingQP(c, largestNames(b, 3))
	require.True(t, res.Converged)
	require.Equal(t, []int{0, 1, 2}, largestNames(b, 3))
	for i := 3; i < 6; i++ {
		require.Zero(t, w[i])
	}
	require.InDelta(t, 1, evalSum(w), 1e-12)
}

// The factor form and the dense form of the same covariance give the same
// portfolios (Woodbury solve against Cholesky).
func TestMinVarianceFactorMatchesDense(t *testing.T) {
	rs := rand.New(rand.NewPCG(3, 3))
	fm := randomFactorModel(t, rs, 30, 3)
	fop, dop := newCovOp(fm), newCovOp(fm.CovarianceTo(nil))
	require.InDeltaSlice(t, dop.minVariance(), fop.minVariance(), 1e-10)
	wf, _ := fop.simplexQP(nil)
	wd, _ := dop.simplexQP(nil)
	require.InDeltaSlice(t, wd, wf, 1e-6)
	require.InDelta(t, dop.lmax, fop.lmax, 1e-6*dop.lmax)
}

// A singular dense forecast (fewer dates than assets) gets the documented
// ridge and is flagged.
func TestMinVarianceSingular(t *testing.T) {
	s := mat.NewSymDense(3, []float64{1, 1, 1, 1, 1, 1, 1, 1, 1})
	op := newCovOp(s)
	require.True(t, op.ridged)
	w := op.minVariance()
	require.InDeltaSlice(t, []float64{1.0 / 3, 1.0 / 3, 1.0 / 3}, w, 1e-6)
	require.False(t, newCovOp(mat.NewSymDense(2, []float64{1, 0, 0, 1})).ridged)
}

func TestProjectSimplex(t *testing.T) {
	for _, c := range []struct {
		name    string
		z, want []float64
		tol     float64
	}{
		{"already on it", []float64{0.2, 0.3, 0.5}, []float64{0.2, 0.3, 0.5}, 1e-15},
		{"equal", []float64{0.5, 0.5, 0.5}, []float64{1.0 / 3, 1.0 / 3, 1.0 / 3}, 1e-15},
		{"one dominant", []float64{2, 0, 0}, []float64{1, 0, 0}, 0},
		{"clip one", []float64{0.8, 0.6, -1}, []float64{0.6, 0.4, 0}, 1e-15},
		{"one asset", []float64{-3}, []float64{1}, 0},
	} {
		t.Run(c.name, func(t *testing.T) {
			z := append([]float64(nil), c.z...)
			projectSimplex(z, make([]float64, len(z)))
			require.InDeltaSlice(t, c.want, z, c.tol)
		})
	}
}

func TestRandomPortfolios(t *testing.T) {
	rs := rand.New(rand.NewPCG(5, 5))
	for _, n := range []int{1, 3, 80} {
		w := randomLongOnly(rs, n)
		require.InDelta(t, 1, evalSum(w), 1e-12)
		held := 0
		for _, v := range w {
			require.GreaterOrEqual(t, v, 0.0)
			if v > 0 {
				held++
			}
		}
		require.GreaterOrEqual(t, held, min(randomMinNames, n))
		require.LessOrEqual(t, held, min(randomMaxNames, n))
	}
	b := []float64{0.5, 0.3, 0.2}
	a := randomActive(rs, b)
	require.InDelta(t, 0, evalSum(a), 1e-12)
	// Same seed, same draws.
	x := randomLongOnly(rand.New(rand.NewPCG(9, 9)), 40)
	y := randomLongOnly(rand.New(rand.NewPCG(9, 9)), 40)
	require.Equal(t, x, y)
}

// The condition estimate from the multi-core factor follows LAPACK's
// dpocon (through gonum's mat.Cholesky.Cond) to rounding on random
// positive definite matrices of several conditionings, and the exact
// 1-norm condition number (gonum's mat.Cond with norm 1 on the explicit
// inverse) bounds it from above within the factor Higham (1988) reports as
// typical (the estimate is a lower bound, usually within a factor 3).
func TestCholeskyCondMatchesLAPACK(t *testing.T) {
	rs := rand.New(rand.NewPCG(8, 8))
	for trial, delta := range []float64{1, 1e-2, 1e-5, 1e-9} {
		n := 30 + 20*trial
		s := randomSPD(rs, n, delta)
		var ref mat.Cholesky
		require.True(t, ref.Factorize(s))
		var ch dense.Cholesky
		require.True(t, ch.Factorize(s))
		got := choleskyCond(&ch, s)
		require.InDelta(t, ref.Cond(), got, 1e-6*ref.Cond(), "delta %g", delta)
		exact := mat.Cond(s, 1)
		require.LessOrEqual(t, got, exact*(1+1e-8))
		require.GreaterOrEqual(t, got, exact/3)
	}
	require.Equal(t, 1.0, invNorm1(1, func(dst, x []float64) { dst[0] = -x[0] }))
}

// Michelot's projection agrees with the sort-based one (Duchi et al. 2008,
// Figure 1) on random points, to rounding.
func TestProjectSimplexMatchesSort(t *testing.T) {
	rs := rand.New(rand.NewPCG(4, 4))
	for trial := 0; trial < 200; trial++ {
		m := 1 + rs.IntN(300)
		z := make([]float64, m)
		for i := range z {
			z[i] = rs.NormFloat64() * math.Pow(10, float64(trial%5-2))
		}
		// The sort-based threshold: the largest k with
		// u_k > (Σ_{j≤k} u_j − 1)/k over u sorted decreasingly.
		u := slices.Clone(z)
		slices.Sort(u)
		slices.Reverse(u)
		var cum, tau float64
		for k, v := range u {
			cum += v
			if t := (cum - 1) / float64(k+1); v > t {
				tau = t
			}
		}
		want := make([]float64, m)
		for i, v := range z {
			want[i] = math.Max(v-tau, 0)
		}
		projectSimplex(z, make([]float64, m))
		require.InDeltaSlice(t, want, z, 1e-12*math.Max(1, math.Abs(tau)), "trial %d", trial)
		require.InDelta(t, 1, evalSum(z), 1e-12)
	}
}

// randomFactorModel draws an N×K factor model with N(0, 1) loadings, a
// fixed 3×3 factor covariance (K = 3) and specific variances in [0.2, 1.2].
func randomFactorModel(t *testing.T, rs *rand.Rand, n, k int) *factor.Model {
	t.Helper()
	b := mat.NewDense(n, k, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < k; j++ {
			b.Set(i, j, rs.NormFloat64())
		}
	}
	f := mat.NewSymDense(k, []float64{1, 0.2, 0, 0.2, 0.5, 0.1, 0, 0.1, 0.3})
	d := make([]float64, n)
	for i := range d {
		d[i] = 0.2 + rs.Float64()
	}
	fm, err := factor.NewModel(b, f, d, factor.Info{})
	require.NoError(t, err)
	return fm
}
