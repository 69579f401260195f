package main

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// simplexSort is the sort-based projection onto the probability simplex of
// Wang & Carreira-Perpiñán (2013), Algorithm 1: sort v descending, find the
// largest ρ with u_ρ + (1 − Σ_{j≤ρ} u_j)/ρ > 0, shift by that λ, clip at 0.
func simplexSort(v []float64) []float64 {
	u := slices.Clone(v)
	slices.Sort(u)
	slices.Reverse(u)
	var sum, lambda float64
	for j, x := range u {
		sum += x
		if l := (1 - sum) / float64(j+1); x+l > 0 {
			lambda = l
		}
	}
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = math.Max(x+lambda, 0)
	}
	return out
}

func caps(n int, u float64) []float64 {
	c := make([]float64, n)
	for i := range c {
		c[i] = u
	}
	return c
}

func TestProjectWorkedExamples(t *testing.T) {
	for _, tc := range []struct {
		name       string
		v, caps, w []float64
		tol        float64
	}{
		// Already feasible: unchanged.
		{"feasible", []float64{0.5, 0.3, 0.2}, caps(3, 1), []float64{0.5, 0.3, 0.2}, 1e-15},
		// By hand: τ = −0.25 gives (min(0.5, 1.25), 0.25, 0.25), sum 1.
		{"one capped", []float64{1, 0, 0}, caps(3, 0.5), []float64{0.5, 0.25, 0.25}, 1e-15},
		// By hand: uniform shift of (0.2, 0.2, 0.2, 0.2) by +0.05.
		{"shift up", []float64{0.2, 0.2, 0.2, 0.2}, caps(4, 1), []float64{0.25, 0.25, 0.25, 0.25}, 1e-15},
		// A zero cap excludes a name: (0.6, 0.6) → 0.5 each.
		{"excluded name", []float64{0.6, 0.9, 0.6}, []float64{1, 0, 1}, []float64{0.5, 0, 0.5}, 1e-15},
		// Caps that sum to exactly 1: every name at its cap.
		{"tight caps", []float64{3, -2, 0.1, 0.4}, caps(4, 0.25), []float64{0.25, 0.25, 0.25, 0.25}, 1e-15},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w, err := project(nil, tc.v, tc.caps)
			require.NoError(t, err)
			require.InDeltaSlice(t, tc.w, w, tc.tol)
		})
	}
}

func TestProjectProperties(t *testing.T) {
	rs := rand.New(rand.NewPCG(11, 12))
	for trial := 0; trial < 200; trial++ {
		n := 1 + rs.IntN(60)
		v := make([]float64, n)
		for i := range v {
			v[i] = rs.NormFloat64() * math.Pow(10, float64(rs.IntN(3)-2))
		}
		u := math.Max(1/float64(n), rs.Float64())
		c := caps(n, u)
		w, err := project(nil, v, c)
		require.NoError(t, err)
		var sum float64
		for i, x := range w {
			require.GreaterOrEqual(t, x, 0.0)
			require.LessOrEqual(t, x, c[i])
			sum += x
		}
		require.InDelta(t, 1, sum, 1e-12, "trial %d", trial)
		// The projection onto a convex set C satisfies (v − w)·(z − w) ≤ 0
		// for every z in C; try feasible points z made by projecting other
		// random vectors.
		for k := 0; k < 5; k++ {
			r := make([]float64, n)
			for i := range r {
				r[i] = rs.NormFloat64()
			}
			z, err := project(nil, r, c)
			require.NoError(t, err)
			var ip float64
			for i := range z {
				ip += (v[i] - w[i]) * (z[i] - w[i])
			}
			require.LessOrEqual(t, ip, 1e-12)
		}
		// With caps of 1 the set is the probability simplex: the sort-based
		// algorithm of Wang & Carreira-Perpiñán (2013) is a second route.
		w1, err := project(nil, v, caps(n, 1))
		require.NoError(t, err)
		require.InDeltaSlice(t, simplexSort(v), w1, 1e-12)
	}
}

func TestProjectInfeasible(t *testing.T) {
	_, err := project(nil, []float64{0.5, 0.5, 0.5}, caps(3, 0.3))
	require.ErrorIs(t, err, errInfeasible)
}

// diagonal is Σx for a diagonal Σ.
func diagonal(d []float64) mulVec {
	return func(dst, x []float64) []float64 {
		for i := range x {
			dst[i] = d[i] * x[i]
		}
		return dst
	}
}

func TestRebalanceDiagonalKnownSolution(t *testing.T) {
	// For Σ = diag(d) the problem separates: min Σ d_i (w_i − b_i)² with
	// Σ w_i = 1, 0 ≤ w_i ≤ u. The KKT conditions give
	// w_i = clip(b_i + μ/d_i, 0, u) with μ making the sum 1; μ is found here
	// by bisection, a route independent of the projected gradient.
	b := []float64{0.40, 0.25, 0.15, 0.10, 0.06, 0.04}
	d := []float64{1e-4, 4e-4, 2e-4, 9e-4, 1e-4, 3e-4}
	u := 0.3
	c := caps(6, u)
	c[5] = 0 // the last name may not be held
	kkt := func(mu float64) ([]float64, float64) {
		w := make([]float64, 6)
		var s float64
		for i := range w {
			w[i] = math.Min(c[i], math.Max(0, b[i]+mu/d[i]))
			s += w[i]
		}
		return w, s
	}
	lo, hi := -1.0, 1.0
	for k := 0; k < 200; k++ {
		mid := (lo + hi) / 2
		if _, s := kkt(mid); s < 1 {
			lo = mid
		} else {
			hi = mid
		}
	}
	want, _ := kkt((lo + hi) / 2)

	start := []float64{0, 0, 0.5, 0.5, 0, 0}
	w, path, settled, err := rebalance(diagonal(d), b, start, c, tangentEigenvalue(diagonal(d), 6), 100000, 1e-13)
	require.NoError(t, err)
	require.True(t, settled)
	require.InDeltaSlice(t, want, w, 1e-8)
	for k := 1; k < len(path); k++ {
		require.LessOrEqual(t, path[k], path[k-1]*(1+1e-12), "step %d raised the tracking error", k)
	}
	require.Less(t, path[len(path)-1], path[0])
}

func TestRebalanceReachesTheBenchmark(t *testing.T) {
	// With caps that do not bind and every name holdable, the benchmark
	// itself is feasible and has zero tracking error.
	d := []float64{1e-4, 2e-4, 3e-4, 4e-4}
	b := []float64{0.1, 0.2, 0.3, 0.4}
	w, path, settled, err := rebalance(diagonal(d), b, []float64{1, 0, 0, 0}, caps(4, 1), tangentEigenvalue(diagonal(d), 4), 100000, 1e-14)
	require.NoError(t, err)
	require.True(t, settled)
	require.InDeltaSlice(t, b, w, 1e-9)
	require.Less(t, path[len(path)-1], 1e-9)

	// Ten iterations are not enough to settle: the result says so.
	_, short, settled, err := rebalance(diagonal(d), b, []float64{1, 0, 0, 0}, caps(4, 1), tangentEigenvalue(diagonal(d), 4), 10, 1e-14)
	require.NoError(t, err)
	require.False(t, settled)
	require.LessOrEqual(t, len(short), 11)
}

func TestTangentEigenvalue(t *testing.T) {
	// References: numpy 1.24.2, np.linalg.eigvalsh(P @ np.diag(d) @ P).max()
	// with P = np.eye(n) - np.ones((n, n))/n.
	got := tangentEigenvalue(diagonal([]float64{1, 5, 2}), 3)
	require.InDelta(t, 3.8685170918213303*1.01, got, 1e-8)
	got = tangentEigenvalue(diagonal([]float64{1e-4, 4e-4, 2e-4, 9e-4, 1e-4, 3e-4}), 6)
	require.InDelta(t, 0.0007910617541295482*1.01, got, 1e-12)

	// Names that are all alike, Σ = c·11ᵀ: Σ is zero on the plane, so the
	// step falls back to the scale of the equal-weighted direction,
	// 1ᵀΣ1/n = c·n.
	const c, n = 4e-4, 5
	alike := func(dst, x []float64) []float64 {
		var s float64
		for _, v := range x {
			s += v
		}
		for i := range dst {
			dst[i] = c * s
		}
		return dst
	}
	require.InDelta(t, 1.01*c*n, tangentEigenvalue(alike, n), 1e-15)
	require.InDelta(t, 1.01*2e-4, tangentEigenvalue(diagonal([]float64{2e-4}), 1), 1e-15, "one name")
	require.Equal(t, 1.01, tangentEigenvalue(diagonal(make([]float64, 3)), 3), "Σ = 0")
	require.Equal(t, 1.01, tangentEigenvalue(diagonal(nil), 0), "no names")
}

// simulatedMarket is Σ = B·F·Bᵀ + D for n names and k factors: the first
// factor a market every name loads on with loading about marketLoading, the
// others industry-like with Gaussian loadings, daily-sized variances.
func simulatedMarket(rng *rand.Rand, n, k int, marketLoading float64) *mat.SymDense {
	b := mat.NewDense(n, k, nil)
	for i := 0; i < n; i++ {
		b.Set(i, 0, marketLoading*(1+0.3*rng.NormFloat64()))
		for j := 1; j < k; j++ {
			b.Set(i, j, rng.NormFloat64())
		}
	}
	f := mat.NewDiagDense(k, nil)
	f.SetDiag(0, 1e-4)
	for j := 1; j < k; j++ {
		f.SetDiag(j, 2e-5*(1+rng.Float64()))
	}
	var bf mat.Dense
	bf.Mul(b, f)
	var bfb mat.Dense
	bfb.Mul(&bf, b.T())
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s.SetSym(i, j, bfb.At(i, j))
		}
		s.SetSym(i, i, s.At(i, i)+4e-4*(0.5+rng.Float64()))
	}
	return s
}

func TestTangentStepOnSimulatedMarkets(t *testing.T) {
	// Markets of several shapes: one strong market factor, a market among
	// many industries, and no market at all (no name loads on the first
	// factor). The reference eigenvalues come from gonum's mat.EigenSym on
	// the dense Σ and on QΣQ; the whole-space step 1/(2λmax(Σ)) is the
	// rebalancer's step before this one and must reach the same optimum.
	for _, c := range []struct {
		name   string
		n, k   int
		market float64
	}{
		{"one strong market factor", 150, 1, 1},
		{"market and twelve industries", 200, 13, 1},
		{"no market", 120, 6, 0},
	} {
		t.Run(c.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, uint64(c.n)))
			s := simulatedMarket(rng, c.n, c.k, c.market)
			mul := func(dst, x []float64) []float64 {
				mat.NewVecDense(len(dst), dst).MulVec(s, mat.NewVecDense(len(x), x))
				return dst
			}
			top := func(a mat.Symmetric) float64 {
				var e mat.EigenSym
				require.True(t, e.Factorize(a, false))
				v := e.Values(nil)
				return v[len(v)-1]
			}
			q := mat.NewDense(c.n, c.n, nil)
			for i := 0; i < c.n; i++ {
				for j := 0; j < c.n; j++ {
					q.Set(i, j, -1/float64(c.n))
				}
				q.Set(i, i, q.At(i, i)+1)
			}
			var qs, qsq mat.Dense
			qs.Mul(q, s)
			qsq.Mul(&qs, q)
			qsqSym := mat.NewSymDense(c.n, nil)
			for i := 0; i < c.n; i++ {
				for j := i; j < c.n; j++ {
					qsqSym.SetSym(i, j, (qsq.At(i, j)+qsq.At(j, i))/2)
				}
			}
			whole, tangent := top(s), top(qsqSym)
			got := tangentEigenvalue(mul, c.n)
			require.InDelta(t, 1.01*tangent, got, 1e-6*tangent, "tangentEigenvalue against gonum's EigenSym of QΣQ")
			require.LessOrEqual(t, tangent, whole*(1+1e-12))

			b := make([]float64, c.n)
			for i := range b {
				b[i] = 1 / float64(c.n)
			}
			b[0], b[1] = b[0]+0.04, b[1]-0.5/float64(c.n) // a tilted benchmark the caps cut
			var sum float64
			for _, x := range b {
				sum += x
			}
			for i := range b {
				b[i] /= sum
			}
			start := make([]float64, c.n)
			start[3] = 1
			u := caps(c.n, 0.02)
			wNew, pathNew, settledNew, err := rebalance(mul, b, start, u, got, 200000, 1e-12)
			require.NoError(t, err)
			wOld, pathOld, settledOld, err := rebalance(mul, b, start, u, 1.01*whole, 200000, 1e-12)
			require.NoError(t, err)
			require.True(t, settledNew)
			require.True(t, settledOld)
			teNew, teOld := pathNew[len(pathNew)-1], pathOld[len(pathOld)-1]
			require.InDelta(t, teOld, teNew, 1e-9*teOld, "the same optimum")
			require.InDeltaSlice(t, wOld, wNew, 1e-6)
			require.LessOrEqual(t, len(pathNew), len(pathOld))
			t.Logf("λmax(Σ) %.4g, λmax(QΣQ) %.4g: %d steps against %d, tracking error %.6g", whole, tangent, len(pathNew)-1, len(pathOld)-1, teNew)
		})
	}
}
