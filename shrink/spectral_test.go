package shrink

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// TestNonlinearMatchesReference checks against the numpy 1.24.2 script
// testdata/shrink/nonlinear_numpy.py, which follows Ledoit & Wolf (2020),
// section 4, step by step with numpy.linalg.eigh of the N×N sample
// covariance (here N > T goes through the T×T Gram matrix instead).
func TestNonlinearMatchesReference(t *testing.T) {
	var fx struct {
		Cases []struct {
			Name   string      `json:"name"`
			X      [][]float64 `json:"x"`
			Sigma  [][]float64 `json:"sigma"`
			Sample []float64   `json:"sample"`
			Shrunk []float64   `json:"shrunk"`
			Null   float64     `json:"null"`
			Mono   [][]float64 `json:"sigma_monotone"`
		}
	}
	loadJSON(t, "nonlinear_numpy.json", &fx)
	require.Len(t, fx.Cases, 4)
	// The reference evaluates the kernel sums in mpmath at 40 digits; the
	// eigenvalues themselves differ by rounding (numpy's eigh against
	// gonum's, or the Gram route for p > n).
	const tol, tolShrunk = 1e-9, 1e-9
	pooled := 0
	for _, c := range fx.Cases {
		t.Run(c.Name, func(t *testing.T) {
			cov, res, err := Nonlinear(nil, denseOf(c.X), nil)
			require.NoError(t, err)
			scale := c.Sample[len(c.Sample)-1]
			require.InDeltaSlice(t, c.Sample, res.Sample, tol*scale)
			require.InDeltaSlice(t, c.Shrunk, res.Formula, tolShrunk*scale)
			require.InDelta(t, c.Null, res.FormulaNull, tolShrunk*scale)
			// The paper's Σ = U diag(d̃) Uᵀ from the formula values, and the
			// monotone result against scikit-learn's isotonic_regression.
			requireSymEqual(t, c.Sigma, formulaSigma(t, denseOf(c.X), res), tolShrunk)
			requireSymEqual(t, c.Mono, cov, tolShrunk)
			pooled += res.Pooled
		})
	}
	require.Greater(t, pooled, 0, "the fixture should exercise the monotone step")
}

// TestNonlinearProperties checks the defining properties of the estimator
// (Ledoit & Wolf 2020): the sample eigenvectors are kept, the shrunk
// eigenvalues keep the order of the sample ones and are positive, and the
// spread of the spectrum shrinks. The trace is not exactly preserved by the
// analytical formula (the paper does not claim it, from memory); it must stay
// within a few percent for well-behaved data.
func TestNonlinearProperties(t *testing.T) {
	for _, tc := range []struct {
		name string
		t, n int
	}{
		{"p<n", 120, 30},
		{"p>n", 40, 90},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := randReturns(31, tc.t, tc.n)
			cov, res, err := Nonlinear(nil, x, nil)
			require.NoError(t, err)
			requirePSD(t, cov, 1e-12)
			for i := 1; i < len(res.Shrunk); i++ {
				require.GreaterOrEqual(t, res.Shrunk[i], res.Shrunk[i-1], "monotone")
			}
			last := len(res.Shrunk) - 1
			require.Greater(t, res.Shrunk[0], res.Sample[0])
			require.Less(t, res.Shrunk[last]/res.Shrunk[0], res.Sample[last]/res.Sample[0])
			// Eigenvectors kept: Σ u = d u for the sample eigenvectors.
			s, y, _ := naiveCov(x, nil)
			s.ScaleSym(float64(tc.t)/float64(tc.t-1), s)
			_ = y
			vals, vecs, err := eigen(s)
			require.NoError(t, err)
			k := len(vals) - 1 // top eigenvector
			var su mat.VecDense
			su.MulVec(cov, vecs.RowView(k))
			want := mat.VecDenseCopyOf(vecs.RowView(k))
			want.ScaleVec(res.Shrunk[len(res.Shrunk)-1], want)
			require.InDeltaSlice(t, want.RawVector().Data, su.RawVector().Data, 1e-10*res.Shrunk[len(res.Shrunk)-1])
			tr := mat.Trace(s)
			require.InDelta(t, tr, mat.Trace(cov), 0.05*tr)
		})
	}
	_, _, err := Nonlinear(nil, randReturns(1, 12, 3), nil)
	require.ErrorIs(t, err, ErrTooFewObs)
	dup := randReturns(2, 40, 4)
	dup.SetCol(3, mat.Col(nil, 1, dup))
	_, _, err = Nonlinear(nil, dup, nil)
	require.ErrorIs(t, err, ErrRankDeficient)
}

// TestNonlinearSimulation: on data with a known covariance (simulation), the
// estimate is closer to the truth than the sample covariance in Frobenius
// norm.
func TestNonlinearSimulation(t *testing.T) {
	const T, N = 100, 60
	rng := rand.New(rand.NewPCG(99, 1))
	truth := make([]float64, N) // diagonal true covariance, spread spectrum
	x := mat.NewDense(T, N, nil)
	for j := range truth {
		truth[j] = 1e-4 * (1 + 4*float64(j)/N)
		for i := 0; i < T; i++ {
			x.Set(i, j, math.Sqrt(truth[j])*rng.NormFloat64())
		}
	}
	cov, _, err := Nonlinear(nil, x, nil)
	require.NoError(t, err)
	s, _, _ := naiveCov(x, nil)
	s.ScaleSym(float64(T)/float64(T-1), s)
	loss := func(a mat.Symmetric) float64 {
		var sum float64
		for i := 0; i < N; i++ {
			for j := 0; j < N; j++ {
				d := a.At(i, j)
				if i == j {
					d -= truth[i]
				}
				sum += d * d
			}
		}
		return sum
	}
	require.Less(t, loss(cov), 0.7*loss(s))
}

// TestClipMarchenkoPastur checks the edge against the value quoted in
// shared/REFERENCES.md for Laloux et al. (1999): 10 stocks, T = 252 give
// (1 + √(10/252))² = 1.438; the trace of the correlation is kept; the N > T
// Gram route agrees with a dense eigendecomposition.
func TestClipMarchenkoPastur(t *testing.T) {
	require.InDelta(t, 1.438, MarchenkoPasturEdge(10, 252), 0.5e-3)
	x := randReturns(41, 252, 10)
	cov, res, err := ClipMarchenkoPastur(nil, x, nil)
	require.NoError(t, err)
	require.InDelta(t, 1.438, res.Edge, 0.5e-3)
	require.Equal(t, 1, res.Signal) // one common factor in randReturns
	requirePSD(t, cov, 1e-12)
	s, _, _ := naiveCov(x, nil)
	for i := 0; i < 10; i++ {
		require.InDelta(t, s.At(i, i), cov.At(i, i), 1e-15)
	}
	// The clipped correlation before the diagonal reset: trace N.
	require.InDelta(t, 10, res.NoiseMean*9+naiveTopEig(t, s), 1e-9)

	// N > T: compare the Gram route with the clipping done densely.
	xw := randReturns(42, 30, 50)
	got, gres, err := ClipMarchenkoPastur(nil, xw, nil)
	require.NoError(t, err)
	want := naiveClip(t, xw, nil)
	require.True(t, mat.EqualApprox(want, got, 1e-12*mat.Max(want)))
	require.InDelta(t, (1+math.Sqrt(50.0/30))*(1+math.Sqrt(50.0/30)), gres.Edge, 1e-12)
}

func naiveTopEig(t *testing.T, s *mat.SymDense) float64 {
	n := s.SymmetricDim()
	c := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			c.SetSym(i, j, s.At(i, j)/math.Sqrt(s.At(i, i)*s.At(j, j)))
		}
	}
	vals, _, err := eigen(c)
	require.NoError(t, err)
	return vals[n-1]
}

// naiveClip applies Laloux et al. (1999) with an N×N eigendecomposition;
// with weights, S is weighted and T is Kish's effective size 1/Σω².
func naiveClip(t *testing.T, x *mat.Dense, w []float64) *mat.SymDense {
	s, _, om := naiveCov(x, w)
	_, n := x.Dims()
	var w2 float64
	for _, v := range om {
		w2 += v * v
	}
	tt := 1 / w2
	c := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			c.SetSym(i, j, s.At(i, j)/math.Sqrt(s.At(i, i)*s.At(j, j)))
		}
	}
	vals, vecs, err := eigen(c)
	require.NoError(t, err)
	edge := (1 + math.Sqrt(float64(n)/tt)) * (1 + math.Sqrt(float64(n)/tt))
	var sum float64
	k := 0
	for _, v := range vals {
		if v > edge {
			sum += v
			k++
		}
	}
	mean := (float64(n) - sum) / float64(n-k)
	var cl mat.Dense
	d := make([]float64, n)
	for i, v := range vals {
		d[i] = mean
		if v > edge {
			d[i] = v
		}
	}
	cl.Mul(vecs.T(), mat.NewDiagDense(n, d))
	cl.Mul(&cl, vecs)
	out := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			out.SetSym(i, j, cl.At(i, j)/math.Sqrt(cl.At(i, i)*cl.At(j, j))*math.Sqrt(s.At(i, i)*s.At(j, j)))
		}
	}
	return out
}

// formulaSigma rebuilds U diag(d̃) Uᵀ from the N×N eigendecomposition of the
// divisor-(T−1) sample covariance and the formula values of res.
func formulaSigma(t *testing.T, x *mat.Dense, res NonlinearResult) *mat.SymDense {
	tt, n := x.Dims()
	s, _, _ := naiveCov(x, nil)
	s.ScaleSym(float64(tt)/float64(tt-1), s)
	_, vecs, err := eigen(s)
	require.NoError(t, err)
	d := make([]float64, n)
	for i := range d {
		d[i] = res.FormulaNull
	}
	copy(d[n-len(res.Formula):], res.Formula)
	return recompose(nil, vecs, d, 0)
}

// TestSpectralWeighted checks the weighted spectral estimators against naive
// weighted references with N×N eigendecompositions (no library takes
// weights here), on both sides of N = T.
func TestSpectralWeighted(t *testing.T) {
	for _, tc := range []struct {
		name string
		t, n int
		tol  float64
	}{
		{"T>N", 80, 20, 1e-11},
		{"T<N", 30, 50, 1e-11},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := randReturns(71, tc.t, tc.n)
			w := randWeights(72, tc.t)
			got, _, err := ClipMarchenkoPastur(nil, x, w)
			require.NoError(t, err)
			want := naiveClip(t, x, w)
			require.True(t, mat.EqualApprox(want, got, tc.tol*mat.Max(want)))

			// Nonlinear: S = T/(T−1)·Σ ω y yᵀ, n = T − 1.
			s, _, _ := naiveCov(x, w)
			s.ScaleSym(float64(tc.t)/float64(tc.t-1), s)
			vals, vecs, err := eigen(s)
			require.NoError(t, err)
			m := min(tc.n, tc.t-1)
			d, null := nonlinearShrink(vals[tc.n-m:], tc.n, tc.t-1)
			d, null, _ = monotone(d, null, tc.n-m)
			all := make([]float64, tc.n)
			for i := range all {
				all[i] = null
			}
			copy(all[tc.n-m:], d)
			nwant := recompose(nil, vecs, all, 0)
			ngot, _, err := Nonlinear(nil, x, w)
			require.NoError(t, err)
			require.True(t, mat.EqualApprox(nwant, ngot, 1e-9*mat.Max(nwant)))
		})
	}
}

// TestMonotone checks the pool-adjacent-violators step on a small case
// worked by hand: (3 with weight 2, 1, 2, 5) pools the first three to
// (2·3 + 1 + 2)/4 = 2.25, as scikit-learn 1.2.1
// isotonic_regression([3, 1, 2, 5], sample_weight=[2, 1, 1, 1]) gives.
func TestMonotone(t *testing.T) {
	d, null, pooled := monotone([]float64{1, 2, 5}, 3, 2)
	require.InDeltaSlice(t, []float64{2.25, 2.25, 5}, d, 1e-15)
	require.InDelta(t, 2.25, null, 1e-15)
	require.Equal(t, 4, pooled)
	d, _, pooled = monotone([]float64{1, 2, 3}, 0, 0)
	require.Equal(t, []float64{1, 2, 3}, d)
	require.Equal(t, 0, pooled)
}
